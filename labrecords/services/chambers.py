"""Chamber runs: loading pieces, unloading, and checking the data logger's record.

A run holds pieces whose open step is a chamber exposure of the run's kind and condition.
The data logger's CSV is imported by `durability.exposure.logger` and verified by
`durability.exposure.verify` against the run's method version; the result is an
ExposureCheck (append-only; the latest one counts) pointing at the stored log.
"""

from __future__ import annotations

import datetime
import hashlib
from collections.abc import Sequence
from typing import Any

from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import transaction
from django.utils import timezone

from durability.durations import CHAMBER_KINDS
from durability.errors import InputError
from durability.exposure.logger import read_logger_csv
from durability.exposure.verify import (
    DurationRule,
    Interpolation,
    SensorCorrection,
    verify_exposure,
)
from durability.models import Instrument, MethodVersion, Resource
from labrecords import clock
from labrecords.access import require_role
from labrecords.models import (
    ChamberRun,
    ChamberRunPiece,
    Evidence,
    EvidenceKind,
    ExposureCheck,
    WitnessPiece,
)
from labrecords.roles import Role
from labrecords.selectors_chambers import (
    condition_of,
    dew_points_for,
    exposure_counts_for,
    exposure_requirement,
)
from labrecords.selectors_progress import progress_of_pieces
from labrecords.services.audit import audit_record, change_audited, create_audited
from labrecords.services.evidence import check_size, evidence_create, read_bytes

__all__ = [
    "chamber_log_upload",
    "chamber_run_create",
    "chamber_run_unload",
    "exposure_check_repeat",
    "exposure_counts_for",
]

CHAMBER_ROLES = (Role.TECHNICIAN, Role.ENGINEER)


def _aware(moment: datetime.datetime, field: str) -> datetime.datetime:
    if not isinstance(moment, datetime.datetime) or timezone.is_naive(moment):
        raise ValidationError({field: "Give a date and time with its time zone."})
    if moment > clock.now():
        raise ValidationError({field: "This time is in the future."})
    return moment


def _instrument_valid(instrument: Instrument, day: datetime.date, field: str) -> None:
    if not instrument.in_service:
        raise ValidationError({field: f"{instrument.ident} is out of service."})
    if day > instrument.calibration_due:
        raise ValidationError(
            {
                field: (
                    f"{instrument.ident} was calibrated through "
                    f"{instrument.calibration_due:%Y-%m-%d}; "
                    f"it is out of calibration on {day:%Y-%m-%d}."
                )
            }
        )


def _check_resource(chamber: Instrument, kind: str, count: int) -> None:
    resource = Resource.objects.filter(instrument=chamber, active=True).first()
    if resource is None:
        return
    if resource.kinds and kind not in resource.kinds:
        raise ValidationError(
            {
                "chamber": (
                    f"{chamber.ident} runs {', '.join(resource.kinds)}, "
                    f"not {kind.replace('_', ' ')}."
                )
            }
        )
    if count > resource.capacity:
        raise ValidationError(
            {
                "pieces": (
                    f"{chamber.ident} holds {resource.capacity} pieces per run; "
                    f"{count} were chosen."
                )
            }
        )


def _previous_runs_block(piece: WitnessPiece, step_key) -> str | None:
    """Why the piece cannot join another run for this step, or None."""
    for link in ChamberRunPiece.objects.filter(piece=piece, step_key=step_key).select_related(
        "run"
    ):
        run = link.run
        if run.unloaded_at is None:
            return f"it is still in chamber run {run.ident}"
        counts = exposure_counts_for(run)
        if counts is None:
            return (
                f"chamber run {run.ident} already exposed it for this step and its log is "
                "not checked yet"
            )
        if counts:
            return f"chamber run {run.ident} already exposed it for this step and counts"
    return None


