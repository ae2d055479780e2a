"""Spec check: what is missing or risky in a coating spec before quoting or testing.

Each finding carries the question to ask the customer in plain words. Three groups:

- essentials: glass, wavelength range, R or T requirement with limits, angle-of-incidence
  range, polarization when the angle is large, clear aperture, sides coated;
- supplements: durability callouts, laser damage testing, witness requirements,
  documentation, marking, packaging;
- feasibility, from shared/reference/test-methods.md "Facts of the trade" (common practice):
  reflectance is not measurable below about 6°; transmission of a part coated on one side
  belongs in reflection; very high or very low reflectance needs special measurement; broad
  bands and wide angle ranges cost performance; a coating cannot beat the substrate's internal
  transmittance. The angle shift of the band edges uses lambda(theta) = lambda0 sqrt(1 -
  (n0 sin theta / n_eff)^2) (computations.md), with n_eff shown as an assumption.

Where a number decides (the angle above which polarization matters, what counts as very high
reflectance, a broad band), it is one of the lab's common-practice settings
(`SpecCheckSettings`) and is shown in the result's conventions.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields

from durability.errors import InputError
from durability.optics import AngleRangeShift, shift_over_angle_range, surface_reflectance

REQUIREMENT_KINDS = ("R", "T")
LIMIT_BASES = ("average", "absolute")
POLARIZATIONS = ("s", "p", "unpolarized", "s and p")
LASER_DAMAGE = ("certification", "threshold", "none", "unknown")

MISSING = "missing"
RISK = "risk"
NOTE = "note"

ESSENTIAL = "essential"
SUPPLEMENT = "supplement"
FEASIBILITY = "feasibility"


@dataclass(frozen=True)
class CoatingSpec:
    """A customer's requirement set for one coating, as plain values (None = not stated).

    Limits are in percent (0-100). Free-text supplements (witness requirement,
    documentation, marking, packaging) count as answered whenever any text is given,
    including "none".
    """

    glass_name: str | None = None
    #: Whether the glass is in the lab's glass table (None: not looked up).
    glass_known: bool | None = None
    wavelength_min_nm: float | None = None
    wavelength_max_nm: float | None = None
    requirement_kind: str | None = None  # "R" or "T"
    limit_min_percent: float | None = None
    limit_max_percent: float | None = None
    limit_basis: str | None = None  # "average" or "absolute"
    aoi_min_deg: float | None = None
    aoi_max_deg: float | None = None
    polarization: str | None = None  # "s", "p", "unpolarized", "s and p"
    clear_aperture: str | None = None
    sides_coated: int | None = None  # 1 or 2
    callout_text_present: bool | None = None
    laser_damage: str = "unknown"  # "certification", "threshold", "none", "unknown"
    laser_damage_detail: str | None = None
    witness_requirement: str | None = None
    documentation: str | None = None
    marking: str | None = None
    packaging: str | None = None
    design_n_eff: float | None = None
    #: Substrate internal transmittance over the band, percent (bulk only, no surfaces).
    substrate_internal_transmittance_percent: float | None = None
    substrate_index: float | None = None
    #: An edge or band wavelength (at normal incidence) whose angle shift to show.
    feature_wavelength_nm: float | None = None


@dataclass(frozen=True)
class SpecCheckSettings:
    """The lab's common-practice settings for the spec check (no standard sets them)."""

    #: Above this angle, s and p differ enough that polarization must be stated.
    polarization_needed_above_deg: float = 15.0
    #: Lowest usual measuring angle for reflectance (test-methods.md: about 6°).
    lowest_measurable_angle_deg: float = 6.0
    #: Reflectance at or above this (percent) needs special measurement.
    very_high_reflectance_percent: float = 99.5
    #: Reflectance at or below this (percent) needs special measurement.
    very_low_reflectance_percent: float = 0.2
    #: Transmittance at or below this (percent) needs special measurement (optical density).
    very_low_transmittance_percent: float = 0.1
    #: A band with longest/shortest wavelength at or above this ratio counts as broad.
    broad_band_ratio: float = 1.5
    #: An angle range at least this wide (degrees) counts as wide.
    wide_angle_range_deg: float = 20.0

    def describe(self) -> list[str]:
        """The settings as convention lines for the result."""
        return [
            f"polarization asked for above {self.polarization_needed_above_deg:g}° "
            "(common practice: 0-15° differences are usually negligible)",
            f"reflectance measurable from about {self.lowest_measurable_angle_deg:g}° "
            "(common practice)",
            f"special measurement for R >= {self.very_high_reflectance_percent:g} %, "
            f"R <= {self.very_low_reflectance_percent:g} %, "
            f"T <= {self.very_low_transmittance_percent:g} % (lab's common-practice thresholds)",
            f"broad band from a wavelength ratio of {self.broad_band_ratio:g}; wide angle range "
            f"from {self.wide_angle_range_deg:g}° (lab's common-practice thresholds)",
        ]


