"""Verify a chamber exposure against a method's condition from the data logger's readings.

The rules (shared/reference/computations.md, "Chamber exposure verification", [practice] unless
marked):

- A reading is in tolerance when its temperature and, if the condition has a humidity range, its
  relative humidity are both inside the limits after the sensor's calibration correction. Limits
  are inclusive and are not widened by the measurement uncertainty.
- Time in tolerance is counted under a stated convention: linear interpolation between readings
  with exact crossing times (default), or zero-order hold (each reading stands until the next;
  the last reading covers no time). They give different answers on the same log.
- A spacing between readings longer than twice the logging interval (the median spacing unless
  given) is a gap; the whole gap counts out of tolerance.
- Excursions are listed with start, end, duration, worst values and direction: less severe or
  more severe than the condition. By default a higher temperature and a higher humidity are the
  more severe side (a damp-heat test); a cold test turns the temperature side round.
- The required duration is cumulative or continuous (a method parameter). The exposure counts
  when the time in tolerance (cumulative) or the longest run (continuous) reaches the required
  hours; a stated exposure time without tolerance is a minimum (ISO 9022 [pub]).
- ISO 9022: exposure starts only once every part of the specimen is within 3 K of the chamber
  temperature [pub]. With ``start_when_stable`` the count starts at the first instant the
  corrected chamber temperature is within that band of the set point; the log measures the
  chamber, so the specimen's own lag is the lab's to allow for.
"""

from __future__ import annotations

import bisect
import math
import statistics
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import datetime, timedelta
from enum import StrEnum
from typing import Protocol, TypeVar

from durability.errors import InputError

__all__ = [
    "CheckedReading",
    "DurationRule",
    "Excursion",
    "ExposureCondition",
    "ExposureVerification",
    "Interpolation",
    "Reading",
    "Run",
    "SensorCorrection",
    "SevereSide",
    "WorstValue",
    "verify_exposure",
]

ISO_9022_NOTE = (
    "ISO 9022: exposure starts only once every part of the specimen is within 3 K of the chamber "
    "temperature (per shared/reference/test-methods.md [pub]); the log measures the chamber, "
    "not the specimen, so the specimen's own lag must be allowed for by the lab"
)
NO_DATA = "no data"

_E = TypeVar("_E", bound=StrEnum)


class Reading(Protocol):
    """What the check needs from one logger reading (durability.exposure.logger.Sample)."""

    @property
    def time(self) -> datetime: ...

    @property
    def temperature_c(self) -> float: ...

    @property
    def rh_percent(self) -> float | None: ...

    @property
    def line(self) -> int | None: ...


class Interpolation(StrEnum):
    """How time in tolerance is counted between two readings."""

    INTERPOLATED = "interpolated"
    HOLD = "hold"

    @property
    def sentence(self) -> str:
        """The convention as a sentence for output and reports."""
        if self is Interpolation.INTERPOLATED:
            return (
                "linear interpolation between readings: time in tolerance runs to the exact "
                "instants where the interpolated values cross a limit"
            )
        return (
            "zero-order hold: each reading stands until the next one; the last reading covers "
            "no time"
        )


class DurationRule(StrEnum):
    """Whether the required hours must be one unbroken run or may add up."""

    CONTINUOUS = "continuous"
    CUMULATIVE = "cumulative"


class SevereSide(StrEnum):
    """Which side of a limit makes the test harder on the piece."""

    HIGHER = "higher"
    LOWER = "lower"


