"""MIL-PRF-13830B scratch-dig evaluation of one surface.

The rules, per shared/reference/computations.md (MIL-PRF-13830B [pub, via public reproductions and
vendor notes]; items marked [mem] there are flagged the same way in the output):

- Scratch numbers are visibility grades judged against master standards. They are compared here
  as numbers only; no width is ever inferred from them.
- The total length of maximum-number scratches may not exceed D/4.
- Scratch sum NS = sum(N_i * L_i) / D over all scratches; NS <= N_max / 2 when a maximum-number
  scratch is present, otherwise NS <= N_max.
- Dig number = dig diameter in 0.01 mm; an irregular dig has diameter (length + width) / 2.
- At most one maximum-size dig in any 20 mm circle; the sum of dig diameters in any 20 mm circle
  at most 2 x the maximum dig diameter. For dig numbers of 10 or less, maximum-size digs must be at
  least 1 mm apart instead. Whole surface: one maximum-size dig per 20 mm of diameter or fraction
  [mem].
- Digs below a small size are disregarded: a setting, default 0.025 mm [mem].

D is the clear-aperture diameter, or for a non-round aperture the equal-area diameter
sqrt(4 * area / pi); the result says which was used. When dig positions are not all given, the
digs are taken to lie in one 20 mm circle (the strictest reading). Only imperfections inside the
clear aperture are entered; coating and substrate imperfections are evaluated separately by the
same rules (call this twice).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

from durability.errors import InputError
from durability.surface.notation import ScratchDigSpec, parse_scratch_dig

__all__ = [
    "Dig",
    "Scratch",
    "ScratchDigObservation",
    "ScratchDigResult",
    "ScratchDigSettings",
    "equal_area_diameter_mm",
    "evaluate_scratch_dig",
]

STANDARD = "MIL-PRF-13830B"
CIRCLE_DIAMETER_MM = 20.0
FINE_DIG_SPACING_MM = 1.0
# Below this the comparison is float noise, not a measured difference.
_TOLERANCE = 1e-9


def _le(value: float, limit: float) -> bool:
    return value <= limit + _TOLERANCE * max(1.0, abs(limit))


def _positive(value: object, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"{what}: expected a number, got {value!r}")
    number = float(value)
    if not math.isfinite(number) or number <= 0.0:
        raise InputError(f"{what}: {value!r} must be a positive finite number")
    return number


def _fmt(value: float, digits: int = 3) -> str:
    text = f"{value:.{digits}f}".rstrip("0").rstrip(".")
    return text if text not in ("", "-0") else "0"


@dataclass(frozen=True)
class Scratch:
    """One scratch: its scratch number (visibility grade) and its length in mm."""

    number: int
    length_mm: float


@dataclass(frozen=True)
class Dig:
    """One dig.

    A round dig gives ``length_mm`` as its diameter and leaves ``width_mm`` None; an irregular
    dig gives its length and width. ``position_mm`` is the (x, y) of its centre on the surface,
    optional.
    """

    length_mm: float
    width_mm: float | None = None
    position_mm: tuple[float, float] | None = None

    @property
    def diameter_mm(self) -> float:
        """The dig diameter: the round diameter, or (length + width) / 2 for an irregular dig."""
        if self.width_mm is None:
            return self.length_mm
        return (self.length_mm + self.width_mm) / 2.0

    def describe(self) -> str:
        """The dig in words, with how its diameter was obtained."""
        if self.width_mm is None:
            return f"diameter {_fmt(self.length_mm)} mm"
        return (
            f"irregular {_fmt(self.length_mm)} x {_fmt(self.width_mm)} mm, "
            f"diameter (L+W)/2 = {_fmt(self.diameter_mm)} mm"
        )


@dataclass(frozen=True)
class ScratchDigObservation:
    """What was measured on one surface: the aperture and the scratches and digs inside it.

    Give ``aperture_diameter_mm`` for a round clear aperture, or ``aperture_area_mm2`` for any
    shape (the equal-area diameter is then used; when both are given the area wins).
    """

    aperture_diameter_mm: float | None = None
    aperture_area_mm2: float | None = None
    scratches: tuple[Scratch, ...] = ()
    digs: tuple[Dig, ...] = ()


@dataclass(frozen=True)
class ScratchDigSettings:
    """Choices labs make differently.

    ``ignore_digs_below_mm``: digs with a smaller diameter are disregarded (default 0.025 mm, a
    value recalled from memory). ``max_size_dig_from_mm``: a dig at least this large counts as a
    maximum-size dig; None means "rounds to the maximum dig diameter at the 0.01 mm resolution of
    dig numbers".
    """

    ignore_digs_below_mm: float = 0.025
    max_size_dig_from_mm: float | None = None


@dataclass(frozen=True)
class ScratchDigResult:
    """The outcome of a scratch-dig evaluation.

    ``passed`` is the verdict (``"pass"`` in :meth:`as_json`); ``reasons`` are plain sentences
    naming MIL-PRF-13830B: the failed checks when it fails, the checks made when it passes.
    """

    spec: str
    passed: bool
    reasons: tuple[str, ...]
    scratch_sum: float
    scratch_sum_limit: float
    max_scratch_length_mm: float
    max_scratch_length_limit_mm: float
    diameter_mm: float
    diameter_basis: str
    digs_counted: int
    digs_ignored: int
    max_size_digs: int
    dig_diameter_sum_mm: float
    dig_diameter_sum_limit_mm: float
    conventions: tuple[str, ...] = field(default=())

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict (the verdict under the key ``"pass"``)."""
        return {
            "spec": self.spec,
            "pass": self.passed,
            "reasons": list(self.reasons),
            "scratch_sum": self.scratch_sum,
            "scratch_sum_limit": self.scratch_sum_limit,
            "max_scratch_length_mm": self.max_scratch_length_mm,
            "max_scratch_length_limit_mm": self.max_scratch_length_limit_mm,
            "diameter_mm": self.diameter_mm,
            "diameter_basis": self.diameter_basis,
            "digs_counted": self.digs_counted,
            "digs_ignored": self.digs_ignored,
            "max_size_digs": self.max_size_digs,
            "dig_diameter_sum_mm": self.dig_diameter_sum_mm,
            "dig_diameter_sum_limit_mm": self.dig_diameter_sum_limit_mm,
            "conventions": list(self.conventions),
        }


