"""Hazard cautions: one per hazard, the usual precautions, always deferring to local rules.

The precautions checked here are common practice for lab work (no standard is quoted); what each
caution must mention is the list the project brief asks for.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from durability.catalogue_data import HAZARDS, load_catalogue
from durability.errors import InputError
from durability.safety import CAUTIONS, DEFER, Caution, cautions_for

SEED = Path(__file__).resolve().parents[2] / "fixtures" / "catalogue" / "methods.json"


def test_every_catalogue_hazard_has_one_caution() -> None:
    assert [c.hazard for c in CAUTIONS] == list(HAZARDS)


def test_every_hazard_used_by_the_seed_has_a_caution() -> None:
    used = {h for m in load_catalogue(SEED).methods for h in m.hazards}
    assert used and {c.hazard for c in cautions_for(used)} == used


def test_every_caution_ends_by_deferring_to_local_rules() -> None:
    for caution in CAUTIONS:
        assert caution.text.endswith(DEFER), caution.hazard
        assert caution.title and len(caution.text) > len(DEFER) + 40
    for words in ("local codes", "safety data sheets", "lab's own", "licensed practice"):
        assert words in DEFER


@pytest.mark.parametrize(
    ("hazard", "words"),
    [
        # common practice: what a lab's reminder for each hazard covers
        ("solvent", ["ventilat", "flames", "gloves", "eye protection", "safety data sheet"]),
        ("salt_fog", ["corrosive", "eye", "skin", "ventilat", "rinse"]),
        ("boiling_water", ["scald", "gloves"]),
        ("hot_chamber", ["burn", "gloves", "condensation"]),
        ("cold_chamber", ["cold burns", "gloves", "condensation"]),
        ("laser", ["eye protection", "controlled laser area", "laser safety officer"]),
        ("sharp_blade", ["blade", "sharps container", "crosshatch"]),
    ],
)
def test_a_caution_names_the_usual_precautions(hazard: str, words: list[str]) -> None:
    (caution,) = cautions_for([hazard])
    text = caution.text.lower()
    for word in words:
        assert word.lower() in text, (hazard, word)


def test_cautions_come_once_each_in_catalogue_order() -> None:
    got = cautions_for(["sharp_blade", "solvent", "sharp_blade", "hot_chamber"])
    assert [c.hazard for c in got] == ["solvent", "hot_chamber", "sharp_blade"]
    assert cautions_for([]) == []


def test_an_unknown_hazard_is_refused_naming_it() -> None:
    with pytest.raises(InputError, match=r"hazards\[1\]: 'radiation' is not a known hazard"):
        cautions_for(["solvent", "radiation"])


def test_a_caution_is_json_ready() -> None:
    caution = CAUTIONS[0]
    assert caution.as_json() == {
        "hazard": caution.hazard,
        "title": caution.title,
        "text": caution.text,
    }
    assert isinstance(caution, Caution)
