"""Small workloads whose schedules are worked out by hand in the comments.

The lab calendar in every case: Monday 2026-03-02 is a Monday (checked below with
the standard library); lab hours Monday to Friday 08:00-17:00. Scheduling
conventions (chamber runs loaded only in lab hours, bench steps inside one
lab-hours window, one run per chamber at a time) are common practice.
"""

from __future__ import annotations

import json
import subprocess
import sys
from datetime import date, datetime
from typing import Any

import pytest

from durability.errors import InputError
from durability.scheduling import SolverOptions, load_workload, schedule
from durability.scheduling.bounds import lower_bound
from durability.scheduling.calendar import Busy
from durability.scheduling.prepare import prepare

MONDAY = "2026-03-02"
LAB = {"days": [0, 1, 2, 3, 4], "from": "08:00", "to": "17:00"}


def test_the_calendar_used_here_starts_on_a_monday() -> None:
    # Python's datetime: Monday is weekday 0 (the same numbering as the workload format).
    assert date.fromisoformat(MONDAY).weekday() == 0
    assert date(2026, 3, 6).weekday() == 4  # the Friday used as a holiday below


def bench(rid: str, kinds: list[str], capacity: int = 1, **extra: Any) -> dict[str, Any]:
    return {"id": rid, "kinds": kinds, "capacity": capacity, "calendar": "lab_hours", **extra}


def chamber(rid: str, kinds: list[str], capacity: int, **extra: Any) -> dict[str, Any]:
    return {"id": rid, "kinds": kinds, "capacity": capacity, "calendar": "always", **extra}


def step(
    sid: str,
    kind: str,
    hours: float,
    *,
    piece: str = "W1",
    lot: str = "L1",
    after: list[str] | None = None,
    wait: float = 0.0,
    condition: str = "",
    fixed: dict[str, str] | None = None,
) -> dict[str, Any]:
    out: dict[str, Any] = {
        "id": sid,
        "piece": piece,
        "lot": lot,
        "kind": kind,
        "condition": condition,
        "hours": hours,
        "after": after or [],
        "wait_hours": wait,
    }
    if fixed:
        out["fixed"] = fixed
    return out


def workload(
    resources: list[dict[str, Any]],
    steps: list[dict[str, Any]],
    *,
    start: str = f"{MONDAY}T08:00",
    lots: list[dict[str, Any]] | None = None,
    holidays: list[str] | None = None,
) -> dict[str, Any]:
    data: dict[str, Any] = {
        "start": start,
        "lab_hours": LAB,
        "resources": resources,
        "steps": steps,
    }
    if lots is not None:
        data["lots"] = lots
    if holidays is not None:
        data["holidays"] = holidays
    return data


def solve(data: dict[str, Any]) -> tuple[Any, dict[str, Any]]:
    result = schedule(load_workload(data), SolverOptions(time_budget_s=5.0, max_passes=30))
    placed = {a.step: a for a in result.assignments}
    return result, placed


def at(text: str) -> datetime:
    return datetime.fromisoformat(text)


def test_a_chain_with_waits_follows_the_lab_calendar() -> None:
    # W1: inspection 1 h after 12 h at ambient from the start (Mon 08:00 + 12 h = Mon 20:00,
    # the lab is closed) -> Tue 08:00-09:00. Humidity 24 h loaded at once, Tue 09:00 ->
    # Wed 09:00. Recovery 2 h -> inspection Wed 11:00-11:30, then the tape pull
    # 11:30-11:45. Makespan Mon 08:00 -> Wed 11:45 = 51.75 h, which is also the chain
    # bound, so the ratio is 1.
    data = workload(
        [
            chamber("HUM-1", ["humidity"], 4),
            bench("INSP-1", ["inspection"]),
            bench("TAPE-1", ["adhesion"]),
        ],
        [
            step("a", "inspection", 1, wait=12),
            step("b", "humidity", 24, after=["a"], condition="49 C 95 %RH"),
            step("c", "inspection", 0.5, after=["b"], wait=2),
            step("d", "adhesion", 0.25, after=["c"]),
        ],
    )
    result, placed = solve(data)
    assert (placed["a"].start, placed["a"].end) == (at("2026-03-03T08:00"), at("2026-03-03T09:00"))
    assert (placed["b"].start, placed["b"].end) == (at("2026-03-03T09:00"), at("2026-03-04T09:00"))
    assert placed["b"].chamber_run == "HUM-1:R1"
    assert (placed["c"].start, placed["c"].end) == (at("2026-03-04T11:00"), at("2026-03-04T11:30"))
    assert (placed["d"].start, placed["d"].end) == (at("2026-03-04T11:30"), at("2026-03-04T11:45"))
    assert result.makespan_hours == pytest.approx(51.75)
    assert result.lower_bound_hours == pytest.approx(51.75)


