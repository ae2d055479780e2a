"""Planning rules: requirements to ordered sequences on witness pieces.

Sources of the expectations:
- shared/reference/test-methods.md: MIL-C-48497A groups and values [pub]/[mem]; ISO 9211-4
  "store at least 12 h at ambient after coating (recommended)" [pub]; ISO 9022 test code
  "ISO 9022-MM-SS-O" [mem; the clause itself pub], states 0, 1, 2 [pub]; ISO 2409 / ASTM
  D3359 class table [pub]; MIL-PRF-13830B cemented parts, 5 h at room temperature [pub].
- Common practice (the lab's rules, stated in the plan's notes): an initial inspection and
  spectral measurement before any exposure; non-destructive tests chained on one piece in the
  MIL-C-48497A style (humidity, then tape adhesion, then moderate abrasion); destructive tests
  on their own pieces; an inspection after each test; a recovery before inspecting after a
  chamber exposure.
"""

from __future__ import annotations

import json
from pathlib import Path
from types import SimpleNamespace
from typing import Any

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from durability.callouts import ParseOptions, parse_callouts
from durability.catalogue_data import Catalogue, load_catalogue, parse_catalogue
from durability.errors import InputError
from durability.planning import (
    DEFAULT_LAB_ORDER,
    INSPECTION_CODE,
    SPECTRAL_CODE,
    PlanDraft,
    PlannedSequence,
    PlanOptions,
    Requirement,
    plan_sequences,
)
from durability.verdicts import check_acceptance_rule

SEED = Path(__file__).resolve().parents[2] / "fixtures" / "catalogue" / "methods.json"


@pytest.fixture(scope="module")
def catalogue() -> Catalogue:
    return load_catalogue(SEED)


def codes_in(sequence: PlannedSequence) -> list[str]:
    return [s.method_code for s in sequence.steps if s.role == "test"]


def sequence_with(plan: PlanDraft, code: str) -> PlannedSequence:
    (found,) = [s for s in plan.sequences if code in codes_in(s)]
    return found


def step(sequence: PlannedSequence, code: str) -> Any:
    (found,) = [s for s in sequence.steps if s.method_code == code and s.role == "test"]
    return found


def review_text(plan: PlanDraft) -> str:
    return "\n".join(r.text for r in plan.review_items)


MIL_BASIC = [{"kind": "coating_spec", "standard": "MIL-C-48497A", "text": "MIL-C-48497A"}]
SCRATCH_DIG = {
    "kind": "scratch_dig",
    "standard": "MIL-PRF-13830B",
    "limit": {"scratch": 60, "dig": 40, "normal": "60-40"},
    "text": "60-40",
}
ISO_SET = [
    {
        "kind": "environmental",
        "standard": "ISO 9022-2",
        "method": "12",
        "severity": "06",
        "state": "1",
        "text": "ISO 9022-12-06-1",
    },
    {
        "kind": "test_method",
        "standard": "ISO 9211-4",
        "method": "01",
        "severity": "02",
        "text": "ISO 9211-4 01 severity 02",
    },
    {
        "kind": "crosshatch_limit",
        "standard": "ISO 2409",
        "limit": {"iso2409_class": 1},
        "text": "ISO 2409 class 1 max",
    },
]


# ------------------------------------------------------------------ MIL-C-48497A basic


def test_mil_c_48497a_basic_chains_humidity_adhesion_moderate_abrasion(
    catalogue: Catalogue,
) -> None:
    plan = plan_sequences([*MIL_BASIC, SCRATCH_DIG], catalogue)
    # MIL-C-48497A basic group: adhesion, humidity, moderate abrasion (test-methods.md [pub]),
    # chained humidity -> adhesion -> moderate abrasion on one piece (common practice)
    (only,) = plan.sequences
    assert codes_in(only) == [
        "MIL-C-48497A:humidity",
        "MIL-C-48497A:adhesion",
        "MIL-C-48497A:moderate_abrasion",
    ]
    roles = [s.role for s in only.steps]
    assert roles == [
        "initial_inspection",
        "initial_spectral",
        "test",
        "inspection",
        "test",
        "inspection",
        "test",
        "final_inspection",
        "final_spectral",
    ]
    assert [s.order for s in only.steps] == list(range(1, 10))
    assert not only.destructive and plan.total_pieces == 1


