"""Grades for what is seen on a coated piece: crosshatch classes and defect rating scales.

Crosshatch (lattice-cut tape test) classes come from the share of the lattice area that detached:
ISO 2409 classes 0-5 and ASTM D3359 method B classes 5B-0B share the boundaries 0, 5, 15, 35 and
65 % (shared/reference/test-methods.md, cross-cut table [pub]). Both standards rate visually
against pictures, so turning a numeric share into a class needs a stated convention for a share
exactly on a boundary (:class:`BoundaryConvention`). Printing both classes for one share is a
correspondence between two rating scales, not a claim that the tests are equivalent: the two
standards differ in cut count, spacing and tape, and ISO 9211-4 uses its own 1.5 mm spacing.

Observations after an exposure are graded on ISO 4628-1 style 0-5 scales for quantity, size and
intensity (shared/reference/test-methods.md [mem]; the labels here are paraphrased from memory and
must be confirmed against the lab's copy). :func:`compare_inspections` compares an inspection
after exposure with the piece's initial inspection.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from enum import StrEnum

from durability.errors import InputError

__all__ = [
    "ASTM_D3359_CLASSES",
    "CORRESPONDENCE_NOTE",
    "BoundaryConvention",
    "CrosshatchGrade",
    "DefectType",
    "GradeChange",
    "Inspection",
    "InspectionChange",
    "Observation",
    "RatingScale",
    "SCALE_SOURCE",
    "astm_to_iso",
    "compare_inspections",
    "crosshatch_grade",
    "defect_type",
    "defect_types",
    "grade_label",
    "iso_class_share_range",
    "iso_to_astm",
    "max_share_pct",
    "validate_grade",
]

# ---------------------------------------------------------------- crosshatch classes

# Upper share (%) of each ISO 2409 class, index = class; class 5 runs to 100 %.
# ISO 2409 / ASTM D3359 method B table, per shared/reference/test-methods.md [pub].
_CLASS_UPPER_PCT: tuple[float, ...] = (0.0, 5.0, 15.0, 35.0, 65.0, 100.0)
ASTM_D3359_CLASSES: tuple[str, ...] = ("5B", "4B", "3B", "2B", "1B", "0B")

CORRESPONDENCE_NOTE = (
    "ISO 2409 and ASTM D3359 method B classes are printed side by side as a correspondence "
    "between rating scales for the same detached share, not as equivalent tests: the "
    "standards differ in cut count, cut spacing and tape, and ISO 9211-4 uses its own "
    "1.5 mm spacing."
)


class BoundaryConvention(StrEnum):
    """Which class a share lying exactly on a class boundary (5, 15, 35, 65 %) takes.

    The standards rate visually and word the boundary differently (ISO 2409 reads "not greater
    than 5 %" for class 1, ASTM D3359 "less than 5 %" for 4B), so a numeric input needs a rule.
    A share of exactly 0 % is class 0 / 5B under either convention: nothing detached.
    """

    BETTER_CLASS = "better"
    WORSE_CLASS = "worse"

    @property
    def sentence(self) -> str:
        """The convention as a sentence for output and reports."""
        if self is BoundaryConvention.BETTER_CLASS:
            return (
                "a share exactly on a class boundary (5, 15, 35, 65 %) takes the better class; "
                "0 % means nothing detached (class 0 / 5B)"
            )
        return (
            "a share exactly on a class boundary (5, 15, 35, 65 %) takes the worse class; "
            "0 % means nothing detached (class 0 / 5B)"
        )


@dataclass(frozen=True)
class CrosshatchGrade:
    """The crosshatch classes for one detached share, with the convention that gave them."""

    share_pct: float
    iso2409: int
    astm_d3359: str
    convention: str
    correspondence: str = CORRESPONDENCE_NOTE

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict."""
        return {
            "share_pct": self.share_pct,
            "iso2409": self.iso2409,
            "astm_d3359": self.astm_d3359,
            "max_share_pct": max_share_pct(self.iso2409),
            "convention": self.convention,
            "correspondence": self.correspondence,
        }


def _convention(value: BoundaryConvention | str) -> BoundaryConvention:
    try:
        return BoundaryConvention(value)
    except ValueError:
        choices = ", ".join(c.value for c in BoundaryConvention)
        raise InputError(f"boundary convention {value!r} is unknown (expected {choices})") from None


def _check_share(share_pct: float, what: str = "detached share") -> float:
    if isinstance(share_pct, bool) or not isinstance(share_pct, int | float):
        raise InputError(f"{what}: expected a number in %, got {share_pct!r}")
    value = float(share_pct)
    if not math.isfinite(value) or value < 0.0 or value > 100.0:
        raise InputError(f"{what}: {share_pct!r} % is outside 0-100 %")
    return value


def crosshatch_grade(
    share_pct: float,
    convention: BoundaryConvention | str = BoundaryConvention.BETTER_CLASS,
) -> CrosshatchGrade:
    """Return the ISO 2409 and ASTM D3359 (method B) classes for a detached share in %.

    ``convention`` decides a share exactly on a boundary; the default gives the better class,
    which follows the ISO 2409 wording ("not greater than 5 %").
    """
    value = _check_share(share_pct)
    rule = _convention(convention)
    iso = 0
    if value > 0.0:
        for cls in range(1, 6):
            upper = _CLASS_UPPER_PCT[cls]
            inside = value <= upper if rule is BoundaryConvention.BETTER_CLASS else value < upper
            if inside or cls == 5:
                iso = cls
                break
    return CrosshatchGrade(
        share_pct=value,
        iso2409=iso,
        astm_d3359=ASTM_D3359_CLASSES[iso],
        convention=rule.sentence,
    )


def _check_iso_class(iso_class: int) -> int:
    if isinstance(iso_class, bool) or not isinstance(iso_class, int) or not 0 <= iso_class <= 5:
        raise InputError(f"ISO 2409 class {iso_class!r} is not one of 0, 1, 2, 3, 4, 5")
    return iso_class


def iso_to_astm(iso_class: int) -> str:
    """Return the ASTM D3359 method B class printed beside an ISO 2409 class (1 -> "4B")."""
    return ASTM_D3359_CLASSES[_check_iso_class(iso_class)]


def astm_to_iso(astm_class: str) -> int:
    """Return the ISO 2409 class printed beside an ASTM D3359 method B class ("4B" -> 1)."""
    if not isinstance(astm_class, str):
        raise InputError(f"ASTM D3359 class {astm_class!r}: expected text such as '4B'")
    text = astm_class.strip().upper()
    if text not in ASTM_D3359_CLASSES:
        if text.endswith("A"):
            raise InputError(
                f"ASTM D3359 class {astm_class!r} is a method A (X-cut) class; "
                "only method B (lattice) classes correspond to ISO 2409"
            )
        raise InputError(f"ASTM D3359 class {astm_class!r} is not one of 5B, 4B, 3B, 2B, 1B, 0B")
    return ASTM_D3359_CLASSES.index(text)


def max_share_pct(iso_class: int) -> float:
    """Return the largest detached share (%) an ISO 2409 class covers (class 5: 100 %)."""
    return _CLASS_UPPER_PCT[_check_iso_class(iso_class)]


def iso_class_share_range(
    iso_class: int,
    convention: BoundaryConvention | str = BoundaryConvention.BETTER_CLASS,
) -> tuple[float, float, bool, bool]:
    """Return (lower, upper, lower_included, upper_included) shares (%) of an ISO 2409 class.

    Class 0 is exactly 0 %. For the others the inclusion of each end follows ``convention``.
    """
    cls = _check_iso_class(iso_class)
    if cls == 0:
        return (0.0, 0.0, True, True)
    better = _convention(convention) is BoundaryConvention.BETTER_CLASS
    lower = _CLASS_UPPER_PCT[cls - 1]
    upper = _CLASS_UPPER_PCT[cls]
    lower_included = (not better) and cls > 1
    upper_included = better or cls == 5
    return (lower, upper, lower_included, upper_included)


# ---------------------------------------------------------------- defect rating scales


class RatingScale(StrEnum):
    """The three ISO 4628-1 style 0-5 scales (shared/reference/test-methods.md [mem])."""

    QUANTITY = "quantity"
    SIZE = "size"
    INTENSITY = "intensity"


# Labels paraphrased from memory of ISO 4628-1; the lab confirms them against its copy.
_SCALE_LABELS: dict[RatingScale, tuple[str, ...]] = {
    RatingScale.QUANTITY: (
        "none",
        "very few",
        "few",
        "a moderate number",
        "a considerable number",
        "dense",
    ),
    RatingScale.SIZE: (
        "not visible at 10x magnification",
        "visible only with magnification up to 10x",
        "just visible with normal corrected vision",
        "clearly visible with normal corrected vision (up to 0.5 mm)",
        "0.5 mm to 5 mm",
        "larger than 5 mm",
    ),
    RatingScale.INTENSITY: (
        "no change",
        "very slight",
        "slight",
        "moderate",
        "considerable",
        "severe",
    ),
}

SCALE_SOURCE = "ISO 4628-1 style 0-5 scale, labels from memory (confirm against the lab's copy)"


def _scale(scale: RatingScale | str) -> RatingScale:
    try:
        return RatingScale(scale)
    except ValueError:
        choices = ", ".join(s.value for s in RatingScale)
        raise InputError(f"rating scale {scale!r} is unknown (expected {choices})") from None


def validate_grade(scale: RatingScale | str, grade: int) -> int:
    """Return ``grade`` when it is a whole number 0-5 on ``scale``; InputError otherwise."""
    name = _scale(scale).value
    if isinstance(grade, bool) or not isinstance(grade, int) or not 0 <= grade <= 5:
        raise InputError(f"{name} grade {grade!r} is not a whole number from 0 to 5")
    return grade


def grade_label(scale: RatingScale | str, grade: int) -> str:
    """Return the words for ``grade`` on ``scale`` (e.g. quantity 2 -> "few")."""
    rated = _scale(scale)
    return _SCALE_LABELS[rated][validate_grade(rated, grade)]


class DefectType(StrEnum):
    """The defect types an observation may record."""

    PEELING = "peeling"
    FLAKING = "flaking"
    BLISTERING = "blistering"
    CRACKING = "cracking"
    CRAZING = "crazing"
    HAZE = "haze"
    STAIN_DISCOLORATION = "stain_discoloration"
    SPOTS = "spots"
    PINHOLES = "pinholes"
    SCRATCHES = "scratches"
    DIGS = "digs"
    COATING_REMOVAL = "coating_removal"
    DELAMINATION = "delamination"

    @property
    def words(self) -> str:
        """The defect type as plain words ("stain_discoloration" -> "stain or discoloration")."""
        if self is DefectType.STAIN_DISCOLORATION:
            return "stain or discoloration"
        return self.value.replace("_", " ")


def defect_type(text: DefectType | str) -> DefectType:
    """Return the DefectType for ``text``, tolerating case, spaces and hyphens."""
    if isinstance(text, DefectType):
        return text
    if not isinstance(text, str):
        raise InputError(f"defect type {text!r}: expected text")
    key = text.strip().lower().replace(" ", "_").replace("-", "_").replace("/", "_")
    try:
        return DefectType(key)
    except ValueError:
        choices = ", ".join(d.value for d in DefectType)
        raise InputError(f"defect type {text!r} is unknown (expected one of {choices})") from None


@dataclass(frozen=True)
class Observation:
    """One thing seen on a piece: its defect type, where, and its grades (None = not graded)."""

    defect: DefectType
    zone: str = ""
    quantity: int | None = None
    size: int | None = None
    intensity: int | None = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "defect", defect_type(self.defect))
        for scale in RatingScale:
            value = getattr(self, scale.value)
            if value is not None:
                validate_grade(scale, value)

    def grade(self, scale: RatingScale) -> int | None:
        """Return this observation's grade on ``scale`` (None when not graded)."""
        value: int | None = getattr(self, scale.value)
        return value


