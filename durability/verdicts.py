"""A step's verdict from its acceptance rule: pass, fail or invalid, with the reason in words.

Call :func:`step_verdict` with the method's acceptance rule (a JSON dict, see below), what was
recorded for the step (:class:`StepOutcome`) and the facts that decide whether the test counts at
all (:class:`ValidityFacts`). It returns a :class:`Verdict`.

Order of decision
    1. The rule is checked (:func:`check_acceptance_rule`); an unknown rule or a malformed one
       raises InputError naming it.
    2. Validity: when the exposure does not count, an instrument was out of calibration on the
       test date (an instrument is valid THROUGH its calibration due date, not after) or a
       consumable was used after its expiry date (usable through that date), the verdict is
       "invalid": the test itself does not count, which is not a coating failure.
    3. The rule is applied to the outcome; missing inputs raise InputError naming the field.

Acceptance rules (exactly these keys; the method catalogue uses them)
    ``{"rule": "no_coating_removed"}``
        Tape adhesion. Needs ``StepOutcome.coating_removed`` and, when True,
        ``removal_location``.
    ``{"rule": "no_listed_defects", "defects": ["peeling", ...]}``
        After an exposure. Needs ``inspection`` (and ``initial_inspection`` when one was made).
        Fails when a listed defect type shows that the initial inspection did not show, or a listed
        type's grade worsened; an explicit "no defects observed" passes.
    ``{"rule": "crosshatch_max_class", "iso2409_class": 1}``
        Needs ``crosshatch_class`` (ISO 2409) or ``detached_share_pct`` (graded with the boundary
        convention); when both are given they must agree.
    ``{"rule": "crosshatch_max_share", "max_share_detached_pct": 5.0}``
        Needs ``detached_share_pct``; a class alone decides only when its whole share range lies
        on one side of the limit.
    ``{"rule": "scratch_dig", "spec": "60-40"}``
        Needs ``scratch_dig`` (:class:`~durability.surface.scratch_dig.ScratchDigObservation`).
    ``{"rule": "iso10110_7", "spec": "5/3x0.16"}``
        Needs ``surface`` (:class:`~durability.surface.iso10110.Iso10110Observation`).
    ``{"rule": "spectral_limits", "limits": [{"band_nm": [400, 700], "quantity": "R",
    "statistic": "average", "max": 0.5, "min": null, "unit": "%"}, ...]}``
        Needs ``spectral``: one :class:`SpectralStatistic` per limit (same band, quantity and
        statistic). Numeric limits follow the :class:`DecisionRule` (simple acceptance by
        default; guarded acceptance on request).
    ``{"rule": "recorded_only"}``
        No criterion: the verdict "pass" means "recorded", and the reason says so.
    ``{"rule": "engineer_judgement", "text": "..."}``
        Needs ``judgement``: the recorded pass or fail, who decided and their stated reason.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from datetime import date, datetime
from typing import Literal

from durability.errors import InputError
from durability.grading import (
    COMPARISON_CONVENTION,
    CORRESPONDENCE_NOTE,
    BoundaryConvention,
    DefectType,
    Inspection,
    compare_inspections,
    crosshatch_grade,
    defect_types,
    iso_class_share_range,
    max_share_pct,
)
from durability.surface.iso10110 import (
    Iso10110Observation,
    Iso10110Settings,
    evaluate_iso10110_7,
)
from durability.surface.notation import parse_iso10110_7, parse_scratch_dig
from durability.surface.scratch_dig import (
    ScratchDigObservation,
    ScratchDigSettings,
    evaluate_scratch_dig,
)

__all__ = [
    "RULES",
    "DefectType",
    "Inspection",
    "Iso10110Observation",
    "ScratchDigObservation",
    "ConsumableUse",
    "DecisionRule",
    "InstrumentUse",
    "Judgement",
    "SpectralStatistic",
    "StepOutcome",
    "ValidityFacts",
    "Verdict",
    "check_acceptance_rule",
    "step_verdict",
    "validity_problems",
]

Outcome = Literal["pass", "fail", "invalid"]
_TOLERANCE = 1e-9

VALIDITY_CLAUSE = "validity of the test (exposure, instrument calibration, consumables)"
CALIBRATION_CONVENTION = (
    "an instrument is valid through its calibration due date and out of calibration from the "
    "day after"
)
EXPIRY_CONVENTION = "a consumable is usable through its expiry date and expired from the day after"


# ---------------------------------------------------------------- inputs and output


@dataclass(frozen=True)
class Verdict:
    """A step's verdict: ``outcome`` is "pass", "fail" or "invalid" (the test does not count)."""

    outcome: Outcome
    reason: str
    clause: str
    conventions: tuple[str, ...] = ()

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict."""
        return {
            "outcome": self.outcome,
            "reason": self.reason,
            "clause": self.clause,
            "conventions": list(self.conventions),
        }


@dataclass(frozen=True)
class InstrumentUse:
    """An instrument used for the step and its calibration due date (valid through that date)."""

    name: str
    calibration_due: date


@dataclass(frozen=True)
class ConsumableUse:
    """A consumable used for the step: name, supplier's lot, expiry date (None: no expiry)."""

    name: str
    lot: str = ""
    expiry: date | None = None


