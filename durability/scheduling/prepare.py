"""Check a workload and turn it into indexed arrays for the solver and the bounds.

Every refusal raises InputError naming the step, resource or lot at fault.
"""

from __future__ import annotations

import heapq
from collections import defaultdict
from dataclasses import dataclass

from durability.errors import InputError
from durability.scheduling.calendar import Busy, LabCalendar, hours_to_minutes, to_minutes
from durability.scheduling.model import METHOD_KINDS, Lot, Workload

NO_RESOURCE = -1


@dataclass(frozen=True)
class FixedRun:
    """Fixed chamber steps that share one chamber and one start: a run already in place."""

    resource: int
    start: int
    end: int
    steps: tuple[int, ...]


@dataclass
class Prepared:
    """The workload as arrays indexed by step, resource, lot and piece number."""

    workload: Workload
    calendar: LabCalendar
    step_ids: list[str]
    dur: list[int]
    wait: list[int]
    preds: list[list[int]]
    succs: list[list[int]]
    piece: list[int]
    lot: list[int]
    batch_key: list[int]
    eligible: list[list[int]]
    fixed_resource: list[int]
    fixed_start: list[int]
    topo: list[int]
    resource_ids: list[str]
    is_chamber: list[bool]
    capacity: list[int]
    blocked: list[Busy]
    lots: list[Lot]
    lot_due: list[int | None]
    piece_ids: list[str]
    fixed_runs: list[FixedRun]
    fixed_bench_slot: dict[int, int]

    @property
    def n(self) -> int:
        return len(self.step_ids)

    def is_fixed(self, s: int) -> bool:
        return self.fixed_resource[s] != NO_RESOURCE


def _name(index: int, step_id: str) -> str:
    return f"steps[{index}] (id {step_id!r})"


