"""Bench entry: recording and correcting a step's result on a witness piece.

`step_result_record` stores revision 1 of a result, `step_result_correct` a
further revision that supersedes the current one. Both compute the verdict
with `durability.verdicts.step_verdict` from the step's acceptance rule, the
entered values and the validity facts (instruments valid through their
calibration due date, consumables within expiry, the chamber run's exposure
check when there is one), and store the verdict with its reason, clause and
conventions. A failed or invalid result opens a nonconformance; the lot's
stage follows the results.

Two people saving the same result: the database lets only one revision 1 per
step and piece, and only one revision supersede another; the second save is
refused with `StaleResultError`, which carries the current revision, and
nothing of the refused save is kept.
"""

from __future__ import annotations

import datetime
import uuid
from collections.abc import Iterable, Sequence
from dataclasses import asdict, dataclass
from decimal import Decimal
from typing import Any

from django.core.exceptions import PermissionDenied, ValidationError
from django.db import IntegrityError, transaction
from django.utils import timezone

from durability import verdicts
from durability.errors import InputError
from durability.grading import (
    CORRESPONDENCE_NOTE,
    Inspection,
    compare_inspections,
    crosshatch_grade,
    iso_to_astm,
)
from durability.grading import Observation as Seen
from durability.models import Instrument
from durability.surface.iso10110 import Iso10110Observation
from durability.surface.scratch_dig import ScratchDigObservation
from labrecords import clock
from labrecords.access import require_role
from labrecords.models import (
    ChamberRun,
    ChamberRunPiece,
    Consumable,
    DecisionRule,
    Evidence,
    EvidenceKind,
    Lot,
    LotStage,
    Nonconformance,
    NonconformanceKind,
    Observation,
    PlanStep,
    StepResult,
    StepResultConsumable,
    StepResultInstrument,
    TestPlan,
    Verdict,
    WitnessPiece,
)
from labrecords.roles import Role, has_role
from labrecords.selectors_chambers import condition_of, latest_check
from labrecords.selectors_progress import progress_of_pieces
from labrecords.services import chambers as chamber_services
from labrecords.services import observations as observation_services
from labrecords.services.audit import audit_record, snapshot
from labrecords.services.authorisations import require_method_authorisation
from labrecords.services.evidence import display_name, evidence_create, upload_bytes
from labrecords.services.lots import lot_stage_set
from labrecords.services.nonconformances import nonconformance_open
from labrecords.services.observations import StaleRevisionError

RECORDING_ROLES = (Role.TECHNICIAN, Role.ENGINEER)
MAX_PHOTOS = 10

# ---------------------------------------------------------------- what a bench entry holds


@dataclass(frozen=True)
class InspectionEntry:
    """A visual inspection as entered: explicit 'no defects observed', or defects.

    Each defect is {"defect", "zone", "extent", "quantity", "size", "intensity"}; grades are
    whole numbers 0-5 on ISO 4628-1 style scales, or absent.
    """

    no_defects: bool
    defects: tuple[dict[str, Any], ...] = ()
    lighting: str = ""
    background: str = ""
    magnification: str = ""


@dataclass(frozen=True)
class ChamberRunEntry:
    """A chamber run recorded at the bench: which chamber, when it was loaded and unloaded.

    The run is made by the chamber services (load, then unload) with the step's condition.
    """

    chamber: Instrument
    loaded_at: datetime.datetime
    unloaded_at: datetime.datetime


@dataclass(frozen=True)
class ResultValues:
    """Everything entered for one step besides instruments, consumables, run and photos.

    Fill the fields of the step's sections (`entry_sections`); the others stay empty.
    """

    coating_removed: bool | None = None
    removal_location: str = ""
    detached_share_pct: float | None = None
    crosshatch_class: int | None = None
    strokes: int | None = None
    force_n: float | None = None
    solution: str = ""
    immersion_min: float | None = None
    inspection: InspectionEntry | None = None
    scratch_dig: ScratchDigObservation | None = None
    surface: Iso10110Observation | None = None
    spectral: tuple[verdicts.SpectralStatistic, ...] = ()
    judgement_outcome: str = ""
    judgement_reason: str = ""
    notes: str = ""


class StaleResultError(StaleRevisionError):
    """Someone else recorded or corrected this result first; `current` is the revision in force."""

    def __init__(self, current: StepResult, *, first: bool = False):
        self.current = current
        when = timezone.localtime(current.recorded_at)
        verb = "recorded" if first else "corrected"
        who = current.recorded_by.get_full_name() or current.recorded_by.get_username()
        Exception.__init__(
            self,
            f"Someone else {verb} this result first: revision {current.number} by {who} at "
            f"{when:%Y-%m-%d %H:%M %Z} is current, verdict {current.get_verdict_display()} "
            f"({current.verdict_reason}). Nothing was saved; your entry is kept in the form. "
            "Review the current value and correct that one if needed.",
        )