@dataclass(frozen=True)
class ValidityFacts:
    """What decides whether the test counts at all.

    ``exposure_counts``: None when the step had no exposure, False when the exposure verification
    says it does not count (``exposure_note`` says why), True when it counts.
    """

    test_date: date
    exposure_counts: bool | None = None
    exposure_note: str = ""
    instruments: tuple[InstrumentUse, ...] = ()
    consumables: tuple[ConsumableUse, ...] = ()


@dataclass(frozen=True)
class SpectralStatistic:
    """A measured statistic of a spectrum over a band, in % (R or T)."""

    band_nm: tuple[float, float]
    quantity: str
    statistic: str
    value: float
    unit: str = "%"
    expanded_uncertainty: float | None = None


@dataclass(frozen=True)
class Judgement:
    """An engineer's recorded decision: "pass" or "fail", by whom, and their stated reason."""

    outcome: str
    person: str
    reason: str


@dataclass(frozen=True)
class DecisionRule:
    """How a measured value is compared with a numeric limit.

    ``"simple"``: simple acceptance, the value itself against the limit (equal passes).
    ``"guarded"``: guarded acceptance, the limit is tightened by a guard band w before comparing
    (a maximum becomes max - w, a minimum min + w); w is ``guard_band`` when given, otherwise the
    measurement's expanded uncertainty. These are the simple and guarded acceptance rules of
    ILAC-G8:2019 (recalled from memory).
    """

    kind: str = "simple"
    guard_band: float | None = None

    def __post_init__(self) -> None:
        if self.kind not in ("simple", "guarded"):
            raise InputError(f"decision rule {self.kind!r} is unknown (expected simple or guarded)")
        if self.guard_band is not None:
            w = self.guard_band
            if isinstance(w, bool) or not isinstance(w, int | float) or not math.isfinite(w):
                raise InputError(f"guard band {w!r} must be a finite number")
            if w < 0:
                raise InputError(f"guard band {w!r} must not be negative")

    @property
    def sentence(self) -> str:
        """The decision rule in words."""
        if self.kind == "simple":
            return (
                "decision rule: simple acceptance (the measured value is compared with the limit "
                "itself; a value equal to the limit passes)"
            )
        w = (
            f"w = {self.guard_band:g}"
            if self.guard_band is not None
            else "w = the measurement's expanded uncertainty"
        )
        return (
            f"decision rule: guarded acceptance, guard band {w} (a maximum is tightened to "
            "max - w, a minimum to min + w)"
        )

    def guard(self, uncertainty: float | None, what: str) -> float:
        """Return the guard band w for one comparison (0 for simple acceptance)."""
        if self.kind == "simple":
            return 0.0
        if self.guard_band is not None:
            return float(self.guard_band)
        if uncertainty is None:
            raise InputError(
                f"{what}: guarded acceptance needs a guard band or the measurement's "
                "expanded uncertainty"
            )
        if not math.isfinite(uncertainty) or uncertainty < 0:
            raise InputError(f"{what}: expanded uncertainty {uncertainty!r} must be >= 0")
        return float(uncertainty)


