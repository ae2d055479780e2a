"""Checks of durability.dispersion against Malitson's fused silica and the V_d definition."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from durability.dispersion import (
    LINE_C_NM,
    LINE_D_NM,
    LINE_F_NM,
    AbbeModel,
    GlassOptics,
    Sellmeier,
    abbe_number,
    abbe_number_from_indices,
    check_sellmeier_against_nd,
    dispersion_model,
    index_at,
)
from durability.errors import InputError

# I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965), fused silica, per
# shared/reference/computations.md [pub]: Malitson prints the resonance wavelengths sqrt(C_i).
MALITSON_B = (0.6961663, 0.4079426, 0.8974794)
MALITSON_SQRT_C_UM = (0.0684043, 0.1162414, 9.896161)
# Malitson's measured range, 0.21-3.71 um (from memory)
MALITSON_BAND_NM = (210.0, 3710.0)


def _silica() -> Sellmeier:
    return Sellmeier.from_resonance_wavelengths(
        MALITSON_B, MALITSON_SQRT_C_UM, MALITSON_BAND_NM, "Malitson 1965"
    )


def test_malitson_fused_silica_gives_n_d_1_4585():
    # n_d ≈ 1.4585 for fused silica [pub: Malitson 1965, per computations.md]
    assert _silica().index(LINE_D_NM) == pytest.approx(1.4585, abs=1e-4)


def test_malitson_fused_silica_at_laser_lines():
    # Fused silica 1.4570 at 632.8 nm and 1.4496 at 1064 nm: widely quoted values (from memory)
    silica = _silica()
    assert silica.index(632.8) == pytest.approx(1.4570, abs=1e-4)
    assert silica.index(1064.0) == pytest.approx(1.4496, abs=1e-4)


def test_sellmeier_formula_evaluated_by_hand_at_one_micrometre():
    # n^2 - 1 = sum B lam^2/(lam^2 - C), lam in um (computations.md [pub]); numpy by hand
    lam2 = 1.0
    terms = zip(MALITSON_B, MALITSON_SQRT_C_UM, strict=True)
    n2 = 1 + sum(b * lam2 / (lam2 - c**2) for b, c in terms)
    assert _silica().index(1000.0) == pytest.approx(np.sqrt(n2), rel=1e-14)


def test_a_catalogue_sellmeier_printed_with_c_in_um2():
    # Schott N-BK7 catalogue coefficients (C printed in um^2) and its n_d = 1.51680,
    # V_d = 64.17: all from memory of the public Schott data sheet
    bk7 = Sellmeier(
        (1.03961212, 0.231792344, 1.01046945), (0.00600069867, 0.0200179144, 103.560653)
    )
    assert bk7.index(LINE_D_NM) == pytest.approx(1.5168, abs=1e-4)
    assert abbe_number(bk7).v_d == pytest.approx(64.17, abs=0.05)
    assert check_sellmeier_against_nd(bk7, 1.5168).agrees


def test_fused_silica_abbe_number_is_about_67_8():
    # V_d of fused silica ≈ 67.8 in glass catalogues (from memory); V_d definition per
    # computations.md with d, F, C at 587.5618, 486.1327, 656.2725 nm [pub]
    result = abbe_number(_silica())
    assert result.v_d == pytest.approx(67.8, abs=0.1)
    assert result.lines_nm == (587.5618, 486.1327, 656.2725)
    assert "587.5618" in result.convention


def test_the_sqrt_c_helper_equals_squared_c_entered_directly():
    # the two forms of the same Malitson data must agree (computations.md: C_i = squares)
    squared = Sellmeier(MALITSON_B, tuple(c * c for c in MALITSON_SQRT_C_UM))
    assert squared.index(550.0) == pytest.approx(_silica().index(550.0), rel=1e-15)


def test_the_c_sqrt_c_mix_up_is_caught_against_catalogue_n_d():
    # computations.md: "Mixing C with sqrt C forms is a classic bug" [pub]
    mixed = Sellmeier(MALITSON_B, MALITSON_SQRT_C_UM)  # sqrt(C) entered where C is expected
    assert abs(mixed.index(LINE_D_NM) - 1.4585) > 0.05
    check = check_sellmeier_against_nd(mixed, 1.4585)
    assert not check.agrees
    assert "square them" in check.message
    good = check_sellmeier_against_nd(_silica(), 1.4585)
    assert good.agrees and good.difference == pytest.approx(0.0, abs=1e-4)


def test_sellmeier_refuses_outside_its_band_unless_asked_to_flag():
    silica = _silica()
    with pytest.raises(InputError, match="outside the valid band 210-3710 nm"):
        silica.index(5000.0)
    flagged = index_at(silica, 5000.0, outside="flag")
    assert not flagged.in_valid_band and "outside the valid band" in (flagged.note or "")


def test_abbe_model_reproduces_its_own_v_d_and_n_d():
    # V_d = (n_d - 1)/(n_F - n_C), computations.md [pub]; the model is built to satisfy it
    for n_d, v_d in ((1.5168, 64.17), (1.7552, 27.58), (1.4585, 67.82), (1.9, 20.0)):
        result = abbe_number(AbbeModel(n_d, v_d))
        assert result.v_d == pytest.approx(v_d, rel=1e-12)
        assert result.n_d == pytest.approx(n_d, rel=1e-14)


@settings(max_examples=100)
@given(n_d=st.floats(1.3, 2.1), v_d=st.floats(15.0, 100.0))
def test_abbe_model_v_d_round_trip(n_d, v_d):
    # same definition, random glasses on the Abbe diagram
    assert abbe_number(AbbeModel(n_d, v_d)).v_d == pytest.approx(v_d, rel=1e-9)


def test_abbe_model_follows_malitson_silica_within_about_1e_3():
    # outside reference: Malitson's Sellmeier; the two-term model built from silica's own
    # n_d and V_d stays within 1.5e-3 over its 400-1000 nm band (our measured model error)
    silica = _silica()
    abbe = abbe_number(silica)
    model = AbbeModel(abbe.n_d, abbe.v_d)
    grid = np.arange(400.0, 1000.1, 5.0)
    assert np.max(np.abs(model.indices(grid) - silica.indices(grid))) < 1.5e-3
    # and matches n_F and n_C of Malitson closely, as it should between the lines
    assert model.index(LINE_F_NM) == pytest.approx(silica.index(LINE_F_NM), abs=1e-4)
    assert model.index(LINE_C_NM) == pytest.approx(silica.index(LINE_C_NM), abs=1e-4)


def test_abbe_model_states_and_enforces_its_band():
    model = AbbeModel(1.5168, 64.17)
    assert "400-1000 nm" in model.describe()
    with pytest.raises(InputError, match="outside the valid band 400-1000 nm"):
        model.index(1550.0)
    value = index_at(model, 1550.0, outside="flag")
    assert not value.in_valid_band
    wide = AbbeModel(1.5168, 64.17, (350.0, 1600.0))
    assert index_at(wide, 1550.0).in_valid_band


def test_glass_model_prefers_sellmeier_and_falls_back_to_n_d_v_d():
    assert dispersion_model(GlassOptics("silica", _silica(), 1.4585, 67.8)).kind == "Sellmeier"
    fallback = dispersion_model(GlassOptics("crown", n_d=1.5168, v_d=64.17))
    assert fallback.kind == "n_d/V_d model"
    with pytest.raises(InputError, match="'bare'.*n_d and V_d"):
        dispersion_model(GlassOptics("bare", n_d=1.5))


def test_bad_input_names_the_field():
    with pytest.raises(InputError, match="as many B as C"):
        Sellmeier((1.0, 0.2), (0.01,))
    with pytest.raises(InputError, match="C2"):
        Sellmeier((1.0, 0.2), (0.01, -0.02))
    with pytest.raises(InputError, match="B1"):
        Sellmeier(("x",), (0.01,))  # type: ignore[arg-type]
    with pytest.raises(InputError, match="V_d"):
        AbbeModel(1.5, 0.0)
    with pytest.raises(InputError, match="n_d"):
        AbbeModel(0.9, 60.0)
    with pytest.raises(InputError, match="wavelength_nm"):
        _silica().index(-1.0)
    with pytest.raises(InputError, match="n_F - n_C"):
        abbe_number_from_indices(1.5, 1.50, 1.51)
    with pytest.raises(InputError, match="pole"):
        Sellmeier((1.0,), (0.25,)).index(500.0)
