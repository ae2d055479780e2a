"""Checks of durability.speccheck on invented coating specs.

Sources: the feasibility facts are common practice (shared/reference/test-methods.md, Facts of
the trade); the uncoated-surface reflectance and the angle shift formula are textbook optics
(computations.md "Optics" [pub]). Thresholds are the lab's configurable defaults. All specs
below are invented.
"""

from __future__ import annotations

import math
from dataclasses import replace

import pytest

from durability.errors import InputError
from durability.speccheck import CoatingSpec, SpecCheckSettings, check_spec

COMPLETE = CoatingSpec(
    glass_name="Crown K-1",
    glass_known=True,
    wavelength_min_nm=450.0,
    wavelength_max_nm=650.0,
    requirement_kind="R",
    limit_max_percent=0.5,
    limit_basis="average",
    aoi_min_deg=8.0,
    aoi_max_deg=12.0,
    clear_aperture="diameter 22 mm",
    sides_coated=2,
    callout_text_present=True,
    laser_damage="none",
    witness_requirement="two witness pieces returned with the parts",
    documentation="certificate of conformance and measured curve",
    marking="none",
    packaging="lab standard",
    design_n_eff=1.7,
)


def test_a_complete_modest_spec_has_nothing_missing_or_risky():
    result = check_spec(COMPLETE)
    assert result.missing == ()
    assert result.risks == ()
    assert result.questions == ()
    assert "ANGLE_SHIFT" in result.codes()


def test_an_empty_spec_asks_for_every_essential_and_supplement():
    result = check_spec(CoatingSpec())
    codes = set(result.codes())
    essentials = {
        "GLASS_MISSING",
        "BAND_MISSING",
        "REQUIREMENT_MISSING",
        "LIMITS_MISSING",
        "LIMIT_BASIS_MISSING",
        "AOI_MISSING",
        "CLEAR_APERTURE_MISSING",
        "SIDES_MISSING",
    }
    supplements = {
        "CALLOUTS_MISSING",
        "LASER_DAMAGE_UNKNOWN",
        "WITNESS_REQUIREMENT_MISSING",
        "DOCUMENTATION_MISSING",
        "MARKING_MISSING",
        "PACKAGING_MISSING",
    }
    assert essentials | supplements <= codes
    assert all(f.severity == "missing" and f.question for f in result.missing)
    assert len(result.questions) == len(essentials | supplements)


def test_an_unknown_glass_is_a_risk_with_a_question():
    result = check_spec(replace(COMPLETE, glass_known=False))
    (finding,) = result.risks
    assert finding.code == "GLASS_NOT_IN_TABLE" and "Crown K-1" in (finding.question or "")


def test_polarization_is_asked_for_above_15_degrees_only():
    # 0-15° differences usually negligible: test-methods.md Facts of the trade (common
    # practice); 15° is the lab's configurable setting
    assert "POLARIZATION_MISSING" not in check_spec(replace(COMPLETE, aoi_max_deg=15.0)).codes()
    large = check_spec(replace(COMPLETE, aoi_min_deg=40.0, aoi_max_deg=50.0))
    assert "POLARIZATION_MISSING" in large.codes()
    stricter = SpecCheckSettings(polarization_needed_above_deg=10.0)
    assert "POLARIZATION_MISSING" in check_spec(COMPLETE, settings=stricter).codes()
    unpolarized = check_spec(
        replace(COMPLETE, aoi_min_deg=40.0, aoi_max_deg=50.0, polarization="unpolarized")
    )
    assert "POLARIZATION_AVERAGE" in unpolarized.codes()


def test_reflectance_at_normal_incidence_cannot_be_measured():
    # about 6° is the lowest usual measuring angle: test-methods.md (common practice)
    result = check_spec(replace(COMPLETE, aoi_min_deg=0.0, aoi_max_deg=0.0))
    (finding,) = [f for f in result.findings if f.code == "R_ANGLE_NOT_MEASURABLE"]
    assert finding.severity == "risk" and "6°" in (finding.question or "")
    partly = check_spec(replace(COMPLETE, aoi_min_deg=0.0, aoi_max_deg=12.0))
    assert "R_ANGLE_PARTLY_MEASURABLE" in partly.codes()
    assert partly.risks == ()


def test_transmission_on_a_part_coated_on_one_side_belongs_in_reflection():
    # fact: the uncoated side reflects (test-methods.md, common practice); ceiling from the
    # textbook uncoated-surface reflectance ((n-1)/(n+1))^2 (computations.md [pub])
    spec = replace(
        COMPLETE,
        requirement_kind="T",
        limit_min_percent=99.0,
        limit_max_percent=None,
        sides_coated=1,
        substrate_index=1.52,
        substrate_internal_transmittance_percent=99.8,
    )
    result = check_spec(spec)
    (finding,) = [f for f in result.findings if f.code == "T_ON_ONE_SIDE"]
    ceiling = 99.8 * (1 - ((1.52 - 1) / (1.52 + 1)) ** 2)
    assert f"{ceiling:.2f} %" in finding.message
    assert "cannot be shown" in finding.message
    assert "reflection" in (finding.question or "")
    assert "T_ON_ONE_SIDE" not in check_spec(replace(spec, sides_coated=2)).codes()


