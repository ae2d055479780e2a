"""A step's verdict from its acceptance rule."""

from __future__ import annotations

from datetime import date, timedelta

import pytest
from hypothesis import given
from hypothesis import strategies as st

from durability.errors import InputError
from durability.grading import DefectType, Inspection, Observation
from durability.surface.iso10110 import Iso10110Observation
from durability.surface.scratch_dig import Dig, Scratch, ScratchDigObservation
from durability.verdicts import (
    RULES,
    ConsumableUse,
    DecisionRule,
    InstrumentUse,
    Judgement,
    SpectralStatistic,
    StepOutcome,
    ValidityFacts,
    check_acceptance_rule,
    step_verdict,
    validity_problems,
)

TEST_DAY = date(2025, 3, 10)
TAPE = {"rule": "no_coating_removed"}
HOLD = {"rule": "crosshatch_max_class", "iso2409_class": 1}
AR_LIMIT = {
    "rule": "spectral_limits",
    "limits": [
        {
            "band_nm": [400, 700],
            "quantity": "R",
            "statistic": "average",
            "max": 0.5,
            "min": None,
            "unit": "%",
        }
    ],
}


def facts(**kwargs):
    return ValidityFacts(test_date=TEST_DAY, **kwargs)


def removed(where=""):
    return StepOutcome(coating_removed=True, removal_location=where)


# ---------------------------------------------------------------- validity first


def test_an_instrument_counts_through_its_calibration_due_date():
    # Glossary: an instrument's calibration is valid through its due date.
    on_due_day = facts(instruments=(InstrumentUse("pull gauge G2", TEST_DAY),))
    verdict = step_verdict(TAPE, StepOutcome(coating_removed=False), on_due_day)
    assert verdict.outcome == "pass"


def test_an_instrument_is_out_of_calibration_the_day_after_its_due_date():
    due_yesterday = facts(instruments=(InstrumentUse("pull gauge G2", TEST_DAY - timedelta(1)),))
    verdict = step_verdict(TAPE, removed("centre"), due_yesterday)
    assert verdict.outcome == "invalid"
    assert "pull gauge G2 was out of calibration on 2025-03-10" in verdict.reason
    assert "not a coating failure" in verdict.reason
    assert any("valid through its calibration due date" in c for c in verdict.conventions)


def test_a_consumable_is_usable_through_its_expiry_date_and_not_after():
    today = facts(consumables=(ConsumableUse("tape", "L-204", TEST_DAY),))
    assert step_verdict(TAPE, StepOutcome(coating_removed=False), today).outcome == "pass"
    yesterday = facts(consumables=(ConsumableUse("tape", "L-204", TEST_DAY - timedelta(1)),))
    verdict = step_verdict(TAPE, StepOutcome(coating_removed=False), yesterday)
    assert verdict.outcome == "invalid"
    assert "consumable tape lot L-204 was past its expiry" in verdict.reason
    no_expiry = facts(consumables=(ConsumableUse("cheesecloth"),))
    assert step_verdict(TAPE, StepOutcome(coating_removed=False), no_expiry).outcome == "pass"


def test_an_exposure_that_does_not_count_makes_the_step_invalid_not_failed():
    bad = facts(exposure_counts=False, exposure_note="humidity below 95 % RH for 3 h")
    rule = {"rule": "no_listed_defects", "defects": ["peeling"]}
    outcome = StepOutcome(inspection=Inspection((Observation(DefectType.PEELING),)))
    verdict = step_verdict(rule, outcome, bad)
    assert verdict.outcome == "invalid"
    assert "the exposure does not count: humidity below 95 % RH for 3 h" in verdict.reason
    assert verdict.clause.startswith("validity of the test")


def test_validity_comes_before_missing_inputs_and_lists_every_problem():
    bad = facts(
        exposure_counts=False,
        instruments=(InstrumentUse("S1", date(2025, 1, 1)),),
        consumables=(ConsumableUse("eraser", expiry=date(2025, 2, 1)),),
    )
    assert len(validity_problems(bad)) == 3
    assert step_verdict(HOLD, StepOutcome(), bad).outcome == "invalid"