@transaction.atomic
def chamber_run_create(
    *,
    actor,
    chamber: Instrument,
    method_version: MethodVersion,
    condition: str,
    loaded_at: datetime.datetime,
    pieces: Sequence[WitnessPiece],
    logger: Instrument | None = None,
) -> ChamberRun:
    """Load pieces into a chamber for one exposure of one kind and condition.

    Every piece's open step (the first step of its sequence in the lot's current released
    plan without a result) must be a chamber step of the method version's kind with this
    condition; a piece still in another run, or already exposed for this step by a run that
    counts (or is not checked yet), is refused. The chamber and the logger must be in
    service and calibrated on the day of loading.
    """
    require_role(actor, *CHAMBER_ROLES)
    loaded_at = _aware(loaded_at, "loaded_at")
    kind = method_version.method.kind
    if kind not in CHAMBER_KINDS:
        raise ValidationError(
            {
                "method_version": (
                    f"{method_version} is a "
                    f"{method_version.method.get_kind_display().lower()} method, "
                    "not a chamber exposure."
                )
            }
        )
    day = timezone.localdate(loaded_at)
    _instrument_valid(chamber, day, "chamber")
    if logger is not None:
        _instrument_valid(logger, day, "logger")
    unique = list({piece.pk: piece for piece in pieces}.values())
    if not unique:
        raise ValidationError({"pieces": "Choose at least one witness piece to load."})
    _check_resource(chamber, kind, len(unique))
    progress = progress_of_pieces(unique)
    problems: list[str] = []
    step_keys = {}
    for piece in unique:
        state = progress.get(piece.pk)
        step = state.open_step if state is not None else None
        if state is None:
            problems.append(f"{piece.ident}: its lot has no released test plan that assigns it")
            continue
        if step is None:
            problems.append(f"{piece.ident}: every step of its sequence has a result")
            continue
        step_condition = condition_of(step.parameters)
        if step.kind != kind or step_condition != condition:
            problems.append(
                f"{piece.ident}: its next step is {step.order}. {step.name} "
                f"({step.kind.replace('_', ' ')}, {step_condition}), not "
                f"{kind.replace('_', ' ')} at {condition}"
            )
            continue
        ready_at = state.previous_done_at or state.plan.released_at
        if ready_at is not None and loaded_at < ready_at:
            problems.append(
                f"{piece.ident}: loading at {timezone.localtime(loaded_at):%Y-%m-%d %H:%M} "
                f"comes before its previous step was done "
                f"({timezone.localtime(ready_at):%Y-%m-%d %H:%M})"
            )
            continue
        blocked = _previous_runs_block(piece, step.step_key)
        if blocked:
            problems.append(f"{piece.ident}: {blocked}")
            continue
        step_keys[piece.pk] = step.step_key
    if problems:
        raise ValidationError({"pieces": problems})
    local = timezone.localtime(loaded_at)
    ident = f"{chamber.ident}-{local:%y%m%d-%H%M}"
    if ChamberRun.objects.filter(ident=ident).exists():
        raise ValidationError(
            {"loaded_at": (f"{chamber.ident} already has a run loaded at {local:%Y-%m-%d %H:%M}.")}
        )
    run = ChamberRun(
        ident=ident,
        chamber=chamber,
        logger=logger,
        method_version=method_version,
        condition=condition,
        loaded_at=loaded_at,
        loaded_by=actor,
    )
    create_audited(actor=actor, obj=run)
    for piece in unique:
        ChamberRunPiece.objects.create(run=run, piece=piece, step_key=step_keys[piece.pk])
    audit_record(
        actor=actor,
        action="load pieces",
        obj=run,
        after={"pieces": sorted(piece.ident for piece in unique)},
    )
    return run


@transaction.atomic
def chamber_run_unload(*, actor, run: ChamberRun, unloaded_at: datetime.datetime) -> ChamberRun:
    """Record that the run's pieces came out of the chamber (once; after loading)."""
    require_role(actor, *CHAMBER_ROLES)
    unloaded_at = _aware(unloaded_at, "unloaded_at")
    locked = ChamberRun.objects.select_for_update().get(pk=run.pk)
    if locked.unloaded_at is not None:
        raise ValidationError(
            {
                "unloaded_at": (
                    f"Run {locked.ident} was already unloaded at "
                    f"{timezone.localtime(locked.unloaded_at):%Y-%m-%d %H:%M}."
                )
            }
        )
    if unloaded_at <= locked.loaded_at:
        raise ValidationError({"unloaded_at": "Unloading must come after loading."})
    return change_audited(actor=actor, obj=locked, changes={"unloaded_at": unloaded_at})


def _compact_readings(verification) -> dict[str, Any]:
    """Every reading, logged and corrected, as columns (seconds after the first reading)."""
    readings = verification.readings
    origin = readings[0].time
    return {
        "origin": origin.isoformat(),
        "seconds": [round((r.time - origin).total_seconds(), 3) for r in readings],
        "line": [r.line for r in readings],
        "t_raw": [round(r.temperature_raw_c, 6) for r in readings],
        "t": [round(r.temperature_c, 6) for r in readings],
        "rh_raw": [
            None if r.rh_raw_percent is None else round(r.rh_raw_percent, 6) for r in readings
        ],
        "rh": [None if r.rh_percent is None else round(r.rh_percent, 6) for r in readings],
        "in_tolerance": [r.in_tolerance for r in readings],
    }


