"""Checks of durability.optics against textbook values and the reference library tmm."""

from __future__ import annotations

import math

import numpy as np
import pytest
import tmm
from hypothesis import given, settings
from hypothesis import strategies as st

from durability.errors import InputError
from durability.optics import (
    Layer,
    brewster_angle_deg,
    critical_angle_deg,
    feature_shift,
    fresnel,
    multilayer,
    multilayer_unpolarized,
    quarter_wave_layer,
    shift_over_angle_range,
    slab_incoherent,
    surface_reflectance,
)


def _tmm(pol: str, n_list: list[complex], d_list: list[float], angle_deg: float, lam: float):
    """The reference: tmm.coh_tmm with inf thickness for the outer media, angle in radians."""
    return tmm.coh_tmm(pol, n_list, [np.inf, *d_list, np.inf], math.radians(angle_deg), lam)


# --- uncoated surfaces ----------------------------------------------------------------------


def test_it_gives_four_percent_for_glass_of_index_1_5():
    # ((n-1)/(n+1))^2 = (0.5/2.5)^2 = 0.04, textbook; computations.md "Optics" [pub]
    assert surface_reflectance(1.5) == pytest.approx(0.04, abs=1e-15)


def test_surface_reflectance_matches_tmm_bare_interface():
    # tmm reference library, a stack with no films
    for n in (1.38, 1.52, 1.8, 2.35, 4.0):
        ref = _tmm("s", [1.0, n], [], 0.0, 550.0)["R"]
        assert surface_reflectance(n) == pytest.approx(ref, rel=1e-12)


def test_slab_follows_the_incoherent_two_surface_formula():
    # T = 2n/(n^2+1), R = (n-1)^2/(n^2+1); computations.md "Optics" [pub: textbook]
    slab = slab_incoherent(1.5)
    assert slab.transmittance == pytest.approx(3.0 / 3.25)
    assert slab.reflectance == pytest.approx(0.25 / 3.25)
    assert slab.transmittance + slab.reflectance == pytest.approx(1.0)


def test_slab_matches_tmm_incoherent_thick_layer():
    # tmm.inc_tmm with one incoherent ('i') thick layer, reference library
    for n in (1.45, 1.52, 1.9):
        ref = tmm.inc_tmm("s", [1.0, n, 1.0], [np.inf, 1e6, np.inf], ["i", "i", "i"], 0.0, 550.0)
        slab = slab_incoherent(n)
        assert slab.transmittance == pytest.approx(ref["T"], rel=1e-10)
        assert slab.reflectance == pytest.approx(ref["R"], rel=1e-10)


# --- Fresnel ---------------------------------------------------------------------------------


def test_p_reflectance_vanishes_at_the_brewster_angle():
    # tan(theta_B) = n2/n1, R_p = 0; textbook optics, computations.md "Optics" [pub]
    angle = brewster_angle_deg(1.0, 1.52)
    assert angle == pytest.approx(math.degrees(math.atan(1.52)))
    result = fresnel(1.0, 1.52, angle)
    assert result.R_p == pytest.approx(0.0, abs=1e-20)
    assert result.R_s > 0.1


def test_p_reflectance_is_the_square_of_s_at_45_degrees():
    # R_p = R_s^2 at 45°, computations.md "Optics" [pub: textbook]
    for n in (1.33, 1.5, 1.76, 2.4):
        result = fresnel(1.0, n, 45.0)
        assert result.R_p == pytest.approx(result.R_s**2, rel=1e-12)


def test_fresnel_matches_tmm_amplitudes_and_reflectances():
    # tmm reference library, single interface; same sign convention for r_p
    for n1, n2 in ((1.0, 1.5), (1.5, 1.0), (1.0, 2.3), (1.7, 1.33)):
        for angle in (0.0, 10.0, 33.0, 56.0, 75.0, 89.0):
            result = fresnel(n1, n2, angle)
            ref_s = _tmm("s", [n1, n2], [], angle, 500.0)
            ref_p = _tmm("p", [n1, n2], [], angle, 500.0)
            assert result.r_s == pytest.approx(ref_s["r"], abs=1e-12)
            assert result.r_p == pytest.approx(ref_p["r"], abs=1e-12)
            assert result.R_s == pytest.approx(ref_s["R"], abs=1e-12)
            assert result.R_p == pytest.approx(ref_p["R"], abs=1e-12)


def test_it_reports_total_internal_reflection_beyond_the_critical_angle():
    # sin(theta_c) = n2/n1 (textbook); |r| = 1 beyond it; amplitudes checked against tmm
    critical = critical_angle_deg(1.5, 1.0)
    assert critical == pytest.approx(math.degrees(math.asin(1 / 1.5)))
    assert critical_angle_deg(1.0, 1.5) is None
    result = fresnel(1.5, 1.0, 60.0)
    assert result.total_internal_reflection
    assert result.refraction_angle_deg is None
    assert result.R_s == pytest.approx(1.0) and result.R_p == pytest.approx(1.0)
    assert result.r_s == pytest.approx(_tmm("s", [1.5, 1.0], [], 60.0, 500.0)["r"], abs=1e-12)
    assert result.r_p == pytest.approx(_tmm("p", [1.5, 1.0], [], 60.0, 500.0)["r"], abs=1e-12)
    below = fresnel(1.5, 1.0, 30.0)
    assert not below.total_internal_reflection
    # Snell: 1.5 sin 30° = sin theta_t
    assert below.refraction_angle_deg == pytest.approx(math.degrees(math.asin(0.75)))