# ---------------------------------------------------------------- which form a step needs

KIND_SECTIONS: dict[str, str] = {
    "adhesion": "tape",
    "crosshatch": "crosshatch",
    "moderate_abrasion": "abrasion",
    "severe_abrasion": "abrasion",
    "humidity": "chamber",
    "temperature": "chamber",
    "thermal_shock": "chamber",
    "salt_fog": "chamber",
    "salt_solubility": "solubility",
    "water_solubility": "solubility",
    "solvent_solubility": "solubility",
    "cleanability": "solubility",
    "inspection": "inspection",
    "spectral_measurement": "spectral",
}
RULE_SECTIONS: dict[str, tuple[str, ...]] = {
    "no_coating_removed": ("tape",),
    "no_listed_defects": ("inspection",),
    "crosshatch_max_class": ("crosshatch",),
    "crosshatch_max_share": ("crosshatch",),
    "scratch_dig": ("inspection", "scratch_dig"),
    "iso10110_7": ("inspection", "iso10110"),
    "spectral_limits": ("spectral",),
    "engineer_judgement": ("judgement",),
}
SECTION_ORDER = ("chamber", "tape", "crosshatch", "abrasion", "solubility", "spectral",
                 "inspection", "scratch_dig", "iso10110", "judgement")
# The rules whose clause is the coating spec's, not the method's.
_SPEC_CLAUSE_RULES = {"scratch_dig", "iso10110_7", "spectral_limits"}


def step_rule(step: PlanStep) -> dict[str, Any]:
    """The step's acceptance rule (the plan's, else the method version's, else recorded only)."""
    rule = (step.acceptance or {}).get("rule") or step.method_version.acceptance_rule
    return dict(rule) if rule else {"rule": "recorded_only"}


def entry_sections(step: PlanStep) -> tuple[str, ...]:
    """The parts of the bench form a step needs, from its method kind and acceptance rule."""
    wanted = set(RULE_SECTIONS.get(str(step_rule(step).get("rule")), ()))
    if step.kind in KIND_SECTIONS:
        wanted.add(KIND_SECTIONS[step.kind])
    return tuple(s for s in SECTION_ORDER if s in wanted)


def step_clause(step: PlanStep) -> str:
    """The words naming the method for the verdict's reason ("MIL-C-48497A humidity")."""
    if step_rule(step).get("rule") in _SPEC_CLAUSE_RULES:
        return ""
    method = step.method_version.method
    name = method.name[:1].lower() + method.name[1:]
    designation = method.standard.designation
    if designation == "LAB":
        return f"the lab's procedure for {name}"
    return " ".join(p for p in (designation, method.clause, name) if p)


def statistics_needed(rule: dict[str, Any]) -> list[dict[str, Any]]:
    """The measured statistics a spectral rule asks for: one per band, quantity and statistic
    (a minimum and a maximum on the same statistic share it), with both bounds."""
    needed: dict[tuple, dict[str, Any]] = {}
    if rule.get("rule") != "spectral_limits":
        return []
    for limit in rule.get("limits", []):
        band = (float(limit["band_nm"][0]), float(limit["band_nm"][1]))
        key = (band, limit["quantity"], limit["statistic"])
        row = needed.setdefault(key, {"band_nm": band, "quantity": limit["quantity"],
                                      "statistic": limit["statistic"], "min": None,
                                      "max": None})
        for bound in ("min", "max"):
            if limit.get(bound) is not None:
                row[bound] = float(limit[bound])
    return list(needed.values())


def inspection_point(step: PlanStep) -> str:
    """The observation point an inspection at this step records."""
    return "initial" if step.role == "initial_inspection" else "after_exposure"


# ---------------------------------------------------------------- record and correct


@transaction.atomic
def step_result_record(
    *, actor, piece: WitnessPiece, step: PlanStep, observed_at: datetime.datetime,
    values: ResultValues, instruments: Sequence[Instrument] = (),
    consumables: Sequence[Consumable] = (), chamber_run: ChamberRun | None = None,
    new_run: ChamberRunEntry | None = None, uncertainty: Decimal | None = None,
    uncertainty_unit: str = "", photos: Sequence[Any] = (),
    invalid_authorised_by=None, invalid_reason: str = "",
) -> StepResult:
    """Record a step's result on a piece (revision 1) with its verdict.

    Refused (ValidationError naming the field) on missing or bad input, when the step is not
    the piece's to record now (plan, sequence order), when an instrument is out of service,
    or when an instrument was out of calibration or a consumable past expiry on the day of
    the test, unless `invalid_authorised_by` (a quality manager whose password the caller
    has checked) and `invalid_reason` are given: then the result is recorded as invalid.
    Refused with PermissionDenied when the actor is not authorised for the method, and with
    StaleResultError when someone else recorded this step on this piece first.
    """
    _require_recorder(actor, step)
    _check_step_is_open(piece, step)
    return _save(actor=actor, piece=piece, step=step, observed_at=observed_at, values=values,
                 instruments=instruments, consumables=consumables, chamber_run=chamber_run,
                 new_run=new_run, uncertainty=uncertainty, uncertainty_unit=uncertainty_unit,
                 photos=photos, invalid_authorised_by=invalid_authorised_by,
                 invalid_reason=invalid_reason, previous=None, reason="")


