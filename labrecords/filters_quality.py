"""Filters of the quality pages."""

import datetime

import django_filters
from django.utils import timezone

from durability.models import Instrument, Method
from labrecords import clock
from labrecords.models import (
    Consumable,
    ConsumableKind,
    MethodAuthorisation,
    Nonconformance,
    NonconformanceKind,
)
from labrecords.services.instruments import DUE_SOON_DAYS


class NonconformanceFilter(django_filters.FilterSet):
    state = django_filters.ChoiceFilter(
        choices=[("open", "Open"), ("disposed", "Disposed")], method="filter_state",
        empty_label="Open and disposed", label="State")
    kind = django_filters.ChoiceFilter(choices=NonconformanceKind.choices)
    lot = django_filters.CharFilter(field_name="lot__number", lookup_expr="icontains",
                                    label="Lot number contains")

    class Meta:
        model = Nonconformance
        fields = ["state", "kind", "lot"]

    def __init__(self, data=None, *args, **kwargs):
        # The list opens on the open ones.
        if data is None or "state" not in data:
            data = data.copy() if data is not None else {}
            data["state"] = "open"
        super().__init__(data, *args, **kwargs)

    def filter_state(self, queryset, name, value):
        if value == "open":
            return queryset.filter(disposition="")
        if value == "disposed":
            return queryset.exclude(disposition="")
        return queryset


class InstrumentFilter(django_filters.FilterSet):
    kind = django_filters.CharFilter(lookup_expr="icontains", label="Kind contains")
    status = django_filters.ChoiceFilter(
        choices=[("valid", "Valid"), ("due_soon", "Due soon"),
                 ("out_of_calibration", "Out of calibration"),
                 ("out_of_service", "Out of service")],
        method="filter_status", label="Calibration status")

    class Meta:
        model = Instrument
        fields = ["kind", "status"]

    def filter_status(self, queryset, name, value):
        today = timezone.localdate(clock.now())
        soon = today + datetime.timedelta(days=DUE_SOON_DAYS)
        if value == "out_of_service":
            return queryset.filter(in_service=False)
        queryset = queryset.filter(in_service=True)
        if value == "out_of_calibration":
            return queryset.filter(calibration_due__lt=today)
        if value == "due_soon":
            return queryset.filter(calibration_due__gte=today, calibration_due__lte=soon)
        return queryset.filter(calibration_due__gt=soon)


class ConsumableFilter(django_filters.FilterSet):
    kind = django_filters.ChoiceFilter(choices=ConsumableKind.choices)
    state = django_filters.ChoiceFilter(choices=[("usable", "Usable"), ("expired", "Expired")],
                                        method="filter_state", label="State")

    class Meta:
        model = Consumable
        fields = ["kind", "state"]

    def filter_state(self, queryset, name, value):
        today = timezone.localdate(clock.now())
        if value == "usable":
            return queryset.filter(expiry__gte=today)
        return queryset.filter(expiry__lt=today)


class AuthorisationFilter(django_filters.FilterSet):
    method = django_filters.ModelChoiceFilter(queryset=Method.objects.order_by("code"))
    active = django_filters.BooleanFilter(field_name="revoked_at", lookup_expr="isnull",
                                          label="Active")

    class Meta:
        model = MethodAuthorisation
        fields = ["method", "active"]
