"""A fixed-seed generator of invented scheduler workloads, in the `schedule` JSON format.

The mix (all numbers invented for the benchmark; durations are common practice
or from memory, not from a standard):

- 12 resources: chambers HUM-1 and HUM-2 (humidity, 6 pieces a run), SALT-1
  (salt fog, 10), TEMP-1 (temperature, 12), TSHOCK-1 (the thermal shock pair, 6),
  OVEN-1 (temperature and other, 20); bench stations ABR-1 (abrasion, 1), TAPE-1
  (adhesion and crosshatch, 2), HOOD-1 (solubility and cleanability, 2), SPEC-1
  (spectrophotometer, 1), INSP-1 and INSP-2 (inspection, 1 each).
- Lots of 3 to 8 witness pieces arrive over the first two thirds of the horizon;
  each piece first waits 12 h at ambient after coating (ISO 9211-4 recommendation,
  per shared/reference/test-methods.md [pub]) and then follows one sequence:
  24 h humidity (22 %), 96 h damp heat in the same chambers (20 %), salt fog
  24 h with 24 h drying (12 %), temperature cycling 16 h (12 %), thermal shock 4 h
  (12 %), abrasion (12 %), solubility and cleanability (10 %); each with inspections,
  tape or crosshatch and spectral measurements at the bench around the exposure.
- The humidity pair HUM-1+HUM-2 is the bottleneck: with the default seed 86 % of
  its calendar time over the six weeks is needed for its least number of runs
  (other seeds 80-94 %); the spectrophotometer SPEC-1 comes next at about 76 % of
  its lab hours (`loads()` computes these).
- One lab holiday, a day of maintenance on HUM-2, half a day of calibration on
  SPEC-1, a few steps already running (fixed), 5 % rush lots (priority 1), due
  dates one to three weeks after the end of each lot's own chain of steps.

The horizon is six weeks for 2,000 steps and grows in proportion to the number
of steps, so the load stays the same at every size.
"""

from __future__ import annotations

import math
import random
from datetime import date, datetime, timedelta
from typing import Any

START = datetime(2026, 3, 2, 8, 0)  # a Monday
LAB_HOURS = {"days": [0, 1, 2, 3, 4], "from": "08:00", "to": "17:00"}
WEEKS_PER_2000_STEPS = 6.0

RESOURCES: list[dict[str, Any]] = [
    {"id": "HUM-1", "kinds": ["humidity"], "capacity": 6, "calendar": "always"},
    {"id": "HUM-2", "kinds": ["humidity"], "capacity": 6, "calendar": "always"},
    {"id": "SALT-1", "kinds": ["salt_fog"], "capacity": 10, "calendar": "always"},
    {"id": "TEMP-1", "kinds": ["temperature"], "capacity": 12, "calendar": "always"},
    {"id": "TSHOCK-1", "kinds": ["thermal_shock"], "capacity": 6, "calendar": "always"},
    {"id": "OVEN-1", "kinds": ["temperature", "other"], "capacity": 20, "calendar": "always"},
    {
        "id": "ABR-1",
        "kinds": ["moderate_abrasion", "severe_abrasion"],
        "capacity": 1,
        "calendar": "lab_hours",
    },
    {"id": "TAPE-1", "kinds": ["adhesion", "crosshatch"], "capacity": 2, "calendar": "lab_hours"},
    {
        "id": "HOOD-1",
        "kinds": ["water_solubility", "solvent_solubility", "salt_solubility", "cleanability"],
        "capacity": 2,
        "calendar": "lab_hours",
    },
    {"id": "SPEC-1", "kinds": ["spectral_measurement"], "capacity": 1, "calendar": "lab_hours"},
    {"id": "INSP-1", "kinds": ["inspection"], "capacity": 1, "calendar": "lab_hours"},
    {"id": "INSP-2", "kinds": ["inspection"], "capacity": 1, "calendar": "lab_hours"},
]

