"""Planning inputs and outputs: requirements, options, planned steps and sequences, the draft.

The constants a plan uses (the lab's default test order, the waits, the lab procedures every
plan needs) live here too. Pure Python: no Django.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field, fields
from typing import Any

from durability.callouts.model import KINDS as CALLOUT_KINDS
from durability.catalogue_data import KINDS
from durability.errors import InputError
from durability.verdicts import check_acceptance_rule

# The requirement kinds are the callout parser's.
REQUIREMENT_KINDS: tuple[str, ...] = CALLOUT_KINDS

INSPECTION_CODE = "LAB:inspection"
SPECTRAL_CODE = "LAB:spectral"

# The lab's default test order by method kind (common practice): chamber conditioning first,
# harshest temperature swings before humidity, then immersions, then the mechanical tests that
# show whether the conditioning weakened the film. ISO 9211-3's annex gives an example order,
# but it was not collected, so this is not that order.
DEFAULT_LAB_ORDER: tuple[str, ...] = (
    "temperature",
    "thermal_shock",
    "humidity",
    "other",
    "salt_fog",
    "water_solubility",
    "salt_solubility",
    "solvent_solubility",
    "cleanability",
    "adhesion",
    "crosshatch",
    "moderate_abrasion",
    "severe_abrasion",
)
_FRAME_KINDS = ("inspection", "spectral_measurement")
_ORDERABLE_KINDS = tuple(k for k in KINDS if k not in _FRAME_KINDS)

# ISO 9211-4: store at least 12 h at ambient after coating (recommended), per a public summary
# (shared/reference/test-methods.md [pub]).
DEFAULT_POST_COATING_WAIT_H = 12.0
# Recovery at ambient before inspecting after a chamber exposure: common practice.
DEFAULT_RECOVERY_H = 1.0

CHAMBER_HAZARDS = ("hot_chamber", "cold_chamber", "salt_fog")
_CHAMBER_KINDS = ("humidity", "temperature", "thermal_shock", "salt_fog")


# ------------------------------------------------------------------------------ inputs


@dataclass(frozen=True)
class Requirement:
    """What the callout parser made of one callout.

    ``kind`` is one of :data:`REQUIREMENT_KINDS`; ``standard`` e.g. "MIL-C-48497A",
    "MIL-PRF-13830B App. C", "ISO 9022-2"; ``method`` and ``severity`` as written ("12", "06");
    ``state`` the ISO 9022 state of operation; ``tests`` the test keys of a coating spec;
    ``limit`` the parsed limit (crosshatch class, scratch-dig, ISO 10110-7); ``text`` the
    callout as written and ``normal`` its rewritten form ("S/D 60/40" -> "60-40"), when the
    parser kept them.
    """

    kind: str
    standard: str = ""
    method: str = ""
    severity: str = ""
    state: str = ""
    tests: tuple[str, ...] = ()
    limit: Mapping[str, Any] = field(default_factory=dict)
    assumptions: tuple[str, ...] = ()
    needs_review: bool = False
    text: str = ""
    normal: str = ""

    def __post_init__(self) -> None:
        if self.kind not in REQUIREMENT_KINDS:
            raise InputError(
                f"requirement: field 'kind': {self.kind!r} is not one of "
                f"{', '.join(REQUIREMENT_KINDS)}"
            )

    @classmethod
    def from_any(cls, item: object, index: int = 0) -> Requirement:
        """Build a Requirement from a dict or any object with the same attribute names.

        Raises InputError naming ``requirements[index]`` and the field when a value has the
        wrong type or the kind is not known.
        """
        if isinstance(item, Requirement):
            return item
        where = f"requirements[{index}]"
        names = [f.name for f in fields(cls)]
        if isinstance(item, Mapping):
            raw = {n: item.get(n) for n in names}
            if raw["text"] is None:
                raw["text"] = item.get("callout")
        else:
            raw = {n: getattr(item, n, None) for n in names}
            if raw["text"] is None:
                raw["text"] = getattr(item, "callout", None)
        kind = raw["kind"]
        if isinstance(kind, str):
            kind = kind.strip()
        if kind not in REQUIREMENT_KINDS:
            raise InputError(
                f"{where}: field 'kind': {kind!r} is not one of {', '.join(REQUIREMENT_KINDS)}"
            )
        limit = raw["limit"]
        if limit is None:
            limit = {}
        elif hasattr(limit, "as_json") and not isinstance(limit, Mapping):
            limit = limit.as_json()
        if not isinstance(limit, Mapping):
            raise InputError(f"{where}: field 'limit': expected an object")
        needs_review = raw["needs_review"]
        if needs_review is None:
            needs_review = False
        if not isinstance(needs_review, bool):
            raise InputError(f"{where}: field 'needs_review': expected true or false")
        return cls(
            kind=kind,
            standard=_field_text(raw["standard"], where, "standard"),
            method=_field_text(raw["method"], where, "method"),
            severity=_field_text(raw["severity"], where, "severity"),
            state=_field_text(raw["state"], where, "state"),
            tests=_field_texts(raw["tests"], where, "tests"),
            limit=dict(limit),
            assumptions=_field_texts(raw["assumptions"], where, "assumptions"),
            needs_review=needs_review,
            text=_field_text(raw["text"], where, "text"),
            normal=_field_text(raw["normal"], where, "normal"),
        )

    def label(self, index: int) -> str:
        """A short name for messages: the callout text, or its standard and kind."""
        shown = self.text or " ".join(
            p for p in (self.standard, self.method, self.severity, self.state) if p
        )
        return f"requirements[{index}] ({shown or self.kind})"


@dataclass(frozen=True)
class PlanOptions:
    """The choices a lab can change. Defaults are the lab's (common practice) unless noted.

    - ``pieces_per_sequence``: witness pieces that each run one sequence side by side.
    - ``spare_pieces``: extra pieces coated in the same run and kept for retests.
    - ``lab_order``: method kinds in the order tests run on a shared piece.
    - ``mil_c_48497a_disputed_basic``: sources disagree whether MIL-C-48497A temperature and
      solvent solubility are basic tests; True plans them whenever the callout names no tests.
    - ``chain_non_destructive``: non-destructive tests share one piece (False: one piece each).
    - ``post_coating_wait_h``: wait at ambient after coating before a piece's first step.
    - ``recovery_h``: wait at ambient before the inspection after a chamber exposure, unless
      the method carries its own ``recovery_h``.
    - ``final_spectral``: end a piece that saw a chamber exposure with a spectral measurement.
    - ``spectral_limits``: the coating spec's spectral limits for the spectral steps.
    """

    pieces_per_sequence: int = 1
    spare_pieces: int = 0
    lab_order: tuple[str, ...] = DEFAULT_LAB_ORDER
    mil_c_48497a_disputed_basic: bool = False
    chain_non_destructive: bool = True
    post_coating_wait_h: float = DEFAULT_POST_COATING_WAIT_H
    recovery_h: float = DEFAULT_RECOVERY_H
    final_spectral: bool = True
    spectral_limits: tuple[Mapping[str, Any], ...] = ()

    def __post_init__(self) -> None:
        _whole(self.pieces_per_sequence, "pieces_per_sequence", 1)
        _whole(self.spare_pieces, "spare_pieces", 0)
        for name in ("mil_c_48497a_disputed_basic", "chain_non_destructive", "final_spectral"):
            if not isinstance(getattr(self, name), bool):
                raise InputError(f"options: field {name!r}: expected true or false")
        for name in ("post_coating_wait_h", "recovery_h"):
            value = getattr(self, name)
            if (
                isinstance(value, bool)
                or not isinstance(value, int | float)
                or not math.isfinite(value)
                or value < 0
            ):
                raise InputError(f"options: field {name!r}: expected hours >= 0, got {value!r}")
        if isinstance(self.lab_order, str) or not isinstance(self.lab_order, Sequence):
            raise InputError("options: field 'lab_order': expected a list of method kinds")
        seen: set[str] = set()
        for i, kind in enumerate(self.lab_order):
            if kind not in _ORDERABLE_KINDS:
                raise InputError(
                    f"options: field 'lab_order'[{i}]: {kind!r} is not one of "
                    f"{', '.join(_ORDERABLE_KINDS)}"
                )
            if kind in seen:
                raise InputError(f"options: field 'lab_order'[{i}]: {kind!r} appears twice")
            seen.add(kind)
        if isinstance(self.spectral_limits, str | Mapping) or not isinstance(
            self.spectral_limits, Sequence
        ):
            raise InputError("options: field 'spectral_limits': expected a list of objects")
        for i, limit in enumerate(self.spectral_limits):
            if not isinstance(limit, Mapping):
                raise InputError(f"options: field 'spectral_limits'[{i}]: expected an object")
        if self.spectral_limits:
            # The verdict code owns the limit format; refuse here what it would refuse later.
            try:
                check_acceptance_rule(
                    {"rule": "spectral_limits", "limits": [dict(x) for x in self.spectral_limits]}
                )
            except InputError as exc:
                raise InputError(f"options: field 'spectral_limits': {exc}") from None
        object.__setattr__(self, "lab_order", tuple(self.lab_order))
        object.__setattr__(self, "spectral_limits", tuple(self.spectral_limits))

    @classmethod
    def from_any(cls, options: PlanOptions | Mapping[str, Any] | None) -> PlanOptions:
        """Return options from None (defaults), a PlanOptions or a dict of its fields."""
        if options is None:
            return cls()
        if isinstance(options, PlanOptions):
            return options
        if not isinstance(options, Mapping):
            raise InputError("options: expected an object")
        names = {f.name for f in fields(cls)}
        unknown = [k for k in options if k not in names]
        if unknown:
            raise InputError(f"options: unknown field(s) {', '.join(map(repr, unknown))}")
        return cls(**dict(options))

    def as_json(self) -> dict[str, object]:
        """Return the options as a JSON-ready dict."""
        return {
            "pieces_per_sequence": self.pieces_per_sequence,
            "spare_pieces": self.spare_pieces,
            "lab_order": list(self.lab_order),
            "mil_c_48497a_disputed_basic": self.mil_c_48497a_disputed_basic,
            "chain_non_destructive": self.chain_non_destructive,
            "post_coating_wait_h": self.post_coating_wait_h,
            "recovery_h": self.recovery_h,
            "final_spectral": self.final_spectral,
            "spectral_limits": [dict(x) for x in self.spectral_limits],
        }


# ------------------------------------------------------------------------------ outputs


@dataclass(frozen=True)
class PlannedStep:
    """One step of a sequence.

    ``role`` is initial_inspection, initial_spectral, test, inspection, final_inspection or
    final_spectral. ``parameters`` maps a name to {value, unit, status, placeholder, note}, as
    in the catalogue, for the step's degree of severity. ``acceptance`` is {text, rule,
    status}; ``rule`` uses the acceptance-rule vocabulary of :mod:`durability.verdicts` (a final
    inspection with one surface limit uses its ``scratch_dig`` or ``iso10110_7`` rule; a
    spectral step without limits records only). ``wait_hours_before`` is the least time
    between the end of the previous step (or, for the first step, the end of coating) and the
    start of this one, with ``wait_reason``. ``sources`` are the indexes of
    the requirements that asked for the step; ``surface_limits`` the scratch-dig or ISO 10110-7
    limits judged at a final inspection.
    """

    order: int
    role: str
    method_code: str
    name: str
    kind: str
    parameters: Mapping[str, Mapping[str, Any]]
    acceptance: Mapping[str, Any]
    hazards: tuple[str, ...]
    destructive: bool
    wait_hours_before: float
    wait_reason: str
    severity: str = ""
    state: str = ""
    sources: tuple[int, ...] = ()
    surface_limits: tuple[Mapping[str, Any], ...] = ()
    note: str = ""

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict."""
        return {
            "order": self.order,
            "role": self.role,
            "method_code": self.method_code,
            "name": self.name,
            "kind": self.kind,
            "parameters": _plain(self.parameters),
            "acceptance": _plain(self.acceptance),
            "hazards": list(self.hazards),
            "destructive": self.destructive,
            "wait_hours_before": self.wait_hours_before,
            "wait_reason": self.wait_reason,
            "severity": self.severity,
            "state": self.state,
            "sources": list(self.sources),
            "surface_limits": _plain(self.surface_limits),
            "note": self.note,
        }


