"""Bench entry forms. They validate and convert what was typed; the services decide.

One form per step, built from the step's sections (`services.bench.entry_sections`):
the common part (when, instruments, consumables, uncertainty, photos, the quality
manager's authorisation of an invalid result) plus the fields of each section. Defects
and spectral statistics are formsets with a few blank rows (no script needed).
"""

from __future__ import annotations

import datetime
from decimal import Decimal
from typing import Any

from django import forms
from django.contrib.auth import authenticate
from django.utils import timezone

from durability.grading import ASTM_D3359_CLASSES, DefectType, RatingScale, grade_label
from durability.models import Instrument
from durability.surface.iso10110 import Iso10110Observation, SurfaceScratch
from durability.surface.scratch_dig import Dig, Scratch, ScratchDigObservation
from durability.verdicts import SpectralStatistic
from labrecords import clock
from labrecords.models import ChamberRun, Consumable, PlanStep, StepResult
from labrecords.roles import Role, has_role
from labrecords.services.bench import (
    ChamberRunEntry,
    InspectionEntry,
    ResultValues,
    entry_sections,
    statistics_needed,
    step_rule,
)
from labrecords.services.instruments import instrument_state

_LOCAL_FORMAT = "%Y-%m-%dT%H:%M"
_DATETIME = {"widget": forms.DateTimeInput(attrs={"type": "datetime-local"},
                                           format=_LOCAL_FORMAT),
             "input_formats": [_LOCAL_FORMAT, "%Y-%m-%d %H:%M", "%Y-%m-%dT%H:%M:%S"]}


def _now_local() -> datetime.datetime:
    return timezone.localtime(clock.now()).replace(second=0, microsecond=0)


class MultipleFileInput(forms.ClearableFileInput):
    allow_multiple_selected = True


class MultipleFileField(forms.FileField):
    """Several files in one input; cleans to a list (empty when none)."""

    def __init__(self, *args: Any, **kwargs: Any):
        kwargs.setdefault("widget", MultipleFileInput(attrs={"accept": "image/jpeg,image/png"}))
        kwargs.setdefault("required", False)
        super().__init__(*args, **kwargs)

    def clean(self, data, initial=None):
        files = data if isinstance(data, list | tuple) else ([data] if data else [])
        return [super(MultipleFileField, self).clean(item, initial) for item in files if item]


class ObjectMultipleChoiceField(forms.MultipleChoiceField):
    """Choices from a list of objects read beforehand (no query while the form renders);
    cleans to the chosen objects."""

    def __init__(self, *args: Any, **kwargs: Any):
        super().__init__(*args, **kwargs)
        self._by_pk: dict[str, Any] = {}

    def set_objects(self, objects: list[Any], label_of) -> None:
        self._by_pk = {str(o.pk): o for o in objects}
        self.choices = [(str(o.pk), label_of(o)) for o in objects]

    def clean(self, value):
        return [self._by_pk[v] for v in super().clean(value)]


class ObjectChoiceField(forms.ChoiceField):
    """One choice from a list of objects read beforehand; cleans to the object or None."""

    def __init__(self, *args: Any, empty_label: str = "—", **kwargs: Any):
        super().__init__(*args, **kwargs)
        self.empty_label = empty_label
        self._by_pk: dict[str, Any] = {}

    def set_objects(self, objects: list[Any], label_of) -> None:
        self._by_pk = {str(o.pk): o for o in objects}
        self.choices = [("", self.empty_label)] + [(str(o.pk), label_of(o)) for o in objects]

    def clean(self, value):
        value = super().clean(value)
        return self._by_pk.get(value) if value else None


def instrument_label(obj: Instrument) -> str:
    return f"{obj.ident} {obj.name} · {instrument_state(obj).label}"


def consumable_label(obj: Consumable) -> str:
    today = timezone.localdate(clock.now())
    usable = (f"usable through {obj.expiry.isoformat()}" if obj.usable_on(today)
              else f"EXPIRED after {obj.expiry.isoformat()}")
    grade = f", {obj.grade}" if obj.grade else ""
    return f"{obj.get_kind_display()}: {obj.name}{grade}, lot {obj.supplier_lot} · {usable}"


