import django_tables2 as tables
from django.utils.html import format_html_join

from durability.models import Method, ParameterStatus


class MethodTable(tables.Table):
    code = tables.LinkColumn("durability:method-detail", args=[tables.A("code")])
    standard = tables.Column(accessor="standard__designation")
    version = tables.Column(empty_values=(), orderable=False)
    statuses = tables.Column(empty_values=(), orderable=False, verbose_name="Parameter status")

    class Meta:
        model = Method
        fields = ("code", "standard", "clause", "name", "kind", "version", "statuses")
        attrs = {"class": "records"}

    def _current(self, record):
        versions = list(record.versions.all())
        return max(versions, key=lambda v: v.number) if versions else None

    def render_version(self, record):
        current = self._current(record)
        return f"v{current.number}" if current else "none"

    def render_statuses(self, record):
        current = self._current(record)
        if current is None:
            return ""
        counts: dict[str, int] = {}
        for row in current.parameters():
            counts[row["status"]] = counts.get(row["status"], 0) + 1
        return format_html_join(
            " ",
            '<span class="status status-{}">{} × {}</span>',
            ((s, ParameterStatus(s).label, n) for s, n in sorted(counts.items())),
        )
