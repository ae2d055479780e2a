"""Processing and testing cautions for a bare glass, from its resistance classes and expansion.

The facts behind these cautions are common practice (shared/reference/test-methods.md, "Facts
of the trade"): glasses with poor chemical resistance limit ultrasonic cleaning and stain in
humidity; hot processes need careful heating and cooling, the more so the larger the glass's
thermal expansion. No standard gives the thresholds used here: they are the lab's configurable
common-practice thresholds (`CautionThresholds`), shown with every result.

Resistance classes are taken as the supplier writes them:

- acid resistance per ISO 8424, e.g. "SR 5", "1", "52.3";
- alkali resistance per ISO 10629, e.g. "AR 2.3";
- phosphate resistance per ISO 9689, e.g. "PR 4.3".

The decoding (class order, the meaning of the digit after the point) is from memory of
suppliers' catalogue keys, not from the standards' texts, and says so in its `basis`. A class
that does not fit the known pattern is reported as not understood rather than guessed.
The supplier's climate and stain classes are free text and are shown as written.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from enum import StrEnum

from durability.errors import InputError

BASIS_COMMON_PRACTICE = "common practice (shared/reference/test-methods.md, Facts of the trade)"
BASIS_DECODING = (
    "class order and surface-change digit from memory of suppliers' catalogue keys; "
    "confirm against your copy of the standard"
)


class Scale(StrEnum):
    """The three resistance scales decoded here."""

    ACID = "acid"
    ALKALI = "alkali"
    PHOSPHATE = "phosphate"


_SCALE_INFO: dict[Scale, tuple[str, str, tuple[int, ...]]] = {
    # scale: (label, prefix, classes from most to least resistant)
    Scale.ACID: ("acid resistance (ISO 8424)", "SR", (1, 2, 3, 4, 5, 51, 52, 53)),
    Scale.ALKALI: ("alkali resistance (ISO 10629)", "AR", (1, 2, 3, 4)),
    Scale.PHOSPHATE: ("phosphate resistance (ISO 9689)", "PR", (1, 2, 3, 4)),
}

#: Meaning of the digit after the point (visible surface change), from memory [mem].
SURFACE_CHANGE = {
    0: "no visible change",
    1: "clear but irregular surface",
    2: "interference colours (slight leaching)",
    3: "firmly adhering thin whitish layer (stronger leaching)",
    4: "loosely adhering thick layer",
}

_CLASS_PATTERN = re.compile(r"^\s*(?:([A-Za-z]{2})\s*)?(\d{1,2})(?:[.,](\d))?\s*$")

TEST_KINDS = (
    "humidity",
    "salt_fog",
    "salt_solubility",
    "water_solubility",
    "solvent_solubility",
    "temperature",
    "thermal_shock",
)
_WET_KINDS = ("humidity", "salt_fog", "salt_solubility", "water_solubility")


@dataclass(frozen=True)
class CautionThresholds:
    """The lab's configurable common-practice thresholds (no standard sets them)."""

    #: Acid classes from this one on count as poor (order 1, 2, 3, 4, 5, 51, 52, 53).
    acid_poor_from: int = 4
    #: Alkali classes from this one on count as poor (1..4).
    alkali_poor_from: int = 3
    #: Phosphate classes from this one on count as poor (1..4).
    phosphate_poor_from: int = 3
    #: A surface-change digit from this one on means visible attack: staining risk.
    surface_change_from: int = 2
    #: Expansion (10^-6/K) from which heating and cooling need care; rapid changes at risk.
    alpha_care_from: float = 8.0
    #: Expansion (10^-6/K) from which even slow temperature cycles are at risk.
    alpha_high_from: float = 10.0

    def describe(self) -> str:
        """The thresholds in one line, for the result and reports."""
        return (
            f"lab's common-practice thresholds: acid poor from class {self.acid_poor_from}, "
            f"alkali poor from {self.alkali_poor_from}, phosphate poor from "
            f"{self.phosphate_poor_from}, surface-change digit from {self.surface_change_from}; "
            f"expansion care from {self.alpha_care_from:g}, high from "
            f"{self.alpha_high_from:g} x 10^-6/K"
        )


@dataclass(frozen=True)
class GlassChemistry:
    """A glass's resistance classes as written, its expansion and the supplier's free text."""

    name: str
    acid_class: str | None = None
    alkali_class: str | None = None
    phosphate_class: str | None = None
    #: Thermal expansion coefficient in 10^-6/K.
    alpha_1e6_per_k: float | None = None
    supplier_climate_class: str | None = None
    supplier_stain_class: str | None = None


