"""Why a lot is late: its own chain of steps and waits, or what it waited for."""

from __future__ import annotations

from durability.scheduling.bounds import Heads
from durability.scheduling.calendar import Busy, bench_fit, chamber_fit
from durability.scheduling.prepare import Prepared

# List at most this many runs or lots as the ones holding a resource.
MAX_NAMED = 3


def _hours(minutes: float) -> str:
    return f"{minutes / 60:.1f} h"


def late_reasons(
    p: Prepared,
    heads: Heads,
    start: list[int],
    end: list[int],
    resource: list[int],
    run: list[int],
    runs: list[tuple[int, int, int]],
    run_names: dict[int, str],
    completion: list[int | None],
) -> dict[int, str]:
    """A sentence for each late lot (by lot index) naming what holds it."""
    steps_of: dict[int, list[int]] = {}
    for s in range(p.n):
        steps_of.setdefault(p.lot[s], []).append(s)
    reasons: dict[int, str] = {}
    for lot_i, due in enumerate(p.lot_due):
        done = completion[lot_i]
        if due is None or done is None or done <= due:
            continue
        members = steps_of[lot_i]
        chain_end = max(heads.end[s] for s in members)
        if chain_end > due:
            last = max(members, key=lambda s: heads.end[s])
            reasons[lot_i] = (
                f"its chain of steps with waits needs {_hours(chain_end)} from start (to the end "
                f"of step {p.step_ids[last]!r}), but it is due {_hours(due)} after start"
            )
            continue
        last = max(members, key=lambda s: (end[s], s))
        reasons[lot_i] = _walk_back(p, last, start, end, resource, run, runs, run_names)
    return reasons


def _walk_back(
    p: Prepared,
    s: int,
    start: list[int],
    end: list[int],
    resource: list[int],
    run: list[int],
    runs: list[tuple[int, int, int]],
    run_names: dict[int, str],
) -> str:
    """Follow the binding predecessors back and name the longest wait on the way."""
    worst_busy = (0, -1, 0, 0)  # (minutes, step, from, to)
    worst_calendar = (0, -1, 0)
    while s >= 0 and not p.is_fixed(s):
        ready = max((end[q] for q in p.preds[s]), default=0) + p.wait[s]
        ready = max(ready, 0)
        r = resource[s]
        fit = chamber_fit if p.is_chamber[r] else bench_fit
        alone = fit(p.calendar, p.blocked[r], ready, p.dur[s])
        alone = start[s] if alone is None else min(alone, start[s])
        if start[s] - alone > worst_busy[0]:
            worst_busy = (start[s] - alone, s, alone, start[s])
        if alone - ready > worst_calendar[0]:
            worst_calendar = (alone - ready, s, ready)
        s = max(p.preds[s], key=lambda q: end[q], default=-1)

    if worst_busy[1] < 0 and worst_calendar[1] < 0:
        return "its steps follow one another without waiting and still end after the due date"
    if worst_busy[0] >= worst_calendar[0]:
        minutes, step, t_from, t_to = worst_busy
        r = resource[step]
        name = p.resource_ids[r]
        if p.is_chamber[r]:
            held = [
                run_names[i]
                for i, (rr, a, b) in enumerate(runs)
                if rr == r and a < t_to and b > t_from and i in run_names
            ]
            what = f"chamber {name}"
            busy = f"busy with runs {_named(held)}" if held else "loading another condition"
        else:
            lots = []
            for q in range(p.n):
                if resource[q] == r and start[q] < t_to and end[q] > t_from:
                    lot_id = p.lots[p.lot[q]].id
                    if lot_id not in lots:
                        lots.append(lot_id)
            what = f"bench station {name}"
            busy = f"busy with steps of lots {_named(lots)}" if lots else "busy"
        return f"step {p.step_ids[step]!r} waits {_hours(minutes)} for {what} ({busy})"
    minutes, step, ready = worst_calendar
    r = resource[step]
    bare = (chamber_fit if p.is_chamber[r] else bench_fit)(p.calendar, Busy(), ready, p.dur[step])
    reason = "lab hours (nights, weekends, holidays)"
    blocked = [b for b in p.workload.resources[r].blocked]
    if bare is not None and bare < ready + minutes and blocked:
        labels = sorted({b.reason or "blocked" for b in blocked})
        reason = f"{p.resource_ids[r]} to come back from a blocked period ({', '.join(labels)})"
    return f"step {p.step_ids[step]!r} waits {_hours(minutes)} for {reason}"


def _named(items: list[str]) -> str:
    if len(items) <= MAX_NAMED:
        return ", ".join(items)
    return f"{', '.join(items[:MAX_NAMED])} and {len(items) - MAX_NAMED} more"
