"""Typed input and output of the scheduler.

A workload is the lab's calendar, its resources (chambers and bench stations),
its lots and the steps of every witness piece's sequence. A schedule places each
step on a resource and, for chamber steps, in a chamber run.
"""

from __future__ import annotations

import enum
from dataclasses import dataclass, field
from datetime import date, datetime, time

# The method kinds a step or a resource may name; anything else is an unknown kind.
METHOD_KINDS: tuple[str, ...] = (
    "adhesion",
    "crosshatch",
    "moderate_abrasion",
    "severe_abrasion",
    "humidity",
    "temperature",
    "thermal_shock",
    "salt_fog",
    "salt_solubility",
    "water_solubility",
    "solvent_solubility",
    "cleanability",
    "inspection",
    "spectral_measurement",
    "other",
)


class CalendarKind(enum.Enum):
    """When a resource can work.

    ALWAYS: a chamber; runs go on around the clock, but someone must load them,
    so a chamber run starts only inside lab hours. LAB_HOURS: a bench station;
    each step lies entirely inside one lab-hours window.
    """

    ALWAYS = "always"
    LAB_HOURS = "lab_hours"


@dataclass(frozen=True)
class LabHours:
    """The lab's working window: the same hours on each listed weekday (Monday = 0)."""

    days: frozenset[int]
    opens: time
    closes: time


@dataclass(frozen=True)
class BlockedPeriod:
    """A period in which a resource cannot work (maintenance, calibration due, breakdown)."""

    start: datetime
    end: datetime
    reason: str = ""


@dataclass(frozen=True)
class Resource:
    """A chamber or a bench station.

    `capacity` is the number of pieces a chamber run can hold, or the number of
    pieces a bench station can work on side by side.
    """

    id: str
    kinds: frozenset[str]
    capacity: int
    calendar: CalendarKind
    blocked: tuple[BlockedPeriod, ...] = ()

    @property
    def is_chamber(self) -> bool:
        return self.calendar is CalendarKind.ALWAYS


@dataclass(frozen=True)
class Lot:
    """A lot with its due date (None: none promised) and priority (larger is more urgent)."""

    id: str
    due: datetime | None = None
    priority: int = 0


@dataclass(frozen=True)
class FixedPlacement:
    """Where a step already running, done or pinned stands; the scheduler never moves it."""

    resource: str
    start: datetime


@dataclass(frozen=True)
class Step:
    """One step of a witness piece's sequence.

    `after` lists the steps that must end first; `wait_hours` is the minimum wait
    after the last of them (or after the workload's start when `after` is empty).
    Chamber steps with equal kind, condition and duration may share a chamber run.
    `resources`, when given, limits the step to those resources (for example the
    chambers whose condition ranges cover it); empty means any resource of its kind.
    """

    id: str
    piece: str
    lot: str
    kind: str
    hours: float
    condition: str = ""
    after: tuple[str, ...] = ()
    wait_hours: float = 0.0
    fixed: FixedPlacement | None = None
    resources: tuple[str, ...] = ()


@dataclass(frozen=True)
class Workload:
    """Everything the scheduler needs: calendar, resources, lots and steps."""

    start: datetime
    lab_hours: LabHours
    resources: tuple[Resource, ...]
    steps: tuple[Step, ...]
    lots: tuple[Lot, ...] = ()
    holidays: frozenset[date] = frozenset()


@dataclass(frozen=True)
class Assignment:
    """A step placed on a resource; `chamber_run` is set for chamber steps."""

    step: str
    resource: str
    start: datetime
    end: datetime
    chamber_run: str | None
    fixed: bool = False


@dataclass(frozen=True)
class LotPromise:
    """A lot's promised date (end of its last step) against its due date."""

    lot: str
    promised: datetime | None
    due: datetime | None
    priority: int
    late: bool
    late_hours: float
    reason: str | None = None


@dataclass(frozen=True)
class LowerBound:
    """A lower bound on the makespan from the workload alone, and what sets it."""

    hours: float
    binding: str
    parts: dict[str, float] = field(default_factory=dict)


@dataclass(frozen=True)
class Schedule:
    """The scheduler's answer.

    `makespan_hours` runs from the workload's start to the end of the last step;
    `ratio` is makespan / lower bound (1.0 when both are zero).
    """

    makespan_hours: float
    lower_bound: LowerBound
    assignments: tuple[Assignment, ...]
    lots: tuple[LotPromise, ...]
    solver: str
    passes: int
    convention: str

    @property
    def lower_bound_hours(self) -> float:
        return self.lower_bound.hours

    @property
    def ratio(self) -> float:
        if self.lower_bound.hours <= 0:
            return 1.0 if self.makespan_hours <= 0 else float("inf")
        return self.makespan_hours / self.lower_bound.hours

    @property
    def late(self) -> tuple[LotPromise, ...]:
        return tuple(lot for lot in self.lots if lot.late)