@dataclass(frozen=True)
class PlannedSequence:
    """The ordered steps that ``pieces`` witness pieces go through side by side."""

    label: str
    pieces: int
    steps: tuple[PlannedStep, ...]
    summary: str

    @property
    def destructive(self) -> bool:
        """True when a step of this sequence uses the piece up."""
        return any(s.destructive for s in self.steps)

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict."""
        return {
            "label": self.label,
            "pieces": self.pieces,
            "summary": self.summary,
            "destructive": self.destructive,
            "steps": [s.as_json() for s in self.steps],
        }


@dataclass(frozen=True)
class ReviewItem:
    """Something an engineer must settle before release; ``requirement`` is its index or None."""

    requirement: int | None
    text: str

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict."""
        return {"requirement": self.requirement, "text": self.text}


@dataclass(frozen=True)
class PlanDraft:
    """The planner's draft: sequences, what needs review, and the conventions it used."""

    sequences: tuple[PlannedSequence, ...]
    review_items: tuple[ReviewItem, ...]
    notes: tuple[str, ...]
    assumptions: tuple[str, ...]
    spare_pieces: int
    options: PlanOptions

    @property
    def total_pieces(self) -> int:
        """Witness pieces the plan needs, spares included."""
        return sum(s.pieces for s in self.sequences) + self.spare_pieces

    @property
    def hazards(self) -> tuple[str, ...]:
        """Every hazard of every step, each once, in first-seen order."""
        seen: dict[str, None] = {}
        for sequence in self.sequences:
            for step in sequence.steps:
                for hazard in step.hazards:
                    seen.setdefault(hazard, None)
        return tuple(seen)

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict."""
        return {
            "sequences": [s.as_json() for s in self.sequences],
            "review_items": [r.as_json() for r in self.review_items],
            "notes": list(self.notes),
            "assumptions": list(self.assumptions),
            "spare_pieces": self.spare_pieces,
            "total_pieces": self.total_pieces,
            "hazards": list(self.hazards),
            "options": self.options.as_json(),
        }


# ------------------------------------------------------------------------------ helpers


def _whole(value: object, name: str, least: int) -> None:
    if isinstance(value, bool) or not isinstance(value, int) or value < least:
        raise InputError(f"options: field {name!r}: expected a whole number >= {least}")


def _field_text(value: object, where: str, name: str) -> str:
    if value is None:
        return ""
    if isinstance(value, int) and not isinstance(value, bool):
        return str(value)
    if not isinstance(value, str):
        raise InputError(f"{where}: field {name!r}: expected text, got {type(value).__name__}")
    return value.strip()


def _field_texts(value: object, where: str, name: str) -> tuple[str, ...]:
    if value is None:
        return ()
    if isinstance(value, str) or not isinstance(value, Iterable):
        raise InputError(f"{where}: field {name!r}: expected a list of text")
    result = []
    for k, item in enumerate(value):
        if not isinstance(item, str):
            raise InputError(f"{where}: field {name!r}[{k}]: expected text")
        result.append(item.strip())
    return tuple(result)


def _plain(value: Any) -> Any:
    if isinstance(value, Mapping):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    return value