@dataclass(frozen=True)
class StepOutcome:
    """What was recorded for a step. Fill the fields the step's rule needs (see module doc)."""

    coating_removed: bool | None = None
    removal_location: str = ""
    inspection: Inspection | None = None
    initial_inspection: Inspection | None = None
    detached_share_pct: float | None = None
    crosshatch_class: int | None = None
    scratch_dig: ScratchDigObservation | None = None
    surface: Iso10110Observation | None = None
    spectral: tuple[SpectralStatistic, ...] = ()
    judgement: Judgement | None = None


@dataclass(frozen=True)
class _Context:
    clause: str
    decision: DecisionRule
    boundary: BoundaryConvention
    scratch_dig_settings: ScratchDigSettings | None
    iso10110_settings: Iso10110Settings | None
    conventions: list[str] = field(default_factory=list)


# ---------------------------------------------------------------- rule checking


def _number(value: object, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"{where}: expected a number, got {value!r}")
    number = float(value)
    if not math.isfinite(number):
        raise InputError(f"{where}: {value!r} is not a finite number")
    return number


def _keys(rule: Mapping[str, object], allowed: set[str], name: str) -> None:
    extra = sorted(set(rule) - allowed - {"rule"})
    if extra:
        raise InputError(f"acceptance rule {name!r}: unknown key(s) {', '.join(extra)}")
    missing = sorted(allowed - set(rule))
    if missing:
        raise InputError(f"acceptance rule {name!r}: missing key(s) {', '.join(missing)}")


def _check_limit(index: int, limit: object) -> None:
    where = f"acceptance rule 'spectral_limits', limit {index}"
    if not isinstance(limit, Mapping):
        raise InputError(f"{where}: expected an object, got {limit!r}")
    allowed = {"band_nm", "quantity", "statistic", "max", "min", "unit"}
    extra = sorted(set(limit) - allowed)
    if extra:
        raise InputError(f"{where}: unknown key(s) {', '.join(extra)}")
    missing = sorted({"band_nm", "quantity", "statistic", "unit"} - set(limit))
    if missing:
        raise InputError(f"{where}: missing key(s) {', '.join(missing)}")
    band = limit["band_nm"]
    if not isinstance(band, Sequence) or isinstance(band, str) or len(band) != 2:
        raise InputError(f"{where}: band_nm must be [from, to] in nm, got {band!r}")
    lo = _number(band[0], f"{where}, band_nm[0]")
    hi = _number(band[1], f"{where}, band_nm[1]")
    if not 0 < lo <= hi:
        raise InputError(f"{where}: band_nm {band!r} must run from a lower to a higher wavelength")
    if limit["quantity"] not in ("R", "T"):
        raise InputError(f"{where}: quantity {limit['quantity']!r} must be 'R' or 'T'")
    if limit["statistic"] not in ("average", "maximum", "minimum"):
        raise InputError(
            f"{where}: statistic {limit['statistic']!r} must be average, maximum or minimum"
        )
    if limit["unit"] != "%":
        raise InputError(f"{where}: unit {limit['unit']!r} is not supported (only '%')")
    upper = limit.get("max")
    lower = limit.get("min")
    if upper is None and lower is None:
        raise InputError(f"{where}: give max, min or both")
    up = _number(upper, f"{where}, max") if upper is not None else None
    low = _number(lower, f"{where}, min") if lower is not None else None
    if up is not None and low is not None and low > up:
        raise InputError(f"{where}: min {low:g} is above max {up:g}")