def test_the_humidity_step_carries_the_catalogue_values_with_their_status(
    catalogue: Catalogue,
) -> None:
    plan = plan_sequences(MIL_BASIC, catalogue)
    humidity = step(plan.sequences[0], "MIL-C-48497A:humidity")
    # 120 °F (49 °C), 24 h, 95-100 % RH [pub]; ±4 °F [mem] (test-methods.md)
    assert humidity.parameters["temperature_c"]["value"] == 49
    assert humidity.parameters["temperature_c"]["status"] == "public_summary"
    assert humidity.parameters["duration_h"]["value"] == 24
    assert humidity.parameters["temperature_tolerance_c"]["status"] == "from_memory"
    assert humidity.acceptance["rule"]["rule"] == "no_listed_defects"
    assert humidity.hazards == ("hot_chamber",) and not humidity.destructive


def test_waits_cover_post_coating_storage_and_recovery(catalogue: Catalogue) -> None:
    plan = plan_sequences(MIL_BASIC, catalogue)
    steps = plan.sequences[0].steps
    # ISO 9211-4: at least 12 h at ambient after coating (recommended) [pub]
    assert steps[0].wait_hours_before == 12.0 and "ISO 9211-4" in steps[0].wait_reason
    # the inspection after humidity waits for recovery (common practice, default 1 h)
    after_humidity = steps[3]
    assert after_humidity.role == "inspection"
    assert after_humidity.wait_hours_before == 1.0 and "recovery" in after_humidity.wait_reason
    # adhesion is a bench test: no recovery before the inspection that follows it
    assert steps[5].wait_hours_before == 0.0
    custom = plan_sequences(MIL_BASIC, catalogue, {"post_coating_wait_h": 24, "recovery_h": 2})
    assert custom.sequences[0].steps[0].wait_hours_before == 24.0
    assert custom.sequences[0].steps[3].wait_hours_before == 2.0


def test_the_plan_says_which_mil_c_48497a_choice_it_used(catalogue: Catalogue) -> None:
    # Temperature and solvent solubility: "sources disagree" (test-methods.md)
    default = plan_sequences(MIL_BASIC, catalogue)
    assert "mil_c_48497a_disputed_basic = False" in " ".join(default.notes)
    codes = [c for s in default.sequences for c in codes_in(s)]
    assert "MIL-C-48497A:temperature" not in codes

    basic = plan_sequences(MIL_BASIC, catalogue, PlanOptions(mil_c_48497a_disputed_basic=True))
    assert "mil_c_48497a_disputed_basic = True" in " ".join(basic.notes)
    chain = sequence_with(basic, "MIL-C-48497A:humidity")
    # temperature is not destructive, so it joins the chain, before humidity in the lab order
    assert codes_in(chain)[:2] == ["MIL-C-48497A:temperature", "MIL-C-48497A:humidity"]
    solvent = sequence_with(basic, "MIL-C-48497A:solvent_solubility")
    assert codes_in(solvent) == ["MIL-C-48497A:solvent_solubility"]
    assert step(solvent, "MIL-C-48497A:solvent_solubility").hazards == ("solvent",)


def test_the_plan_states_the_lab_order_honestly(catalogue: Catalogue) -> None:
    notes = " ".join(plan_sequences(MIL_BASIC, catalogue).notes)
    assert "lab's default order" in notes and "ISO 9211-3" in notes and "not collected" in notes
    assert "common practice" in notes