def test_a_full_chamber_needs_a_second_run() -> None:
    # Three pieces of one condition, chamber capacity 2, all ready Mon 08:00: run 1 holds
    # two pieces Mon 08:00 -> Tue 08:00, run 2 the third Tue 08:00 -> Wed 08:00.
    # Makespan 48 h; bound ceil(3 / 2) = 2 runs x 24 h = 48 h.
    data = workload(
        [chamber("HUM-1", ["humidity"], 2)],
        [
            step(f"h{i}", "humidity", 24, piece=f"W{i}", condition="49 C 95 %RH")
            for i in range(1, 4)
        ],
    )
    result, placed = solve(data)
    runs: dict[str, list[str]] = {}
    for a in result.assignments:
        runs.setdefault(a.chamber_run, []).append(a.step)
    assert sorted(len(v) for v in runs.values()) == [1, 2]
    first = next(a for a in result.assignments if a.chamber_run == "HUM-1:R1")
    second = next(a for a in result.assignments if a.chamber_run == "HUM-1:R2")
    assert (first.start, first.end) == (at("2026-03-02T08:00"), at("2026-03-03T08:00"))
    assert (second.start, second.end) == (at("2026-03-03T08:00"), at("2026-03-04T08:00"))
    assert len(runs["HUM-1:R1"]) == 2
    assert result.makespan_hours == pytest.approx(48)
    assert result.lower_bound_hours == pytest.approx(48)


def test_different_conditions_never_share_a_run() -> None:
    # Capacity 4 would hold all four pieces, but two conditions need two runs:
    # Mon 08:00 -> Mon 14:00 and Mon 14:00 -> Mon 20:00 (6 h each, loaded in lab hours).
    data = workload(
        [chamber("TEMP-1", ["temperature"], 4)],
        [
            step("a1", "temperature", 6, piece="A1", condition="-40 C"),
            step("a2", "temperature", 6, piece="A2", condition="-40 C"),
            step("b1", "temperature", 6, piece="B1", condition="+70 C"),
            step("b2", "temperature", 6, piece="B2", condition="+70 C"),
        ],
    )
    result, placed = solve(data)
    assert placed["a1"].chamber_run == placed["a2"].chamber_run
    assert placed["b1"].chamber_run == placed["b2"].chamber_run
    assert placed["a1"].chamber_run != placed["b1"].chamber_run
    starts = sorted({placed[s].start for s in ("a1", "b1")})
    assert starts == [at("2026-03-02T08:00"), at("2026-03-02T14:00")]
    assert result.makespan_hours == pytest.approx(12)


def test_a_holiday_moves_bench_work_and_chamber_loading_to_the_next_lab_day() -> None:
    # Start Thu 2026-03-05 08:00; Friday 03-06 is a lab holiday. The spectral measurement
    # waits 10 h (ready Thu 18:00, lab closed), Friday is a holiday, Sat/Sun are not lab
    # days -> Mon 03-09 08:00-09:00. The salt fog step (ready Thu 18:00 too) is loaded
    # Mon 08:00 as well and runs 24 h -> Tue 08:00. Makespan Thu 08:00 -> Tue 08:00 = 120 h.
    data = workload(
        [chamber("SALT-1", ["salt_fog"], 4), bench("SPEC-1", ["spectral_measurement"])],
        [
            step("m", "spectral_measurement", 1, wait=10),
            step("s", "salt_fog", 24, piece="W2", wait=10, condition="35 C 5 % NaCl"),
        ],
        start="2026-03-05T08:00",
        holidays=["2026-03-06"],
    )
    result, placed = solve(data)
    assert (placed["m"].start, placed["m"].end) == (at("2026-03-09T08:00"), at("2026-03-09T09:00"))
    assert placed["s"].start == at("2026-03-09T08:00")
    assert result.makespan_hours == pytest.approx(120)
    assert result.lower_bound_hours == pytest.approx(120)