@dataclass(frozen=True)
class Finding:
    """One missing or risky item; `question` is None when there is nothing to ask."""

    code: str
    severity: str  # "missing", "risk" or "note"
    field: str
    message: str
    question: str | None
    group: str  # "essential", "supplement" or "feasibility"


@dataclass(frozen=True)
class SpecCheckResult:
    """The spec check: findings in order (essentials, supplements, feasibility)."""

    findings: tuple[Finding, ...]
    angle_shifts: tuple[AngleRangeShift, ...]
    n_eff: float | None
    n_eff_source: str | None
    conventions: tuple[str, ...]

    @property
    def missing(self) -> tuple[Finding, ...]:
        """Findings that must be answered before quoting."""
        return tuple(f for f in self.findings if f.severity == MISSING)

    @property
    def risks(self) -> tuple[Finding, ...]:
        """Findings that are stated but risky."""
        return tuple(f for f in self.findings if f.severity == RISK)

    @property
    def questions(self) -> tuple[str, ...]:
        """The questions to ask the customer, in order, without repeats."""
        seen: dict[str, None] = {}
        for finding in self.findings:
            if finding.question:
                seen.setdefault(finding.question, None)
        return tuple(seen)

    def codes(self) -> tuple[str, ...]:
        """The finding codes in order."""
        return tuple(f.code for f in self.findings)


# --- input checks ----------------------------------------------------------------------------


def _number(spec: CoatingSpec, name: str) -> float | None:
    value = getattr(spec, name)
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise InputError(f"coating spec {name}: expected a number, got {value!r}")
    return float(value)


def _choice(spec: CoatingSpec, name: str, allowed: tuple[str, ...]) -> str | None:
    value = getattr(spec, name)
    if value is None:
        return None
    if value not in allowed:
        raise InputError(
            f"coating spec {name}: expected one of {', '.join(allowed)}, got {value!r}"
        )
    return str(value)


def _text(spec: CoatingSpec, name: str) -> str | None:
    value = getattr(spec, name)
    if value is None:
        return None
    if not isinstance(value, str):
        raise InputError(f"coating spec {name}: expected text, got {value!r}")
    return value.strip() or None


@dataclass(frozen=True)
class _Values:
    glass: str | None
    lam_min: float | None
    lam_max: float | None
    kind: str | None
    low: float | None
    high: float | None
    basis: str | None
    aoi_min: float | None
    aoi_max: float | None
    polarization: str | None
    sides: int | None
    internal_t: float | None
    n_sub: float | None
    feature: float | None