def _finite(value: float, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise InputError(f"{what}: {value!r} is not a finite number")
    return float(value)


@dataclass(frozen=True)
class ExposureCondition:
    """The chamber condition a method asks for: a temperature band and an optional RH band.

    ``temperature_setpoint_c`` is needed for the start-when-stable rule and is shown in output.
    Either RH limit may be None (no limit on that side); with both None humidity is not checked.
    """

    temperature_min_c: float
    temperature_max_c: float
    rh_min_percent: float | None = None
    rh_max_percent: float | None = None
    temperature_setpoint_c: float | None = None
    temperature_severe_side: SevereSide = SevereSide.HIGHER
    rh_severe_side: SevereSide = SevereSide.HIGHER

    def __post_init__(self) -> None:
        low = _finite(self.temperature_min_c, "temperature minimum")
        high = _finite(self.temperature_max_c, "temperature maximum")
        if low > high:
            raise InputError(f"temperature minimum {low} °C is above the maximum {high} °C")
        if self.temperature_setpoint_c is not None:
            setpoint = _finite(self.temperature_setpoint_c, "temperature set point")
            if not low <= setpoint <= high:
                raise InputError(
                    f"temperature set point {setpoint} °C is outside its band {low} to {high} °C"
                )
        for value, what in ((self.rh_min_percent, "RH minimum"), (self.rh_max_percent, "RH max")):
            if value is not None:
                checked = _finite(value, what)
                if not 0.0 <= checked <= 100.0:
                    raise InputError(f"{what} {checked} % is outside 0 to 100 %")
        if (
            self.rh_min_percent is not None
            and self.rh_max_percent is not None
            and self.rh_min_percent > self.rh_max_percent
        ):
            raise InputError(
                f"RH minimum {self.rh_min_percent} % is above the maximum {self.rh_max_percent} %"
            )

    @classmethod
    def from_setpoint(
        cls,
        setpoint_c: float,
        tolerance_k: float,
        *,
        rh_min_percent: float | None = None,
        rh_max_percent: float | None = None,
        temperature_severe_side: SevereSide = SevereSide.HIGHER,
        rh_severe_side: SevereSide = SevereSide.HIGHER,
    ) -> ExposureCondition:
        """A condition written as set point ± tolerance, e.g. 49 ± 2 °C at 95-100 % RH."""
        setpoint = _finite(setpoint_c, "temperature set point")
        tolerance = _finite(tolerance_k, "temperature tolerance")
        if tolerance < 0:
            raise InputError(f"temperature tolerance {tolerance} K is negative")
        return cls(
            temperature_min_c=setpoint - tolerance,
            temperature_max_c=setpoint + tolerance,
            rh_min_percent=rh_min_percent,
            rh_max_percent=rh_max_percent,
            temperature_setpoint_c=setpoint,
            temperature_severe_side=temperature_severe_side,
            rh_severe_side=rh_severe_side,
        )

    @property
    def checks_humidity(self) -> bool:
        """True when the condition limits RH on at least one side."""
        return self.rh_min_percent is not None or self.rh_max_percent is not None

    def describe(self) -> str:
        """The condition in words, e.g. '47 to 51 °C (set point 49 °C), 95 to 100 % RH'."""
        text = f"{self.temperature_min_c:g} to {self.temperature_max_c:g} °C"
        if self.temperature_setpoint_c is not None:
            text += f" (set point {self.temperature_setpoint_c:g} °C)"
        if self.checks_humidity:
            low = "" if self.rh_min_percent is None else f"{self.rh_min_percent:g}"
            high = "" if self.rh_max_percent is None else f"{self.rh_max_percent:g}"
            if low and high:
                text += f", {low} to {high} % RH"
            elif low:
                text += f", at least {low} % RH"
            else:
                text += f", at most {high} % RH"
        return text

    def as_dict(self) -> dict[str, object]:
        """JSON-ready values."""
        return {
            "temperature_min_c": self.temperature_min_c,
            "temperature_max_c": self.temperature_max_c,
            "temperature_setpoint_c": self.temperature_setpoint_c,
            "rh_min_percent": self.rh_min_percent,
            "rh_max_percent": self.rh_max_percent,
            "temperature_severe_side": self.temperature_severe_side.value,
            "rh_severe_side": self.rh_severe_side.value,
            "text": self.describe(),
        }


@dataclass(frozen=True)
class SensorCorrection:
    """The logger sensor's calibration correction: corrected = gain × raw + offset.

    An offset alone is the usual form on a calibration certificate; gain and offset together are
    a linear correction. Temperatures in °C (offset in K), humidity in % RH.
    """

    temperature_offset_k: float = 0.0
    temperature_gain: float = 1.0
    rh_offset_percent: float = 0.0
    rh_gain: float = 1.0

    def __post_init__(self) -> None:
        _finite(self.temperature_offset_k, "temperature correction offset")
        _finite(self.rh_offset_percent, "RH correction offset")
        for gain, what in ((self.temperature_gain, "temperature"), (self.rh_gain, "RH")):
            if _finite(gain, f"{what} correction gain") <= 0:
                raise InputError(f"{what} correction gain {gain} must be above zero")

    def temperature(self, raw_c: float) -> float:
        """Corrected temperature in °C."""
        return self.temperature_gain * raw_c + self.temperature_offset_k

    def rh(self, raw_percent: float) -> float:
        """Corrected relative humidity in %."""
        return self.rh_gain * raw_percent + self.rh_offset_percent

    @property
    def is_identity(self) -> bool:
        """True when the correction changes nothing."""
        return (
            self.temperature_offset_k == 0.0
            and self.temperature_gain == 1.0
            and self.rh_offset_percent == 0.0
            and self.rh_gain == 1.0
        )

    def describe(self) -> str:
        """The correction as formulas."""
        if self.is_identity:
            return "no sensor correction (corrected values equal the logged values)"
        return (
            f"T = {self.temperature_gain:g} × T_logged {self.temperature_offset_k:+g} K; "
            f"RH = {self.rh_gain:g} × RH_logged {self.rh_offset_percent:+g} %"
        )

    def as_dict(self) -> dict[str, object]:
        """JSON-ready values."""
        return {
            "temperature_offset_k": self.temperature_offset_k,
            "temperature_gain": self.temperature_gain,
            "rh_offset_percent": self.rh_offset_percent,
            "rh_gain": self.rh_gain,
            "text": self.describe(),
        }


@dataclass(frozen=True)
class CheckedReading:
    """One reading with its logged and corrected values and whether it is in tolerance."""

    time: datetime
    line: int | None
    temperature_raw_c: float
    temperature_c: float
    rh_raw_percent: float | None
    rh_percent: float | None
    in_tolerance: bool
    violations: tuple[str, ...]

    def as_dict(self) -> dict[str, object]:
        """JSON-ready values."""
        return {
            "time": self.time.isoformat(),
            "line": self.line,
            "temperature_raw_c": self.temperature_raw_c,
            "temperature_c": self.temperature_c,
            "rh_raw_percent": self.rh_raw_percent,
            "rh_percent": self.rh_percent,
            "in_tolerance": self.in_tolerance,
            "violations": list(self.violations),
        }


@dataclass(frozen=True)
class WorstValue:
    """The value farthest outside a limit during an excursion, logged and corrected."""

    quantity: str  # "temperature" or "humidity"
    time: datetime
    raw: float
    corrected: float
    limit: float
    beyond: float  # how far past the limit (K or % RH), positive
    direction: str  # "less severe" or "more severe"

    def as_dict(self) -> dict[str, object]:
        """JSON-ready values."""
        return {
            "quantity": self.quantity,
            "time": self.time.isoformat(),
            "raw": self.raw,
            "corrected": self.corrected,
            "limit": self.limit,
            "beyond": self.beyond,
            "direction": self.direction,
        }


@dataclass(frozen=True)
class Excursion:
    """A stretch out of tolerance: values outside the limits, or a gap in the log."""

    start: datetime
    end: datetime
    duration_hours: float
    causes: tuple[str, ...]  # "temperature high/low", "humidity high/low", "no data"
    worst: tuple[WorstValue, ...]
    direction: str  # "less severe", "more severe", "mixed" or "unknown (no data)"

    def as_dict(self) -> dict[str, object]:
        """JSON-ready values."""
        return {
            "start": self.start.isoformat(),
            "end": self.end.isoformat(),
            "duration_hours": round(self.duration_hours, 6),
            "duration_minutes": round(self.duration_hours * 60, 4),
            "causes": list(self.causes),
            "direction": self.direction,
            "worst": [value.as_dict() for value in self.worst],
        }


@dataclass(frozen=True)
class Run:
    """An unbroken stretch in tolerance."""

    start: datetime
    end: datetime
    hours: float

    def as_dict(self) -> dict[str, object]:
        """JSON-ready values."""
        return {
            "start": self.start.isoformat(),
            "end": self.end.isoformat(),
            "hours": round(self.hours, 6),
        }


@dataclass(frozen=True)
class ExposureVerification:
    """The outcome of checking one chamber run's log against its condition.

    ``counts`` is the answer the verdict code uses: a chamber run whose exposure does not count
    cannot give a pass. ``over_test`` is True when any excursion was more severe than the
    condition (stop and evaluate; a retest on new pieces is preferred).
    """

    counts: bool
    in_tolerance_hours: float
    longest_run_hours: float
    required_hours: float
    duration_rule: DurationRule
    convention: Interpolation
    exposure_start: datetime | None
    exposure_end: datetime
    exposure_hours: float
    runs: tuple[Run, ...]
    excursions: tuple[Excursion, ...]
    readings: tuple[CheckedReading, ...]
    logging_interval_s: float
    gap_threshold_s: float
    condition: ExposureCondition
    correction: SensorCorrection
    over_test: bool
    notes: tuple[str, ...] = field(default=())

    @property
    def longest_run(self) -> Run | None:
        """The longest run in tolerance (the first one on a tie)."""
        if not self.runs:
            return None
        return max(self.runs, key=lambda run: run.hours)

    def as_dict(self, *, include_readings: bool = False) -> dict[str, object]:
        """JSON-ready values; the readings (logged and corrected) only when asked for."""
        longest = self.longest_run
        result: dict[str, object] = {
            "counts": self.counts,
            "in_tolerance_hours": round(self.in_tolerance_hours, 6),
            "longest_run_hours": round(self.longest_run_hours, 6),
            "longest_run": longest.as_dict() if longest is not None else None,
            "required_hours": self.required_hours,
            "duration_rule": self.duration_rule.value,
            "convention": self.convention.value,
            "convention_text": self.convention.sentence,
            "exposure_start": self.exposure_start.isoformat() if self.exposure_start else None,
            "exposure_end": self.exposure_end.isoformat(),
            "exposure_hours": round(self.exposure_hours, 6),
            "over_test": self.over_test,
            "excursions": [excursion.as_dict() for excursion in self.excursions],
            "runs": [run.as_dict() for run in self.runs],
            "logging_interval_s": self.logging_interval_s,
            "gap_threshold_s": self.gap_threshold_s,
            "condition": self.condition.as_dict(),
            "correction": self.correction.as_dict(),
            "notes": list(self.notes),
        }
        if include_readings:
            result["readings"] = [reading.as_dict() for reading in self.readings]
        return result


# ---------------------------------------------------------------- the timeline


@dataclass(frozen=True)
class _Piece:
    start: float  # seconds after the first reading
    end: float
    ok: bool
    causes: frozenset[str]


@dataclass(frozen=True)
class _Series:
    """Readings as plain lists, times in seconds after the first reading."""

    origin: datetime
    seconds: list[float]
    t_raw: list[float]
    t: list[float]
    h_raw: list[float | None]
    h: list[float | None]

    def at(self, k: int, s: float, values: Sequence[float | None]) -> float | None:
        """Value of a series between readings k and k+1 at fraction s (linear)."""
        a, b = values[k], values[k + 1] if k + 1 < len(values) else None
        if a is None:
            return None
        if b is None or s == 0.0:
            return a
        return a + (b - a) * s

    def time(self, second: float) -> datetime:
        return self.origin + timedelta(seconds=second)


def _violations(t: float, h: float | None, condition: ExposureCondition) -> frozenset[str]:
    found = set()
    if t < condition.temperature_min_c:
        found.add("temperature low")
    elif t > condition.temperature_max_c:
        found.add("temperature high")
    if h is not None:
        if condition.rh_min_percent is not None and h < condition.rh_min_percent:
            found.add("humidity low")
        elif condition.rh_max_percent is not None and h > condition.rh_max_percent:
            found.add("humidity high")
    return frozenset(found)


def _allowed(f0: float, f1: float, low: float, high: float) -> tuple[float, float] | None:
    """Fractions s in [0, 1] where f0 + (f1 - f0)·s lies in [low, high] (one interval)."""
    slope = f1 - f0
    if slope == 0.0:
        return (0.0, 1.0) if low <= f0 <= high else None
    s_low = (low - f0) / slope
    s_high = (high - f0) / slope
    if s_low > s_high:
        s_low, s_high = s_high, s_low
    s_low, s_high = max(0.0, s_low), min(1.0, s_high)
    return (s_low, s_high) if s_low <= s_high else None


def _segment_window(
    series: _Series, k: int, condition: ExposureCondition
) -> tuple[float, float] | None:
    """Fractions of segment k where every limit holds under linear interpolation."""
    window = _allowed(
        series.t[k], series.t[k + 1], condition.temperature_min_c, condition.temperature_max_c
    )
    h0, h1 = series.h[k], series.h[k + 1]
    if window is not None and condition.checks_humidity and h0 is not None and h1 is not None:
        low = -math.inf if condition.rh_min_percent is None else condition.rh_min_percent
        high = math.inf if condition.rh_max_percent is None else condition.rh_max_percent
        humidity = _allowed(h0, h1, low, high)
        if humidity is None:
            return None
        start, end = max(window[0], humidity[0]), min(window[1], humidity[1])
        window = (start, end) if start <= end else None
    return window


def _pieces(
    series: _Series,
    condition: ExposureCondition,
    convention: Interpolation,
    gap_threshold: float,
) -> list[_Piece]:
    pieces: list[_Piece] = []
    seconds = series.seconds
    for k in range(len(seconds) - 1):
        a, b = seconds[k], seconds[k + 1]
        span = b - a
        if span > gap_threshold:
            pieces.append(_Piece(a, b, False, frozenset({NO_DATA})))
            continue
        at_start = _violations(series.t[k], series.h[k], condition)
        if convention is Interpolation.HOLD:
            pieces.append(_Piece(a, b, not at_start, at_start))
            continue
        at_end = _violations(series.t[k + 1], series.h[k + 1], condition)
        window = _segment_window(series, k, condition)
        if window is None:
            pieces.append(_Piece(a, b, False, at_start | at_end | _mid(series, k, 0, 1, condition)))
            continue
        s_in, s_out = window
        cross_in, cross_out = a + s_in * span, a + s_out * span
        if s_in > 0.0:
            causes = at_start | _mid(series, k, 0.0, s_in, condition)
            pieces.append(_Piece(a, cross_in, False, causes))
        pieces.append(_Piece(cross_in, cross_out if s_out < 1.0 else b, True, frozenset()))
        if s_out < 1.0:
            causes = at_end | _mid(series, k, s_out, 1.0, condition)
            pieces.append(_Piece(cross_out, b, False, causes))
    return pieces


def _mid(
    series: _Series, k: int, s0: float, s1: float, condition: ExposureCondition
) -> frozenset[str]:
    s = (s0 + s1) / 2
    t = series.at(k, s, series.t)
    assert t is not None  # temperatures are never missing
    return _violations(t, series.at(k, s, series.h), condition)


def _clip(pieces: Sequence[_Piece], start: float, end: float) -> list[_Piece]:
    clipped = []
    for piece in pieces:
        a, b = max(piece.start, start), min(piece.end, end)
        if b > a:
            clipped.append(_Piece(a, b, piece.ok, piece.causes))
    return clipped


def _merge(pieces: Sequence[_Piece]) -> list[_Piece]:
    merged: list[_Piece] = []
    for piece in pieces:
        if piece.end <= piece.start:
            continue
        if merged and merged[-1].ok == piece.ok and merged[-1].end >= piece.start:
            last = merged[-1]
            merged[-1] = _Piece(last.start, piece.end, last.ok, last.causes | piece.causes)
        else:
            merged.append(piece)
    return merged


def _stable_start(
    series: _Series,
    setpoint: float,
    band_k: float,
    convention: Interpolation,
    gap_threshold: float,
    not_before: float,
) -> float | None:
    """First instant (seconds) at or after not_before when |T - set point| <= band_k."""
    low, high = setpoint - band_k, setpoint + band_k
    seconds = series.seconds
    last = len(seconds) - 1
    for k, a in enumerate(seconds):
        b = seconds[k + 1] if k < last else a
        if b < not_before:
            continue
        span = b - a
        bridged = k < last and span <= gap_threshold
        if bridged and convention is Interpolation.INTERPOLATED:
            window = _allowed(series.t[k], series.t[k + 1], low, high)
            s_from = max(0.0, (not_before - a) / span)
            if window is not None and window[1] >= s_from:
                return a + max(window[0], s_from) * span
        elif low <= series.t[k] <= high:
            if a >= not_before:
                return a
            if bridged:
                return not_before  # the held reading already stands when the window opens
    return None


# ---------------------------------------------------------------- excursions


def _direction(cause: str, condition: ExposureCondition) -> str:
    if cause == NO_DATA:
        return "unknown"
    quantity, side = cause.split()
    severe = (
        condition.temperature_severe_side if quantity == "temperature" else condition.rh_severe_side
    )
    harder = (side == "high") == (severe is SevereSide.HIGHER)
    return "more severe" if harder else "less severe"


def _excursion_direction(causes: frozenset[str], condition: ExposureCondition) -> str:
    directions = {_direction(cause, condition) for cause in causes} - {"unknown"}
    if not directions:
        return "unknown (no data)"
    if len(directions) == 2:
        return "mixed"
    return directions.pop()


def _worst(
    series: _Series,
    piece: _Piece,
    condition: ExposureCondition,
    convention: Interpolation,
) -> tuple[WorstValue, ...]:
    # Candidates: readings inside the excursion and the values at its two ends. Under linear
    # interpolation the extremes of the interpolated curve lie among these points.
    points: list[tuple[float, float, float, float | None, float | None]] = []
    seconds = series.seconds
    hold = convention is Interpolation.HOLD
    for k, second in enumerate(seconds):
        inside = piece.start <= second < piece.end if hold else piece.start <= second <= piece.end
        if inside:
            points.append((second, series.t_raw[k], series.t[k], series.h_raw[k], series.h[k]))
    # Under hold the value just before the end belongs to a reading already counted.
    for edge in (piece.start,) if hold else (piece.start, piece.end):
        value = _value_at(series, edge, hold)
        if value is not None:
            points.append(value)
    found: list[WorstValue] = []
    found.extend(_worst_of(points, "temperature", condition, series))
    if condition.checks_humidity:
        found.extend(_worst_of(points, "humidity", condition, series))
    return tuple(found)


def _value_at(
    series: _Series, second: float, hold: bool
) -> tuple[float, float, float, float | None, float | None] | None:
    seconds = series.seconds
    if second < seconds[0] or second > seconds[-1]:
        return None
    k = bisect.bisect_right(seconds, second) - 1
    if k == len(seconds) - 1 or hold:
        return (second, series.t_raw[k], series.t[k], series.h_raw[k], series.h[k])
    s = (second - seconds[k]) / (seconds[k + 1] - seconds[k])
    t_raw, t = series.at(k, s, series.t_raw), series.at(k, s, series.t)
    assert t_raw is not None and t is not None
    return (second, t_raw, t, series.at(k, s, series.h_raw), series.at(k, s, series.h))


def _worst_of(
    points: Sequence[tuple[float, float, float, float | None, float | None]],
    quantity: str,
    condition: ExposureCondition,
    series: _Series,
) -> list[WorstValue]:
    if quantity == "temperature":
        low: float | None = condition.temperature_min_c
        high: float | None = condition.temperature_max_c
    else:
        low, high = condition.rh_min_percent, condition.rh_max_percent
    best: tuple[float, float, float, float, float, str] | None = None
    for second, t_raw, t, h_raw, h in points:
        raw, value = (t_raw, t) if quantity == "temperature" else (h_raw, h)
        if raw is None or value is None:
            continue
        if low is not None and value < low:
            beyond, limit, side = low - value, low, "low"
        elif high is not None and value > high:
            beyond, limit, side = value - high, high, "high"
        else:
            continue
        if best is None or beyond > best[0]:
            best = (beyond, second, raw, value, limit, side)
    if best is None:
        return []
    beyond, second, raw, value, limit, side = best
    return [
        WorstValue(
            quantity=quantity,
            time=series.time(second),
            raw=raw,
            corrected=value,
            limit=limit,
            beyond=beyond,
            direction=_direction(f"{quantity} {side}", condition),
        )
    ]


# ---------------------------------------------------------------- the check


def _series(
    samples: Sequence[Reading], condition: ExposureCondition, correction: SensorCorrection
) -> _Series:
    if len(samples) < 2:
        raise InputError(
            f"an exposure check needs at least two readings; the log has {len(samples)}"
        )
    origin = samples[0].time
    seconds: list[float] = []
    t_raw: list[float] = []
    h_raw: list[float | None] = []
    previous: datetime | None = None
    for index, sample in enumerate(samples):
        where = f"line {sample.line}" if sample.line is not None else f"reading {index + 1}"
        if not isinstance(sample.time, datetime) or sample.time.utcoffset() is None:
            raise InputError(f"{where}: the time has no time zone (readings must be in UTC)")
        if previous is not None and sample.time <= previous:
            raise InputError(f"{where}: the time is not later than the reading before it")
        previous = sample.time
        temperature = _finite(sample.temperature_c, f"{where}: temperature")
        humidity = sample.rh_percent
        if humidity is not None:
            humidity = _finite(humidity, f"{where}: humidity")
        elif condition.checks_humidity:
            raise InputError(
                f"{where}: no humidity reading, but the condition has an RH range "
                f"({condition.describe()})"
            )
        seconds.append((sample.time - origin).total_seconds())
        t_raw.append(temperature)
        h_raw.append(humidity)
    return _Series(
        origin=origin,
        seconds=seconds,
        t_raw=t_raw,
        t=[correction.temperature(value) for value in t_raw],
        h_raw=h_raw,
        h=[None if value is None else correction.rh(value) for value in h_raw],
    )


def _option(value: str, kind: type[_E], what: str) -> _E:
    try:
        return kind(value)
    except ValueError:
        choices = ", ".join(str(member) for member in kind)
        raise InputError(f"{what} {value!r}: use {choices}") from None


def _hours(seconds: float) -> float:
    return seconds / 3600.0


def verify_exposure(
    samples: Sequence[Reading],
    condition: ExposureCondition,
    *,
    required_hours: float,
    duration_rule: DurationRule | str = DurationRule.CUMULATIVE,
    interpolation: Interpolation | str = Interpolation.INTERPOLATED,
    correction: SensorCorrection | None = None,
    start_when_stable: bool = False,
    stable_within_k: float = 3.0,
    window_start: datetime | None = None,
    window_end: datetime | None = None,
    logging_interval: timedelta | None = None,
) -> ExposureVerification:
    """Check a chamber log against an exposure condition and the required hours.

    ``samples`` are readings in time order with aware datetimes (the logger import's samples).
    ``window_start``/``window_end`` limit the check to the chamber run (loading to unloading);
    time inside the window without readings counts as a gap. ``logging_interval`` overrides the
    median spacing used for the gap rule. With ``start_when_stable`` the exposure starts at the
    first instant the corrected temperature is within ``stable_within_k`` of the set point
    (ISO 9022's 3 K rule); the condition then needs a set point.

    Raises InputError for readings or parameters that cannot be checked.
    """
    rule = _option(duration_rule, DurationRule, "duration rule")
    convention = _option(interpolation, Interpolation, "interpolation")
    correction = correction if correction is not None else SensorCorrection()
    required = _finite(required_hours, "required hours")
    if required <= 0:
        raise InputError(f"required hours {required} must be above zero")
    band = _finite(stable_within_k, "stable band")
    if band < 0:
        raise InputError(f"stable band {band} K is negative")
    if start_when_stable and condition.temperature_setpoint_c is None:
        raise InputError("start when stable needs the condition's temperature set point")

    series = _series(samples, condition, correction)
    seconds = series.seconds
    spacings = [b - a for a, b in zip(seconds, seconds[1:], strict=False)]
    if logging_interval is not None:
        interval = logging_interval.total_seconds()
        if not interval > 0:
            raise InputError(f"logging interval {logging_interval} must be above zero")
        interval_source = "as given"
    else:
        interval = statistics.median(spacings)
        interval_source = "the median spacing of the readings"
    gap_threshold = 2.0 * interval

    start = seconds[0]
    end = seconds[-1]
    for moment, what in ((window_start, "window start"), (window_end, "window end")):
        if moment is not None and (not isinstance(moment, datetime) or moment.utcoffset() is None):
            raise InputError(f"{what} must be a date and time with a time zone")
    if window_start is not None:
        start = (window_start - series.origin).total_seconds()
    if window_end is not None:
        end = (window_end - series.origin).total_seconds()
    if end <= start:
        raise InputError("the exposure window ends before it starts")

    notes: list[str] = [
        f"convention: {convention.value} ({convention.sentence})",
        "limits are inclusive and are not widened by the measurement uncertainty, which is "
        "reported separately",
        f"logging interval {interval / 60:g} min ({interval_source}); a spacing longer than "
        f"{gap_threshold / 60:g} min is a gap and counts out of tolerance",
        f"sensor correction: {correction.describe()}",
        ISO_9022_NOTE,
    ]

    pieces = _pieces(series, condition, convention, gap_threshold)
    if start < seconds[0]:
        pieces.insert(0, _Piece(start, seconds[0], False, frozenset({NO_DATA})))
    if end > seconds[-1]:
        pieces.append(_Piece(seconds[-1], end, False, frozenset({NO_DATA})))

    exposure_start: float | None = start
    if start_when_stable:
        assert condition.temperature_setpoint_c is not None
        exposure_start = _stable_start(
            series, condition.temperature_setpoint_c, band, convention, gap_threshold, start
        )
        if exposure_start is None or exposure_start >= end:
            notes.append(
                f"start when stable: the corrected temperature never came within {band:g} K of "
                f"the set point {condition.temperature_setpoint_c:g} °C; no exposure is counted"
            )
            exposure_start = None
        else:
            stable_at = f"{series.time(exposure_start):%Y-%m-%d %H:%M:%S} UTC"
            notes.append(
                f"start when stable: exposure counted from {stable_at}, the first instant "
                f"within {band:g} K of the set point {condition.temperature_setpoint_c:g} °C; "
                f"the {_hours(exposure_start - start):.3g} h before it are not counted"
            )
    else:
        notes.append("exposure counted from the start of the window (start when stable is off)")

    merged = _merge(_clip(pieces, exposure_start, end)) if exposure_start is not None else []
    runs = tuple(
        Run(series.time(p.start), series.time(p.end), _hours(p.end - p.start))
        for p in merged
        if p.ok
    )
    excursions = tuple(
        Excursion(
            start=series.time(p.start),
            end=series.time(p.end),
            duration_hours=_hours(p.end - p.start),
            causes=tuple(sorted(p.causes)),
            worst=_worst(series, p, condition, convention),
            direction=_excursion_direction(p.causes, condition),
        )
        for p in merged
        if not p.ok
    )
    in_tolerance_s = sum(p.end - p.start for p in merged if p.ok)
    longest_s = max((p.end - p.start for p in merged if p.ok), default=0.0)
    achieved_s = longest_s if rule is DurationRule.CONTINUOUS else in_tolerance_s
    # Compared to the millisecond so float sums of crossing times do not decide a verdict.
    counts = round(achieved_s * 1000) >= round(required * 3600 * 1000)
    what = "longest continuous run" if rule is DurationRule.CONTINUOUS else "time in tolerance"
    notes.append(
        f"{rule.value}: {what} {_hours(achieved_s):.4g} h against {required:g} h required: "
        f"{'counts' if counts else 'does not count'}"
    )
    over_test = any(e.direction in {"more severe", "mixed"} for e in excursions)
    if over_test:
        notes.append(
            "an excursion was more severe than the condition (over-test): stop and evaluate; a "
            "retest on new pieces is preferred (MIL-STD-810-style practice, per "
            "shared/reference/computations.md [pub])"
        )
    elif excursions:
        notes.append(
            "excursions were less severe than the condition or gaps (under-test): the usual "
            "practice is to restore the condition and extend the exposure (MIL-STD-810-style, "
            "per shared/reference/computations.md [pub])"
        )

    readings = tuple(
        CheckedReading(
            time=sample.time,
            line=sample.line,
            temperature_raw_c=series.t_raw[k],
            temperature_c=series.t[k],
            rh_raw_percent=series.h_raw[k],
            rh_percent=series.h[k],
            in_tolerance=not _violations(series.t[k], series.h[k], condition),
            violations=tuple(sorted(_violations(series.t[k], series.h[k], condition))),
        )
        for k, sample in enumerate(samples)
    )
    exposure_s = end - exposure_start if exposure_start is not None else 0.0
    return ExposureVerification(
        counts=counts,
        in_tolerance_hours=_hours(in_tolerance_s),
        longest_run_hours=_hours(longest_s),
        required_hours=required,
        duration_rule=rule,
        convention=convention,
        exposure_start=series.time(exposure_start) if exposure_start is not None else None,
        exposure_end=series.time(end),
        exposure_hours=_hours(exposure_s),
        runs=runs,
        excursions=excursions,
        readings=readings,
        logging_interval_s=interval,
        gap_threshold_s=gap_threshold,
        condition=condition,
        correction=correction,
        over_test=over_test,
        notes=tuple(notes),
    )
