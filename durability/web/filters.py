import django_filters

from durability.models import Method, MethodKind, MethodVersion, ParameterStatus, Standard


class MethodFilter(django_filters.FilterSet):
    standard = django_filters.ModelChoiceFilter(queryset=Standard.objects.all())
    kind = django_filters.ChoiceFilter(choices=MethodKind.choices)
    status = django_filters.ChoiceFilter(
        choices=ParameterStatus.choices, method="filter_status", label="Has a parameter with status"
    )

    class Meta:
        model = Method
        fields = ["standard", "kind", "status"]

    def filter_status(self, queryset, name, value):
        """Methods whose current version has at least one parameter with that status."""
        current: dict[int, MethodVersion] = {}
        for version in MethodVersion.objects.order_by("method_id", "-number"):
            current.setdefault(version.method_id, version)
        keep = [
            method_id
            for method_id, version in current.items()
            if any(row["status"] == value for row in version.parameters())
            or version.acceptance_status == value
        ]
        return queryset.filter(pk__in=keep)
