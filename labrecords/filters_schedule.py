import django_filters

from durability.models import CalendarKind, MethodKind, Resource


class ResourceFilter(django_filters.FilterSet):
    calendar = django_filters.ChoiceFilter(choices=CalendarKind.choices, label="Works")
    kind = django_filters.ChoiceFilter(
        choices=MethodKind.choices, label="Runs method kind", method="filter_kind"
    )
    active = django_filters.BooleanFilter(label="In use")

    class Meta:
        model = Resource
        fields = ["calendar", "kind", "active"]

    def filter_kind(self, queryset, name, value):
        # Kinds are a JSON list; its text holds each kind in quotes on both databases.
        return queryset.filter(kinds__icontains=f'"{value}"')
