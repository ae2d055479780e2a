"""Dew point and frost point of chamber air by the Magnus formula.

The use is condensation risk: a part colder than the chamber air's dew point gets wet when it is
loaded into a hot humid chamber.

Magnus form (shared/reference/computations.md [pub]): the saturation vapour pressure over water
is e_s(T) = C·exp(a·T/(b + T)), so for air at T with relative humidity RH

    γ = ln(RH/100) + a·T/(b + T),   T_d = b·γ/(a − γ).

Coefficients over water: a = 17.625, b = 243.04 °C (Alduchov and Eskridge 1996, the default) or
a = 17.62, b = 243.12 °C (WMO / Sonntag 1990), valid roughly from −45 to +60 °C. Outside that
range this module raises InputError rather than extrapolate: the air temperature and the dew
point must both lie in it.

Below 0 °C moisture deposits as frost, so when the dew point is below 0 °C the frost point is
also given, from the over-ice pair a = 22.46, b = 272.62 °C (shared/reference/computations.md
[mem]). RH is taken relative to water, as meteorology and hygrometers state it; the vapour
pressure e = RH/100·e_w(T) is then set equal to the ice saturation pressure. The prefactor C is
taken equal over water and ice (6.112 hPa in the WMO set, from memory), which lets it cancel;
with the Alduchov-Eskridge water pair (whose C is 6.1094 hPa, from memory) that shifts the frost
point by less than 0.01 K.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from durability.errors import InputError

__all__ = [
    "ALDUCHOV_ESKRIDGE_1996",
    "COEFFICIENTS",
    "DEFAULT_COEFFICIENTS",
    "OVER_ICE",
    "VALID_RANGE_C",
    "WMO_SONNTAG_1990",
    "DewPoint",
    "MagnusCoefficients",
    "dew_point",
]


@dataclass(frozen=True)
class MagnusCoefficients:
    """One (a, b) pair of the Magnus formula with where it comes from."""

    key: str
    a: float
    b_c: float
    source: str

    @property
    def label(self) -> str:
        """The pair as text for output and reports."""
        return f"{self.source}: a = {self.a:g}, b = {self.b_c:g} °C"


# shared/reference/computations.md, dew point (Magnus form) [pub].
ALDUCHOV_ESKRIDGE_1996 = MagnusCoefficients(
    "alduchov-eskridge-1996", 17.625, 243.04, "Alduchov and Eskridge 1996, over water"
)
WMO_SONNTAG_1990 = MagnusCoefficients(
    "wmo-sonntag-1990", 17.62, 243.12, "WMO / Sonntag 1990, over water"
)
# shared/reference/computations.md [mem]: recalled, not checked against a printed source.
OVER_ICE = MagnusCoefficients("over-ice", 22.46, 272.62, "over ice, from memory")

COEFFICIENTS: dict[str, MagnusCoefficients] = {
    pair.key: pair for pair in (ALDUCHOV_ESKRIDGE_1996, WMO_SONNTAG_1990)
}
DEFAULT_COEFFICIENTS = ALDUCHOV_ESKRIDGE_1996
VALID_RANGE_C: tuple[float, float] = (-45.0, 60.0)


@dataclass(frozen=True)
class DewPoint:
    """Dew point (over water) and, below 0 °C, frost point (over ice) of air."""

    temperature_c: float
    rh_percent: float
    dew_point_c: float
    frost_point_c: float | None
    coefficients: MagnusCoefficients
    ice_coefficients: MagnusCoefficients | None
    notes: tuple[str, ...] = ()

    @property
    def condensation_point_c(self) -> float:
        """The surface temperature below which moisture deposits: frost point or dew point."""
        return self.frost_point_c if self.frost_point_c is not None else self.dew_point_c

    def condenses_on(self, surface_c: float) -> bool:
        """True when a surface at ``surface_c`` is below the condensation point (gets wet)."""
        surface = _finite(surface_c, "surface temperature")
        return surface < self.condensation_point_c

    def as_dict(self) -> dict[str, object]:
        """JSON-ready values."""
        return {
            "temperature_c": self.temperature_c,
            "rh_percent": self.rh_percent,
            "dew_point_c": self.dew_point_c,
            "frost_point_c": self.frost_point_c,
            "coefficients": self.coefficients.label,
            "coefficients_key": self.coefficients.key,
            "ice_coefficients": self.ice_coefficients.label if self.ice_coefficients else None,
            "valid_range_c": list(VALID_RANGE_C),
            "notes": list(self.notes),
        }


def _finite(value: float, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise InputError(f"{what}: {value!r} is not a finite number")
    return float(value)


def _pair(coefficients: MagnusCoefficients | str) -> MagnusCoefficients:
    if isinstance(coefficients, MagnusCoefficients):
        return coefficients
    try:
        return COEFFICIENTS[coefficients]
    except KeyError:
        raise InputError(f"coefficients {coefficients!r}: use {', '.join(COEFFICIENTS)}") from None


def dew_point(
    temperature_c: float,
    rh_percent: float,
    *,
    coefficients: MagnusCoefficients | str = DEFAULT_COEFFICIENTS,
    frost_point: bool = True,
) -> DewPoint:
    """Dew point of air at ``temperature_c`` and ``rh_percent`` by the Magnus formula.

    ``coefficients`` is a :class:`MagnusCoefficients` or its key (``alduchov-eskridge-1996``,
    the default, or ``wmo-sonntag-1990``). When the dew point is below 0 °C and ``frost_point``
    is set, the frost point over ice is added. Raises InputError for RH outside 0 < RH <= 100
    and for an air temperature or dew point outside the formula's range of -45 to +60 °C.
    """
    temperature = _finite(temperature_c, "temperature")
    rh = _finite(rh_percent, "relative humidity")
    pair = _pair(coefficients)
    low, high = VALID_RANGE_C
    if not 0.0 < rh <= 100.0:
        raise InputError(f"relative humidity {rh:g} % must be above 0 and at most 100 %")
    if not low <= temperature <= high:
        raise InputError(
            f"temperature {temperature:g} °C is outside the Magnus formula's range of "
            f"{low:g} to {high:g} °C; no extrapolation"
        )
    gamma = math.log(rh / 100.0) + pair.a * temperature / (pair.b_c + temperature)
    # Saturated air is at its dew point; taking it exactly keeps rounding off the range check.
    dew = temperature if rh == 100.0 else pair.b_c * gamma / (pair.a - gamma)
    if dew < low:
        raise InputError(
            f"the dew point of {temperature:g} °C air at {rh:g} % RH ({dew:.1f} °C) is below the "
            f"Magnus formula's range of {low:g} to {high:g} °C; no extrapolation"
        )
    notes = [f"Magnus formula, {pair.label}; valid from {low:g} to {high:g} °C"]
    frost: float | None = None
    ice: MagnusCoefficients | None = None
    if dew < 0.0 and frost_point:
        ice = OVER_ICE
        frost = ice.b_c * gamma / (ice.a - gamma)
        notes.append(
            f"the dew point is below 0 °C, so moisture deposits as frost: frost point by the "
            f"Magnus pair {ice.label}; RH taken relative to water"
        )
    return DewPoint(
        temperature_c=temperature,
        rh_percent=rh,
        dew_point_c=dew,
        frost_point_c=frost,
        coefficients=pair,
        ice_coefficients=ice,
        notes=tuple(notes),
    )