def test_the_final_inspection_carries_the_surface_limits(catalogue: Catalogue) -> None:
    iso = {
        "kind": "iso10110_7",
        "standard": "ISO 10110-7",
        "limit": {"count": 3, "grade_mm": 0.16, "normal": "5/3x0.16"},
    }
    plan = plan_sequences([*MIL_BASIC, SCRATCH_DIG, iso], catalogue)
    final = [s for s in plan.sequences[0].steps if s.role == "final_inspection"]
    assert len(final) == 1
    (last,) = final
    assert [x["kind"] for x in last.surface_limits] == ["scratch_dig", "iso10110_7"]
    assert "60-40" in last.acceptance["text"] and "5/3x0.16" in last.acceptance["text"]
    # two limits: the engineer judges, each limit carries the rule the verdict code evaluates
    assert last.acceptance["rule"]["rule"] == "engineer_judgement"
    assert [x["rule"] for x in last.surface_limits] == [
        {"rule": "scratch_dig", "spec": "60-40"},
        {"rule": "iso10110_7", "spec": "5/3x0.16"},
    ]
    for limit in last.surface_limits:
        check_acceptance_rule(limit["rule"])


def test_one_surface_limit_becomes_the_final_inspections_rule(catalogue: Catalogue) -> None:
    plan = plan_sequences([*MIL_BASIC, SCRATCH_DIG], catalogue)
    last = [s for s in plan.sequences[0].steps if s.role == "final_inspection"][0]
    assert last.acceptance["rule"] == {"rule": "scratch_dig", "spec": "60-40"}
    assert check_acceptance_rule(last.acceptance["rule"]) == "scratch_dig"


# ------------------------------------------------------------------ severe abrasion and salt fog


def test_destructive_tests_get_their_own_pieces(catalogue: Catalogue) -> None:
    reqs = [
        {
            "kind": "coating_spec",
            "standard": "MIL-C-48497A",
            "tests": [
                "adhesion",
                "humidity",
                "moderate_abrasion",
                "severe_abrasion",
                "salt_fog",
            ],
        },
        SCRATCH_DIG,
    ]
    plan = plan_sequences(reqs, catalogue, {"spare_pieces": 2})
    assert [codes_in(s) for s in plan.sequences] == [
        ["MIL-C-48497A:humidity", "MIL-C-48497A:adhesion", "MIL-C-48497A:moderate_abrasion"],
        ["MIL-C-48497A:salt_fog"],
        ["MIL-C-48497A:severe_abrasion"],
    ]
    assert [s.label for s in plan.sequences] == ["A", "B", "C"]
    salt = step(plan.sequences[1], "MIL-C-48497A:salt_fog")
    assert salt.destructive and salt.hazards == ("salt_fog",)
    assert plan.total_pieces == 3 + 2
    assert set(plan.hazards) == {"hot_chamber", "salt_fog"}
    # the eraser piece ends with its inspection: no chamber exposure, so no final spectral
    assert plan.sequences[2].steps[-1].role == "final_inspection"
    assert plan.sequences[1].steps[-1].role == "final_spectral"


# ------------------------------------------------------------------ ISO set


def test_iso_9022_damp_heat_then_iso_9211_4_abrasion_and_a_crosshatch_piece(
    catalogue: Catalogue,
) -> None:
    plan = plan_sequences(ISO_SET, catalogue)
    assert [codes_in(s) for s in plan.sequences] == [
        ["ISO 9022-2:12", "ISO 9211-4:01"],
        ["ISO 2409:crosshatch"],
    ]
    damp = step(plan.sequences[0], "ISO 9022-2:12")
    # ISO 9022 test code MM-SS-O [mem]; severity tables not collected: values to be entered
    assert damp.severity == "06" and damp.state == "1"
    assert "ISO 9022-12-06-1" in damp.note
    assert damp.parameters["duration_h"]["status"] == "to_be_entered"
    assert damp.parameters["duration_h"]["value"] is None
    assert "severity_table" not in damp.parameters
    abrasion = step(plan.sequences[0], "ISO 9211-4:01")
    # ISO 9211-4 abrasion severity 02: cheesecloth 5 N 50 cycles [mem?]
    assert abrasion.parameters["cycles"]["value"] == 50
    assert abrasion.parameters["force_n"]["value"] == 5
    assert abrasion.parameters["force_n"]["placeholder"] is True
    assert abrasion.kind == "moderate_abrasion" and not abrasion.destructive
    crosshatch = step(plan.sequences[1], "ISO 2409:crosshatch")
    assert crosshatch.acceptance["rule"] == {"rule": "crosshatch_max_class", "iso2409_class": 1}
    # ISO 2409 class 1 is printed beside ASTM D3359 4B (class table [pub])
    assert "4B" in crosshatch.acceptance["text"]
    assert crosshatch.destructive and crosshatch.hazards == ("sharp_blade",)
    texts = review_text(plan)
    assert "ISO 9022-2:12 severity 06" in texts and "duration_h" in texts
    assert "ISO 9211-4:01 severity 02" in texts


