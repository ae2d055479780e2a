"""Band figures of a spectrum, conformance to a coating spec's limits, change after a test.

Conventions (each result carries its own `convention` string):

* The curve between samples is the straight line through them (linear
  interpolation); where no sample falls on a band edge, the value there is
  interpolated. This is the reading the band average, the extremes and the
  before/after difference all share.
* Band average, default "trapezoid": the trapezoid integral of that curve over
  [start, end] divided by (end - start) (shared/reference/computations.md, Optics
  [pub]). "sample-mean" is the plain mean of the samples inside the band
  (edges included); it differs on uneven sampling and is offered because some
  labs report it.
* Minimum and maximum in the band: extremes of that curve over the band, i.e.
  among the samples inside the band and the interpolated band-edge values.
* Refined extremum: the vertex of the parabola through the extreme sample and its
  two neighbours in the data [practice]; refused at the data's edge, at an
  interpolated band edge, or where the sample is not a turning point.
* Conformance: a value equal to the limit conforms. Units are compared like with
  like; a fraction is converted to % (x100) or back, and the result says so.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
import numpy.typing as npt

from durability.errors import InputError
from durability.spectra.importers import Quantity, Spectrum, Unit, convert_value

AverageMethod = Literal["trapezoid", "sample-mean"]
ExtremumKind = Literal["minimum", "maximum"]
Statistic = Literal["average", "minimum", "maximum"]
Comparison = Literal["<=", ">="]

AVERAGE_METHODS: tuple[AverageMethod, ...] = ("trapezoid", "sample-mean")

# Band edges closer than this to the data's first or last sample count as inside:
# the importers round wavelengths to 1e-6 nm.
_EDGE_SLACK_NM = 1e-6

_CURVE_CONVENTION = (
    "linear interpolation between samples; the value at a band edge is interpolated when no "
    "sample falls there"
)
_AVERAGE_CONVENTIONS = {
    "trapezoid": "trapezoid integral over the band divided by its width; " + _CURVE_CONVENTION,
    "sample-mean": "plain mean of the samples inside the band (edges included); "
    "no weighting by spacing",
}
_EXTREMES_CONVENTION = (
    "extremes of the piecewise-linear curve over the band: samples inside the band and the "
    "interpolated band-edge values"
)
_REFINE_CONVENTION = (
    "vertex of the parabola through the extreme sample and its two neighbours in the data"
)


@dataclass(frozen=True)
class Band:
    """A wavelength band [start_nm, end_nm], start below end."""

    start_nm: float
    end_nm: float

    def __post_init__(self) -> None:
        if not (math.isfinite(self.start_nm) and math.isfinite(self.end_nm)):
            raise InputError(f"band {self.start_nm}:{self.end_nm} nm is not a pair of numbers")
        if not self.start_nm < self.end_nm:
            raise InputError(
                f"band {self.start_nm:g}:{self.end_nm:g} nm: the start must be below the end"
            )
        if self.start_nm <= 0:
            raise InputError(f"band start {self.start_nm:g} nm is not a positive wavelength")

    @classmethod
    def parse(cls, text: str) -> Band:
        """Read "400:700" (nm; decimal point or comma)."""
        match = re.fullmatch(r"\s*([0-9]+(?:[.,][0-9]*)?)\s*:\s*([0-9]+(?:[.,][0-9]*)?)\s*", text)
        if not match:
            raise InputError(f"band {text!r} is not START:END in nm, e.g. 400:700")
        start, end = (float(g.replace(",", ".")) for g in match.groups())
        return cls(start, end)

    @property
    def label(self) -> str:
        """The band as people write it: "400-700 nm"."""
        return f"{self.start_nm:g}-{self.end_nm:g} nm"


@dataclass(frozen=True)
class RefinedExtremum:
    """Parabola vertex near an extreme sample."""

    wavelength_nm: float
    value: float
    samples_nm: tuple[float, float, float]
    convention: str = _REFINE_CONVENTION


@dataclass(frozen=True)
class Extremum:
    """The minimum or maximum of the curve in a band, and where.

    `at_band_edge` is True when the extreme is an interpolated band-edge value rather
    than a sample. `refined` is None when refinement was refused; `refinement_note`
    says why (or what was done).
    """

    kind: ExtremumKind
    value: float
    wavelength_nm: float
    at_band_edge: bool
    refined: RefinedExtremum | None
    refinement_note: str


@dataclass(frozen=True)
class BandAnalysis:
    """Band average, minimum and maximum of one spectrum, in the spectrum's unit."""

    band: Band
    unit: Unit
    quantity: Quantity | None
    average: float
    average_method: AverageMethod
    average_convention: str
    samples_in_band: int
    minimum: Extremum
    maximum: Extremum
    extremes_convention: str = _EXTREMES_CONVENTION
    notes: tuple[str, ...] = ()

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready form (used by the spectrum command and the report)."""
        return {
            "band_nm": [self.band.start_nm, self.band.end_nm],
            "unit": self.unit,
            "quantity": self.quantity,
            "band_average": self.average,
            "average_method": self.average_method,
            "minimum": self.minimum.value,
            "wavelength_of_minimum_nm": self.minimum.wavelength_nm,
            "maximum": self.maximum.value,
            "wavelength_of_maximum_nm": self.maximum.wavelength_nm,
            "refined_minimum": _refined_dict(self.minimum),
            "refined_maximum": _refined_dict(self.maximum),
            "samples_in_band": self.samples_in_band,
            "convention": {
                "average": self.average_convention,
                "extremes": self.extremes_convention,
                "refinement": _REFINE_CONVENTION,
            },
            "notes": list(self.notes),
        }


def _refined_dict(extremum: Extremum) -> dict[str, Any]:
    refined = extremum.refined
    return {
        "wavelength_nm": refined.wavelength_nm if refined else None,
        "value": refined.value if refined else None,
        "note": extremum.refinement_note,
    }


def _arrays(spectrum: Spectrum) -> tuple[npt.NDArray[np.float64], npt.NDArray[np.float64]]:
    return (
        np.asarray(spectrum.wavelength_nm, dtype=float),
        np.asarray(spectrum.values, dtype=float),
    )


def check_band_in_data(spectrum: Spectrum, band: Band) -> None:
    """Refuse a band that reaches outside the measured wavelengths."""
    first, last = spectrum.first_nm, spectrum.last_nm
    if band.start_nm < first - _EDGE_SLACK_NM or band.end_nm > last + _EDGE_SLACK_NM:
        side = (
            f"start {band.start_nm:g} nm is below the first sample"
            if band.start_nm < first - _EDGE_SLACK_NM
            else f"end {band.end_nm:g} nm is above the last sample"
        )
        raise InputError(
            f"band {band.label} reaches outside the data ({first:g}-{last:g} nm): {side}; "
            "values outside the measured range are not extrapolated"
        )


def band_curve(
    spectrum: Spectrum, band: Band
) -> tuple[npt.NDArray[np.float64], npt.NDArray[np.float64], npt.NDArray[np.bool_]]:
    """The curve over the band: samples inside plus interpolated edge values.

    Returns wavelengths, values and a mask that is True for real samples (False for
    interpolated edge points).
    """
    check_band_in_data(spectrum, band)
    w, v = _arrays(spectrum)
    start = max(band.start_nm, float(w[0]))
    end = min(band.end_nm, float(w[-1]))
    inside = (w >= start) & (w <= end)
    xs = list(w[inside])
    ys = list(v[inside])
    real = [True] * len(xs)
    if not xs or xs[0] > start:
        xs.insert(0, start)
        ys.insert(0, float(np.interp(start, w, v)))
        real.insert(0, False)
    if xs[-1] < end:
        xs.append(end)
        ys.append(float(np.interp(end, w, v)))
        real.append(False)
    return np.asarray(xs), np.asarray(ys), np.asarray(real, dtype=bool)


def trapezoid_integral(xs: Sequence[float], ys: Sequence[float]) -> float:
    """Sum of (x[i+1] - x[i]) * (y[i] + y[i+1]) / 2 over consecutive samples."""
    total = 0.0
    for i in range(len(xs) - 1):
        total += (xs[i + 1] - xs[i]) * (ys[i] + ys[i + 1]) / 2.0
    return total


def band_average(
    spectrum: Spectrum, band: Band, *, method: AverageMethod = "trapezoid"
) -> tuple[float, str]:
    """Average of the spectrum over the band, in its unit, with the convention used."""
    if method not in AVERAGE_METHODS:
        raise InputError(f"average method {method!r} is not one of {', '.join(AVERAGE_METHODS)}")
    xs, ys, real = band_curve(spectrum, band)
    if method == "trapezoid":
        width = float(xs[-1] - xs[0])
        return trapezoid_integral(xs.tolist(), ys.tolist()) / width, _AVERAGE_CONVENTIONS[method]
    samples = ys[real]
    if samples.size == 0:
        raise InputError(
            f"no sample falls inside {band.label}; a sample mean needs at least one "
            "(use the trapezoid average)"
        )
    return float(samples.mean()), _AVERAGE_CONVENTIONS[method]


def parabola_vertex(
    xs: tuple[float, float, float], ys: tuple[float, float, float]
) -> tuple[float, float, float]:
    """Vertex (x, y) and leading coefficient a of the parabola through three points.

    Uses divided differences, so uneven spacing is fine. Raises InputError when the
    x values repeat or the three points are on a straight line.
    """
    x0, x1, x2 = xs
    y0, y1, y2 = ys
    if not (x0 < x1 < x2):
        raise InputError(f"parabola needs three increasing wavelengths, got {xs}")
    d01 = (y1 - y0) / (x1 - x0)
    d12 = (y2 - y1) / (x2 - x1)
    a = (d12 - d01) / (x2 - x0)
    if a == 0 or not math.isfinite(a):
        raise InputError(
            f"the samples at {x0:g}, {x1:g} and {x2:g} nm lie on a straight line: no vertex"
        )
    vertex = (x0 + x1) / 2.0 - d01 / (2.0 * a)
    value = y0 + d01 * (vertex - x0) + a * (vertex - x0) * (vertex - x1)
    return vertex, value, a


def refine_extremum(spectrum: Spectrum, index: int, kind: ExtremumKind) -> RefinedExtremum:
    """Refine the extreme sample at `index` by the parabola through it and its neighbours.

    Refused (InputError) when the sample is the first or last of the data, or when it
    is not a turning point of the kind asked (a neighbour lies beyond it).
    """
    w, v = spectrum.wavelength_nm, spectrum.values
    if not 0 <= index < len(w):
        raise InputError(f"sample index {index} is outside the data (0-{len(w) - 1})")
    if index == 0 or index == len(w) - 1:
        where = "first" if index == 0 else "last"
        raise InputError(
            f"the {kind} is the {where} sample of the data ({w[index]:g} nm): a parabola needs "
            "a sample on each side; measure a wider range to locate it"
        )
    ys = (v[index - 1], v[index], v[index + 1])
    xs = (w[index - 1], w[index], w[index + 1])
    turning = ys[1] <= min(ys[0], ys[2]) if kind == "minimum" else ys[1] >= max(ys[0], ys[2])
    if not turning:
        raise InputError(
            f"the sample at {w[index]:g} nm is not a {kind} of the data (a neighbour lies "
            "beyond it): no turning point to refine"
        )
    vertex, value, a = parabola_vertex(xs, ys)
    if (kind == "minimum" and a < 0) or (kind == "maximum" and a > 0):
        raise InputError(f"the parabola at {w[index]:g} nm opens the wrong way for a {kind}")
    return RefinedExtremum(vertex, value, xs)


def _extremum(
    spectrum: Spectrum,
    band: Band,
    xs: npt.NDArray[np.float64],
    ys: npt.NDArray[np.float64],
    real: npt.NDArray[np.bool_],
    kind: ExtremumKind,
) -> tuple[Extremum, str | None]:
    target = ys.min() if kind == "minimum" else ys.max()
    ties = np.flatnonzero(ys == target)
    # A real sample wins over an interpolated edge of the same value.
    chosen = next((int(i) for i in ties if real[i]), int(ties[0]))
    tie_note = None
    if len(ties) > 1:
        tie_note = (
            f"{len(ties)} points share the {kind} {float(target):g}; "
            f"the one at {float(xs[chosen]):g} nm is reported"
        )
    wavelength = float(xs[chosen])
    if not real[chosen]:
        note = (
            f"the {kind} in {band.label} is at the band edge {wavelength:g} nm (interpolated, "
            "the curve continues beyond the band): no turning point to refine"
        )
        return Extremum(kind, float(target), wavelength, True, None, note), tie_note
    index = spectrum.wavelength_nm.index(wavelength)
    try:
        refined = refine_extremum(spectrum, index, kind)
    except InputError as exc:
        return Extremum(kind, float(target), wavelength, False, None, str(exc)), tie_note
    note = f"{_REFINE_CONVENTION} ({', '.join(f'{x:g}' for x in refined.samples_nm)} nm)"
    if not band.start_nm <= refined.wavelength_nm <= band.end_nm:
        note += f"; the vertex {refined.wavelength_nm:g} nm lies just outside {band.label}"
    return Extremum(kind, float(target), wavelength, False, refined, note), tie_note


def analyze_band(
    spectrum: Spectrum, band: Band, *, average_method: AverageMethod = "trapezoid"
) -> BandAnalysis:
    """Band average, minimum and maximum (with parabola refinement) of one spectrum.

    Values are in the spectrum's own unit. Refuses a band outside the data.
    """
    average, convention = band_average(spectrum, band, method=average_method)
    xs, ys, real = band_curve(spectrum, band)
    minimum, min_note = _extremum(spectrum, band, xs, ys, real, "minimum")
    maximum, max_note = _extremum(spectrum, band, xs, ys, real, "maximum")
    notes = [n for n in (min_note, max_note) if n]
    samples = int(real.sum())
    if samples < 3:
        notes.append(
            f"only {samples} sample(s) inside {band.label}: the figures rest on few points"
        )
    if spectrum.unit_inferred:
        notes.append(
            f"the unit {spectrum.unit} was inferred from the values, not read from the file"
        )
    return BandAnalysis(
        band=band,
        unit=spectrum.unit,
        quantity=spectrum.quantity,
        average=average,
        average_method=average_method,
        average_convention=convention,
        samples_in_band=samples,
        minimum=minimum,
        maximum=maximum,
        notes=tuple(notes),
    )


# --- conformance ----------------------------------------------------------------


@dataclass(frozen=True)
class SpectralLimit:
    """One optical requirement of a coating spec, e.g. "R average <= 0.5 % over 450-650 nm".

    `statistic` is which band figure is limited; `comparison` "<=" is an upper limit,
    ">=" a lower one; `limit` is in `unit`. `text` keeps the wording it came from.
    """

    band: Band
    quantity: Quantity
    statistic: Statistic
    comparison: Comparison
    limit: float
    unit: Unit
    text: str = ""

    def __post_init__(self) -> None:
        if self.quantity not in ("R", "T"):
            raise InputError(f"limit quantity {self.quantity!r} is not R or T")
        if self.statistic not in ("average", "minimum", "maximum"):
            raise InputError(
                f"limit statistic {self.statistic!r} is not average, minimum or maximum"
            )
        if self.comparison not in ("<=", ">="):
            raise InputError(f"limit comparison {self.comparison!r} is not <= or >=")
        if self.unit not in ("%", "fraction"):
            raise InputError(f"limit unit {self.unit!r} is not % or fraction")
        if not math.isfinite(self.limit):
            raise InputError(f"limit value {self.limit!r} is not a number")

    @property
    def label(self) -> str:
        """Short wording: "R average <= 0.5 % over 450-650 nm"."""
        unit = " %" if self.unit == "%" else " (fraction)"
        return (
            f"{self.quantity} {self.statistic} {self.comparison} {self.limit:g}{unit} "
            f"over {self.band.label}"
        )


@dataclass(frozen=True)
class LimitCheck:
    """A spectrum checked against one limit.

    `measured` is in the limit's unit; `margin` is how far inside the limit it is
    (negative when outside), in that unit. `unit_note` states any conversion.
    """

    limit: SpectralLimit
    measured: float
    unit: Unit
    wavelength_nm: float | None
    conforms: bool
    margin: float
    unit_note: str
    convention: str
    reason: str

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready form."""
        return {
            "limit": self.limit.label,
            "measured": self.measured,
            "unit": self.unit,
            "wavelength_nm": self.wavelength_nm,
            "conforms": self.conforms,
            "margin": self.margin,
            "unit_note": self.unit_note,
            "convention": self.convention,
            "reason": self.reason,
        }


