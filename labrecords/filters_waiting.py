"""The waiting-work filters: customer, method kind, lot stage and due window."""

import datetime

import django_filters
from django.utils import timezone

from durability.models import MethodKind
from labrecords import clock
from labrecords.models import Customer, LotStage, SequencePiece
from labrecords.selectors_waiting import FINISHED_STAGES

DUE_WINDOWS = (
    ("late", "Late (due date passed)"),
    ("7", "Due within 7 days"),
    ("14", "Due within 14 days"),
    ("30", "Due within 30 days"),
    ("none", "No due date"),
)


class WaitingFilter(django_filters.FilterSet):
    """Filters the pieces' lots in the database; `kind` is applied to the computed rows,
    since the next step of a piece is known only after its progress is read."""

    customer = django_filters.ModelChoiceFilter(
        field_name="piece__lot__order__customer",
        queryset=Customer.objects.all(),
        label="Customer",
    )
    kind = django_filters.ChoiceFilter(
        choices=MethodKind.choices, label="Method kind of the next step", method="keep_all"
    )
    stage = django_filters.ChoiceFilter(
        field_name="piece__lot__stage",
        label="Lot stage",
        choices=[c for c in LotStage.choices if c[0] not in FINISHED_STAGES],
    )
    due = django_filters.ChoiceFilter(choices=DUE_WINDOWS, label="Due", method="due_window")

    class Meta:
        model = SequencePiece
        fields = ["customer", "kind", "stage", "due"]

    def keep_all(self, queryset, name, value):
        return queryset

    def due_window(self, queryset, name, value):
        today = timezone.localdate(clock.now())
        field = "piece__lot__order__due_date"
        if value == "late":
            return queryset.filter(**{f"{field}__lt": today})
        if value == "none":
            return queryset.filter(**{f"{field}__isnull": True})
        days = int(value)
        return queryset.filter(
            **{f"{field}__gte": today, f"{field}__lte": today + datetime.timedelta(days=days)}
        )