def test_missing_validity_facts_are_said_in_the_conventions():
    verdict = step_verdict(TAPE, StepOutcome(coating_removed=False), None)
    assert any("no validity facts" in c for c in verdict.conventions)


@given(st.integers(-30, 30))
def test_calibration_boundary_holds_for_any_offset(offset):
    due = TEST_DAY + timedelta(days=offset)
    verdict = step_verdict(
        TAPE, StepOutcome(coating_removed=False), facts(instruments=(InstrumentUse("X", due),))
    )
    assert verdict.outcome == ("pass" if offset >= 0 else "invalid")


# ---------------------------------------------------------------- rule checking


def test_an_unknown_rule_is_named():
    with pytest.raises(InputError, match="acceptance rule 'no_haze' is unknown"):
        step_verdict({"rule": "no_haze"}, StepOutcome(), None)
    with pytest.raises(InputError, match="expected an object"):
        check_acceptance_rule("no_coating_removed")


@pytest.mark.parametrize(
    ("rule", "message"),
    [
        ({"rule": "no_coating_removed", "force_n": 5}, "unknown key"),
        ({"rule": "crosshatch_max_class"}, "missing key"),
        ({"rule": "crosshatch_max_class", "iso2409_class": 6}, "is not 0-5"),
        ({"rule": "crosshatch_max_share", "max_share_detached_pct": 150}, "outside 0-100"),
        ({"rule": "no_listed_defects", "defects": []}, "non-empty list"),
        ({"rule": "no_listed_defects", "defects": ["haze", "rust"]}, "item 2: defect type 'rust'"),
        ({"rule": "scratch_dig", "spec": "60x40"}, "position 3"),
        ({"rule": "iso10110_7", "spec": "5/3x0.16; Q1"}, "field 2"),
        ({"rule": "engineer_judgement", "text": " "}, "non-empty text"),
        ({"rule": "spectral_limits", "limits": []}, "non-empty list"),
    ],
)
def test_a_malformed_rule_is_named(rule, message):
    with pytest.raises(InputError, match=message):
        check_acceptance_rule(rule)


@pytest.mark.parametrize(
    ("change", "message"),
    [
        ({"band_nm": [700, 400]}, "lower to a higher"),
        ({"band_nm": [400]}, "band_nm must be"),
        ({"quantity": "A"}, "quantity 'A'"),
        ({"statistic": "median"}, "statistic 'median'"),
        ({"unit": "fraction"}, "unit 'fraction'"),
        ({"max": None, "min": None}, "give max, min or both"),
        ({"max": 1.0, "min": 2.0}, "min 2 is above max 1"),
        ({"colour": "red"}, "unknown key"),
    ],
)
def test_a_malformed_spectral_limit_is_named_by_its_number(change, message):
    limit = {**AR_LIMIT["limits"][0], **change}
    rule = {"rule": "spectral_limits", "limits": [AR_LIMIT["limits"][0], limit]}
    with pytest.raises(InputError, match=f"limit 2.*{message}"):
        check_acceptance_rule(rule)


def test_every_catalogue_rule_is_known():
    assert set(RULES) == {
        "no_coating_removed",
        "no_listed_defects",
        "crosshatch_max_class",
        "crosshatch_max_share",
        "scratch_dig",
        "iso10110_7",
        "spectral_limits",
        "recorded_only",
        "engineer_judgement",
    }


# ---------------------------------------------------------------- tape adhesion


def test_tape_adhesion_fails_when_coating_was_removed_and_says_where():
    # MIL-C-48497A adhesion: no coating removed (test-methods.md [pub]).
    verdict = step_verdict(TAPE, removed("edge, 2 o'clock"), None, clause="MIL-C-48497A adhesion")
    assert verdict.outcome == "fail"
    assert verdict.reason == (
        "coating was removed (edge, 2 o'clock); MIL-C-48497A adhesion allows no coating removed"
    )
    assert verdict.clause == "MIL-C-48497A adhesion"
    passed = step_verdict(TAPE, StepOutcome(coating_removed=False), None)
    assert passed.outcome == "pass"


def test_tape_adhesion_needs_to_know_whether_and_where():
    with pytest.raises(InputError, match="coating_removed"):
        step_verdict(TAPE, StepOutcome(), None)
    with pytest.raises(InputError, match="say where"):
        step_verdict(TAPE, removed(), None)