def check_limit(
    spectrum: Spectrum,
    limit: SpectralLimit,
    *,
    average_method: AverageMethod = "trapezoid",
) -> LimitCheck:
    """Check a spectrum against one limit; a value equal to the limit conforms."""
    if spectrum.quantity is None:
        raise InputError(
            f"the spectrum does not say whether it is R or T; state the quantity on import "
            f"before checking it against {limit.label}"
        )
    if spectrum.quantity != limit.quantity:
        raise InputError(
            f"the limit {limit.label} is on {limit.quantity} but the spectrum is "
            f"{spectrum.quantity}"
        )
    analysis = analyze_band(spectrum, limit.band, average_method=average_method)
    wavelength: float | None
    if limit.statistic == "average":
        raw, wavelength = analysis.average, None
        convention = analysis.average_convention
    else:
        extremum = analysis.minimum if limit.statistic == "minimum" else analysis.maximum
        raw, wavelength = extremum.value, extremum.wavelength_nm
        convention = analysis.extremes_convention
    convention += "; a value equal to the limit conforms"
    measured = convert_value(raw, spectrum.unit, limit.unit)
    unit_note = ""
    if spectrum.unit != limit.unit:
        unit_note = (
            f"spectrum in {spectrum.unit}, limit in {limit.unit}: the measured value "
            f"{raw:g} {spectrum.unit} was converted to {measured:g} {limit.unit} "
            f"({'x100' if limit.unit == '%' else '/100'})"
        )
    if spectrum.unit_inferred:
        unit_note = (unit_note + "; " if unit_note else "") + (
            f"the spectrum's unit {spectrum.unit} was inferred from its values"
        )
    if limit.comparison == "<=":
        conforms = measured <= limit.limit
        margin = limit.limit - measured
    else:
        conforms = measured >= limit.limit
        margin = measured - limit.limit
    unit_text = "%" if limit.unit == "%" else "(fraction)"
    where = f" at {wavelength:g} nm" if wavelength is not None else ""
    reason = (
        f"{limit.quantity} {limit.statistic} over {limit.band.label} is {measured:.4g} "
        f"{unit_text}{where}; limit {limit.comparison} {limit.limit:g} {unit_text}: "
        + ("conforms" if conforms else "does not conform")
    )
    return LimitCheck(
        limit=limit,
        measured=measured,
        unit=limit.unit,
        wavelength_nm=wavelength,
        conforms=conforms,
        margin=margin,
        unit_note=unit_note,
        convention=convention,
        reason=reason,
    )


