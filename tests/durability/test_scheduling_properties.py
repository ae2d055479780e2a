"""Random small workloads: every schedule obeys the rules, and the bound stays below it.

The rules are checked here from the workload itself, independently of the
scheduler's code: resources never over capacity, chamber runs of one condition
that start and end together, one run per chamber at a time, each step after its
predecessors plus the wait, bench steps and chamber loading only inside lab hours
(not on holidays, not in blocked periods), a piece in one place at a time, fixed
steps untouched. A lower bound is valid only if it never exceeds a feasible
schedule's makespan. (Scheduling conventions: common practice.)
"""

from __future__ import annotations

from collections import defaultdict
from datetime import date, datetime, time, timedelta
from typing import Any

from hypothesis import given, settings
from hypothesis import strategies as st

from durability.scheduling import Schedule, SolverOptions, load_workload, schedule

CHAMBER_KINDS = ["humidity", "salt_fog", "temperature"]
BENCH_KINDS = ["inspection", "adhesion", "spectral_measurement"]
MONDAY = datetime(2026, 3, 2)


def _stamp(moment: datetime) -> str:
    return moment.isoformat(timespec="minutes")


@st.composite
def workloads(draw: st.DrawFn) -> dict[str, Any]:
    days = sorted(draw(st.sets(st.integers(0, 6), min_size=1, max_size=7)))
    opens = draw(st.integers(6, 10))
    closes = opens + draw(st.integers(4, 10))
    window_h = closes - opens
    start = MONDAY + timedelta(minutes=15 * draw(st.integers(0, 400)))
    holidays = sorted(
        {
            (start.date() + timedelta(days=d)).isoformat()
            for d in draw(st.lists(st.integers(0, 20), max_size=3))
        }
    )

    def blocked() -> list[dict[str, str]]:
        out = []
        for offset, length in draw(
            st.lists(st.tuples(st.integers(-24, 300), st.integers(1, 60)), max_size=2)
        ):
            a = start + timedelta(hours=offset)
            out.append(
                {
                    "from": _stamp(a),
                    "to": _stamp(a + timedelta(hours=length)),
                    "reason": "maintenance",
                }
            )
        return out

    resources: list[dict[str, Any]] = []
    for i in range(draw(st.integers(1, 3))):
        kinds = draw(st.lists(st.sampled_from(CHAMBER_KINDS), min_size=1, max_size=3, unique=True))
        resources.append(
            {
                "id": f"CH-{i}",
                "kinds": kinds,
                "capacity": draw(st.integers(1, 4)),
                "calendar": "always",
                "blocked": blocked(),
            }
        )
    for i in range(draw(st.integers(1, 3))):
        kinds = draw(st.lists(st.sampled_from(BENCH_KINDS), min_size=1, max_size=3, unique=True))
        resources.append(
            {
                "id": f"BE-{i}",
                "kinds": kinds,
                "capacity": draw(st.integers(1, 3)),
                "calendar": "lab_hours",
                "blocked": blocked(),
            }
        )
    chamber_kinds = sorted({k for r in resources if r["calendar"] == "always" for k in r["kinds"]})
    bench_kinds = sorted({k for r in resources if r["calendar"] == "lab_hours" for k in r["kinds"]})

    lots = [
        {
            "id": f"L{i}",
            "due": draw(
                st.one_of(
                    st.none(), st.integers(0, 400).map(lambda h: _stamp(start + timedelta(hours=h)))
                )
            ),
            "priority": draw(st.integers(0, 2)),
        }
        for i in range(3)
    ]
    steps: list[dict[str, Any]] = []
    for piece in range(draw(st.integers(1, 8))):
        before: str | None = None
        for k in range(draw(st.integers(1, 4))):
            on_chamber = draw(st.booleans())
            if on_chamber:
                kind = draw(st.sampled_from(chamber_kinds))
                hours = draw(st.integers(1, 120)) / 4
            else:
                kind = draw(st.sampled_from(bench_kinds))
                hours = draw(st.integers(1, window_h * 4)) / 4
            step = {
                "id": f"P{piece}-{k}",
                "piece": f"P{piece}",
                "lot": f"L{piece % 3}",
                "kind": kind,
                "condition": draw(st.sampled_from(["A", "B"])),
                "hours": hours,
                "after": [before] if before else [],
                "wait_hours": draw(st.integers(0, 60)) / 2,
            }
            steps.append(step)
            before = step["id"]
    if draw(st.booleans()):
        # The first step is already running: placed on a resource able to run it,
        # started some hours before the plan's start.
        first = steps[0]
        able = [r["id"] for r in resources if first["kind"] in r["kinds"]]
        first["fixed"] = {
            "resource": draw(st.sampled_from(able)),
            "start": _stamp(start - timedelta(hours=draw(st.integers(0, 30)))),
        }
    return {
        "start": _stamp(start),
        "lab_hours": {"days": days, "from": f"{opens:02d}:00", "to": f"{closes:02d}:00"},
        "holidays": holidays,
        "resources": resources,
        "lots": lots,
        "steps": steps,
    }


