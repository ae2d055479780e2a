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


def _inspection_text(entry: Mapping[str, object]) -> str:
    """A visual inspection: "no defects observed" or its defects, then how it was looked at."""
    if entry.get("no_defects"):
        seen = "no defects observed"
    else:
        parts = []
        for defect in entry.get("defects") or []:
            if not isinstance(defect, Mapping):
                continue
            name = str(defect.get("defect", "")).replace("_", " ")
            where = ", ".join(str(defect[k]) for k in ("zone", "extent") if defect.get(k))
            grades = ", ".join(
                f"{k} {defect[k]}"
                for k in ("quantity", "size", "intensity")
                if defect.get(k) not in (None, "")
            )
            parts.append(
                " ".join(
                    x
                    for x in (name, f"({where})" if where else "", f"[{grades}]" if grades else "")
                    if x
                )
            )
        seen = "; ".join(parts) or "defects recorded"
    how = ", ".join(
        str(entry[k]) for k in ("lighting", "background", "magnification") if entry.get(k)
    )
    return f"{seen} ({how})" if how else seen


def _comparison_text(entry: Mapping[str, object]) -> str:
    new, worse = entry.get("new_defects") or [], entry.get("worsened") or []
    if not new and not worse:
        return "no new or worsened defects against the initial inspection"
    parts = []
    if new:
        parts.append("new: " + ", ".join(value_text(x) for x in new))
    if worse:
        parts.append("worsened: " + ", ".join(value_text(x) for x in worse))
    return "; ".join(parts)


def _spectral_text(entry: Mapping[str, object]) -> str:
    band = entry.get("band_nm") or []
    band_text = f" {number_text(band[0])}-{number_text(band[1])} nm" if len(band) == 2 else ""
    unit = str(entry.get("unit") or "")
    value = entry.get("value")
    text = (
        f"{entry.get('quantity', '')} {entry.get('statistic', '')}{band_text}: "
        f"{value_text(value)} {unit}".strip()
    )
    uncertainty = entry.get("expanded_uncertainty")
    if uncertainty not in (None, ""):
        text += f" (U = {value_text(uncertainty)} {unit})".rstrip()
    return " ".join(text.split())


# Keys whose structure the bench entry defines; anything else is shown generically.
_SHAPED = {
    "inspection": lambda v: (
        f"inspection: {_inspection_text(v)}" if isinstance(v, Mapping) else None
    ),
    "comparison": lambda v: _comparison_text(v) if isinstance(v, Mapping) else None,
    "spectral": lambda v: (
        "; ".join(_spectral_text(x) for x in v if isinstance(x, Mapping))
        if isinstance(v, list)
        else None
    ),
}


def values_lines(values: Mapping[str, object]) -> tuple[str, ...]:
    """A result's entered values, one "label: value unit" line each; empty values left out."""
    lines = []
    for key, value in values.items():
        if value is None or value == "" or value == [] or value == {}:
            continue
        shaped = _SHAPED.get(str(key))
        text = shaped(value) if shaped is not None else None
        if text:
            lines.append(text)
            continue
        label, unit = label_and_unit(str(key))
        if isinstance(value, Mapping) and "value" in value:
            lines.append(f"{label}: {value_text(value)}")
        elif (
            unit
            and isinstance(value, int | float | decimal.Decimal)
            and not isinstance(value, bool)
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
