"""The scheduler: priority-rule list scheduling on the lab calendar with chamber batching.

One pass walks time forward from the workload's start. Whenever something
changes (a step or run ends, a step becomes free to start, the lab opens, a
blocked period ends), each free chamber in lab hours is loaded with the most
urgent condition waiting for it (preferring a fuller run among conditions
nearly as urgent, and waiting a bounded time for more pieces of a short run),
and free bench stations take the most urgent waiting steps that fit in what is
left of the lab-hours window.

Urgency is the latest start that still meets the lot's due date (or, for lots
without one, the makespan lower bound) given the step's remaining chain of
steps and waits; a lot of higher priority always goes first. Several passes
with different batching settings, then an iterated local search that shakes the
urgencies of the best pass, run within a time budget; the best schedule found
(least lateness by priority class, then least makespan) is kept.

Scheduling conventions (common practice; see `CONVENTION`).
"""

from __future__ import annotations

import heapq
import math
import random
import time
from collections import defaultdict
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from durability.scheduling.bounds import Heads, heads_and_tails, lower_bound
from durability.scheduling.calendar import Busy, LabCalendar, from_minutes
from durability.scheduling.explain import late_reasons
from durability.scheduling.model import Assignment, LotPromise, LowerBound, Schedule, Workload
from durability.scheduling.prepare import NO_RESOURCE, Prepared, prepare

CONVENTION = (
    "Times are whole minutes (step lengths rounded up). Lab-hours windows are half-open "
    "[from, to). A chamber run starts only inside lab hours and may end at any time; it holds "
    "steps of one kind, condition and length, which start and end together; a chamber holds one "
    "run at a time. A bench step lies entirely inside one lab-hours window; a bench step longer "
    "than a window is refused, not split across days. A piece is in one place at a time. No "
    "resource works in its blocked periods; fixed steps stay where they are, even inside "
    "blocked periods or outside lab hours, and no other step joins a fixed run. A step with no "
    "'after' waits 'wait_hours' from the workload's start. Priority: larger is more urgent. "
    "(common practice)"
)

URGENCY_CLASS = 1.0e9  # minutes; keeps priority classes apart in one urgency number


@dataclass(frozen=True)
class SolverOptions:
    """Knobs for the search; the defaults suit a few thousand steps in about two seconds."""

    time_budget_s: float = 2.0
    max_passes: int = 60
    seed: int = 0
    # Weight of an hour of a lot's lateness against an hour of makespan (priority 0 lots;
    # each priority step above zero multiplies it by ten).
    lateness_weight: float = 1.0
    # Settings tried first: (hours of urgency within which a run using more of the
    # chamber's capacity and time is preferred, hours ahead a run that is not full may
    # look for more pieces of its condition when waiting for them uses the chamber better).
    settings: tuple[tuple[float, float], ...] = (
        (1000.0, 24.0),
        (168.0, 24.0),
        (1000.0, 96.0),
        (72.0, 24.0),
        (1000.0, 8.0),
        (336.0, 48.0),
        (24.0, 24.0),
        (0.0, 0.0),
    )


@dataclass
class _Pass:
    start: list[int]
    end: list[int]
    resource: list[int]
    run: list[int]
    runs: list[tuple[int, int, int]]  # (resource, start, end)
    score: tuple[float, ...] = ()
    lateness: float = 0.0
    makespan: int = 0
    completion: list[int | None] = field(default_factory=list)


def schedule(workload: Workload, options: SolverOptions | None = None) -> Schedule:
    """Schedule every step of `workload`; raise InputError on bad input.

    Fixed steps stay where they are; every other step starts at or after the
    workload's start. Returns the placements, the makespan, the lower bound and
    each lot's promised date with the reason when it is late.
    """
    options = options or SolverOptions()
    clock = time.perf_counter()
    p = prepare(workload)
    heads = heads_and_tails(p)
    bound = lower_bound(p, heads)
    best, passes = _search(p, heads, round(bound.hours * 60), options, clock)
    return _result(p, heads, best, bound, passes)