def _in_lab_hours(data: dict[str, Any], a: datetime, b: datetime) -> bool:
    """True when [a, b] lies inside one lab-hours window (b == a for a loading moment)."""
    lab = data["lab_hours"]
    day = a.date()
    if day.weekday() not in lab["days"] or day.isoformat() in data["holidays"]:
        return False
    opens = datetime.combine(day, time.fromisoformat(lab["from"]))
    closes = datetime.combine(day, time.fromisoformat(lab["to"]))
    return opens <= a < closes and b <= closes


def check_schedule(data: dict[str, Any], result: Schedule) -> None:
    """Assert every scheduling rule on `result`, reading the rules from `data` only."""
    start = datetime.fromisoformat(data["start"])
    steps = {s["id"]: s for s in data["steps"]}
    resources = {r["id"]: r for r in data["resources"]}
    placed = {a.step: a for a in result.assignments}
    assert set(placed) == set(steps)
    assert len(result.assignments) == len(steps)

    for sid, a in placed.items():
        s = steps[sid]
        r = resources[a.resource]
        assert s["kind"] in r["kinds"]
        assert a.end - a.start == timedelta(minutes=round(s["hours"] * 60))
        if "fixed" in s:
            assert a.fixed and a.resource == s["fixed"]["resource"]
            assert a.start == datetime.fromisoformat(s["fixed"]["start"])
            continue
        assert a.start >= start
        if s["after"]:
            ready = max(placed[q].end for q in s["after"]) + timedelta(hours=s["wait_hours"])
        else:
            ready = start + timedelta(hours=s["wait_hours"])
        assert a.start >= ready, sid
        for period in r.get("blocked", []):
            b0, b1 = datetime.fromisoformat(period["from"]), datetime.fromisoformat(period["to"])
            assert not (a.start < b1 and b0 < a.end), (sid, period)
        if r["calendar"] == "lab_hours":
            assert a.chamber_run is None
            assert _in_lab_hours(data, a.start, a.end), sid
        else:
            assert a.chamber_run is not None
            assert _in_lab_hours(data, a.start, a.start), sid  # loaded in lab hours

    # Chamber runs: one resource, one kind/condition/length, start and end together,
    # within capacity; one run at a time on a chamber.
    runs: dict[str, list[str]] = defaultdict(list)
    for sid, a in placed.items():
        if a.chamber_run is not None:
            runs[a.chamber_run].append(sid)
    spans: dict[str, list[tuple[datetime, datetime]]] = defaultdict(list)
    for members in runs.values():
        first = placed[members[0]]
        assert len(members) <= resources[first.resource]["capacity"]
        keys = {(steps[m]["kind"], steps[m]["condition"], steps[m]["hours"]) for m in members}
        assert len(keys) == 1
        for m in members:
            a = placed[m]
            assert (a.resource, a.start, a.end) == (first.resource, first.start, first.end)
        spans[first.resource].append((first.start, first.end))
    for run_spans in spans.values():
        run_spans.sort()
        for (_, end_a), (start_b, _) in zip(run_spans, run_spans[1:], strict=False):
            assert start_b >= end_a

    # Bench stations: never more steps side by side than the capacity.
    for rid, r in resources.items():
        if r["calendar"] != "lab_hours":
            continue
        events = []
        for a in placed.values():
            if a.resource == rid and a.end > a.start:
                events += [(a.start, 1), (a.end, -1)]
        level = 0
        for _, delta in sorted(events, key=lambda e: (e[0], e[1])):
            level += delta
            assert level <= r["capacity"]

    # A piece is in one place at a time.
    by_piece: dict[str, list[tuple[datetime, datetime]]] = defaultdict(list)
    for sid, a in placed.items():
        by_piece[steps[sid]["piece"]].append((a.start, a.end))
    for spans_of_piece in by_piece.values():
        spans_of_piece.sort()
        for (_, end_a), (start_b, _) in zip(spans_of_piece, spans_of_piece[1:], strict=False):
            assert start_b >= end_a

    last = max((a.end for a in result.assignments), default=start)
    assert abs(result.makespan_hours - max((last - start).total_seconds() / 3600, 0)) < 1e-9
    assert result.lower_bound_hours <= result.makespan_hours + 1e-9

    # Promised dates are the lots' last step ends; late lots come with a reason.
    for lot in result.lots:
        ends = [placed[s["id"]].end for s in data["steps"] if s["lot"] == lot.lot]
        assert lot.promised == (max(ends) if ends else None)
        if lot.late:
            assert lot.due is not None and lot.promised > lot.due and lot.reason