@transaction.atomic
def step_result_correct(
    *, actor, revision: StepResult, reason: str, values: ResultValues,
    observed_at: datetime.datetime | None = None, instruments: Sequence[Instrument] = (),
    consumables: Sequence[Consumable] = (), chamber_run: ChamberRun | None = None,
    new_run: ChamberRunEntry | None = None, uncertainty: Decimal | None = None,
    uncertainty_unit: str = "", photos: Sequence[Any] = (),
    invalid_authorised_by=None, invalid_reason: str = "",
) -> StepResult:
    """Correct a result: a new revision superseding `revision`, with who, when and why.

    The verdict is computed again from the corrected values. Refused with StaleResultError
    (carrying the current revision) when `revision` is no longer current; nothing is saved.
    """
    step = revision.step
    _require_recorder(actor, step)
    if not reason.strip():
        raise ValidationError({"reason": "Say why the result is corrected."})
    current = _current_of(revision.record_key)
    if current.pk != revision.pk:
        raise StaleResultError(current)
    return _save(actor=actor, piece=revision.piece, step=step,
                 observed_at=observed_at or revision.observed_at, values=values,
                 instruments=instruments, consumables=consumables, chamber_run=chamber_run,
                 new_run=new_run, uncertainty=uncertainty, uncertainty_unit=uncertainty_unit,
                 photos=photos, invalid_authorised_by=invalid_authorised_by,
                 invalid_reason=invalid_reason, previous=revision, reason=reason)


def _require_recorder(actor, step: PlanStep) -> None:
    require_role(actor, *RECORDING_ROLES)
    require_method_authorisation(actor, step.method_version.method)
    if step_rule(step).get("rule") == "engineer_judgement" and not has_role(actor, Role.ENGINEER):
        raise PermissionDenied(
            "This step's criterion is an engineer's judgement: an engineer records its result."
        )


def _current_of(record_key: uuid.UUID) -> StepResult:
    return StepResult.objects.current().select_related("recorded_by").get(record_key=record_key)


def current_released_plan(lot: Lot) -> TestPlan | None:
    """The lot's released plan not superseded by a released revision."""
    return TestPlan.objects.current_released().filter(lot=lot).order_by("-number").first()


def _check_step_is_open(piece: WitnessPiece, step: PlanStep) -> None:
    progress = progress_of_pieces([piece]).get(piece.pk)
    if progress is None or step.plan_id != progress.plan.pk:
        raise ValidationError(
            {"step": "This step is not in the current released test plan of the piece's lot."}
        )
    if progress.assignment.sequence_id != step.sequence_id:
        raise ValidationError(
            {"step": f"Piece {piece.ident} does not go through sequence {step.sequence.label}."}
        )
    following = progress.open_step
    if following is not None and following.pk != step.pk and step.order > following.order:
        raise ValidationError({"step": (
            f"Step {following.order} ({following.name}) comes first: record it before this one.")})


