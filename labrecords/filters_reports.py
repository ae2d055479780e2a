import django_filters

from labrecords.models import Report, ReportKind


class ReportFilter(django_filters.FilterSet):
    number = django_filters.CharFilter(lookup_expr="icontains", label="Report number contains")
    lot = django_filters.CharFilter(
        field_name="lot__number", lookup_expr="icontains", label="Lot number contains"
    )
    kind = django_filters.ChoiceFilter(choices=ReportKind.choices, label="Document")

    class Meta:
        model = Report
        fields = ["number", "lot", "kind"]