def equal_area_diameter_mm(area_mm2: float) -> float:
    """Return the diameter of the circle with the given area: sqrt(4 * area / pi)."""
    return math.sqrt(4.0 * _positive(area_mm2, "aperture area (mm2)") / math.pi)


def _aperture(observation: ScratchDigObservation) -> tuple[float, str]:
    if observation.aperture_area_mm2 is not None:
        area = _positive(observation.aperture_area_mm2, "aperture area (mm2)")
        diameter = equal_area_diameter_mm(area)
        basis = (
            f"equal-area diameter sqrt(4A/pi) of the {_fmt(area)} mm2 clear aperture "
            f"= {_fmt(diameter)} mm"
        )
        if observation.aperture_diameter_mm is not None:
            basis += (
                f"; the given diameter {_fmt(float(observation.aperture_diameter_mm))} mm "
                "was not used"
            )
        return diameter, basis
    if observation.aperture_diameter_mm is None:
        raise InputError("scratch-dig: give the clear-aperture diameter or its area")
    diameter = _positive(observation.aperture_diameter_mm, "clear-aperture diameter (mm)")
    return diameter, f"clear-aperture diameter {_fmt(diameter)} mm"


def _check_scratches(scratches: Sequence[Scratch]) -> None:
    for index, scratch in enumerate(scratches, start=1):
        number = scratch.number
        if isinstance(number, bool) or not isinstance(number, int) or number <= 0:
            raise InputError(
                f"scratch {index}: scratch number {number!r} must be a positive whole number"
            )
        _positive(scratch.length_mm, f"scratch {index}: length (mm)")


def _check_digs(digs: Sequence[Dig]) -> None:
    for index, dig in enumerate(digs, start=1):
        _positive(dig.length_mm, f"dig {index}: length or diameter (mm)")
        if dig.width_mm is not None:
            _positive(dig.width_mm, f"dig {index}: width (mm)")
        if dig.position_mm is not None:
            pos = dig.position_mm
            if (
                not isinstance(pos, tuple | list)
                or len(pos) != 2
                or any(isinstance(v, bool) or not isinstance(v, int | float) for v in pos)
                or not all(math.isfinite(float(v)) for v in pos)
            ):
                raise InputError(f"dig {index}: position {pos!r} must be two finite numbers (mm)")


