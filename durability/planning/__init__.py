"""Planning rules: from a coating spec's requirements to ordered test sequences on witness pieces.

:func:`plan_sequences` maps each requirement (what the callout parser made of a callout) to
methods of the catalogue, then lays the tests out on witness pieces:

- every piece starts with a visual inspection and a spectral measurement before any exposure;
- non-destructive tests share one piece in the lab's order (MIL-C-48497A-style practice runs
  humidity, then tape adhesion, then moderate abrasion on one witness: common practice);
- each destructive test gets its own piece;
- an inspection follows every test; the last one of a piece carries the surface-imperfection
  limits (scratch-dig, ISO 10110-7) and, after a chamber exposure, a spectral measurement ends
  the piece;
- waits: at least 12 h at ambient after coating before the first step (ISO 9211-4 recommends
  it, per a public summary), and a recovery at ambient before the inspection that follows a
  chamber exposure (common practice; ISO 9022 names a recovery stage whose duration we did not
  collect).

Nothing a requirement asks for is dropped: what cannot be planned becomes a review item. The
plan is a draft for an engineer to release; its notes state every convention it used.
Pure Python: no Django.

The package splits by area: :mod:`.model` (requirements, options, the draft and its parts),
:mod:`.rules` (requirement -> catalogue methods) and :mod:`.layout` (sequences on pieces,
waits, :func:`plan_sequences`).
"""

from durability.planning.layout import plan_sequences
from durability.planning.model import (
    CHAMBER_HAZARDS,
    DEFAULT_LAB_ORDER,
    DEFAULT_POST_COATING_WAIT_H,
    DEFAULT_RECOVERY_H,
    INSPECTION_CODE,
    REQUIREMENT_KINDS,
    SPECTRAL_CODE,
    PlanDraft,
    PlannedSequence,
    PlannedStep,
    PlanOptions,
    Requirement,
    ReviewItem,
)

__all__ = [
    "CHAMBER_HAZARDS",
    "DEFAULT_LAB_ORDER",
    "DEFAULT_POST_COATING_WAIT_H",
    "DEFAULT_RECOVERY_H",
    "INSPECTION_CODE",
    "REQUIREMENT_KINDS",
    "SPECTRAL_CODE",
    "PlanDraft",
    "PlanOptions",
    "PlannedSequence",
    "PlannedStep",
    "Requirement",
    "ReviewItem",
    "plan_sequences",
]
