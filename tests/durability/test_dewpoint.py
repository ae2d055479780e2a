"""Dew point and frost point (durability/dewpoint.py) and the dewpoint command.

Sources for the checks:
- The Magnus form and its coefficient pairs: shared/reference/computations.md [pub] (water) and
  [mem] (ice). The inversion is checked by solving e_s(T_d) = RH/100·e_s(T) with
  scipy.optimize.brentq on the Magnus saturation pressure itself.
- Saturation vapour pressure of water and of ice: the IAPWS values as printed in the CRC
  Handbook of Chemistry and Physics tables "Vapor pressure of water" and "of ice" (from memory):
  a table pair (air temperature, dew point) gives RH = 100·e_w(T_d)/e_w(T), so the dew point of
  that air is T_d by construction, independently of Magnus.
- An independent saturation formula: Buck (1981, as revised 1996) over water,
  e_w = 0.61121·exp((18.678 − T/234.5)·T/(257.14 + T)) kPa (from memory), inverted with brentq.
"""

from __future__ import annotations

import json
import math

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from durability.cli import main
from durability.dewpoint import (
    ALDUCHOV_ESKRIDGE_1996,
    OVER_ICE,
    WMO_SONNTAG_1990,
    MagnusCoefficients,
    dew_point,
)
from durability.errors import InputError

# Saturation vapour pressure, kPa (CRC Handbook, IAPWS-95 / IAPWS 2011 ice; from memory).
WATER_KPA = {
    10.0: 1.2282,
    20.0: 2.3393,
    25.0: 3.1699,
    30.0: 4.2470,
    40.0: 7.3849,
    50.0: 12.352,
    60.0: 19.946,
}
ICE_KPA = {-10.0: 0.25990, -20.0: 0.10326, -30.0: 0.038009}


def magnus_kpa(t: float, pair: MagnusCoefficients) -> float:
    # The prefactor cancels in the dew point; 0.6112 kPa is only there to give a pressure.
    return 0.6112 * math.exp(pair.a * t / (pair.b_c + t))


def buck_water_kpa(t: float) -> float:
    return 0.61121 * math.exp((18.678 - t / 234.5) * (t / (257.14 + t)))


@pytest.mark.parametrize("pair", [ALDUCHOV_ESKRIDGE_1996, WMO_SONNTAG_1990])
@pytest.mark.parametrize(
    ("air", "dew"), [(20.0, 10.0), (40.0, 20.0), (40.0, 30.0), (60.0, 25.0), (60.0, 50.0)]
)
def test_dew_point_matches_the_steam_table(
    pair: MagnusCoefficients, air: float, dew: float
) -> None:
    rh = 100.0 * WATER_KPA[dew] / WATER_KPA[air]
    result = dew_point(air, rh, coefficients=pair)
    # Magnus fits the saturation pressure to a few tenths of a percent (about 0.4 % at the top
    # of the range), which is about 0.1 K in dew point; 60 °C air shows the largest error.
    assert result.dew_point_c == pytest.approx(dew, abs=0.15)
    assert result.frost_point_c is None


@settings(max_examples=150)
@given(
    st.floats(-45.0, 60.0),
    st.floats(1.0, 100.0),
    st.sampled_from([ALDUCHOV_ESKRIDGE_1996, WMO_SONNTAG_1990]),
)
def test_the_closed_form_inverts_the_magnus_saturation_pressure(
    air: float, rh: float, pair: MagnusCoefficients
) -> None:
    target = rh / 100.0 * magnus_kpa(air, pair)
    reference = brentq(lambda t: magnus_kpa(t, pair) - target, -120.0, 80.0, xtol=1e-12)
    assume(reference >= -45.0)
    result = dew_point(air, rh, coefficients=pair)
    assert result.dew_point_c == pytest.approx(reference, abs=1e-8)
    assert result.dew_point_c <= air + 1e-12


@settings(max_examples=150)
@given(st.floats(-40.0, 60.0), st.floats(5.0, 100.0))
def test_dew_point_agrees_with_the_buck_formula(air: float, rh: float) -> None:
    target = rh / 100.0 * buck_water_kpa(air)
    reference = brentq(lambda t: buck_water_kpa(t) - target, -120.0, 80.0, xtol=1e-12)
    assume(reference >= -45.0)
    # Magnus and Buck agree to about 0.1 K over -40 to +60 °C (both fits to the same data).
    assert dew_point(air, rh).dew_point_c == pytest.approx(reference, abs=0.15)


