"""The chamber run list."""

import django_tables2 as tables
from django.utils import timezone
from django.utils.safestring import mark_safe

from labrecords.models import ChamberRun


class ChamberRunTable(tables.Table):
    ident = tables.LinkColumn(
        "labrecords:chamber-detail", args=[tables.A("pk")], verbose_name="Run"
    )
    chamber = tables.Column(accessor="chamber__ident", verbose_name="Chamber")
    method = tables.Column(
        accessor="method_version",
        verbose_name="Method version",
        order_by=("method_version__method__code", "method_version__number"),
    )
    condition = tables.Column(verbose_name="Condition")
    piece_count = tables.Column(verbose_name="Pieces")
    loaded_at = tables.Column(verbose_name="Loaded")
    unloaded_at = tables.Column(verbose_name="Unloaded", default="in the chamber")
    exposure_counts = tables.Column(verbose_name="Exposure", default="not checked")

    class Meta:
        model = ChamberRun
        fields = (
            "ident",
            "chamber",
            "method",
            "condition",
            "piece_count",
            "loaded_at",
            "unloaded_at",
            "exposure_counts",
        )
        attrs = {"class": "records"}
        empty_text = "No chamber runs."

    def render_loaded_at(self, value):
        return f"{timezone.localtime(value):%Y-%m-%d %H:%M}"

    def render_unloaded_at(self, value):
        return f"{timezone.localtime(value):%Y-%m-%d %H:%M}"

    def render_exposure_counts(self, value):
        if value:
            return mark_safe('<span class="verdict-pass">counts</span>')
        return mark_safe('<span class="verdict-invalid">does not count</span>')