def _max_weight_in_circle(
    points: Sequence[tuple[float, float]], weights: Sequence[float], radius: float
) -> float:
    """Largest total weight of points whose centres fit in one circle of ``radius``.

    A best circle can always be moved until it is centred on a point or has two points on its
    rim, so those candidate centres are enough.
    """
    centres: list[tuple[float, float]] = list(points)
    for i, (x1, y1) in enumerate(points):
        for x2, y2 in points[i + 1 :]:
            dx, dy = x2 - x1, y2 - y1
            d2 = dx * dx + dy * dy
            if d2 == 0.0 or d2 > 4.0 * radius * radius:
                continue
            mx, my = (x1 + x2) / 2.0, (y1 + y2) / 2.0
            h = math.sqrt(max(radius * radius - d2 / 4.0, 0.0))
            d = math.sqrt(d2)
            ux, uy = -dy / d, dx / d
            centres.append((mx + h * ux, my + h * uy))
            centres.append((mx - h * ux, my - h * uy))
    best = 0.0
    reach = radius * (1.0 + 1e-9)
    for cx, cy in centres:
        total = sum(
            w
            for (x, y), w in zip(points, weights, strict=True)
            if math.hypot(x - cx, y - cy) <= reach
        )
        best = max(best, total)
    return best


def evaluate_scratch_dig(
    spec: ScratchDigSpec | str,
    observation: ScratchDigObservation,
    settings: ScratchDigSettings | None = None,
) -> ScratchDigResult:
    """Evaluate the scratches and digs seen on one surface against a scratch-dig callout."""
    sd = parse_scratch_dig(spec) if isinstance(spec, str) else spec
    rules = settings if settings is not None else ScratchDigSettings()
    ignore_below = float(rules.ignore_digs_below_mm)
    if not math.isfinite(ignore_below) or ignore_below < 0.0:
        raise InputError(f"ignore_digs_below_mm {rules.ignore_digs_below_mm!r} must be >= 0")
    diameter, basis = _aperture(observation)
    scratches = tuple(observation.scratches)
    digs = tuple(observation.digs)
    _check_scratches(scratches)
    _check_digs(digs)

    failures: list[str] = []
    checks: list[str] = []
    n_max = sd.scratch
    cite = f", {STANDARD}."

    # Scratches.
    for index, scratch in enumerate(scratches, start=1):
        if scratch.number > n_max:
            failures.append(
                f"Scratch {index} has scratch number {scratch.number}, above the maximum "
                f"scratch number {n_max} of {sd.normal}{cite}"
            )
    max_length = sum((s.length_mm for s in scratches if s.number == n_max), 0.0)
    max_length_limit = diameter / 4.0
    sentence = (
        f"Maximum-number (#{n_max}) scratches total {_fmt(max_length)} mm against the D/4 "
        f"limit of {_fmt(max_length_limit)} mm"
    )
    (checks if _le(max_length, max_length_limit) else failures).append(sentence + cite)

    scratch_sum = sum(s.number * s.length_mm for s in scratches) / diameter
    has_max = any(s.number >= n_max for s in scratches)
    sum_limit = n_max / 2.0 if has_max else float(n_max)
    why = (
        f"half the maximum scratch number {n_max}, because a maximum-number scratch is present"
        if has_max
        else f"the maximum scratch number {n_max}, as no maximum-number scratch is present"
    )
    verb = "is within" if _le(scratch_sum, sum_limit) else "exceeds"
    sentence = (
        f"Scratch sum NS = sum(N x L)/D = {_fmt(scratch_sum)} {verb} the limit {_fmt(sum_limit)} "
        f"({why})"
    )
    (checks if verb == "is within" else failures).append(sentence + cite)

    # Digs.
    max_dig = sd.max_dig_diameter_mm
    counted = [(i, d) for i, d in enumerate(digs, start=1) if d.diameter_mm >= ignore_below]
    ignored = len(digs) - len(counted)
    for index, dig in counted:
        if not _le(dig.diameter_mm, max_dig):
            failures.append(
                f"Dig {index} ({dig.describe()}) is larger than the maximum dig diameter "
                f"{_fmt(max_dig)} mm of dig number {sd.dig}{cite}"
            )
    if rules.max_size_dig_from_mm is None:
        max_size_from = (sd.dig - 0.5) / 100.0
        max_size_rule = (
            "a dig counts as maximum size when its diameter rounds to the maximum dig diameter "
            f"at the 0.01 mm resolution of dig numbers (>= {_fmt(max_size_from, 4)} mm)"
        )
    else:
        max_size_from = _positive(rules.max_size_dig_from_mm, "max_size_dig_from_mm")
        max_size_rule = f"a dig counts as maximum size from {_fmt(max_size_from, 4)} mm (setting)"
    max_size = [(i, d) for i, d in counted if d.diameter_mm >= max_size_from - _TOLERANCE]
    positioned = bool(counted) and all(d.position_mm is not None for _, d in counted)
    dig_sum_limit = 2.0 * max_dig
    conventions: list[str] = [
        "scratch numbers are visibility grades compared as numbers; no scratch width is inferred",
        f"D = {_fmt(diameter)} mm: {basis}",
        "irregular dig diameter = (length + width) / 2",
        f"digs below {_fmt(ignore_below, 4)} mm diameter are disregarded "
        "(setting; 0.025 mm is the default, recalled from memory)",
        max_size_rule,
        "a value equal to its limit passes",
        "only imperfections inside the clear aperture are entered; coating and substrate "
        "imperfections are evaluated separately by the same rules",
    ]

    if positioned:
        points = [d.position_mm for _, d in counted if d.position_mm is not None]
        dig_sum = _max_weight_in_circle(
            points, [d.diameter_mm for _, d in counted], CIRCLE_DIAMETER_MM / 2.0
        )
        where = "in the worst 20 mm circle (found from the dig positions)"
        conventions.append(
            "dig positions are dig centres; a dig lies in a circle when its centre does"
        )
    else:
        dig_sum = sum((d.diameter_mm for _, d in counted), 0.0)
        where = "(all digs taken to lie in one 20 mm circle)"
        if counted:
            conventions.append(
                "dig positions were not all given, so all digs are taken to lie in one 20 mm "
                "circle (the strictest reading)"
            )
    verb = "is within" if _le(dig_sum, dig_sum_limit) else "exceeds"
    sentence = (
        f"Sum of dig diameters {where}: {_fmt(dig_sum)} mm, which {verb} twice the maximum "
        f"dig diameter, {_fmt(dig_sum_limit)} mm"
    )
    (checks if verb == "is within" else failures).append(sentence + cite)

    if sd.dig <= 10:
        if positioned:
            too_close = [
                (a, b)
                for k, (a, da) in enumerate(max_size)
                for b, db in max_size[k + 1 :]
                if da.position_mm is not None
                and db.position_mm is not None
                and math.dist(da.position_mm, db.position_mm) < FINE_DIG_SPACING_MM
            ]
            for a, b in too_close:
                failures.append(
                    f"Maximum-size digs {a} and {b} are less than 1 mm apart; for dig numbers of "
                    f"10 or less they must be at least 1 mm apart{cite}"
                )
            if not too_close and len(max_size) > 1:
                checks.append(f"Maximum-size digs are at least 1 mm apart{cite}")
        elif len(max_size) > 1:
            conventions.append(
                "the 1 mm spacing of maximum-size digs (dig number 10 or less) was not checked: "
                "dig positions were not given"
            )
    else:
        if positioned:
            close = [
                (a, b)
                for k, (a, da) in enumerate(max_size)
                for b, db in max_size[k + 1 :]
                if da.position_mm is not None
                and db.position_mm is not None
                and _le(math.dist(da.position_mm, db.position_mm), CIRCLE_DIAMETER_MM)
            ]
            for a, b in close:
                failures.append(
                    f"Maximum-size digs {a} and {b} lie within one 20 mm circle; at most one is "
                    f"allowed in any 20 mm circle{cite}"
                )
            allowed = math.ceil(diameter / CIRCLE_DIAMETER_MM - _TOLERANCE)
            if len(max_size) > allowed:
                failures.append(
                    f"{len(max_size)} maximum-size digs on the surface, above the {allowed} "
                    f"allowed (one per 20 mm of diameter or fraction; this whole-surface count "
                    f"is recalled from memory){cite}"
                )
            elif not close:
                checks.append(
                    f"{len(max_size)} maximum-size dig(s), no two within one 20 mm circle{cite}"
                )
        else:
            sentence = (
                f"{len(max_size)} maximum-size dig(s), all taken to lie in one 20 mm circle; "
                "at most one is allowed in any 20 mm circle"
            )
            (checks if len(max_size) <= 1 else failures).append(sentence + cite)

    return ScratchDigResult(
        spec=sd.normal,
        passed=not failures,
        reasons=tuple(failures) if failures else tuple(checks),
        scratch_sum=scratch_sum,
        scratch_sum_limit=sum_limit,
        max_scratch_length_mm=max_length,
        max_scratch_length_limit_mm=max_length_limit,
        diameter_mm=diameter,
        diameter_basis=basis,
        digs_counted=len(counted),
        digs_ignored=ignored,
        max_size_digs=len(max_size),
        dig_diameter_sum_mm=dig_sum,
        dig_diameter_sum_limit_mm=dig_sum_limit,
        conventions=tuple(conventions),
    )
