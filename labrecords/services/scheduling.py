"""The lab's schedule: the records' open steps placed on chambers and bench stations.

Nothing mutable is stored. `lab_schedule()` builds the workload from the records
(`labrecords.selectors_schedule.schedule_inputs`), runs the scheduler
(`durability.scheduling.schedule`) and keeps the answer in Django's cache for a
few minutes under a fingerprint of its inputs: any new result, run, block, plan or
calendar change gives new inputs and so a new schedule. Re-planning keeps running
steps where they are (they enter the workload as fixed).
"""

from __future__ import annotations

import datetime
import hashlib
from dataclasses import dataclass
from typing import Any

from django.core.cache import cache

from durability.errors import InputError
from durability.scheduling import SolverOptions, load_workload, schedule
from labrecords.selectors_schedule import (
    ResourceInfo,
    ScheduleInputs,
    Unschedulable,
    aware,
    schedule_inputs,
)

CACHE_SECONDS = 300
# A fixed number of passes keeps the answer the same for the same inputs; the time
# budget only stops a pathological workload from holding a page.
OPTIONS = SolverOptions(time_budget_s=20.0, max_passes=24)


@dataclass(frozen=True)
class ScheduledStep:
    """One step placed on a resource (times aware, in the lab's zone)."""

    step_id: str
    lot_id: int
    lot_number: str
    piece_ident: str
    name: str
    kind: str
    sequence: str
    resource: str
    start: datetime.datetime
    end: datetime.datetime
    chamber_run: str | None
    fixed: bool
    hazards: tuple[str, ...] = ()


@dataclass(frozen=True)
class LotPromiseRow:
    """A lot's promised date against its due date; `reason` says why it is late."""

    lot_id: int
    lot_number: str
    promised: datetime.datetime | None
    due: datetime.date | None
    late: bool
    late_hours: float
    reason: str | None
    priority: int
    note: str = ""


@dataclass(frozen=True)
class LabSchedule:
    """The schedule as pages, feeds and selectors use it."""

    start: datetime.datetime
    fingerprint: str
    steps: tuple[ScheduledStep, ...]
    lots: tuple[LotPromiseRow, ...]
    unschedulable: tuple[Unschedulable, ...]
    resources: tuple[ResourceInfo, ...]
    lab_days: tuple[int, ...]
    opens: datetime.time
    closes: datetime.time
    holidays: tuple[datetime.date, ...]
    notes: tuple[str, ...]
    makespan_hours: float = 0.0
    lower_bound_hours: float = 0.0
    lower_bound_binding: str = ""
    convention: str = ""
    error: str | None = None

    @property
    def ratio(self) -> float | None:
        """Makespan over its lower bound (1.0 is proven best); None without a bound."""
        if self.lower_bound_hours <= 0:
            return 1.0 if self.makespan_hours <= 0 else None
        return self.makespan_hours / self.lower_bound_hours

    @property
    def late(self) -> tuple[LotPromiseRow, ...]:
        return tuple(row for row in self.lots if row.late)

    def hazards(self) -> set[str]:
        """Every hazard of the scheduled steps (for the safety cautions)."""
        return {hazard for step in self.steps for hazard in step.hazards}

    def steps_on(self, ident: str) -> list[ScheduledStep]:
        return [s for s in self.steps if s.resource == ident]


def _key(inputs: ScheduleInputs, options: SolverOptions) -> str:
    digest = hashlib.sha256(f"{inputs.fingerprint}|{options!r}".encode()).hexdigest()
    return f"labrecords:schedule:{digest}"


def lab_schedule(
    *, now: datetime.datetime | None = None, options: SolverOptions | None = None
) -> LabSchedule:
    """The current schedule of every released plan's open steps (cached by its inputs).

    Bad input the scheduler refuses (fixed runs that overlap, say) does not raise: the
    answer carries the message in `error` and no placements.
    """
    options = options or OPTIONS
    inputs = schedule_inputs(now)
    key = _key(inputs, options)
    cached = cache.get(key)
    if cached is not None:
        return cached
    result = compute(inputs, options)
    cache.set(key, result, CACHE_SECONDS)
    return result


def compute(inputs: ScheduleInputs, options: SolverOptions | None = None) -> LabSchedule:
    """Run the scheduler on `inputs` (no cache) and turn its answer into lab terms."""
    base: dict[str, Any] = dict(
        start=inputs.start,
        fingerprint=inputs.fingerprint,
        unschedulable=inputs.unschedulable,
        resources=inputs.resources,
        lab_days=inputs.lab_days,
        opens=inputs.opens,
        closes=inputs.closes,
        holidays=inputs.holidays,
        notes=inputs.notes,
    )
    try:
        answer = schedule(load_workload(inputs.workload), options or OPTIONS)
    except InputError as exc:
        return LabSchedule(steps=(), lots=(), error=str(exc), **base)

    steps = []
    for a in answer.assignments:
        ref = inputs.steps[a.step]
        steps.append(
            ScheduledStep(
                step_id=a.step,
                lot_id=ref.lot_id,
                lot_number=ref.lot_number,
                piece_ident=ref.piece_ident,
                name=ref.name,
                kind=ref.kind,
                sequence=ref.sequence,
                resource=a.resource,
                start=aware(a.start),
                end=aware(a.end),
                chamber_run=a.chamber_run,
                fixed=a.fixed,
                hazards=ref.hazards,
            )
        )
    stuck = {u.lot_number: u for u in inputs.unschedulable}
    lots = []
    for promise in answer.lots:
        blocked = stuck.get(promise.lot)
        reason = promise.reason
        if promise.late and promise.due is not None and aware(promise.due) <= inputs.start:
            reason = (
                f"already past its due date ({inputs.lot_due.get(promise.lot)}) when "
                "this schedule starts"
            )
        lots.append(
            LotPromiseRow(
                lot_id=inputs.lot_ids[promise.lot],
                lot_number=promise.lot,
                promised=None if blocked or promise.promised is None else aware(promise.promised),
                due=inputs.lot_due.get(promise.lot),
                late=promise.late and blocked is None,
                late_hours=promise.late_hours if blocked is None else 0.0,
                reason=reason if blocked is None else None,
                priority=promise.priority,
                note=""
                if blocked is None
                else (
                    f"No promised date: {blocked.piece_ident} {blocked.step_name} cannot be "
                    f"scheduled ({blocked.reason})."
                ),
            )
        )
    for lot_number, blocked in stuck.items():
        if lot_number not in inputs.lot_ids:
            lots.append(
                LotPromiseRow(
                    lot_id=blocked.lot_id,
                    lot_number=lot_number,
                    promised=None,
                    due=None,
                    late=False,
                    late_hours=0.0,
                    reason=None,
                    priority=0,
                    note=f"No promised date: {blocked.piece_ident} {blocked.step_name} cannot be "
                    f"scheduled ({blocked.reason}).",
                )
            )
    lots.sort(key=lambda row: (row.promised is None, row.promised or inputs.start, row.lot_number))
    return LabSchedule(
        steps=tuple(steps),
        lots=tuple(lots),
        makespan_hours=answer.makespan_hours,
        lower_bound_hours=answer.lower_bound_hours,
        lower_bound_binding=answer.lower_bound.binding,
        convention=answer.convention,
        **base,
    )
