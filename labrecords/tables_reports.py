"""The list of issued reports (one table drives the page, sorting and paging)."""

import django_tables2 as tables
from django.urls import reverse
from django.utils.html import format_html

from labrecords.models import Report, ReportKind


class ReportTable(tables.Table):
    number = tables.LinkColumn(
        "labrecords:report-detail", args=[tables.A("number")], verbose_name="Report"
    )
    kind = tables.Column(verbose_name="Document")
    lot = tables.Column(accessor="lot__number", verbose_name="Lot")
    customer = tables.Column(accessor="lot__order__customer__name", verbose_name="Customer")
    issued_at = tables.DateTimeColumn(format="Y-m-d H:i T", verbose_name="Issued")
    status = tables.Column(empty_values=(), orderable=False, verbose_name="Status")
    pdf = tables.Column(empty_values=(), orderable=False, verbose_name="PDF")

    class Meta:
        model = Report
        fields = ("number", "kind", "lot", "customer", "issued_at", "status", "pdf")
        attrs = {"class": "records"}
        empty_text = "No reports issued."

    def render_kind(self, record):
        if record.kind == ReportKind.AMENDMENT:
            return f"Amendment to {record.amends.number}"
        if record.kind == ReportKind.REISSUE:
            return f"Re-issue of {record.replaces.number}"
        return "Report"

    def render_status(self, record):
        return report_status(record)

    def render_pdf(self, record):
        url = reverse("labrecords:report-pdf", args=[record.number])
        return format_html('<a href="{}">Download</a>', url)


def report_status(report: Report) -> str:
    """In force, or superseded by the re-issue that replaced it (or its amended report)."""
    base = report.amends if report.kind == ReportKind.AMENDMENT else report
    replaced = getattr(base, "replaced_by", None) if base is not None else None
    if replaced is not None:
        return f"Superseded by {replaced.number}"
    return "In force"