def _save(*, actor, piece: WitnessPiece, step: PlanStep, observed_at: datetime.datetime,
          values: ResultValues, instruments: Sequence[Instrument],
          consumables: Sequence[Consumable], chamber_run: ChamberRun | None,
          new_run: ChamberRunEntry | None, uncertainty: Decimal | None,
          uncertainty_unit: str, photos: Sequence[Any], invalid_authorised_by,
          invalid_reason: str, previous: StepResult | None, reason: str) -> StepResult:
    now = clock.now()
    if timezone.is_naive(observed_at):
        raise ValidationError({"observed_at": "Give the time with its time zone."})
    if observed_at > now:
        raise ValidationError({"observed_at": "When the work was done cannot be in the future."})
    test_day = timezone.localtime(observed_at).date()
    sections = entry_sections(step)
    _check_sections(sections, step, values, chamber_run, new_run)
    if uncertainty is not None and not uncertainty_unit.strip():
        raise ValidationError({"uncertainty_unit": "Give the unit of the uncertainty."})
    if len(photos) > MAX_PHOTOS:
        raise ValidationError({"photos": f"At most {MAX_PHOTOS} photos per entry."})
    checked_photos = [photo_check(upload) for upload in photos]

    instruments = list(dict.fromkeys(instruments))
    consumables = list(dict.fromkeys(consumables))
    for instrument in instruments:
        if not instrument.in_service:
            raise ValidationError({"instruments": (
                f"Instrument {instrument.ident} is out of service and cannot be used.")})
    run = chamber_run
    if run is not None:
        _check_run(run, piece, step, observed_at)
    elif new_run is not None:
        _check_new_run(new_run, observed_at)

    # Validity: what the technician picked must be usable on the day of the test.
    picked = verdicts.ValidityFacts(
        test_date=test_day,
        instruments=tuple(_instrument_use(i) for i in _with_run_instruments(instruments, run,
                                                                           new_run)),
        consumables=tuple(verdicts.ConsumableUse(name=c.name, lot=c.supplier_lot,
                                                 expiry=c.expiry) for c in consumables),
    )
    try:
        problems = verdicts.validity_problems(picked)
    except InputError as exc:
        raise ValidationError({"observed_at": str(exc)}) from None
    _check_invalid_authorisation(problems, instruments, consumables, invalid_authorised_by,
                                 invalid_reason)

    exposure_counts, exposure_note, exposure_convention = _exposure(run, sections)
    facts = verdicts.ValidityFacts(
        test_date=test_day, exposure_counts=exposure_counts, exposure_note=exposure_note,
        instruments=picked.instruments, consumables=picked.consumables)
    initial = _initial_inspection(piece, observed_at) if "inspection" in sections else None
    verdict, extra = _verdict(actor=actor, piece=piece, step=step, values=values, facts=facts,
                              initial=initial)
    conventions = list(verdict.conventions)
    if exposure_convention:
        conventions.append(exposure_convention)

    if run is None and new_run is not None:
        # The chamber services load and unload the run, with their own checks.
        try:
            run = chamber_services.chamber_run_create(
                actor=actor, chamber=new_run.chamber, method_version=step.method_version,
                condition=condition_of(step.parameters), loaded_at=new_run.loaded_at,
                pieces=[piece])
            run = chamber_services.chamber_run_unload(actor=actor, run=run,
                                                      unloaded_at=new_run.unloaded_at)
        except ValidationError as exc:
            raise ValidationError(_run_fields(exc)) from None
    observation = _observation(actor=actor, piece=piece, step=step, values=values,
                               observed_at=observed_at, previous=previous, reason=reason)

    result = StepResult(
        step=step, step_key=step.step_key, piece=piece,
        values=_values_json(values, sections, extra, run, initial),
        observation=observation, chamber_run=run, verdict=verdict.outcome,
        verdict_reason=verdict.reason, verdict_clause=verdict.clause[:120],
        conventions=conventions, uncertainty=uncertainty,
        uncertainty_unit=uncertainty_unit.strip() if uncertainty is not None else "",
        invalid_authorised_by=invalid_authorised_by if problems else None,
        invalid_reason=invalid_reason.strip() if problems else "",
        recorded_by=actor, recorded_at=now, observed_at=observed_at, reason=reason)
    if previous is not None:
        result.record_key = previous.record_key
        result.number = previous.number + 1
        result.supersedes = previous
    # Uniqueness is the database's to decide: the race ends in StaleResultError below.
    result.full_clean(validate_unique=False, validate_constraints=False)
    try:
        with transaction.atomic():
            result.save()
    except IntegrityError:
        current = (StepResult.objects.current().select_related("recorded_by")
                   .filter(step_key=step.step_key, piece=piece).first())
        if current is None:
            raise
        raise StaleResultError(current, first=previous is None) from None
    StepResultInstrument.objects.bulk_create(
        StepResultInstrument(result=result, instrument=i, calibration_due=i.calibration_due)
        for i in instruments)
    StepResultConsumable.objects.bulk_create(
        StepResultConsumable(result=result, consumable=c) for c in consumables)
    stored = [photo_store(actor=actor, piece=piece, step_key=step.step_key, photo=photo)
              for photo in checked_photos]
    after = {**snapshot(result), "instruments": [i.ident for i in instruments],
             "consumables": [f"{c.name} lot {c.supplier_lot}" for c in consumables],
             "photos": [e.sha256 for e in stored]}
    if previous is None:
        audit_record(actor=actor, action="record", obj=result, after=after)
    else:
        before = {**snapshot(previous),
                  "instruments": [link.instrument.ident
                                  for link in previous.instrument_links.select_related(
                                      "instrument")],
                  "consumables": [f"{link.consumable.name} lot {link.consumable.supplier_lot}"
                                  for link in previous.consumable_links.select_related(
                                      "consumable")]}
        audit_record(actor=actor, action="correct", obj=result, before=before, after=after,
                     reason=reason)
    _open_nonconformance(actor=actor, result=result)
    lot_stage_follow(actor=actor, lot=piece.lot)
    return result


