"""Tables of the schedule area: resources, and lots with their promised dates."""

import django_tables2 as tables
from django.urls import reverse
from django.utils import timezone
from django.utils.html import format_html

from durability.models import Resource


class ResourceTable(tables.Table):
    ident = tables.LinkColumn(
        "labrecords:resource-detail", args=[tables.A("ident")], verbose_name="Resource"
    )
    name = tables.Column()
    calendar = tables.Column(verbose_name="Works")
    kinds = tables.Column(verbose_name="Method kinds", orderable=False)
    capacity = tables.Column(verbose_name="Capacity (pieces)")
    condition_ranges = tables.Column(verbose_name="Condition ranges", orderable=False)
    instrument = tables.Column(accessor="instrument__ident", default="—", verbose_name="Instrument")
    status = tables.Column(empty_values=(), orderable=False, verbose_name="Now")

    class Meta:
        model = Resource
        fields = (
            "ident",
            "name",
            "calendar",
            "kinds",
            "capacity",
            "condition_ranges",
            "instrument",
            "status",
        )
        attrs = {"class": "records"}
        empty_text = "No resources."

    def render_kinds(self, value):
        return ", ".join(k.replace("_", " ") for k in value)

    def render_condition_ranges(self, value):
        names = {"temperature_c": "°C", "rh_pct": "% RH"}
        return (
            "; ".join(f"{low:g} to {high:g} {names.get(k, k)}" for k, (low, high) in value.items())
            or "—"
        )

    def render_status(self, record):
        if not record.active:
            return "not in use"
        blocks = getattr(record, "current_blocks", [])
        if blocks:
            block = blocks[0]
            until = timezone.localtime(block.ends_at).strftime("%Y-%m-%d %H:%M")
            return format_html(
                '<span class="blocked-now">blocked until {}: {}</span>', until, block.reason
            )
        return "available"


class PromiseTable(tables.Table):
    lot = tables.Column(accessor="lot_number", verbose_name="Lot")
    promised = tables.DateTimeColumn(format="Y-m-d H:i", verbose_name="Promised", default="—")
    due = tables.DateColumn(format="Y-m-d", verbose_name="Due", default="none")
    state = tables.Column(empty_values=(), orderable=False, verbose_name="On time?")
    reason = tables.Column(empty_values=(), orderable=False, verbose_name="Why late")

    class Meta:
        attrs = {"class": "records"}
        empty_text = "Nothing to schedule."
        orderable = False

    def render_lot(self, record):
        url = reverse("labrecords:lot-detail", args=[record.lot_id])
        return format_html('<a href="{}">{}</a>', url, record.lot_number)

    def render_state(self, record):
        if record.note:
            return "no promised date"
        if record.late:
            return format_html('<span class="late">late by {} h</span>', f"{record.late_hours:.1f}")
        return "on time" if record.due else "no due date"

    def render_reason(self, record):
        return record.note or record.reason or ""
