"""Forms for chamber runs, chamber logs and spectra. They only validate input; the views
hand `cleaned_data` to the services, which apply the rules."""

from __future__ import annotations

from django import forms
from django.conf import settings

from durability.exposure.logger import DateOrder
from durability.exposure.verify import DurationRule, Interpolation
from durability.spectra.importers import QUANTITIES, UNITS, X_UNITS
from labrecords.models import WitnessPiece
from labrecords.selectors_chambers import chamber_instruments, logger_instruments

_LOCAL_INPUT = ["%Y-%m-%dT%H:%M", "%Y-%m-%dT%H:%M:%S", "%Y-%m-%d %H:%M", "%Y-%m-%d %H:%M:%S"]


class LocalDateTimeField(forms.DateTimeField):
    """A date and time typed in the lab's time zone (the browser's datetime-local input)."""

    widget = forms.DateTimeInput(attrs={"type": "datetime-local"}, format="%Y-%m-%dT%H:%M")

    def __init__(self, **kwargs):
        kwargs.setdefault("input_formats", _LOCAL_INPUT)
        super().__init__(**kwargs)


class EvidenceFileField(forms.FileField):
    """An uploaded file no larger than settings.EVIDENCE_MAX_BYTES."""

    def validate(self, value):
        super().validate(value)
        limit = settings.EVIDENCE_MAX_BYTES
        if value is not None and value.size > limit:
            raise forms.ValidationError(
                f"The file is {value.size} bytes; evidence files may be at most {limit} bytes."
            )


class ChamberRunForm(forms.Form):
    chamber = forms.ModelChoiceField(queryset=chamber_instruments(), label="Chamber")
    logger = forms.ModelChoiceField(
        queryset=logger_instruments(), required=False, label="Data logger"
    )
    method_version = forms.ModelChoiceField(queryset=None, label="Method version checked against")
    loaded_at = LocalDateTimeField(label="Loaded at")
    pieces = forms.ModelMultipleChoiceField(
        queryset=WitnessPiece.objects.none(),
        widget=forms.CheckboxSelectMultiple,
        label="Witness pieces loaded",
    )

    def __init__(self, *args, group, **kwargs):
        super().__init__(*args, **kwargs)
        from durability.models import MethodVersion

        self.fields["method_version"].queryset = MethodVersion.objects.filter(
            pk__in=[v.pk for v in group.versions]
        ).select_related("method")
        if len(group.versions) == 1:
            self.fields["method_version"].initial = group.versions[0].pk
        self.fields["pieces"].queryset = WitnessPiece.objects.filter(
            pk__in=[p.piece.pk for p in group.pieces]
        ).order_by("ident")
        self.fields["chamber"].queryset = chamber_instruments()
        self.fields["logger"].queryset = logger_instruments()


class UnloadForm(forms.Form):
    unloaded_at = LocalDateTimeField(label="Unloaded at")


_DATE_ORDERS = [("", "found from the file")] + [(o.value, o.value) for o in DateOrder]
_CONVENTIONS = [
    (Interpolation.INTERPOLATED.value, "linear interpolation with exact crossing times"),
    (Interpolation.HOLD.value, "zero-order hold (each reading stands until the next)"),
]
_RULES = [
    (DurationRule.CUMULATIVE.value, "cumulative (the hours in tolerance add up)"),
    (DurationRule.CONTINUOUS.value, "continuous (one unbroken run)"),
]


class ExposureOptionsForm(forms.Form):
    time_zone = forms.CharField(
        max_length=60,
        label="Chamber's time zone",
        help_text="IANA name (Europe/Berlin) or a fixed offset (UTC+01:00) for timestamps "
        "without one",
    )
    date_order = forms.ChoiceField(choices=_DATE_ORDERS, required=False, label="Date order")
    interpolation = forms.ChoiceField(
        choices=_CONVENTIONS,
        initial=Interpolation.INTERPOLATED.value,
        label="Time in tolerance counted by",
    )
    duration_rule = forms.ChoiceField(
        choices=_RULES,
        initial=DurationRule.CUMULATIVE.value,
        label="Required hours are",
        help_text="used only when the method version does not say",
    )
    temperature_offset_k = forms.DecimalField(
        initial=0,
        max_digits=6,
        decimal_places=3,
        label="Logger temperature offset (K)",
        help_text="from the logger's calibration: corrected = logged + offset",
    )
    rh_offset_percent = forms.DecimalField(
        initial=0,
        max_digits=6,
        decimal_places=3,
        label="Logger humidity offset (% RH)",
    )

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        # Read when the form is made, not at import: the lab's zone comes from settings.
        self.fields["time_zone"].initial = settings.TIME_ZONE


class ChamberLogForm(ExposureOptionsForm):
    file = EvidenceFileField(label="Data logger's CSV export")
    note = forms.CharField(max_length=200, required=False)

    field_order = [
        "file",
        "time_zone",
        "date_order",
        "interpolation",
        "duration_rule",
        "temperature_offset_k",
        "rh_offset_percent",
        "note",
    ]


class ExposureRecheckForm(ExposureOptionsForm):
    evidence = forms.ChoiceField(label="Stored log")
    reason = forms.CharField(widget=forms.Textarea(attrs={"rows": 2}), label="Why check again")

    field_order = [
        "evidence",
        "reason",
        "time_zone",
        "date_order",
        "interpolation",
        "duration_rule",
        "temperature_offset_k",
        "rh_offset_percent",
    ]

    def __init__(self, *args, logs, **kwargs):
        super().__init__(*args, **kwargs)
        self.fields["evidence"].choices = [
            (str(e.pk), f"{e.original_name} ({e.uploaded_at:%Y-%m-%d %H:%M})") for e in logs
        ]


class SpectrumForm(forms.Form):
    step = forms.ChoiceField(label="Step")
    stage = forms.ChoiceField(
        choices=[("before", "before the test"), ("after", "after the test")], label="Measured"
    )
    file = EvidenceFileField(label="Spectrophotometer export (CSV, TXT or JCAMP-DX)")
    quantity = forms.ChoiceField(
        choices=[("", "as the file or the coating spec says")] + [(q, q) for q in QUANTITIES],
        required=False,
        label="R or T",
    )
    x_unit = forms.ChoiceField(
        choices=[("", "as the file says")] + [(u, u) for u in X_UNITS],
        required=False,
        label="Wavelength unit",
    )
    y_unit = forms.ChoiceField(
        choices=[("", "as the file says")] + [(u, u) for u in UNITS],
        required=False,
        label="Value unit",
    )
    note = forms.CharField(max_length=200, required=False)

    def __init__(self, *args, steps, **kwargs):
        super().__init__(*args, **kwargs)
        self.fields["step"].choices = [(str(s.step_key), f"{s.order}. {s.name}") for s in steps]
