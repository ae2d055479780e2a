"""How long a planned step occupies its resource, for scheduling.

A chamber step lasts its method's duration (or cycles × cycle length); bench
steps take the lab's usual handling times. The handling times are the lab's
own defaults (common practice), not values from any standard, and a lab can
pass its own table.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

# Hands-on time at a bench station per piece, hours (common practice, lab defaults).
DEFAULT_BENCH_HOURS: Mapping[str, float] = {
    "adhesion": 0.25,
    "crosshatch": 0.5,
    "moderate_abrasion": 0.25,
    "severe_abrasion": 0.25,
    "cleanability": 0.25,
    "inspection": 0.25,
    "spectral_measurement": 0.5,
    "other": 1.0,
}
# A chamber exposure whose duration the plan does not state (to be entered by the lab).
DEFAULT_CHAMBER_HOURS: Mapping[str, float] = {
    "humidity": 24.0,
    "temperature": 8.0,
    "thermal_shock": 8.0,
    "salt_fog": 24.0,
    "salt_solubility": 24.0,
    "water_solubility": 24.0,
    "solvent_solubility": 1.0,
}
CHAMBER_KINDS = frozenset(
    {"humidity", "temperature", "thermal_shock", "salt_fog", "salt_solubility", "water_solubility"}
)


def _number(parameters: Mapping[str, Any], name: str) -> float | None:
    spec = parameters.get(name)
    value = spec.get("value") if isinstance(spec, Mapping) else spec
    try:
        number = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        return None
    return number if number > 0 else None


def step_hours(
    kind: str,
    parameters: Mapping[str, Any],
    bench_hours: Mapping[str, float] = DEFAULT_BENCH_HOURS,
) -> tuple[float, str]:
    """The step's duration in hours and where that number came from."""
    duration = _number(parameters, "duration_h")
    if duration is not None:
        return duration, "the method's duration"
    cycles = _number(parameters, "cycles")
    cycle_h = _number(parameters, "cycle_h")
    if cycles is not None and cycle_h is not None:
        return cycles * cycle_h, "cycles × cycle length"
    if kind in bench_hours:
        return bench_hours[kind], "the lab's usual handling time (common practice)"
    if kind in DEFAULT_CHAMBER_HOURS:
        return DEFAULT_CHAMBER_HOURS[kind], "the lab's default exposure, duration not stated"
    return bench_hours.get("other", 1.0), "the lab's usual handling time (common practice)"
