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
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field, fields
from typing import Any

from durability.callouts.model import KINDS as CALLOUT_KINDS
from durability.catalogue_data import (
    KINDS,
    TEST_KEYS,
    Catalogue,
    CatalogueMethod,
    Parameter,
    normalise_severity,
)
from durability.errors import InputError
from durability.grading import astm_to_iso, iso_to_astm
from durability.verdicts import check_acceptance_rule

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

_APPENDIX = re.compile(r"^(?P<designation>.+?)\s*(?:APP\.?|APPENDIX)\s*(?P<letter>[A-Z])$")
_ISO_9022 = re.compile(r"^ISO\s*9022(?:-(?P<part>\d+))?$")


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


# ------------------------------------------------------------------------------ planning


@dataclass
class _Test:
    """A test the requirements ask for, before it is placed on a piece."""

    method: CatalogueMethod
    kind: str
    destructive: bool
    severity: str
    state: str
    parameters: dict[str, Parameter]
    acceptance: dict[str, Any]
    sources: list[int]
    notes: list[str]
    first_seen: int

    @property
    def chamber(self) -> bool:
        return self.kind in _CHAMBER_KINDS or any(h in CHAMBER_HAZARDS for h in self.method.hazards)


class _Planner:
    def __init__(self, catalogue: Catalogue, options: PlanOptions) -> None:
        self.catalogue = catalogue
        self.options = options
        self.tests: dict[tuple[str, str], _Test] = {}
        self.review: list[ReviewItem] = []
        self.notes: list[str] = []
        self.assumptions: list[str] = []
        self.surface: list[dict[str, Any]] = []
        # (requirement index, ISO 2409 class, the standard the callout named)
        self.crosshatch_limits: list[tuple[int, int, str]] = []
        self.spectral_candidates: list[CatalogueMethod] = []
        self.used_48497_choice = False
        for code in (INSPECTION_CODE, SPECTRAL_CODE):
            if catalogue.method(code) is None:
                raise InputError(f"catalogue: method {code!r} is missing; every plan needs it")

    # -------------------------------------------------------------- requirements

    def add(self, req: Requirement, i: int) -> None:
        for assumption in req.assumptions:
            self.assumptions.append(f"{req.label(i)}: {assumption}")
        if req.needs_review and req.kind != "unknown":
            self._review(i, f"{req.label(i)}: the callout parser flagged it for review")
        handler = {
            "coating_spec": self._coating_spec,
            "environmental": self._by_code,
            "test_method": self._by_code,
            "crosshatch_limit": self._crosshatch_limit,
            "scratch_dig": self._surface,
            "iso10110_7": self._surface,
            "unknown": self._unknown,
        }[req.kind]
        handler(req, i)

    def _unknown(self, req: Requirement, i: int) -> None:
        self._review(i, f"{req.label(i)}: not understood; read the callout and plan it by hand")

    def _surface(self, req: Requirement, i: int) -> None:
        if not req.limit:
            self._review(i, f"{req.label(i)}: surface-imperfection callout without a limit")
            return
        standard = req.standard or (
            "MIL-PRF-13830B" if req.kind == "scratch_dig" else "ISO 10110-7"
        )
        spec = str(req.normal or req.limit.get("normal") or req.text or "")
        shown = spec or str(dict(req.limit))
        # The verdict code evaluates a surface limit from its written form (rule name = kind).
        rule: dict[str, Any] = (
            {"rule": req.kind, "spec": spec}
            if spec
            else {"rule": "engineer_judgement", "text": f"Judge against {shown}."}
        )
        self.surface.append(
            {
                "kind": req.kind,
                "standard": standard,
                "limit": dict(req.limit),
                "text": shown,
                "rule": rule,
                "requirement": i,
            }
        )

    def _coating_spec(self, req: Requirement, i: int) -> None:
        designation, clause = _resolve_standard(req.standard)
        if not designation:
            self._review(i, f"{req.label(i)}: coating-spec callout names no standard")
            return
        candidates = [
            m
            for m in self.catalogue.methods
            if m.standard.upper() == designation.upper() and (clause is None or m.clause == clause)
        ]
        testable = [m for m in candidates if m.test_key]
        if not testable:
            self._review(
                i,
                f"{req.label(i)}: the catalogue has no test methods for {req.standard!r}; "
                "enter the standard's methods or plan by hand",
            )
            return
        clauses = sorted({m.clause for m in testable})
        if clause is None and len(clauses) > 1:
            self._review(
                i,
                f"{req.label(i)}: {designation} holds tests in several parts "
                f"({', '.join(c or 'main text' for c in clauses)}); ask which one is meant",
            )
            return
        self.spectral_candidates.extend(m for m in candidates if m.kind == "spectral_measurement")
        keys = list(req.tests)
        if not keys:
            keys = self._default_keys(req, i, testable)
        for key in keys:
            if key not in TEST_KEYS:
                self._review(i, f"{req.label(i)}: test {key!r} is not a known test name")
                continue
            matches = [m for m in testable if m.test_key == key]
            if not matches:
                self._review(
                    i, f"{req.label(i)}: the catalogue has no {key} method for {req.standard}"
                )
                continue
            self._add_test(matches[0], i, "", "")

    def _default_keys(self, req: Requirement, i: int, testable: list[CatalogueMethod]) -> list[str]:
        groups = {m.group for m in testable}
        if groups == {""}:
            self.assumptions.append(
                f"{req.label(i)}: the callout names no tests and the catalogue holds no "
                "basic/when-specified groups for it, so every test the catalogue holds for it "
                "is planned"
            )
            self._review(
                i,
                f"{req.label(i)}: no tests named and no groups known; confirm which of the "
                "planned tests the customer requires",
            )
            return _unique(m.test_key for m in testable if m.test_key)
        wanted = {"basic"}
        if "disputed" in groups:
            self.used_48497_choice = True
            if self.options.mil_c_48497a_disputed_basic:
                wanted.add("disputed")
        return _unique(m.test_key for m in testable if m.test_key and m.group in wanted)

    def _by_code(self, req: Requirement, i: int) -> None:
        if not req.standard or not req.method:
            self._review(i, f"{req.label(i)}: needs both a standard and a method number")
            return
        method = self._find_method(req, i)
        if method is None:
            self._review(
                i,
                f"{req.label(i)}: the catalogue has no method {req.method} of {req.standard}; "
                "enter it or plan by hand",
            )
            return
        severity = ""
        if req.severity:
            try:
                severity = normalise_severity(req.severity)
            except InputError as exc:
                self._review(i, f"{req.label(i)}: {exc}")
                return
        if method.uses_severity and not severity:
            self._review(
                i, f"{req.label(i)}: {method.code} needs a degree of severity; none was given"
            )
        if severity and not method.uses_severity:
            self._review(
                i,
                f"{req.label(i)}: degree of severity {severity} given, but {method.code} has "
                "no severities in the catalogue",
            )
        state = req.state
        if method.standard.startswith("ISO 9022"):
            if not state:
                self._review(i, f"{req.label(i)}: no state of operation given (0, 1 or 2)")
            elif state not in ("0", "1", "2"):
                self._review(i, f"{req.label(i)}: state of operation {state!r} is not 0, 1 or 2")
            elif state == "2":
                self._review(
                    i,
                    f"{req.label(i)}: state 2 means operating (from memory); a witness piece "
                    "has nothing to operate, so confirm with the customer",
                )
        self._add_test(method, i, severity, state)

    def _find_method(self, req: Requirement, i: int) -> CatalogueMethod | None:
        standard = " ".join(req.standard.split())
        number = req.method.strip()
        if standard.upper().startswith("ISO") and number.isdigit() and len(number) == 1:
            number = f"0{number}"
        wanted = f"{standard}:{number}".upper()
        for method in self.catalogue.methods:
            if method.code.upper() == wanted:
                return method
        match = _ISO_9022.match(standard.upper())
        if match and match.group("part") is None:
            found = [
                m
                for m in self.catalogue.methods
                if m.standard.startswith("ISO 9022-") and m.key == number
            ]
            if len(found) == 1:
                self.assumptions.append(
                    f"{req.label(i)}: ISO 9022 part not given; method {number} is "
                    f"{found[0].code} in the catalogue"
                )
                return found[0]
        return None

    def _crosshatch_limit(self, req: Requirement, i: int) -> None:
        cls = _crosshatch_class(req.limit)
        if cls is None:
            self._review(i, f"{req.label(i)}: crosshatch limit {dict(req.limit)!r} not understood")
            return
        self.crosshatch_limits.append((i, cls, req.standard))

    # -------------------------------------------------------------- tests

    def _add_test(self, method: CatalogueMethod, i: int, severity: str, state: str) -> None:
        key = (method.code, severity)
        existing = self.tests.get(key)
        if existing is not None:
            if i not in existing.sources:
                existing.sources.append(i)
            if state and state != existing.state:
                self._review(
                    i,
                    f"{method.code}: asked for in states {existing.state or '-'} and {state}; "
                    "planned once, confirm the state",
                )
            return
        parameters = {p.name: p for p in method.parameters_for(severity)}
        kind, destructive, notes = method.kind, method.destructive, []
        abrasive = parameters.get("abrasive")
        if (
            kind == "moderate_abrasion"
            and abrasive is not None
            and "eraser" in str(abrasive.value).lower()
        ):
            # An eraser severity is severe abrasion: own piece, as MIL-C-48497A severe abrasion.
            kind, destructive = "severe_abrasion", True
            notes.append("eraser severity planned as severe abrasion on its own piece")
        if severity:
            notes.append(f"degree of severity {severity}")
        if method.standard.startswith("ISO 9022-"):
            part = method.standard.split("-", 1)[1]
            code = f"ISO 9022-{method.key}-{severity or 'SS'}-{state or 'O'}"
            notes.append(f"test code {code} (part {part})")
        acceptance = method.acceptance.as_json()
        self.tests[key] = _Test(
            method=method,
            kind=kind,
            destructive=destructive,
            severity=severity,
            state=state,
            parameters=parameters,
            acceptance=acceptance,
            sources=[i],
            notes=notes,
            first_seen=len(self.tests),
        )
        lab = [p.name for p in parameters.values() if p.needs_lab]
        missing = severity and method.uses_severity and severity not in method.severities
        if lab or missing:
            where = f"{method.code}" + (f" severity {severity}" if severity else "")
            parts = []
            if missing:
                parts.append(f"degree of severity {severity} has no values in the catalogue")
            if lab:
                parts.append(f"values to enter or confirm before release: {', '.join(lab)}")
            self._review(i, f"{where}: {'; '.join(parts)}")
        if method.acceptance.status == "to_be_entered":
            self._review(i, f"{method.code}: pass criterion to be entered by the lab")

    def _apply_crosshatch_limits(self) -> None:
        crosshatch = [t for t in self.tests.values() if t.kind == "crosshatch"]
        if not self.crosshatch_limits:
            for test in crosshatch:
                self._review(
                    test.sources[0],
                    f"{test.method.code}: no crosshatch class limit given; the class will be "
                    "recorded only",
                )
            return
        sources = [i for i, _, _ in self.crosshatch_limits]
        cls = min(c for _, c, _ in self.crosshatch_limits)
        if len({c for _, c, _ in self.crosshatch_limits}) > 1:
            self.notes.append(
                f"Several crosshatch limits were given; the strictest, class {cls}, is used."
            )
        if not crosshatch:
            first, _, standard = self.crosshatch_limits[0]
            method = self._crosshatch_method(first, standard)
            self._add_test(method, first, "", "")
            crosshatch = [self.tests[(method.code, "")]]
        for test in crosshatch:
            for i in sources:
                if i not in test.sources:
                    test.sources.append(i)
            test.acceptance = {
                "text": (
                    f"Crosshatch class at most {cls} (ISO 2409; {iso_to_astm(cls)} on the "
                    "ASTM D3359 method B scale), from the coating spec's callout."
                ),
                "rule": {"rule": "crosshatch_max_class", "iso2409_class": cls},
                "status": "public_summary",
            }
            test.notes.append("class limit from the callout; class table per ISO 2409 [pub]")

    def _crosshatch_method(self, i: int, standard: str) -> CatalogueMethod:
        standard = standard.upper()
        code = "ASTM D3359:B" if "D3359" in standard else "ISO 2409:crosshatch"
        if "D3359" not in standard and "2409" not in standard:
            self.assumptions.append(
                f"requirements[{i}]: crosshatch limit without a procedure; the ISO 2409 "
                "cross-cut is planned"
            )
        method = self.catalogue.method(code)
        if method is None:
            raise InputError(
                f"catalogue: method {code!r} is missing; the crosshatch limit needs it"
            )
        return method

    # -------------------------------------------------------------- sequences

    def build(self, requirements: list[Requirement]) -> PlanDraft:
        for i, req in enumerate(requirements):
            self.add(req, i)
        self._apply_crosshatch_limits()
        order = self.options.lab_order
        unordered = sorted({t.kind for t in self.tests.values() if t.kind not in order})
        if unordered:
            self.notes.append(
                f"Kinds missing from the lab order ({', '.join(unordered)}) run after the "
                "listed ones."
            )

        def rank(test: _Test) -> tuple[int, int, int]:
            kind_rank = order.index(test.kind) if test.kind in order else len(order)
            return (kind_rank, min(test.sources), test.first_seen)

        tests = sorted(self.tests.values(), key=rank)
        groups: list[list[_Test]] = []
        chain = [t for t in tests if not t.destructive]
        if self.options.chain_non_destructive and chain:
            groups.append(chain)
        else:
            groups.extend([t] for t in chain)
        groups.extend([t] for t in tests if t.destructive)

        for group in groups:
            self._stacked(group)
        spectral = self._spectral_method()
        sequences = tuple(
            self._sequence(_letters(n), group, spectral) for n, group in enumerate(groups)
        )
        if not sequences:
            self._review(None, "no durability test could be planned from these requirements")
        judged = {x["requirement"] for q in sequences for st in q.steps for x in st.surface_limits}
        for limit in self.surface:
            if limit["requirement"] not in judged:
                self._review(
                    limit["requirement"],
                    f"surface limit {limit['text']} has no piece to be judged on (no sequence, "
                    "or only crosshatch pieces): plan an inspection by hand",
                )
        if sequences and not self.options.spectral_limits:
            self._review(
                None,
                "no spectral limits given: enter the coating spec's limits for the spectral "
                "measurements",
            )
        self._notes(len(sequences))
        return PlanDraft(
            sequences=sequences,
            # Requirement order, plan-wide items last; the sort is stable within a requirement.
            review_items=tuple(
                sorted(self.review, key=lambda r: (r.requirement is None, r.requirement or 0))
            ),
            notes=tuple(self.notes),
            assumptions=tuple(self.assumptions),
            spare_pieces=self.options.spare_pieces,
            options=self.options,
        )

    def _stacked(self, group: list[_Test]) -> None:
        """Ask about two tests of one kind on one piece: often the same test, called twice."""
        kinds: dict[str, list[_Test]] = {}
        for test in group:
            kinds.setdefault(test.kind, []).append(test)
        for kind, same in kinds.items():
            if len(same) > 1:
                codes = ", ".join(t.method.code for t in same)
                self._review(
                    min(min(t.sources) for t in same),
                    f"{len(same)} {kind.replace('_', ' ')} tests on one piece ({codes}): they "
                    "run one after the other; confirm they are all required, or split them "
                    "onto their own pieces",
                )

    def _spectral_method(self) -> CatalogueMethod:
        found = _unique_methods(self.spectral_candidates)
        if len(found) == 1:
            self.notes.append(
                f"Spectral measurements use {found[0].code}, the coating spec's own optical check."
            )
            return found[0]
        if len(found) > 1:
            self.notes.append(
                "The coating specs name several optical checks "
                f"({', '.join(m.code for m in found)}); spectral steps use {SPECTRAL_CODE} and "
                "the engineer chooses."
            )
        method = self.catalogue.method(SPECTRAL_CODE)
        assert method is not None  # checked in __init__
        return method

    def _sequence(
        self, label: str, group: list[_Test], spectral: CatalogueMethod
    ) -> PlannedSequence:
        inspection = self.catalogue.method(INSPECTION_CODE)
        assert inspection is not None  # checked in __init__
        steps: list[PlannedStep] = []

        def add(step_kwargs: dict[str, Any]) -> None:
            steps.append(PlannedStep(order=len(steps) + 1, **step_kwargs))

        add(
            _frame(
                inspection,
                "initial_inspection",
                _frame_acceptance(inspection),
                self.options.post_coating_wait_h,
                _post_coating_reason(self.options.post_coating_wait_h),
                "baseline for comparison with every later inspection of this piece",
            )
        )
        add(
            _frame(
                spectral,
                "initial_spectral",
                self._spectral_acceptance(spectral),
                0.0,
                "",
                "before any exposure",
            )
        )
        for test in group:
            add(
                {
                    "role": "test",
                    "method_code": test.method.code,
                    "name": test.method.name,
                    "kind": test.kind,
                    "parameters": {name: p.as_json() for name, p in test.parameters.items()},
                    "acceptance": test.acceptance,
                    "hazards": test.method.hazards,
                    "destructive": test.destructive,
                    "wait_hours_before": 0.0,
                    "wait_reason": "",
                    "severity": test.severity,
                    "state": test.state,
                    "sources": tuple(test.sources),
                    "note": "; ".join(test.notes),
                }
            )
            test_order = len(steps)
            wait, reason = 0.0, ""
            if test.chamber:
                wait, reason = self._recovery(test)
            add(
                _frame(
                    inspection,
                    "inspection",
                    _frame_acceptance(inspection),
                    wait,
                    reason,
                    f"observations here decide step {test_order} ({test.method.code})",
                )
            )
        self._finish(steps, group)
        if self.options.final_spectral and any(t.chamber for t in group):
            add(
                _frame(
                    spectral,
                    "final_spectral",
                    self._spectral_acceptance(spectral),
                    0.0,
                    "",
                    "after the chamber exposure, to show whether the spectrum moved",
                )
            )
        summary = " -> ".join(
            t.method.code + (f" ({t.severity})" if t.severity else "") for t in group
        )
        return PlannedSequence(
            label=label,
            pieces=self.options.pieces_per_sequence,
            steps=tuple(steps),
            summary=summary,
        )

    def _finish(self, steps: list[PlannedStep], group: list[_Test]) -> None:
        """Turn the last inspection into the final one, with the surface limits."""
        last = steps[-1]
        if any(t.kind == "crosshatch" for t in group):
            acceptance = dict(last.acceptance)
            limits: tuple[Mapping[str, Any], ...] = ()
            note = (
                f"{last.note}; final inspection: the lattice is cut on purpose, so surface "
                "limits are not judged on this piece"
            )
        elif self.surface:
            shown = "; ".join(f"{s['text']} ({s['standard']})" for s in self.surface)
            # One limit: its own rule, so the verdict is computed. Several: one step can hold
            # one rule, so the engineer judges, with each limit's rule in surface_limits.
            rule = (
                dict(self.surface[0]["rule"])
                if len(self.surface) == 1
                else {
                    "rule": "engineer_judgement",
                    "text": f"Evaluate surface imperfections against each of {shown}, using "
                    "each limit's rule in surface_limits.",
                }
            )
            acceptance = {
                "text": f"Surface imperfections within {shown}.",
                "rule": rule,
                "status": "public_summary",
            }
            limits = tuple(self.surface)
            note = f"{last.note}; final inspection: surface limits from the callout"
        else:
            acceptance, limits = dict(last.acceptance), ()
            note = f"{last.note}; final inspection"
        steps[-1] = PlannedStep(
            order=last.order,
            role="final_inspection",
            method_code=last.method_code,
            name=last.name,
            kind=last.kind,
            parameters=last.parameters,
            acceptance=acceptance,
            hazards=last.hazards,
            destructive=last.destructive,
            wait_hours_before=last.wait_hours_before,
            wait_reason=last.wait_reason,
            surface_limits=limits,
            note=note,
        )

    def _recovery(self, test: _Test) -> tuple[float, str]:
        own = test.parameters.get("recovery_h")
        if own is not None and isinstance(own.value, int | float) and not own.needs_lab:
            return float(own.value), f"recovery as {test.method.code} states ({own.note})"
        return self.options.recovery_h, _RECOVERY_REASON

    def _spectral_acceptance(self, spectral: CatalogueMethod) -> dict[str, Any]:
        acceptance = spectral.acceptance.as_json()
        if not self.options.spectral_limits:
            # Nothing to check against yet: record the spectrum; a review item asks for limits.
            return {
                "text": "Recorded only until the coating spec's spectral limits are entered.",
                "rule": {"rule": "recorded_only"},
                "status": acceptance["status"],
            }
        acceptance["rule"] = {
            "rule": "spectral_limits",
            "limits": [dict(x) for x in self.options.spectral_limits],
        }
        return acceptance

    def _notes(self, count: int) -> None:
        order = ", ".join(self.options.lab_order)
        self.notes.insert(
            0,
            f"Test order on a shared piece is the lab's default order ({order}), a common "
            "practice; ISO 9211-3's annex gives an example order, but it was not collected, so "
            "this plan does not claim to follow it.",
        )
        if self.options.chain_non_destructive:
            self.notes.insert(
                1,
                "Non-destructive tests share one piece in that order, as MIL-C-48497A-style "
                "practice runs humidity, then tape adhesion, then moderate abrasion on one "
                "witness (common practice). Each destructive test has its own piece.",
            )
        else:
            self.notes.insert(1, "Every test has its own piece (option chain_non_destructive).")
        if self.used_48497_choice:
            chosen = (
                "basic tests, planned"
                if self.options.mil_c_48497a_disputed_basic
                else "when-specified tests, not planned unless the callout names them"
            )
            self.notes.append(
                "MIL-C-48497A temperature and solvent solubility: sources disagree whether "
                f"they are basic; this plan treats them as {chosen} "
                f"(option mil_c_48497a_disputed_basic = "
                f"{self.options.mil_c_48497a_disputed_basic})."
            )
        self.notes.append(
            f"Waits: {self.options.post_coating_wait_h:g} h after coating before a piece's "
            f"first step; {self.options.recovery_h:g} h recovery before the inspection after "
            "a chamber exposure unless the method states its own."
        )
        pieces = self.options.pieces_per_sequence
        self.notes.append(
            f"Witness pieces: {count} sequence(s) x {pieces} piece(s) + "
            f"{self.options.spare_pieces} spare(s)."
        )

    def _review(self, requirement: int | None, text: str) -> None:
        item = ReviewItem(requirement=requirement, text=text)
        if item not in self.review:
            self.review.append(item)


