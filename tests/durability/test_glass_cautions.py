"""Checks of durability.glass_cautions.

Sources: the cautions themselves are common practice (shared/reference/test-methods.md, Facts
of the trade: poor chemical resistance limits ultrasonic cleaning and stains in humidity; hot
processes need care with heating and cooling, driven by thermal expansion). The class scales
(ISO 8424 acid 1-5 and 51-53, ISO 10629 alkali and ISO 9689 phosphate 1-4, digit after the
point for visible surface change) are from memory of suppliers' catalogue keys. Thresholds are
the lab's configurable defaults, not published numbers. Glasses below are invented.
"""

from __future__ import annotations

import pytest

from durability.errors import InputError
from durability.glass_cautions import (
    TEST_KINDS,
    CautionThresholds,
    GlassChemistry,
    Scale,
    decode_class,
    glass_cautions,
)

DEFAULTS = CautionThresholds()

ROBUST = GlassChemistry(
    "Silica-like S-1 (invented)",
    acid_class="SR 1",
    alkali_class="AR 1.0",
    phosphate_class="PR 1.0",
    alpha_1e6_per_k=0.5,
)
DELICATE = GlassChemistry(
    "Fluor crown F-9 (invented)",
    acid_class="52.3",
    alkali_class="AR 2.2",
    phosphate_class="PR 4.3",
    alpha_1e6_per_k=14.5,
    supplier_climate_class="CR 2",
    supplier_stain_class="FR 2",
)


@pytest.mark.parametrize(
    ("scale", "written", "main", "digit", "poor"),
    [
        # class order from memory of suppliers' keys; "poor" by the lab's default thresholds
        (Scale.ACID, "SR 5", 5, None, True),
        (Scale.ACID, "1", 1, None, False),
        (Scale.ACID, "52.3", 52, 3, True),
        (Scale.ACID, "sr 3", 3, None, False),
        (Scale.ALKALI, "AR 2.3", 2, 3, False),
        (Scale.ALKALI, "3,1", 3, 1, True),
        (Scale.PHOSPHATE, "PR 4.3", 4, 3, True),
    ],
)
def test_it_decodes_classes_as_suppliers_write_them(scale, written, main, digit, poor):
    result = decode_class(scale, written, DEFAULTS)
    assert result.understood
    assert (result.main_class, result.surface_change_digit, result.poor) == (main, digit, poor)
    assert result.written == written
    assert "from memory" in result.basis


def test_the_surface_change_digit_is_explained():
    # meaning of .3 per suppliers' keys (from memory)
    result = decode_class(Scale.ALKALI, "AR 2.3", DEFAULTS)
    assert result.surface_change is not None and "whitish layer" in result.surface_change
    assert ".3" in result.message


@pytest.mark.parametrize(
    ("scale", "written", "why"),
    [
        (Scale.ACID, "SR 6", "class 6 is not on the scale"),
        (Scale.ALKALI, "AR 5", "class 5 is not on the scale"),
        (Scale.ACID, "AR 2", "prefix 'AR' is not 'SR'"),
        (Scale.ACID, "RA(P) 3", "expected a class such as"),
        (Scale.PHOSPHATE, "PR 2.7", "surface-change digit 7"),
        (Scale.ALKALI, "good", "expected a class such as"),
    ],
)
def test_it_says_when_a_class_is_not_understood(scale, written, why):
    result = decode_class(scale, written, DEFAULTS)
    assert not result.understood and result.poor is None
    assert "not understood" in result.message and why in result.message


def test_a_robust_glass_gets_no_chemical_cautions_and_low_thermal_risk():
    result = glass_cautions(ROBUST)
    topics = {c.topic for c in result.cautions}
    assert "ultrasonic cleaning" not in topics and "staining" not in topics
    assert result.thermal_level == "low"
    assert {f.kind for f in result.test_kinds} == set(TEST_KINDS)
    assert all(f.likely_attacked is False for f in result.test_kinds)