def test_unpolarized_reflectance_is_the_mean_of_s_and_p():
    # textbook: natural light is an equal incoherent mix of s and p
    result = fresnel(1.0, 1.5, 60.0)
    assert result.R_unpolarized == pytest.approx((result.R_s + result.R_p) / 2)


# --- quarter-wave layer ----------------------------------------------------------------------


def test_quarter_wave_mgf2_on_crown_glass_matches_formula_and_tmm():
    # R = ((n0 ns - n1^2)/(n0 ns + n1^2))^2, d = lambda/(4 n1): computations.md [pub: textbook];
    # cross-checked with tmm.coh_tmm for MgF2 1.38 on glass 1.52 at 550 nm.
    result = quarter_wave_layer(1.38, 1.52, 550.0)
    expected = ((1.52 - 1.38**2) / (1.52 + 1.38**2)) ** 2
    assert result.reflectance == pytest.approx(expected, rel=1e-12)
    assert result.reflectance == pytest.approx(0.0126, abs=1e-4)
    assert result.physical_thickness_nm == pytest.approx(550.0 / (4 * 1.38))
    ref = _tmm("s", [1.0, 1.38, 1.52], [result.physical_thickness_nm], 0.0, 550.0)
    assert result.reflectance == pytest.approx(ref["R"], rel=1e-10)
    ours = multilayer(1.0, [Layer(1.38, result.physical_thickness_nm)], 1.52, 550.0, 0.0, "s")
    assert ours.R == pytest.approx(ref["R"], rel=1e-10)


def test_quarter_wave_of_the_ideal_index_reflects_nothing():
    # n1 = sqrt(n0 ns) zeroes the quarter-wave reflectance (textbook)
    assert quarter_wave_layer(math.sqrt(1.52), 1.52, 600.0).reflectance == pytest.approx(0.0)


# --- angle shift -----------------------------------------------------------------------------


def test_feature_shift_follows_the_formula_and_moves_blue():
    # lambda(theta) = lambda0 sqrt(1 - (n0 sin theta/n_eff)^2), computations.md [pub]
    result = feature_shift(600.0, 20.0, 1.8)
    expected = 600.0 * math.sqrt(1 - (math.sin(math.radians(20.0)) / 1.8) ** 2)
    assert result.wavelength_nm == pytest.approx(expected)
    assert result.shift_nm < 0
    assert "n_eff = 1.8" in result.assumption
    assert result.caution is None


def test_feature_shift_says_the_formula_is_good_to_about_30_degrees():
    # computations.md: "good to about 30°" [pub]
    assert feature_shift(600.0, 30.0, 1.8).caution is None
    assert "30°" in (feature_shift(600.0, 45.0, 1.8).caution or "")


def test_feature_shift_tracks_the_minimum_of_a_quarter_wave_layer_at_small_angles():
    # Independent check with tmm: for one quarter-wave film the minimum moves as
    # lambda0 cos(theta_film) exactly, i.e. the formula with n_eff = n_film (textbook).
    n_film, lam0, angle = 1.38, 550.0, 20.0
    d = lam0 / (4 * n_film)
    grid = np.arange(480.0, 560.0, 0.01)
    reflect = [_tmm("s", [1.0, n_film, 1.52], [d], angle, lam)["R"] for lam in grid]
    minimum = grid[int(np.argmin(reflect))]
    assert feature_shift(lam0, angle, n_film).wavelength_nm == pytest.approx(minimum, abs=0.02)


def test_shift_over_angle_range_spans_the_two_ends():
    # same formula as above at both ends of the range, computations.md [pub]
    result = shift_over_angle_range(800.0, 0.0, 40.0, 2.0, n_eff_source="from the design")
    assert result.wavelength_at_min_nm == pytest.approx(800.0)
    expected = 800.0 * math.sqrt(1 - (math.sin(math.radians(40.0)) / 2.0) ** 2)
    assert result.wavelength_at_max_nm == pytest.approx(expected)
    assert result.shift_nm == pytest.approx(expected - 800.0)
    assert "from the design" in result.assumption
    assert result.caution is not None


def test_shift_refuses_bad_angles_and_indices():
    with pytest.raises(InputError, match="angle_min_deg"):
        shift_over_angle_range(800.0, 40.0, 10.0, 2.0)
    with pytest.raises(InputError, match="n_eff"):
        feature_shift(800.0, 60.0, 0.8)
    with pytest.raises(InputError, match="angle_deg"):
        feature_shift(800.0, 90.0, 1.8)
    with pytest.raises(InputError, match="wavelength0_nm"):
        feature_shift(-5.0, 10.0, 1.8)