def _search(
    p: Prepared, heads: Heads, target: int, options: SolverOptions, clock: float
) -> tuple[_Pass, int]:
    priority = [lot.priority for lot in p.lots]

    own_end = [0] * len(p.lots)
    for s in range(p.n):
        own_end[p.lot[s]] = max(own_end[p.lot[s]], heads.end[s])

    def urgencies(mode: int) -> list[float]:
        # Mode 0: lots due after the makespan bound are planned as if due at it, so the
        # makespan is not sacrificed to them. Mode 1: due dates as given, and lots without
        # one as due when their own chain could end. Mode 2: every lot as due when its own
        # chain could end (first come, first served, which mixes run lengths well).
        if mode == 0:
            due_eff = [target if due is None else min(due, target) for due in p.lot_due]
        elif mode == 1:
            due_eff = [own_end[i] if due is None else due for i, due in enumerate(p.lot_due)]
        else:
            due_eff = own_end
        return [
            -priority[p.lot[s]] * URGENCY_CLASS + due_eff[p.lot[s]] - (p.dur[s] + heads.tail[s])
            for s in range(p.n)
        ]

    bases = [urgencies(mode) for mode in range(3)]
    base = bases[0]
    best: _Pass | None = None
    best_setting = options.settings[0]
    best_offsets = [0.0] * p.n
    passes = 0
    rng = random.Random(options.seed)

    def good_enough(candidate: _Pass) -> bool:
        no_lateness = candidate.lateness == 0
        return no_lateness and candidate.makespan <= target

    for setting in options.settings:
        for mode_base in bases:
            if passes >= options.max_passes:
                break
            if best is not None and time.perf_counter() - clock > options.time_budget_s:
                break
            candidate = _simulate(p, heads.start, mode_base, setting, options.lateness_weight)
            passes += 1
            if best is None or candidate.score < best.score:
                best, best_setting, base = candidate, setting, mode_base
            if good_enough(best):
                return best, passes
    assert best is not None
    movable = [s for s in range(p.n) if not p.is_fixed(s)]
    while (
        movable
        and passes < options.max_passes
        and time.perf_counter() - clock <= options.time_budget_s
    ):
        offsets = list(best_offsets)
        if rng.random() < 0.5:
            # Shift whole lots: which lots go first decides how run lengths mix in the
            # chambers, the main lever on the makespan.
            sigma = rng.choice((720.0, 2880.0, 10080.0))
            share = rng.choice((0.1, 0.3, 1.0))
            shift = [rng.gauss(0.0, sigma) if rng.random() < share else 0.0 for _ in p.lots]
            for s in movable:
                offsets[s] += shift[p.lot[s]]
        else:
            sigma = rng.choice((120.0, 480.0, 1440.0, 4320.0))
            share = rng.choice((0.05, 0.15, 0.4))
            for s in movable:
                if rng.random() < share:
                    offsets[s] += rng.gauss(0.0, sigma)
        urgency = [base[s] + offsets[s] for s in range(p.n)]
        setting = best_setting if rng.random() < 0.7 else rng.choice(options.settings)
        candidate = _simulate(p, heads.start, urgency, setting, options.lateness_weight)
        passes += 1
        if candidate.score < best.score:
            best, best_setting, best_offsets = candidate, setting, offsets
            if good_enough(best):
                break
    return best, passes