def run_label(obj: ChamberRun) -> str:
    start = timezone.localtime(obj.loaded_at)
    end = (f"{timezone.localtime(obj.unloaded_at):%Y-%m-%d %H:%M}" if obj.unloaded_at
           else "still running")
    return f"{obj.ident} in {obj.chamber.ident}: {start:%Y-%m-%d %H:%M} to {end}"


def _tokens(text: str) -> list[str]:
    return [t.rstrip(",").replace(",", ".") for t in text.replace(";", " ").split() if t]


def _float(token: str, where: str) -> float:
    try:
        return float(Decimal(token))
    except ArithmeticError:
        raise forms.ValidationError(f"{where}: {token!r} is not a number.") from None


def _number_list(text: str, label: str) -> tuple[float, ...]:
    return tuple(_float(t, f"{label}, item {i}") for i, t in enumerate(_tokens(text), start=1))


def _lines(text: str, label: str, counts: tuple[int, ...]) -> list[tuple[int, list[float]]]:
    rows = []
    for number, line in enumerate(text.splitlines(), start=1):
        tokens = _tokens(line)
        if not tokens:
            continue
        if len(tokens) not in counts:
            wanted = " or ".join(str(c) for c in counts)
            raise forms.ValidationError(
                f"{label}, line {number}: expected {wanted} numbers, got {len(tokens)}.")
        rows.append((number, [_float(t, f"{label}, line {number}") for t in tokens]))
    return rows


_GRADE_CHOICES = {
    scale: [("", "not graded")] + [(str(g), f"{g} {grade_label(scale, g)}") for g in range(6)]
    for scale in RatingScale
}


class DefectForm(forms.Form):
    """One defect seen: type, where, how much (ISO 4628-1 style 0-5 grades)."""

    defect = forms.ChoiceField(
        required=False, choices=[("", "—")] + [(d.value, d.words) for d in DefectType],
        widget=forms.Select(attrs={"aria-label": "Defect type"}))
    zone = forms.CharField(required=False, max_length=80,
                           widget=forms.TextInput(attrs={"aria-label": "Zone"}))
    extent = forms.CharField(required=False, max_length=80,
                             widget=forms.TextInput(attrs={"aria-label": "Extent"}))
    quantity = forms.TypedChoiceField(required=False, coerce=int, empty_value=None,
                                      choices=_GRADE_CHOICES[RatingScale.QUANTITY],
                                      widget=forms.Select(attrs={"aria-label": "Quantity"}))
    size = forms.TypedChoiceField(required=False, coerce=int, empty_value=None,
                                  choices=_GRADE_CHOICES[RatingScale.SIZE],
                                  widget=forms.Select(attrs={"aria-label": "Size"}))
    intensity = forms.TypedChoiceField(required=False, coerce=int, empty_value=None,
                                       choices=_GRADE_CHOICES[RatingScale.INTENSITY],
                                       widget=forms.Select(attrs={"aria-label": "Intensity"}))

    def clean(self):
        data = super().clean()
        graded = any(data.get(k) is not None for k in ("quantity", "size", "intensity"))
        if not data.get("defect") and (graded or data.get("zone") or data.get("extent")):
            raise forms.ValidationError("Choose the defect type of this row.")
        return data