# (kind, condition, hours, wait_hours before the step)
Sequence = list[tuple[str, str, float, float]]
SEQUENCES: list[tuple[float, Sequence]] = [
    (
        0.22,
        [
            ("inspection", "", 0.25, 0.0),
            ("spectral_measurement", "", 0.5, 0.0),
            ("humidity", "49 C 95 %RH", 24.0, 0.0),
            ("inspection", "", 0.25, 1.0),
            ("adhesion", "", 0.25, 0.0),
            ("spectral_measurement", "", 0.5, 0.0),
        ],
    ),
    (
        0.20,
        [
            ("inspection", "", 0.25, 0.0),
            ("spectral_measurement", "", 0.5, 0.0),
            ("humidity", "40 C 93 %RH", 96.0, 0.0),
            ("inspection", "", 0.25, 2.0),
            ("adhesion", "", 0.25, 0.0),
            ("spectral_measurement", "", 0.5, 0.0),
        ],
    ),
    (
        0.12,
        [
            ("inspection", "", 0.25, 0.0),
            ("salt_fog", "35 C 5 % NaCl", 24.0, 0.0),
            ("inspection", "", 0.25, 24.0),
            ("adhesion", "", 0.25, 0.0),
        ],
    ),
    (
        0.12,
        [
            ("inspection", "", 0.25, 0.0),
            ("temperature", "-40/+70 C 4 cycles", 16.0, 0.0),
            ("inspection", "", 0.25, 2.0),
            ("spectral_measurement", "", 0.5, 0.0),
        ],
    ),
    (
        0.12,
        [
            ("inspection", "", 0.25, 0.0),
            ("thermal_shock", "-40/+70 C 5 transfers", 4.0, 0.0),
            ("inspection", "", 0.25, 1.0),
            ("crosshatch", "", 0.5, 0.0),
        ],
    ),
    (
        0.12,
        [
            ("inspection", "", 0.25, 0.0),
            ("moderate_abrasion", "", 0.25, 0.0),
            ("inspection", "", 0.25, 0.0),
        ],
    ),
    (
        0.10,
        [
            ("inspection", "", 0.25, 0.0),
            ("water_solubility", "", 1.0, 0.0),
            ("solvent_solubility", "", 0.5, 0.0),
            ("cleanability", "", 0.25, 0.0),
            ("inspection", "", 0.25, 0.0),
        ],
    ),
]

AMBIENT_AFTER_COATING_H = 12.0


def _stamp(moment: datetime) -> str:
    return moment.isoformat(timespec="minutes")