def test_a_crosshatch_limit_applies_to_the_named_crosshatch_method(catalogue: Catalogue) -> None:
    reqs = [
        {"kind": "test_method", "standard": "ISO 9211-4", "method": "03"},
        {"kind": "crosshatch_limit", "standard": "ASTM D3359", "limit": {"class": "4B"}},
        {"kind": "crosshatch_limit", "standard": "ISO 2409", "limit": {"iso2409_class": 2}},
    ]
    plan = plan_sequences(reqs, catalogue)
    (only,) = plan.sequences
    crosshatch = step(only, "ISO 9211-4:03")
    # strictest of ASTM 4B (= ISO class 1, class table [pub]) and ISO class 2
    assert crosshatch.acceptance["rule"]["iso2409_class"] == 1
    assert crosshatch.sources == (0, 1, 2)
    assert "strictest" in " ".join(plan.notes)
    # the lattice piece does not judge surface limits
    assert only.steps[-1].surface_limits == ()


def test_an_astm_limit_alone_plans_the_astm_lattice(catalogue: Catalogue) -> None:
    plan = plan_sequences(
        [{"kind": "crosshatch_limit", "standard": "ASTM D3359", "limit": {"astm_class": "3B"}}],
        catalogue,
    )
    crosshatch = step(plan.sequences[0], "ASTM D3359:B")
    assert crosshatch.acceptance["rule"]["iso2409_class"] == 2


def test_a_crosshatch_without_a_limit_is_recorded_and_reviewed(catalogue: Catalogue) -> None:
    plan = plan_sequences(
        [{"kind": "test_method", "standard": "ISO 9211-4", "method": "3"}], catalogue
    )
    crosshatch = step(plan.sequences[0], "ISO 9211-4:03")
    assert crosshatch.acceptance["rule"] == {"rule": "recorded_only"}
    assert "no crosshatch class limit" in review_text(plan)


def test_an_eraser_severity_is_planned_as_severe_abrasion_on_its_own_piece(
    catalogue: Catalogue,
) -> None:
    reqs = [
        {"kind": "test_method", "standard": "ISO 9211-4", "method": "01", "severity": "03"},
        {"kind": "test_method", "standard": "ISO 9211-4", "method": "02", "severity": "01"},
    ]
    plan = plan_sequences(reqs, catalogue)
    abrasion = step(sequence_with(plan, "ISO 9211-4:01"), "ISO 9211-4:01")
    # severity 03: eraser 10 N 20 strokes [mem?]
    assert abrasion.kind == "severe_abrasion" and abrasion.destructive
    assert abrasion.parameters["strokes"]["value"] == 20
    assert codes_in(sequence_with(plan, "ISO 9211-4:01")) == ["ISO 9211-4:01"]


# ------------------------------------------------------------------ review items


def test_an_unknown_callout_is_kept_for_review(catalogue: Catalogue) -> None:
    reqs = [
        *ISO_SET,
        {"kind": "unknown", "text": "per customer durability spec DS-7, rev B"},
        {"kind": "coating_spec", "standard": "MIL-C-99999", "tests": ["humidity"]},
    ]
    plan = plan_sequences(reqs, catalogue)
    by_requirement = {r.requirement: r.text for r in plan.review_items}
    assert "DS-7" in by_requirement[3] and "not understood" in by_requirement[3]
    assert "MIL-C-99999" in by_requirement[4]
    # the rest of the plan is unaffected
    assert len(plan.sequences) == 2