def _read(spec: CoatingSpec) -> _Values:
    if not isinstance(spec, CoatingSpec):
        raise InputError(f"coating spec: expected CoatingSpec, got {spec!r}")
    lam_min, lam_max = _number(spec, "wavelength_min_nm"), _number(spec, "wavelength_max_nm")
    for name, value in (("wavelength_min_nm", lam_min), ("wavelength_max_nm", lam_max)):
        if value is not None and value <= 0:
            raise InputError(f"coating spec {name}: must be above 0 nm, got {value:g}")
    if lam_min is not None and lam_max is not None and lam_min > lam_max:
        raise InputError(
            f"coating spec wavelength_min_nm ({lam_min:g}) is above wavelength_max_nm ({lam_max:g})"
        )
    low, high = _number(spec, "limit_min_percent"), _number(spec, "limit_max_percent")
    for name, value in (("limit_min_percent", low), ("limit_max_percent", high)):
        if value is not None and not 0 <= value <= 100:
            raise InputError(f"coating spec {name}: must be 0-100 %, got {value:g}")
    if low is not None and high is not None and low > high:
        raise InputError(
            f"coating spec limit_min_percent ({low:g}) is above limit_max_percent ({high:g})"
        )
    aoi_min, aoi_max = _number(spec, "aoi_min_deg"), _number(spec, "aoi_max_deg")
    for name, value in (("aoi_min_deg", aoi_min), ("aoi_max_deg", aoi_max)):
        if value is not None and not 0 <= value < 90:
            raise InputError(
                f"coating spec {name}: must be at least 0° and below 90°, got {value:g}"
            )
    if aoi_min is not None and aoi_max is not None and aoi_min > aoi_max:
        raise InputError(
            f"coating spec aoi_min_deg ({aoi_min:g}) is above aoi_max_deg ({aoi_max:g})"
        )
    sides = spec.sides_coated
    if sides is not None and (isinstance(sides, bool) or sides not in (1, 2)):
        raise InputError(f"coating spec sides_coated: expected 1 or 2, got {sides!r}")
    internal = _number(spec, "substrate_internal_transmittance_percent")
    if internal is not None and not 0 < internal <= 100:
        raise InputError(
            "coating spec substrate_internal_transmittance_percent: must be above 0 and at most "
            f"100 %, got {internal:g}"
        )
    n_sub = _number(spec, "substrate_index")
    if n_sub is not None and n_sub < 1:
        raise InputError(f"coating spec substrate_index: must be at least 1, got {n_sub:g}")
    feature = _number(spec, "feature_wavelength_nm")
    if feature is not None and feature <= 0:
        raise InputError(f"coating spec feature_wavelength_nm: must be above 0, got {feature:g}")
    _number(spec, "design_n_eff")
    for name in ("glass_known", "callout_text_present"):
        value = getattr(spec, name)
        if value is not None and not isinstance(value, bool):
            raise InputError(f"coating spec {name}: expected yes/no (bool), got {value!r}")
    for name in ("clear_aperture", "witness_requirement", "documentation", "marking"):
        _text(spec, name)
    _text(spec, "packaging")
    _text(spec, "laser_damage_detail")
    if spec.laser_damage not in LASER_DAMAGE:
        raise InputError(
            f"coating spec laser_damage: expected one of {', '.join(LASER_DAMAGE)}, "
            f"got {spec.laser_damage!r}"
        )
    return _Values(
        glass=_text(spec, "glass_name"),
        lam_min=lam_min,
        lam_max=lam_max,
        kind=_choice(spec, "requirement_kind", REQUIREMENT_KINDS),
        low=low,
        high=high,
        basis=_choice(spec, "limit_basis", LIMIT_BASES),
        aoi_min=aoi_min,
        aoi_max=aoi_max,
        polarization=_choice(spec, "polarization", POLARIZATIONS),
        sides=sides,
        internal_t=internal,
        n_sub=n_sub,
        feature=feature,
    )


def _check_settings(settings: SpecCheckSettings) -> None:
    for item in fields(settings):
        value = getattr(settings, item.name)
        if (
            isinstance(value, bool)
            or not isinstance(value, int | float)
            or not math.isfinite(value)
        ):
            raise InputError(f"spec check settings {item.name}: expected a number, got {value!r}")
        if value < 0:
            raise InputError(f"spec check settings {item.name}: must not be negative")


# --- the check -------------------------------------------------------------------------------


