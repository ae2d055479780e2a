"""The waiting-work table: one row per piece, sortable, exported to CSV by the same table."""

import django_tables2 as tables
from django.utils import timezone
from django.utils.html import format_html
from django.utils.safestring import mark_safe


class WaitingTable(tables.Table):
    lot = tables.Column(accessor="lot_number", verbose_name="Lot")
    customer = tables.Column(verbose_name="Customer")
    stage = tables.Column(verbose_name="Stage")
    piece = tables.Column(verbose_name="Piece")
    step = tables.Column(verbose_name="Next step", default="all steps done")
    kind = tables.Column(accessor="kind_label", verbose_name="Method kind", default="—")
    waits_for = tables.Column(verbose_name="Waits for")
    waited = tables.Column(accessor="waited_hours", verbose_name="Waited (h)")
    since = tables.Column(accessor="waiting_since", verbose_name="Waiting since")
    due = tables.Column(verbose_name="Due", default="none")
    late = tables.Column(verbose_name="Late")
    promised = tables.Column(verbose_name="Promised", default="not scheduled")

    class Meta:
        attrs = {"class": "records waiting"}
        empty_text = "Nothing is waiting."
        row_attrs = {"class": lambda record: "late" if record.late else ""}

    def render_lot(self, value, record):
        return format_html('<a href="{}">{}</a>', record.lot_url, value)

    def render_piece(self, value, record):
        return format_html('<a href="{}">{}</a>', record.piece_url, value)

    def value_lot(self, value):
        return value

    def value_piece(self, value):
        return value

    def render_waited(self, value, record):
        return record.waited

    def value_waited(self, value):
        return round(value, 2)

    def render_since(self, value):
        return f"{timezone.localtime(value):%Y-%m-%d %H:%M}"

    def value_since(self, value):
        return timezone.localtime(value).isoformat()

    def render_late(self, value):
        return mark_safe('<strong class="late-flag">late</strong>') if value else "no"

    def value_late(self, value):
        return "late" if value else "no"

    def render_promised(self, value):
        return f"{timezone.localtime(value):%Y-%m-%d %H:%M}"

    def value_promised(self, value):
        return timezone.localtime(value).isoformat() if value else ""
