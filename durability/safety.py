"""Cautions shown beside test steps that carry a hazard.

The texts are the lab's own reminders of the usual precautions (common practice), written for
this program. They are not a safety procedure: each one ends by deferring to local codes, the
safety data sheets and the lab's own rules and licensed practice.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from durability.errors import InputError

__all__ = ["CAUTIONS", "DEFER", "Caution", "cautions_for"]

DEFER = (
    "These reminders do not replace local codes and regulations, the safety data sheets, "
    "or the lab's own safety rules and licensed practice, which take precedence."
)


@dataclass(frozen=True)
class Caution:
    """One hazard's caution: the hazard key, a short title and the text."""

    hazard: str
    title: str
    text: str

    def as_json(self) -> dict[str, str]:
        """Return a JSON-ready dict."""
        return {"hazard": self.hazard, "title": self.title, "text": self.text}


def _caution(hazard: str, title: str, body: str) -> Caution:
    return Caution(hazard=hazard, title=title, text=f"{body} {DEFER}")


# In the order the catalogue lists hazards, so every screen shows them the same way.
CAUTIONS: tuple[Caution, ...] = (
    _caution(
        "solvent",
        "Solvents",
        "Work with solvents under extraction or in a well-ventilated place and keep flames, "
        "hot plates and sparks away: their vapours can burn. Wear chemical-resistant gloves "
        "chosen for the solvent in hand, and eye protection. Read each solvent's safety data "
        "sheet before first use, keep containers closed and labelled, and collect spent "
        "solvent for proper disposal rather than pouring it away.",
    ),
    _caution(
        "salt_fog",
        "Salt fog",
        "The chamber mist is corrosive and irritates eyes and skin. Let the fog settle and "
        "the chamber vent before opening it, wear eye protection and gloves when loading or "
        "unloading, and keep the room ventilated. Rinse and wipe up salt deposits and spills "
        "promptly; they corrode nearby equipment.",
    ),
    _caution(
        "boiling_water",
        "Boiling water",
        "Boiling water and steam scald. Use tongs or a basket to move pieces, wear "
        "heat-resistant gloves and eye protection, keep the bath stable and away from the "
        "edge of the bench, and never leave it to boil dry.",
    ),
    _caution(
        "hot_chamber",
        "Hot chamber",
        "Shelves, fixtures and pieces taken from a hot chamber can burn. Use heat-resistant "
        "gloves or tools, and open a humid chamber with care: hot wet air and steam escape "
        "at once. A cold piece placed into warm humid air fogs with condensation.",
    ),
    _caution(
        "cold_chamber",
        "Cold chamber",
        "Very cold surfaces cause cold burns and skin can stick to them. Wear insulated "
        "gloves and handle cold pieces with tools. Pieces taken out of the cold gather "
        "condensation or frost; let them recover before inspection and keep water off "
        "electrical parts.",
    ),
    _caution(
        "laser",
        "Laser",
        "Work only in the controlled laser area, with the interlocks working and the beam "
        "path enclosed or below eye level. Wear eye protection rated for the wavelength and "
        "power in use, remove reflective jewellery and tools from the beam path, and follow "
        "the laser safety officer's instructions for the setup.",
    ),
    _caution(
        "sharp_blade",
        "Sharp blade",
        "Crosshatch cuts use a sharp blade or multi-blade cutter. Hold the piece in a fixture "
        "or with a clamp rather than by hand, cut away from the body with a steady guide, "
        "keep the blade covered when not cutting, and put used blades in a sharps container.",
    ),
)

_BY_HAZARD = {c.hazard: c for c in CAUTIONS}


def cautions_for(hazards: Iterable[str]) -> list[Caution]:
    """Return one caution per distinct hazard, in the catalogue's hazard order.

    Raises InputError naming the hazard when one is not known.
    """
    wanted: set[str] = set()
    for i, hazard in enumerate(hazards):
        if not isinstance(hazard, str) or hazard not in _BY_HAZARD:
            known = ", ".join(_BY_HAZARD)
            raise InputError(f"hazards[{i}]: {hazard!r} is not a known hazard ({known})")
        wanted.add(hazard)
    return [c for c in CAUTIONS if c.hazard in wanted]