def _check_text(rule: Mapping[str, object], key: str, name: str) -> str:
    value = rule[key]
    if not isinstance(value, str) or not value.strip():
        raise InputError(f"acceptance rule {name!r}: {key} must be non-empty text")
    return value


def check_acceptance_rule(rule: object) -> str:
    """Check an acceptance rule dict and return its rule name; InputError naming what is wrong."""
    if not isinstance(rule, Mapping):
        raise InputError(f"acceptance rule: expected an object with a 'rule' key, got {rule!r}")
    name = rule.get("rule")
    if not isinstance(name, str) or name not in RULES:
        known = ", ".join(sorted(RULES))
        raise InputError(f"acceptance rule {name!r} is unknown (known rules: {known})")
    _keys(rule, _RULE_KEYS[name], name)
    if name == "no_listed_defects":
        listed = rule["defects"]
        if not isinstance(listed, Sequence) or isinstance(listed, str) or not listed:
            raise InputError(
                "acceptance rule 'no_listed_defects': defects must be a non-empty list"
            )
        try:
            defect_types(listed)
        except InputError as exc:
            raise InputError(f"acceptance rule 'no_listed_defects', defects: {exc}") from None
    elif name == "crosshatch_max_class":
        cls = rule["iso2409_class"]
        if isinstance(cls, bool) or not isinstance(cls, int) or not 0 <= cls <= 5:
            raise InputError(
                f"acceptance rule 'crosshatch_max_class': iso2409_class {cls!r} is not 0-5"
            )
    elif name == "crosshatch_max_share":
        share = _number(rule["max_share_detached_pct"], "acceptance rule 'crosshatch_max_share'")
        if not 0 <= share <= 100:
            raise InputError(
                f"acceptance rule 'crosshatch_max_share': {share:g} % is outside 0-100 %"
            )
    elif name == "scratch_dig":
        parse_scratch_dig(_check_text(rule, "spec", name))
    elif name == "iso10110_7":
        parse_iso10110_7(_check_text(rule, "spec", name))
    elif name == "spectral_limits":
        limits = rule["limits"]
        if not isinstance(limits, Sequence) or isinstance(limits, str) or not limits:
            raise InputError("acceptance rule 'spectral_limits': limits must be a non-empty list")
        for index, limit in enumerate(limits, start=1):
            _check_limit(index, limit)
    elif name == "engineer_judgement":
        _check_text(rule, "text", name)
    return name


# ---------------------------------------------------------------- validity


def _day(value: object, what: str) -> date:
    # A datetime is a date subclass but cannot be compared with a date: reduce it to its day.
    if isinstance(value, datetime):
        return value.date()
    if not isinstance(value, date):
        raise InputError(f"{what}: expected a date, got {value!r}")
    return value


def validity_problems(facts: ValidityFacts) -> list[str]:
    """Return the reasons the test does not count (empty when it counts).

    Dates are compared by calendar day; a datetime is reduced to its date, so pass local dates.
    """
    problems: list[str] = []
    test_day = _day(facts.test_date, "test date")
    if facts.exposure_counts is False:
        note = f": {facts.exposure_note}" if facts.exposure_note.strip() else ""
        problems.append(f"the exposure does not count{note}")
    for inst in facts.instruments:
        due = _day(inst.calibration_due, f"instrument {inst.name}: calibration due date")
        if test_day > due:
            problems.append(
                f"instrument {inst.name} was out of calibration on {test_day.isoformat()} "
                f"(calibration due {due.isoformat()})"
            )
    for item in facts.consumables:
        if item.expiry is None:
            continue
        expiry = _day(item.expiry, f"consumable {item.name}: expiry date")
        if test_day > expiry:
            lot = f" lot {item.lot}" if item.lot else ""
            problems.append(
                f"consumable {item.name}{lot} was past its expiry on "
                f"{test_day.isoformat()} (expired after {expiry.isoformat()})"
            )
    return problems


# ---------------------------------------------------------------- rules


