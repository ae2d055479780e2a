"""Where each witness piece stands in its lot's current released test plan.

A step is done for a piece when the piece has a current (not superseded) step result for
the step's key; the piece's open step is the first step of its sequence that is not done.
Everything is read in a fixed number of queries, whatever the number of pieces.
"""

from __future__ import annotations

import datetime
import uuid
from collections import defaultdict
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

from django.db.models import QuerySet

from labrecords.models import PlanStep, SequencePiece, StepResult, TestPlan, WitnessPiece


@dataclass(frozen=True)
class StepDone:
    """The current result of one step on one piece (only what progress needs)."""

    result_id: int
    observed_at: datetime.datetime


@dataclass(frozen=True)
class PieceProgress:
    """One piece in its sequence of the lot's current released plan."""

    assignment: SequencePiece
    steps: tuple[PlanStep, ...]
    done: Mapping[uuid.UUID, StepDone]

    @property
    def piece(self) -> WitnessPiece:
        return self.assignment.piece

    @property
    def plan(self) -> TestPlan:
        return self.assignment.plan

    @property
    def open_step(self) -> PlanStep | None:
        """The first step of the sequence without a current result; None when all are done."""
        return next((step for step in self.steps if step.step_key not in self.done), None)

    @property
    def previous_step(self) -> PlanStep | None:
        """The step before the open one (the last step when all are done)."""
        open_step = self.open_step
        if open_step is None:
            return self.steps[-1] if self.steps else None
        index = self.steps.index(open_step)
        return self.steps[index - 1] if index > 0 else None

    @property
    def previous_done_at(self) -> datetime.datetime | None:
        """When the step before the open one was done (its result's observed time)."""
        previous = self.previous_step
        if previous is None:
            return None
        done = self.done.get(previous.step_key)
        return done.observed_at if done is not None else None

    @property
    def result_ids(self) -> frozenset[int]:
        return frozenset(done.result_id for done in self.done.values())


def current_assignments() -> QuerySet[SequencePiece]:
    """Piece assignments of every lot's current released plan, with what lists show."""
    return SequencePiece.objects.filter(
        plan__in=TestPlan.objects.current_released()
    ).select_related("piece__lot__order__customer", "plan", "sequence")


def progress_for(assignments: Iterable[SequencePiece]) -> list[PieceProgress]:
    """The progress of each assigned piece: two queries for steps and current results."""
    rows = list(assignments)
    if not rows:
        return []
    sequence_ids = {row.sequence_id for row in rows}
    steps_by_sequence: dict[int, list[PlanStep]] = defaultdict(list)
    for step in (
        PlanStep.objects.filter(sequence_id__in=sequence_ids)
        .select_related("method_version__method")
        .order_by("sequence_id", "order")
    ):
        steps_by_sequence[step.sequence_id].append(step)
    done_by_piece: dict[int, dict[uuid.UUID, StepDone]] = defaultdict(dict)
    for result_id, piece_id, step_key, observed_at in (
        StepResult.objects.current()
        .filter(piece_id__in={row.piece_id for row in rows})
        .values_list("id", "piece_id", "step_key", "observed_at")
    ):
        done_by_piece[piece_id][step_key] = StepDone(result_id, observed_at)
    return [
        PieceProgress(
            assignment=row,
            steps=tuple(steps_by_sequence[row.sequence_id]),
            done=done_by_piece[row.piece_id],
        )
        for row in rows
    ]


def progress_of_pieces(pieces: Sequence[WitnessPiece]) -> dict[int, PieceProgress]:
    """Progress keyed by piece id, for pieces in a current released plan (others absent)."""
    ids = [piece.pk for piece in pieces]
    return {
        progress.piece.pk: progress
        for progress in progress_for(current_assignments().filter(piece_id__in=ids))
    }
