import django_filters

from durability.models import Method, MethodKind, Standard


class MethodFilter(django_filters.FilterSet):
    standard = django_filters.ModelChoiceFilter(queryset=Standard.objects.all())
    kind = django_filters.ChoiceFilter(choices=MethodKind.choices)

    class Meta:
        model = Method
        fields = ["standard", "kind"]