class SpectralForm(forms.Form):
    """One measured statistic of a spectrum over a band, in %."""

    band_from_nm = forms.DecimalField(
        required=False, min_value=0, label="Band from (nm)",
        widget=forms.NumberInput(attrs={"aria-label": "Band from (nm)", "step": "any"}))
    band_to_nm = forms.DecimalField(
        required=False, min_value=0, label="Band to (nm)",
        widget=forms.NumberInput(attrs={"aria-label": "Band to (nm)", "step": "any"}))
    quantity = forms.ChoiceField(choices=[("R", "Reflection"), ("T", "Transmission")],
                                 widget=forms.Select(attrs={"aria-label": "Quantity"}))
    statistic = forms.ChoiceField(choices=[("average", "average"), ("maximum", "maximum"),
                                           ("minimum", "minimum")],
                                  widget=forms.Select(attrs={"aria-label": "Statistic"}))
    value = forms.DecimalField(
        required=False, label="Measured (%)",
        widget=forms.NumberInput(attrs={"aria-label": "Measured (%)", "step": "any"}))
    expanded_uncertainty = forms.DecimalField(
        required=False, min_value=0, label="Expanded uncertainty (%)",
        widget=forms.NumberInput(attrs={"aria-label": "Expanded uncertainty (%)",
                                        "step": "any"}))

    def clean(self):
        data = super().clean()
        given = [data.get(k) is not None for k in ("band_from_nm", "band_to_nm", "value")]
        if any(given) and not all(given):
            raise forms.ValidationError("Give the band (from, to) and the measured value.")
        if all(given) and data["band_from_nm"] > data["band_to_nm"]:
            raise forms.ValidationError("The band must run from the lower wavelength.")
        return data


DefectFormSet = forms.formset_factory(DefectForm, extra=4, max_num=20)


