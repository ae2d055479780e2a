"""A lot's stage following its step results, and what keeps it from 'results complete'."""

from __future__ import annotations

from labrecords.models import (
    Lot,
    LotStage,
    Nonconformance,
    PlanStep,
    StepResult,
    TestPlan,
    Verdict,
)
from labrecords.services.lots import lot_stage_set

# ---------------------------------------------------------------- lot stage


def current_released_plan(lot: Lot) -> TestPlan | None:
    """The lot's released plan not superseded by a released revision."""
    return TestPlan.objects.current_released().filter(lot=lot).order_by("-number").first()


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