def _check_sections(sections: tuple[str, ...], step: PlanStep, values: ResultValues,
                    chamber_run: ChamberRun | None, new_run: ChamberRunEntry | None) -> None:
    errors: dict[str, str] = {}
    if "chamber" in sections and chamber_run is None and new_run is None:
        errors["chamber_run"] = ("Pick the chamber run the piece went through, or record the "
                                 "run's chamber, start and end.")
    if chamber_run is not None and new_run is not None:
        errors["chamber_run"] = "Pick an existing run or record a new one, not both."
    if "tape" in sections and values.coating_removed is None:
        errors["coating_removed"] = "Say whether coating was removed."
    if "crosshatch" in sections and values.detached_share_pct is None \
            and values.crosshatch_class is None:
        errors["detached_share_pct"] = "Enter the detached share (%) or the ISO 2409 class."
    if "abrasion" in sections:
        if values.strokes is None:
            errors["strokes"] = "Enter the strokes made."
        if values.force_n is None:
            errors["force_n"] = "Enter the force applied (N)."
    if "solubility" in sections:
        if not values.solution.strip():
            errors["solution"] = "Name the solvent or solution and its grade."
        if values.immersion_min is None:
            errors["immersion_min"] = "Enter the immersion time (min)."
    if "inspection" in sections and (values.inspection is None or not (
            values.inspection.no_defects or values.inspection.defects)):
        errors["no_defects"] = ("Record the inspection: list what was seen, or state "
                                "'no defects observed'.")
    if "spectral" in sections and not values.spectral:
        errors["spectral"] = "Enter at least one measured statistic (band, quantity, value)."
    if errors:
        raise ValidationError(errors)


def _instrument_use(instrument: Instrument) -> verdicts.InstrumentUse:
    return verdicts.InstrumentUse(name=instrument.ident, calibration_due=instrument.calibration_due)


def _with_run_instruments(instruments: list[Instrument], run: ChamberRun | None,
                          new_run: ChamberRunEntry | None) -> list[Instrument]:
    # The chamber (and its logger) count as instruments used for the exposure.
    extra: list[Instrument] = []
    if run is not None:
        extra = [i for i in (run.chamber, run.logger) if i is not None]
    elif new_run is not None:
        extra = [new_run.chamber]
    return list(dict.fromkeys([*instruments, *extra]))


def _check_invalid_authorisation(problems: list[str], instruments: list[Instrument],
                                 consumables: list[Consumable], quality_manager,
                                 reason: str) -> None:
    if not problems:
        if quality_manager is not None or reason.strip():
            raise ValidationError({"invalid_reason": (
                "The instruments and consumables are valid on the day of the test: there is no "
                "invalid result to authorise. Clear the quality manager's fields.")})
        return
    if quality_manager is None:
        field = "instruments" if any(p.startswith("instrument") for p in problems) \
            else "consumables"
        raise ValidationError({field: (
            _sentence("; ".join(problems)) + ". Nothing was saved. Use an instrument in "
            "calibration and consumables within expiry, or have a quality manager authorise "
            "recording this result as invalid, with a reason.")})
    if not has_role(quality_manager, Role.QUALITY_MANAGER):
        raise ValidationError({"invalid_authorised_by": (
            f"{quality_manager.get_username()} is not a quality manager.")})
    if not reason.strip():
        raise ValidationError({"invalid_reason": (
            "The quality manager's reason for recording an invalid result is required.")})


def _sentence(text: str) -> str:
    return text[:1].upper() + text[1:]


def _check_run(run: ChamberRun, piece: WitnessPiece, step: PlanStep,
               observed_at: datetime.datetime) -> None:
    if not ChamberRunPiece.objects.filter(run=run, piece=piece,
                                          step_key=step.step_key).exists():
        raise ValidationError({"chamber_run": (
            f"Run {run.ident} did not hold piece {piece.ident} for this step.")})
    if run.unloaded_at is None:
        raise ValidationError({"chamber_run": (
            f"Run {run.ident} has not been unloaded yet: unload it first, then record the "
            "result.")})
    if observed_at < run.unloaded_at:
        raise ValidationError({"observed_at": (
            f"The result is observed after run {run.ident} ends "
            f"({timezone.localtime(run.unloaded_at):%Y-%m-%d %H:%M}).")})


_RUN_FIELDS = {"loaded_at": "run_loaded_at", "unloaded_at": "run_unloaded_at"}


def _run_fields(error: ValidationError) -> dict[str, list[str]]:
    """The chamber services' messages under the bench form's field names."""
    if not hasattr(error, "error_dict"):
        return {"run_chamber": error.messages}
    fields: dict[str, list[str]] = {}
    for key, messages in error.message_dict.items():
        fields.setdefault(_RUN_FIELDS.get(key, "run_chamber"), []).extend(messages)
    return fields


def _check_new_run(entry: ChamberRunEntry, observed_at: datetime.datetime) -> None:
    if entry.unloaded_at <= entry.loaded_at:
        raise ValidationError({"run_unloaded_at": "The run must end after it starts."})
    if observed_at < entry.unloaded_at:
        raise ValidationError({"observed_at": "The result is observed after the run ends."})