class StepResultForm(forms.Form):
    """The bench form of one step (fields per section) and the common fields."""

    observed_at = forms.DateTimeField(label="When the work was done", **_DATETIME)
    instruments = ObjectMultipleChoiceField(required=False, widget=forms.CheckboxSelectMultiple,
                                            label="Instruments used (calibration status shown)")
    consumables = ObjectMultipleChoiceField(required=False, widget=forms.CheckboxSelectMultiple,
                                            label="Consumables used")
    uncertainty = forms.DecimalField(required=False, min_value=0, max_digits=10,
                                     decimal_places=4, label="Measurement uncertainty")
    uncertainty_unit = forms.CharField(required=False, max_length=20, label="Its unit")
    notes = forms.CharField(required=False, widget=forms.Textarea(attrs={"rows": 2}))
    photos = MultipleFileField(label="Photos (JPEG or PNG)")
    invalid_qm = forms.CharField(required=False, max_length=150,
                                 label="Quality manager (user name)")
    invalid_qm_password = forms.CharField(required=False, widget=forms.PasswordInput,
                                          label="Quality manager's password")
    invalid_reason = forms.CharField(required=False, widget=forms.Textarea(attrs={"rows": 2}),
                                     label="Quality manager's reason to record it as invalid")

    def __init__(self, *args: Any, step: PlanStep, instruments: list[Instrument],
                 consumables: list[Consumable], runs: list[ChamberRun],
                 chambers: list[Instrument], **kwargs: Any):
        super().__init__(*args, **kwargs)
        self.step = step
        self.sections = entry_sections(step)
        self.rule = step_rule(step)
        self.fields["observed_at"].initial = _now_local()
        self.fields["instruments"].set_objects(instruments, instrument_label)
        self.fields["consumables"].set_objects(consumables, consumable_label)
        parameters = {name: (spec.get("value") if isinstance(spec, dict) else spec)
                      for name, spec in step.parameters.items()}
        for section in self.sections:
            getattr(self, f"_add_{section}")(parameters, runs=runs, chambers=chambers)

    # ------------------------------------------------------------ sections

    def _add_chamber(self, parameters: dict, *, runs: list[ChamberRun],
                     chambers: list[Instrument], **_: Any) -> None:
        self.fields["chamber_run"] = ObjectChoiceField(
            required=False, label="Chamber run that held the piece",
            empty_label="— none: record the run below —")
        self.fields["chamber_run"].set_objects(runs, run_label)
        self.fields["run_chamber"] = ObjectChoiceField(required=False,
                                                       label="New run: chamber")
        self.fields["run_chamber"].set_objects(chambers, instrument_label)
        self.fields["run_loaded_at"] = forms.DateTimeField(required=False, label="Loaded at",
                                                           **_DATETIME)
        self.fields["run_unloaded_at"] = forms.DateTimeField(required=False,
                                                             label="Unloaded at", **_DATETIME)

    def _add_tape(self, parameters: dict, **_: Any) -> None:
        self.fields["coating_removed"] = forms.TypedChoiceField(
            label="Was coating removed?", widget=forms.RadioSelect, coerce=lambda v: v == "yes",
            choices=[("no", "No coating removed"), ("yes", "Coating removed")],
            error_messages={"required": "Say whether coating was removed."})
        self.fields["removal_location"] = forms.CharField(
            required=False, max_length=200, label="Where was it removed?")

    def _add_crosshatch(self, parameters: dict, **_: Any) -> None:
        self.fields["detached_share_pct"] = forms.DecimalField(
            required=False, min_value=0, max_value=100, decimal_places=2,
            label="Share of the lattice detached (%)")
        self.fields["crosshatch_class"] = forms.TypedChoiceField(
            required=False, coerce=int, empty_value=None, label="Or the class rated",
            choices=[("", "—")] + [(str(c), f"ISO 2409 class {c} (ASTM D3359 {astm})")
                                   for c, astm in enumerate(ASTM_D3359_CLASSES)])

    def _add_abrasion(self, parameters: dict, **_: Any) -> None:
        strokes = parameters.get("strokes") or parameters.get("cycles")
        force = parameters.get("force_n") or parameters.get("force_min_n")
        self.fields["strokes"] = forms.IntegerField(min_value=1, label="Strokes made",
                                                    initial=strokes)
        self.fields["force_n"] = forms.DecimalField(min_value=0, label="Force (N)",
                                                    initial=force)

    def _add_solubility(self, parameters: dict, **_: Any) -> None:
        solution = parameters.get("solvents") or parameters.get("solution") or ""
        if isinstance(solution, list | tuple):
            solution = ", ".join(str(s) for s in solution)
        minutes = parameters.get("immersion_min")
        if minutes is None and parameters.get("duration_h") is not None:
            minutes = float(parameters["duration_h"]) * 60
        self.fields["solution"] = forms.CharField(
            max_length=200, label="Solvent or solution and its grade", initial=solution)
        self.fields["immersion_min"] = forms.DecimalField(
            min_value=0, label="Immersion time (min)", initial=minutes)

    def _add_spectral(self, parameters: dict, **_: Any) -> None:
        """Spectral rows are a formset (see BenchEntry)."""

    def _add_inspection(self, parameters: dict, **_: Any) -> None:
        self.fields["no_defects"] = forms.BooleanField(
            required=False, label="No defects observed")
        self.fields["lighting"] = forms.CharField(required=False, max_length=80)
        self.fields["background"] = forms.CharField(required=False, max_length=80)
        self.fields["magnification"] = forms.CharField(required=False, max_length=20)

    def _add_scratch_dig(self, parameters: dict, **_: Any) -> None:
        self.fields["sd_aperture_diameter_mm"] = forms.DecimalField(
            required=False, min_value=0, label="Clear aperture diameter (mm)")
        self.fields["sd_aperture_area_mm2"] = forms.DecimalField(
            required=False, min_value=0, label="Or its area (mm²), for a non-round aperture")
        self.fields["sd_scratches"] = forms.CharField(
            required=False, widget=forms.Textarea(attrs={"rows": 3}),
            label="Scratches: one per line, scratch number and length (mm)")
        self.fields["sd_digs"] = forms.CharField(
            required=False, widget=forms.Textarea(attrs={"rows": 3}),
            label="Digs: one per line, diameter (mm), or length and width (mm)")

    def _add_iso10110(self, parameters: dict, **_: Any) -> None:
        self.fields["iso_imperfections"] = forms.CharField(
            required=False, label="Imperfections: grade numbers √area (mm), space-separated")
        self.fields["iso_digs"] = forms.CharField(
            required=False, label="Round digs: diameters (mm), space-separated")
        self.fields["iso_scratches"] = forms.CharField(
            required=False, widget=forms.Textarea(attrs={"rows": 3}),
            label="Scratches: one per line, length and width (mm)")
        self.fields["iso_coating"] = forms.CharField(
            required=False, label="Coating imperfections: √area (mm), space-separated")
        self.fields["iso_edge_chips"] = forms.CharField(
            required=False, label="Edge chips: extent from the edge (mm), space-separated")

    def _add_judgement(self, parameters: dict, **_: Any) -> None:
        self.fields["judgement_outcome"] = forms.ChoiceField(
            label="Your judgement", widget=forms.RadioSelect,
            choices=[("pass", "Pass"), ("fail", "Fail")])
        self.fields["judgement_reason"] = forms.CharField(
            widget=forms.Textarea(attrs={"rows": 2}), label="Reason for the judgement")

    # ------------------------------------------------------------ cleaning

    def clean(self):
        data = super().clean()
        username = (data.get("invalid_qm") or "").strip()
        password = data.get("invalid_qm_password") or ""
        data["invalid_authorised_by"] = None
        if username or password:
            user = authenticate(username=username, password=password)
            if user is None or not has_role(user, Role.QUALITY_MANAGER):
                self.add_error("invalid_qm_password",
                               "The quality manager's user name or password is wrong.")
            else:
                data["invalid_authorised_by"] = user
        if "chamber" in self.sections and data.get("chamber_run") is None:
            new = [data.get(k) for k in ("run_chamber", "run_loaded_at", "run_unloaded_at")]
            if any(v is not None for v in new) and not all(v is not None for v in new):
                self.add_error("run_chamber",
                               "A new run needs its chamber, when it was loaded and unloaded.")
        for name, parser in (("sd_scratches", self._scratches), ("sd_digs", self._digs),
                             ("iso_imperfections", None), ("iso_digs", None),
                             ("iso_coating", None), ("iso_edge_chips", None),
                             ("iso_scratches", self._iso_scratches)):
            if name not in self.fields or name in self.errors:
                continue
            label = str(self.fields[name].label).split(":")[0]
            try:
                data[f"{name}_parsed"] = (parser(data.get(name) or "") if parser
                                          else _number_list(data.get(name) or "", label))
            except forms.ValidationError as exc:
                self.add_error(name, exc)
        return data

    @staticmethod
    def _scratches(text: str) -> tuple[Scratch, ...]:
        rows = _lines(text, "Scratches", (2,))
        for number, (grade, _length) in rows:
            if grade != int(grade):
                raise forms.ValidationError(
                    f"Scratches, line {number}: the scratch number must be a whole number.")
        return tuple(Scratch(number=int(n), length_mm=length) for _, (n, length) in rows)

    @staticmethod
    def _digs(text: str) -> tuple[Dig, ...]:
        return tuple(Dig(length_mm=v[0], width_mm=v[1] if len(v) > 1 else None)
                     for _, v in _lines(text, "Digs", (1, 2)))

    @staticmethod
    def _iso_scratches(text: str) -> tuple[SurfaceScratch, ...]:
        return tuple(SurfaceScratch(length_mm=v[0], width_mm=v[1])
                     for _, v in _lines(text, "Scratches", (2,)))


