"""Planning rules: from each requirement to the catalogue methods it asks for.

:class:`_RequirementRules` holds the planner's state and turns requirements into tests
(:class:`_Test`), review items and assumptions; :mod:`durability.planning.layout` then lays the
tests out on witness pieces. Pure Python: no Django.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

from durability.catalogue_data import (
    TEST_KEYS,
    Catalogue,
    CatalogueMethod,
    Parameter,
    normalise_severity,
)
from durability.errors import InputError
from durability.grading import astm_to_iso, iso_to_astm
from durability.planning.model import (
    _CHAMBER_KINDS,
    CHAMBER_HAZARDS,
    INSPECTION_CODE,
    SPECTRAL_CODE,
    PlanOptions,
    Requirement,
    ReviewItem,
)

_APPENDIX = re.compile(r"^(?P<designation>.+?)\s*(?:APP\.?|APPENDIX)\s*(?P<letter>[A-Z])$")
_ISO_9022 = re.compile(r"^ISO\s*9022(?:-(?P<part>\d+))?$")


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


class _RequirementRules:
    """The planner's state, and the rules that map requirements to catalogue methods."""

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

    def _review(self, requirement: int | None, text: str) -> None:
        item = ReviewItem(requirement=requirement, text=text)
        if item not in self.review:
            self.review.append(item)


# ------------------------------------------------------------------------------ helpers


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


def _unique(values: Iterable[str]) -> list[str]:
    return list(dict.fromkeys(values))
