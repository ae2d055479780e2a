"""The resource timeline: lanes per resource over the next days, laid out for an SVG.

Plain Python, no Django: `lanes_from(schedule, ...)` turns a schedule into lanes of
bars (one per chamber run or bench step) and blocked periods; `layout(...)` gives
every shape its coordinates. The template draws them, so every text is escaped
by the template engine.
"""

from __future__ import annotations

import datetime
from collections import defaultdict
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

WIDTH = 1000
LABEL_WIDTH = 170
PLOT_WIDTH = WIDTH - LABEL_WIDTH - 10
HEADER = 34
ROW = 22
PAD = 5
CHAR_WIDTH = 6.2  # px per character of the 11 px labels, for cutting a label to its bar


@dataclass(frozen=True)
class Bar:
    """A chamber run or a bench step on one resource."""

    start: datetime.datetime
    end: datetime.datetime
    label: str
    title: str
    fixed: bool = False


@dataclass(frozen=True)
class Period:
    start: datetime.datetime
    end: datetime.datetime
    reason: str


@dataclass(frozen=True)
class Lane:
    ident: str
    name: str
    is_chamber: bool
    bars: tuple[Bar, ...]
    blocks: tuple[Period, ...]
    hazards: frozenset[str] = frozenset()


@dataclass(frozen=True)
class Rect:
    x: float
    y: float
    width: float
    height: float
    label: str = ""
    title: str = ""
    css: str = ""


@dataclass
class LaneBox:
    ident: str
    name: str
    is_chamber: bool
    y: float
    height: float
    bars: list[Rect] = field(default_factory=list)
    blocks: list[Rect] = field(default_factory=list)

    @property
    def label_y(self) -> float:
        return self.y + self.height / 2 + 4


@dataclass(frozen=True)
class Tick:
    x: float
    label: str


@dataclass(frozen=True)
class TimelineLayout:
    width: int
    height: float
    plot_left: float
    plot_right: float
    header: float
    lanes: tuple[LaneBox, ...]
    ticks: tuple[Tick, ...]
    open_hours: tuple[Rect, ...]
    now_x: float | None
    start: datetime.datetime
    end: datetime.datetime


def lanes_from(
    schedule: Any, *, resources: Iterable[Any], start: datetime.datetime, end: datetime.datetime
) -> list[Lane]:
    """Lanes for `resources` (ResourceInfo-like) from a LabSchedule-like object, cut to
    [start, end). Chamber steps of one run make one bar; bench steps one bar each."""
    lanes = []
    for resource in resources:
        groups: dict[str, list[Any]] = defaultdict(list)
        hazards: set[str] = set()
        for step in schedule.steps_on(resource.ident):
            if step.end <= start or step.start >= end:
                continue
            key = step.chamber_run or step.step_id if resource.is_chamber else step.step_id
            groups[key].append(step)
            hazards.update(step.hazards)
        bars = []
        for key, steps in groups.items():
            first = min(s.start for s in steps)
            last = max(s.end for s in steps)
            if resource.is_chamber:
                per_lot: dict[str, int] = defaultdict(int)
                for s in steps:
                    per_lot[s.lot_number] += 1
                lots = ", ".join(f"{lot} ×{n}" if n > 1 else lot for lot, n in per_lot.items())
                label = f"{steps[0].name}: {lots}"
                title = (
                    f"{key} on {resource.ident}, {steps[0].name}, "
                    f"{len(steps)} piece(s): {', '.join(s.piece_ident for s in steps)}"
                )
            else:
                s = steps[0]
                label = f"{s.lot_number} {s.piece_ident}"
                title = f"{s.name} on {resource.ident}: piece {s.piece_ident}, lot {s.lot_number}"
            bars.append(Bar(first, last, label, title, fixed=any(s.fixed for s in steps)))
        bars.sort(key=lambda b: (b.start, b.end, b.label))
        blocks = tuple(
            Period(b.starts_at, b.ends_at, b.reason)
            for b in resource.blocks
            if b.ends_at > start and b.starts_at < end
        )
        lanes.append(
            Lane(
                resource.ident,
                resource.name,
                resource.is_chamber,
                tuple(bars),
                blocks,
                frozenset(hazards),
            )
        )
    return lanes


