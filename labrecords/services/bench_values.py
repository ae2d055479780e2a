"""Bench entry: what an entry holds and which parts of the bench form a step needs.

`ResultValues` (with `InspectionEntry` and `ChamberRunEntry`) carries what the
technician entered; `entry_sections` says which parts of the form a step needs,
from its method kind and acceptance rule (`step_rule`).
"""

from __future__ import annotations

import datetime
from dataclasses import dataclass
from typing import Any

from durability import verdicts
from durability.models import Instrument
from durability.surface.iso10110 import Iso10110Observation
from durability.surface.scratch_dig import ScratchDigObservation
from labrecords.models import PlanStep

# ---------------------------------------------------------------- what a bench entry holds


@dataclass(frozen=True)
class InspectionEntry:
    """A visual inspection as entered: explicit 'no defects observed', or defects.

    Each defect is {"defect", "zone", "extent", "quantity", "size", "intensity"}; grades are
    whole numbers 0-5 on ISO 4628-1 style scales, or absent.
    """

    no_defects: bool
    defects: tuple[dict[str, Any], ...] = ()
    lighting: str = ""
    background: str = ""
    magnification: str = ""


@dataclass(frozen=True)
class ChamberRunEntry:
    """A chamber run recorded at the bench: which chamber, when it was loaded and unloaded.

    The run is made by the chamber services (load, then unload) with the step's condition.
    """

    chamber: Instrument
    loaded_at: datetime.datetime
    unloaded_at: datetime.datetime


@dataclass(frozen=True)
class ResultValues:
    """Everything entered for one step besides instruments, consumables, run and photos.

    Fill the fields of the step's sections (`entry_sections`); the others stay empty.
    """

    coating_removed: bool | None = None
    removal_location: str = ""
    detached_share_pct: float | None = None
    crosshatch_class: int | None = None
    strokes: int | None = None
    force_n: float | None = None
    solution: str = ""
    immersion_min: float | None = None
    inspection: InspectionEntry | None = None
    scratch_dig: ScratchDigObservation | None = None
    surface: Iso10110Observation | None = None
    spectral: tuple[verdicts.SpectralStatistic, ...] = ()
    judgement_outcome: str = ""
    judgement_reason: str = ""
    notes: str = ""


# ---------------------------------------------------------------- which form a step needs

KIND_SECTIONS: dict[str, str] = {
    "adhesion": "tape",
    "crosshatch": "crosshatch",
    "moderate_abrasion": "abrasion",
    "severe_abrasion": "abrasion",
    "humidity": "chamber",
    "temperature": "chamber",
    "thermal_shock": "chamber",
    "salt_fog": "chamber",
    "salt_solubility": "solubility",
    "water_solubility": "solubility",
    "solvent_solubility": "solubility",
    "cleanability": "solubility",
    "inspection": "inspection",
    "spectral_measurement": "spectral",
}
RULE_SECTIONS: dict[str, tuple[str, ...]] = {
    "no_coating_removed": ("tape",),
    "no_listed_defects": ("inspection",),
    "crosshatch_max_class": ("crosshatch",),
    "crosshatch_max_share": ("crosshatch",),
    "scratch_dig": ("inspection", "scratch_dig"),
    "iso10110_7": ("inspection", "iso10110"),
    "spectral_limits": ("spectral",),
    "engineer_judgement": ("judgement",),
}
SECTION_ORDER = ("chamber", "tape", "crosshatch", "abrasion", "solubility", "spectral",
                 "inspection", "scratch_dig", "iso10110", "judgement")
# The rules whose clause is the coating spec's, not the method's.
_SPEC_CLAUSE_RULES = {"scratch_dig", "iso10110_7", "spectral_limits"}


def step_rule(step: PlanStep) -> dict[str, Any]:
    """The step's acceptance rule (the plan's, else the method version's, else recorded only)."""
    rule = (step.acceptance or {}).get("rule") or step.method_version.acceptance_rule
    return dict(rule) if rule else {"rule": "recorded_only"}


def entry_sections(step: PlanStep) -> tuple[str, ...]:
    """The parts of the bench form a step needs, from its method kind and acceptance rule."""
    wanted = set(RULE_SECTIONS.get(str(step_rule(step).get("rule")), ()))
    if step.kind in KIND_SECTIONS:
        wanted.add(KIND_SECTIONS[step.kind])
    return tuple(s for s in SECTION_ORDER if s in wanted)


def step_clause(step: PlanStep) -> str:
    """The words naming the method for the verdict's reason ("MIL-C-48497A humidity")."""
    if step_rule(step).get("rule") in _SPEC_CLAUSE_RULES:
        return ""
    method = step.method_version.method
    name = method.name[:1].lower() + method.name[1:]
    designation = method.standard.designation
    if designation == "LAB":
        return f"the lab's procedure for {name}"
    return " ".join(p for p in (designation, method.clause, name) if p)


def statistics_needed(rule: dict[str, Any]) -> list[dict[str, Any]]:
    """The measured statistics a spectral rule asks for: one per band, quantity and statistic
    (a minimum and a maximum on the same statistic share it), with both bounds."""
    needed: dict[tuple, dict[str, Any]] = {}
    if rule.get("rule") != "spectral_limits":
        return []
    for limit in rule.get("limits", []):
        band = (float(limit["band_nm"][0]), float(limit["band_nm"][1]))
        key = (band, limit["quantity"], limit["statistic"])
        row = needed.setdefault(key, {"band_nm": band, "quantity": limit["quantity"],
                                      "statistic": limit["statistic"], "min": None,
                                      "max": None})
        for bound in ("min", "max"):
            if limit.get(bound) is not None:
                row[bound] = float(limit[bound])
    return list(needed.values())


def inspection_point(step: PlanStep) -> str:
    """The observation point an inspection at this step records."""
    return "initial" if step.role == "initial_inspection" else "after_exposure"
