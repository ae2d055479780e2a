"""Reads for the schedule: the scheduler's workload built from the records, and what
the schedule pages, the lot page and the waiting-work page show.

The workload follows the JSON format of `python -m durability schedule`
(durability/scheduling/io.py): times are the lab's local time without an offset.
Conventions (common practice, stated here once):

- start: now, rounded up to the next quarter hour.
- A step is done for a piece when a current step result exists for its step key.
  A chamber step without a result whose piece sat in a run now unloaded counts as
  exposed (its result is still to be written) unless the run's latest exposure
  check says the exposure does not count.
- A step without a result whose piece is in an open chamber run is running: it is
  fixed at the run's chamber (the resource linked to the run's instrument) and
  loading time; every piece of that run shares the run's condition.
- The steps of a piece follow its sequence's order ("after"); a step's
  `wait_hours_before` counts from the end of the step before it, or, when that one
  is done, from its result's observed time (for the first step: from the end of
  the coating day).
- condition = method code and version, severity and the step's parameter values:
  chamber steps share a run only when all of these are equal.
- due = the order's due date at the end of that day; priority = the lot's own (a rush
  lot), and at least 1 for a lot in retest.
- A resource is blocked in its blocked periods, from the day after its
  instrument's calibration due date, and while its instrument is out of service.
"""

from __future__ import annotations

import datetime
import hashlib
import json
import math
import uuid
from collections import defaultdict
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from django.utils import timezone

from durability.models import CalendarKind, LabHoliday, LabHours, Resource, ResourceBlock
from durability.scheduling import METHOD_KINDS
from labrecords import clock
from labrecords.models import (
    ChamberRunPiece,
    ExposureCheck,
    Lot,
    LotStage,
    PieceStatus,
    PlanStep,
    SequencePiece,
    StepResult,
    TestPlan,
)

START_ROUNDING = datetime.timedelta(minutes=15)
# Lab hours when none are recorded (common practice: a weekday day shift).
DEFAULT_LAB_DAYS = (0, 1, 2, 3, 4)
DEFAULT_OPENS = datetime.time(8, 0)
DEFAULT_CLOSES = datetime.time(17, 0)
# A block without a known end (out of service, calibration due) lasts this long.
OPEN_ENDED_BLOCK = datetime.timedelta(days=365)


@dataclass(frozen=True)
class StepRef:
    """What one workload step stands for in the records."""

    step_id: str
    lot_id: int
    lot_number: str
    piece_id: int
    piece_ident: str
    plan_step_id: int
    name: str
    kind: str
    sequence: str
    hazards: tuple[str, ...] = ()


@dataclass(frozen=True)
class Unschedulable:
    """A step the scheduler cannot place, and why (its later steps wait behind it)."""

    lot_id: int
    lot_number: str
    piece_ident: str
    step_name: str
    kind: str
    reason: str


@dataclass(frozen=True)
class BlockInfo:
    """A period a resource cannot work; `block_id` is None for a derived one."""

    block_id: int | None
    starts_at: datetime.datetime
    ends_at: datetime.datetime
    reason: str


@dataclass(frozen=True)
class ResourceInfo:
    ident: str
    name: str
    is_chamber: bool
    capacity: int
    kinds: tuple[str, ...]
    blocks: tuple[BlockInfo, ...]


@dataclass(frozen=True)
class ScheduleInputs:
    """The workload (JSON-ready) and what its ids stand for."""

    start: datetime.datetime
    workload: dict[str, Any]
    steps: Mapping[str, StepRef]
    lot_ids: Mapping[str, int]
    lot_due: Mapping[str, datetime.date | None]
    unschedulable: tuple[Unschedulable, ...]
    resources: tuple[ResourceInfo, ...]
    lab_days: tuple[int, ...]
    opens: datetime.time
    closes: datetime.time
    holidays: tuple[datetime.date, ...]
    notes: tuple[str, ...]
    # step id -> the resources whose condition ranges cover it, when not all of its kind do.
    covering: Mapping[str, frozenset[str]] = field(default_factory=dict)

    @property
    def fingerprint(self) -> str:
        """SHA-256 of the workload: equal inputs give equal schedules."""
        text = json.dumps(self.workload, sort_keys=True, separators=(",", ":"))
        return hashlib.sha256(text.encode()).hexdigest()


def lab_zone():
    return timezone.get_default_timezone()


def local_naive(moment: datetime.datetime) -> datetime.datetime:
    """An aware time as the lab's local wall time without offset (the workload's form)."""
    return timezone.localtime(moment, lab_zone()).replace(tzinfo=None, second=0, microsecond=0)


def aware(local: datetime.datetime) -> datetime.datetime:
    """The lab's local wall time as an aware time."""
    return timezone.make_aware(local, lab_zone())