def _verdict(ctx: _Context, outcome: Outcome, reason: str, *more: str) -> Verdict:
    return Verdict(
        outcome=outcome,
        reason=reason,
        clause=ctx.clause,
        conventions=tuple(ctx.conventions) + tuple(more),
    )


def _no_coating_removed(rule: Mapping[str, object], out: StepOutcome, ctx: _Context) -> Verdict:
    if out.coating_removed is None:
        raise InputError("tape adhesion result: say whether coating was removed (coating_removed)")
    if not isinstance(out.coating_removed, bool):
        raise InputError(
            f"tape adhesion result: coating_removed {out.coating_removed!r} is not yes/no"
        )
    if out.coating_removed:
        where = str(out.removal_location or "").strip()
        if not where:
            raise InputError(
                "tape adhesion result: coating was removed; say where (removal_location)"
            )
        return _verdict(
            ctx, "fail", f"coating was removed ({where}); {ctx.clause} allows no coating removed"
        )
    return _verdict(ctx, "pass", f"no coating was removed, as {ctx.clause} requires")


def _no_listed_defects(rule: Mapping[str, object], out: StepOutcome, ctx: _Context) -> Verdict:
    listed_seq = rule["defects"]
    assert isinstance(listed_seq, Sequence)
    listed = set(defect_types(listed_seq))
    if out.inspection is None:
        raise InputError("inspection after exposure: missing (inspection)")
    change = compare_inspections(out.initial_inspection, out.inspection)
    ctx.conventions.append(COMPARISON_CONVENTION)
    for defect, scale in change.not_compared:
        ctx.conventions.append(
            f"{defect.words} {scale.value} was graded in only one of the two inspections; "
            "no change is stated for it"
        )
    new = [d for d in change.new_defects if d in listed]
    worse = [g for g in change.worsened if g.defect in listed]
    if new or worse:
        parts = [f"{d.words} appeared after exposure (not in the initial inspection)" for d in new]
        parts += [g.sentence for g in worse]
        return _verdict(
            ctx,
            "fail",
            "; ".join(parts)
            + f"; the listed defects ({', '.join(sorted(d.words for d in listed))}) may not "
            f"appear or worsen, {ctx.clause}",
        )
    if out.inspection.no_defects_observed:
        return _verdict(ctx, "pass", f"no defects observed after exposure, {ctx.clause}")
    unlisted = sorted(
        {d for d in out.inspection.defect_types() if d not in listed}, key=lambda d: d.value
    )
    kept = sorted({d for d in out.inspection.defect_types() if d in listed}, key=lambda d: d.value)
    notes = []
    if kept:
        notes.append("present before exposure and not worse: " + ", ".join(d.words for d in kept))
    if unlisted:
        notes.append("observed but not listed: " + ", ".join(d.words for d in unlisted))
    tail = f" ({'; '.join(notes)})" if notes else ""
    return _verdict(
        ctx,
        "pass",
        f"no listed defect appeared or worsened after exposure{tail}, {ctx.clause}",
    )


def _observed_class(out: StepOutcome, ctx: _Context) -> tuple[int, str]:
    if out.detached_share_pct is None and out.crosshatch_class is None:
        raise InputError(
            "crosshatch result: give the ISO 2409 class (crosshatch_class) or the detached "
            "share (detached_share_pct)"
        )
    if out.detached_share_pct is not None:
        grade = crosshatch_grade(out.detached_share_pct, ctx.boundary)
        ctx.conventions.append(grade.convention)
        if out.crosshatch_class is not None and out.crosshatch_class != grade.iso2409:
            raise InputError(
                f"crosshatch result: class {out.crosshatch_class!r} does not match the detached "
                f"share {grade.share_pct:g} % (class {grade.iso2409} when {grade.convention})"
            )
        return grade.iso2409, f" (detached share {grade.share_pct:g} %)"
    cls = out.crosshatch_class
    assert cls is not None
    max_share_pct(cls)  # refuses a class outside 0-5 with InputError
    return cls, ""