def test_a_breakdown_keeps_runs_out_of_the_blocked_period() -> None:
    # HUM-1 breaks down Tue 12:00 -> Tue 20:00. Run 1 (condition A) Mon 08:00 -> Tue 08:00
    # ends before it. Run 2 (condition B) cannot start Tue 08:00 (it would run into the
    # breakdown); after it the lab is closed, so it is loaded Wed 08:00 -> Thu 08:00.
    # Makespan Mon 08:00 -> Thu 08:00 = 72 h.
    data = workload(
        [
            chamber(
                "HUM-1",
                ["humidity"],
                2,
                blocked=[
                    {"from": "2026-03-03T12:00", "to": "2026-03-03T20:00", "reason": "breakdown"}
                ],
            )
        ],
        [
            step("a", "humidity", 24, piece="A", condition="A"),
            step("b", "humidity", 24, piece="B", condition="B"),
        ],
    )
    result, placed = solve(data)
    runs = sorted((placed[s].start, placed[s].end) for s in ("a", "b"))
    assert runs == [
        (at("2026-03-02T08:00"), at("2026-03-03T08:00")),
        (at("2026-03-04T08:00"), at("2026-03-05T08:00")),
    ]
    assert result.makespan_hours == pytest.approx(72)


def test_a_rush_lot_goes_first() -> None:
    # One spectrophotometer, four 1 h measurements ready Mon 08:00: the rush lot's
    # (priority 1) takes 08:00-09:00, the normal lot's three follow 09:00-12:00.
    data = workload(
        [bench("SPEC-1", ["spectral_measurement"])],
        [step(f"n{i}", "spectral_measurement", 1, piece=f"N{i}", lot="NORMAL") for i in range(1, 4)]
        + [step("r", "spectral_measurement", 1, piece="R1", lot="RUSH")],
        lots=[
            {"id": "NORMAL", "due": None, "priority": 0},
            {"id": "RUSH", "due": None, "priority": 1},
        ],
    )
    result, placed = solve(data)
    assert placed["r"].start == at("2026-03-02T08:00")
    assert sorted(placed[f"n{i}"].start.hour for i in range(1, 4)) == [9, 10, 11]
    assert result.makespan_hours == pytest.approx(4)


def test_a_rush_lot_due_early_is_met_and_a_late_lot_gets_a_reason() -> None:
    # The rush lot is due Mon 09:00 and gets the 08:00 slot. The normal lot is due
    # Mon 10:00 but its three hours of measurements end at 12:00: 2 h late, and the
    # reason names the spectrophotometer it waited for.
    data = workload(
        [bench("SPEC-1", ["spectral_measurement"])],
        [step(f"n{i}", "spectral_measurement", 1, piece=f"N{i}", lot="NORMAL") for i in range(1, 4)]
        + [step("r", "spectral_measurement", 1, piece="R1", lot="RUSH")],
        lots=[
            {"id": "NORMAL", "due": "2026-03-02T10:00", "priority": 0},
            {"id": "RUSH", "due": "2026-03-02T09:00", "priority": 1},
        ],
    )
    result, placed = solve(data)
    assert placed["r"].start == at("2026-03-02T08:00")
    late = {lot.lot: lot for lot in result.late}
    assert set(late) == {"NORMAL"}
    assert late["NORMAL"].promised == at("2026-03-02T12:00")
    assert late["NORMAL"].late_hours == pytest.approx(2)
    assert "SPEC-1" in (late["NORMAL"].reason or "")


def test_a_chain_too_long_for_the_due_date_says_so() -> None:
    # 24 h humidity then 1 h inspection: the chain ends Tue 09:00 at the earliest, 25 h
    # after the start, but the lot is due Mon 17:00.
    data = workload(
        [chamber("HUM-1", ["humidity"], 2), bench("INSP-1", ["inspection"])],
        [
            step("h", "humidity", 24, condition="x"),
            step("i", "inspection", 1, after=["h"]),
        ],
        lots=[{"id": "L1", "due": "2026-03-02T17:00", "priority": 0}],
    )
    result, _ = solve(data)
    (late,) = result.late
    assert late.reason is not None and "chain of steps with waits needs 25.0 h" in late.reason