def check_spec(
    spec: CoatingSpec,
    *,
    n_eff: float | None = None,
    settings: SpecCheckSettings | None = None,
) -> SpecCheckResult:
    """List what is missing or risky in a coating spec, with the questions to ask.

    `n_eff` is the effective index the engineer enters for the angle-shift estimate; without
    it the design's `spec.design_n_eff` is used; without either, no shift is estimated and a
    note asks the engineer for one.
    """
    limits = settings or SpecCheckSettings()
    _check_settings(limits)
    v = _read(spec)
    findings: list[Finding] = []

    def add(
        code: str, severity: str, field: str, message: str, question: str | None, group: str
    ) -> None:
        findings.append(Finding(code, severity, field, message, question, group))

    # --- essentials
    if v.glass is None:
        add(
            "GLASS_MISSING",
            MISSING,
            "glass_name",
            "substrate glass not stated",
            "Which glass is the part made of (supplier and glass name)?",
            ESSENTIAL,
        )
    elif spec.glass_known is False:
        add(
            "GLASS_NOT_IN_TABLE",
            RISK,
            "glass_name",
            f"glass {v.glass!r} is not in our glass table: no index, expansion or resistance data",
            f"Can you send the supplier's data sheet for {v.glass}?",
            ESSENTIAL,
        )
    if v.lam_min is None or v.lam_max is None:
        add(
            "BAND_MISSING",
            MISSING,
            "wavelength_min_nm/wavelength_max_nm",
            "wavelength range not stated (or only one end)",
            "Over which wavelengths must the requirement hold (from ... to ... nm)?",
            ESSENTIAL,
        )
    if v.kind is None:
        add(
            "REQUIREMENT_MISSING",
            MISSING,
            "requirement_kind",
            "no reflectance or transmittance requirement",
            "What must the coating achieve: a reflectance (R) or a transmittance (T) limit?",
            ESSENTIAL,
        )
    if v.low is None and v.high is None:
        add(
            "LIMITS_MISSING",
            MISSING,
            "limit_min_percent/limit_max_percent",
            "no numeric limits for the requirement",
            "What are the limits, in percent (for example R below 0.5 %)?",
            ESSENTIAL,
        )
    single_wavelength = v.lam_min is not None and v.lam_min == v.lam_max
    if v.basis is None and not single_wavelength:
        add(
            "LIMIT_BASIS_MISSING",
            MISSING,
            "limit_basis",
            "not stated whether the limits hold as a band average or at every wavelength",
            "Must the limit hold at every wavelength of the band, or as the band average?",
            ESSENTIAL,
        )
    if v.aoi_min is None or v.aoi_max is None:
        add(
            "AOI_MISSING",
            MISSING,
            "aoi_min_deg/aoi_max_deg",
            "angle of incidence range not stated",
            "At which angles of incidence is the part used (from ... to ... degrees)?",
            ESSENTIAL,
        )
    threshold = limits.polarization_needed_above_deg
    if v.aoi_max is not None and v.aoi_max > threshold and v.polarization is None:
        add(
            "POLARIZATION_MISSING",
            MISSING,
            "polarization",
            f"polarization not stated for angles up to {v.aoi_max:g}° (above {threshold:g}° "
            "s and p differ noticeably; common practice)",
            "Which polarization is used: s, p, unpolarized, or must both s and p meet the limits?",
            ESSENTIAL,
        )
    elif v.aoi_max is not None and v.aoi_max > threshold and v.polarization == "unpolarized":
        add(
            "POLARIZATION_AVERAGE",
            NOTE,
            "polarization",
            f"up to {v.aoi_max:g}° s and p split; unpolarized means the mean of s and p meets "
            "the limits",
            "May we verify on the mean of s and p (unpolarized light)?",
            ESSENTIAL,
        )
    if _text(spec, "clear_aperture") is None:
        add(
            "CLEAR_APERTURE_MISSING",
            MISSING,
            "clear_aperture",
            "clear aperture not stated",
            "What is the clear aperture (diameter or size, on each coated side)?",
            ESSENTIAL,
        )
    if v.sides is None:
        add(
            "SIDES_MISSING",
            MISSING,
            "sides_coated",
            "not stated whether one or both sides are coated",
            "Is the coating on one side or on both sides?",
            ESSENTIAL,
        )

    # --- supplements
    if spec.callout_text_present is not True:
        add(
            "CALLOUTS_MISSING",
            MISSING,
            "callout_text_present",
            "no durability callout (adhesion, humidity, abrasion, ...)",
            "Which durability tests must the coating pass (for example a MIL or ISO callout "
            "on the drawing), or none?",
            SUPPLEMENT,
        )
    if spec.laser_damage == "unknown":
        add(
            "LASER_DAMAGE_UNKNOWN",
            MISSING,
            "laser_damage",
            "not stated whether laser damage testing is needed",
            "Is laser damage testing needed: a certification test at a stated level, or a "
            "threshold test?",
            SUPPLEMENT,
        )
    elif spec.laser_damage in ("certification", "threshold"):
        if _text(spec, "laser_damage_detail") is None:
            level = "the fluence to certify, " if spec.laser_damage == "certification" else ""
            add(
                "LASER_DAMAGE_DETAIL_MISSING",
                MISSING,
                "laser_damage_detail",
                f"laser damage {spec.laser_damage} test without its conditions",
                f"For the laser damage {spec.laser_damage} test, what are {level}the "
                "wavelength, pulse length, repetition rate and beam size?",
                SUPPLEMENT,
            )
        add(
            "LASER_DAMAGE_OUTSIDE",
            NOTE,
            "laser_damage",
            "laser damage testing is usually an outside service: allow for its lead time and "
            "cost (common practice)",
            None,
            SUPPLEMENT,
        )
    for name, what, question in (
        (
            "witness_requirement",
            "witness requirement",
            "Do you need witness pieces (how many, which glass, returned with the parts)?",
        ),
        (
            "documentation",
            "documentation",
            "Which documents do you need with the parts (certificate of conformance, test "
            "report, measured curves)?",
        ),
        ("marking", "marking", "How must the parts or their packages be marked?"),
        ("packaging", "packaging", "Do you have packaging requirements?"),
    ):
        if _text(spec, name) is None:
            add(
                f"{name.upper()}_MISSING", MISSING, name, f"{what} not stated", question, SUPPLEMENT
            )

    # --- feasibility
    findings.extend(_feasibility(spec, v, limits))
    shifts, n_eff_value, n_eff_source, shift_findings = _angle_shift(spec, v, n_eff)
    findings.extend(shift_findings)

    conventions = [
        *limits.describe(),
        "limits in percent; a requirement's basis (average or absolute) as the customer states it",
    ]
    return SpecCheckResult(
        findings=tuple(findings),
        angle_shifts=tuple(shifts),
        n_eff=n_eff_value,
        n_eff_source=n_eff_source,
        conventions=tuple(conventions),
    )