def _exposure(run: ChamberRun | None, sections: tuple[str, ...]) -> tuple[bool | None, str, str]:
    if run is None:
        if "chamber" in sections:
            return None, "", ("the exposure has not been checked against the chamber log: "
                              "it counts unless a later check says otherwise")
        return None, "", ""
    check = latest_check(run)
    if check is None:
        return None, "", (f"run {run.ident} has not been checked against its chamber log: "
                          "the exposure counts unless a later check says otherwise")
    note = str(check.summary.get("reason") or check.summary.get("summary") or "")
    return bool(check.counts), note or f"see the exposure check of run {run.ident}", ""


def _to_inspection(no_defects: bool, defects: Iterable[dict[str, Any]]) -> Inspection:
    seen = tuple(
        Seen(defect=d["defect"], zone=str(d.get("zone", "")), quantity=d.get("quantity"),
             size=d.get("size"), intensity=d.get("intensity"))
        for d in defects)
    return Inspection(observations=seen, no_defects_observed=no_defects)


def _initial_inspection(piece: WitnessPiece, observed_at: datetime.datetime
                        ) -> Observation | None:
    """The piece's initial inspection in force: the latest current one observed before."""
    return (Observation.objects.current()
            .filter(piece=piece, point="initial", observed_at__lte=observed_at)
            .order_by("-observed_at", "-pk").first())


def _verdict(*, actor, piece: WitnessPiece, step: PlanStep, values: ResultValues,
             facts: verdicts.ValidityFacts, initial: Observation | None
             ) -> tuple[verdicts.Verdict, dict[str, Any]]:
    rule = step_rule(step)
    extra: dict[str, Any] = {}
    try:
        inspection = None
        if values.inspection is not None:
            inspection = _to_inspection(values.inspection.no_defects, values.inspection.defects)
        initial_inspection = None
        if initial is not None and step.role != "initial_inspection":
            initial_inspection = _to_inspection(initial.no_defects, initial.defects)
        if inspection is not None and inspection.recorded and step.role != "initial_inspection":
            change = compare_inspections(initial_inspection, inspection)
            extra["comparison"] = {
                "initial_observation": initial.pk if initial is not None else None,
                "new_defects": [d.words for d in change.new_defects],
                "worsened": [g.sentence for g in change.worsened],
                "not_compared": [f"{d.words} {s.value}" for d, s in change.not_compared],
                "convention": change.convention,
            }
        if values.detached_share_pct is not None or values.crosshatch_class is not None:
            extra["crosshatch"] = _crosshatch(values)
        judgement = None
        if values.judgement_outcome or values.judgement_reason:
            judgement = verdicts.Judgement(
                outcome=values.judgement_outcome,
                person=actor.get_full_name() or actor.get_username(),
                reason=values.judgement_reason)
        outcome = verdicts.StepOutcome(
            coating_removed=values.coating_removed, removal_location=values.removal_location,
            inspection=inspection, initial_inspection=initial_inspection,
            detached_share_pct=values.detached_share_pct,
            crosshatch_class=values.crosshatch_class, scratch_dig=values.scratch_dig,
            surface=values.surface, spectral=values.spectral, judgement=judgement)
        decision = (verdicts.DecisionRule("guarded")
                    if piece.lot.order.decision_rule == DecisionRule.GUARD_BAND
                    else verdicts.DecisionRule())
        verdict = verdicts.step_verdict(rule, outcome, facts, clause=step_clause(step),
                                        decision_rule=decision)
    except InputError as exc:
        raise ValidationError({_error_field(str(rule.get("rule")), str(exc)): str(exc)}) from None
    return verdict, extra


def _crosshatch(values: ResultValues) -> dict[str, Any]:
    if values.detached_share_pct is not None:
        grade = crosshatch_grade(values.detached_share_pct)
        if values.crosshatch_class is not None and values.crosshatch_class != grade.iso2409:
            raise InputError(
                f"crosshatch result: class {values.crosshatch_class} does not match the "
                f"detached share {grade.share_pct:g} % (class {grade.iso2409} when "
                f"{grade.convention}) (crosshatch_class)")
        return grade.as_json()
    assert values.crosshatch_class is not None
    return {"share_pct": None, "iso2409": values.crosshatch_class,
            "astm_d3359": iso_to_astm(values.crosshatch_class),
            "convention": "class entered by the technician (rated against the pictures)",
            "correspondence": CORRESPONDENCE_NOTE}


_RULE_FIELDS = {
    "no_coating_removed": "coating_removed",
    "no_listed_defects": "no_defects",
    "crosshatch_max_class": "detached_share_pct",
    "crosshatch_max_share": "detached_share_pct",
    "scratch_dig": "sd_scratches",
    "iso10110_7": "iso_imperfections",
    "spectral_limits": "spectral",
    "engineer_judgement": "judgement_reason",
}