def test_a_requirement_flagged_by_the_parser_is_reviewed(catalogue: Catalogue) -> None:
    req = {**MIL_BASIC[0], "needs_review": True, "assumptions": ["read 'MIL-C-48497' as A"]}
    plan = plan_sequences([req], catalogue)
    assert any(r.requirement == 0 and "flagged" in r.text for r in plan.review_items)
    assert any("read 'MIL-C-48497' as A" in a for a in plan.assumptions)


def test_state_2_and_a_missing_state_are_questioned(catalogue: Catalogue) -> None:
    base = {"kind": "environmental", "standard": "ISO 9022-2", "method": "11", "severity": "01"}
    # states 0, 1, 2 [pub]; 2 = operating [mem]
    operating = plan_sequences([{**base, "state": "2"}], catalogue)
    assert "state 2 means operating" in review_text(operating)
    missing = plan_sequences([base], catalogue)
    assert "no state of operation" in review_text(missing)
    odd = plan_sequences([{**base, "state": "5"}], catalogue)
    assert "'5' is not 0, 1 or 2" in review_text(odd)


def test_an_iso_9022_method_without_its_part_is_found(catalogue: Catalogue) -> None:
    plan = plan_sequences(
        [{"kind": "environmental", "standard": "ISO 9022", "method": "40", "severity": "02"}],
        catalogue,
    )
    assert codes_in(plan.sequences[0]) == ["ISO 9022-4:40"]
    assert any("part not given" in a for a in plan.assumptions)


def test_a_missing_severity_is_reviewed(catalogue: Catalogue) -> None:
    plan = plan_sequences(
        [{"kind": "environmental", "standard": "ISO 9022-2", "method": "10", "state": "1"}],
        catalogue,
    )
    assert "needs a degree of severity" in review_text(plan)


def test_unplannable_requirements_leave_no_sequence_but_a_review(catalogue: Catalogue) -> None:
    plan = plan_sequences([{"kind": "unknown", "text": "?"}], catalogue)
    assert plan.sequences == () and plan.total_pieces == 0
    assert "no durability test could be planned" in review_text(plan)


# ------------------------------------------------------------------ MIL-PRF-13830B appendices


def test_appendix_c_maps_to_its_mil_c_675c_equivalents(catalogue: Catalogue) -> None:
    plan = plan_sequences(
        [
            {
                "kind": "coating_spec",
                "standard": "MIL-PRF-13830B App. C",
                "tests": ["adhesion", "humidity", "severe_abrasion"],
            }
        ],
        catalogue,
    )
    codes = [c for s in plan.sequences for c in codes_in(s)]
    assert codes == [
        "MIL-PRF-13830B:C-humidity",
        "MIL-PRF-13830B:C-adhesion",
        "MIL-PRF-13830B:C-severe_abrasion",
    ]
    # the appendix's own optical check replaces the lab's spectral step
    first = plan.sequences[0].steps[1]
    assert first.role == "initial_spectral"
    assert first.method_code == "MIL-PRF-13830B:C-quarter_wave_check"


@pytest.mark.parametrize(
    "written", ["MIL-PRF-13830B App. C", "MIL-PRF-13830B, Appendix C", "mil-prf-13830b app c"]
)
def test_appendix_c_is_read_as_written_on_drawings(catalogue: Catalogue, written: str) -> None:
    plan = plan_sequences(
        [{"kind": "coating_spec", "standard": written, "tests": ["adhesion"]}], catalogue
    )
    assert codes_in(plan.sequences[0]) == ["MIL-PRF-13830B:C-adhesion"]