def generate_workload(n_steps: int = 2000, seed: int = 20260302) -> dict[str, Any]:
    """An invented workload of about `n_steps` steps (JSON-ready, the command's format)."""
    rng = random.Random(seed)
    weeks = WEEKS_PER_2000_STEPS * n_steps / 2000
    horizon_h = weeks * 7 * 24
    arrival_span_h = horizon_h * 2 / 3
    weights = [w for w, _ in SEQUENCES]
    steps: list[dict[str, Any]] = []
    lots: list[dict[str, Any]] = []
    lot_no = 0
    while len(steps) < n_steps:
        lot_no += 1
        lot_id = f"L{lot_no:04d}"
        arrival = rng.uniform(0, arrival_span_h)
        priority = 1 if rng.random() < 0.05 else 0
        longest = 0.0
        for piece_no in range(rng.randint(3, 8)):
            piece = f"{lot_id}-W{piece_no + 1}"
            sequence = rng.choices(SEQUENCES, weights=weights)[0][1]
            before: str | None = None
            chain = AMBIENT_AFTER_COATING_H + arrival
            for k, (kind, condition, hours, wait) in enumerate(sequence):
                step_id = f"{piece}-{k + 1}"
                step: dict[str, Any] = {
                    "id": step_id,
                    "piece": piece,
                    "lot": lot_id,
                    "kind": kind,
                    "condition": condition,
                    "hours": hours,
                    "after": [before] if before else [],
                    "wait_hours": wait if before else AMBIENT_AFTER_COATING_H + arrival,
                }
                steps.append(step)
                chain += hours + (wait if before else 0.0)
                before = step_id
            longest = max(longest, chain)
        # Due a little after the lot's own chain, rounded to a lab day's end.
        due = START + timedelta(hours=longest + rng.uniform(7 * 24, 21 * 24))
        due = due.replace(hour=17, minute=0)
        lots.append({"id": lot_id, "due": _stamp(due), "priority": priority})

    # A few steps already running when the plan is made: the first inspection of
    # the first lots, on INSP-1, back to back from the start.
    t = START
    for step in steps[:3]:
        if step["kind"] == "inspection" and not step["after"]:
            step["fixed"] = {"resource": "INSP-1", "start": _stamp(t)}
            step["wait_hours"] = 0.0
            t += timedelta(hours=step["hours"])

    resources = [dict(r) for r in RESOURCES]
    holiday = START.date() + timedelta(days=18)  # a Friday in week 3
    maintenance = START + timedelta(days=9)  # Wednesday of week 2, 08:00
    for r in resources:
        if r["id"] == "HUM-2":
            r["blocked"] = [
                {
                    "from": _stamp(maintenance),
                    "to": _stamp(maintenance + timedelta(hours=24)),
                    "reason": "maintenance",
                }
            ]
        if r["id"] == "SPEC-1":
            r["blocked"] = [
                {
                    "from": _stamp(maintenance + timedelta(days=7)),
                    "to": _stamp(maintenance + timedelta(days=7, hours=4)),
                    "reason": "calibration",
                }
            ]
    return {
        "start": _stamp(START),
        "lab_hours": dict(LAB_HOURS),
        "holidays": [holiday.isoformat()],
        "resources": resources,
        "lots": lots,
        "steps": steps,
    }


def loads(workload: dict[str, Any]) -> dict[str, float]:
    """Share of each resource pool's available time over the horizon that its work needs.

    Chambers: least number of runs (ceil(pieces / capacity) per condition) x run
    length over calendar hours; bench stations: hours over lab hours x capacity.
    The horizon is the generator's (six weeks per 2,000 steps).
    """
    n = len(workload["steps"])
    weeks = WEEKS_PER_2000_STEPS * n / 2000
    lab_days = sum(
        1
        for d in range(int(weeks * 7))
        if (date.fromisoformat(workload["start"][:10]) + timedelta(days=d)).weekday() < 5
    )
    lab_hours_total = lab_days * 9.0
    pools: dict[str, list[dict[str, Any]]] = {}
    for r in workload["resources"]:
        pools.setdefault(",".join(sorted(r["kinds"])), []).append(r)
    result: dict[str, float] = {}
    for pool in _kind_pools(workload["resources"]):
        names = "+".join(r["id"] for r in pool)
        kinds = {k for r in pool for k in r["kinds"]}
        members = [s for s in workload["steps"] if s["kind"] in kinds]
        if pool[0]["calendar"] == "always":
            pieces: dict[tuple[str, str, float], int] = {}
            for s in members:
                key = (s["kind"], s["condition"], s["hours"])
                pieces[key] = pieces.get(key, 0) + 1
            cap = max(r["capacity"] for r in pool)
            need = sum(math.ceil(c / cap) * key[2] for key, c in pieces.items())
            have = len(pool) * weeks * 7 * 24
        else:
            need = sum(s["hours"] for s in members)
            have = lab_hours_total * sum(r["capacity"] for r in pool)
        result[names] = need / have
    return result


def _kind_pools(resources: list[dict[str, Any]]) -> list[list[dict[str, Any]]]:
    """Resources grouped when they share a kind (HUM-1 with HUM-2, INSP-1 with INSP-2)."""
    pools: list[list[dict[str, Any]]] = []
    for r in resources:
        for pool in pools:
            if any(set(r["kinds"]) & set(other["kinds"]) for other in pool):
                pool.append(r)
                break
        else:
            pools.append([r])
    return pools
