"""Lab hours, holidays and blocked periods on an integer-minute time line.

Times are whole minutes from the workload's start (minute 0). Lab-hours windows
are half-open [opens, closes): a chamber run may be loaded at any minute inside
one, and a bench step must lie entirely inside one.
"""

from __future__ import annotations

import bisect
from collections.abc import Iterable, Iterator, Sequence
from datetime import date, datetime, timedelta

from durability.scheduling.model import LabHours

MINUTES_PER_DAY = 1440
# Guard against an endless search when a step is pushed absurdly far (about 30 years).
HORIZON_LIMIT_MINUTES = 30 * 366 * MINUTES_PER_DAY


def to_minutes(origin: datetime, moment: datetime) -> int:
    """Whole minutes from `origin` to `moment` (rounded down to the minute)."""
    return int((moment - origin).total_seconds() // 60)


def from_minutes(origin: datetime, minutes: int) -> datetime:
    """The moment `minutes` after `origin`."""
    return origin + timedelta(minutes=minutes)


def hours_to_minutes(hours: float) -> int:
    """Hours as whole minutes, rounded up; a hair of float noise does not add a minute."""
    minutes = hours * 60.0
    whole = int(minutes)
    return whole if minutes - whole < 1e-6 else whole + 1


class LabCalendar:
    """The lab-hours windows from the workload's start on, generated as far as needed."""

    def __init__(self, origin: datetime, lab_hours: LabHours, holidays: Iterable[date]) -> None:
        self.origin = origin
        self.lab_hours = lab_hours
        self.holidays = frozenset(holidays)
        self.window_minutes = to_minutes(
            datetime.combine(date.min, lab_hours.opens),
            datetime.combine(date.min, lab_hours.closes),
        )
        self._starts: list[int] = []
        self._ends: list[int] = []
        self._next_day = origin.date()
        self._covered_until = -MINUTES_PER_DAY  # windows are known up to this minute

    @property
    def has_windows(self) -> bool:
        return bool(self.lab_hours.days) and self.window_minutes > 0

    def _extend(self, until: int) -> None:
        if not self.has_windows:
            return
        if until > HORIZON_LIMIT_MINUTES:
            until = HORIZON_LIMIT_MINUTES
        while self._covered_until < until:
            day = self._next_day
            self._next_day = day + timedelta(days=1)
            day_start = to_minutes(self.origin, datetime.combine(day, datetime.min.time()))
            self._covered_until = day_start + MINUTES_PER_DAY
            if day.weekday() not in self.lab_hours.days or day in self.holidays:
                continue
            opens = to_minutes(self.origin, datetime.combine(day, self.lab_hours.opens))
            closes = to_minutes(self.origin, datetime.combine(day, self.lab_hours.closes))
            opens = max(opens, 0)
            if closes > opens:
                self._starts.append(opens)
                self._ends.append(closes)

    def _window_index_from(self, t: int) -> int | None:
        """Index of the first window that ends after minute t, or None if none ever does."""
        t = max(t, 0)
        self._extend(t + 8 * MINUTES_PER_DAY)
        while True:
            i = bisect.bisect_right(self._ends, t)
            if i < len(self._ends):
                return i
            if self._covered_until >= HORIZON_LIMIT_MINUTES or not self.has_windows:
                return None
            # A long run of holidays: look further ahead.
            self._extend(self._covered_until + 60 * MINUTES_PER_DAY)

    def is_open(self, t: int) -> bool:
        """True when minute t lies inside a lab-hours window."""
        i = self._window_index_from(t)
        return i is not None and self._starts[i] <= t < self._ends[i]

    def window_at(self, t: int) -> tuple[int, int] | None:
        """The window [start, end) holding minute t, or None when the lab is closed."""
        i = self._window_index_from(t)
        if i is not None and self._starts[i] <= t < self._ends[i]:
            return self._starts[i], self._ends[i]
        return None

    def next_open(self, t: int) -> int | None:
        """The earliest minute at or after t inside lab hours (None: the lab never opens)."""
        i = self._window_index_from(t)
        if i is None:
            return None
        return max(t, self._starts[i])

    def bench_fit(self, t: int, duration: int) -> int | None:
        """Earliest start at or after t such that [start, start + duration] lies in one window."""
        if duration > self.window_minutes:
            return None
        i = self._window_index_from(t)
        while i is not None:
            start = max(t, self._starts[i])
            if start + duration <= self._ends[i] and start < self._ends[i]:
                return start
            i = self._window_index_from(self._ends[i])
        return None

    def windows(self, t_from: int, t_to: int) -> Iterator[tuple[int, int]]:
        """The windows overlapping [t_from, t_to), clipped to it."""
        i = self._window_index_from(t_from)
        while i is not None and self._starts[i] < t_to:
            yield max(self._starts[i], t_from), min(self._ends[i], t_to)
            i = self._window_index_from(self._ends[i])

    def window_starts(self, t_from: int) -> Iterator[int]:
        """Start of every window from t_from on (the clipped start for the window holding it)."""
        i = self._window_index_from(t_from)
        while i is not None:
            yield max(self._starts[i], t_from)
            i = self._window_index_from(self._ends[i])


class Busy:
    """Sorted, non-overlapping busy intervals [start, end) of one resource or slot."""

    def __init__(self, intervals: Sequence[tuple[int, int]] = ()) -> None:
        merged: list[tuple[int, int]] = []
        for start, end in sorted(intervals):
            if end <= start:
                continue
            if merged and start <= merged[-1][1]:
                merged[-1] = (merged[-1][0], max(merged[-1][1], end))
            else:
                merged.append((start, end))
        self.starts = [s for s, _ in merged]
        self.ends = [e for _, e in merged]

    def conflict(self, start: int, end: int) -> int | None:
        """End of the first busy interval overlapping [start, end), or None when free.

        A zero-length step [t, t] conflicts only with an interval holding t.
        """
        i = bisect.bisect_right(self.ends, start)
        if i < len(self.starts):
            s = self.starts[i]
            if s < end or (end == start and s <= start):
                return self.ends[i]
        return None

    def add(self, start: int, end: int) -> None:
        """Mark [start, end) busy, merging it with the intervals it overlaps or touches."""
        if end <= start:
            return
        lo = bisect.bisect_left(self.ends, start)
        hi = bisect.bisect_right(self.starts, end)
        if lo < hi:
            start = min(start, self.starts[lo])
            end = max(end, self.ends[hi - 1])
            del self.starts[lo:hi]
            del self.ends[lo:hi]
        self.starts.insert(lo, start)
        self.ends.insert(lo, end)

    def covers(self, start: int, end: int) -> bool:
        """True when [start, end) lies entirely inside busy intervals."""
        i = bisect.bisect_right(self.ends, start)
        t = start
        while i < len(self.starts) and t < end:
            if self.starts[i] > t:
                return False
            t = self.ends[i]
            i += 1
        return t >= end

    def intervals(self) -> list[tuple[int, int]]:
        return list(zip(self.starts, self.ends, strict=True))


def chamber_fit(calendar: LabCalendar, busy: Busy, t: int, duration: int) -> int | None:
    """Earliest start at or after t for a chamber run: loaded in lab hours, chamber free."""
    while True:
        start = calendar.next_open(t)
        if start is None:
            return None
        clash = busy.conflict(start, start + duration)
        if clash is None:
            return start
        t = clash


def bench_fit(calendar: LabCalendar, busy: Busy, t: int, duration: int) -> int | None:
    """Earliest start at or after t for a bench step: inside one window, station slot free."""
    while True:
        start = calendar.bench_fit(t, duration)
        if start is None:
            return None
        clash = busy.conflict(start, start + duration)
        if clash is None:
            return start
        t = clash