def _verify(
    run: ChamberRun,
    data: bytes,
    *,
    time_zone: str | None,
    date_order: str | None,
    interpolation: str,
    correction: SensorCorrection,
    duration_rule: str | None,
) -> tuple[bool, str, dict[str, Any]]:
    """Import and verify; raises ValidationError naming the field (and the file's line)."""
    requirement = exposure_requirement(run.method_version)
    zone = time_zone or settings.TIME_ZONE
    try:
        imported = read_logger_csv(data, time_zone=zone, date_order=date_order or None)
    except InputError as exc:
        raise ValidationError({"file": f"The log was not imported: {exc}."}) from None
    if requirement.duration_rule is not None:
        rule, rule_source = requirement.duration_rule, "the method version"
    else:
        try:
            rule = DurationRule(duration_rule or DurationRule.CUMULATIVE.value)
        except ValueError:
            raise ValidationError({"duration_rule": "Choose continuous or cumulative."}) from None
        rule_source = (
            "chosen at upload: the method version does not say whether the hours must be continuous"
        )
    try:
        convention = Interpolation(interpolation)
    except ValueError:
        raise ValidationError({"interpolation": "Choose interpolated or hold."}) from None
    try:
        result = verify_exposure(
            imported.samples,
            requirement.condition,
            required_hours=requirement.required_hours,
            duration_rule=rule,
            interpolation=convention,
            correction=correction,
            start_when_stable=requirement.start_when_stable,
            window_start=run.loaded_at,
            window_end=run.unloaded_at,
        )
    except InputError as exc:
        raise ValidationError({"file": f"The log cannot be checked: {exc}."}) from None
    achieved = (
        result.longest_run_hours if rule is DurationRule.CONTINUOUS else result.in_tolerance_hours
    )
    what = "longest unbroken run" if rule is DurationRule.CONTINUOUS else "time in tolerance"
    sentence = (
        f"The exposure {'counts' if result.counts else 'does not count'}: {what} "
        f"{achieved:.3f} h of {requirement.required_hours:g} h required ({rule.value}, "
        f"{convention.value}); {len(result.excursions)} excursion(s)"
        + ("; an excursion was more severe than the condition" if result.over_test else "")
        + "."
    )
    summary = {
        "summary": sentence,
        "verification": result.as_dict(),
        "readings": _compact_readings(result),
        "import": imported.as_dict(),
        "time_zone": imported.format.time_zone,
        "requirement": requirement.as_dict(),
        "duration_rule_source": rule_source,
        "window": {
            "start": run.loaded_at.isoformat(),
            "end": run.unloaded_at.isoformat() if run.unloaded_at else None,
            "note": (
                "the check covers loading to unloading"
                if run.unloaded_at
                else "the run is not unloaded yet: the check covers loading to the last reading"
            ),
        },
        "dew_point": dew_points_for(requirement.condition),
        "options": {
            "time_zone": zone,
            "date_order": date_order or None,
            "interpolation": convention.value,
            "duration_rule": rule.value,
            "correction": correction.as_dict(),
        },
    }
    return result.counts, convention.value, summary


def _correction(
    temperature_offset_k: float, rh_offset_percent: float, temperature_gain: float, rh_gain: float
) -> SensorCorrection:
    try:
        return SensorCorrection(
            temperature_offset_k=float(temperature_offset_k),
            temperature_gain=float(temperature_gain),
            rh_offset_percent=float(rh_offset_percent),
            rh_gain=float(rh_gain),
        )
    except InputError as exc:
        raise ValidationError({"temperature_offset_k": str(exc)}) from None


def _record_check(
    *,
    actor,
    run: ChamberRun,
    evidence: Evidence,
    counts: bool,
    convention: str,
    summary: dict[str, Any],
    reason: str,
) -> ExposureCheck:
    check = ExposureCheck(
        run=run,
        evidence=evidence,
        counts=counts,
        convention=convention,
        summary=summary,
        checked_by=actor,
        checked_at=clock.now(),
    )
    check.full_clean()
    check.save()
    audit_record(
        actor=actor,
        action="check exposure",
        obj=run,
        reason=reason,
        after={
            "exposure_check": check.pk,
            "counts": counts,
            "convention": convention,
            "evidence": evidence.pk,
            "sha256": evidence.sha256,
        },
    )
    if not counts:
        _question_passes(actor=actor, run=run, check=check)
    return check


