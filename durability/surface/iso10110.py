"""ISO 10110-7 evaluation of the surface imperfections seen on one surface.

Rules per shared/reference/computations.md (notation [pub]; details by edition from memory):

- ``5/N x A``: the grade number A is the square root of an imperfection's area (mm). Area
  equivalence: any mix of imperfections passes when the sum of their areas is at most N * A^2 and
  every single one has sqrt(a) <= A. A round dig of diameter d has a = pi d^2 / 4; a scratch up to
  2 mm long is a localized imperfection of area length x width.
- ``L N'' x A''``: scratches longer than 2 mm are long scratches, limited in count (N'') and
  maximum width (A'').
- ``C N' x A'``: coating imperfections with their own area budget N' * A'^2.
- ``E A'''``: the largest edge chip, measured as its extent from the edge.

Choices made where the rule is not settled (each stated in the output's ``conventions``): a long
scratch with no L field fails; coating imperfections with no C field join the 5/ budget; edge chips
with no E field are not evaluated; the concentration rule of some editions is not evaluated; no
imperfection is disregarded by size unless ``ignore_below_mm`` is set.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from durability.errors import InputError
from durability.surface.notation import Iso10110Spec, parse_iso10110_7

__all__ = [
    "DEFAULT_EDITION",
    "Iso10110Observation",
    "Iso10110Result",
    "Iso10110Settings",
    "SurfaceScratch",
    "dig_area_mm2",
    "evaluate_iso10110_7",
]

STANDARD = "ISO 10110-7"
DEFAULT_EDITION = "ISO 10110-7:2008"
LONG_SCRATCH_FROM_MM = 2.0
_TOLERANCE = 1e-9


def _le(value: float, limit: float) -> bool:
    return value <= limit + _TOLERANCE * max(1.0, abs(limit))


def _fmt(value: float, digits: int = 4) -> str:
    text = f"{value:.{digits}f}".rstrip("0").rstrip(".")
    return text if text not in ("", "-0") else "0"


def _positive(value: object, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"{what}: expected a number, got {value!r}")
    number = float(value)
    if not math.isfinite(number) or number <= 0.0:
        raise InputError(f"{what}: {value!r} must be a positive finite number")
    return number


def dig_area_mm2(diameter_mm: float) -> float:
    """Return the area of a round dig: pi d^2 / 4."""
    d = _positive(diameter_mm, "dig diameter (mm)")
    return math.pi * d * d / 4.0


@dataclass(frozen=True)
class SurfaceScratch:
    """A scratch: its length and width in mm. Up to 2 mm long it is a localized imperfection."""

    length_mm: float
    width_mm: float


@dataclass(frozen=True)
class Iso10110Observation:
    """What was seen on one surface.

    ``imperfections_mm``: localized imperfections as grade numbers (sqrt of area, mm).
    ``dig_diameters_mm``: round digs by diameter. ``scratches``: scratches by length and width
    (up to 2 mm long they join the 5/ budget, longer ones are long scratches).
    ``coating_imperfections_mm``: coating imperfections as sqrt of area (mm).
    ``edge_chips_mm``: edge chips by extent from the edge (mm).
    """

    imperfections_mm: tuple[float, ...] = ()
    dig_diameters_mm: tuple[float, ...] = ()
    scratches: tuple[SurfaceScratch, ...] = ()
    coating_imperfections_mm: tuple[float, ...] = ()
    edge_chips_mm: tuple[float, ...] = ()


@dataclass(frozen=True)
class Iso10110Settings:
    """Choices labs make differently: the edition applied and an optional size below which
    imperfections are disregarded (None: none disregarded)."""

    edition: str = DEFAULT_EDITION
    ignore_below_mm: float | None = None


@dataclass(frozen=True)
class Iso10110Result:
    """The outcome of an ISO 10110-7 evaluation (``passed`` is ``"pass"`` in :meth:`as_json`).

    ``area_mm2`` is the area counted against ``area_budget_mm2`` (N * A^2); the coating figures
    are None when the callout has no C field.
    """

    spec: str
    edition: str
    passed: bool
    reasons: tuple[str, ...]
    area_mm2: float
    area_budget_mm2: float
    coating_area_mm2: float | None
    coating_area_budget_mm2: float | None
    long_scratches: int
    largest_edge_chip_mm: float | None
    conventions: tuple[str, ...]

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict (the verdict under the key ``"pass"``)."""
        return {
            "spec": self.spec,
            "edition": self.edition,
            "pass": self.passed,
            "reasons": list(self.reasons),
            "area_mm2": self.area_mm2,
            "area_budget_mm2": self.area_budget_mm2,
            "coating_area_mm2": self.coating_area_mm2,
            "coating_area_budget_mm2": self.coating_area_budget_mm2,
            "long_scratches": self.long_scratches,
            "largest_edge_chip_mm": self.largest_edge_chip_mm,
            "conventions": list(self.conventions),
        }


@dataclass(frozen=True)
class _Item:
    label: str
    area_mm2: float

    @property
    def grade_mm(self) -> float:
        return math.sqrt(self.area_mm2)


def _items(values: Sequence[float], label: str) -> list[_Item]:
    items = []
    for index, value in enumerate(values, start=1):
        g = _positive(value, f"{label} {index} (sqrt of area, mm)")
        items.append(_Item(f"{label} {index} (grade {_fmt(g)} mm)", g * g))
    return items