def test_appendix_c_without_tests_plans_all_and_asks(catalogue: Catalogue) -> None:
    plan = plan_sequences(
        [{"kind": "coating_spec", "standard": "MIL-PRF-13830B Appendix C"}], catalogue
    )
    codes = {c for s in plan.sequences for c in codes_in(s)}
    assert {"MIL-PRF-13830B:C-adhesion", "MIL-PRF-13830B:C-salt_fog"} <= codes
    assert "confirm which of the planned tests" in review_text(plan)


def test_mil_prf_13830b_without_an_appendix_is_asked(catalogue: Catalogue) -> None:
    plan = plan_sequences(
        [{"kind": "coating_spec", "standard": "MIL-PRF-13830B", "tests": ["humidity"]}], catalogue
    )
    assert plan.sequences == ()
    assert "ask which one is meant" in review_text(plan)


def test_a_method_with_its_own_recovery_uses_it(catalogue: Catalogue) -> None:
    plan = plan_sequences(
        [
            {
                "kind": "test_method",
                "standard": "MIL-PRF-13830B",
                "method": "cemented-low-temperature",
            }
        ],
        catalogue,
    )
    steps = plan.sequences[0].steps
    # MIL-PRF-13830B cemented parts: inspect after 5 h at room temperature [pub]
    assert steps[3].wait_hours_before == 5.0
    assert "MIL-PRF-13830B:cemented-low-temperature" in steps[3].wait_reason


# ------------------------------------------------------------------ options and inputs


def test_pieces_and_chaining_options(catalogue: Catalogue) -> None:
    plan = plan_sequences(MIL_BASIC, catalogue, {"pieces_per_sequence": 3, "spare_pieces": 1})
    assert plan.sequences[0].pieces == 3 and plan.total_pieces == 4
    apart = plan_sequences(MIL_BASIC, catalogue, {"chain_non_destructive": False})
    assert [len(codes_in(s)) for s in apart.sequences] == [1, 1, 1]
    assert "own piece" in " ".join(apart.notes)


def test_a_custom_lab_order_changes_the_chain(catalogue: Catalogue) -> None:
    order = ("adhesion", "humidity", "moderate_abrasion")
    plan = plan_sequences(MIL_BASIC, catalogue, {"lab_order": order})
    assert codes_in(plan.sequences[0]) == [
        "MIL-C-48497A:adhesion",
        "MIL-C-48497A:humidity",
        "MIL-C-48497A:moderate_abrasion",
    ]


def test_spectral_limits_go_to_every_spectral_step(catalogue: Catalogue) -> None:
    # the limit shape is the verdict code's (durability.verdicts module doc)
    limits = [
        {
            "band_nm": [450, 650],
            "quantity": "R",
            "statistic": "average",
            "max": 0.5,
            "min": None,
            "unit": "%",
        }
    ]
    plan = plan_sequences(MIL_BASIC, catalogue, {"spectral_limits": limits})
    spectral = [s for s in plan.sequences[0].steps if s.kind == "spectral_measurement"]
    assert len(spectral) == 2
    for s in spectral:
        assert s.acceptance["rule"] == {"rule": "spectral_limits", "limits": limits}
    assert "no spectral limits" not in review_text(plan)
    # without limits the spectra are recorded only, and the plan asks for the limits
    bare = plan_sequences(MIL_BASIC, catalogue)
    assert "no spectral limits" in review_text(bare)
    assert bare.sequences[0].steps[1].acceptance["rule"] == {"rule": "recorded_only"}


@pytest.mark.parametrize(
    ("options", "words"),
    [
        ({"pieces_per_sequence": 0}, "pieces_per_sequence"),
        ({"spare_pieces": -1}, "spare_pieces"),
        ({"lab_order": ["humidity", "boiling"]}, "'lab_order'[1]"),
        ({"lab_order": ["humidity", "humidity"]}, "appears twice"),
        ({"lab_order": "humidity"}, "'lab_order'"),
        ({"recovery_h": -1}, "recovery_h"),
        ({"chain_non_destructive": "yes"}, "chain_non_destructive"),
        ({"spectral_limits": [1]}, "'spectral_limits'[0]"),
        ({"spectral_limits": [{"quantity": "R"}]}, "'spectral_limits'"),
        ({"colour": "blue"}, "unknown field(s) 'colour'"),
    ],
)
def test_bad_options_are_refused_naming_the_field(
    catalogue: Catalogue, options: dict[str, Any], words: str
) -> None:
    with pytest.raises(InputError) as caught:
        plan_sequences(MIL_BASIC, catalogue, options)
    assert words in str(caught.value)


