"""A lower bound on the makespan from the workload alone.

No schedule can end before the largest of these (each is a relaxation, so the
bound is valid for every feasible schedule, not just ours):

- chains: each step's earliest start along its chain of predecessors and waits,
  on the calendar of the best resource for it (lab hours for bench steps and for
  chamber loading, blocked periods), ignoring every other step;
- pooled bench work: for every set of bench stations that are the only ones able
  to run some steps, the work of the steps released after a moment h, spread over
  the pooled side-by-side capacity in lab hours only (minus blocked periods and
  fixed steps), then the shortest remaining tail;
- pooled chamber runs: the same with chamber time, where the work of one
  condition is its least number of runs, ceil(pieces / largest capacity), times
  the run length; and, for runs at least as long as a lab-hours window, at most
  one run per chamber can start in each window, so the longest runs take the
  earliest loading chances.
"""

from __future__ import annotations

import bisect
import math
from collections import defaultdict
from dataclasses import dataclass

from durability.errors import InputError
from durability.scheduling.calendar import Busy, bench_fit, chamber_fit
from durability.scheduling.model import LowerBound
from durability.scheduling.prepare import NO_RESOURCE, Prepared

# The window-count bound is evaluated at this many release moments at most.
WINDOW_BOUND_SAMPLES = 48


@dataclass(frozen=True)
class Heads:
    """Earliest start and end of every step on its own (chains and calendars only)."""

    start: list[int]
    end: list[int]
    tail: list[int]  # least time from a step's end to the end of its last successor


def heads_and_tails(p: Prepared) -> Heads:
    """Earliest start and end of each step alone, and its remaining tail, in minutes."""
    n = p.n
    start = [0] * n
    end = [0] * n
    for s in p.topo:
        if p.is_fixed(s):
            start[s] = p.fixed_start[s]
            end[s] = start[s] + p.dur[s]
            continue
        release = max((end[q] for q in p.preds[s]), default=0) + p.wait[s]
        release = max(release, 0)
        best: int | None = None
        for r in p.eligible[s]:
            fit = (chamber_fit if p.is_chamber[r] else bench_fit)(
                p.calendar, p.blocked[r], release, p.dur[s]
            )
            if fit is not None and (best is None or fit < best):
                best = fit
        if best is None:
            raise InputError(
                f"step {p.step_ids[s]!r}: no lab-hours window is left to place it in "
                "(check lab_hours, holidays and blocked periods)"
            )
        start[s] = best
        end[s] = best + p.dur[s]
    tail = [0] * n
    for s in reversed(p.topo):
        tail[s] = max((p.wait[t] + p.dur[t] + tail[t] for t in p.succs[s]), default=0)
    return Heads(start, end, tail)


class _Profile:
    """Pooled capacity over time: piecewise constant rate, cumulative work available."""

    def __init__(self, events: list[tuple[int, int]]) -> None:
        rates: dict[int, int] = defaultdict(int)
        for t, delta in events:
            rates[t] += delta
        self.times: list[int] = []
        self.rate: list[int] = []
        self.cumulative: list[float] = []
        rate = 0
        total = 0.0
        for t in sorted(rates):
            if self.times:
                total += self.rate[-1] * (t - self.times[-1])
            rate += rates[t]
            self.times.append(t)
            self.rate.append(rate)
            self.cumulative.append(total)

    def at(self, t: int) -> float:
        i = bisect.bisect_right(self.times, t) - 1
        if i < 0:
            return 0.0
        return self.cumulative[i] + self.rate[i] * (t - self.times[i])

    def reach(self, target: float) -> int | None:
        """Earliest whole minute by which `target` work is available, or None past the end."""
        i = bisect.bisect_left(self.cumulative, target) - 1
        i = max(i, 0)
        while i < len(self.times) - 1:
            if self.cumulative[i + 1] >= target and self.rate[i] > 0:
                return math.ceil(
                    self.times[i] + (target - self.cumulative[i]) / self.rate[i] - 1e-9
                )
            i += 1
        return None