def _feasibility(spec: CoatingSpec, v: _Values, limits: SpecCheckSettings) -> list[Finding]:
    out: list[Finding] = []

    def add(code: str, severity: str, field: str, message: str, question: str | None) -> None:
        out.append(Finding(code, severity, field, message, question, FEASIBILITY))

    lowest = limits.lowest_measurable_angle_deg
    if v.kind == "R" and v.aoi_max is not None and v.aoi_max < lowest:
        add(
            "R_ANGLE_NOT_MEASURABLE",
            RISK,
            "aoi_max_deg",
            f"reflectance cannot be measured below about {lowest:g}°; between 0 and 15° the "
            "difference is usually negligible (common practice)",
            f"May we verify the reflectance at {lowest:g}°, the lowest usual measuring angle?",
        )
    elif v.kind == "R" and v.aoi_min is not None and v.aoi_min < lowest:
        add(
            "R_ANGLE_PARTLY_MEASURABLE",
            NOTE,
            "aoi_min_deg",
            f"reflectance below about {lowest:g}° cannot be measured; the low end of the range "
            f"will be verified at {lowest:g}° (common practice)",
            None,
        )

    if v.kind == "T" and v.sides == 1:
        message = (
            "a part coated on one side cannot show high transmission on a measurement: the "
            "uncoated side reflects (common practice)"
        )
        if v.n_sub is not None:
            back = surface_reflectance(v.n_sub)
            t_int = (v.internal_t if v.internal_t is not None else 100.0) / 100.0
            ceiling = 100.0 * t_int * (1.0 - back)
            message += (
                f"; with a perfect coating the part transmits at most {ceiling:.2f} % "
                f"(uncoated back surface R = {100 * back:.2f} % for n = {v.n_sub:g}"
                + (", internal transmittance 100 % assumed" if v.internal_t is None else "")
                + ")"
            )
            if v.low is not None and v.low > ceiling:
                message += f": the required minimum {v.low:g} % cannot be shown"
        add(
            "T_ON_ONE_SIDE",
            RISK,
            "requirement_kind",
            message,
            "Can the requirement be given in reflection for the coated side instead?",
        )

    if v.kind == "R":
        if v.low is not None and v.low >= limits.very_high_reflectance_percent:
            add(
                "R_VERY_HIGH",
                RISK,
                "limit_min_percent",
                f"reflectance of at least {v.low:g} % needs a special measurement "
                "(common practice)",
                "How do you verify this reflectance, and may we use an outside laboratory?",
            )
        if v.high is not None and v.high <= limits.very_low_reflectance_percent:
            add(
                "R_VERY_LOW",
                RISK,
                "limit_max_percent",
                f"reflectance of at most {v.high:g} % needs a special measurement "
                "(common practice)",
                "How do you verify this reflectance, and is a witness measurement acceptable?",
            )
    if v.kind == "T" and v.high is not None and v.high <= limits.very_low_transmittance_percent:
        add(
            "T_VERY_LOW",
            RISK,
            "limit_max_percent",
            f"transmittance of at most {v.high:g} % (very high reflectance or blocking) needs a "
            "special measurement (common practice)",
            "How do you verify this blocking level (optical density)?",
        )

    if (
        v.lam_min is not None
        and v.lam_max is not None
        and v.lam_max / v.lam_min >= limits.broad_band_ratio
    ):
        add(
            "BROAD_BAND",
            RISK,
            "wavelength_min_nm/wavelength_max_nm",
            f"broad band {v.lam_min:g}-{v.lam_max:g} nm: broad bands cost performance and "
            "longer processes (common practice)",
            "Is the whole band needed, or can it be narrowed?",
        )
    if (
        v.aoi_min is not None
        and v.aoi_max is not None
        and v.aoi_max - v.aoi_min >= limits.wide_angle_range_deg
    ):
        add(
            "WIDE_ANGLE_RANGE",
            RISK,
            "aoi_min_deg/aoi_max_deg",
            f"wide angle range {v.aoi_min:g}-{v.aoi_max:g}°: wide ranges cost performance "
            "(common practice)",
            "Is the whole angle range needed at full performance?",
        )

    if v.kind == "T":
        if v.internal_t is None:
            add(
                "INTERNAL_T_UNKNOWN",
                NOTE,
                "substrate_internal_transmittance_percent",
                "substrate internal transmittance not entered: a coating cannot raise "
                "transmission above it (common practice)",
                "What is the part's centre thickness?",
            )
        elif v.low is not None and v.low > v.internal_t:
            add(
                "T_ABOVE_SUBSTRATE",
                RISK,
                "limit_min_percent",
                f"required minimum T {v.low:g} % is above the substrate's internal "
                f"transmittance {v.internal_t:g} %: no coating can reach it (common practice)",
                "Can the transmittance limit be lowered, or the glass or thickness changed?",
            )
    return out


