"""The method catalogue seed: it loads, validates, and carries what test-methods.md collected.

Values are checked against shared/reference/test-methods.md (the tag of each fact is named
beside the check) and unit conversions against the unit definitions: t(°C) = (t(°F) - 32) x 5/9,
1 in = 25.4 mm, 1 lbf = 4.4482216152605 N, 1 oz (avoirdupois) = 28.349523125 g, 1 US gal =
3.785411784 L (exact by definition; NIST SP 811 appendix B).
"""

from __future__ import annotations

import copy
import json
import math
import re
from pathlib import Path
from typing import Any

import pytest
from hypothesis import given
from hypothesis import strategies as st

from durability.catalogue_data import (
    DEFECTS,
    HAZARDS,
    KINDS,
    Catalogue,
    load_catalogue,
    normalise_severity,
    parse_catalogue,
    validate_rule,
)
from durability.errors import InputError
from durability.grading import DefectType
from durability.verdicts import check_acceptance_rule

SEED = Path(__file__).resolve().parents[2] / "fixtures" / "catalogue" / "methods.json"

LBF_N = 4.4482216152605  # NIST SP 811, exact by definition
OZ_G = 28.349523125  # NIST SP 811, avoirdupois ounce, exact
US_GAL_L = 3.785411784  # NIST SP 811, exact
WATER_G_PER_L_20C = 998.2  # density of water at 20 °C, CRC Handbook


def f_to_c(f: float) -> float:
    return (f - 32.0) * 5.0 / 9.0