@dataclass(frozen=True)
class ResistanceClass:
    """One resistance class: as written, and what could be read from it."""

    scale: Scale
    label: str
    written: str | None
    understood: bool
    main_class: int | None
    surface_change_digit: int | None
    surface_change: str | None
    poor: bool | None
    message: str
    basis: str


@dataclass(frozen=True)
class Caution:
    """One processing caution."""

    topic: str
    severity: str  # "caution" or "note"
    message: str
    basis: str


@dataclass(frozen=True)
class TestKindFlag:
    """Whether a kind of durability test is likely to attack the bare glass."""

    kind: str
    #: True likely attacked, False not expected, None cannot tell from the data given.
    likely_attacked: bool | None
    reason: str


@dataclass(frozen=True)
class GlassCautions:
    """Everything `glass_cautions` found, with the thresholds it used."""

    glass_name: str
    classes: tuple[ResistanceClass, ...]
    alpha_1e6_per_k: float | None
    #: "low", "care" or "high" against the thresholds; "unknown" without alpha.
    thermal_level: str
    cautions: tuple[Caution, ...]
    test_kinds: tuple[TestKindFlag, ...]
    supplier_climate_class: str | None
    supplier_stain_class: str | None
    thresholds: str
    basis: str

    def flag(self, kind: str) -> TestKindFlag:
        """The flag for one test kind."""
        for item in self.test_kinds:
            if item.kind == kind:
                return item
        raise InputError(f"test kind {kind!r} unknown; expected one of {', '.join(TEST_KINDS)}")


def decode_class(
    scale: Scale, written: str | None, thresholds: CautionThresholds
) -> ResistanceClass:
    """Read one class as the supplier writes it ("SR 5", "AR 2.3", "52.3", "1")."""
    label, prefix, classes = _SCALE_INFO[scale]
    if written is not None and not isinstance(written, str):
        raise InputError(f"{label}: expected the class as written (text), got {written!r}")
    if written is None or not written.strip():
        return ResistanceClass(
            scale, label, None, False, None, None, None, None, f"{label}: not given", BASIS_DECODING
        )

    def not_understood(why: str) -> ResistanceClass:
        message = f"{label} {written!r} not understood: {why}"
        return ResistanceClass(
            scale, label, written, False, None, None, None, None, message, BASIS_DECODING
        )

    match = _CLASS_PATTERN.match(written)
    if match is None:
        return not_understood(f"expected a class such as '{prefix} {classes[1]}' or '{classes[1]}'")
    written_prefix, main_text, digit_text = match.groups()
    if written_prefix is not None and written_prefix.upper() != prefix:
        return not_understood(
            f"prefix {written_prefix!r} is not {prefix!r}; other suppliers' scales are not "
            "decoded here: enter them under the supplier's classes"
        )
    main = int(main_text)
    if main not in classes:
        allowed = ", ".join(str(c) for c in classes)
        return not_understood(f"class {main} is not on the scale ({allowed})")
    digit = int(digit_text) if digit_text is not None else None
    if digit is not None and digit not in SURFACE_CHANGE:
        return not_understood(f"surface-change digit {digit} is not 0-4")
    poor_from = {
        Scale.ACID: thresholds.acid_poor_from,
        Scale.ALKALI: thresholds.alkali_poor_from,
        Scale.PHOSPHATE: thresholds.phosphate_poor_from,
    }[scale]
    poor = classes.index(main) >= classes.index(poor_from) if poor_from in classes else None
    change = SURFACE_CHANGE[digit] if digit is not None else None
    rank = f"class {main} of {', '.join(str(c) for c in classes)} (first is most resistant)"
    message = f"{label} {written.strip()}: {rank}"
    if change:
        message += f"; surface change .{digit}: {change}"
    if poor:
        message += f"; poor by the lab's threshold (class {poor_from} or worse)"
    return ResistanceClass(
        scale, label, written, True, main, digit, change, poor, message, BASIS_DECODING
    )