@pytest.mark.parametrize("frost", [-10.0, -20.0, -30.0])
def test_frost_point_matches_the_ice_table(frost: float) -> None:
    # Air at 20 °C holding the vapour pressure of ice at `frost` has that frost point.
    rh = 100.0 * ICE_KPA[frost] / WATER_KPA[20.0]
    result = dew_point(20.0, rh)
    assert result.frost_point_c is not None
    assert result.frost_point_c == pytest.approx(frost, abs=0.15)
    assert result.ice_coefficients is OVER_ICE
    # Ice holds less vapour than supercooled water at the same temperature, so the dew point
    # (over water) lies below the frost point.
    assert result.dew_point_c < result.frost_point_c
    assert result.condensation_point_c == result.frost_point_c


def test_the_frost_point_inverts_the_over_ice_pair() -> None:
    result = dew_point(-5.0, 70.0)
    assert result.frost_point_c is not None
    vapour = 0.70 * magnus_kpa(-5.0, ALDUCHOV_ESKRIDGE_1996)
    reference = brentq(lambda t: magnus_kpa(t, OVER_ICE) - vapour, -80.0, 0.0, xtol=1e-12)
    assert result.frost_point_c == pytest.approx(reference, abs=1e-8)


def test_the_frost_point_can_be_left_out() -> None:
    assert dew_point(-5.0, 70.0, frost_point=False).frost_point_c is None


def test_saturated_air_is_at_its_dew_point() -> None:
    assert dew_point(-45.0, 100.0).dew_point_c == -45.0
    assert dew_point(60.0, 100.0).dew_point_c == 60.0


def test_the_coefficients_are_named_in_the_result() -> None:
    default = dew_point(20.0, 50.0)
    sonntag = dew_point(20.0, 50.0, coefficients="wmo-sonntag-1990")
    assert default.coefficients is ALDUCHOV_ESKRIDGE_1996
    assert "a = 17.625, b = 243.04 °C" in default.as_dict()["coefficients"]  # type: ignore[operator]
    assert sonntag.coefficients is WMO_SONNTAG_1990
    # The two pairs are fits to the same data: within a few hundredths of a kelvin here.
    assert sonntag.dew_point_c == pytest.approx(default.dew_point_c, abs=0.05)
    assert sonntag.dew_point_c != default.dew_point_c


def test_condensation_on_a_cold_part_in_a_hot_humid_chamber() -> None:
    chamber = dew_point(49.0, 95.0)
    assert chamber.condenses_on(20.0)  # a part at room temperature gets wet
    assert not chamber.condenses_on(49.0)


@pytest.mark.parametrize(
    ("temperature", "rh", "message"),
    [
        (20.0, 0.0, "relative humidity 0 % must be above 0"),
        (20.0, -5.0, "must be above 0"),
        (20.0, 100.5, "at most 100 %"),
        (20.0, float("nan"), "relative humidity: nan"),
        (float("inf"), 50.0, "temperature: inf"),
        (60.01, 50.0, "temperature 60.01 °C is outside"),
        (-45.5, 100.0, "temperature -45.5 °C is outside"),
        (20.0, 0.2, r"dew point .* is below"),
    ],
)
def test_out_of_range_input_is_refused(temperature: float, rh: float, message: str) -> None:
    with pytest.raises(InputError, match=message):
        dew_point(temperature, rh)


def test_unknown_coefficients_are_refused() -> None:
    with pytest.raises(InputError, match="coefficients 'tetens'"):
        dew_point(20.0, 50.0, coefficients="tetens")


# ---------------------------------------------------------------- the dewpoint command


def test_the_command_prints_the_dew_point(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["dewpoint", "20", "50"]) == 0
    output = json.loads(capsys.readouterr().out)
    assert output["dew_point_c"] == pytest.approx(dew_point(20.0, 50.0).dew_point_c)
    assert output["coefficients"].startswith("Alduchov and Eskridge 1996")
    assert output["frost_point_c"] is None


def test_the_command_takes_negative_temperatures_and_a_surface(
    capsys: pytest.CaptureFixture[str],
) -> None:
    assert main(["dewpoint", "-10", "50", "--surface", "-20"]) == 0
    output = json.loads(capsys.readouterr().out)
    assert output["frost_point_c"] > output["dew_point_c"]
    assert output["condenses"] is True


def test_the_command_selects_the_wmo_pair(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["dewpoint", "20", "50", "--coefficients", "wmo-sonntag-1990"]) == 0
    output = json.loads(capsys.readouterr().out)
    assert output["coefficients_key"] == "wmo-sonntag-1990"


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["dewpoint", "70", "50"], "outside the Magnus formula's range"),
        (["dewpoint", "20", "abc"], "RH_PERCENT: 'abc' is not a number"),
        (["dewpoint", "20", "0"], "must be above 0"),
        (["dewpoint", "20", "50", "--surface", "warm"], "--surface: 'warm'"),
    ],
)
def test_the_command_exits_2_on_bad_input(
    argv: list[str], message: str, capsys: pytest.CaptureFixture[str]
) -> None:
    assert main(argv) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    assert message in captured.err
