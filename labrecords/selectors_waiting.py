"""Waiting work: which lots wait for which tests.

One row per witness piece of a lot's current released plan that is not through review:
its next step, what it waits for, since when, the lot's due date and whether it is late,
and the promised date when the scheduler supplies one. Every figure is read in a fixed
number of queries, whatever the number of rows.
"""

from __future__ import annotations

import datetime
from collections import defaultdict
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from decimal import Decimal
from enum import StrEnum

from django.db.models import QuerySet
from django.utils import timezone

from durability.durations import CHAMBER_KINDS
from durability.models import MethodKind, Resource
from labrecords.models import ChamberRunPiece, LotStage, Review, SequencePiece
from labrecords.selectors_chambers import condition_of
from labrecords.selectors_progress import PieceProgress, current_assignments, progress_for

# Lots past review and signature wait for nothing on this page.
FINISHED_STAGES = (LotStage.SIGNED, LotStage.REPORT_ISSUED)


class WaitKind(StrEnum):
    CHAMBER_RUN = "chamber_run"
    IN_CHAMBER = "in_chamber"
    RESULT = "result"
    BENCH = "bench"
    WAIT_TIME = "wait_time"
    REVIEW = "review"

    @property
    def label(self) -> str:
        return {
            "chamber_run": "a chamber run",
            "in_chamber": "unloading (in a chamber run)",
            "result": "its result to be recorded",
            "bench": "a bench station",
            "wait_time": "a minimum wait",
            "review": "review",
        }[self.value]


@dataclass(frozen=True)
class WaitingRow:
    """One piece and what it waits for. Times are aware (UTC); the page shows lab time."""

    lot_id: int
    lot_number: str
    lot_url: str
    stage: str
    customer: str
    piece: str
    piece_url: str
    step: str  # "3. Humidity", or "" when all steps are done
    kind: str  # the method kind's value, "" when all steps are done
    kind_label: str
    wait_kind: WaitKind
    waits_for: str
    waiting_since: datetime.datetime
    waited_hours: float
    due: datetime.date | None
    late: bool
    promised: datetime.datetime | None
    hazards: tuple[str, ...]

    @property
    def waited(self) -> str:
        """The time waited as days and hours, e.g. "3 d 4 h"."""
        hours = int(self.waited_hours)
        days, rest = divmod(hours, 24)
        return f"{days} d {rest} h" if days else f"{rest} h"


def waiting_assignments() -> QuerySet[SequencePiece]:
    """Assignments of current released plans of lots not yet signed."""
    return current_assignments().exclude(piece__lot__stage__in=FINISHED_STAGES)


def _resources() -> tuple[dict[str, list[str]], dict[str, list[str]]]:
    chambers: dict[str, list[str]] = defaultdict(list)
    benches: dict[str, list[str]] = defaultdict(list)
    for resource in Resource.objects.filter(active=True).order_by("ident"):
        for kind in resource.kinds or ():
            (chambers if resource.is_chamber else benches)[kind].append(resource.ident)
    return chambers, benches


def _reviewed_results(lot_ids: set[int], current_ids: set[int]) -> dict[int, set[int]]:
    """Per lot, the current results covered by a review that is still valid.

    A review is void as soon as any result it covers is superseded, so only reviews whose
    covered results are all current count.
    """
    covered: dict[int, set[int]] = defaultdict(set)
    for review in Review.objects.filter(lot_id__in=lot_ids).prefetch_related("covered"):
        ids = {link.result_id for link in review.covered.all()}
        if ids and ids <= current_ids:
            covered[review.lot_id] |= ids
    return covered


def _kind_label(kind: str) -> str:
    return MethodKind(kind).label if kind in MethodKind.values else kind.replace("_", " ")


def _local(moment: datetime.datetime) -> str:
    return f"{timezone.localtime(moment):%Y-%m-%d %H:%M}"