def prepare(workload: Workload) -> Prepared:
    """Validate `workload` and index it; raise InputError naming what is wrong."""
    origin = workload.start
    lab = workload.lab_hours
    for day in lab.days:
        if not 0 <= day <= 6:
            raise InputError(f"lab_hours.days: {day} is not a weekday number (Monday = 0 .. 6)")
    if lab.closes <= lab.opens:
        raise InputError(
            f"lab_hours: 'to' ({lab.closes:%H:%M}) must be after 'from' ({lab.opens:%H:%M}); "
            "windows across midnight are not supported"
        )
    calendar = LabCalendar(origin, lab, workload.holidays)

    resource_index: dict[str, int] = {}
    for r_i, resource in enumerate(workload.resources):
        where = f"resources[{r_i}] (id {resource.id!r})"
        if resource.id in resource_index:
            raise InputError(f"{where}: duplicate resource id")
        resource_index[resource.id] = r_i
        for kind in sorted(resource.kinds):
            if kind not in METHOD_KINDS:
                raise InputError(f"{where}.kinds: unknown kind {kind!r}")
        if resource.capacity < 1:
            raise InputError(f"{where}.capacity: must be at least 1, got {resource.capacity}")
        for b_i, period in enumerate(resource.blocked):
            if period.end <= period.start:
                raise InputError(f"{where}.blocked[{b_i}]: 'to' must be after 'from'")
    blocked = [
        Busy([(to_minutes(origin, p.start), to_minutes(origin, p.end)) for p in r.blocked])
        for r in workload.resources
    ]

    lot_index: dict[str, int] = {}
    lots: list[Lot] = []
    for l_i, lot in enumerate(workload.lots):
        if lot.id in lot_index:
            raise InputError(f"lots[{l_i}] (id {lot.id!r}): duplicate lot id")
        lot_index[lot.id] = l_i
        lots.append(lot)
    lots_listed = bool(workload.lots)

    step_index: dict[str, int] = {}
    for s_i, step in enumerate(workload.steps):
        if step.id in step_index:
            raise InputError(f"{_name(s_i, step.id)}: duplicate step id")
        step_index[step.id] = s_i

    n = len(workload.steps)
    dur = [0] * n
    wait = [0] * n
    preds: list[list[int]] = [[] for _ in range(n)]
    succs: list[list[int]] = [[] for _ in range(n)]
    piece = [0] * n
    lot_of = [0] * n
    batch_key = [0] * n
    eligible: list[list[int]] = [[] for _ in range(n)]
    fixed_resource = [NO_RESOURCE] * n
    fixed_start = [0] * n
    piece_index: dict[str, int] = {}
    key_index: dict[tuple[str, str, int, tuple[str, ...]], int] = {}

    for s_i, step in enumerate(workload.steps):
        where = _name(s_i, step.id)
        if step.kind not in METHOD_KINDS:
            raise InputError(f"{where}.kind: unknown kind {step.kind!r}")
        if not step.hours >= 0:
            raise InputError(f"{where}.hours: must be zero or more, got {step.hours}")
        if not step.wait_hours >= 0:
            raise InputError(f"{where}.wait_hours: must be zero or more, got {step.wait_hours}")
        dur[s_i] = hours_to_minutes(step.hours)
        wait[s_i] = hours_to_minutes(step.wait_hours)
        piece[s_i] = piece_index.setdefault(step.piece, len(piece_index))
        if step.lot not in lot_index:
            if lots_listed:
                raise InputError(f"{where}.lot: lot {step.lot!r} is not in 'lots'")
            lot_index[step.lot] = len(lots)
            lots.append(Lot(id=step.lot))
        lot_of[s_i] = lot_index[step.lot]
        # Steps limited to different resources never share a run.
        batch_key[s_i] = key_index.setdefault(
            (step.kind, step.condition, dur[s_i], tuple(sorted(step.resources))), len(key_index)
        )
        seen: set[str] = set()
        for a_i, before in enumerate(step.after):
            if before not in step_index:
                raise InputError(f"{where}.after[{a_i}]: unknown step {before!r}")
            if before == step.id:
                raise InputError(f"{where}.after[{a_i}]: a step cannot come after itself")
            if before in seen:
                continue
            seen.add(before)
            preds[s_i].append(step_index[before])
            succs[step_index[before]].append(s_i)

        for r_i, name in enumerate(step.resources):
            if name not in resource_index:
                raise InputError(f"{where}.resources[{r_i}]: unknown resource {name!r}")
        able = [
            r_i
            for r_i, r in enumerate(workload.resources)
            if step.kind in r.kinds and (not step.resources or r.id in step.resources)
        ]
        if not able:
            if step.resources:
                raise InputError(
                    f"{where}: none of its resources ({', '.join(step.resources)}) can run "
                    f"kind {step.kind!r}"
                )
            raise InputError(f"{where}: no resource can run kind {step.kind!r}")
        if step.fixed is not None:
            f_where = f"{where}.fixed"
            if step.fixed.resource not in resource_index:
                raise InputError(f"{f_where}.resource: unknown resource {step.fixed.resource!r}")
            r_i = resource_index[step.fixed.resource]
            if r_i not in able:
                raise InputError(
                    f"{f_where}.resource: {step.fixed.resource!r} cannot run kind {step.kind!r}"
                )
            fixed_resource[s_i] = r_i
            fixed_start[s_i] = to_minutes(origin, step.fixed.start)
            eligible[s_i] = [r_i]
            continue
        if not calendar.has_windows:
            raise InputError(
                f"{where}: lab_hours.days is empty, so no chamber can be loaded and no bench "
                "step worked"
            )
        # A bench step must fit inside one lab-hours window (common practice: a bench step
        # fits in a day); benches it can never fit on are dropped, and if none is left it
        # is refused.
        fits = [
            r_i
            for r_i in able
            if workload.resources[r_i].is_chamber or dur[s_i] <= calendar.window_minutes
        ]
        if not fits:
            raise InputError(
                f"{where}: {step.hours:g} h of {step.kind} does not fit in one lab-hours window "
                f"({calendar.window_minutes / 60:g} h) and bench steps are not split across days; "
                "split it into shorter steps"
            )
        eligible[s_i] = fits

    topo = _topological_order(workload, preds, succs)

    for s_i, step in enumerate(workload.steps):
        if step.fixed is None:
            continue
        for p in preds[s_i]:
            if fixed_resource[p] == NO_RESOURCE:
                raise InputError(
                    f"{_name(s_i, step.id)}.fixed: the step is fixed but the step it comes after, "
                    f"{workload.steps[p].id!r}, is not; give that step its fixed placement too"
                )

    capacity = [r.capacity for r in workload.resources]
    is_chamber = [r.is_chamber for r in workload.resources]
    fixed_runs, fixed_bench_slot = _check_fixed(
        workload, fixed_resource, fixed_start, dur, batch_key, capacity, is_chamber
    )
    lot_due = [None if lot.due is None else to_minutes(origin, lot.due) for lot in lots]

    return Prepared(
        workload=workload,
        calendar=calendar,
        step_ids=[s.id for s in workload.steps],
        dur=dur,
        wait=wait,
        preds=preds,
        succs=succs,
        piece=piece,
        lot=lot_of,
        batch_key=batch_key,
        eligible=eligible,
        fixed_resource=fixed_resource,
        fixed_start=fixed_start,
        topo=topo,
        resource_ids=[r.id for r in workload.resources],
        is_chamber=is_chamber,
        capacity=capacity,
        blocked=blocked,
        lots=lots,
        lot_due=lot_due,
        piece_ids=list(piece_index),
        fixed_runs=fixed_runs,
        fixed_bench_slot=fixed_bench_slot,
    )