# ---------------------------------------------------------------- defects after exposure

LISTED = {"rule": "no_listed_defects", "defects": ["peeling", "blistering", "haze"]}


def test_a_listed_defect_that_was_not_there_before_fails():
    before = Inspection((Observation(DefectType.SPOTS, quantity=1),))
    after = Inspection((Observation(DefectType.SPOTS, quantity=1), Observation("blistering")))
    verdict = step_verdict(LISTED, StepOutcome(inspection=after, initial_inspection=before), None)
    assert verdict.outcome == "fail"
    assert "blistering appeared after exposure" in verdict.reason


def test_a_worsened_grade_of_a_listed_defect_fails():
    before = Inspection((Observation(DefectType.HAZE, intensity=1),))
    after = Inspection((Observation(DefectType.HAZE, intensity=2),))
    verdict = step_verdict(LISTED, StepOutcome(inspection=after, initial_inspection=before), None)
    assert verdict.outcome == "fail"
    assert "haze intensity worsened from 1 (very slight) to 2 (slight)" in verdict.reason


def test_an_unchanged_or_unlisted_defect_passes_and_is_named():
    before = Inspection((Observation(DefectType.HAZE, intensity=2),))
    after = Inspection(
        (Observation(DefectType.HAZE, intensity=2), Observation(DefectType.SPOTS, quantity=1))
    )
    verdict = step_verdict(LISTED, StepOutcome(inspection=after, initial_inspection=before), None)
    assert verdict.outcome == "pass"
    assert "present before exposure and not worse: haze" in verdict.reason
    assert "observed but not listed: spots" in verdict.reason


def test_an_explicit_no_defects_observed_passes():
    outcome = StepOutcome(inspection=Inspection(no_defects_observed=True))
    verdict = step_verdict(LISTED, outcome, None)
    assert verdict.outcome == "pass"
    assert verdict.reason.startswith("no defects observed after exposure")


def test_an_inspection_that_records_nothing_is_refused():
    with pytest.raises(InputError, match="records nothing"):
        step_verdict(LISTED, StepOutcome(inspection=Inspection()), None)
    with pytest.raises(InputError, match="inspection after exposure: missing"):
        step_verdict(LISTED, StepOutcome(), None)


# ---------------------------------------------------------------- crosshatch


def test_a_crosshatch_class_above_the_required_maximum_fails_naming_iso_2409():
    # ISO 2409 classes 0-5, lower is better (test-methods.md, cross-cut table [pub]).
    verdict = step_verdict(HOLD, StepOutcome(crosshatch_class=2), None)
    assert verdict.outcome == "fail"
    assert verdict.reason == "crosshatch class 2 exceeds the required class 1 maximum, ISO 2409"
    assert step_verdict(HOLD, StepOutcome(crosshatch_class=1), None).outcome == "pass"


def test_a_share_is_graded_with_the_boundary_convention():
    # ISO 2409 table [pub]: exactly 5 % is class 1 with the better-class convention, class 2
    # with the worse-class one.
    outcome = StepOutcome(detached_share_pct=5.0)
    assert step_verdict(HOLD, outcome, None).outcome == "pass"
    worse = step_verdict(HOLD, outcome, None, boundary="worse")
    assert worse.outcome == "fail"
    assert any("worse class" in c for c in worse.conventions)
    assert any("not as equivalent tests" in c for c in worse.conventions)


def test_a_class_that_disagrees_with_the_share_is_refused():
    with pytest.raises(InputError, match="does not match the detached share"):
        step_verdict(HOLD, StepOutcome(detached_share_pct=20.0, crosshatch_class=1), None)


SHARE = {"rule": "crosshatch_max_share", "max_share_detached_pct": 10.0}


def test_a_share_limit_compares_the_share():
    assert step_verdict(SHARE, StepOutcome(detached_share_pct=10.0), None).outcome == "pass"
    verdict = step_verdict(SHARE, StepOutcome(detached_share_pct=12.0), None)
    assert verdict.outcome == "fail"
    assert "detached share 12 % (class 2) exceeds the 10 % maximum" in verdict.reason