def _post_coating_reason(hours: float) -> str:
    return (
        f"{hours:g} h at ambient after coating before the first step; ISO 9211-4 recommends "
        "at least 12 h (per a public summary) and the lab applies a wait to every plan "
        "(common practice)"
    )


_RECOVERY_REASON = (
    "recovery at ambient before inspecting after a chamber exposure (common practice; ISO 9022 "
    "names a recovery stage, its duration was not collected)"
)


def plan_sequences(
    requirements: Iterable[Requirement | Mapping[str, Any] | object],
    catalogue: Catalogue,
    options: PlanOptions | Mapping[str, Any] | None = None,
) -> PlanDraft:
    """Plan the test sequences on witness pieces for a coating spec's requirements.

    ``requirements`` are Requirement objects, dicts with its field names, or the callout
    parser's objects with the same attribute names. Raises InputError for a requirement or an
    option of the wrong shape, or a catalogue without the lab procedures every plan needs.
    What cannot be planned becomes a review item; nothing is dropped.
    """
    if isinstance(requirements, str | bytes | Mapping):
        raise InputError("requirements: expected a list of requirements")
    items = [Requirement.from_any(item, i) for i, item in enumerate(requirements)]
    planner = _Planner(catalogue, PlanOptions.from_any(options))
    return planner.build(items)


