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
from decimal import Decimal
from typing import Any

from django.core.exceptions import PermissionDenied, ValidationError
from django.db import IntegrityError, transaction
from django.utils import timezone

from durability import verdicts
from durability.errors import InputError
from durability.models import Instrument
from labrecords import clock
from labrecords.access import require_role
from labrecords.models import (
    ChamberRun,
    Consumable,
    Nonconformance,
    NonconformanceKind,
    Observation,
    PlanStep,
    StepResult,
    StepResultConsumable,
    StepResultInstrument,
    Verdict,
    WitnessPiece,
)
from labrecords.roles import Role, has_role
from labrecords.selectors_chambers import condition_of
from labrecords.services import chambers as chamber_services
from labrecords.services import observations as observation_services
from labrecords.services.audit import audit_record, snapshot
from labrecords.services.authorisations import require_method_authorisation
from labrecords.services.bench_checks import (
    check_invalid_authorisation,
    check_new_run,
    check_run,
    check_sections,
    check_step_is_open,
    instrument_use,
    run_fields,
    with_run_instruments,
)
from labrecords.services.bench_values import (
    KIND_SECTIONS,
    RULE_SECTIONS,
    SECTION_ORDER,
    ChamberRunEntry,
    InspectionEntry,
    ResultValues,
    entry_sections,
    inspection_point,
    statistics_needed,
    step_clause,
    step_rule,
)
from labrecords.services.bench_verdict import (
    initial_inspection_of,
    result_verdict,
    run_exposure,
    values_json,
)
from labrecords.services.lot_stage import (
    current_released_plan,
    lot_outstanding_steps,
    lot_stage_follow,
)
from labrecords.services.nonconformances import nonconformance_open
from labrecords.services.observations import StaleRevisionError
from labrecords.services.photos import MAX_PHOTOS, CheckedPhoto, photo_check, photo_store

# The bench's names stay importable from here: the entry, its sections, photos, lot stage.
__all__ = [
    "KIND_SECTIONS",
    "MAX_PHOTOS",
    "RECORDING_ROLES",
    "RULE_SECTIONS",
    "SECTION_ORDER",
    "ChamberRunEntry",
    "CheckedPhoto",
    "InspectionEntry",
    "ResultValues",
    "StaleResultError",
    "current_released_plan",
    "entry_sections",
    "inspection_point",
    "lot_outstanding_steps",
    "lot_stage_follow",
    "photo_check",
    "photo_store",
    "statistics_needed",
    "step_clause",
    "step_result_correct",
    "step_result_record",
    "step_rule",
]

RECORDING_ROLES = (Role.TECHNICIAN, Role.ENGINEER)


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
    check_step_is_open(piece, step)
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
    check_sections(sections, step, values, chamber_run, new_run)
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
        check_run(run, piece, step, observed_at)
    elif new_run is not None:
        check_new_run(new_run, observed_at)

    # Validity: what the technician picked must be usable on the day of the test.
    picked = verdicts.ValidityFacts(
        test_date=test_day,
        instruments=tuple(instrument_use(i) for i in with_run_instruments(instruments, run,
                                                                          new_run)),
        consumables=tuple(verdicts.ConsumableUse(name=c.name, lot=c.supplier_lot,
                                                 expiry=c.expiry) for c in consumables),
    )
    try:
        problems = verdicts.validity_problems(picked)
    except InputError as exc:
        raise ValidationError({"observed_at": str(exc)}) from None
    check_invalid_authorisation(problems, instruments, consumables, invalid_authorised_by,
                                invalid_reason)

    exposure_counts, exposure_note, exposure_convention = run_exposure(run, sections)
    facts = verdicts.ValidityFacts(
        test_date=test_day, exposure_counts=exposure_counts, exposure_note=exposure_note,
        instruments=picked.instruments, consumables=picked.consumables)
    initial = initial_inspection_of(piece, observed_at) if "inspection" in sections else None
    verdict, extra = result_verdict(actor=actor, piece=piece, step=step, values=values,
                                    facts=facts, initial=initial)
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
            raise ValidationError(run_fields(exc)) from None
    observation = _observation(actor=actor, piece=piece, step=step, values=values,
                               observed_at=observed_at, previous=previous, reason=reason)

    result = StepResult(
        step=step, step_key=step.step_key, piece=piece,
        values=values_json(values, sections, extra, run, initial),
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