def _stamp(local: datetime.datetime) -> str:
    return local.isoformat(timespec="minutes")


def round_up(moment: datetime.datetime, step: datetime.timedelta = START_ROUNDING):
    """`moment` rounded up to a whole multiple of `step` (in UTC)."""
    seconds = step.total_seconds()
    epoch = moment.timestamp()
    rounded = math.ceil(epoch / seconds) * seconds
    return datetime.datetime.fromtimestamp(rounded, tz=datetime.UTC)


def current_lab_hours(
    day: datetime.date,
) -> tuple[tuple[int, ...], datetime.time, datetime.time, bool]:
    """(weekdays, opens, closes, recorded) in force on `day`; the default when none recorded."""
    row = LabHours.objects.filter(valid_from__lte=day).order_by("-valid_from", "-id").first()
    if row is None:
        return DEFAULT_LAB_DAYS, DEFAULT_OPENS, DEFAULT_CLOSES, False
    return tuple(sorted(int(d) for d in row.weekdays)), row.opens, row.closes, True


def _value(spec: Any) -> Any:
    return spec.get("value") if isinstance(spec, Mapping) else spec


def _number(parameters: Mapping[str, Any], name: str) -> float | None:
    value = _value(parameters.get(name))
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    return number if math.isfinite(number) else None


def step_condition(step: PlanStep) -> str:
    """The run-sharing key of a step: method code and version, severity, parameter values."""
    version = step.method_version
    parts = [f"{version.method.code} v{version.number}"]
    if step.severity:
        parts.append(f"severity {step.severity}")
    if step.state:
        parts.append(f"state {step.state}")
    values = []
    for name in sorted(step.parameters):
        value = _value(step.parameters[name])
        if value is None or value == "" or isinstance(value, dict | list):
            continue
        values.append(f"{name}={value}")
    if values:
        parts.append(", ".join(values))
    return "; ".join(parts)


# Which step parameters each condition range of a resource limits.
_RANGE_PARAMETERS = {
    "temperature_c": ("temperature_c", "temperature_low_c", "temperature_high_c"),
    "rh_pct": ("rh_min_pct", "rh_max_pct"),
}


def covers(ranges: Mapping[str, Any], parameters: Mapping[str, Any]) -> bool:
    """True when every stated step value lies inside the resource's condition ranges.

    A range the resource does not state, or a value the step does not state, limits nothing.
    """
    for range_name, names in _RANGE_PARAMETERS.items():
        bounds = ranges.get(range_name)
        if not isinstance(bounds, list | tuple) or len(bounds) != 2:
            continue
        low, high = float(bounds[0]), float(bounds[1])
        for name in names:
            value = _number(parameters, name)
            if value is not None and not low <= value <= high:
                return False
    return True


def _resource_blocks(
    resource: Resource, blocks: list[ResourceBlock], start: datetime.datetime
) -> list[BlockInfo]:
    out = [BlockInfo(b.pk, b.starts_at, b.ends_at, b.reason) for b in blocks]
    instrument = resource.instrument
    if instrument is not None:
        until = start + OPEN_ENDED_BLOCK
        if not instrument.in_service:
            out.append(
                BlockInfo(None, start, until, f"instrument {instrument.ident} is out of service")
            )
        else:
            expired = aware(
                datetime.datetime.combine(
                    instrument.calibration_due + datetime.timedelta(days=1), datetime.time()
                )
            )
            if expired < until:
                out.append(
                    BlockInfo(
                        None,
                        expired,
                        max(until, expired + datetime.timedelta(days=1)),
                        f"calibration due {instrument.calibration_due:%Y-%m-%d} "
                        f"(instrument {instrument.ident})",
                    )
                )
    return sorted(out, key=lambda b: (b.starts_at, b.ends_at))


def _hours(delta: datetime.timedelta) -> float:
    return delta.total_seconds() / 3600


