"""Bench entry: the checks an entry passes before its verdict is computed.

The step must be the piece's to record now; the entry must fill the step's
sections; instruments and consumables must be valid on the day of the test
(or a quality manager authorises an invalid result); a chamber run must have
held the piece and ended before the result is observed.
"""

from __future__ import annotations

import datetime

from django.core.exceptions import ValidationError
from django.utils import timezone

from durability import verdicts
from durability.models import Instrument
from labrecords.models import ChamberRun, ChamberRunPiece, Consumable, PlanStep, WitnessPiece
from labrecords.roles import Role, has_role
from labrecords.selectors_progress import progress_of_pieces
from labrecords.services.bench_values import ChamberRunEntry, ResultValues


def check_step_is_open(piece: WitnessPiece, step: PlanStep) -> None:
    """Refuse a step that is not the piece's to record now (plan, sequence, order)."""
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


def check_sections(sections: tuple[str, ...], step: PlanStep, values: ResultValues,
                   chamber_run: ChamberRun | None, new_run: ChamberRunEntry | None) -> None:
    """Refuse an entry that leaves out what the step's sections ask for, naming each field."""
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


def instrument_use(instrument: Instrument) -> verdicts.InstrumentUse:
    """An instrument as the validity check sees it: its ident and calibration due date."""
    return verdicts.InstrumentUse(name=instrument.ident, calibration_due=instrument.calibration_due)


def with_run_instruments(instruments: list[Instrument], run: ChamberRun | None,
                         new_run: ChamberRunEntry | None) -> list[Instrument]:
    """The picked instruments plus the chamber run's chamber and logger."""
    # The chamber (and its logger) count as instruments used for the exposure.
    extra: list[Instrument] = []
    if run is not None:
        extra = [i for i in (run.chamber, run.logger) if i is not None]
    elif new_run is not None:
        extra = [new_run.chamber]
    return list(dict.fromkeys([*instruments, *extra]))


def check_invalid_authorisation(problems: list[str], instruments: list[Instrument],
                                consumables: list[Consumable], quality_manager,
                                reason: str) -> None:
    """Refuse invalid instruments or consumables unless a quality manager authorises an
    invalid result with a reason; refuse an authorisation when nothing is invalid."""
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


def check_run(run: ChamberRun, piece: WitnessPiece, step: PlanStep,
              observed_at: datetime.datetime) -> None:
    """Refuse an existing chamber run that did not hold the piece or has not ended."""
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


def run_fields(error: ValidationError) -> dict[str, list[str]]:
    """The chamber services' messages under the bench form's field names."""
    if not hasattr(error, "error_dict"):
        return {"run_chamber": error.messages}
    fields: dict[str, list[str]] = {}
    for key, messages in error.message_dict.items():
        fields.setdefault(_RUN_FIELDS.get(key, "run_chamber"), []).extend(messages)
    return fields


def check_new_run(entry: ChamberRunEntry, observed_at: datetime.datetime) -> None:
    """Refuse a new chamber run that ends before it starts or after the observation."""
    if entry.unloaded_at <= entry.loaded_at:
        raise ValidationError({"run_unloaded_at": "The run must end after it starts."})
    if observed_at < entry.unloaded_at:
        raise ValidationError({"observed_at": "The result is observed after the run ends."})