def _crosshatch_max_class(rule: Mapping[str, object], out: StepOutcome, ctx: _Context) -> Verdict:
    required = rule["iso2409_class"]
    assert isinstance(required, int)
    observed, share = _observed_class(out, ctx)
    if ctx.decision.kind != "simple":
        ctx.conventions.append("the decision rule does not apply: a class is a visual rating")
    ctx.conventions.append(CORRESPONDENCE_NOTE)
    if observed > required:
        return _verdict(
            ctx,
            "fail",
            f"crosshatch class {observed}{share} exceeds the required class {required} maximum, "
            f"{ctx.clause}",
        )
    return _verdict(
        ctx,
        "pass",
        f"crosshatch class {observed}{share} is within the required class {required} maximum, "
        f"{ctx.clause}",
    )


def _crosshatch_max_share(rule: Mapping[str, object], out: StepOutcome, ctx: _Context) -> Verdict:
    limit = _number(rule["max_share_detached_pct"], "max_share_detached_pct")
    if out.detached_share_pct is not None:
        observed, _ = _observed_class(out, ctx)
        share = float(out.detached_share_pct)
        w = ctx.decision.guard(None, "crosshatch detached share")
        ctx.conventions.append(ctx.decision.sentence)
        accept = limit - w
        words = f"detached share {share:g} % (class {observed})"
        if share <= accept + _TOLERANCE:
            return _verdict(ctx, "pass", f"{words} is within the {limit:g} % maximum, {ctx.clause}")
        if w:
            words += (
                f" exceeds the acceptance limit {accept:g} % (maximum {limit:g} % less guard "
                f"band {w:g} %)"
            )
        else:
            words += f" exceeds the {limit:g} % maximum"
        return _verdict(ctx, "fail", f"{words}, {ctx.clause}")
    observed, _ = _observed_class(out, ctx)
    lower, upper, lower_in, _ = iso_class_share_range(observed, ctx.boundary)
    ctx.conventions.append(ctx.boundary.sentence)
    if upper <= limit + _TOLERANCE:
        return _verdict(
            ctx,
            "pass",
            f"crosshatch class {observed} covers shares up to {upper:g} %, within the "
            f"{limit:g} % maximum, {ctx.clause}",
        )
    if lower > limit or (lower == limit and not lower_in):
        return _verdict(
            ctx,
            "fail",
            f"crosshatch class {observed} means more than {lower:g} % detached, above the "
            f"{limit:g} % maximum, {ctx.clause}",
        )
    raise InputError(
        f"crosshatch result: class {observed} spans {lower:g}-{upper:g} % detached, which "
        f"straddles the {limit:g} % limit; record the detached share (detached_share_pct)"
    )


def _scratch_dig(rule: Mapping[str, object], out: StepOutcome, ctx: _Context) -> Verdict:
    spec = str(rule["spec"])
    if out.scratch_dig is None:
        raise InputError("scratch-dig result: missing (scratch_dig observation)")
    result = evaluate_scratch_dig(spec, out.scratch_dig, ctx.scratch_dig_settings)
    lead = (
        f"meets scratch-dig {result.spec}: "
        if result.passed
        else f"fails scratch-dig {result.spec}: "
    )
    return _verdict(
        ctx,
        "pass" if result.passed else "fail",
        lead + " ".join(result.reasons),
        *result.conventions,
    )


def _iso10110_7(rule: Mapping[str, object], out: StepOutcome, ctx: _Context) -> Verdict:
    spec = str(rule["spec"])
    if out.surface is None:
        raise InputError("ISO 10110-7 result: missing (surface observation)")
    result = evaluate_iso10110_7(spec, out.surface, ctx.iso10110_settings)
    lead = f"meets {result.spec}: " if result.passed else f"fails {result.spec}: "
    return _verdict(
        ctx,
        "pass" if result.passed else "fail",
        lead + " ".join(result.reasons),
        *result.conventions,
    )