def _simulate(
    p: Prepared,
    heads_start: list[int],
    urgency: list[float],
    setting: tuple[float, float],
    lateness_weight: float,
) -> _Pass:
    """One forward pass of list scheduling with chamber batching."""
    prefer_full = setting[0] * 60.0
    fill_wait = round(setting[1] * 60)
    n = p.n
    cal = p.calendar
    start = [0] * n
    end = [0] * n
    res = [NO_RESOURCE] * n
    run_of = [-1] * n
    runs: list[tuple[int, int, int]] = []
    placed = [False] * n

    n_res = len(p.resource_ids)
    chamber_free = [0] * n_res
    reservations = [Busy(p.blocked[r].intervals()) for r in range(n_res)]
    slots: list[list[Busy]] = [[] for _ in range(n_res)]
    slot_free: list[list[int]] = [[] for _ in range(n_res)]
    piece_free = [0] * len(p.piece_ids)
    piece_reserved: dict[int, Busy] = {}

    for fixed_run in p.fixed_runs:
        r = fixed_run.resource
        reservations[r].add(fixed_run.start, fixed_run.end)
        runs.append((r, fixed_run.start, fixed_run.end))
        for s in fixed_run.steps:
            run_of[s] = len(runs) - 1
    for r in range(n_res):
        if not p.is_chamber[r]:
            slots[r] = [Busy(p.blocked[r].intervals()) for _ in range(p.capacity[r])]
            slot_free[r] = [0] * p.capacity[r]
    for s in range(n):
        r = p.fixed_resource[s]
        if r == NO_RESOURCE:
            continue
        start[s] = p.fixed_start[s]
        end[s] = start[s] + p.dur[s]
        res[s] = r
        placed[s] = True
        if not p.is_chamber[r]:
            slots[r][p.fixed_bench_slot[s]].add(start[s], end[s])
        piece_reserved.setdefault(p.piece[s], Busy()).add(start[s], end[s])

    remaining = [0] * n
    for s in range(n):
        remaining[s] = sum(1 for q in p.preds[s] if not placed[q])

    events: list[int] = [0]
    pushed = {0}

    def wake(t: int | None) -> None:
        if t is not None and t not in pushed:
            pushed.add(t)
            heapq.heappush(events, t)

    release: list[tuple[int, int]] = []
    pending_by_key: dict[int, list[int]] = defaultdict(list)
    ready_at = [0] * n
    chamber_steps = [any(p.is_chamber[r] for r in p.eligible[s]) for s in range(n)]
    bench_eligible = [[r for r in p.eligible[s] if not p.is_chamber[r]] for s in range(n)]

    released = [False] * n
    key_unplaced: dict[int, list[int]] = defaultdict(list)
    for s in range(n):
        if not placed[s] and chamber_steps[s]:
            key_unplaced[p.batch_key[s]].append(s)

    def release_step(s: int) -> None:
        released[s] = True
        t = max((end[q] for q in p.preds[s]), default=0) + p.wait[s]
        ready_at[s] = max(t, 0)
        heapq.heappush(release, (ready_at[s], s))
        if chamber_steps[s]:
            pending_by_key[p.batch_key[s]].append(s)
        wake(ready_at[s])

    for s in range(n):
        if not placed[s] and remaining[s] == 0:
            release_step(s)

    key_heap: dict[int, list[tuple[float, int]]] = defaultdict(list)
    key_len: dict[int, int] = {}
    key_able: dict[int, list[int]] = {}
    for s in range(n):
        if chamber_steps[s]:
            key_len[p.batch_key[s]] = p.dur[s]
            key_able[p.batch_key[s]] = [r for r in p.eligible[s] if p.is_chamber[r]]
    chambers = [r for r in range(n_res) if p.is_chamber[r]]
    keys_for: dict[int, list[int]] = {r: [] for r in chambers}
    for key, able in sorted(key_able.items()):
        for r in able:
            keys_for[r].append(key)
    benches = [r for r in range(n_res) if not p.is_chamber[r]]
    group_of: dict[tuple[int, ...], list[tuple[float, int]]] = defaultdict(list)

    unplaced = sum(1 for s in range(n) if not placed[s])

    def place(s: int, r: int, t: int, run: int) -> None:
        nonlocal unplaced
        start[s], end[s], res[s], run_of[s] = t, t + p.dur[s], r, run
        placed[s] = True
        unplaced -= 1
        piece_free[p.piece[s]] = max(piece_free[p.piece[s]], end[s])
        if chamber_steps[s]:
            pending = pending_by_key[p.batch_key[s]]
            if s in pending:
                pending.remove(s)
        for succ in p.succs[s]:
            remaining[succ] -= 1
            if remaining[succ] == 0 and not placed[succ]:
                release_step(succ)

    def piece_ok(s: int, t: int) -> bool:
        if piece_free[p.piece[s]] > t:
            return False
        reserved = piece_reserved.get(p.piece[s])
        if reserved is not None:
            clash = reserved.conflict(t, t + p.dur[s])
            if clash is not None:
                wake(clash)
                return False
        return True

    def load_chamber(r: int, t: int) -> None:
        # Each condition's best loading moment: now, or (when the run would not be full)
        # a later moment within the lookahead when more of its pieces are expected.
        # A moment is scored by the share of the chamber's capacity and time the run
        # uses: fill x run length / (run length + idle before the next reload + the
        # wait before loading). Among conditions whose most urgent piece is within
        # `prefer_full` of the most urgent one, the best-scored moment wins.
        capacity = p.capacity[r]
        options: list[tuple[float, float, int, int]] = []  # (urgency, -use, at, key)
        for key in keys_for[r]:
            heap = key_heap.get(key)
            ready_now = len(heap) if heap else 0
            if not ready_now and not fill_wait:
                continue
            length = key_len[key]
            best: tuple[float, float, int] | None = None  # (-use, urgency, at)
            if ready_now and heap:
                clash = reservations[r].conflict(t, t + length)
                if clash is None:
                    use = _use(cal, t, t, length, min(ready_now, capacity) / capacity)
                    best = (-use, heap[0][0], t)
                else:
                    wake(clash)
            if fill_wait and ready_now < capacity:
                count = ready_now
                most_urgent = heap[0][0] if heap else math.inf
                arrivals = _forecast(
                    key_unplaced[key], placed, released, ready_at, heads_start, t, fill_wait
                )
                for arrival, s in arrivals:
                    if count >= capacity:
                        break
                    count += 1
                    most_urgent = min(most_urgent, urgency[s])
                    at = cal.next_open(arrival)
                    if at is None or reservations[r].conflict(at, at + length) is not None:
                        continue
                    use = _use(cal, t, at, length, count / capacity)
                    if best is None or -use < best[0] - 1e-9:
                        best = (-use, most_urgent, at)
            if best is not None:
                options.append((best[1], best[0], best[2], key))
        if not options:
            return
        top = min(o[0] for o in options)
        near = [o for o in options if o[0] <= top + prefer_full]
        chosen = min(near, key=lambda o: (o[1], o[0]))
        if chosen[2] > t:
            wake(chosen[2])
            return
        key = chosen[3]
        heap = key_heap[key]
        batch: list[int] = []
        aside: list[tuple[float, int]] = []
        while heap and len(batch) < p.capacity[r]:
            item = heapq.heappop(heap)
            if piece_ok(item[1], t):
                batch.append(item[1])
            else:
                aside.append(item)
        for item in aside:
            heapq.heappush(heap, item)
        if not batch:
            return
        runs.append((r, t, t + key_len[key]))
        for s in batch:
            place(s, r, t, len(runs) - 1)
        chamber_free[r] = t + key_len[key]
        wake(t + key_len[key])

    def start_bench(t: int, window_end: int) -> None:
        if not any(group_of.values()):
            return
        free: dict[int, list[int]] = {}
        for r in benches:
            ks = [k for k, f in enumerate(slot_free[r]) if f <= t]
            if ks:
                free[r] = ks
        if not free:
            return
        aside: dict[tuple[int, ...], list[tuple[float, int]]] = defaultdict(list)
        while free:
            best_group = None
            for group, heap in group_of.items():
                if heap and any(r in free for r in group):
                    if best_group is None or heap[0] < group_of[best_group][0]:
                        best_group = group
            if best_group is None:
                break
            item = heapq.heappop(group_of[best_group])
            s = item[1]
            if placed[s]:
                continue
            if t + p.dur[s] > window_end:
                # Too long for what is left of today's window; shorter steps may use it.
                aside[best_group].append(item)
                wake(cal.next_open(window_end))
                continue
            if not piece_ok(s, t):
                aside[best_group].append(item)
                continue
            done = False
            for r in best_group:
                for k in free.get(r, ()):
                    clash = slots[r][k].conflict(t, t + p.dur[s])
                    if clash is not None:
                        wake(clash)
                        continue
                    place(s, r, t, -1)
                    slot_free[r][k] = end[s]
                    wake(end[s])
                    free[r].remove(k)
                    if not free[r]:
                        del free[r]
                    done = True
                    break
                if done:
                    break
            if not done:
                aside[best_group].append(item)
        for group, items in aside.items():
            for item in items:
                heapq.heappush(group_of[group], item)

    while unplaced:
        if not events:
            raise RuntimeError("scheduler stalled with steps left; this is a bug")
        t = heapq.heappop(events)
        pushed.discard(t)
        while release and release[0][0] <= t:
            _, s = heapq.heappop(release)
            if placed[s]:
                continue
            if chamber_steps[s]:
                heapq.heappush(key_heap[p.batch_key[s]], (urgency[s], s))
            if bench_eligible[s]:
                heapq.heappush(group_of[tuple(bench_eligible[s])], (urgency[s], s))
        _drop_placed(key_heap, placed)
        _drop_placed(group_of, placed)
        window = cal.window_at(t)
        if window is None:
            wake(cal.next_open(t))
            continue
        for r in chambers:
            if chamber_free[r] <= t:
                load_chamber(r, t)
        start_bench(t, window[1])
        # Something waiting for a piece held elsewhere is woken by that step's end.

    return _score(p, _Pass(start, end, res, run_of, runs), lateness_weight)