@pytest.fixture(scope="module")
def raw() -> dict[str, Any]:
    return json.loads(SEED.read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def catalogue() -> Catalogue:
    return load_catalogue(SEED)


def value(catalogue: Catalogue, code: str, name: str) -> Any:
    method = catalogue.method(code)
    assert method is not None, code
    parameter = method.parameter(name)
    assert parameter is not None, f"{code} {name}"
    return parameter


# ------------------------------------------------------------------ the seed loads


def test_the_seed_loads_and_reads_back_unchanged(raw: dict[str, Any], catalogue: Catalogue) -> None:
    assert catalogue.as_json() == raw


def test_it_holds_every_method_the_reference_collected(catalogue: Catalogue) -> None:
    codes = {m.code for m in catalogue.methods}
    # shared/reference/test-methods.md: MIL-C-48497A table [pub]/[mem]
    for key in (
        "adhesion",
        "humidity",
        "moderate_abrasion",
        "temperature",
        "solvent_solubility",
        "severe_abrasion",
        "salt_solubility",
        "water_solubility",
        "salt_fog",
    ):
        assert f"MIL-C-48497A:{key}" in codes
    # ISO 9211-4 methods 01-04 [pub]; ISO 9022 parts 2, 4, 14 methods [mem]/[pub]
    assert {"ISO 9211-4:01", "ISO 9211-4:02", "ISO 9211-4:03", "ISO 9211-4:04"} <= codes
    assert {f"ISO 9022-2:{n}" for n in range(10, 17)} <= codes
    assert {"ISO 9022-4:40", "ISO 9022-14:75", "ISO 9022-14:76", "ISO 9022-14:77"} <= codes
    assert {"MIL-STD-810:509", "MIL-STD-810:507", "MIL-STD-810:503"} <= codes
    assert {"ISO 2409:crosshatch", "ASTM D3359:B", "LAB:inspection", "LAB:spectral"} <= codes
    # MIL-C-675C and its MIL-PRF-13830B appendix C equivalents carry the same tests
    c675 = {m.key for m in catalogue.methods_of("MIL-C-675C")}
    app_c = {m.key[2:] for m in catalogue.methods_of("MIL-PRF-13830B", "Appendix C")}
    assert c675 == app_c and {"adhesion", "humidity", "salt_fog"} <= c675
    m13508 = {m.key for m in catalogue.methods_of("MIL-M-13508C")}
    app_d = {m.key[2:] for m in catalogue.methods_of("MIL-PRF-13830B", "Appendix D")}
    assert m13508 == app_d


def test_standards_carry_what_is_known_and_nothing_invented(catalogue: Catalogue) -> None:
    mil = catalogue.standard("MIL-C-48497A")
    assert mil is not None
    # Issued 1980, amendment 3 in 1995, inactive for new design by Notice 1 (1997) [pub]
    assert mil.edition == "1980, amendment 3 (1995)" and mil.status == "inactive"
    # No edition was collected for these: it stays empty rather than guessed.
    for designation in ("MIL-C-675C", "MIL-STD-810", "ISO 2409", "ASTM D3359", "ISO 9022-2"):
        standard = catalogue.standard(designation)
        assert standard is not None and standard.edition == ""
    assert catalogue.standard("LAB") is not None


def test_the_defect_vocabulary_is_the_grading_modules() -> None:
    assert set(DEFECTS) == {d.value for d in DefectType}


# ------------------------------------------------------------------ statuses follow the tags


def test_every_status_is_explained_by_its_note(catalogue: Catalogue) -> None:
    # Tag mapping of shared/reference/test-methods.md: [pub] -> public_summary, [mem] ->
    # from_memory, [mem?] -> from_memory + placeholder, [practice] -> common_practice.
    for method in catalogue.methods:
        for p in method.parameters:
            where = f"{method.code} {p.name}"
            note = p.note.lower()
            if p.status == "to_be_entered":
                assert p.value is None, where
            elif p.placeholder:
                assert p.status == "from_memory", where
                assert "[mem?]" in note or "low-confidence" in note, where
            elif p.status == "from_memory":
                assert "[mem" in note or "memory" in note or "recall" in note, where
            elif p.status == "public_summary":
                assert "[pub]" in note or "public summary" in note, where
            elif p.status == "common_practice":
                assert "common practice" in note, where


def test_mil_c_48497a_humidity_is_49_c_24_h_95_to_100_rh_from_a_public_summary(
    catalogue: Catalogue,
) -> None:
    code = "MIL-C-48497A:humidity"
    # test-methods.md, MIL-C-48497A humidity: 24 h, 120 °F (49 °C), 95-100 % RH [pub]
    t = value(catalogue, code, "temperature_c")
    assert t.value == 49 and t.status == "public_summary" and not t.placeholder
    assert t.value == pytest.approx(f_to_c(120), abs=0.5)
    assert value(catalogue, code, "duration_h").value == 24
    assert value(catalogue, code, "rh_min_pct").value == 95
    assert value(catalogue, code, "rh_max_pct").value == 100
    assert value(catalogue, code, "rh_min_pct").status == "public_summary"
    # ±4 °F (±2 °C) [mem]
    tol = value(catalogue, code, "temperature_tolerance_c")
    assert tol.status == "from_memory"
    assert tol.value == pytest.approx(4 * 5 / 9, abs=0.25)


def test_mil_c_48497a_groups_follow_the_reference(catalogue: Catalogue) -> None:
    # test-methods.md MIL-C-48497A table, "Group" column; temperature and solvent: "sources
    # disagree"
    groups = {m.key: m.group for m in catalogue.methods_of("MIL-C-48497A")}
    assert groups == {
        "adhesion": "basic",
        "humidity": "basic",
        "moderate_abrasion": "basic",
        "temperature": "disputed",
        "solvent_solubility": "disputed",
        "severe_abrasion": "when_specified",
        "salt_solubility": "when_specified",
        "water_solubility": "when_specified",
        "salt_fog": "when_specified",
    }


def test_severe_abrasion_is_an_eraser_20_strokes_at_8_9_to_11_1_n(catalogue: Catalogue) -> None:
    code = "MIL-C-48497A:severe_abrasion"
    # test-methods.md: eraser (MIL-E-12397), 2.0-2.5 lb (8.9-11.1 N), 20 strokes [pub]
    strokes = value(catalogue, code, "strokes")
    assert strokes.value == 20 and strokes.status == "public_summary"
    low, high = value(catalogue, code, "force_min_n"), value(catalogue, code, "force_max_n")
    assert (low.value, high.value) == (8.9, 11.1)
    assert low.value == pytest.approx(2.0 * LBF_N, abs=0.05)
    assert high.value == pytest.approx(2.5 * LBF_N, abs=0.05)
    assert low.status == high.status == "public_summary"
    assert "MIL-E-12397" in value(catalogue, code, "abrasive").value


def test_moderate_abrasion_is_cheesecloth_50_strokes_at_least_1_lb(catalogue: Catalogue) -> None:
    code = "MIL-C-48497A:moderate_abrasion"
    # test-methods.md: cheesecloth pad, at least 1 lb (4.5 N), 50 strokes [pub]/[mem]
    assert value(catalogue, code, "strokes").value == 50
    assert value(catalogue, code, "force_min_n").value == pytest.approx(LBF_N, abs=0.06)
    assert value(catalogue, code, "abrasive").value == "cheesecloth pad"


def test_mil_std_810_method_509_is_35_c_and_5_percent_nacl(catalogue: Catalogue) -> None:
    code = "MIL-STD-810:509"
    # test-methods.md, MIL-STD-810 method 509 [pub]: NaCl 5 ± 1 % by weight, pH 6.5-7.2,
    # chamber 35 ± 2 °C, 24 h fog + 24 h dry, at least two cycles (96 h)
    expected = {
        "temperature_c": 35,
        "temperature_tolerance_c": 2,
        "concentration_pct": 5,
        "concentration_tolerance_pct": 1,
        "ph_min": 6.5,
        "ph_max": 7.2,
        "wet_h": 24,
        "dry_h": 24,
        "cycles": 2,
        "duration_h": 96,
    }
    for name, number in expected.items():
        p = value(catalogue, code, name)
        assert (p.value, p.status) == (number, "public_summary"), name
    assert value(catalogue, code, "cycles").value * (24 + 24) == 96


def test_salt_solubility_keeps_both_recalled_concentrations(catalogue: Catalogue) -> None:
    p = value(catalogue, "MIL-C-48497A:salt_solubility", "concentration_pct")
    # test-methods.md: recalled both as 6.4 % NaCl by weight and as 6.4 oz per US gallon of
    # water (about 4.6 % by weight) [mem?]
    assert p.value is None and p.status == "from_memory" and p.placeholder
    assert "6.4 %" in p.note and "4.6 %" in p.note
    salt_g = 6.4 * OZ_G
    water_g = US_GAL_L * WATER_G_PER_L_20C
    assert 100 * salt_g / (salt_g + water_g) == pytest.approx(4.6, abs=0.05)


def test_iso_9211_4_abrasion_severities_are_placeholders(catalogue: Catalogue) -> None:
    method = catalogue.method("ISO 9211-4:01")
    assert method is not None
    # test-methods.md: 01 cheesecloth 5 N 25 cycles; 02 cheesecloth 5 N 50 cycles; 03 eraser
    # 10 N 20 strokes [mem?]
    rows = {
        "01": {"abrasive": "cheesecloth pad", "force_n": 5, "cycles": 25},
        "02": {"abrasive": "cheesecloth pad", "force_n": 5, "cycles": 50},
        "03": {"abrasive": "eraser", "force_n": 10, "strokes": 20},
    }
    assert method.severities == ("01", "02", "03")
    for severity, expected in rows.items():
        got = {p.name: p for p in method.parameters_for(severity)}
        for name, number in expected.items():
            assert got[name].value == number, (severity, name)
            assert got[name].status == "from_memory" and got[name].placeholder
    # ISO 9211-4: store at least 12 h at ambient after coating (recommended) [pub]
    assert value(catalogue, "ISO 9211-4:01", "storage_after_coating_min_h").value == 12


def test_iso_9211_4_crosshatch_geometry_is_the_public_one(catalogue: Catalogue) -> None:
    code = "ISO 9211-4:03"
    # test-methods.md: 6 cuts 1.5 ± 0.5 mm apart, 15-20 mm long [pub]
    assert value(catalogue, code, "cuts_per_direction").value == 6
    assert value(catalogue, code, "cut_spacing_mm").value == 1.5
    assert value(catalogue, code, "cut_spacing_tolerance_mm").value == 0.5
    assert value(catalogue, code, "cut_length_min_mm").value == 15
    assert value(catalogue, code, "cut_length_max_mm").value == 20
    method = catalogue.method(code)
    assert method is not None and method.destructive and "sharp_blade" in method.hazards


def test_iso_9022_severity_tables_are_left_for_the_lab(catalogue: Catalogue) -> None:
    # test-methods.md, ISO 9022: "Severity tables ... not collected - the catalogue must let a
    # lab enter them"
    for method in catalogue.methods:
        if not method.standard.startswith("ISO 9022-"):
            continue
        table = method.parameter("severity_table")
        assert table is not None and table.status == "to_be_entered" and table.value is None
        assert method.uses_severity
        duration = method.parameter("duration_h")
        if duration is not None:
            assert duration.value is None and duration.status == "to_be_entered"
        # exposure starts within 3 K of the chamber temperature [pub]
        start = method.parameter("exposure_start")
        assert start is not None and "3 K" in str(start.value)


def test_crosshatch_class_bounds_follow_the_iso_2409_table(catalogue: Catalogue) -> None:
    # test-methods.md cross-cut table [pub]: 0 %, up to 5, 15, 35, 65 %, class 5 over 65 %
    bounds = (0, 5, 15, 35, 65)
    for n, bound in enumerate(bounds):
        iso = value(catalogue, "ISO 2409:crosshatch", f"class_{n}_detached_max_pct")
        astm = value(catalogue, "ASTM D3359:B", f"class_{5 - n}b_detached_max_pct")
        assert iso.value == astm.value == bound
        assert iso.status == astm.status == "public_summary"


def test_cemented_part_temperatures_are_converted_from_fahrenheit(catalogue: Catalogue) -> None:
    low = "MIL-PRF-13830B:cemented-low-temperature"
    high = "MIL-PRF-13830B:cemented-high-temperature"
    # test-methods.md, MIL-PRF-13830B cemented parts [pub]: -80 ± 2 °F for 5 h, 5 h at room
    # temperature; +160 ± 2 °F for 2 h; slip at most 0.002 in
    assert value(catalogue, low, "temperature_c").value == pytest.approx(f_to_c(-80), abs=0.5)
    assert value(catalogue, high, "temperature_c").value == pytest.approx(f_to_c(160), abs=0.5)
    assert value(catalogue, low, "temperature_tolerance_c").value == pytest.approx(
        2 * 5 / 9, abs=0.05
    )
    assert value(catalogue, low, "duration_h").value == 5
    assert value(catalogue, low, "recovery_h").value == 5
    assert value(catalogue, high, "slip_max_mm").value == pytest.approx(0.002 * 25.4)


def test_every_fahrenheit_figure_in_a_note_matches_its_celsius_value(catalogue: Catalogue) -> None:
    # Scale definitions: t(°C) = (t(°F) - 32) x 5/9. Values are printed to the reference's
    # whole degrees, so half a degree is allowed.
    pattern = re.compile(r"([+-]?\d+(?:\.\d+)?) °F")
    checked = 0
    for method in catalogue.methods:
        for p in method.parameters:
            if p.base_name not in ("temperature_c", "temperature_low_c", "temperature_high_c"):
                continue
            found = pattern.search(p.note)
            if found is None or not isinstance(p.value, int | float):
                continue
            assert p.value == pytest.approx(f_to_c(float(found.group(1))), abs=0.5), method.code
            checked += 1
    assert checked >= 8


def test_hazards_and_destructive_choices_are_reasoned(catalogue: Catalogue) -> None:
    for method in catalogue.methods:
        # each destructive choice is explained in the note
        assert "destructive" in method.note.lower(), method.code
        if method.kind == "salt_fog":
            assert "salt_fog" in method.hazards and method.destructive
        if method.kind == "crosshatch":
            assert "sharp_blade" in method.hazards and method.destructive
        if method.kind == "solvent_solubility":
            assert "solvent" in method.hazards
        if method.kind in ("inspection", "spectral_measurement"):
            assert not method.destructive and not method.hazards
    assert set(h for m in catalogue.methods for h in m.hazards) <= set(HAZARDS)


def test_lab_procedures_are_there_for_every_plan(catalogue: Catalogue) -> None:
    inspection = catalogue.method("LAB:inspection")
    spectral = catalogue.method("LAB:spectral")
    assert inspection is not None and inspection.kind == "inspection"
    assert inspection.acceptance.rule_name == "recorded_only"
    assert spectral is not None and spectral.kind == "spectral_measurement"
    assert spectral.acceptance.rule_json() == {"rule": "spectral_limits", "limits": []}


def test_parameters_for_a_severity_strip_the_prefix_and_keep_common_values(
    catalogue: Catalogue,
) -> None:
    method = catalogue.method("ISO 9211-4:01")
    assert method is not None
    third = {p.name: p.value for p in method.parameters_for("3")}
    assert third["abrasive"] == "eraser" and third["strokes"] == 20
    assert "cleaning" in third and not any("." in name for name in third)
    # a severity with no values of its own keeps only the common ones
    assert {p.name for p in method.parameters_for("07")} == {
        "cleaning",
        "storage_after_coating_min_h",
    }
    assert normalise_severity("6") == normalise_severity(6) == "06"


# ------------------------------------------------------------------ bad input


def mutated(raw: dict[str, Any], code: str, change: Any) -> dict[str, Any]:
    data = copy.deepcopy(raw)
    for method in data["methods"]:
        if method["code"] == code:
            change(method)
    return data


@pytest.mark.parametrize(
    ("change", "words"),
    [
        (lambda m: m.update(kind="boiling"), ["field 'kind'", "'boiling'"]),
        (lambda m: m.update(test_key="scrub"), ["field 'test_key'"]),
        (lambda m: m.update(group="sometimes"), ["field 'group'"]),
        (lambda m: m.update(destructive="no"), ["field 'destructive'"]),
        (lambda m: m.update(hazards=["fire"]), ["field 'hazards'[0]", "'fire'"]),
        (lambda m: m.update(hazards=["hot_chamber", "hot_chamber"]), ["appears twice"]),
        (lambda m: m.update(colour="blue"), ["unknown field(s) 'colour'"]),
        (lambda m: m.pop("note"), ["missing field(s) 'note'"]),
        (lambda m: m.update(standard="MIL-X-1"), ["field 'standard'", "MIL-X-1"]),
        (
            lambda m: m["parameters"]["duration_h"].update(status="guessed"),
            ["parameters.duration_h", "field 'status'"],
        ),
        (
            lambda m: m["parameters"]["duration_h"].update(placeholder=True),
            ["parameters.duration_h", "placeholder"],
        ),
        (
            lambda m: m["parameters"]["duration_h"].update(status="to_be_entered"),
            ["parameters.duration_h", "must be null"],
        ),
        (
            lambda m: m["parameters"]["duration_h"].update(unit="min"),
            ["parameters.duration_h", "field 'unit'", "'h'"],
        ),
        (
            lambda m: m["parameters"]["duration_h"].update(value="a day"),
            ["parameters.duration_h", "expected a number"],
        ),
        (
            lambda m: m["parameters"]["duration_h"].update(value=True),
            ["parameters.duration_h", "field 'value'"],
        ),
        (
            lambda m: m["parameters"]["duration_h"].update(value=None, note=""),
            ["parameters.duration_h", "needs a note"],
        ),
        (
            lambda m: m["parameters"].update({"Bad Name": m["parameters"]["duration_h"]}),
            ["Bad Name", "bad parameter name"],
        ),
        (
            lambda m: m["acceptance"].update(rule={"rule": "looks_fine"}),
            ["field 'acceptance'", "'looks_fine'"],
        ),
        (
            lambda m: m["acceptance"].update(rule={"rule": "no_listed_defects", "defects": []}),
            ["'defects' must name at least one"],
        ),
        (
            lambda m: m["acceptance"].update(
                rule={"rule": "no_listed_defects", "defects": ["rust"]}
            ),
            ["'defects'[0]", "'rust'"],
        ),
        (
            lambda m: m["acceptance"].update(
                rule={"rule": "crosshatch_max_class", "iso2409_class": 6}
            ),
            ["'iso2409_class'", "0-5"],
        ),
        (
            lambda m: m["acceptance"].update(rule={"rule": "engineer_judgement", "text": " "}),
            ["'text'", "must not be empty"],
        ),
        (
            lambda m: m["acceptance"].update(rule={"rule": "recorded_only", "limits": []}),
            ["unknown field(s) 'limits'"],
        ),
    ],
)
def test_a_bad_method_is_refused_naming_its_code_and_field(
    raw: dict[str, Any], change: Any, words: list[str]
) -> None:
    data = mutated(raw, "MIL-C-48497A:humidity", change)
    with pytest.raises(InputError) as caught:
        parse_catalogue(data, source="seed")
    message = str(caught.value)
    assert "MIL-C-48497A:humidity" in message
    for word in words:
        assert word in message


def test_a_code_must_be_its_standard_and_a_key(raw: dict[str, Any]) -> None:
    data = mutated(raw, "MIL-C-48497A:humidity", lambda m: m.update(code="MIL-C-48497A-humidity"))
    with pytest.raises(InputError, match=r"field 'code'.*designation, colon, key"):
        parse_catalogue(data)


def test_a_code_may_appear_only_once(raw: dict[str, Any]) -> None:
    data = copy.deepcopy(raw)
    data["methods"].append(copy.deepcopy(data["methods"][0]))
    with pytest.raises(InputError, match=r"MIL-C-48497A:adhesion\): code appears twice"):
        parse_catalogue(data)


def test_a_bad_standard_is_refused_naming_it(raw: dict[str, Any]) -> None:
    data = copy.deepcopy(raw)
    data["standards"][0]["status"] = "withdrawn"
    with pytest.raises(InputError, match=r"standards\[0\] \(MIL-C-48497A\): field 'status'"):
        parse_catalogue(data)
    data = copy.deepcopy(raw)
    data["standards"].append(copy.deepcopy(data["standards"][0]))
    with pytest.raises(InputError, match="appears twice"):
        parse_catalogue(data)


def test_the_schema_version_is_checked(raw: dict[str, Any]) -> None:
    with pytest.raises(InputError, match="field 'schema'"):
        parse_catalogue({**raw, "schema": 2})
    with pytest.raises(InputError, match="missing field"):
        parse_catalogue({"schema": 1, "methods": []})
    with pytest.raises(InputError, match="expected an object"):
        parse_catalogue([])


def test_a_file_that_is_not_json_is_refused_with_its_line(tmp_path: Path) -> None:
    path = tmp_path / "methods.json"
    path.write_text('{\n  "schema": 1,\n  "standards": [,]\n}\n', encoding="utf-8")
    with pytest.raises(InputError, match=r"methods.json: line 3, column \d+: not valid JSON"):
        load_catalogue(path)
    with pytest.raises(InputError, match="cannot read"):
        load_catalogue(tmp_path / "absent.json")


def test_a_non_finite_value_is_refused(raw: dict[str, Any]) -> None:
    data = mutated(
        raw, "MIL-C-48497A:humidity", lambda m: m["parameters"]["duration_h"].update(value=math.inf)
    )
    with pytest.raises(InputError, match="not a finite number"):
        parse_catalogue(data)


@given(st.text(min_size=1, max_size=20).filter(lambda s: s not in KINDS))
def test_any_kind_outside_the_vocabulary_is_refused(kind: str) -> None:
    data = json.loads(SEED.read_text(encoding="utf-8"))
    data["methods"][0]["kind"] = kind
    with pytest.raises(InputError, match="field 'kind'"):
        parse_catalogue(data)


def test_validate_rule_returns_a_plain_copy() -> None:
    rule = {"rule": "no_listed_defects", "defects": ["haze", "spots"]}
    copy_ = validate_rule(rule)
    assert copy_ == rule and copy_ is not rule
    with pytest.raises(InputError, match="missing 'rule'"):
        validate_rule({"defects": []})


def test_every_catalogue_rule_is_one_the_verdict_code_accepts(catalogue: Catalogue) -> None:
    for method in catalogue.methods:
        rule = method.acceptance.rule_json()
        if rule == {"rule": "spectral_limits", "limits": []}:
            # the planner fills the limits from the coating spec, or records only
            continue
        assert check_acceptance_rule(rule) == rule["rule"], method.code
