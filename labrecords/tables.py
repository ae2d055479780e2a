import django_tables2 as tables

from labrecords.models import Lot


class LotTable(tables.Table):
    number = tables.LinkColumn("labrecords:lot-detail", args=[tables.A("pk")], verbose_name="Lot")
    customer = tables.Column(accessor="order__customer__name", verbose_name="Customer")
    order = tables.Column(accessor="order__customer_order_number", verbose_name="Customer order")
    design = tables.Column(accessor="design__code", verbose_name="Coating design")
    glass = tables.Column(accessor="spec__glass__name", verbose_name="Glass", default="not stated")
    due = tables.DateColumn(accessor="order__due_date", verbose_name="Due", default="none")

    class Meta:
        model = Lot
        fields = ("number", "customer", "order", "design", "glass", "run_date", "stage", "due")
        attrs = {"class": "records"}
        empty_text = "No lots."