@dataclass(frozen=True)
class Inspection:
    """A visual inspection of one piece.

    ``no_defects_observed`` is the explicit statement that nothing was seen; it may not be
    combined with observations. An inspection with neither records nothing and is refused where
    a verdict depends on it.
    """

    observations: tuple[Observation, ...] = ()
    no_defects_observed: bool = False

    def __post_init__(self) -> None:
        object.__setattr__(self, "observations", tuple(self.observations))
        for index, obs in enumerate(self.observations, start=1):
            if not isinstance(obs, Observation):
                raise InputError(f"inspection, observation {index}: expected an Observation")
        if self.no_defects_observed and self.observations:
            raise InputError(
                "inspection states 'no defects observed' but also lists "
                f"{len(self.observations)} observation(s); record one or the other"
            )

    @property
    def recorded(self) -> bool:
        """True when the inspection states something (observations or 'no defects observed')."""
        return self.no_defects_observed or bool(self.observations)

    def defect_types(self) -> set[DefectType]:
        """Return the defect types observed."""
        return {o.defect for o in self.observations}

    def worst_grades(self, defect: DefectType) -> dict[RatingScale, int]:
        """Return the highest grade recorded on each scale for ``defect`` over all zones."""
        worst: dict[RatingScale, int] = {}
        for obs in self.observations:
            if obs.defect is not defect:
                continue
            for scale in RatingScale:
                value = obs.grade(scale)
                if value is not None and value > worst.get(scale, -1):
                    worst[scale] = value
        return worst