# ------------------------------------------------------------------------------ helpers


def _frame(
    method: CatalogueMethod,
    role: str,
    acceptance: dict[str, Any],
    wait: float,
    reason: str,
    note: str,
) -> dict[str, Any]:
    return {
        "role": role,
        "method_code": method.code,
        "name": method.name,
        "kind": method.kind,
        "parameters": {p.name: p.as_json() for p in method.parameters_for("")},
        "acceptance": acceptance,
        "hazards": method.hazards,
        "destructive": method.destructive,
        "wait_hours_before": float(wait),
        "wait_reason": reason,
        "note": note,
    }


def _frame_acceptance(method: CatalogueMethod) -> dict[str, Any]:
    return method.acceptance.as_json()


def _resolve_standard(text: str) -> tuple[str, str | None]:
    """Split "MIL-PRF-13830B App. C" into ("MIL-PRF-13830B", "Appendix C")."""
    cleaned = " ".join(text.split())
    match = _APPENDIX.match(cleaned.upper())
    if match:
        designation = cleaned[: len(match.group("designation"))].rstrip(" ,;")
        return designation, f"Appendix {match.group('letter')}"
    return cleaned, None


def _crosshatch_class(limit: Mapping[str, Any]) -> int | None:
    for key in ("iso2409_class", "max_class", "class", "astm_class", "astm_d3359_class"):
        if key not in limit:
            continue
        value = limit[key]
        if isinstance(value, int) and not isinstance(value, bool) and 0 <= value <= 5:
            return value
        if isinstance(value, str):
            text = value.strip().upper()
            if text.isdigit() and 0 <= int(text) <= 5:
                return int(text)
            try:
                return astm_to_iso(text)
            except InputError:
                return None
    return None


def _letters(n: int) -> str:
    """0 -> "A", 25 -> "Z", 26 -> "AA"."""
    label = ""
    n += 1
    while n:
        n, rest = divmod(n - 1, 26)
        label = chr(ord("A") + rest) + label
    return label


def _unique(values: Iterable[str]) -> list[str]:
    return list(dict.fromkeys(values))


def _unique_methods(methods: Iterable[CatalogueMethod]) -> list[CatalogueMethod]:
    return list({m.code: m for m in methods}.values())


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