def _same_band(a: Sequence[float], b: Sequence[float]) -> bool:
    return abs(float(a[0]) - float(b[0])) < 1e-6 and abs(float(a[1]) - float(b[1])) < 1e-6


def _spectral_limits(rule: Mapping[str, object], out: StepOutcome, ctx: _Context) -> Verdict:
    limits = rule["limits"]
    assert isinstance(limits, Sequence)
    ctx.conventions.append(ctx.decision.sentence)
    failures: list[str] = []
    passes: list[str] = []
    for index, limit in enumerate(limits, start=1):
        assert isinstance(limit, Mapping)
        band = limit["band_nm"]
        what = f"{limit['statistic']} {limit['quantity']} over {band[0]:g}-{band[1]:g} nm"
        found = [
            s
            for s in out.spectral
            if s.quantity == limit["quantity"]
            and s.statistic == limit["statistic"]
            and _same_band(s.band_nm, band)
        ]
        if not found:
            raise InputError(f"spectral limit {index} ({what}): no measured value given")
        if len(found) > 1:
            raise InputError(f"spectral limit {index} ({what}): more than one measured value given")
        stat = found[0]
        if stat.unit != "%":
            raise InputError(
                f"spectral limit {index} ({what}): measured unit {stat.unit!r} is not %"
            )
        value = _number(stat.value, f"spectral limit {index} ({what}), measured value")
        w = ctx.decision.guard(stat.expanded_uncertainty, f"spectral limit {index} ({what})")
        upper = limit.get("max")
        lower = limit.get("min")
        if upper is not None and value > float(upper) - w + _TOLERANCE:
            guard = f" (maximum {float(upper):g} % less guard band {w:g} %)" if w else ""
            failures.append(
                f"{what} is {value:g} %, above the "
                + (
                    f"acceptance limit {float(upper) - w:g} %{guard}"
                    if w
                    else f"maximum {float(upper):g} %"
                )
            )
        elif lower is not None and value < float(lower) + w - _TOLERANCE:
            guard = f" (minimum {float(lower):g} % plus guard band {w:g} %)" if w else ""
            failures.append(
                f"{what} is {value:g} %, below the "
                + (
                    f"acceptance limit {float(lower) + w:g} %{guard}"
                    if w
                    else f"minimum {float(lower):g} %"
                )
            )
        else:
            bounds = " and ".join(
                text
                for text in (
                    f"min {float(lower):g} %" if lower is not None else "",
                    f"max {float(upper):g} %" if upper is not None else "",
                )
                if text
            )
            guard = f" with guard band {w:g} %" if w else ""
            passes.append(f"{what} is {value:g} %, within {bounds}{guard}")
    if failures:
        return _verdict(ctx, "fail", "; ".join(failures) + f", {ctx.clause}")
    return _verdict(ctx, "pass", "; ".join(passes) + f", {ctx.clause}")


def _recorded_only(rule: Mapping[str, object], out: StepOutcome, ctx: _Context) -> Verdict:
    return _verdict(
        ctx,
        "pass",
        "recorded: the method sets no acceptance criterion, so pass here means the result was "
        "recorded, not judged against a limit",
        "verdict pass means recorded",
    )


def _engineer_judgement(rule: Mapping[str, object], out: StepOutcome, ctx: _Context) -> Verdict:
    text = str(rule["text"]).strip()
    judgement = out.judgement
    if judgement is None:
        raise InputError("engineer judgement: missing (judgement)")
    if not isinstance(judgement.person, str) or not isinstance(judgement.reason, str):
        raise InputError("engineer judgement: person and reason must be text")
    if judgement.outcome not in ("pass", "fail"):
        raise InputError(
            f"engineer judgement: outcome {judgement.outcome!r} must be 'pass' or 'fail'"
        )
    if not judgement.person.strip():
        raise InputError("engineer judgement: say who decided (person)")
    if not judgement.reason.strip():
        raise InputError("engineer judgement: give the stated reason (reason)")
    outcome: Outcome = "pass" if judgement.outcome == "pass" else "fail"
    return _verdict(
        ctx,
        outcome,
        f"{judgement.person.strip()} judged the result a {outcome} against the criterion "
        f'"{text}": {judgement.reason.strip()}',
        "the verdict is the engineer's recorded judgement",
    )