@dataclass(frozen=True)
class GradeChange:
    """A defect type whose grade on one scale is higher after exposure than before."""

    defect: DefectType
    scale: RatingScale
    before: int
    after: int

    @property
    def sentence(self) -> str:
        """The change in plain words."""
        return (
            f"{self.defect.words} {self.scale.value} worsened from {self.before} "
            f"({grade_label(self.scale, self.before)}) to {self.after} "
            f"({grade_label(self.scale, self.after)})"
        )


@dataclass(frozen=True)
class InspectionChange:
    """What an inspection after exposure shows that the initial inspection did not.

    ``new_defects``: types present after but not before. ``worsened``: types present both times
    with a higher worst grade on some scale. ``not_compared``: (type, scale) pairs graded only
    once, so no change can be stated. ``convention``: how the comparison was made.
    """

    new_defects: tuple[DefectType, ...]
    worsened: tuple[GradeChange, ...]
    not_compared: tuple[tuple[DefectType, RatingScale], ...]
    convention: str

    @property
    def changed(self) -> bool:
        """True when there is a new defect type or a worsened grade."""
        return bool(self.new_defects or self.worsened)


COMPARISON_CONVENTION = (
    "defects are compared by type over the whole piece: the worst grade recorded on each scale "
    "for a type after exposure is compared with the worst grade before; a grade recorded only "
    "once cannot be compared and is listed as not compared; an absent initial inspection counts "
    "as no defects"
)