def _angle_shift(
    spec: CoatingSpec, v: _Values, n_eff: float | None
) -> tuple[list[AngleRangeShift], float | None, str | None, list[Finding]]:
    if v.aoi_min is None or v.aoi_max is None:
        return [], None, None, []
    features = [v.feature] if v.feature is not None else []
    if not features and v.lam_min is not None and v.lam_max is not None:
        features = sorted({v.lam_min, v.lam_max})
    if not features:
        return [], None, None, []
    if n_eff is not None:
        value, source = n_eff, "entered by the engineer"
    elif spec.design_n_eff is not None:
        value, source = spec.design_n_eff, "from the design"
    else:
        note = Finding(
            "SHIFT_NEEDS_N_EFF",
            NOTE,
            "design_n_eff",
            "enter an effective index n_eff (from the design, or an estimate) to see how far the "
            "band edges move over the angle range",
            None,
            FEASIBILITY,
        )
        return [], None, None, [note]
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"n_eff: expected a number, got {value!r}")
    shifts = [
        shift_over_angle_range(lam, v.aoi_min, v.aoi_max, value, n_eff_source=source)
        for lam in features
    ]
    parts = ", ".join(
        f"{s.wavelength0_nm:g} nm -> {s.wavelength_at_min_nm:.1f} to "
        f"{s.wavelength_at_max_nm:.1f} nm ({s.shift_nm:+.1f} nm)"
        for s in shifts
    )
    message = (
        f"over {v.aoi_min:g}-{v.aoi_max:g}° features move to shorter wavelengths: {parts}; "
        f"{shifts[0].assumption}; features taken at their normal-incidence wavelengths"
    )
    if shifts[0].caution:
        message += f"; {shifts[0].caution}"
    finding = Finding("ANGLE_SHIFT", NOTE, "aoi_min_deg/aoi_max_deg", message, None, FEASIBILITY)
    return shifts, float(value), source, [finding]