def _forecast(
    members: list[int],
    placed: list[bool],
    released: list[bool],
    ready_at: list[int],
    heads_start: list[int],
    t: int,
    lookahead: int,
) -> list[tuple[int, int]]:
    """(moment, step) for the unplaced pieces of one condition expected within the
    lookahead after t, soonest first: known for released steps, the chain's earliest
    start for the others (their feeders are not planned yet)."""
    out = []
    left = 0
    for s in members:
        if placed[s]:
            continue
        members[left] = s
        left += 1
        at = ready_at[s] if released[s] else heads_start[s]
        if t < at <= t + lookahead:
            out.append((at, s))
    del members[left:]  # placed pieces never come back; keep the list short
    out.sort()
    return out


def _use(cal: LabCalendar, now: int, at: int, length: int, filled: float) -> float:
    """Share of a chamber's capacity and time a run loaded at `at` uses, counted from now."""
    reload = cal.next_open(at + length)
    idle = 0 if reload is None else reload - (at + length)
    span = length + idle + (at - now)
    return filled * (length / span if span > 0 else 1.0)


def _drop_placed(heaps: Mapping[Any, list[tuple[float, int]]], placed: list[bool]) -> None:
    """Steps eligible for both a chamber and a bench sit in two queues; drop the placed copy."""
    for heap in heaps.values():
        while heap and placed[heap[0][1]]:
            heapq.heappop(heap)


