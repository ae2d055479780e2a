"""Words and numbers as a report prints them: entered values with units, moments with zones.

Plain functions on plain values (no database, no settings), shared by the PDF layout, the
HTML preview and the result exports so the three always say the same thing.
"""

from __future__ import annotations

import datetime
import decimal
from collections.abc import Mapping

# Field-name endings the entry forms use for units: `detached_share_pct` is a share in %,
# `temperature_c` a temperature in °C. A value given as {"value": v, "unit": u} says its own.
UNIT_SUFFIXES: tuple[tuple[str, str], ...] = (
    ("_pct", "%"),
    ("_nm", "nm"),
    ("_um", "µm"),
    ("_mm", "mm"),
    ("_deg", "°"),
    ("_kpa", "kPa"),
    ("_min", "min"),
    ("_lx", "lx"),
    ("_c", "°C"),
    ("_h", "h"),
    ("_n", "N"),
    ("_s", "s"),
    ("_g", "g"),
)


def label_and_unit(key: str) -> tuple[str, str]:
    """`detached_share_pct` -> ("detached share", "%"); a key without a unit ending keeps ""."""
    for suffix, unit in UNIT_SUFFIXES:
        if key.endswith(suffix) and len(key) > len(suffix):
            return key[: -len(suffix)].replace("_", " "), unit
    return key.replace("_", " "), ""


def number_text(value: float | int | decimal.Decimal) -> str:
    """A number as entered: Decimals keep their digits, floats lose trailing noise."""
    if isinstance(value, decimal.Decimal):
        return format(value, "f")
    if isinstance(value, float):
        return f"{value:.6g}"
    return str(value)


def value_text(value: object) -> str:
    """One entered value as text (lists and mappings flattened, booleans as yes/no)."""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int | float | decimal.Decimal):
        return number_text(value)
    if isinstance(value, Mapping):
        if "value" in value:
            unit = str(value.get("unit") or "")
            return f"{value_text(value['value'])} {unit}".strip()
        return ", ".join(f"{label_and_unit(str(k))[0]} {value_text(v)}" for k, v in value.items())
    if isinstance(value, list | tuple):
        return "; ".join(value_text(item) for item in value)
    return str(value)


def values_lines(values: Mapping[str, object]) -> tuple[str, ...]:
    """A result's entered values, one "label: value unit" line each; empty values left out."""
    lines = []
    for key, value in values.items():
        if value is None or value == "" or value == [] or value == {}:
            continue
        label, unit = label_and_unit(str(key))
        if isinstance(value, Mapping) and "value" in value:
            lines.append(f"{label}: {value_text(value)}")
        elif unit and isinstance(value, int | float | decimal.Decimal) and not isinstance(
            value, bool
        ):
            space = "" if unit == "°" else " "  # 45°, but 0.4 %
            lines.append(f"{label}: {number_text(value)}{space}{unit}")
        else:
            lines.append(f"{label}: {value_text(value)}")
    return tuple(lines)


def moment_text(moment: datetime.datetime) -> str:
    """An aware moment in its own zone with the offset: "2026-10-12 14:03 CEST (UTC+02:00)"."""
    offset = moment.strftime("%z")
    offset = f"{offset[:3]}:{offset[3:]}" if offset else ""
    return f"{moment:%Y-%m-%d %H:%M} {moment.tzname() or ''} (UTC{offset})".replace("  ", " ")


def day_text(day: datetime.date | None, missing: str = "not recorded") -> str:
    return day.isoformat() if day is not None else missing