@settings(max_examples=120)
@given(workloads())
def test_random_workloads_obey_every_rule(data: dict[str, Any]) -> None:
    result = schedule(load_workload(data), SolverOptions(time_budget_s=30.0, max_passes=6))
    check_schedule(data, result)


@settings(max_examples=40)
@given(workloads(), st.integers(1, 200))
def test_replanning_keeps_running_steps_where_they_are(data: dict[str, Any], later_h: int) -> None:
    # Plan, then re-plan some hours later with every step that has started by then
    # given as fixed where the first plan put it: those stay, the rest obey the rules.
    first = schedule(load_workload(data), SolverOptions(time_budget_s=30.0, max_passes=3))
    start = datetime.fromisoformat(data["start"])
    now = start + timedelta(hours=later_h)
    placed = {a.step: a for a in first.assignments}
    started = {sid for sid, a in placed.items() if a.start < now}
    # A step counts as started only if everything before it did too (always true for a
    # feasible plan, since successors start after their predecessors end).
    for s in data["steps"]:
        if s["id"] in started:
            s["fixed"] = {
                "resource": placed[s["id"]].resource,
                "start": _stamp(placed[s["id"]].start),
            }
    data["start"] = _stamp(now)
    second = schedule(load_workload(data), SolverOptions(time_budget_s=30.0, max_passes=3))
    check_schedule(data, second)
    again = {a.step: a for a in second.assignments}
    for sid in started:
        assert (again[sid].resource, again[sid].start) == (placed[sid].resource, placed[sid].start)


def test_the_lab_hours_check_itself() -> None:
    # A guard on the checker: Mon 2026-03-02 08:00-17:00 is inside, 16:00-18:00 is not,
    # and a holiday is never inside.
    data = {"lab_hours": {"days": [0], "from": "08:00", "to": "17:00"}, "holidays": ["2026-03-09"]}
    assert _in_lab_hours(data, datetime(2026, 3, 2, 8), datetime(2026, 3, 2, 17))
    assert not _in_lab_hours(data, datetime(2026, 3, 2, 16), datetime(2026, 3, 2, 18))
    assert not _in_lab_hours(data, datetime(2026, 3, 9, 9), datetime(2026, 3, 9, 10))
    assert date(2026, 3, 9).weekday() == 0