def _question_passes(*, actor, run: ChamberRun, check: ExposureCheck) -> None:
    """A run whose exposure does not count cannot produce a pass: a pass recorded on it
    before its log was checked gets a nonconformance about the test, which holds the lot's
    report until the quality manager disposes of it (a retest, usually)."""
    from labrecords.models import StepResult
    from labrecords.services.nonconformances import nonconformance_open

    passes = (
        StepResult.objects.current()
        .filter(chamber_run=run, verdict="pass")
        .select_related("piece__lot")
    )
    for result in passes:
        nonconformance_open(
            actor=actor,
            kind="invalid_test",
            lot=result.piece.lot,
            result=result,
            description=(
                f"The exposure of chamber run {run.ident} does not count (exposure check "
                f"{check.pk}); the pass recorded for {result.piece.ident} on it cannot stand."
            ),
        )


@transaction.atomic
def chamber_log_upload(
    *,
    actor,
    run: ChamberRun,
    data: bytes,
    original_name: str,
    time_zone: str | None = None,
    date_order: str | None = None,
    interpolation: str = Interpolation.INTERPOLATED.value,
    duration_rule: str | None = None,
    temperature_offset_k: float = 0.0,
    rh_offset_percent: float = 0.0,
    temperature_gain: float = 1.0,
    rh_gain: float = 1.0,
    note: str = "",
) -> ExposureCheck:
    """Store a data logger's CSV for the run and record the exposure check made from it.

    The log is read in `time_zone` (the chamber's; settings.TIME_ZONE when not given),
    corrected by the logger's calibration offsets (and gains), and verified against the
    run's method version over loading to unloading. `interpolation` is "interpolated"
    (linear, exact crossing times) or "hold" (zero-order hold); `duration_rule` applies only
    when the method version does not say. A file that cannot be read or checked raises
    ValidationError naming the line, and nothing is stored.
    """
    require_role(actor, *CHAMBER_ROLES)
    check_size(data)
    correction = _correction(temperature_offset_k, rh_offset_percent, temperature_gain, rh_gain)
    counts, convention, summary = _verify(
        run,
        data,
        time_zone=time_zone,
        date_order=date_order,
        interpolation=interpolation,
        correction=correction,
        duration_rule=duration_rule,
    )
    sha256 = hashlib.sha256(data).hexdigest()
    evidence = Evidence.objects.filter(
        chamber_run=run, kind=EvidenceKind.CHAMBER_LOG, sha256=sha256
    ).first()
    if evidence is None:
        evidence = evidence_create(
            actor=actor,
            kind=EvidenceKind.CHAMBER_LOG,
            data=data,
            original_name=original_name,
            content_type="text/csv",
            chamber_run=run,
            note=note,
            summary={"import": summary["import"], "time_zone": summary["time_zone"]},
        )
    return _record_check(
        actor=actor,
        run=run,
        evidence=evidence,
        counts=counts,
        convention=convention,
        summary=summary,
        reason="exposure checked from the data logger's record",
    )


@transaction.atomic
def exposure_check_repeat(
    *,
    actor,
    run: ChamberRun,
    evidence: Evidence,
    reason: str,
    time_zone: str | None = None,
    date_order: str | None = None,
    interpolation: str = Interpolation.INTERPOLATED.value,
    duration_rule: str | None = None,
    temperature_offset_k: float = 0.0,
    rh_offset_percent: float = 0.0,
    temperature_gain: float = 1.0,
    rh_gain: float = 1.0,
) -> ExposureCheck:
    """Check a stored log again (after unloading, or with corrected offsets); the new check
    is the one that counts and the earlier ones stay. A reason is required."""
    require_role(actor, *CHAMBER_ROLES)
    if not reason.strip():
        raise ValidationError({"reason": "Say why the exposure is checked again."})
    if evidence.chamber_run_id != run.pk or evidence.kind != EvidenceKind.CHAMBER_LOG:
        raise ValidationError({"evidence": "That file is not a chamber log of this run."})
    correction = _correction(temperature_offset_k, rh_offset_percent, temperature_gain, rh_gain)
    counts, convention, summary = _verify(
        run,
        read_bytes(evidence),
        time_zone=time_zone,
        date_order=date_order,
        interpolation=interpolation,
        correction=correction,
        duration_rule=duration_rule,
    )
    return _record_check(
        actor=actor,
        run=run,
        evidence=evidence,
        counts=counts,
        convention=convention,
        summary=summary,
        reason=reason,
    )