def test_very_high_and_very_low_levels_need_special_measurement():
    # test-methods.md (common practice); the levels are the lab's settings
    high = check_spec(replace(COMPLETE, limit_min_percent=99.8, limit_max_percent=None))
    assert "R_VERY_HIGH" in high.codes()
    low = check_spec(replace(COMPLETE, limit_max_percent=0.1))
    assert "R_VERY_LOW" in low.codes()
    blocking = check_spec(
        replace(
            COMPLETE,
            requirement_kind="T",
            limit_max_percent=0.01,
            substrate_internal_transmittance_percent=99.0,
        )
    )
    assert "T_VERY_LOW" in blocking.codes()


def test_broad_bands_and_wide_angle_ranges_are_risks():
    # test-methods.md: broad bands and wide angle ranges cost performance (common practice)
    result = check_spec(
        replace(
            COMPLETE,
            wavelength_min_nm=400.0,
            wavelength_max_nm=1000.0,
            aoi_min_deg=0.0,
            aoi_max_deg=30.0,
            polarization="s and p",
        )
    )
    assert {"BROAD_BAND", "WIDE_ANGLE_RANGE"} <= set(f.code for f in result.risks)
    assert "BROAD_BAND" not in check_spec(COMPLETE).codes()


def test_a_coating_cannot_beat_the_substrate_internal_transmittance():
    # test-methods.md (common practice)
    spec = replace(
        COMPLETE,
        requirement_kind="T",
        limit_min_percent=99.0,
        limit_max_percent=None,
        substrate_internal_transmittance_percent=98.5,
    )
    assert "T_ABOVE_SUBSTRATE" in check_spec(spec).codes()
    unknown = check_spec(replace(spec, substrate_internal_transmittance_percent=None))
    assert "INTERNAL_T_UNKNOWN" in unknown.codes()
    fine = check_spec(replace(spec, substrate_internal_transmittance_percent=99.9))
    assert "T_ABOVE_SUBSTRATE" not in fine.codes()


def test_the_band_edge_shift_uses_the_formula_and_shows_n_eff_as_an_assumption():
    # lambda(theta) = lambda0 sqrt(1 - (sin theta/n_eff)^2), computations.md [pub]
    spec = replace(COMPLETE, aoi_min_deg=0.0, aoi_max_deg=45.0, polarization="s")
    result = check_spec(spec)
    assert result.n_eff == 1.7 and result.n_eff_source == "from the design"
    edges = {s.wavelength0_nm: s for s in result.angle_shifts}
    assert set(edges) == {450.0, 650.0}
    expected = 650.0 * math.sqrt(1 - (math.sin(math.radians(45.0)) / 1.7) ** 2)
    assert edges[650.0].wavelength_at_max_nm == pytest.approx(expected)
    (note,) = [f for f in result.findings if f.code == "ANGLE_SHIFT"]
    assert "n_eff = 1.7 (from the design)" in note.message
    assert "30°" in note.message  # the formula is good to about 30°

    entered = check_spec(spec, n_eff=2.0)
    assert entered.n_eff == 2.0 and entered.n_eff_source == "entered by the engineer"
    # a larger n_eff means a smaller shift (formula)
    assert abs(entered.angle_shifts[0].shift_nm) < abs(result.angle_shifts[0].shift_nm)


def test_the_shift_of_a_named_feature_and_the_note_without_n_eff():
    spec = replace(COMPLETE, feature_wavelength_nm=532.0, aoi_max_deg=20.0)
    result = check_spec(spec)
    assert [s.wavelength0_nm for s in result.angle_shifts] == [532.0]
    without = check_spec(replace(COMPLETE, design_n_eff=None))
    assert without.angle_shifts == () and "SHIFT_NEEDS_N_EFF" in without.codes()


def test_laser_damage_testing_needs_its_conditions():
    # test-methods.md: usually an outside service, certification or threshold (common practice)
    result = check_spec(replace(COMPLETE, laser_damage="certification"))
    codes = result.codes()
    assert "LASER_DAMAGE_DETAIL_MISSING" in codes and "LASER_DAMAGE_OUTSIDE" in codes
    detailed = check_spec(
        replace(COMPLETE, laser_damage="threshold", laser_damage_detail="1064 nm, 10 ns, 10 Hz")
    )
    assert "LASER_DAMAGE_DETAIL_MISSING" not in detailed.codes()


def test_a_single_wavelength_needs_no_average_or_absolute_basis():
    spec = replace(COMPLETE, wavelength_min_nm=1064.0, wavelength_max_nm=1064.0, limit_basis=None)
    assert "LIMIT_BASIS_MISSING" not in check_spec(spec).codes()


@pytest.mark.parametrize(
    ("changes", "field"),
    [
        ({"wavelength_min_nm": 700.0}, "wavelength_min_nm"),
        ({"limit_max_percent": 120.0}, "limit_max_percent"),
        ({"aoi_min_deg": 20.0}, "aoi_min_deg"),
        ({"aoi_max_deg": 95.0}, "aoi_max_deg"),
        ({"requirement_kind": "A"}, "requirement_kind"),
        ({"polarization": "circular"}, "polarization"),
        ({"sides_coated": 3}, "sides_coated"),
        ({"laser_damage": "maybe"}, "laser_damage"),
        ({"substrate_internal_transmittance_percent": 0.0}, "internal_transmittance"),
        ({"wavelength_max_nm": "650"}, "wavelength_max_nm"),
        ({"design_n_eff": 0.5, "aoi_max_deg": 60.0}, "n_eff"),
    ],
)
def test_bad_values_are_refused_naming_the_field(changes, field):
    with pytest.raises(InputError, match=field):
        check_spec(replace(COMPLETE, **changes))