def schedule_inputs(now: datetime.datetime | None = None) -> ScheduleInputs:
    """Build the scheduler's workload from the records, in a fixed number of queries."""
    now = now or clock.now()
    start = round_up(now)
    start_local = local_naive(start)
    today = start_local.date()
    notes: list[str] = []

    days, opens, closes, recorded = current_lab_hours(today)
    if not recorded:
        notes.append("No lab hours are recorded: Monday to Friday 08:00-17:00 assumed.")
    window_hours = _hours(
        datetime.datetime.combine(today, closes) - datetime.datetime.combine(today, opens)
    )
    holidays = tuple(LabHoliday.objects.filter(day__gte=today).values_list("day", flat=True))

    resources = list(Resource.objects.filter(active=True).select_related("instrument"))
    blocks_of: dict[int, list[ResourceBlock]] = defaultdict(list)
    for block in ResourceBlock.objects.filter(resource__in=resources, ends_at__gt=start):
        blocks_of[block.resource_id].append(block)
    infos: list[ResourceInfo] = []
    resource_rows = []
    for resource in resources:
        unknown = sorted(set(resource.kinds) - set(METHOD_KINDS))
        if unknown:
            notes.append(
                f"Resource {resource.ident} names unknown method kinds "
                f"{', '.join(unknown)}; they are ignored."
            )
        kinds = tuple(sorted(set(resource.kinds) & set(METHOD_KINDS)))
        blocked = _resource_blocks(resource, blocks_of[resource.pk], start)
        infos.append(
            ResourceInfo(
                resource.ident,
                resource.name,
                resource.is_chamber,
                resource.capacity,
                kinds,
                tuple(blocked),
            )
        )
        resource_rows.append(
            {
                "id": resource.ident,
                "kinds": list(kinds),
                "capacity": resource.capacity,
                "calendar": "always" if resource.calendar == CalendarKind.ALWAYS else "lab_hours",
                "blocked": [
                    {
                        "from": _stamp(local_naive(b.starts_at)),
                        "to": _stamp(local_naive(b.ends_at)),
                        "reason": b.reason,
                    }
                    for b in blocked
                ],
            }
        )
    by_instrument = {r.instrument_id: r for r in resources if r.instrument_id is not None}

    plans = TestPlan.objects.current_released()
    assignments = list(
        SequencePiece.objects.filter(plan__in=plans)
        .exclude(piece__status=PieceStatus.DISPOSED)
        .select_related("piece", "sequence", "plan__lot__order")
        .order_by("plan__lot__number", "sequence__position", "piece__ident")
    )
    steps_of: dict[int, list[PlanStep]] = defaultdict(list)
    for step in (
        PlanStep.objects.filter(plan__in=plans)
        .select_related("method_version__method")
        .order_by("sequence_id", "order")
    ):
        steps_of[step.sequence_id].append(step)
    piece_ids = [a.piece_id for a in assignments]
    done: dict[tuple[int, uuid.UUID], datetime.datetime] = {}
    for piece_id, step_key, observed_at in (
        StepResult.objects.current()
        .filter(piece_id__in=piece_ids)
        .values_list("piece_id", "step_key", "observed_at")
    ):
        done[(piece_id, step_key)] = observed_at
    open_runs: dict[tuple[int, uuid.UUID], Any] = {}
    unloaded: dict[tuple[int, uuid.UUID], Any] = {}
    for link in ChamberRunPiece.objects.filter(piece_id__in=piece_ids).select_related("run"):
        target = open_runs if link.run.unloaded_at is None else unloaded
        seen = target.get((link.piece_id, link.step_key))
        if seen is None or seen.loaded_at < link.run.loaded_at:
            target[(link.piece_id, link.step_key)] = link.run
    counts: dict[int, bool] = {}
    for run_id, counted in (
        ExposureCheck.objects.filter(run_id__in={run.pk for run in unloaded.values()})
        .order_by("run_id", "-checked_at", "-id")
        .values_list("run_id", "counts")
    ):
        counts.setdefault(run_id, counted)

    steps: list[dict[str, Any]] = []
    refs: dict[str, StepRef] = {}
    covering: dict[str, frozenset[str]] = {}
    unschedulable: list[Unschedulable] = []
    lots: dict[str, Lot] = {}
    run_members: dict[int, list[dict[str, Any]]] = defaultdict(list)
    for assignment in assignments:
        piece, lot = assignment.piece, assignment.plan.lot
        # The wait before the first step counts from the end of the coating day.
        ready = aware(
            datetime.datetime.combine(lot.run_date + datetime.timedelta(days=1), datetime.time())
        )
        previous: str | None = None
        stuck = False
        for step in steps_of[assignment.sequence_id]:
            key = (piece.pk, step.step_key)
            if key in done:
                ready = done[key]
                continue
            run = unloaded.get(key)
            if run is not None and key not in open_runs and counts.get(run.pk, True):
                ready = run.unloaded_at
                continue
            if stuck:
                continue
            step_id = f"{piece.ident}#{step.order}"
            hours = float(step.hours)
            wait = float(step.wait_hours_before)
            row: dict[str, Any] = {
                "id": step_id,
                "piece": piece.ident,
                "lot": lot.number,
                "kind": step.kind,
                "condition": step_condition(step),
                "hours": hours,
                "after": [],
                "wait_hours": 0.0,
            }
            able = [r for r in resources if step.kind in r.kinds and step.kind in METHOD_KINDS]
            running = open_runs.get(key)
            if running is not None:
                chamber = by_instrument.get(running.chamber_id)
                if chamber is not None and chamber in able:
                    row["fixed"] = {
                        "resource": chamber.ident,
                        "start": _stamp(local_naive(running.loaded_at)),
                    }
                    row["condition"] = f"chamber run {running.ident}"
                    run_members[running.pk].append(row)
                else:
                    # Running in a chamber the schedule does not know: the piece is busy
                    # until the run's expected end, and its next step waits for that.
                    notes.append(
                        f"Chamber run {running.ident} is in a chamber without an "
                        "active resource; its pieces are taken as busy until its "
                        "expected end."
                    )
                    ready = running.loaded_at + datetime.timedelta(hours=hours)
                    continue
            else:
                reason = None
                if not able:
                    reason = f"no active resource runs {step.kind.replace('_', ' ')} steps"
                else:
                    fit = [r for r in able if covers(r.condition_ranges, step.parameters)]
                    if not fit:
                        reason = (
                            "no resource's condition ranges cover this step's "
                            "temperature or humidity"
                        )
                    elif len(fit) < len(able):
                        covering[step_id] = frozenset(r.ident for r in fit)
                        row["resources"] = sorted(covering[step_id])
                    if (
                        reason is None
                        and all(not r.is_chamber for r in able)
                        and hours > window_hours
                    ):
                        reason = (
                            f"{hours:g} h does not fit in one lab-hours window "
                            f"({window_hours:g} h); bench steps are not split"
                        )
                if reason is not None:
                    unschedulable.append(
                        Unschedulable(lot.pk, lot.number, piece.ident, step.name, step.kind, reason)
                    )
                    stuck = True
                    continue
                if previous is not None:
                    row["after"] = [previous]
                    row["wait_hours"] = wait
                else:
                    due_ready = ready + datetime.timedelta(hours=wait)
                    row["wait_hours"] = round(max(0.0, _hours(due_ready - start)), 4)
            steps.append(row)
            previous = step_id
            refs[step_id] = StepRef(
                step_id,
                lot.pk,
                lot.number,
                piece.pk,
                piece.ident,
                step.pk,
                step.name,
                step.kind,
                assignment.sequence.label,
                tuple(step.hazards or ()),
            )
            lots[lot.number] = lot
    # The pieces of one open run share its length (the longest of their steps).
    for members in run_members.values():
        longest = max(m["hours"] for m in members)
        for member in members:
            member["hours"] = longest

    lot_rows = [
        {
            "id": number,
            "due": None
            if lot.order.due_date is None
            else _stamp(
                datetime.datetime.combine(
                    lot.order.due_date + datetime.timedelta(days=1), datetime.time()
                )
            ),
            "priority": max(lot.priority, 1 if lot.stage == LotStage.RETEST else 0),
        }
        for number, lot in sorted(lots.items())
    ]
    workload = {
        "start": _stamp(start_local),
        "lab_hours": {
            "days": list(days),
            "from": opens.strftime("%H:%M"),
            "to": closes.strftime("%H:%M"),
        },
        "holidays": [d.isoformat() for d in holidays],
        "resources": resource_rows,
        "lots": lot_rows,
        "steps": steps,
    }
    return ScheduleInputs(
        start=start,
        workload=workload,
        steps=refs,
        lot_ids={number: lot.pk for number, lot in lots.items()},
        lot_due={number: lot.order.due_date for number, lot in lots.items()},
        unschedulable=tuple(unschedulable),
        resources=tuple(infos),
        lab_days=days,
        opens=opens,
        closes=closes,
        holidays=holidays,
        notes=tuple(dict.fromkeys(notes)),
        covering=covering,
    )