def test_a_delicate_glass_gets_cleaning_staining_and_thermal_cautions():
    result = glass_cautions(DELICATE)
    topics = [c.topic for c in result.cautions]
    assert "ultrasonic cleaning" in topics
    assert "staining" in topics
    assert any("phosphate" in c.message for c in result.cautions if c.topic == "cleaning agents")
    for kind in ("humidity", "salt_fog", "salt_solubility", "water_solubility"):
        assert result.flag(kind).likely_attacked is True
        assert "52.3" in result.flag(kind).reason
    assert result.flag("solvent_solubility").likely_attacked is False
    assert result.flag("temperature").likely_attacked is True
    assert result.flag("thermal_shock").likely_attacked is True
    assert result.thermal_level == "high"


def test_supplier_climate_and_stain_classes_are_shown_as_written():
    result = glass_cautions(DELICATE)
    assert result.supplier_climate_class == "CR 2" and result.supplier_stain_class == "FR 2"
    notes = [c.message for c in result.cautions if c.topic == "supplier classes"]
    assert any("'CR 2'" in m for m in notes) and any("'FR 2'" in m for m in notes)


def test_a_surface_change_digit_alone_raises_the_staining_flag():
    glass = GlassChemistry("G (invented)", acid_class="SR 2", alkali_class="AR 1.3")
    result = glass_cautions(glass)
    assert result.flag("humidity").likely_attacked is True
    assert "surface change" in result.flag("humidity").reason


def test_thermal_shock_before_slow_cycles_as_expansion_grows():
    # thermal shock risk grows with alpha (test-methods.md Facts of the trade, common practice);
    # 8 and 10 x 10^-6/K are the lab's default thresholds, not published values
    care = glass_cautions(GlassChemistry("G (invented)", acid_class="1", alpha_1e6_per_k=8.5))
    assert care.thermal_level == "care"
    assert care.flag("thermal_shock").likely_attacked is True
    assert care.flag("temperature").likely_attacked is False
    assert "common-practice thresholds" in care.thresholds


def test_thresholds_are_the_labs_to_change():
    glass = GlassChemistry("G (invented)", acid_class="SR 4", alpha_1e6_per_k=8.5)
    assert glass_cautions(glass).flag("humidity").likely_attacked is True
    lenient = CautionThresholds(acid_poor_from=5, alpha_care_from=9.0, alpha_high_from=12.0)
    result = glass_cautions(glass, lenient)
    assert result.flag("humidity").likely_attacked is False
    assert result.flag("thermal_shock").likely_attacked is False
    assert "acid poor from class 5" in result.thresholds


def test_missing_data_gives_unknown_not_a_guess():
    result = glass_cautions(GlassChemistry("Unknown (invented)"))
    assert all(
        f.likely_attacked is None for f in result.test_kinds if f.kind != "solvent_solubility"
    )
    assert result.thermal_level == "unknown"
    unread = glass_cautions(GlassChemistry("U (invented)", acid_class="W(S) 2"))
    assert unread.flag("humidity").likely_attacked is None
    assert any(c.topic == "classes" and "not understood" in c.message for c in unread.cautions)


def test_bad_input_names_the_field():
    with pytest.raises(InputError, match="acid_class"):
        glass_cautions(GlassChemistry("G", acid_class=5))  # type: ignore[arg-type]
    with pytest.raises(InputError, match="alpha_1e6_per_k.*check the unit"):
        glass_cautions(GlassChemistry("G", alpha_1e6_per_k=7100.0))
    with pytest.raises(InputError, match="alpha_1e6_per_k"):
        glass_cautions(GlassChemistry("G", alpha_1e6_per_k="7"))  # type: ignore[arg-type]
    with pytest.raises(InputError, match="acid_poor_from"):
        glass_cautions(ROBUST, CautionThresholds(acid_poor_from=6))
    with pytest.raises(InputError, match="alpha_care_from"):
        glass_cautions(ROBUST, CautionThresholds(alpha_care_from=12.0, alpha_high_from=10.0))
    with pytest.raises(InputError, match="test kind 'boil'"):
        glass_cautions(ROBUST).flag("boil")