class CorrectionFields(forms.Form):
    """What a correction adds: the revision it corrects (for the stale check) and why."""

    revision = forms.IntegerField(widget=forms.HiddenInput)
    reason = forms.CharField(widget=forms.Textarea(attrs={"rows": 2}),
                             label="Why is the result corrected?",
                             error_messages={"required": "Say why the result is corrected."})


def _float_or_none(value: Decimal | None) -> float | None:
    return float(value) if value is not None else None


class BenchEntry:
    """The forms of one bench entry (main form, defect rows, spectral rows), validated
    together, and the keyword arguments for the recording service."""

    def __init__(self, data=None, files=None, *, step: PlanStep, instruments: list[Instrument],
                 consumables: list[Consumable], runs: list[ChamberRun],
                 chambers: list[Instrument], initial: dict[str, Any] | None = None,
                 defects: list[dict[str, Any]] | None = None,
                 spectral: list[dict[str, Any]] | None = None,
                 correction: dict[str, Any] | None = None):
        self.main = StepResultForm(data, files, step=step, instruments=instruments,
                                   consumables=consumables, runs=runs, chambers=chambers,
                                   initial=initial)
        self.sections = self.main.sections
        self.defects = (DefectFormSet(data, prefix="defect", initial=defects)
                        if "inspection" in self.sections else None)
        self.spectral = None
        if "spectral" in self.sections:
            rows = spectral if spectral is not None else _limit_rows(self.main.rule)
            formset = forms.formset_factory(SpectralForm, extra=1 if rows else 2, max_num=12)
            self.spectral = formset(data, prefix="spectral", initial=rows)
        self.correction = (CorrectionFields(data, initial=correction)
                           if correction is not None else None)
        self.runs = runs
        self.errors_outside: list[str] = []

    def forms(self) -> list[Any]:
        return [f for f in (self.main, self.defects, self.spectral, self.correction)
                if f is not None]

    def is_valid(self) -> bool:
        return all(f.is_valid() for f in self.forms())

    def add_error(self, field: str, message: str) -> None:
        """Show a service's message next to its field, or above the form."""
        if field in self.main.fields:
            self.main.add_error(field, message)
        elif self.correction is not None and field in self.correction.fields:
            self.correction.add_error(field, message)
        else:
            where = "" if field in ("__all__", "") else f"{field.replace('_', ' ')}: "
            self.main.add_error(None, f"{where}{message}")

    def service_kwargs(self) -> dict[str, Any]:
        """What the recording service takes, from the cleaned forms."""
        data = self.main.cleaned_data
        inspection = None
        if "inspection" in self.sections:
            assert self.defects is not None
            rows = [
                {k: v for k, v in form.cleaned_data.items() if v not in (None, "")}
                for form in self.defects.forms
                if form.cleaned_data.get("defect")
            ]
            inspection = InspectionEntry(
                no_defects=bool(data.get("no_defects")), defects=tuple(rows),
                lighting=data.get("lighting", ""), background=data.get("background", ""),
                magnification=data.get("magnification", ""))
        spectral: tuple[SpectralStatistic, ...] = ()
        if self.spectral is not None:
            spectral = tuple(
                SpectralStatistic(
                    band_nm=(float(f.cleaned_data["band_from_nm"]),
                             float(f.cleaned_data["band_to_nm"])),
                    quantity=f.cleaned_data["quantity"], statistic=f.cleaned_data["statistic"],
                    value=float(f.cleaned_data["value"]),
                    expanded_uncertainty=_float_or_none(f.cleaned_data.get("expanded_uncertainty")))
                for f in self.spectral.forms if f.cleaned_data.get("value") is not None)
        scratch_dig = None
        if "scratch_dig" in self.sections and (
                data.get("sd_aperture_diameter_mm") is not None
                or data.get("sd_aperture_area_mm2") is not None
                or data.get("sd_scratches_parsed") or data.get("sd_digs_parsed")):
            scratch_dig = ScratchDigObservation(
                aperture_diameter_mm=_float_or_none(data.get("sd_aperture_diameter_mm")),
                aperture_area_mm2=_float_or_none(data.get("sd_aperture_area_mm2")),
                scratches=data.get("sd_scratches_parsed", ()), digs=data.get("sd_digs_parsed", ()))
        surface = None
        if "iso10110" in self.sections:
            surface = Iso10110Observation(
                imperfections_mm=data.get("iso_imperfections_parsed", ()),
                dig_diameters_mm=data.get("iso_digs_parsed", ()),
                scratches=data.get("iso_scratches_parsed", ()),
                coating_imperfections_mm=data.get("iso_coating_parsed", ()),
                edge_chips_mm=data.get("iso_edge_chips_parsed", ()))
        values = ResultValues(
            coating_removed=data.get("coating_removed"),
            removal_location=data.get("removal_location", ""),
            detached_share_pct=_float_or_none(data.get("detached_share_pct")),
            crosshatch_class=data.get("crosshatch_class"), strokes=data.get("strokes"),
            force_n=_float_or_none(data.get("force_n")), solution=data.get("solution", ""),
            immersion_min=_float_or_none(data.get("immersion_min")), inspection=inspection,
            scratch_dig=scratch_dig, surface=surface, spectral=spectral,
            judgement_outcome=data.get("judgement_outcome", ""),
            judgement_reason=data.get("judgement_reason", ""), notes=data.get("notes", ""))
        new_run = None
        if data.get("chamber_run") is None and data.get("run_chamber") is not None:
            new_run = ChamberRunEntry(chamber=data["run_chamber"],
                                      loaded_at=data["run_loaded_at"],
                                      unloaded_at=data["run_unloaded_at"])
        return dict(
            observed_at=data["observed_at"], values=values,
            instruments=list(data.get("instruments") or []),
            consumables=list(data.get("consumables") or []),
            chamber_run=data.get("chamber_run"), new_run=new_run,
            uncertainty=data.get("uncertainty"), uncertainty_unit=data.get("uncertainty_unit", ""),
            photos=data.get("photos") or [],
            invalid_authorised_by=data.get("invalid_authorised_by"),
            invalid_reason=data.get("invalid_reason", ""))