_Rule = Callable[[Mapping[str, object], StepOutcome, _Context], Verdict]

RULES: dict[str, _Rule] = {
    "no_coating_removed": _no_coating_removed,
    "no_listed_defects": _no_listed_defects,
    "crosshatch_max_class": _crosshatch_max_class,
    "crosshatch_max_share": _crosshatch_max_share,
    "scratch_dig": _scratch_dig,
    "iso10110_7": _iso10110_7,
    "spectral_limits": _spectral_limits,
    "recorded_only": _recorded_only,
    "engineer_judgement": _engineer_judgement,
}

_RULE_KEYS: dict[str, set[str]] = {
    "no_coating_removed": set(),
    "no_listed_defects": {"defects"},
    "crosshatch_max_class": {"iso2409_class"},
    "crosshatch_max_share": {"max_share_detached_pct"},
    "scratch_dig": {"spec"},
    "iso10110_7": {"spec"},
    "spectral_limits": {"limits"},
    "recorded_only": set(),
    "engineer_judgement": {"text"},
}

_DEFAULT_CLAUSES: dict[str, str] = {
    "no_coating_removed": "tape adhesion (no coating removed)",
    "no_listed_defects": "inspection after exposure (no listed defects)",
    "crosshatch_max_class": "ISO 2409",
    "crosshatch_max_share": "ISO 2409 / ASTM D3359 detached share",
    "scratch_dig": "MIL-PRF-13830B",
    "iso10110_7": "ISO 10110-7",
    "spectral_limits": "the coating spec's spectral limits",
    "recorded_only": "recorded only (no acceptance criterion)",
    "engineer_judgement": "engineer judgement",
}


# ---------------------------------------------------------------- entry point


def _boundary(value: BoundaryConvention | str) -> BoundaryConvention:
    try:
        return BoundaryConvention(value)
    except ValueError:
        raise InputError(f"boundary convention {value!r} is unknown (better or worse)") from None


def step_verdict(
    rule: Mapping[str, object],
    outcome: StepOutcome,
    validity: ValidityFacts | None,
    *,
    clause: str = "",
    decision_rule: DecisionRule | None = None,
    boundary: BoundaryConvention | str = BoundaryConvention.BETTER_CLASS,
    scratch_dig_settings: ScratchDigSettings | None = None,
    iso10110_settings: Iso10110Settings | None = None,
) -> Verdict:
    """Return the verdict of one step.

    ``clause`` names the method's standard and clause for the reason (e.g. "MIL-C-48497A
    adhesion"); a default per rule is used when empty. ``validity`` None means the validity facts
    were not given, which the verdict's conventions say. ``decision_rule`` applies to numeric
    limits (default simple acceptance); ``boundary`` to crosshatch shares on a class boundary.
    """
    name = check_acceptance_rule(rule)
    ctx = _Context(
        clause=clause.strip() or _DEFAULT_CLAUSES[name],
        decision=decision_rule if decision_rule is not None else DecisionRule(),
        boundary=_boundary(boundary),
        scratch_dig_settings=scratch_dig_settings,
        iso10110_settings=iso10110_settings,
    )
    if validity is None:
        ctx.conventions.append(
            "no validity facts were given: exposure, calibration and consumables not checked"
        )
    else:
        ctx.conventions.extend([CALIBRATION_CONVENTION, EXPIRY_CONVENTION])
        problems = validity_problems(validity)
        if problems:
            return Verdict(
                outcome="invalid",
                reason="the test does not count (not a coating failure): " + "; ".join(problems),
                clause=VALIDITY_CLAUSE,
                conventions=tuple(ctx.conventions),
            )
    return RULES[name](rule, outcome, ctx)