def _check_inputs(glass: GlassChemistry, thresholds: CautionThresholds) -> float | None:
    if not isinstance(glass, GlassChemistry):
        raise InputError(f"glass: expected GlassChemistry, got {glass!r}")
    for field in (
        "acid_class",
        "alkali_class",
        "phosphate_class",
        "supplier_climate_class",
        "supplier_stain_class",
    ):
        value = getattr(glass, field)
        if value is not None and not isinstance(value, str):
            raise InputError(
                f"glass {glass.name!r} {field}: expected text as written, got {value!r}"
            )
    if (
        not isinstance(thresholds.acid_poor_from, int)
        or thresholds.acid_poor_from not in (_SCALE_INFO[Scale.ACID][2])
    ):
        raise InputError(
            "thresholds acid_poor_from: expected an ISO 8424 class, "
            f"got {thresholds.acid_poor_from!r}"
        )
    for field in ("alkali_poor_from", "phosphate_poor_from"):
        value = getattr(thresholds, field)
        if isinstance(value, bool) or value not in (1, 2, 3, 4):
            raise InputError(f"thresholds {field}: expected a class 1-4, got {value!r}")
    if thresholds.surface_change_from not in SURFACE_CHANGE:
        raise InputError(
            f"thresholds surface_change_from: expected 0-4, got {thresholds.surface_change_from!r}"
        )
    for field in ("alpha_care_from", "alpha_high_from"):
        value = getattr(thresholds, field)
        if (
            isinstance(value, bool)
            or not isinstance(value, int | float)
            or not math.isfinite(value)
        ):
            raise InputError(f"thresholds {field}: expected a number, got {value!r}")
    if thresholds.alpha_care_from > thresholds.alpha_high_from:
        raise InputError("thresholds: alpha_care_from must not exceed alpha_high_from")
    alpha = glass.alpha_1e6_per_k
    if alpha is None:
        return None
    if isinstance(alpha, bool) or not isinstance(alpha, int | float) or not math.isfinite(alpha):
        raise InputError(f"glass {glass.name!r} alpha_1e6_per_k: expected a number, got {alpha!r}")
    if not -5.0 <= alpha <= 100.0:
        raise InputError(
            f"glass {glass.name!r} alpha_1e6_per_k: {alpha:g} is not a plausible expansion in "
            "10^-6/K (expected -5 to 100; check the unit)"
        )
    return float(alpha)