def _error_field(rule: str, message: str) -> str:
    """The form field a computation's InputError message is about."""
    for key in ("removal_location", "crosshatch_class", "detached_share_pct"):
        if key in message:
            return key
    if "detached share" in message:
        return "detached_share_pct"
    if "ISO 2409 class" in message:
        return "crosshatch_class"
    if "defect type" in message or "from 0 to 5" in message:
        return "no_defects"
    if rule == "engineer_judgement" and "outcome" in message:
        return "judgement_outcome"
    if rule == "scratch_dig":
        if "aperture" in message:
            return "sd_aperture_diameter_mm"
        if message.startswith("dig"):
            return "sd_digs"
    if "inspection" in message:
        return "no_defects"
    if "crosshatch" in message:
        return "detached_share_pct"
    return _RULE_FIELDS.get(rule, "__all__")


def _observation(*, actor, piece: WitnessPiece, step: PlanStep, values: ResultValues,
                 observed_at: datetime.datetime, previous: StepResult | None,
                 reason: str) -> Observation | None:
    entry = values.inspection
    if entry is None:
        return None
    content = dict(no_defects=entry.no_defects, defects=list(entry.defects),
                   lighting=entry.lighting, background=entry.background,
                   magnification=entry.magnification, notes=values.notes)
    earlier = previous.observation if previous is not None else None
    if earlier is None:
        return observation_services.observation_record(
            actor=actor, piece=piece, point=inspection_point(step), observed_at=observed_at,
            **content)
    earlier = Observation.objects.current().get(record_key=earlier.record_key)
    unchanged = (earlier.no_defects == entry.no_defects
                 and earlier.defects == _defect_rows(entry.defects)
                 and earlier.lighting == entry.lighting and earlier.background == entry.background
                 and earlier.magnification == entry.magnification
                 and earlier.notes == values.notes and earlier.observed_at == observed_at)
    if unchanged:
        return earlier
    try:
        return observation_services.observation_correct(
            actor=actor, revision=earlier, reason=reason, observed_at=observed_at, **content)
    except StaleRevisionError:
        assert previous is not None
        raise StaleResultError(_current_of(previous.record_key)) from None


def _defect_rows(defects: Iterable[dict[str, Any]]) -> list[dict[str, Any]]:
    """Defects as the observation record stores them (grades only when given)."""
    rows = []
    for defect in defects:
        row = {"defect": defect.get("defect"), "zone": str(defect.get("zone", "")),
               "extent": str(defect.get("extent", ""))}
        row.update({k: defect[k] for k in ("quantity", "size", "intensity")
                    if defect.get(k) not in (None, "")})
        rows.append(row)
    return rows


def _values_json(values: ResultValues, sections: tuple[str, ...], extra: dict[str, Any],
                 run: ChamberRun | None, initial: Observation | None) -> dict[str, Any]:
    data: dict[str, Any] = {}
    if "tape" in sections:
        data["coating_removed"] = values.coating_removed
        data["removal_location"] = values.removal_location
    if "crosshatch" in sections:
        data["detached_share_pct"] = values.detached_share_pct
        data["crosshatch_class"] = values.crosshatch_class
    if "abrasion" in sections:
        data["strokes"] = values.strokes
        data["force_n"] = values.force_n
    if "solubility" in sections:
        data["solution"] = values.solution
        data["immersion_min"] = values.immersion_min
    if "chamber" in sections and run is not None:
        data["chamber_run"] = run.ident
    if values.inspection is not None:
        data["inspection"] = asdict(values.inspection)
        data["inspection"]["defects"] = list(values.inspection.defects)
    if values.scratch_dig is not None:
        data["scratch_dig"] = asdict(values.scratch_dig)
    if values.surface is not None:
        data["iso10110"] = asdict(values.surface)
    if values.spectral:
        data["spectral"] = [asdict(s) for s in values.spectral]
    if values.judgement_outcome or values.judgement_reason:
        data["judgement"] = {"outcome": values.judgement_outcome,
                             "reason": values.judgement_reason}
    if values.notes:
        data["notes"] = values.notes
    data.update(extra)
    return _plain(data)


def _plain(value: Any) -> Any:
    """JSON-ready copy: tuples to lists, Decimals to floats."""
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    if isinstance(value, Decimal):
        return float(value)
    return value


def _open_nonconformance(*, actor, result: StepResult) -> Nonconformance | None:
    if result.verdict not in (Verdict.FAIL, Verdict.INVALID):
        return None
    kind = (NonconformanceKind.COATING_FAILURE if result.verdict == Verdict.FAIL
            else NonconformanceKind.INVALID_TEST)
    if Nonconformance.objects.filter(result__record_key=result.record_key, kind=kind).exists():
        return None
    what = "failed" if result.verdict == Verdict.FAIL else "is invalid (the test does not count)"
    return nonconformance_open(
        actor=actor, kind=kind, lot=result.piece.lot, result=result,
        description=(f"Piece {result.piece.ident}, step {result.step.order} "
                     f"({result.step.name}) {what}: {result.verdict_reason}"))


