"""Forms for resources, the lab calendar, custody and labels. They only validate."""

from __future__ import annotations

import datetime

from django import forms

from labrecords.models import PlaceKind

WEEKDAYS = [
    (0, "Monday"),
    (1, "Tuesday"),
    (2, "Wednesday"),
    (3, "Thursday"),
    (4, "Friday"),
    (5, "Saturday"),
    (6, "Sunday"),
]


class _LocalDateTime(forms.DateTimeInput):
    input_type = "datetime-local"

    def __init__(self, **kwargs):
        super().__init__(format="%Y-%m-%dT%H:%M", **kwargs)


class TimelineForm(forms.Form):
    days = forms.IntegerField(
        label="Days shown", min_value=1, max_value=28, initial=7, required=False
    )
    resource = forms.CharField(label="Resource", max_length=30, required=False)


class BlockForm(forms.Form):
    starts_at = forms.DateTimeField(
        label="From", widget=_LocalDateTime(), input_formats=["%Y-%m-%dT%H:%M"]
    )
    ends_at = forms.DateTimeField(
        label="Until", widget=_LocalDateTime(), input_formats=["%Y-%m-%dT%H:%M"]
    )
    reason = forms.CharField(label="Reason (maintenance, calibration, ...)", max_length=200)

    def clean(self):
        data = super().clean()
        if data.get("starts_at") and data.get("ends_at") and data["ends_at"] <= data["starts_at"]:
            self.add_error("ends_at", "The block must end after it starts.")
        return data


class BrokenForm(forms.Form):
    expected_end = forms.DateTimeField(
        label="Expected back in service", widget=_LocalDateTime(), input_formats=["%Y-%m-%dT%H:%M"]
    )
    reason = forms.CharField(label="What is broken", max_length=200)


class ReasonForm(forms.Form):
    reason = forms.CharField(label="Why", max_length=300)


class HolidayForm(forms.Form):
    day = forms.DateField(label="Day", widget=forms.DateInput(attrs={"type": "date"}))
    name = forms.CharField(label="Name", max_length=80, initial="Lab closure")


class LabHoursForm(forms.Form):
    weekdays = forms.TypedMultipleChoiceField(
        label="Working days", choices=WEEKDAYS, coerce=int, widget=forms.CheckboxSelectMultiple
    )
    opens = forms.TimeField(label="Opens", widget=forms.TimeInput(attrs={"type": "time"}))
    closes = forms.TimeField(label="Closes", widget=forms.TimeInput(attrs={"type": "time"}))
    valid_from = forms.DateField(label="Valid from", widget=forms.DateInput(attrs={"type": "date"}))

    def clean(self):
        data = super().clean()
        if data.get("opens") and data.get("closes") and data["closes"] <= data["opens"]:
            self.add_error("closes", "The lab must close after it opens (same day).")
        return data


class CustodyMoveForm(forms.Form):
    place_kind = forms.ChoiceField(
        label="Now at",
        choices=[
            (k.value, k.label)
            for k in (PlaceKind.SHELF, PlaceKind.CHAMBER, PlaceKind.BENCH, PlaceKind.RETURNED)
        ],
    )
    place = forms.CharField(label="Where (e.g. shelf B3, HUM-1)", max_length=80)
    note = forms.CharField(label="Note", max_length=200, required=False)


class CustodyRetainForm(forms.Form):
    place = forms.CharField(label="Kept at", max_length=80)
    retain_until = forms.DateField(
        label="Kept until (empty: the lot's first report plus the usual retention)",
        required=False,
        widget=forms.DateInput(attrs={"type": "date"}),
    )
    note = forms.CharField(label="Note", max_length=200, required=False)


class CustodyDisposeForm(forms.Form):
    note = forms.CharField(label="How it was disposed of", max_length=200)


class LabelsForm(forms.Form):
    skip = forms.IntegerField(
        label="Labels already used on the sheet",
        min_value=0,
        max_value=23,
        initial=0,
        required=False,
    )


def local_default(hours: int = 0) -> str:
    """A datetime-local default value `hours` from now (lab time), whole hours."""
    from django.utils import timezone

    moment = timezone.localtime() + datetime.timedelta(hours=hours)
    return moment.replace(minute=0, second=0, microsecond=0).strftime("%Y-%m-%dT%H:%M")