# --- multilayer against tmm ------------------------------------------------------------------

real_index = st.floats(1.0, 3.0)
absorbing_index = st.builds(complex, st.floats(1.0, 3.0), st.floats(0.0, 2.0))
film = st.tuples(st.one_of(real_index, absorbing_index), st.floats(0.0, 500.0))


@settings(max_examples=150)
@given(
    films=st.lists(film, max_size=8),
    n_incident=st.floats(1.0, 1.8),
    n_exit=st.one_of(real_index, absorbing_index),
    wavelength=st.floats(250.0, 2000.0),
    angle=st.floats(0.0, 89.0),
    pol=st.sampled_from(["s", "p"]),
)
def test_multilayer_matches_tmm_on_random_stacks(films, n_incident, n_exit, wavelength, angle, pol):
    # reference library tmm (Byrnes, arXiv:1603.02720), coh_tmm: R, T and the amplitude r
    layers = [Layer(n, d) for n, d in films]
    ours = multilayer(n_incident, layers, n_exit, wavelength, angle, pol)
    ref = _tmm(
        pol, [n_incident, *[n for n, _ in films], n_exit], [d for _, d in films], angle, wavelength
    )
    assert ours.R == pytest.approx(ref["R"], abs=1e-9)
    assert ours.T == pytest.approx(ref["T"], abs=1e-9)
    assert ours.r == pytest.approx(ref["r"], abs=1e-9)


@settings(max_examples=60)
@given(
    films=st.lists(st.tuples(real_index, st.floats(0.0, 500.0)), max_size=8),
    wavelength=st.floats(300.0, 1500.0),
    angle=st.floats(0.0, 80.0),
    pol=st.sampled_from(["s", "p"]),
)
def test_lossless_stacks_conserve_energy(films, wavelength, angle, pol):
    # energy conservation for non-absorbing media, textbook
    result = multilayer(1.0, [Layer(n, d) for n, d in films], 1.52, wavelength, angle, pol)
    assert result.R + result.T == pytest.approx(1.0, abs=1e-9)


def test_a_quarter_wave_high_low_mirror_reflects_strongly_and_matches_tmm():
    # textbook: (HL)^N H stack at its design wavelength; cross-checked with tmm
    lam0, high, low = 1064.0, 2.3, 1.45
    layers = [Layer(high, lam0 / (4 * high)), Layer(low, lam0 / (4 * low))] * 8
    layers.append(Layer(high, lam0 / (4 * high)))
    ours = multilayer(1.0, layers, 1.52, lam0, 0.0, "s")
    ref = _tmm(
        "s", [1.0, *[x.n for x in layers], 1.52], [x.thickness_nm for x in layers], 0.0, lam0
    )
    assert ours.R == pytest.approx(ref["R"], rel=1e-12)
    # closed form at lambda0 for (HL)^N H on ns in air (Macleod, Thin-Film Optical Filters,
    # quarter-wave stack; from memory): Y = (nH/nL)^(2N) nH^2/ns, R = ((1 - Y)/(1 + Y))^2
    y = (high / low) ** 16 * high**2 / 1.52
    assert ours.R == pytest.approx(((1 - y) / (1 + y)) ** 2, rel=1e-10)


def test_unpolarized_multilayer_is_the_mean_of_s_and_p():
    # textbook: unpolarized = equal incoherent mix of s and p; tmm reference for each
    layers = [Layer(1.38, 99.6)]
    r_mean, t_mean = multilayer_unpolarized(1.0, layers, 1.52, 550.0, 45.0)
    r_s = _tmm("s", [1.0, 1.38, 1.52], [99.6], 45.0, 550.0)["R"]
    r_p = _tmm("p", [1.0, 1.38, 1.52], [99.6], 45.0, 550.0)["R"]
    assert r_mean == pytest.approx((r_s + r_p) / 2, rel=1e-12)
    assert r_mean + t_mean == pytest.approx(1.0)


def test_multilayer_refuses_bad_input_naming_the_item():
    with pytest.raises(InputError, match="layers item 2 thickness_nm"):
        multilayer(1.0, [Layer(1.38, 100.0), Layer(2.1, -3.0)], 1.52, 550.0, 0.0, "s")
    with pytest.raises(InputError, match="layers item 1 n"):
        multilayer(1.0, [Layer(complex(1.5, -0.1), 100.0)], 1.52, 550.0, 0.0, "s")
    with pytest.raises(InputError, match="polarization"):
        multilayer(1.0, [], 1.52, 550.0, 0.0, "x")  # type: ignore[arg-type]
    with pytest.raises(InputError, match="n_incident"):
        multilayer(0.5, [], 1.52, 550.0, 0.0, "s")
    with pytest.raises(InputError, match="layers item 1"):
        multilayer(1.0, [(1.38, 100.0)], 1.52, 550.0, 0.0, "s")  # type: ignore[list-item]
    with pytest.raises(InputError, match="n"):
        surface_reflectance(float("nan"))
    with pytest.raises(InputError, match="n1"):
        fresnel(True, 1.5, 10.0)  # type: ignore[arg-type]
