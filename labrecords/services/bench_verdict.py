"""Bench entry: the verdict of an entry and the values stored with it.

The verdict comes from `durability.verdicts.step_verdict` with the step's rule,
the entered values, the piece's initial inspection and the validity facts (the
chamber run's exposure check when there is one).
"""

from __future__ import annotations

import datetime
from collections.abc import Iterable
from dataclasses import asdict
from decimal import Decimal
from typing import Any

from django.core.exceptions import ValidationError

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
from labrecords.models import ChamberRun, DecisionRule, Observation, PlanStep, WitnessPiece
from labrecords.selectors_chambers import latest_check
from labrecords.services.bench_values import ResultValues, step_clause, step_rule


def run_exposure(run: ChamberRun | None, sections: tuple[str, ...]
                 ) -> tuple[bool | None, str, str]:
    """Whether the run's exposure counts, the note on why, and the convention used
    when it has not been checked against the chamber log."""
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


def initial_inspection_of(piece: WitnessPiece, observed_at: datetime.datetime
                          ) -> Observation | None:
    """The piece's initial inspection in force: the latest current one observed before."""
    return (Observation.objects.current()
            .filter(piece=piece, point="initial", observed_at__lte=observed_at)
            .order_by("-observed_at", "-pk").first())


def result_verdict(*, actor, piece: WitnessPiece, step: PlanStep, values: ResultValues,
                   facts: verdicts.ValidityFacts, initial: Observation | None
                   ) -> tuple[verdicts.Verdict, dict[str, Any]]:
    """The step's verdict from its rule, the entered values and the validity facts, with the
    extra values (inspection comparison, crosshatch grade) stored beside them."""
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


def values_json(values: ResultValues, sections: tuple[str, ...], extra: dict[str, Any],
                run: ChamberRun | None, initial: Observation | None) -> dict[str, Any]:
    """The entered values of the step's sections as stored on the result (JSON-ready)."""
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