def _available(p: Prepared, r: int, horizon: int) -> list[tuple[int, int]]:
    """Intervals in [0, horizon) when resource r can work: lab hours for benches, minus blocks."""
    if p.is_chamber[r]:
        base = [(0, horizon)]
    else:
        base = list(p.calendar.windows(0, horizon))
    busy = Busy(p.blocked[r].intervals())
    if p.is_chamber[r]:
        for run in p.fixed_runs:
            if run.resource == r:
                busy.add(run.start, run.end)
        busy = Busy(busy.intervals())
    out: list[tuple[int, int]] = []
    for a, b in base:
        t = a
        i = bisect.bisect_right(busy.ends, t)
        while t < b:
            if i < len(busy.starts) and busy.starts[i] < b:
                if busy.starts[i] > t:
                    out.append((t, busy.starts[i]))
                t = max(t, busy.ends[i])
                i += 1
            else:
                out.append((t, b))
                break
    return out


def _bench_profile(p: Prepared, pool: list[int], horizon: int) -> _Profile:
    events: list[tuple[int, int]] = []
    for r in pool:
        available = _available(p, r, horizon)
        for a, b in available:
            events.append((a, p.capacity[r]))
            events.append((b, -p.capacity[r]))
        starts = [a for a, _ in available]
        # A fixed step takes one unit of the station's capacity while the station works.
        for s in range(p.n):
            if p.fixed_resource[s] != r:
                continue
            fs, fe = p.fixed_start[s], p.fixed_start[s] + p.dur[s]
            i = max(bisect.bisect_right(starts, fs) - 1, 0)
            while i < len(available) and available[i][0] < fe:
                lo, hi = max(fs, available[i][0]), min(fe, available[i][1])
                if lo < hi:
                    events.append((lo, -1))
                    events.append((hi, 1))
                i += 1
    return _Profile(events)


def _chamber_profile(p: Prepared, pool: list[int], horizon: int) -> _Profile:
    events: list[tuple[int, int]] = []
    for r in pool:
        for a, b in _available(p, r, horizon):
            events.append((a, 1))
            events.append((b, -1))
    return _Profile(events)


def _energy_bound(
    p: Prepared,
    heads: Heads,
    members: list[int],
    pool: list[int],
    chamber: bool,
) -> int:
    """Release-moment energy bound for the steps in `members` on the resources in `pool`."""
    order = sorted(members, key=lambda s: heads.start[s], reverse=True)
    cmax: dict[int, int] = {}
    if chamber:
        for s in members:
            cap = max(p.capacity[r] for r in p.eligible[s])
            cmax[p.batch_key[s]] = max(cmax.get(p.batch_key[s], 0), cap)
    horizon = max(heads.start[s] for s in members) + 2 * sum(p.dur[s] for s in members) + 86400
    while True:
        profile = (_chamber_profile if chamber else _bench_profile)(p, pool, horizon)
        best = 0
        work = 0.0
        pieces: dict[int, int] = defaultdict(int)
        min_tail = math.inf
        failed = False
        for i, s in enumerate(order):
            if chamber:
                key = p.batch_key[s]
                before = math.ceil(pieces[key] / cmax[key])
                pieces[key] += 1
                work += (math.ceil(pieces[key] / cmax[key]) - before) * p.dur[s]
            else:
                work += p.dur[s]
            min_tail = min(min_tail, heads.tail[s])
            h = heads.start[s]
            if i + 1 < len(order) and heads.start[order[i + 1]] == h:
                continue
            if work <= 0:
                continue
            done = profile.reach(profile.at(h) + work)
            if done is None:
                failed = True
                break
            best = max(best, done + int(min_tail))
        if not failed:
            return best
        horizon *= 2