def test_a_bad_requirement_is_refused_naming_its_index_and_field(catalogue: Catalogue) -> None:
    with pytest.raises(InputError, match=r"requirements\[1\]: field 'kind'"):
        plan_sequences([MIL_BASIC[0], {"kind": "wish"}], catalogue)
    with pytest.raises(InputError, match=r"requirements\[0\]: field 'tests'"):
        plan_sequences([{"kind": "coating_spec", "tests": "humidity"}], catalogue)
    with pytest.raises(InputError, match=r"requirements\[0\]: field 'limit'"):
        plan_sequences([{"kind": "crosshatch_limit", "limit": [1]}], catalogue)
    with pytest.raises(InputError, match="expected a list"):
        plan_sequences({"kind": "unknown"}, catalogue)
    with pytest.raises(InputError, match="requirement: field 'kind'"):
        Requirement(kind="wish")


def test_the_parsers_objects_are_accepted(catalogue: Catalogue) -> None:
    parsed = SimpleNamespace(
        kind="coating_spec",
        standard="MIL-C-48497A",
        method=None,
        severity=None,
        state=None,
        tests=("humidity",),
        limit=None,
        assumptions=(),
        needs_review=False,
        callout="MIL-C-48497A humidity",
    )
    plan = plan_sequences([parsed, Requirement(kind="unknown", text="x")], catalogue)
    assert codes_in(plan.sequences[0]) == ["MIL-C-48497A:humidity"]
    assert Requirement.from_any(parsed).text == "MIL-C-48497A humidity"


def test_a_catalogue_without_the_lab_procedures_is_refused() -> None:
    data = json.loads(SEED.read_text(encoding="utf-8"))
    data["methods"] = [m for m in data["methods"] if m["code"] != INSPECTION_CODE]
    with pytest.raises(InputError, match="LAB:inspection"):
        plan_sequences(MIL_BASIC, parse_catalogue(data))


def test_the_plan_is_json_ready(catalogue: Catalogue) -> None:
    plan = plan_sequences([*ISO_SET, SCRATCH_DIG, {"kind": "unknown"}], catalogue)
    data = json.loads(json.dumps(plan.as_json(), ensure_ascii=False))
    assert data["total_pieces"] == plan.total_pieces
    assert data["options"]["lab_order"] == list(DEFAULT_LAB_ORDER)
    assert data["sequences"][0]["steps"][0]["method_code"] == INSPECTION_CODE
    assert data["sequences"][0]["steps"][1]["method_code"] == SPECTRAL_CODE
    assert data["review_items"][-1]["requirement"] is None


# ------------------------------------------------------------------ invariants on any set

REQUIREMENT_POOL: list[dict[str, Any]] = [
    MIL_BASIC[0],
    {
        "kind": "coating_spec",
        "standard": "MIL-C-48497A",
        "tests": ["severe_abrasion", "salt_fog", "water_solubility", "salt_solubility"],
    },
    {"kind": "coating_spec", "standard": "MIL-M-13508C", "tests": ["humidity", "adhesion"]},
    {"kind": "coating_spec", "standard": "MIL-C-675C"},
    *ISO_SET,
    {"kind": "environmental", "standard": "ISO 9022-2", "method": "15", "severity": "02"},
    {"kind": "environmental", "standard": "MIL-STD-810", "method": "509"},
    {"kind": "environmental", "standard": "MIL-STD-810", "method": "503"},
    {"kind": "test_method", "standard": "ISO 9211-4", "method": "01", "severity": "03"},
    {"kind": "test_method", "standard": "ISO 9211-4", "method": "04", "severity": "01"},
    {"kind": "crosshatch_limit", "standard": "ASTM D3359", "limit": {"class": "5B"}},
    SCRATCH_DIG,
    {"kind": "unknown", "text": "customer spec"},
    {"kind": "coating_spec", "standard": "MIL-C-00000"},
]