def test_a_fixed_running_step_stays_and_holds_its_chamber() -> None:
    # A humidity run was loaded Sun 03-01 20:00 (before the plan's start) for 24 h: it
    # stays, ending Mon 20:00. A new humidity piece ready Mon 08:00 of another condition
    # waits for it; the lab is closed at 20:00, so it is loaded Tue 08:00 -> Wed 08:00.
    # The running piece's inspection (1 h recovery) is ready Mon 21:00 -> Tue 08:00-08:30.
    # Makespan 48 h. Bound: HUM-1 is busy through Monday's whole lab window, so the first
    # loading chance is Tue 08:00, + 24 h = 48 h.
    data = workload(
        [chamber("HUM-1", ["humidity"], 2), bench("INSP-1", ["inspection"])],
        [
            step(
                "run",
                "humidity",
                24,
                piece="OLD",
                condition="85 C 85 %RH",
                fixed={"resource": "HUM-1", "start": "2026-03-01T20:00"},
            ),
            step("insp", "inspection", 0.5, piece="OLD", after=["run"], wait=1),
            step("new", "humidity", 24, piece="NEW", condition="40 C 93 %RH"),
        ],
    )
    result, placed = solve(data)
    assert placed["run"].fixed
    assert (placed["run"].start, placed["run"].end) == (
        at("2026-03-01T20:00"),
        at("2026-03-02T20:00"),
    )
    assert placed["new"].start == at("2026-03-03T08:00")
    assert placed["insp"].start == at("2026-03-03T08:00")
    assert result.makespan_hours == pytest.approx(48)
    assert result.lower_bound_hours == pytest.approx(48)


def test_bench_steps_stay_inside_lab_hours() -> None:
    # A 2 h abrasion step ready Mon 16:00 would end 18:00, after closing: it moves to
    # Tue 08:00-10:00. Meanwhile a 0.5 h one ready at 16:00 still fits 16:00-16:30.
    data = workload(
        [bench("ABR-1", ["moderate_abrasion"], capacity=2)],
        [
            step("long", "moderate_abrasion", 2, piece="A", wait=8),
            step("short", "moderate_abrasion", 0.5, piece="B", wait=8),
        ],
    )
    _, placed = solve(data)
    assert (placed["long"].start, placed["long"].end) == (
        at("2026-03-03T08:00"),
        at("2026-03-03T10:00"),
    )
    assert placed["short"].start == at("2026-03-02T16:00")


def test_a_bench_step_longer_than_a_lab_day_is_refused() -> None:
    data = workload([bench("HOOD-1", ["water_solubility"])], [step("soak", "water_solubility", 10)])
    with pytest.raises(InputError, match=r"'soak'.*10 h.*one lab-hours window \(9 h\)"):
        schedule(load_workload(data))


def test_the_bound_counts_one_loading_chance_per_lab_day() -> None:
    # Six 24 h runs of six conditions on one chamber (capacity 1), all ready Mon 08:00.
    # Runs load Mon, Tue, Wed, Thu, Fri 08:00; the fifth ends Sat 08:00, and Saturday and
    # Sunday have no lab hours, so the sixth loads Mon 03-09 08:00 and ends Tue 08:00:
    # 192 h. Chamber time alone would say 6 x 24 = 144 h; one loading chance per lab day
    # gives the sixth chance at 168 h, + 24 h = 192 h, so schedule and bound agree.
    data = workload(
        [chamber("HUM-1", ["humidity"], 1)],
        [step(f"h{i}", "humidity", 24, piece=f"W{i}", condition=f"c{i}") for i in range(6)],
    )
    p = prepare(load_workload(data))
    assert lower_bound(p).hours == pytest.approx(192)
    result, _ = solve(data)
    assert result.makespan_hours == pytest.approx(192)