def open_windows(
    start: datetime.datetime,
    end: datetime.datetime,
    *,
    zone: datetime.tzinfo,
    days: Sequence[int],
    opens: datetime.time,
    closes: datetime.time,
    holidays: Iterable[datetime.date],
) -> list[tuple[datetime.datetime, datetime.datetime]]:
    """The lab-hours windows between start and end (aware times in `zone`)."""
    closed = set(holidays)
    day = start.astimezone(zone).date()
    windows = []
    while True:
        window_start = datetime.datetime.combine(day, opens, tzinfo=zone)
        if window_start >= end:
            break
        if day.weekday() in days and day not in closed:
            window_end = datetime.datetime.combine(day, closes, tzinfo=zone)
            if window_end > start:
                windows.append((max(window_start, start), min(window_end, end)))
        day += datetime.timedelta(days=1)
    return windows


def _rows(bars: Sequence[Bar]) -> list[int]:
    """A row per bar so that bars in one row never overlap (first free row)."""
    ends: list[datetime.datetime] = []
    rows = []
    for bar in bars:
        for index, free_at in enumerate(ends):
            if free_at <= bar.start:
                ends[index] = bar.end
                rows.append(index)
                break
        else:
            ends.append(bar.end)
            rows.append(len(ends) - 1)
    return rows


def _cut(label: str, width: float) -> str:
    room = int((width - 6) / CHAR_WIDTH)
    if room >= len(label):
        return label
    if room < 4:
        return ""
    return label[: room - 1] + "…"


def layout(
    lanes: Sequence[Lane],
    *,
    start: datetime.datetime,
    end: datetime.datetime,
    now: datetime.datetime,
    zone: datetime.tzinfo,
    windows: Sequence[tuple[datetime.datetime, datetime.datetime]],
) -> TimelineLayout:
    """Coordinates for every lane, bar, blocked period, lab-hours band and day tick."""
    span = (end - start).total_seconds()
    left = float(LABEL_WIDTH)
    right = left + PLOT_WIDTH

    def x(moment: datetime.datetime) -> float:
        share = (moment - start).total_seconds() / span
        return round(left + min(max(share, 0.0), 1.0) * PLOT_WIDTH, 2)

    boxes = []
    y = float(HEADER)
    for lane in lanes:
        rows = _rows(lane.bars)
        count = max(rows, default=0) + 1
        height = count * ROW + 2 * PAD
        box = LaneBox(lane.ident, lane.name, lane.is_chamber, y, height)
        for period in lane.blocks:
            box.blocks.append(
                Rect(
                    x(period.start),
                    y,
                    max(x(period.end) - x(period.start), 1),
                    height,
                    title=f"Blocked: {period.reason}",
                    css="blocked",
                )
            )
        for bar, row in zip(lane.bars, rows, strict=True):
            bar_x = x(bar.start)
            width = max(x(bar.end) - bar_x, 2.0)
            box.bars.append(
                Rect(
                    bar_x,
                    y + PAD + row * ROW + 2,
                    width,
                    ROW - 4,
                    label=_cut(bar.label, width),
                    title=bar.title,
                    css="bar fixed"
                    if bar.fixed
                    else ("bar run" if lane.is_chamber else "bar step"),
                )
            )
        boxes.append(box)
        y += height
    ticks = []
    day = start.astimezone(zone).date()
    while True:
        midnight = datetime.datetime.combine(day, datetime.time(), tzinfo=zone)
        if midnight >= end:
            break
        if midnight >= start:
            ticks.append(Tick(x(midnight), f"{midnight:%a %d %b}"))
        day += datetime.timedelta(days=1)
    bands = tuple(Rect(x(a), HEADER, x(b) - x(a), y - HEADER, css="open") for a, b in windows)
    now_x = x(now) if start <= now <= end else None
    return TimelineLayout(
        WIDTH, y + 6, left, right, HEADER, tuple(boxes), tuple(ticks), bands, now_x, start, end
    )