def _window_bound(p: Prepared, heads: Heads, members: list[int], pool: list[int]) -> int:
    """Runs at least one window long: one start per chamber per window, longest runs first."""
    window = p.calendar.window_minutes
    long_steps = [s for s in members if p.dur[s] >= window > 0]
    if not long_steps:
        return 0
    cmax: dict[int, int] = {}
    for s in long_steps:
        cap = max(p.capacity[r] for r in p.eligible[s])
        cmax[p.batch_key[s]] = max(cmax.get(p.batch_key[s], 0), cap)
    busy = []
    for r in pool:
        b = Busy(p.blocked[r].intervals())
        for run in p.fixed_runs:
            if run.resource == r:
                b.add(run.start, run.end)
        busy.append(Busy(b.intervals()))
    release_moments = sorted({heads.start[s] for s in long_steps})
    if len(release_moments) > WINDOW_BOUND_SAMPLES:
        step = len(release_moments) / WINDOW_BOUND_SAMPLES
        release_moments = [release_moments[int(i * step)] for i in range(WINDOW_BOUND_SAMPLES)]
    best = 0
    for h in release_moments:
        chosen = [s for s in long_steps if heads.start[s] >= h]
        pieces: dict[int, int] = defaultdict(int)
        length: dict[int, int] = {}
        for s in chosen:
            pieces[p.batch_key[s]] += 1
            length[p.batch_key[s]] = p.dur[s]
        runs = sorted(
            (length[k] for k in pieces for _ in range(math.ceil(pieces[k] / cmax[k]))),
            reverse=True,
        )
        min_tail = min(heads.tail[s] for s in chosen)
        slots: list[int] = []
        for w_start in p.calendar.window_starts(h):
            w = p.calendar.window_at(w_start)
            w_end = w[1] if w else w_start + 1
            for b in busy:
                if not b.covers(w_start, w_end):
                    slots.append(w_start)
            if len(slots) >= len(runs):
                break
        bound = max(slot + run for slot, run in zip(slots, runs, strict=False))
        best = max(best, bound + min_tail)
    return best


def lower_bound(p: Prepared, heads: Heads | None = None) -> LowerBound:
    """The largest of the chain, pooled bench and pooled chamber bounds, in hours from start."""
    if heads is None:
        heads = heads_and_tails(p)
    if p.n == 0:
        return LowerBound(0.0, "no steps", {})
    parts: dict[str, float] = {}
    chain_end = max(heads.end)
    last = max(range(p.n), key=lambda s: (heads.end[s], -s))
    chain_name = f"chain ending with step {p.step_ids[last]!r}"
    best = (max(chain_end, 0), chain_name)
    parts[chain_name] = max(chain_end, 0) / 60

    movable = [s for s in range(p.n) if p.fixed_resource[s] == NO_RESOURCE]
    pools = sorted({tuple(sorted(p.eligible[s])) for s in movable})
    for pool_t in pools:
        pool = list(pool_t)
        chamber_flags = {p.is_chamber[r] for r in pool}
        if len(chamber_flags) != 1:
            continue  # a pool mixing chambers and benches has no common unit of work
        chamber = chamber_flags.pop()
        pool_set = set(pool)
        members = [s for s in movable if set(p.eligible[s]) <= pool_set]
        names = "+".join(p.resource_ids[r] for r in pool)
        if chamber:
            value = _energy_bound(p, heads, members, pool, chamber=True)
            label = f"chamber runs on {names}"
            parts[label] = value / 60
            best = max(best, (value, label))
            value = _window_bound(p, heads, members, pool)
            label = f"chamber loading chances on {names} (one run per chamber per lab day)"
            parts[label] = value / 60
            best = max(best, (value, label))
        else:
            value = _energy_bound(p, heads, members, pool, chamber=False)
            label = f"bench work on {names} in lab hours"
            parts[label] = value / 60
            best = max(best, (value, label))
    return LowerBound(best[0] / 60, best[1], parts)