# Bad input: each refusal names the step or field at fault.
BAD_CASES = [
    ("kind", lambda d: d["steps"][0].update(kind="boiling"), r"steps\[0\].*kind.*'boiling'"),
    ("cycle", lambda d: d["steps"][0].update(after=["b"]), r"cycle.*'a'.*'b'"),
    (
        "no resource",
        lambda d: d["steps"][1].update(kind="salt_fog"),
        r"steps\[1\] \(id 'b'\).*no resource can run kind 'salt_fog'",
    ),
    ("unknown after", lambda d: d["steps"][1].update(after=["zz"]), r"after\[0\].*'zz'"),
    ("duplicate step", lambda d: d["steps"][1].update(id="a"), r"steps\[1\].*duplicate step id"),
    (
        "duplicate resource",
        lambda d: d["resources"].append(dict(d["resources"][0])),
        r"resources\[2\].*duplicate",
    ),
    ("bad datetime", lambda d: d.update(start="2026-02-30T08:00"), r"start.*2026-02-30"),
    (
        "offset",
        lambda d: d.update(start="2026-03-02T08:00+01:00"),
        r"start.*offset",
    ),
    (
        "negative hours",
        lambda d: d["steps"][0].update(hours=-1),
        r"steps\[0\].*hours.*zero or more",
    ),
    (
        "negative wait",
        lambda d: d["steps"][1].update(wait_hours=-2),
        r"steps\[1\].*wait_hours",
    ),
    (
        "bad holiday",
        lambda d: d.update(holidays=["2026-13-01"]),
        r"holidays\[0\]",
    ),
    (
        "lab hours reversed",
        lambda d: d.update(lab_hours={"days": [0], "from": "17:00", "to": "08:00"}),
        r"lab_hours",
    ),
    (
        "fixed on wrong resource",
        lambda d: d["steps"][0].update(fixed={"resource": "INSP-1", "start": "2026-03-02T08:00"}),
        r"steps\[0\].*fixed.*'INSP-1' cannot run kind 'humidity'",
    ),
    ("capacity", lambda d: d["resources"][0].update(capacity=0), r"resources\[0\].*capacity"),
    (
        "unknown lot",
        lambda d: d.update(lots=[{"id": "OTHER", "due": None, "priority": 0}]),
        r"steps\[0\].*lot 'L1' is not in 'lots'",
    ),
]


def _base() -> dict[str, Any]:
    return workload(
        [chamber("HUM-1", ["humidity"], 2), bench("INSP-1", ["inspection"])],
        [
            step("a", "humidity", 24, condition="x"),
            step("b", "inspection", 1, after=["a"]),
        ],
    )


@pytest.mark.parametrize(("name", "spoil", "message"), BAD_CASES, ids=[c[0] for c in BAD_CASES])
def test_it_refuses_bad_input_naming_the_item(name: str, spoil: Any, message: str) -> None:
    data = _base()
    spoil(data)
    with pytest.raises(InputError, match=message):
        schedule(load_workload(data))