def check_limits(
    spectrum: Spectrum,
    limits: Sequence[SpectralLimit],
    *,
    average_method: AverageMethod = "trapezoid",
) -> list[LimitCheck]:
    """Check a spectrum against each limit in turn."""
    return [check_limit(spectrum, limit, average_method=average_method) for limit in limits]


# --- change after a test ----------------------------------------------------------


@dataclass(frozen=True)
class SpectralChange:
    """How a spectrum changed between before and after a test, over one band.

    All values are in `unit`. `average_change` and `extremum_shift_nm` are after
    minus before. `max_abs_difference` is the largest |after - before| over the
    band on the common grid (the union of both sample sets and the band edges, both
    curves linearly interpolated), found at `wavelength_of_max_difference_nm`.
    `extremum_shift_nm` uses the refined wavelengths when both refinements
    succeeded, else the sample wavelengths; `extremum_basis` says which.
    """

    band: Band
    unit: Unit
    quantity: Quantity | None
    before: BandAnalysis
    after: BandAnalysis
    average_change: float
    max_abs_difference: float
    wavelength_of_max_difference_nm: float
    extremum: ExtremumKind
    extremum_shift_nm: float
    extremum_basis: str
    grid_convention: str
    notes: tuple[str, ...] = field(default=())

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready form."""
        return {
            "band_nm": [self.band.start_nm, self.band.end_nm],
            "unit": self.unit,
            "quantity": self.quantity,
            "band_average_before": self.before.average,
            "band_average_after": self.after.average,
            "band_average_change": self.average_change,
            "max_abs_difference": self.max_abs_difference,
            "wavelength_of_max_difference_nm": self.wavelength_of_max_difference_nm,
            "extremum": self.extremum,
            "extremum_shift_nm": self.extremum_shift_nm,
            "extremum_basis": self.extremum_basis,
            "convention": {
                "average": self.before.average_convention,
                "grid": self.grid_convention,
            },
            "notes": list(self.notes),
        }


def compare_spectra(
    before: Spectrum,
    after: Spectrum,
    band: Band,
    *,
    extremum: ExtremumKind = "minimum",
    unit: Unit | None = None,
    average_method: AverageMethod = "trapezoid",
) -> SpectralChange:
    """Change of a spectrum after a test: band averages, largest difference, extremum shift.

    Both spectra are expressed in `unit` (default: the before spectrum's), converting
    explicitly. Refuses R against T, and a band outside either spectrum.
    """
    if extremum not in ("minimum", "maximum"):
        raise InputError(f"extremum {extremum!r} is not minimum or maximum")
    notes: list[str] = []
    if before.quantity and after.quantity and before.quantity != after.quantity:
        raise InputError(
            f"the before spectrum is {before.quantity} and the after spectrum is "
            f"{after.quantity}: they cannot be compared"
        )
    if (before.quantity is None) != (after.quantity is None):
        notes.append("only one of the two spectra states R or T")
    target: Unit = unit or before.unit
    for name, spectrum in (("before", before), ("after", after)):
        if spectrum.unit != target:
            notes.append(
                f"{name} spectrum converted from {spectrum.unit} to {target} "
                f"({'x100' if target == '%' else '/100'})"
            )
        if spectrum.unit_inferred:
            notes.append(f"{name} spectrum's unit was inferred from its values")
    b = before.in_unit(target)
    a = after.in_unit(target)
    for name, spectrum in (("before", b), ("after", a)):
        try:
            check_band_in_data(spectrum, band)
        except InputError as exc:
            raise InputError(f"{name} spectrum: {exc}") from exc
    before_analysis = analyze_band(b, band, average_method=average_method)
    after_analysis = analyze_band(a, band, average_method=average_method)

    bx, by, _ = band_curve(b, band)
    ax, ay, _ = band_curve(a, band)
    grid = np.union1d(bx, ax)
    # The difference of two piecewise-linear curves is piecewise linear with knots on
    # this grid, so its largest magnitude is found exactly at one of these points.
    difference = np.interp(grid, ax, ay) - np.interp(grid, bx, by)
    worst = int(np.argmax(np.abs(difference)))

    before_ext = before_analysis.minimum if extremum == "minimum" else before_analysis.maximum
    after_ext = after_analysis.minimum if extremum == "minimum" else after_analysis.maximum
    if before_ext.refined and after_ext.refined:
        shift = after_ext.refined.wavelength_nm - before_ext.refined.wavelength_nm
        basis = "refined (parabola) wavelengths of both spectra"
    else:
        shift = after_ext.wavelength_nm - before_ext.wavelength_nm
        basis = "sample wavelengths (refinement refused for at least one spectrum)"
        notes.extend(
            f"{name}: {ext.refinement_note}"
            for name, ext in (("before", before_ext), ("after", after_ext))
            if ext.refined is None
        )
    return SpectralChange(
        band=band,
        unit=target,
        quantity=before.quantity or after.quantity,
        before=before_analysis,
        after=after_analysis,
        average_change=after_analysis.average - before_analysis.average,
        max_abs_difference=float(abs(difference[worst])),
        wavelength_of_max_difference_nm=float(grid[worst]),
        extremum=extremum,
        extremum_shift_nm=shift,
        extremum_basis=basis,
        grid_convention=(
            "union of both sample sets inside the band plus the band edges; each curve "
            "linearly interpolated onto it"
        ),
        notes=tuple(notes),
    )