# ---------------------------------------------------------------- lot stage


def lot_outstanding_steps(lot: Lot) -> list[str]:
    """What keeps the lot from 'results complete', one line per step and piece.

    Complete means: every step of the current released plan has, for every piece going
    through its sequence, a current result that passed, failed, or is invalid with the
    quality manager's disposition recorded.
    """
    plan = current_released_plan(lot)
    if plan is None:
        return ["no released test plan"]
    results = {
        (r.step_key, r.piece_id): r
        for r in StepResult.objects.current().filter(piece__lot=lot).only(
            "step_key", "piece_id", "verdict", "record_key")
    }
    disposed = set(
        Nonconformance.objects.filter(result__piece__lot=lot).exclude(disposition="")
        .values_list("result__record_key", flat=True))
    steps_by_sequence: dict[int, list[PlanStep]] = {}
    for step in plan.steps.order_by("order"):
        steps_by_sequence.setdefault(step.sequence_id, []).append(step)
    outstanding = []
    for assignment in plan.assignments.select_related("piece").order_by("sequence__position",
                                                                         "piece__ident"):
        for step in steps_by_sequence.get(assignment.sequence_id, []):
            result = results.get((step.step_key, assignment.piece_id))
            where = f"{assignment.piece.ident}: step {step.order} ({step.name})"
            if result is None:
                outstanding.append(f"{where} has no result")
            elif result.verdict == Verdict.INVALID and result.record_key not in disposed:
                outstanding.append(f"{where} is invalid and awaits the quality manager's "
                                   "disposition")
    return outstanding


def lot_stage_follow(*, actor, lot: Lot) -> Lot:
    """Move the lot's stage with its results: planned -> in test at the first result;
    in test or retest -> results complete when nothing is outstanding. Never backwards."""
    lot = Lot.objects.get(pk=lot.pk)
    if lot.stage == LotStage.PLANNED and StepResult.objects.filter(piece__lot=lot).exists():
        lot = lot_stage_set(actor=actor, lot=lot, stage=LotStage.IN_TEST,
                            reason="first step result recorded")
    if lot.stage in (LotStage.IN_TEST, LotStage.RETEST) and not lot_outstanding_steps(lot):
        lot = lot_stage_set(actor=actor, lot=lot, stage=LotStage.RESULTS_COMPLETE,
                            reason="every step of the current plan has its result")
    return lot


# ---------------------------------------------------------------- photos

# Magic bytes: JPEG starts FF D8 FF; PNG has an 8-byte signature. (content type, the name
# endings that agree with it, the bytes it starts with)
_PHOTO_TYPES = (
    ("image/jpeg", (".jpg", ".jpeg"), b"\xff\xd8\xff"),
    ("image/png", (".png",), b"\x89PNG\r\n\x1a\n"),
)


@dataclass(frozen=True)
class CheckedPhoto:
    """An uploaded photo's bytes, its content type from those bytes, and its name as a label."""

    data: bytes
    content_type: str
    name: str


def photo_check(upload: Any) -> CheckedPhoto:
    """Read and check a photo: at most settings.EVIDENCE_MAX_BYTES, a JPEG or PNG by its
    first bytes, and a name whose ending agrees with them. Refused naming the file."""
    name = display_name(str(getattr(upload, "name", "") or "photo"))
    try:
        data = upload_bytes(upload, field="photos")
    except ValidationError as exc:
        raise ValidationError({"photos": f"{name}: {exc.message_dict['photos'][0]}"}) from None
    found = next((t for t in _PHOTO_TYPES if data.startswith(t[2])), None)
    if found is None:
        raise ValidationError({"photos": (
            f"{name}: the content is not a JPEG or PNG image (checked from the file's first "
            "bytes, not its name).")})
    suffix = "." + name.rsplit(".", 1)[-1].lower() if "." in name else ""
    if suffix not in found[1]:
        said = next((t[0] for t in _PHOTO_TYPES if suffix in t[1]), None)
        named = said.split("/")[1].upper() if said else f"{suffix or 'no type'!r}"
        raise ValidationError({"photos": (
            f"{name}: the content is a {found[0].split('/')[1].upper()} image but the name "
            f"says {named}; save it again with the right type.")})
    return CheckedPhoto(data=data, content_type=found[0], name=name)


def photo_store(*, actor, piece: WitnessPiece, step_key: uuid.UUID, photo: CheckedPhoto,
                stage: str = "after", note: str = "") -> Evidence:
    """Keep a checked photo of a piece at a step as evidence (call inside a transaction).

    The evidence services store it under MEDIA_ROOT by its SHA-256; the client's file name
    is kept only as a label, never in the path.
    """
    return evidence_create(
        actor=actor, kind=EvidenceKind.PHOTO, data=photo.data, original_name=photo.name,
        content_type=photo.content_type, summary={}, lot=piece.lot, piece=piece,
        step_key=step_key, stage=stage, note=note)
