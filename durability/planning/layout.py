"""Planning layout: the tests on witness pieces, in order, with the waits between steps.

:func:`plan_sequences` is the entry point. Pure Python: no Django.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import Any

from durability.catalogue_data import Catalogue, CatalogueMethod
from durability.errors import InputError
from durability.planning.model import (
    INSPECTION_CODE,
    SPECTRAL_CODE,
    PlanDraft,
    PlannedSequence,
    PlannedStep,
    PlanOptions,
    Requirement,
)
from durability.planning.rules import _RequirementRules, _Test


class _Planner(_RequirementRules):
    """Lays the tests the rules found out on witness pieces."""

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


def _letters(n: int) -> str:
    """0 -> "A", 25 -> "Z", 26 -> "AA"."""
    label = ""
    n += 1
    while n:
        n, rest = divmod(n - 1, 26)
        label = chr(ord("A") + rest) + label
    return label


def _unique_methods(methods: Iterable[CatalogueMethod]) -> list[CatalogueMethod]:
    return list({m.code: m for m in methods}.values())