def _topological_order(
    workload: Workload, preds: list[list[int]], succs: list[list[int]]
) -> list[int]:
    n = len(preds)
    indegree = [len(p) for p in preds]
    ready = [s for s in range(n) if indegree[s] == 0]
    heapq.heapify(ready)
    order: list[int] = []
    while ready:
        s = heapq.heappop(ready)
        order.append(s)
        for t in succs[s]:
            indegree[t] -= 1
            if indegree[t] == 0:
                heapq.heappush(ready, t)
    if len(order) < n:
        cycle = _find_cycle(preds, {s for s in range(n) if indegree[s] > 0})
        names = " -> ".join(repr(workload.steps[s].id) for s in cycle)
        raise InputError(f"steps: a cycle in 'after': {names}")
    return order


def _find_cycle(preds: list[list[int]], left: set[int]) -> list[int]:
    """One cycle among the steps left over by the topological sort, for the message."""
    start = min(left)
    path: list[int] = []
    position: dict[int, int] = {}
    s = start
    while s not in position:
        position[s] = len(path)
        path.append(s)
        s = next(p for p in preds[s] if p in left)
    cycle = path[position[s] :] + [s]
    cycle.reverse()
    return cycle


def _check_fixed(
    workload: Workload,
    fixed_resource: list[int],
    fixed_start: list[int],
    dur: list[int],
    batch_key: list[int],
    capacity: list[int],
    is_chamber: list[bool],
) -> tuple[list[FixedRun], dict[int, int]]:
    """Group fixed chamber steps into runs and fixed bench steps into station slots.

    Fixed steps describe what is really in the lab, so they must already respect
    capacity and the one-run-at-a-time rule; if they do not, the input is wrong.
    """
    groups: dict[tuple[int, int], list[int]] = defaultdict(list)
    bench: dict[int, list[int]] = defaultdict(list)
    for s, r in enumerate(fixed_resource):
        if r == NO_RESOURCE:
            continue
        if is_chamber[r]:
            groups[(r, fixed_start[s])].append(s)
        else:
            bench[r].append(s)

    ids = [step.id for step in workload.steps]
    runs: list[FixedRun] = []
    for (r, start), members in sorted(groups.items()):
        first = members[0]
        for s in members[1:]:
            if batch_key[s] != batch_key[first]:
                raise InputError(
                    f"step {ids[s]!r}.fixed: it shares a run on {workload.resources[r].id!r} "
                    f"with {ids[first]!r} but its kind, condition or hours differ"
                )
        if len(members) > capacity[r]:
            raise InputError(
                f"steps {', '.join(repr(ids[s]) for s in members)}: fixed in one run on "
                f"{workload.resources[r].id!r}, over its capacity {capacity[r]}"
            )
        runs.append(FixedRun(r, start, start + dur[first], tuple(members)))
    by_resource: dict[int, list[FixedRun]] = defaultdict(list)
    for run in runs:
        by_resource[run.resource].append(run)
    for r, chamber_runs in by_resource.items():
        for a, b in zip(chamber_runs, chamber_runs[1:], strict=False):
            if b.start < a.end:
                raise InputError(
                    f"steps {ids[a.steps[0]]!r} and {ids[b.steps[0]]!r}: fixed in overlapping "
                    f"runs on chamber {workload.resources[r].id!r}, which holds one run at a time"
                )

    slot_of: dict[int, int] = {}
    for r, members in bench.items():
        members.sort(key=lambda s: (fixed_start[s], s))
        slot_free: list[int] = []
        for s in members:
            end = fixed_start[s] + dur[s]
            slot = next((k for k, free in enumerate(slot_free) if free <= fixed_start[s]), None)
            if slot is None:
                if len(slot_free) >= capacity[r]:
                    raise InputError(
                        f"step {ids[s]!r}.fixed: bench station {workload.resources[r].id!r} "
                        f"already works on {capacity[r]} fixed step(s) then (capacity "
                        f"{capacity[r]})"
                    )
                slot_free.append(end)
                slot = len(slot_free) - 1
            else:
                slot_free[slot] = end
            slot_of[s] = slot
    return runs, slot_of