def _budget(
    items: Sequence[_Item],
    count: int,
    grade: float,
    field: str,
    failures: list[str],
    checks: list[str],
) -> tuple[float, float]:
    cite = f", {STANDARD}."
    for item in items:
        if not _le(item.grade_mm, grade):
            failures.append(
                f"{item.label.capitalize()} is larger than the grade number {_fmt(grade)} mm "
                f"of the {field} field{cite}"
            )
    area = sum((i.area_mm2 for i in items), 0.0)
    budget = count * grade * grade
    verb = "is within" if _le(area, budget) else "exceeds"
    sentence = (
        f"Imperfection area {_fmt(area, 6)} mm2 {verb} the {field} budget N x A^2 = "
        f"{count} x {_fmt(grade)}^2 = {_fmt(budget, 6)} mm2"
    )
    (checks if verb == "is within" else failures).append(sentence + cite)
    return area, budget


def evaluate_iso10110_7(
    spec: Iso10110Spec | str,
    observation: Iso10110Observation,
    settings: Iso10110Settings | None = None,
) -> Iso10110Result:
    """Evaluate the imperfections seen on one surface against an ISO 10110-7 callout."""
    iso = parse_iso10110_7(spec) if isinstance(spec, str) else spec
    rules = settings if settings is not None else Iso10110Settings()
    cite = f", {STANDARD}."
    conventions = [
        f"edition assumed: {rules.edition}; rules as recalled, confirm against the edition "
        "named on the drawing",
        "area equivalence: the sum of imperfection areas is compared with N x A^2 and each "
        "imperfection's sqrt(area) with A",
        "round dig area = pi d^2 / 4; a scratch up to 2 mm long counts as area length x width",
        "a value equal to its limit passes",
        "the concentration rule of some editions is not evaluated",
    ]
    ignore = rules.ignore_below_mm
    if ignore is not None:
        ignore = _positive(ignore, "ignore_below_mm")
        conventions.append(f"imperfections with sqrt(area) below {_fmt(ignore)} mm are disregarded")
    else:
        conventions.append("no imperfection is disregarded by size")

    local = _items(observation.imperfections_mm, "imperfection")
    for index, d in enumerate(observation.dig_diameters_mm, start=1):
        area = dig_area_mm2(_positive(d, f"dig {index} diameter (mm)"))
        local.append(_Item(f"dig {index} (diameter {_fmt(d)} mm)", area))
    long: list[tuple[int, SurfaceScratch]] = []
    for index, scratch in enumerate(observation.scratches, start=1):
        length = _positive(scratch.length_mm, f"scratch {index} length (mm)")
        width = _positive(scratch.width_mm, f"scratch {index} width (mm)")
        if length > LONG_SCRATCH_FROM_MM:
            long.append((index, scratch))
        else:
            local.append(
                _Item(
                    f"scratch {index} ({_fmt(length)} x {_fmt(width)} mm)",
                    length * width,
                )
            )
    coating = _items(observation.coating_imperfections_mm, "coating imperfection")
    chips = [
        _positive(c, f"edge chip {index} extent (mm)")
        for index, c in enumerate(observation.edge_chips_mm, start=1)
    ]
    if ignore is not None:
        local = [i for i in local if i.grade_mm >= ignore]
        coating = [i for i in coating if i.grade_mm >= ignore]

    failures: list[str] = []
    checks: list[str] = []

    coating_area: float | None = None
    coating_budget: float | None = None
    if iso.coating is None:
        if coating:
            conventions.append(
                "the callout has no C field, so coating imperfections join the 5/ budget"
            )
        local.extend(coating)
    area, budget = _budget(local, iso.count, iso.grade_mm, "5/", failures, checks)
    if iso.coating is not None:
        coating_area, coating_budget = _budget(
            coating, iso.coating[0], iso.coating[1], "C", failures, checks
        )

    if iso.long_scratch is None:
        if long:
            failures.append(
                f"{len(long)} scratch(es) longer than 2 mm, but the callout has no L field "
                f"allowing long scratches{cite}"
            )
            conventions.append("a long scratch with no L field in the callout fails")
    else:
        allowed, max_width = iso.long_scratch
        for index, scratch in long:
            if not _le(scratch.width_mm, max_width):
                failures.append(
                    f"Long scratch (scratch {index}) is {_fmt(scratch.width_mm)} mm wide, wider "
                    f"than the {_fmt(max_width)} mm of the L field{cite}"
                )
        verb = "within" if len(long) <= allowed else "more than"
        sentence = f"{len(long)} long scratch(es), {verb} the {allowed} allowed by the L field"
        (checks if len(long) <= allowed else failures).append(sentence + cite)

    largest_chip = max(chips) if chips else None
    if iso.edge_chip_mm is None:
        if chips:
            conventions.append("the callout has no E field, so edge chips were not evaluated")
    elif largest_chip is not None:
        verb = "within" if _le(largest_chip, iso.edge_chip_mm) else "beyond"
        sentence = (
            f"Largest edge chip extends {_fmt(largest_chip)} mm, {verb} the "
            f"{_fmt(iso.edge_chip_mm)} mm of the E field"
        )
        (checks if verb == "within" else failures).append(sentence + cite)

    return Iso10110Result(
        spec=iso.normal,
        edition=rules.edition,
        passed=not failures,
        reasons=tuple(failures) if failures else tuple(checks),
        area_mm2=area,
        area_budget_mm2=budget,
        coating_area_mm2=coating_area,
        coating_area_budget_mm2=coating_budget,
        long_scratches=len(long),
        largest_edge_chip_mm=largest_chip,
        conventions=tuple(conventions),
    )