def _score(p: Prepared, result: _Pass, lateness_weight: float) -> _Pass:
    """Cost = makespan + weighted lateness of the lots, both in minutes.

    A lot's lateness counts `lateness_weight` times, and ten times more for each
    step of priority above zero (a rush lot's hour late weighs ten makespan hours
    when the weight is 1).
    """
    completion: list[int | None] = [None] * len(p.lots)
    for s in range(p.n):
        lot_i = p.lot[s]
        value = completion[lot_i]
        if value is None or result.end[s] > value:
            completion[lot_i] = result.end[s]
    lateness = 0.0
    for lot_i, lot in enumerate(p.lots):
        due = p.lot_due[lot_i]
        done = completion[lot_i]
        if due is not None and done is not None and done > due:
            lateness += (done - due) * 10.0 ** min(max(lot.priority, 0), 6)
    makespan = max(max(result.end, default=0), 0)
    total_completion = float(sum(c for c in completion if c is not None))
    result.score = (makespan + lateness_weight * lateness, float(makespan), total_completion)
    result.lateness = lateness
    result.makespan = makespan
    result.completion = completion
    return result


def _result(p: Prepared, heads: Heads, best: _Pass, bound: LowerBound, passes: int) -> Schedule:
    origin = p.workload.start
    run_names: dict[int, str] = {}
    per_chamber: dict[int, list[int]] = defaultdict(list)
    for i, (r, _, _) in enumerate(best.runs):
        per_chamber[r].append(i)
    for r, indices in per_chamber.items():
        indices.sort(key=lambda i: best.runs[i][1])
        for k, i in enumerate(indices, start=1):
            run_names[i] = f"{p.resource_ids[r]}:R{k}"
    assignments = tuple(
        Assignment(
            step=p.step_ids[s],
            resource=p.resource_ids[best.resource[s]],
            start=from_minutes(origin, best.start[s]),
            end=from_minutes(origin, best.end[s]),
            chamber_run=run_names.get(best.run[s]),
            fixed=p.is_fixed(s),
        )
        for s in sorted(range(p.n), key=lambda s: (best.start[s], p.step_ids[s]))
    )
    reasons = late_reasons(
        p,
        heads,
        best.start,
        best.end,
        best.resource,
        best.run,
        best.runs,
        run_names,
        best.completion,
    )
    lots = []
    for lot_i, lot in enumerate(p.lots):
        done = best.completion[lot_i]
        due = p.lot_due[lot_i]
        late = due is not None and done is not None and done > due
        lots.append(
            LotPromise(
                lot=lot.id,
                promised=None if done is None else from_minutes(origin, done),
                due=lot.due,
                priority=lot.priority,
                late=late,
                late_hours=(done - due) / 60
                if late and done is not None and due is not None
                else 0.0,
                reason=reasons.get(lot_i),
            )
        )
    return Schedule(
        makespan_hours=best.makespan / 60,
        lower_bound=bound,
        assignments=assignments,
        lots=tuple(lots),
        solver="list scheduling with chamber batching and iterated local search",
        passes=passes,
        convention=CONVENTION,
    )


def minutes_ceil(hours: float) -> int:
    """Hours as whole minutes, rounded up (exported for callers that compare times)."""
    return math.ceil(hours * 60 - 1e-9)