def test_a_share_limit_with_a_guard_band_tightens_the_limit():
    guarded = DecisionRule("guarded", guard_band=1.0)
    verdict = step_verdict(SHARE, StepOutcome(detached_share_pct=9.5), None, decision_rule=guarded)
    assert verdict.outcome == "fail"
    assert "acceptance limit 9 % (maximum 10 % less guard band 1 %)" in verdict.reason
    assert any("guarded acceptance" in c for c in verdict.conventions)


def test_a_class_decides_a_share_limit_only_when_it_lies_on_one_side():
    # Class ranges from the ISO 2409 table [pub]: class 1 up to 5 %, class 2 over 5 to 15 %,
    # class 3 over 15 to 35 %.
    assert step_verdict(SHARE, StepOutcome(crosshatch_class=1), None).outcome == "pass"
    assert step_verdict(SHARE, StepOutcome(crosshatch_class=3), None).outcome == "fail"
    with pytest.raises(InputError, match="straddles the 10 % limit"):
        step_verdict(SHARE, StepOutcome(crosshatch_class=2), None)
    # Limit on a boundary: class 2 (over 5 %) is wholly above a 5 % limit.
    five = {"rule": "crosshatch_max_share", "max_share_detached_pct": 5.0}
    assert step_verdict(five, StepOutcome(crosshatch_class=2), None).outcome == "fail"


def test_a_crosshatch_result_is_needed():
    with pytest.raises(InputError, match="crosshatch_class"):
        step_verdict(HOLD, StepOutcome(), None)


# ---------------------------------------------------------------- surface rules


def test_a_scratch_dig_rule_uses_the_mil_prf_13830b_evaluation():
    rule = {"rule": "scratch_dig", "spec": "60-40"}
    good = ScratchDigObservation(aperture_diameter_mm=20, scratches=(Scratch(40, 2.0),))
    verdict = step_verdict(rule, StepOutcome(scratch_dig=good), None)
    assert verdict.outcome == "pass"
    assert verdict.reason.startswith("meets scratch-dig 60-40")
    bad = ScratchDigObservation(aperture_diameter_mm=20, digs=(Dig(0.5),))
    verdict = step_verdict(rule, StepOutcome(scratch_dig=bad), None)
    assert verdict.outcome == "fail"
    assert "MIL-PRF-13830B" in verdict.reason
    assert any("no scratch width is inferred" in c for c in verdict.conventions)
    with pytest.raises(InputError, match="scratch_dig observation"):
        step_verdict(rule, StepOutcome(), None)


def test_an_iso10110_rule_uses_the_iso_10110_7_evaluation():
    rule = {"rule": "iso10110_7", "spec": "5/3x0.16"}
    verdict = step_verdict(
        rule, StepOutcome(surface=Iso10110Observation(imperfections_mm=(0.2,))), None
    )
    assert verdict.outcome == "fail"
    assert "ISO 10110-7" in verdict.reason
    assert any("edition assumed" in c for c in verdict.conventions)
    with pytest.raises(InputError, match="surface observation"):
        step_verdict(rule, StepOutcome(), None)


# ---------------------------------------------------------------- spectral limits


def measured(value, uncertainty=None, band=(400.0, 700.0)):
    return StepOutcome(spectral=(SpectralStatistic(band, "R", "average", value, "%", uncertainty),))


def test_simple_acceptance_compares_the_value_with_the_limit():
    # Simple acceptance and guarded acceptance (limit tightened by w = U) as the decision rules
    # of ILAC-G8:2019, from memory.
    assert step_verdict(AR_LIMIT, measured(0.5), None).outcome == "pass"
    verdict = step_verdict(AR_LIMIT, measured(0.51), None)
    assert verdict.outcome == "fail"
    assert verdict.reason.startswith("average R over 400-700 nm is 0.51 %, above the maximum 0.5 %")
    assert any("simple acceptance" in c for c in verdict.conventions)


def test_guarded_acceptance_uses_the_expanded_uncertainty_when_no_band_is_given():
    guarded = DecisionRule("guarded")
    assert step_verdict(AR_LIMIT, measured(0.39, 0.1), None, decision_rule=guarded).outcome == (
        "pass"
    )
    verdict = step_verdict(AR_LIMIT, measured(0.45, 0.1), None, decision_rule=guarded)
    assert verdict.outcome == "fail"
    assert "acceptance limit 0.4 %" in verdict.reason
    with pytest.raises(InputError, match="expanded uncertainty"):
        step_verdict(AR_LIMIT, measured(0.45), None, decision_rule=guarded)


