"""Scheduler benchmarks: wall time, makespan against the lower bound, growth with size.

Run with `pytest -m benchmark tests/benchmarks/test_bench_scheduler.py -s`. Figures
are printed; nothing about time is asserted (the schedule's correctness is).

The CP-SAT comparison needs `ortools` (not a project dependency); it is skipped
when that is not installed. It models the same problem (bench capacity inside
lab-hours windows, chamber runs of one condition loaded in lab hours, blocked
periods, chains with waits) and is given the heuristic's schedule as a hint.
"""

from __future__ import annotations

import importlib.util
import math
import time
from collections import defaultdict
from pathlib import Path
from typing import Any

import pytest

from durability.scheduling import Schedule, SolverOptions, load_workload, schedule
from durability.scheduling.prepare import Prepared, prepare

from .workload_generator import generate_workload, loads

pytestmark = pytest.mark.benchmark


def _check(data: dict[str, Any], result: Schedule) -> None:
    """The property tests' rule checker, run on the big workload (loaded by path, since
    tests/ is not a package)."""
    path = Path(__file__).resolve().parents[1] / "durability" / "test_scheduling_properties.py"
    spec = importlib.util.spec_from_file_location("_scheduling_rules", path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    module.check_schedule(data, result)


def _run(
    n_steps: int, options: SolverOptions | None = None
) -> tuple[dict[str, Any], Schedule, float]:
    data = generate_workload(n_steps)
    clock = time.perf_counter()
    result = schedule(load_workload(data), options or SolverOptions())
    return data, result, time.perf_counter() - clock


def test_bench_2000_steps() -> None:
    data, result, seconds = _run(2000)
    print()
    print(
        f"steps {len(data['steps'])}, lots {len(data['lots'])}, resources {len(data['resources'])}"
    )
    for pool, share in loads(data).items():
        print(f"  load {pool:>14}: {share:6.1%}")
    print(
        f"wall {seconds:.2f} s, passes {result.passes}, makespan {result.makespan_hours:.1f} h, "
        f"lower bound {result.lower_bound_hours:.1f} h ({result.lower_bound.binding}), "
        f"ratio {result.ratio:.3f}, late lots {len(result.late)}/{len(result.lots)}"
    )
    _check(data, result)


def test_bench_2000_steps_makespan_only() -> None:
    # The same workload when lateness is not weighed at all: the makespan alone.
    data, result, seconds = _run(2000, SolverOptions(lateness_weight=0.0))
    print()
    print(
        f"makespan only: wall {seconds:.2f} s, passes {result.passes}, makespan "
        f"{result.makespan_hours:.1f} h, bound {result.lower_bound_hours:.1f} h, ratio "
        f"{result.ratio:.3f}, late lots {len(result.late)}/{len(result.lots)}"
    )
    _check(data, result)


@pytest.mark.parametrize("n_steps", [500, 1000, 2000, 4000, 8000])
def test_bench_growth(n_steps: int) -> None:
    # One pass of list scheduling (the search's unit of work) and a budgeted search.
    data = generate_workload(n_steps)
    workload = load_workload(data)
    clock = time.perf_counter()
    one = schedule(workload, SolverOptions(max_passes=1))
    single = time.perf_counter() - clock
    clock = time.perf_counter()
    full = schedule(workload, SolverOptions())
    budgeted = time.perf_counter() - clock
    print()
    print(
        f"{len(data['steps']):5d} steps: one pass {single:.2f} s (ratio {one.ratio:.3f}); "
        f"search {budgeted:.2f} s, {full.passes} passes, ratio {full.ratio:.3f}"
    )
    _check(data, full)


def test_bench_cpsat_against_the_heuristic() -> None:
    cp_model = pytest.importorskip("ortools.sat.python.cp_model")
    for n_steps, limit in ((500, 3.0), (2000, 3.0), (2000, 30.0)):
        data = generate_workload(n_steps)
        workload = load_workload(data)
        clock = time.perf_counter()
        heuristic = schedule(workload, SolverOptions())
        heuristic_s = time.perf_counter() - clock
        clock = time.perf_counter()
        made = _cpsat(cp_model, prepare(workload), heuristic, limit)
        total_s = time.perf_counter() - clock
        print()
        print(
            f"{n_steps} steps: heuristic {heuristic.makespan_hours:.1f} h in {heuristic_s:.2f} s; "
            f"CP-SAT ({limit:.0f} s limit, hinted) status {made['status']}, makespan "
            f"{made['makespan_h']} h, best bound {made['bound_h']} h, build "
            f"{made['build_s']:.2f} s, total {total_s:.2f} s"
        )


def _cpsat(cp_model: Any, p: Prepared, hint: Schedule, limit: float) -> dict[str, Any]:
    """The same scheduling problem in CP-SAT, hinted with the heuristic's schedule."""
    clock = time.perf_counter()
    model = cp_model.CpModel()
    cal = p.calendar
    horizon = math.ceil(hint.makespan_hours * 60) + 1
    windows = list(cal.windows(0, horizon))
    placed = {a.step: a for a in hint.assignments}
    origin = p.workload.start

    def minute(moment: Any) -> int:
        return int((moment - origin).total_seconds() // 60)

    start: list[Any] = [None] * p.n
    end: list[Any] = [None] * p.n
    bench_intervals: dict[int, list[tuple[Any, int]]] = defaultdict(list)
    chamber_intervals: dict[int, list[Any]] = defaultdict(list)
    for r in range(len(p.resource_ids)):
        for a, b in p.blocked[r].intervals():
            if b > 0 and a < horizon:
                iv = model.NewFixedSizeIntervalVar(max(a, 0), min(b, horizon) - max(a, 0), "blk")
                if p.is_chamber[r]:
                    chamber_intervals[r].append(iv)
                else:
                    bench_intervals[r].append((iv, p.capacity[r]))
    for run in p.fixed_runs:
        chamber_intervals[run.resource].append(
            model.NewFixedSizeIntervalVar(run.start, run.end - run.start, "fixed-run")
        )

    by_key: dict[int, list[int]] = defaultdict(list)
    for s in range(p.n):
        if p.is_fixed(s):
            start[s] = p.fixed_start[s]
            end[s] = p.fixed_start[s] + p.dur[s]
            r = p.fixed_resource[s]
            if not p.is_chamber[r]:
                bench_intervals[r].append(
                    (model.NewFixedSizeIntervalVar(start[s], p.dur[s], "fixed"), 1)
                )
            continue
        if all(p.is_chamber[r] for r in p.eligible[s]):
            by_key[p.batch_key[s]].append(s)
            continue
        d = p.dur[s]
        domain = [(a, b - d) for a, b in windows if b - d >= a]
        start[s] = model.NewIntVarFromDomain(cp_model.Domain.FromIntervals(domain), f"s{s}")
        end[s] = start[s] + d
        able = [r for r in p.eligible[s] if not p.is_chamber[r]]
        if len(able) == 1:
            bench_intervals[able[0]].append((model.NewFixedSizeIntervalVar(start[s], d, ""), 1))
        else:
            chosen = []
            for r in able:
                lit = model.NewBoolVar("")
                chosen.append(lit)
                iv = model.NewOptionalFixedSizeIntervalVar(start[s], d, lit, "")
                bench_intervals[r].append((iv, 1))
                model.AddHint(lit, placed[p.step_ids[s]].resource == p.resource_ids[r])
            model.AddExactlyOne(chosen)
        model.AddHint(start[s], minute(placed[p.step_ids[s]].start))

    load_domain = cp_model.Domain.FromIntervals([(a, b - 1) for a, b in windows])
    hint_runs: dict[str, list[int]] = defaultdict(list)
    for s in range(p.n):
        run_name = placed[p.step_ids[s]].chamber_run
        if run_name and not p.is_fixed(s):
            hint_runs[run_name].append(s)
    for members in by_key.values():
        able = [r for r in p.eligible[members[0]] if p.is_chamber[r]]
        cap = max(p.capacity[r] for r in able)
        d = p.dur[members[0]]
        runs_hint = sorted(
            {placed[p.step_ids[s]].chamber_run for s in members},
            key=lambda name: placed[p.step_ids[hint_runs[name][0]]].start,
        )
        least = max(math.ceil(len(members) / cap), 1)
        n_runs = max(least, len(runs_hint)) + max(1, least // 5)
        run_start = []
        run_used = []
        for j in range(n_runs):
            rs = model.NewIntVarFromDomain(load_domain, "")
            used = model.NewBoolVar("")
            run_start.append(rs)
            run_used.append(used)
            pres = []
            for r in able:
                lit = model.NewBoolVar("")
                pres.append(lit)
                chamber_intervals[r].append(model.NewOptionalFixedSizeIntervalVar(rs, d, lit, ""))
                if j < len(runs_hint):
                    first = placed[p.step_ids[hint_runs[runs_hint[j]][0]]]
                    model.AddHint(lit, first.resource == p.resource_ids[r])
                else:
                    model.AddHint(lit, False)
            model.Add(sum(pres) == used)
            if j < len(runs_hint):
                model.AddHint(rs, minute(placed[p.step_ids[hint_runs[runs_hint[j]][0]]].start))
                model.AddHint(used, True)
            else:
                model.AddHint(used, False)
            if j:
                model.Add(run_start[j] >= run_start[j - 1])
        x = {}
        for s in members:
            lits = []
            for j in range(n_runs):
                lit = model.NewBoolVar("")
                x[s, j] = lit
                lits.append(lit)
                model.AddImplication(lit, run_used[j])
                model.AddHint(
                    lit,
                    j < len(runs_hint) and placed[p.step_ids[s]].chamber_run == runs_hint[j],
                )
            model.AddExactlyOne(lits)
            start[s] = model.NewIntVar(0, horizon, "")
            for j in range(n_runs):
                model.Add(start[s] == run_start[j]).OnlyEnforceIf(x[s, j])
            end[s] = start[s] + d
            model.AddHint(start[s], minute(placed[p.step_ids[s]].start))
        for j in range(n_runs):
            model.Add(sum(x[s, j] for s in members) <= cap)

    for r, items in bench_intervals.items():
        model.AddCumulative([iv for iv, _ in items], [dem for _, dem in items], p.capacity[r])
    for _r, items in chamber_intervals.items():
        model.AddNoOverlap(items)
    for s in range(p.n):
        if p.is_fixed(s):
            continue
        if not p.preds[s]:
            model.Add(start[s] >= p.wait[s])
        for q in p.preds[s]:
            model.Add(start[s] >= end[q] + p.wait[s])
    makespan = model.NewIntVar(0, horizon, "makespan")
    for s in range(p.n):
        model.Add(makespan >= end[s])
    model.Minimize(makespan)
    build_s = time.perf_counter() - clock
    solver = cp_model.CpSolver()
    solver.parameters.max_time_in_seconds = limit
    solver.parameters.num_workers = 2
    status = solver.Solve(model)
    found = status in (cp_model.OPTIMAL, cp_model.FEASIBLE)
    return {
        "status": solver.StatusName(status),
        "makespan_h": round(solver.Value(makespan) / 60, 1) if found else None,
        "bound_h": round(solver.BestObjectiveBound() / 60, 1),
        "build_s": build_s,
    }
