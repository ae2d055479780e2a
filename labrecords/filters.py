import django_filters

from labrecords.models import Customer, Lot, LotStage


class LotFilter(django_filters.FilterSet):
    number = django_filters.CharFilter(lookup_expr="icontains", label="Lot number contains")
    customer = django_filters.ModelChoiceFilter(
        field_name="order__customer", queryset=Customer.objects.none(), label="Customer"
    )
    stage = django_filters.ChoiceFilter(choices=LotStage.choices)

    class Meta:
        model = Lot
        fields = ["number", "customer", "stage"]

    def __init__(self, *args, user=None, **kwargs):
        super().__init__(*args, **kwargs)
        if user is not None:
            self.filters["customer"].queryset = Customer.objects.visible_to(user)