def test_the_command_prints_one_json_object(tmp_path: Any) -> None:
    path = tmp_path / "w.json"
    path.write_text(json.dumps(_base()), encoding="utf-8")
    done = subprocess.run(
        [sys.executable, "-m", "durability", "schedule", str(path), "--time-budget", "1"],
        cwd="/work/main",
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode == 0, done.stderr
    out = json.loads(done.stdout)
    # Humidity Mon 08:00 -> Tue 08:00, inspection Tue 08:00-09:00: 25 h, bound 25 h.
    assert out["makespan_hours"] == pytest.approx(25)
    assert out["lower_bound_hours"] == pytest.approx(25)
    steps = {a["step"]: a for a in out["assignments"]}
    assert steps["a"] == {
        "step": "a",
        "resource": "HUM-1",
        "start": "2026-03-02T08:00",
        "end": "2026-03-03T08:00",
        "chamber_run": "HUM-1:R1",
        "fixed": False,
    }
    assert steps["b"]["chamber_run"] is None
    assert out["late"] == []
    assert out["promised"][0]["promised"] == "2026-03-03T09:00"


def test_the_command_exits_2_on_bad_input(tmp_path: Any) -> None:
    data = _base()
    data["steps"][1]["after"] = ["nope"]
    path = tmp_path / "w.json"
    path.write_text(json.dumps(data), encoding="utf-8")
    done = subprocess.run(
        [sys.executable, "-m", "durability", "schedule", str(path)],
        cwd="/work/main",
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode == 2
    assert done.stdout == ""
    assert "steps[1] (id 'b').after[0]: unknown step 'nope'" in done.stderr


def test_the_command_names_the_line_of_broken_json(tmp_path: Any) -> None:
    path = tmp_path / "w.json"
    path.write_text('{\n  "start": "2026-03-02T08:00",\n  "steps": [,]\n}\n', encoding="utf-8")
    done = subprocess.run(
        [sys.executable, "-m", "durability", "schedule", str(path)],
        cwd="/work/main",
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode == 2
    assert "line 3" in done.stderr


def test_the_example_fixture_schedules(tmp_path: Any) -> None:
    # fixtures/workloads/README.md works this example by hand; see there.
    done = subprocess.run(
        [
            sys.executable,
            "-m",
            "durability",
            "schedule",
            "fixtures/workloads/humidity_then_tape.json",
        ],
        cwd="/work/main",
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode == 0, done.stderr
    out = json.loads(done.stdout)
    steps = {a["step"]: a for a in out["assignments"]}
    assert steps["W3-hum"]["start"] == "2026-03-02T08:00"
    assert steps["W1-hum"]["chamber_run"] == steps["W2-hum"]["chamber_run"] == "HUM-1:R2"
    assert steps["W1-hum"]["start"] == "2026-03-03T08:00"
    assert steps["W1-tape"]["end"] == "2026-03-04T09:45"
    assert out["makespan_hours"] == pytest.approx(49.75)
    assert out["lower_bound_hours"] == pytest.approx(49.75)


def test_busy_intervals_merge_when_a_fixed_run_overlaps_a_blocked_period() -> None:
    # A fixed run may sit inside a blocked period (it is what really happened); the
    # resource's busy list must still answer "free?" correctly afterwards.
    busy = Busy([(0, 60)])
    busy.add(0, 375)
    busy.add(500, 600)
    busy.add(590, 700)
    assert busy.intervals() == [(0, 375), (500, 700)]
    assert busy.conflict(100, 115) == 375
    assert busy.conflict(375, 500) is None
    assert busy.conflict(650, 660) == 700


# ---------------------------------------------------------------- resources a step may use


def test_a_step_limited_to_some_resources_is_placed_only_on_them() -> None:
    # Two humidity chambers; W2's condition is covered only by HUM-2 (say its RH range).
    # Worked by hand: W1 loads HUM-1 Mon 08:00 and W2 loads HUM-2 Mon 08:00, both 24 h;
    # without the limit either could take either chamber (common practice conventions).
    limited = step("W2-HUM", "humidity", 24, piece="W2", condition="85C/85RH")
    limited["resources"] = ["HUM-2"]
    data = workload(
        [chamber("HUM-1", ["humidity"], 1), chamber("HUM-2", ["humidity"], 1)],
        [step("W1-HUM", "humidity", 24, condition="49C/95RH"), limited],
    )
    result, placed = solve(data)
    assert placed["W2-HUM"].resource == "HUM-2"
    assert placed["W1-HUM"].resource == "HUM-1"
    assert result.makespan_hours == 24


def test_steps_limited_to_different_resources_never_share_a_run() -> None:
    first = step("W1-HUM", "humidity", 24, piece="W1", condition="49C/95RH")
    second = step("W2-HUM", "humidity", 24, piece="W2", condition="49C/95RH")
    second["resources"] = ["HUM-1"]
    data = workload([chamber("HUM-1", ["humidity"], 2), chamber("HUM-2", ["humidity"], 2)],
                    [first, second])
    _, placed = solve(data)
    assert placed["W1-HUM"].chamber_run != placed["W2-HUM"].chamber_run


def test_an_unknown_or_unable_resource_in_a_steps_list_is_refused_naming_the_step() -> None:
    bad = step("W1-HUM", "humidity", 24)
    bad["resources"] = ["HUM-9"]
    with pytest.raises(InputError, match=r"W1-HUM.*resources\[0\].*HUM-9"):
        prepare(load_workload(workload([chamber("HUM-1", ["humidity"], 1)], [bad])))
    wrong = step("W1-HUM", "humidity", 24)
    wrong["resources"] = ["TAPE-1"]
    with pytest.raises(InputError, match=r"W1-HUM.*none of its resources \(TAPE-1\)"):
        prepare(load_workload(workload(
            [chamber("HUM-1", ["humidity"], 1), bench("TAPE-1", ["adhesion"])], [wrong])))