def _limit_rows(rule: dict[str, Any]) -> list[dict[str, Any]]:
    return [{"band_from_nm": row["band_nm"][0], "band_to_nm": row["band_nm"][1],
             "quantity": row["quantity"], "statistic": row["statistic"]}
            for row in statistics_needed(rule)]


def correction_initial(result: StepResult) -> tuple[dict[str, Any], list[dict[str, Any]],
                                                   list[dict[str, Any]]]:
    """The bench form's initial values from a result revision: main, defect rows, spectral."""
    values = result.values or {}
    initial: dict[str, Any] = {
        "observed_at": timezone.localtime(result.observed_at).replace(second=0, microsecond=0),
        "instruments": [link.instrument_id for link in result.instrument_links.all()],
        "consumables": [link.consumable_id for link in result.consumable_links.all()],
        "uncertainty": result.uncertainty, "uncertainty_unit": result.uncertainty_unit,
        "notes": values.get("notes", ""),
        "chamber_run": result.chamber_run_id,
    }
    for key in ("removal_location", "detached_share_pct", "crosshatch_class", "strokes",
                "force_n", "solution", "immersion_min"):
        if values.get(key) is not None:
            initial[key] = values[key]
    if values.get("coating_removed") is not None:
        initial["coating_removed"] = "yes" if values["coating_removed"] else "no"
    inspection = values.get("inspection") or {}
    for key in ("no_defects", "lighting", "background", "magnification"):
        if key in inspection:
            initial[key] = inspection[key]
    judgement = values.get("judgement") or {}
    if judgement:
        initial["judgement_outcome"] = judgement.get("outcome", "")
        initial["judgement_reason"] = judgement.get("reason", "")
    sd = values.get("scratch_dig")
    if sd:
        initial["sd_aperture_diameter_mm"] = sd.get("aperture_diameter_mm")
        initial["sd_aperture_area_mm2"] = sd.get("aperture_area_mm2")
        initial["sd_scratches"] = "\n".join(f"{s['number']} {s['length_mm']:g}"
                                            for s in sd.get("scratches", []))
        initial["sd_digs"] = "\n".join(
            f"{d['length_mm']:g}" + (f" {d['width_mm']:g}" if d.get("width_mm") else "")
            for d in sd.get("digs", []))
    iso = values.get("iso10110")
    if iso:
        for key, name in (("imperfections_mm", "iso_imperfections"),
                          ("dig_diameters_mm", "iso_digs"),
                          ("coating_imperfections_mm", "iso_coating"),
                          ("edge_chips_mm", "iso_edge_chips")):
            initial[name] = " ".join(f"{v:g}" for v in iso.get(key, []))
        initial["iso_scratches"] = "\n".join(f"{s['length_mm']:g} {s['width_mm']:g}"
                                             for s in iso.get("scratches", []))
    defects = [dict(d) for d in inspection.get("defects", [])]
    spectral = [{"band_from_nm": s["band_nm"][0], "band_to_nm": s["band_nm"][1],
                 "quantity": s["quantity"], "statistic": s["statistic"], "value": s["value"],
                 "expanded_uncertainty": s.get("expanded_uncertainty")}
                for s in values.get("spectral", [])]
    return initial, defects, spectral


class ScanForm(forms.Form):
    scan = forms.CharField(
        max_length=300, label="Piece ID",
        widget=forms.TextInput(attrs={"autofocus": True, "autocomplete": "off",
                                      "inputmode": "text", "spellcheck": "false"}))
    lot = forms.CharField(max_length=24, required=False, label="Lot (optional)")