def promised_dates() -> dict[int, datetime.datetime]:
    """Lot id -> promised date (aware): when the lot's last scheduled step ends.

    Lots with nothing left to schedule, or with a step that cannot be scheduled, are absent.
    """
    from labrecords.services.scheduling import lab_schedule

    return {row.lot_id: row.promised for row in lab_schedule().lots if row.promised is not None}


@dataclass(frozen=True)
class LotPromiseView:
    """What the lot page says about the lot's promised date."""

    promised: datetime.datetime | None
    due: datetime.date | None
    late: bool
    reason: str | None
    note: str


def lot_promise(lot: Lot) -> LotPromiseView:
    """The lot's promised date from the current schedule, or why it has none."""
    from labrecords.services.scheduling import lab_schedule

    schedule = lab_schedule()
    row = next((r for r in schedule.lots if r.lot_id == lot.pk), None)
    due = lot.order.due_date
    if row is not None:
        return LotPromiseView(row.promised, due, row.late, row.reason, row.note)
    if schedule.error:
        return LotPromiseView(
            None, due, False, None, f"The schedule could not be computed: {schedule.error}"
        )
    if not TestPlan.objects.current_released().filter(lot=lot).exists():
        return LotPromiseView(
            None, due, False, None, "No released test plan yet: nothing to schedule."
        )
    return LotPromiseView(
        None, due, False, None, "Every planned step has a result: nothing left to schedule."
    )