def glass_cautions(
    glass: GlassChemistry, thresholds: CautionThresholds | None = None
) -> GlassCautions:
    """Processing cautions and the test kinds likely to attack the bare glass.

    Poor acid resistance, or a visible surface-change digit, marks the glass as sensitive to
    water and humidity (humidity, salt fog, salt and water immersion); poor alkali or
    phosphate resistance limits cleaning with alkaline or phosphate detergents; all three limit
    ultrasonic cleaning. Expansion at or above `alpha_care_from` puts thermal shock at risk,
    at or above `alpha_high_from` also slow temperature cycles. All of it is common practice
    with the lab's thresholds; where a class is missing or not understood the flag says so
    instead of guessing.
    """
    limits = thresholds or CautionThresholds()
    alpha = _check_inputs(glass, limits)
    acid, alkali, phosphate = (
        decode_class(scale, written, limits)
        for scale, written in (
            (Scale.ACID, glass.acid_class),
            (Scale.ALKALI, glass.alkali_class),
            (Scale.PHOSPHATE, glass.phosphate_class),
        )
    )
    classes = (acid, alkali, phosphate)
    cautions: list[Caution] = []

    for item in classes:
        if item.written is not None and not item.understood:
            cautions.append(Caution("classes", "note", item.message, BASIS_DECODING))

    visible = [
        c
        for c in classes
        if c.surface_change_digit is not None
        and c.surface_change_digit >= limits.surface_change_from
    ]
    poor = [c for c in classes if c.poor]
    chemically_weak = bool(poor or visible)

    if chemically_weak:
        reasons = "; ".join(
            [f"{c.label} {c.written}" for c in poor]
            + [f"{c.label} {c.written} shows surface change" for c in visible if c not in poor]
        )
        cautions.append(
            Caution(
                "ultrasonic cleaning",
                "caution",
                f"limit ultrasonic cleaning and prefer manual cleaning ({reasons}); keep baths "
                "short and mild, rinse and dry at once",
                BASIS_COMMON_PRACTICE,
            )
        )
    if alkali.poor:
        cautions.append(
            Caution(
                "cleaning agents",
                "caution",
                f"avoid alkaline detergents ({alkali.label} {alkali.written})",
                BASIS_COMMON_PRACTICE,
            )
        )
    if phosphate.poor:
        cautions.append(
            Caution(
                "cleaning agents",
                "caution",
                f"avoid phosphate-containing detergents ({phosphate.label} {phosphate.written})",
                BASIS_COMMON_PRACTICE,
            )
        )
    if acid.poor or visible:
        cautions.append(
            Caution(
                "staining",
                "caution",
                "staining risk in humidity: store dry, handle with gloves, do not let water "
                "drops dry on the surface; humidity, salt and water tests may attack the bare "
                "glass where the coating leaves it exposed (edges, pinholes, witness backs)",
                BASIS_COMMON_PRACTICE,
            )
        )
    for label, text in (
        ("climate", glass.supplier_climate_class),
        ("stain", glass.supplier_stain_class),
    ):
        if text is not None and text.strip():
            cautions.append(
                Caution(
                    "supplier classes",
                    "note",
                    f"supplier's {label} class {text.strip()!r}: read it against the supplier's "
                    "catalogue key (scales differ between suppliers); a poor rating adds to the "
                    "humidity and staining cautions",
                    BASIS_COMMON_PRACTICE,
                )
            )

    if alpha is None:
        thermal_level = "unknown"
        cautions.append(
            Caution(
                "heating and cooling",
                "note",
                "thermal expansion not given: thermal shock risk cannot be judged",
                BASIS_COMMON_PRACTICE,
            )
        )
    else:
        thermal_level = (
            "high"
            if alpha >= limits.alpha_high_from
            else "care"
            if alpha >= limits.alpha_care_from
            else "low"
        )
        text = {
            "high": "heat and cool slowly in hot coating processes and avoid rapid transfers; "
            "thermal shock risk is high",
            "care": "heat and cool with care in hot coating processes; rapid temperature "
            "changes risk thermal shock",
            "low": "thermal shock risk is low; the usual heating and cooling care still applies",
        }[thermal_level]
        cautions.append(
            Caution(
                "heating and cooling",
                "note" if thermal_level == "low" else "caution",
                f"expansion {alpha:g} x 10^-6/K: {text}",
                BASIS_COMMON_PRACTICE,
            )
        )

    test_kinds = _test_kind_flags(acid, visible, poor, alpha, thermal_level, limits)
    return GlassCautions(
        glass_name=glass.name,
        classes=classes,
        alpha_1e6_per_k=alpha,
        thermal_level=thermal_level,
        cautions=tuple(cautions),
        test_kinds=test_kinds,
        supplier_climate_class=glass.supplier_climate_class,
        supplier_stain_class=glass.supplier_stain_class,
        thresholds=limits.describe(),
        basis=BASIS_COMMON_PRACTICE,
    )


def _test_kind_flags(
    acid: ResistanceClass,
    visible: list[ResistanceClass],
    poor: list[ResistanceClass],
    alpha: float | None,
    thermal_level: str,
    limits: CautionThresholds,
) -> tuple[TestKindFlag, ...]:
    flags: list[TestKindFlag] = []
    if acid.poor or visible:
        causes = [f"{acid.label} {acid.written}"] if acid.poor else []
        causes += [
            f"{c.label} {c.written} (surface change)"
            for c in visible
            if not (c is acid and acid.poor)
        ]
        wet: tuple[bool | None, str] = (True, "water attacks the glass: " + "; ".join(causes))
    elif acid.understood:
        wet = (False, f"{acid.label} {acid.written} is not poor by the lab's threshold")
    else:
        wet = (None, "acid class not given or not understood; read the supplier's climate class")
    for kind in _WET_KINDS:
        flags.append(TestKindFlag(kind, *wet))
    flags.append(
        TestKindFlag(
            "solvent_solubility",
            False,
            "organic solvents do not attack glass; dry promptly where staining is a risk"
            if poor or visible
            else "organic solvents do not attack glass",
        )
    )
    if alpha is None:
        flags.append(TestKindFlag("temperature", None, "thermal expansion not given"))
        flags.append(TestKindFlag("thermal_shock", None, "thermal expansion not given"))
    else:
        flags.append(
            TestKindFlag(
                "temperature",
                thermal_level == "high",
                f"expansion {alpha:g} x 10^-6/K against the lab's high threshold "
                f"{limits.alpha_high_from:g}",
            )
        )
        flags.append(
            TestKindFlag(
                "thermal_shock",
                thermal_level in ("care", "high"),
                f"expansion {alpha:g} x 10^-6/K against the lab's care threshold "
                f"{limits.alpha_care_from:g}",
            )
        )
    return tuple(flags)