@settings(max_examples=80)
@given(
    st.lists(st.sampled_from(range(len(REQUIREMENT_POOL))), max_size=8),
    st.booleans(),
    st.booleans(),
)
def test_every_plan_keeps_the_piece_rules(picks: list[int], disputed: bool, chain: bool) -> None:
    catalogue = load_catalogue(SEED)
    reqs = [REQUIREMENT_POOL[i] for i in picks]
    plan = plan_sequences(
        reqs,
        catalogue,
        {"mil_c_48497a_disputed_basic": disputed, "chain_non_destructive": chain},
    )
    for sequence in plan.sequences:
        steps = sequence.steps
        # an initial inspection, then a spectral measurement, before any exposure
        assert steps[0].role == "initial_inspection" and steps[0].kind == "inspection"
        assert steps[1].role == "initial_spectral" and steps[1].kind == "spectral_measurement"
        assert [s.order for s in steps] == list(range(1, len(steps) + 1))
        tests = [s for s in steps if s.role == "test"]
        assert tests
        # destructive steps never share a piece
        if any(s.destructive for s in tests):
            assert len(tests) == 1
        # an inspection follows every test; exactly one final inspection
        for n, s in enumerate(steps):
            if s.role == "test":
                assert steps[n + 1].kind == "inspection"
        assert [s.role for s in steps].count("final_inspection") == 1
        for s in steps:
            check_acceptance_rule(s.acceptance["rule"])
    # nothing is dropped: every requirement is planned or reviewed
    planned = {i for q in plan.sequences for s in q.steps for i in s.sources}
    surfaced = {x["requirement"] for q in plan.sequences for s in q.steps for x in s.surface_limits}
    reviewed = {r.requirement for r in plan.review_items}
    for i in range(len(reqs)):
        assert i in planned | surfaced | reviewed, reqs[i]


# ------------------------------------------------------------------ with the callout parser


def test_the_callout_parsers_output_plans_end_to_end(catalogue: Catalogue) -> None:
    text = "\n".join(
        [
            "ISO 9022-12-06-1",
            "ISO 9211-4 01 severity 02",
            "Crosshatch per ISO 2409 class 1 max",
            "S/D 60/40",
            "customer durability spec DS-7",
        ]
    )
    parsed = parse_callouts(text, ParseOptions())
    plan = plan_sequences([r.as_json() for r in parsed.requirements], catalogue)
    assert [codes_in(s) for s in plan.sequences] == [
        ["ISO 9022-2:12", "ISO 9211-4:01"],
        ["ISO 2409:crosshatch"],
    ]
    crosshatch = step(plan.sequences[1], "ISO 2409:crosshatch")
    assert crosshatch.acceptance["rule"] == {"rule": "crosshatch_max_class", "iso2409_class": 1}
    # the parser's normal form "60-40" is the spec the verdict code reads
    final = [s for s in plan.sequences[0].steps if s.role == "final_inspection"][0]
    assert final.acceptance["rule"] == {"rule": "scratch_dig", "spec": "60-40"}
    assert any(r.requirement == 4 for r in plan.review_items)


def test_two_tests_of_one_kind_on_a_piece_are_questioned(catalogue: Catalogue) -> None:
    reqs = [
        {"kind": "coating_spec", "standard": "MIL-C-48497A", "tests": ["humidity"]},
        {
            "kind": "environmental",
            "standard": "ISO 9022-2",
            "method": "12",
            "severity": "06",
            "state": "1",
        },
    ]
    plan = plan_sequences(reqs, catalogue)
    assert codes_in(plan.sequences[0]) == ["MIL-C-48497A:humidity", "ISO 9022-2:12"]
    assert "2 humidity tests on one piece" in review_text(plan)
