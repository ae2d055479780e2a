"""MIL-PRF-13830B scratch-dig evaluation.

Rules per shared/reference/computations.md, "MIL-PRF-13830B scratch-dig" [pub, via public
reproductions and vendor notes]: D/4 total length of maximum-number scratches, scratch sum
NS = sum(N_i L_i)/D with the halving rule, one maximum-size dig per 20 mm circle, sum of dig
diameters per 20 mm circle <= 2 x maximum dig diameter, irregular dig diameter (L+W)/2,
equal-area diameter sqrt(4A/pi), 25 um ignore size [mem]. Expected values are worked by hand from
those rules unless another source is named.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from durability.errors import InputError
from durability.surface.scratch_dig import (
    Dig,
    Scratch,
    ScratchDigObservation,
    ScratchDigSettings,
    equal_area_diameter_mm,
    evaluate_scratch_dig,
)


def surface(d=20.0, scratches=(), digs=(), area=None):
    return ScratchDigObservation(
        aperture_diameter_mm=d,
        aperture_area_mm2=area,
        scratches=tuple(Scratch(n, length) for n, length in scratches),
        digs=tuple(digs),
    )


# ---------------------------------------------------------------- scratches


def test_the_published_worked_example_fails_on_the_scratch_sum():
    # Sydor Optics "Scratch-Dig Paper", example 1 (public vendor note on the MIL-O-13830A rules,
    # carried into MIL-PRF-13830B): 80-50, D = 2.55, one #80 of 0.5, two #60 of 0.5 each, one #40
    # of 0.5 -> N80 = 15.7, N60 = 23.5, N40 = 7.8, NS = 47 > 40 (a maximum scratch is present),
    # "the part is not good". Lengths and D share one unit, so the ratio is unit-free.
    result = evaluate_scratch_dig(
        "80-50", surface(2.55, [(80, 0.5), (60, 0.5), (60, 0.5), (40, 0.5)])
    )
    assert result.scratch_sum == pytest.approx(47.06, abs=0.01)
    assert result.scratch_sum_limit == 40
    assert not result.passed
    assert any("Scratch sum" in r and "exceeds the limit 40" in r for r in result.reasons)
    assert all("MIL-PRF-13830B" in r for r in result.reasons)


def test_the_limit_is_halved_only_when_a_maximum_number_scratch_is_present():
    # 60-40, D = 20 mm. Without a #60: NS = (40*10 + 40*5)/20 = 30 <= 60, pass.
    without = evaluate_scratch_dig("60-40", surface(20, [(40, 10), (40, 5)]))
    assert without.scratch_sum == pytest.approx(30.0)
    assert without.scratch_sum_limit == 60
    assert without.passed
    # With a #60 of 5 mm instead: NS = (400 + 300)/20 = 35 > 60/2 = 30, fail.
    with_max = evaluate_scratch_dig("60-40", surface(20, [(40, 10), (60, 5)]))
    assert with_max.scratch_sum == pytest.approx(35.0)
    assert with_max.scratch_sum_limit == 30
    assert not with_max.passed


def test_maximum_number_scratches_may_total_a_quarter_of_the_diameter():
    # D = 20 mm -> D/4 = 5 mm. 5 mm of #60 passes (on the limit), 5.5 mm fails, while the scratch
    # sum (330/20 = 16.5) stays under 30.
    on_limit = evaluate_scratch_dig("60-40", surface(20, [(60, 3), (60, 2)]))
    assert on_limit.max_scratch_length_limit_mm == pytest.approx(5.0)
    assert on_limit.passed
    over = evaluate_scratch_dig("60-40", surface(20, [(60, 3), (60, 2.5)]))
    assert over.scratch_sum == pytest.approx(16.5)
    assert not over.passed
    assert any("D/4" in r for r in over.reasons)


def test_a_scratch_above_the_maximum_number_fails_and_no_width_is_inferred():
    result = evaluate_scratch_dig("60-40", surface(50, [(80, 0.5)]))
    assert not result.passed
    assert (
        "Scratch 1 has scratch number 80, above the maximum scratch number 60"
        in (result.reasons[0])
    )
    assert any("no scratch width is inferred" in c for c in result.conventions)
    assert "width" not in " ".join(result.reasons)


# ---------------------------------------------------------------- aperture


def test_a_non_round_aperture_uses_the_equal_area_diameter_and_says_so():
    # 30 x 20 mm rectangle: D = sqrt(4 * 600 / pi) = 27.6395 mm (hand); circle area checked with
    # numpy below.
    result = evaluate_scratch_dig("60-40", surface(None, [(40, 2)], area=600.0))
    assert result.diameter_mm == pytest.approx(27.6395, abs=1e-4)
    assert np.pi * (result.diameter_mm / 2) ** 2 == pytest.approx(600.0)
    assert "equal-area diameter" in result.diameter_basis
    assert result.scratch_sum == pytest.approx(80 / result.diameter_mm)


def test_the_area_wins_over_a_given_diameter_and_the_output_says_the_diameter_was_not_used():
    result = evaluate_scratch_dig("60-40", surface(25.0, area=600.0))
    assert result.diameter_mm == pytest.approx(equal_area_diameter_mm(600.0))
    assert "given diameter 25 mm was not used" in result.diameter_basis


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"d": None}, "give the clear-aperture diameter or its area"),
        ({"d": 0.0}, "clear-aperture diameter"),
        ({"d": float("nan")}, "clear-aperture diameter"),
        ({"area": -1.0}, "aperture area"),
        ({"scratches": [(0, 1.0)]}, "scratch 1: scratch number 0"),
        ({"scratches": [(40, 1.0), (40, -2.0)]}, "scratch 2: length"),
        ({"digs": [Dig(0.1), Dig(0.0)]}, "dig 2: length or diameter"),
        ({"digs": [Dig(0.1, width_mm=-0.1)]}, "dig 1: width"),
        ({"digs": [Dig(0.1, position_mm=(1.0, float("inf")))]}, "dig 1: position"),
    ],
)
def test_it_names_the_bad_input(kwargs, message):
    with pytest.raises(InputError, match=message):
        evaluate_scratch_dig("60-40", surface(**kwargs))


def test_a_bad_callout_is_refused_with_its_position():
    with pytest.raises(InputError, match="position 4"):
        evaluate_scratch_dig("60-x", surface())


# ---------------------------------------------------------------- digs


def test_an_irregular_dig_takes_the_mean_of_length_and_width():
    # (0.5 + 0.3)/2 = 0.40 mm = dig 40: allowed on 60-40; (0.6 + 0.3)/2 = 0.45 mm is not.
    assert Dig(0.5, 0.3).diameter_mm == pytest.approx(0.40)
    assert evaluate_scratch_dig("60-40", surface(digs=[Dig(0.5, 0.3)])).passed
    result = evaluate_scratch_dig("60-40", surface(digs=[Dig(0.6, 0.3)]))
    assert not result.passed
    assert "irregular 0.6 x 0.3 mm, diameter (L+W)/2 = 0.45 mm" in result.reasons[0]


def test_the_dig_diameters_in_a_20_mm_circle_may_sum_to_twice_the_maximum():
    # 60-40: limit 2 x 0.40 = 0.80 mm. 0.3 + 0.3 + 0.25 = 0.85 mm taken to lie in one circle fails.
    digs = [Dig(0.3), Dig(0.3), Dig(0.25)]
    result = evaluate_scratch_dig("60-40", surface(50, digs=digs))
    assert result.dig_diameter_sum_mm == pytest.approx(0.85)
    assert result.dig_diameter_sum_limit_mm == pytest.approx(0.80)
    assert not result.passed
    assert any("one 20 mm circle" in c for c in result.conventions)
    # The same digs 30 mm apart: no 20 mm circle holds two of them, worst circle 0.3 mm.
    spread = [Dig(0.3, position_mm=(0, 0)), Dig(0.3, position_mm=(30, 0))]
    spread.append(Dig(0.25, position_mm=(60, 0)))
    result = evaluate_scratch_dig("60-40", surface(80, digs=spread))
    assert result.dig_diameter_sum_mm == pytest.approx(0.3)
    assert result.passed


def test_only_one_maximum_size_dig_is_allowed_in_a_20_mm_circle():
    two = [Dig(0.4), Dig(0.4)]
    result = evaluate_scratch_dig("60-40", surface(50, digs=two))
    assert result.max_size_digs == 2
    assert not result.passed
    # 25 mm apart on a 50 mm surface (3 allowed by the whole-surface count): pass.
    apart = [Dig(0.4, position_mm=(0, 0)), Dig(0.4, position_mm=(25, 0))]
    assert evaluate_scratch_dig("60-40", surface(50, digs=apart)).passed
    # 15 mm apart: both fit one 20 mm circle.
    close = [Dig(0.4, position_mm=(0, 0)), Dig(0.4, position_mm=(15, 0))]
    result = evaluate_scratch_dig("60-40", surface(50, digs=close))
    assert not result.passed
    assert any("lie within one 20 mm circle" in r for r in result.reasons)


def test_the_whole_surface_allows_one_maximum_dig_per_20_mm_of_diameter_or_fraction():
    # D = 30 mm -> ceil(30/20) = 2 maximum-size digs [mem]; three digs more than 20 mm apart
    # from each other pass the circle rule but not the count.
    digs = [
        Dig(0.4, position_mm=(0, 0)),
        Dig(0.4, position_mm=(21, 0)),
        Dig(0.4, position_mm=(10.5, 19)),
    ]
    result = evaluate_scratch_dig("60-40", surface(30, digs=digs))
    assert not result.passed
    assert any("above the 2 allowed" in r and "from memory" in r for r in result.reasons)


def test_fine_maximum_digs_must_be_1_mm_apart():
    # Dig numbers of 10 or less: maximum-size digs at least 1 mm apart (computations.md [pub];
    # public vendor tables list a 1 mm separation for dig 10 and below, 20 mm above).
    close = [Dig(0.1, position_mm=(0, 0)), Dig(0.1, position_mm=(0.5, 0))]
    result = evaluate_scratch_dig("20-10", surface(10, digs=close))
    assert not result.passed
    assert "less than 1 mm apart" in result.reasons[0]
    apart = [Dig(0.1, position_mm=(0, 0)), Dig(0.1, position_mm=(1.5, 0))]
    assert evaluate_scratch_dig("20-10", surface(10, digs=apart)).passed
    unplaced = evaluate_scratch_dig("20-10", surface(10, digs=[Dig(0.1), Dig(0.1)]))
    assert any("1 mm spacing" in c and "not checked" in c for c in unplaced.conventions)


def test_small_digs_are_disregarded_below_a_setting_shown_in_the_output():
    # 25 um default [mem]: a 0.02 mm dig is disregarded; a 0.03 mm one counts.
    result = evaluate_scratch_dig("60-40", surface(digs=[Dig(0.02), Dig(0.03)]))
    assert (result.digs_counted, result.digs_ignored) == (1, 1)
    assert any("below 0.025 mm" in c for c in result.conventions)
    stricter = ScratchDigSettings(ignore_digs_below_mm=0.01)
    result = evaluate_scratch_dig("60-40", surface(digs=[Dig(0.02)]), stricter)
    assert (result.digs_counted, result.digs_ignored) == (1, 0)
    assert any("below 0.01 mm" in c for c in result.conventions)


def test_what_counts_as_a_maximum_size_dig_is_a_stated_setting():
    default = evaluate_scratch_dig("60-40", surface(digs=[Dig(0.38)]))
    assert default.max_size_digs == 0
    assert any("0.01 mm resolution" in c for c in default.conventions)
    loose = ScratchDigSettings(max_size_dig_from_mm=0.35)
    assert evaluate_scratch_dig("60-40", surface(digs=[Dig(0.38)]), loose).max_size_digs == 1


def test_the_json_form_carries_the_verdict_under_pass():
    data = evaluate_scratch_dig("S/D 60/40", surface(20, [(40, 1)])).as_json()
    assert data["pass"] is True
    assert data["spec"] == "60-40"
    assert data["diameter_mm"] == 20.0
    assert data["scratch_sum"] == pytest.approx(2.0)


# ---------------------------------------------------------------- properties

SCRATCH_NUMBERS = st.sampled_from([5, 10, 20, 40, 60, 80, 120])
SCRATCH = st.tuples(SCRATCH_NUMBERS, st.floats(0.1, 30))


@given(
    st.sampled_from(["10-5", "20-10", "40-20", "60-40", "80-50"]),
    st.floats(5, 100),
    st.lists(SCRATCH, max_size=6),
    SCRATCH,
)
def test_adding_a_scratch_never_turns_a_fail_into_a_pass(spec, d, scratches, extra):
    before = evaluate_scratch_dig(spec, surface(d, scratches))
    after = evaluate_scratch_dig(spec, surface(d, [*scratches, extra]))
    assert after.scratch_sum >= before.scratch_sum
    if not before.passed:
        assert not after.passed


@given(
    st.sampled_from(["20-10", "60-40", "80-50"]),
    st.lists(st.floats(0.01, 0.6), max_size=5),
    st.floats(0.01, 0.6),
)
def test_adding_a_dig_never_turns_a_fail_into_a_pass(spec, diameters, extra):
    before = evaluate_scratch_dig(spec, surface(40, digs=[Dig(d) for d in diameters]))
    after = evaluate_scratch_dig(spec, surface(40, digs=[Dig(d) for d in [*diameters, extra]]))
    if not before.passed:
        assert not after.passed


@given(
    st.lists(
        st.tuples(st.floats(0.03, 0.4), st.floats(0, 40), st.floats(0, 40)), min_size=1, max_size=7
    )
)
def test_the_worst_20_mm_circle_is_found_from_positions(items):
    digs = [Dig(d, position_mm=(x, y)) for d, x, y in items]
    result = evaluate_scratch_dig("60-40", surface(60, digs=digs))
    weights = np.array([d for d, _, _ in items])
    points = np.array([(x, y) for _, x, y in items])
    # Brute force: centres on a 0.5 mm grid (numpy), a lower bound of the exact worst circle.
    gx, gy = np.meshgrid(np.arange(-10, 50.5, 0.5), np.arange(-10, 50.5, 0.5))
    centres = np.stack([gx.ravel(), gy.ravel()], axis=1)
    inside = np.linalg.norm(centres[:, None, :] - points[None, :, :], axis=2) <= 10.0
    grid_best = float((inside * weights).sum(axis=1).max())
    assert result.dig_diameter_sum_mm >= grid_best - 1e-9
    assert result.dig_diameter_sum_mm <= weights.sum() + 1e-9
    # Every point pair counted together must fit in one 20 mm circle: if all pairs are more
    # than 20 mm apart, the worst circle holds a single dig.
    far = all(math.dist(p, q) > 20.0 + 1e-6 for i, p in enumerate(points) for q in points[i + 1 :])
    if far:
        assert result.dig_diameter_sum_mm == pytest.approx(weights.max())


@given(st.floats(5, 100), st.lists(SCRATCH, max_size=5), st.floats(0.2, 5))
def test_the_scratch_sum_depends_only_on_length_over_diameter(d, scratches, k):
    base = evaluate_scratch_dig("60-40", surface(d, scratches))
    scaled = evaluate_scratch_dig("60-40", surface(d * k, [(n, x * k) for n, x in scratches]))
    assert scaled.scratch_sum == pytest.approx(base.scratch_sum)


def test_a_position_that_is_not_a_pair_is_refused():
    with pytest.raises(InputError, match="dig 1: position 5"):
        evaluate_scratch_dig("60-40", surface(digs=[Dig(0.1, position_mm=5)]))  # type: ignore[arg-type]