def test_a_minimum_limit_and_a_guard_band_move_up():
    rule = {
        "rule": "spectral_limits",
        "limits": [
            {
                "band_nm": [1040, 1080],
                "quantity": "T",
                "statistic": "minimum",
                "max": None,
                "min": 99.0,
                "unit": "%",
            }
        ],
    }
    stat = SpectralStatistic((1040, 1080), "T", "minimum", 99.1)
    assert step_verdict(rule, StepOutcome(spectral=(stat,)), None).outcome == "pass"
    verdict = step_verdict(
        rule,
        StepOutcome(spectral=(stat,)),
        None,
        decision_rule=DecisionRule("guarded", guard_band=0.2),
    )
    assert verdict.outcome == "fail"
    assert "below the acceptance limit 99.2 %" in verdict.reason


def test_each_limit_needs_its_measured_statistic():
    with pytest.raises(InputError, match=r"spectral limit 1 \(average R over 400-700 nm\)"):
        step_verdict(AR_LIMIT, measured(0.3, band=(420.0, 680.0)), None)
    with pytest.raises(InputError, match="decision rule 'loose'"):
        DecisionRule("loose")


# ---------------------------------------------------------------- recorded only, judgement


def test_recorded_only_passes_and_says_pass_means_recorded():
    verdict = step_verdict({"rule": "recorded_only"}, StepOutcome(), None)
    assert verdict.outcome == "pass"
    assert "pass here means the result was recorded" in verdict.reason


def test_an_engineer_judgement_carries_the_person_and_the_reason():
    rule = {"rule": "engineer_judgement", "text": "no change in appearance under the lamp"}
    outcome = StepOutcome(judgement=Judgement("fail", "R. Okafor", "faint ring at the edge"))
    verdict = step_verdict(rule, outcome, None)
    assert verdict.outcome == "fail"
    assert verdict.reason == (
        'R. Okafor judged the result a fail against the criterion "no change in appearance '
        'under the lamp": faint ring at the edge'
    )
    with pytest.raises(InputError, match="stated reason"):
        step_verdict(rule, StepOutcome(judgement=Judgement("pass", "R. Okafor", "")), None)
    with pytest.raises(InputError, match="'maybe'"):
        step_verdict(rule, StepOutcome(judgement=Judgement("maybe", "R. Okafor", "x")), None)


def test_the_verdict_has_a_json_form():
    data = step_verdict(TAPE, StepOutcome(coating_removed=False), None).as_json()
    assert data["outcome"] == "pass"
    assert data["clause"] == "tape adhesion (no coating removed)"
    assert isinstance(data["conventions"], list)


def test_a_datetime_test_date_is_taken_as_its_day_and_a_non_date_is_refused():
    from datetime import datetime

    on_due_day = ValidityFacts(
        test_date=datetime(2025, 3, 10, 16, 30),
        instruments=(InstrumentUse("S1", TEST_DAY),),
    )
    assert step_verdict(TAPE, StepOutcome(coating_removed=False), on_due_day).outcome == "pass"
    with pytest.raises(InputError, match="test date: expected a date"):
        validity_problems(ValidityFacts(test_date="2025-03-10"))  # type: ignore[arg-type]
    with pytest.raises(InputError, match="instrument S1: calibration due date"):
        validity_problems(facts(instruments=(InstrumentUse("S1", None),)))  # type: ignore[arg-type]


def test_a_removal_answer_must_be_yes_or_no():
    with pytest.raises(InputError, match="is not yes/no"):
        step_verdict(TAPE, StepOutcome(coating_removed="no"), None)  # type: ignore[arg-type]


def test_a_frozen_rule_with_tuples_is_read_like_json():
    from types import MappingProxyType

    limit = MappingProxyType({**AR_LIMIT["limits"][0], "band_nm": (400, 700)})
    frozen = MappingProxyType({"rule": "spectral_limits", "limits": (limit,)})
    assert step_verdict(frozen, measured(0.4), None).outcome == "pass"