def compare_inspections(initial: Inspection | None, after: Inspection) -> InspectionChange:
    """Compare an inspection after exposure with the piece's initial inspection."""
    if not after.recorded:
        raise InputError(
            "the inspection after exposure records nothing: list the defects seen or state "
            "'no defects observed'"
        )
    before = initial if initial is not None else Inspection(no_defects_observed=True)
    before_types = before.defect_types()
    new = [d for d in DefectType if d in after.defect_types() and d not in before_types]
    worsened: list[GradeChange] = []
    not_compared: list[tuple[DefectType, RatingScale]] = []
    for defect in DefectType:
        if defect not in before_types or defect not in after.defect_types():
            continue
        old = before.worst_grades(defect)
        new_grades = after.worst_grades(defect)
        for scale in RatingScale:
            if scale in old and scale in new_grades:
                if new_grades[scale] > old[scale]:
                    worsened.append(GradeChange(defect, scale, old[scale], new_grades[scale]))
            elif scale in old or scale in new_grades:
                not_compared.append((defect, scale))
    return InspectionChange(
        new_defects=tuple(new),
        worsened=tuple(worsened),
        not_compared=tuple(not_compared),
        convention=COMPARISON_CONVENTION,
    )


def defect_types(values: Iterable[DefectType | str] | Sequence[str]) -> tuple[DefectType, ...]:
    """Return DefectTypes for a list of names, naming the item (1-based) that is unknown."""
    result: list[DefectType] = []
    for index, value in enumerate(values, start=1):
        try:
            result.append(defect_type(value))
        except InputError as exc:
            raise InputError(f"item {index}: {exc}") from None
    return tuple(result)