def waiting_rows(
    assignments: Iterable[SequencePiece],
    *,
    now: datetime.datetime,
    promised: Mapping[int, datetime.datetime] | None = None,
) -> list[WaitingRow]:
    """What each assigned piece waits for at `now`.

    `promised` is the hook for the scheduler: lot id -> promised date (when the lot's last
    step is scheduled to end). Without it the promised column stays empty.
    """
    progress = progress_for(assignments)
    if not progress:
        return []
    promised = promised or {}
    today = timezone.localdate(now)
    piece_ids = {p.piece.pk for p in progress}
    in_runs: dict[tuple[int, object], list] = defaultdict(list)
    for link in ChamberRunPiece.objects.filter(piece_id__in=piece_ids).select_related("run"):
        in_runs[(link.piece_id, link.step_key)].append(link.run)
    chambers, benches = _resources()
    current_ids: set[int] = set()
    for p in progress:
        current_ids |= p.result_ids
    reviewed = _reviewed_results({p.piece.lot_id for p in progress}, current_ids)
    rows = []
    for p in progress:
        row = _row(
            p,
            now=now,
            today=today,
            in_runs=in_runs,
            chambers=chambers,
            benches=benches,
            reviewed=reviewed,
            promised=promised,
        )
        if row is not None:
            rows.append(row)
    rows.sort(key=lambda r: (not r.late, r.due or datetime.date.max, -r.waited_hours, r.piece))
    return rows


def _row(
    p: PieceProgress, *, now, today, in_runs, chambers, benches, reviewed, promised
) -> WaitingRow | None:
    piece = p.piece
    lot = piece.lot
    step = p.open_step
    since = p.previous_done_at or p.plan.released_at
    if step is None:
        if p.result_ids and p.result_ids <= reviewed.get(lot.pk, set()):
            return None  # reviewed: nothing left to wait for here
        wait_kind, text = WaitKind.REVIEW, "review of the lot's results"
        step_text, kind, hazards = "", "", ()
    else:
        step_text, kind, hazards = f"{step.order}. {step.name}", step.kind, tuple(step.hazards)
        wait_kind, text, since = _waits_for(p, step, since, now, in_runs, chambers, benches)
    due = lot.order.due_date
    return WaitingRow(
        lot_id=lot.pk,
        lot_number=lot.number,
        lot_url=lot.get_absolute_url(),
        stage=lot.get_stage_display(),
        customer=lot.order.customer.name,
        piece=piece.ident,
        piece_url=piece.get_absolute_url(),
        step=step_text,
        kind=kind,
        kind_label=_kind_label(kind) if kind else "",
        wait_kind=wait_kind,
        waits_for=text,
        waiting_since=since,
        waited_hours=max(0.0, (now - since).total_seconds() / 3600),
        due=due,
        late=due is not None and due < today,
        promised=promised.get(lot.pk),
        hazards=hazards,
    )


def _waits_for(p: PieceProgress, step, since, now, in_runs, chambers, benches):
    wait = step.wait_hours_before or Decimal(0)
    if wait > 0:
        until = since + datetime.timedelta(hours=float(wait))
        if until > now:
            reason = f" ({step.wait_reason})" if step.wait_reason else ""
            return WaitKind.WAIT_TIME, f"wait time until {_local(until)}{reason}", since
    if step.kind in CHAMBER_KINDS:
        runs = sorted(in_runs.get((p.piece.pk, step.step_key), []), key=lambda r: r.loaded_at)
        active = next((r for r in runs if r.unloaded_at is None), None)
        if active is not None:
            return (
                WaitKind.IN_CHAMBER,
                f"unloading: in chamber run {active.ident} since {_local(active.loaded_at)}",
                active.loaded_at,
            )
        if runs:
            last = runs[-1]
            return (
                WaitKind.RESULT,
                f"result after chamber run {last.ident} (unloaded {_local(last.unloaded_at)})",
                last.unloaded_at,
            )
        where = ", ".join(chambers.get(step.kind, [])) or "no chamber listed for this kind"
        return (
            WaitKind.CHAMBER_RUN,
            f"a {_kind_label(step.kind).lower()} chamber run at "
            f"{condition_of(step.parameters)} ({where})",
            since,
        )
    where = ", ".join(benches.get(step.kind, [])) or "no station listed for this kind"
    return (
        WaitKind.BENCH,
        f"a bench station for {_kind_label(step.kind).lower()} ({where})",
        since,
    )
