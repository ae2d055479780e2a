"""ISO 10110-7 evaluation of surface imperfections.

Rules per shared/reference/computations.md, "ISO 10110-7" [pub for notation; details by edition
from memory]: grade number A = sqrt(area) in mm; area equivalence sum(a) <= N * A^2 with each
sqrt(a) <= A; round dig a = pi d^2 / 4; scratches longer than 2 mm are long scratches (L: count x
maximum width); C coating imperfections with their own budget [mem]; E edge chips by extent [mem].
Expected values are worked by hand from those rules.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

from durability.errors import InputError
from durability.surface.iso10110 import (
    DEFAULT_EDITION,
    Iso10110Observation,
    Iso10110Settings,
    SurfaceScratch,
    dig_area_mm2,
    evaluate_iso10110_7,
)


def seen(**kwargs):
    return Iso10110Observation(**{k: tuple(v) for k, v in kwargs.items()})


def test_the_budget_is_n_times_a_squared():
    # 5/3x0.16: 3 x 0.16^2 = 0.0768 mm2.
    result = evaluate_iso10110_7("5/3x0,16", seen())
    assert result.area_budget_mm2 == pytest.approx(0.0768)
    assert result.area_mm2 == 0.0
    assert result.passed


def test_smaller_imperfections_may_replace_maximum_ones_by_area():
    # Area equivalence: one 0.16 imperfection = four of 0.08 (0.0256 = 4 x 0.0064); 5/3x0.16
    # therefore allows 12 of 0.08 (0.0768 mm2, on the budget) but not 13.
    assert evaluate_iso10110_7("5/3x0.16", seen(imperfections_mm=[0.08] * 12)).passed
    result = evaluate_iso10110_7("5/3x0.16", seen(imperfections_mm=[0.08] * 13))
    assert result.area_mm2 == pytest.approx(13 * 0.0064)
    assert not result.passed
    assert "exceeds the 5/ budget" in result.reasons[0]
    assert "ISO 10110-7" in result.reasons[0]


def test_no_single_imperfection_may_exceed_the_grade_number():
    # One 0.17 imperfection: 0.0289 mm2 fits the 0.0768 budget, but sqrt(a) = 0.17 > A = 0.16.
    result = evaluate_iso10110_7("5/3x0.16", seen(imperfections_mm=[0.17]))
    assert result.area_mm2 == pytest.approx(0.0289)
    assert not result.passed
    assert "larger than the grade number 0.16 mm" in result.reasons[0]


def test_a_round_dig_counts_its_area_pi_d_squared_over_4():
    # d = 0.18 mm: a = pi * 0.0324 / 4 = 0.025447 mm2, sqrt(a) = 0.1595 <= 0.16 -> pass;
    # d = 0.19 mm: sqrt(a) = 0.1684 > 0.16 -> fail. Areas checked against numpy.
    assert dig_area_mm2(0.18) == pytest.approx(np.pi * 0.09**2)
    ok = evaluate_iso10110_7("5/3x0.16", seen(dig_diameters_mm=[0.18]))
    assert ok.area_mm2 == pytest.approx(0.0254469, abs=1e-7)
    assert ok.passed
    assert not evaluate_iso10110_7("5/3x0.16", seen(dig_diameters_mm=[0.19])).passed


def test_a_scratch_up_to_2_mm_is_a_localized_imperfection_and_longer_is_a_long_scratch():
    short = SurfaceScratch(length_mm=1.5, width_mm=0.01)
    long = SurfaceScratch(length_mm=4.0, width_mm=0.003)
    result = evaluate_iso10110_7("5/3x0.16; L2x0.004", seen(scratches=[short, long]))
    assert result.area_mm2 == pytest.approx(0.015)  # 1.5 x 0.01
    assert result.long_scratches == 1
    assert result.passed


def test_long_scratches_are_limited_in_count_and_width():
    two = [SurfaceScratch(5, 0.004), SurfaceScratch(3, 0.002)]
    assert evaluate_iso10110_7("5/3x0.16; L2x0.004", seen(scratches=two)).passed
    three = [*two, SurfaceScratch(2.5, 0.001)]
    result = evaluate_iso10110_7("5/3x0.16; L2x0.004", seen(scratches=three))
    assert not result.passed
    assert "3 long scratch(es), more than the 2 allowed" in result.reasons[0]
    wide = [SurfaceScratch(5, 0.005)]
    result = evaluate_iso10110_7("5/3x0.16; L2x0.004", seen(scratches=wide))
    assert not result.passed
    assert "0.005 mm wide" in result.reasons[0]


def test_a_long_scratch_without_an_l_field_fails_by_stated_convention():
    result = evaluate_iso10110_7("5/3x0.16", seen(scratches=[SurfaceScratch(5, 0.001)]))
    assert not result.passed
    assert any("no L field" in c for c in result.conventions)


def test_coating_imperfections_have_their_own_budget():
    # C2x0.1: 2 x 0.1^2 = 0.02 mm2.
    two = evaluate_iso10110_7("5/3x0.16; C2x0.1", seen(coating_imperfections_mm=[0.1, 0.1]))
    assert two.coating_area_budget_mm2 == pytest.approx(0.02)
    assert two.coating_area_mm2 == pytest.approx(0.02)
    assert two.area_mm2 == 0.0
    assert two.passed
    three = evaluate_iso10110_7("5/3x0.16; C2x0.1", seen(coating_imperfections_mm=[0.1] * 3))
    assert not three.passed
    assert "C budget" in three.reasons[0]


def test_without_a_c_field_coating_imperfections_join_the_main_budget():
    result = evaluate_iso10110_7("5/3x0.16", seen(coating_imperfections_mm=[0.1]))
    assert result.area_mm2 == pytest.approx(0.01)
    assert result.coating_area_mm2 is None
    assert any("no C field" in c for c in result.conventions)


def test_edge_chips_are_held_to_the_e_field():
    assert evaluate_iso10110_7("5/3x0.16; E0.5", seen(edge_chips_mm=[0.2, 0.5])).passed
    result = evaluate_iso10110_7("5/3x0.16; E0.5", seen(edge_chips_mm=[0.2, 0.6]))
    assert result.largest_edge_chip_mm == 0.6
    assert not result.passed
    unspecified = evaluate_iso10110_7("5/3x0.16", seen(edge_chips_mm=[2.0]))
    assert unspecified.passed
    assert any("no E field" in c and "not evaluated" in c for c in unspecified.conventions)


def test_the_edition_and_conventions_are_stated():
    result = evaluate_iso10110_7("5/3x0.16", seen())
    assert result.edition == DEFAULT_EDITION
    assert any("edition assumed" in c for c in result.conventions)
    assert any("concentration rule" in c for c in result.conventions)
    other = evaluate_iso10110_7("5/3x0.16", seen(), Iso10110Settings(edition="ISO 10110-7:2017"))
    assert other.as_json()["edition"] == "ISO 10110-7:2017"


def test_an_ignore_size_is_a_setting_and_is_stated():
    settings = Iso10110Settings(ignore_below_mm=0.02)
    result = evaluate_iso10110_7("5/1x0.16", seen(imperfections_mm=[0.01] * 500), settings)
    assert result.area_mm2 == 0.0
    assert any("below 0.02 mm are disregarded" in c for c in result.conventions)


@pytest.mark.parametrize(
    ("spec", "kwargs", "message"),
    [
        ("5/3x0.16", {"imperfections_mm": [0.1, -0.1]}, "imperfection 2"),
        ("5/3x0.16", {"dig_diameters_mm": [0.0]}, "dig 1 diameter"),
        ("5/3x0.16", {"scratches": [SurfaceScratch(1, 0)]}, "scratch 1 width"),
        ("5/3x0.16", {"edge_chips_mm": [float("nan")]}, "edge chip 1"),
        ("5/3x0.16", {"coating_imperfections_mm": ["a"]}, "coating imperfection 1"),
        ("5/3x0.16; L2", {}, "field 2 'L2'"),
    ],
)
def test_it_names_the_bad_input(spec, kwargs, message):
    with pytest.raises(InputError, match=message):
        evaluate_iso10110_7(spec, seen(**kwargs))


def test_the_json_form_carries_pass_and_the_areas():
    data = evaluate_iso10110_7("5/3x0.16; L2x0.004; E0.5", seen(imperfections_mm=[0.1])).as_json()
    assert data["pass"] is True
    assert data["area_mm2"] == pytest.approx(0.01)
    assert data["area_budget_mm2"] == pytest.approx(0.0768)
    assert data["spec"] == "5/3x0.16; L2x0.004; E0.5"


# ---------------------------------------------------------------- properties


@given(st.integers(1, 10), st.floats(0.004, 1.0), st.integers(1, 5))
def test_splitting_an_imperfection_into_k_squared_of_grade_a_over_k_keeps_the_area(n, a, k):
    # Area equivalence: k^2 imperfections of grade A/k have the area of one of grade A.
    whole = evaluate_iso10110_7(f"5/{n}x{a!r}", seen(imperfections_mm=[a] * n))
    split = evaluate_iso10110_7(f"5/{n}x{a!r}", seen(imperfections_mm=[a / k] * (n * k * k)))
    assert split.area_mm2 == pytest.approx(whole.area_mm2)
    assert whole.passed == split.passed


@given(st.integers(1, 10), st.floats(0.004, 1.0), st.integers(1, 60), st.floats(0.05, 1.0))
def test_equal_imperfections_pass_exactly_when_their_area_fits(n, a, count, fraction):
    g = a * fraction
    ratio = count * g * g / (n * a * a)
    assume(abs(ratio - 1.0) > 1e-6)  # keep clear of the float boundary
    spec = f"5/{n}x{a!r}"
    result = evaluate_iso10110_7(spec, seen(imperfections_mm=[g] * count))
    assert result.passed == (ratio < 1.0)


@given(st.floats(0.01, 2.0))
def test_a_dig_has_the_area_of_its_circle(d):
    assert dig_area_mm2(d) == pytest.approx(math.pi * (d / 2) ** 2)
    assert math.sqrt(dig_area_mm2(d)) == pytest.approx(d * math.sqrt(math.pi) / 2)
