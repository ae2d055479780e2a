"""Band average, extremes, parabola refinement, conformance and change after a test.

Outside references: numpy.trapezoid and scipy.integrate.trapezoid (the trapezoid
rule), hand-worked integrals, the parabola vertex formula x = -b / 2a with
numpy.polyfit, the quarter-wave formula R = ((n0 ns - n1^2) / (n0 ns + n1^2))^2 and
tmm.coh_tmm (shared/reference/computations.md, Optics [pub]).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import scipy.integrate
import tmm
from hypothesis import given, settings
from hypothesis import strategies as st

from durability.errors import InputError
from durability.spectra import (
    Band,
    SpectralLimit,
    Spectrum,
    analyze_band,
    band_average,
    check_limit,
    check_limits,
    compare_spectra,
    parabola_vertex,
    read_spectrum,
    refine_extremum,
)

SAMPLES = Path(__file__).resolve().parents[2] / "fixtures" / "instrument-files" / "spectra"


def spectrum(xs, ys, unit="%", quantity="R") -> Spectrum:
    return Spectrum(
        tuple(float(x) for x in xs), tuple(float(y) for y in ys), unit, quantity, "test"
    )


def quarter_wave_r(n0: float, n1: float, ns: float) -> float:
    """Textbook single quarter-wave layer at its design wavelength, normal incidence
    (shared/reference/computations.md, Optics [pub])."""
    return ((n0 * ns - n1**2) / (n0 * ns + n1**2)) ** 2


def tmm_curve(wavelengths, n_film=1.38, design_nm=550.0, ns=1.52) -> list[float]:
    """Reference library: tmm.coh_tmm, normal incidence, air / film / glass."""
    d = design_nm / (4 * 1.38)
    return [
        tmm.coh_tmm("s", [1.0, n_film, ns], [math.inf, d, math.inf], 0.0, lam)["R"]
        for lam in wavelengths
    ]


# --- band average --------------------------------------------------------------------


def test_band_average_hand_worked_with_samples_on_the_edges() -> None:
    # Hand-worked: (400,1) (500,3) (600,2): integral = 100*(1+3)/2 + 100*(3+2)/2 = 450;
    # 450 / 200 = 2.25. The plain mean of the samples is 2.0: they differ.
    s = spectrum([400, 500, 600], [1, 3, 2])
    assert band_average(s, Band(400, 600))[0] == pytest.approx(2.25)
    assert band_average(s, Band(400, 600), method="sample-mean")[0] == pytest.approx(2.0)


def test_band_average_hand_worked_with_interpolated_edges() -> None:
    # Hand-worked: edges interpolated, R(450) = 2, R(550) = 2.5;
    # integral = 50*(2+3)/2 + 50*(3+2.5)/2 = 125 + 137.5 = 262.5; / 100 = 2.625.
    s = spectrum([400, 500, 600], [1, 3, 2])
    value, convention = band_average(s, Band(450, 550))
    assert value == pytest.approx(2.625)
    assert "trapezoid" in convention and "interpolated" in convention
    assert band_average(s, Band(450, 550), method="sample-mean")[0] == pytest.approx(3.0)


@settings(max_examples=100)
@given(
    steps=st.lists(st.floats(min_value=0.1, max_value=20.0), min_size=2, max_size=60),
    values=st.lists(st.floats(min_value=0.0, max_value=100.0), min_size=61, max_size=61),
)
def test_band_average_equals_numpy_and_scipy_trapezoid_on_uneven_samples(
    steps: list[float], values: list[float]
) -> None:
    xs = np.round(400.0 + np.concatenate([[0.0], np.cumsum(steps)]), 6)
    if np.any(np.diff(xs) <= 0):
        return
    ys = np.asarray(values[: len(xs)])
    s = spectrum(xs, ys)
    width = xs[-1] - xs[0]
    ours = band_average(s, Band(float(xs[0]), float(xs[-1])))[0]
    assert ours == pytest.approx(np.trapezoid(ys, xs) / width, rel=1e-9, abs=1e-9)
    assert ours == pytest.approx(scipy.integrate.trapezoid(ys, xs) / width, rel=1e-9, abs=1e-9)


@settings(max_examples=100)
@given(
    start=st.floats(min_value=0.0, max_value=1.0),
    end=st.floats(min_value=0.0, max_value=1.0),
)
def test_band_average_with_inner_edges_equals_numpy_on_the_interpolated_curve(
    start: float, end: float
) -> None:
    xs = np.array([400.0, 407.0, 431.0, 450.0, 502.0, 530.0, 600.0])
    ys = np.array([4.0, 2.5, 1.0, 0.7, 1.2, 2.2, 3.9])
    lo = 400.0 + 200.0 * min(start, end)
    hi = 400.0 + 200.0 * max(start, end)
    if hi - lo < 1e-3:
        return
    # Reference: numpy.interp for the edges, then numpy.trapezoid.
    inner = xs[(xs > lo) & (xs < hi)]
    grid = np.concatenate([[lo], inner, [hi]])
    expected = np.trapezoid(np.interp(grid, xs, ys), grid) / (hi - lo)
    assert band_average(spectrum(xs, ys), Band(lo, hi))[0] == pytest.approx(expected, rel=1e-12)


def test_a_band_outside_the_data_is_refused() -> None:
    s = spectrum([400, 500, 600], [1, 3, 2])
    with pytest.raises(InputError, match="band 380-600 nm reaches outside the data .*start 380"):
        analyze_band(s, Band(380, 600))
    with pytest.raises(InputError, match="end 700 nm is above the last sample"):
        band_average(s, Band(450, 700))


def test_band_parsing() -> None:
    assert Band.parse("400:700") == Band(400.0, 700.0)
    assert Band.parse(" 412,5 : 687.5 ") == Band(412.5, 687.5)
    with pytest.raises(InputError, match="start must be below the end"):
        Band.parse("700:400")
    with pytest.raises(InputError, match="START:END"):
        Band.parse("400-700")


def test_a_sample_mean_needs_a_sample_in_the_band() -> None:
    s = spectrum([400, 500, 600], [1, 3, 2])
    with pytest.raises(InputError, match="no sample falls inside 510-520 nm"):
        band_average(s, Band(510, 520), method="sample-mean")


# --- extremes and refinement ------------------------------------------------------------


def test_parabola_vertex_on_an_exact_parabola_with_uneven_spacing() -> None:
    # y = 2 (x - 551.3)^2 + 0.8: the vertex formula x = -b / 2a gives 551.3, y 0.8.
    xs = (540.0, 548.0, 557.0)
    ys = tuple(2 * (x - 551.3) ** 2 + 0.8 for x in xs)
    vertex, value, a = parabola_vertex(xs, ys)
    assert vertex == pytest.approx(551.3, abs=1e-9)
    assert value == pytest.approx(0.8, abs=1e-9)
    assert a == pytest.approx(2.0)
    # Cross-check with numpy.polyfit through the same three points.
    b2, b1, _ = np.polyfit(xs, ys, 2)
    assert vertex == pytest.approx(-b1 / (2 * b2), abs=1e-6)


@settings(max_examples=100)
@given(
    a=st.floats(min_value=0.001, max_value=10.0),
    x_vertex=st.floats(min_value=500.0, max_value=600.0),
    c=st.floats(min_value=-5.0, max_value=5.0),
    gaps=st.tuples(
        st.floats(min_value=0.5, max_value=10.0), st.floats(min_value=0.5, max_value=10.0)
    ),
    shift=st.floats(min_value=0.0, max_value=1.0),
)
def test_parabola_vertex_recovers_any_exact_parabola(
    a: float, x_vertex: float, c: float, gaps: tuple[float, float], shift: float
) -> None:
    # Vertex formula: y = a (x - h)^2 + c has its vertex at (h, c).
    x1 = x_vertex + (shift - 0.5) * min(gaps)
    xs = (x1 - gaps[0], x1, x1 + gaps[1])
    ys = tuple(a * (x - x_vertex) ** 2 + c for x in xs)
    vertex, value, _ = parabola_vertex(xs, ys)
    assert vertex == pytest.approx(x_vertex, abs=1e-6)
    assert value == pytest.approx(c, abs=1e-6)


def test_refinement_on_sampled_parabola_through_the_spectrum() -> None:
    xs = np.arange(500.0, 601.0, 5.0)
    ys = 0.004 * (xs - 547.2) ** 2 + 1.1
    result = analyze_band(spectrum(xs, ys), Band(500, 600))
    assert result.minimum.wavelength_nm == 545.0
    assert result.minimum.refined is not None
    assert result.minimum.refined.wavelength_nm == pytest.approx(547.2, abs=1e-9)
    assert result.minimum.refined.value == pytest.approx(1.1, abs=1e-9)
    assert result.maximum.wavelength_nm == 600.0
    assert result.maximum.refined is None
    assert "last sample of the data" in result.maximum.refinement_note


def test_refinement_is_refused_at_the_edge_of_the_data() -> None:
    s = spectrum([400, 450, 500], [3, 2, 1])
    with pytest.raises(
        InputError, match="first sample of the data .*a parabola needs a sample on each side"
    ):
        refine_extremum(s, 0, "maximum")
    with pytest.raises(InputError, match="last sample"):
        refine_extremum(s, 2, "minimum")


def test_refinement_is_refused_where_the_sample_is_not_a_turning_point() -> None:
    s = spectrum([400, 450, 500, 550], [4, 3, 2, 1])
    with pytest.raises(InputError, match="not a minimum of the data"):
        refine_extremum(s, 1, "minimum")


def test_an_extreme_at_an_interpolated_band_edge_is_not_refined() -> None:
    s = spectrum([400, 450, 500, 550, 600], [5, 4, 3, 2, 3])
    result = analyze_band(s, Band(410, 475))
    assert result.minimum.at_band_edge
    assert result.minimum.wavelength_nm == 475.0
    assert result.minimum.value == pytest.approx(3.5)
    assert result.minimum.refined is None
    assert "band edge 475 nm" in result.minimum.refinement_note


def test_an_extreme_sample_on_the_band_edge_is_refined_from_the_data() -> None:
    s = spectrum([400, 450, 500, 550, 600], [5, 4, 2, 4, 5])
    result = analyze_band(s, Band(500, 600))
    assert result.minimum.wavelength_nm == 500.0
    assert not result.minimum.at_band_edge
    assert result.minimum.refined is not None
    assert result.minimum.refined.wavelength_nm == pytest.approx(500.0)


def test_the_quarter_wave_minimum_of_a_tmm_curve_matches_the_textbook_formula() -> None:
    # MgF2-like film (1.38) on glass (1.52), quarter wave at 550 nm, sampled every 5 nm
    # by tmm.coh_tmm; the textbook minimum is ((1*1.52 - 1.38^2) / (1*1.52 + 1.38^2))^2.
    xs = np.arange(400.0, 801.0, 5.0)
    curve = spectrum(xs, tmm_curve(xs), unit="fraction")
    result = analyze_band(curve, Band(400, 800))
    refined = result.minimum.refined
    assert refined is not None
    # R is symmetric in 1/λ, not in λ, so a parabola in λ is off by a little: 0.5 nm.
    assert refined.wavelength_nm == pytest.approx(550.0, abs=0.5)
    assert refined.value == pytest.approx(quarter_wave_r(1.0, 1.38, 1.52), abs=1e-6)


def test_the_sample_witness_minimum_and_its_shift_after_humidity() -> None:
    before = read_spectrum(str(SAMPLES / "witness-before.csv"))
    after = read_spectrum(str(SAMPLES / "witness-after-humidity.csv"))
    band = Band(450, 650)
    b = analyze_band(before, band)
    a = analyze_band(after, band)
    assert b.minimum.refined and a.minimum.refined
    assert b.minimum.refined.wavelength_nm == pytest.approx(550.0, abs=0.5)
    assert b.minimum.refined.value == pytest.approx(100 * quarter_wave_r(1, 1.38, 1.52), abs=2e-4)
    # After: the quarter-wave point moves to n_after * d * 4 = 550 * 1.39 / 1.38 nm, where
    # R is the quarter-wave value for n 1.39 (same formula).
    assert a.minimum.refined.wavelength_nm == pytest.approx(550.0 * 1.39 / 1.38, abs=0.5)
    assert a.minimum.refined.value == pytest.approx(100 * quarter_wave_r(1, 1.39, 1.52), abs=2e-4)


def test_ties_are_reported() -> None:
    s = spectrum([400, 450, 500, 550, 600], [3, 1, 2, 1, 3])
    result = analyze_band(s, Band(400, 600))
    assert result.minimum.wavelength_nm == 450.0
    assert any("2 points share the minimum" in note for note in result.notes)


def test_as_dict_carries_the_conventions() -> None:
    s = spectrum([400, 450, 500, 550, 600], [3, 2, 1, 2, 3])
    data = analyze_band(s, Band(400, 600)).as_dict()
    assert data["wavelength_of_minimum_nm"] == 500.0
    assert data["refined_minimum"]["wavelength_nm"] == pytest.approx(500.0)
    assert "trapezoid" in data["convention"]["average"]
    assert data["unit"] == "%" and data["quantity"] == "R"


# --- conformance --------------------------------------------------------------------------


def ar_sample() -> Spectrum:
    return read_spectrum(str(SAMPLES / "ar-mgf2-header.csv"))


def test_an_average_limit_conforms_or_not() -> None:
    s = ar_sample()
    band = Band(450, 650)
    average = analyze_band(s, band).average
    ok = check_limit(s, SpectralLimit(band, "R", "average", "<=", 1.5, "%"))
    assert ok.conforms and ok.measured == pytest.approx(average)
    assert ok.margin == pytest.approx(1.5 - average)
    assert "conforms" in ok.reason and ok.unit_note == ""
    bad = check_limit(s, SpectralLimit(band, "R", "average", "<=", 1.3, "%"))
    assert not bad.conforms and bad.margin < 0
    assert "does not conform" in bad.reason


def test_a_limit_in_fraction_is_compared_after_an_explicit_conversion() -> None:
    s = ar_sample()
    check = check_limit(s, SpectralLimit(Band(450, 650), "R", "maximum", "<=", 0.02, "fraction"))
    expected = analyze_band(s, Band(450, 650)).maximum
    assert check.unit == "fraction"
    assert check.measured == pytest.approx(expected.value / 100)
    assert check.wavelength_nm == expected.wavelength_nm
    assert "converted" in check.unit_note and "/100" in check.unit_note
    assert check.conforms


def test_a_value_equal_to_the_limit_conforms() -> None:
    flat = spectrum([400, 500, 600], [1.0, 1.0, 1.0], quantity="T")
    checks = check_limits(
        flat,
        [
            SpectralLimit(Band(400, 600), "T", "average", "<=", 1.0, "%"),
            SpectralLimit(Band(400, 600), "T", "minimum", ">=", 1.0, "%"),
        ],
    )
    assert all(c.conforms for c in checks)
    assert all("equal to the limit conforms" in c.convention for c in checks)


def test_a_limit_on_the_other_quantity_or_an_unknown_quantity_is_refused() -> None:
    limit = SpectralLimit(Band(450, 650), "T", "minimum", ">=", 95.0, "%")
    with pytest.raises(InputError, match="is on T but the spectrum is R"):
        check_limit(ar_sample(), limit)
    with pytest.raises(InputError, match="does not say whether it is R or T"):
        check_limit(spectrum([400, 700], [95, 96], quantity=None), limit)


def test_a_malformed_limit_is_refused() -> None:
    with pytest.raises(InputError, match="comparison"):
        SpectralLimit(Band(400, 700), "R", "average", "<", 1.0, "%")  # type: ignore[arg-type]


# --- change after a test ------------------------------------------------------------------


def test_change_after_humidity_against_numpy() -> None:
    before = read_spectrum(str(SAMPLES / "witness-before.csv"))
    after = read_spectrum(str(SAMPLES / "witness-after-humidity.csv"))
    band = Band(450, 650)
    change = compare_spectra(before, after, band)
    xb, yb = np.array(before.wavelength_nm), np.array(before.values)
    xa, ya = np.array(after.wavelength_nm), np.array(after.values)
    inside = (xb >= 450) & (xb <= 650)
    # Reference: numpy.trapezoid on the samples (every 2 nm, band edges on samples).
    expected_change = (
        np.trapezoid(ya[inside], xa[inside]) - np.trapezoid(yb[inside], xb[inside])
    ) / 200.0
    assert change.average_change == pytest.approx(expected_change, rel=1e-12)
    diff = np.abs(ya[inside] - yb[inside])
    assert change.max_abs_difference == pytest.approx(diff.max())
    assert change.wavelength_of_max_difference_nm == xb[inside][np.argmax(diff)]
    # Quarter-wave point moves by 550 * (1.39 / 1.38 - 1) = 3.99 nm.
    assert change.extremum_shift_nm == pytest.approx(550.0 * (1.39 / 1.38 - 1), abs=0.3)
    assert "refined" in change.extremum_basis


def test_change_on_different_grids_uses_the_union_of_samples() -> None:
    before = spectrum([400, 500, 600], [1, 3, 1])
    after = spectrum([400, 450, 600], [1, 1, 1])
    change = compare_spectra(before, after, Band(400, 600), extremum="maximum")
    # On the union grid 400, 450, 500, 600: before 1, 2, 3, 1; after 1, 1, 1, 1.
    assert change.max_abs_difference == pytest.approx(2.0)
    assert change.wavelength_of_max_difference_nm == 500.0


def test_change_converts_units_explicitly_and_refuses_r_against_t() -> None:
    before = spectrum([400, 500, 600], [2, 1, 2])
    after = spectrum([400, 500, 600], [0.02, 0.012, 0.02], unit="fraction")
    change = compare_spectra(before, after, Band(400, 600))
    assert change.unit == "%"
    assert change.average_change == pytest.approx(0.1)
    assert any("after spectrum converted from fraction to %" in n for n in change.notes)
    with pytest.raises(InputError, match="cannot be compared"):
        compare_spectra(before, spectrum([400, 600], [90, 91], quantity="T"), Band(400, 600))
    with pytest.raises(InputError, match="after spectrum: band"):
        compare_spectra(before, spectrum([450, 600], [1, 1]), Band(400, 600))
