"""Reads for chamber runs: conditions, what a method asks of an exposure, run pages, plots.

`exposure_counts_for(run)` is the answer the verdict code uses: the latest exposure check
of the run counts or not (None when the run has no check yet).
"""

from __future__ import annotations

import datetime
import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from django.core.exceptions import ValidationError
from django.db.models import Q
from django.utils import timezone

from durability.dewpoint import dew_point
from durability.durations import CHAMBER_KINDS
from durability.errors import InputError
from durability.exposure.verify import DurationRule, ExposureCondition, SevereSide
from durability.models import Instrument, MethodKind, MethodVersion
from durability.safety import cautions_for
from durability.services import version_as_entry
from labrecords.access import customer_filter
from labrecords.models import (
    ChamberRun,
    ChamberRunPiece,
    Evidence,
    EvidenceKind,
    ExposureCheck,
    PlanStep,
)
from labrecords.selectors_progress import PieceProgress, current_assignments, progress_for

# Below this set point a temperature exposure is a cold test: the lower side is the harder
# one (common practice: laboratory ambient is about 23 °C).
COLD_TEST_BELOW_C = 23.0

# The ISO 9022 start rule (shared/reference/test-methods.md [pub]) as the catalogue words it.
_STABLE_START_MARK = "3 K"


# ---------------------------------------------------------------- conditions


def _value(parameters: Mapping[str, Any], name: str) -> float | None:
    spec = parameters.get(name)
    value = spec.get("value") if isinstance(spec, Mapping) else spec
    if value is None or value == "":
        return None
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    return number if math.isfinite(number) else None


def _text(parameters: Mapping[str, Any], name: str) -> str:
    spec = parameters.get(name)
    value = spec.get("value") if isinstance(spec, Mapping) else spec
    return str(value).strip() if value not in (None, "") else ""


def condition_of(parameters: Mapping[str, Any]) -> str:
    """A chamber condition in words, from a step's (or a method version's) parameters.

    Two steps share a chamber run only when their kind and this text are equal, e.g.
    "49 ± 2 °C, 95–100 % RH, 24 h". Built from the values alone, so a plan's step and the
    method version it copied give the same text.
    """
    parts: list[str] = []
    temperature = _value(parameters, "temperature_c")
    tolerance = _value(parameters, "temperature_tolerance_c")
    low = _value(parameters, "temperature_low_c")
    high = _value(parameters, "temperature_high_c")
    if temperature is not None:
        if tolerance is not None:
            parts.append(f"{temperature:g} ± {tolerance:g} °C")
        else:
            parts.append(f"{temperature:g} °C")
    elif low is not None or high is not None:
        parts.append(
            f"{'?' if low is None else f'{low:g}'} to {'?' if high is None else f'{high:g}'} °C"
        )
    rh_min = _value(parameters, "rh_min_pct")
    rh_max = _value(parameters, "rh_max_pct")
    if rh_min is not None and rh_max is not None:
        parts.append(f"{rh_min:g}–{rh_max:g} % RH")
    elif rh_min is not None:
        parts.append(f"at least {rh_min:g} % RH")
    elif rh_max is not None:
        parts.append(f"at most {rh_max:g} % RH")
    solution = _text(parameters, "solution")
    concentration = _value(parameters, "concentration_pct")
    if solution:
        parts.append(f"{concentration:g} % {solution}" if concentration is not None else solution)
    duration = _value(parameters, "duration_h")
    cycles = _value(parameters, "cycles")
    cycle_h = _value(parameters, "cycle_h")
    if duration is not None:
        parts.append(f"{duration:g} h")
    elif cycles is not None and cycle_h is not None:
        parts.append(f"{cycles:g} × {cycle_h:g} h")
    elif cycles is not None:
        parts.append(f"{cycles:g} cycles")
    return ", ".join(parts) if parts else "condition not stated"


def version_parameters(version: MethodVersion) -> dict[str, Any]:
    """A method version's parameters in the shape plan steps keep them (name -> spec)."""
    return version_as_entry(version)["parameters"]


def version_condition(version: MethodVersion) -> str:
    return condition_of(version_parameters(version))


# ---------------------------------------------------------------- what the method asks


@dataclass(frozen=True)
class ExposureRequirement:
    """What a method version asks of a chamber exposure, in the verifier's terms."""

    condition: ExposureCondition
    required_hours: float
    duration_rule: DurationRule | None  # None: the method version does not say
    start_when_stable: bool
    notes: tuple[str, ...]

    def as_dict(self) -> dict[str, object]:
        return {
            "condition": self.condition.as_dict(),
            "required_hours": self.required_hours,
            "duration_rule": self.duration_rule.value if self.duration_rule else None,
            "start_when_stable": self.start_when_stable,
            "notes": list(self.notes),
        }


def exposure_requirement(version: MethodVersion) -> ExposureRequirement:
    """Read the temperature band, humidity range, hours and duration rule from a version.

    Raises ValidationError naming the parameter when the version lacks what a band check
    needs (a set point and its tolerance, a duration), so nothing is verified against a
    guess.
    """
    label = str(version)
    parameters = version_parameters(version)
    if version.method.kind not in CHAMBER_KINDS:
        raise ValidationError(
            {
                "method_version": f"{label} is a {version.method.get_kind_display().lower()} "
                "method, not a chamber exposure."
            }
        )
    setpoint = _value(parameters, "temperature_c")
    tolerance = _value(parameters, "temperature_tolerance_c")
    if setpoint is None:
        if _value(parameters, "temperature_low_c") is not None:
            raise ValidationError(
                {
                    "method_version": (
                        f"{label} moves between a low and a high temperature: "
                        "a log cannot be checked "
                        "against one temperature band; record the exposure at the bench instead."
                    )
                }
            )
        raise ValidationError(
            {
                "method_version": (
                    f"{label} has no temperature (temperature_c is to be entered): "
                    "enter it in a new "
                    "method version before checking a log against it."
                )
            }
        )
    if tolerance is None:
        raise ValidationError(
            {
                "method_version": (
                    f"{label} has no temperature tolerance "
                    "(temperature_tolerance_c is to be entered): "
                    "enter it in a new method version before checking a log against it."
                )
            }
        )
    hours = _value(parameters, "duration_h")
    cycles, cycle_h = _value(parameters, "cycles"), _value(parameters, "cycle_h")
    notes: list[str] = [f"condition and hours from {label}"]
    if hours is None and cycles is not None and cycle_h is not None:
        hours = cycles * cycle_h
        notes.append(f"required hours = {cycles:g} cycles × {cycle_h:g} h")
    if hours is None or hours <= 0:
        raise ValidationError(
            {
                "method_version": (
                    f"{label} has no duration (duration_h is to be entered): "
                    "enter it in a new method "
                    "version before checking a log against it."
                )
            }
        )
    cold = version.method.kind == MethodKind.TEMPERATURE and setpoint < COLD_TEST_BELOW_C
    if cold:
        notes.append(
            f"set point {setpoint:g} °C is below {COLD_TEST_BELOW_C:g} °C: a cold test, so a "
            "lower temperature is the more severe side (common practice)"
        )
    try:
        condition = ExposureCondition.from_setpoint(
            setpoint,
            tolerance,
            rh_min_percent=_value(parameters, "rh_min_pct"),
            rh_max_percent=_value(parameters, "rh_max_pct"),
            temperature_severe_side=SevereSide.LOWER if cold else SevereSide.HIGHER,
        )
    except InputError as exc:  # a parameter the pure code cannot use
        raise ValidationError({"method_version": f"{label}: {exc}"}) from None
    rule_text = _text(version.extra or {}, "duration_rule").lower()
    rule = DurationRule(rule_text) if rule_text in {r.value for r in DurationRule} else None
    if rule is not None:
        notes.append(f"{label} requires the hours to be {rule.value}")
    start_text = _text(parameters, "exposure_start")
    start_when_stable = _STABLE_START_MARK in start_text
    if start_when_stable:
        notes.append(f"{label}: exposure starts {start_text}")
    return ExposureRequirement(condition, hours, rule, start_when_stable, tuple(notes))


def dew_points_for(condition: ExposureCondition) -> dict[str, Any]:
    """Dew point (Magnus) of the set point at each end of the humidity range."""
    setpoint = condition.temperature_setpoint_c
    rows = []
    for rh in (condition.rh_min_percent, condition.rh_max_percent):
        if setpoint is None or rh is None or rh <= 0:
            continue
        try:
            result = dew_point(setpoint, rh)
        except InputError as exc:
            rows.append({"rh_percent": rh, "error": str(exc)})
            continue
        rows.append(
            {
                "rh_percent": rh,
                "dew_point_c": round(result.dew_point_c, 2),
                "frost_point_c": None
                if result.frost_point_c is None
                else round(result.frost_point_c, 2),
                "coefficients": result.coefficients.label,
            }
        )
    if not rows:
        return {
            "temperature_c": setpoint,
            "rows": [],
            "note": "the condition has no humidity range: no dew point",
        }
    return {
        "temperature_c": setpoint,
        "rows": rows,
        "note": (
            "a piece colder than the dew point fogs when it is loaded (Magnus formula, "
            "shared/reference/computations.md [pub])"
        ),
    }


# ---------------------------------------------------------------- the verdict code's question


def latest_check(run: ChamberRun) -> ExposureCheck | None:
    """The exposure check that counts: the latest one recorded for the run."""
    return (
        ExposureCheck.objects.filter(run=run)
        .select_related("evidence", "checked_by")
        .order_by("-checked_at", "-id")
        .first()
    )


def exposure_counts_for(run: ChamberRun) -> bool | None:
    """Whether the run's exposure counts, by its latest exposure check; None without one.

    A chamber run whose exposure does not count cannot produce a pass.
    """
    return (
        ExposureCheck.objects.filter(run=run)
        .order_by("-checked_at", "-id")
        .values_list("counts", flat=True)
        .first()
    )


# ---------------------------------------------------------------- pieces waiting for a run


@dataclass
class WaitingGroup:
    """Pieces whose open step is a chamber exposure of one kind and condition."""

    kind: str
    kind_label: str
    condition: str
    versions: list[MethodVersion] = field(default_factory=list)
    pieces: list[PieceProgress] = field(default_factory=list)
    hazards: list[str] = field(default_factory=list)

    @property
    def key(self) -> str:
        return f"{self.kind}|{self.condition}"


def _active_run_piece_ids() -> set[int]:
    return set(
        ChamberRunPiece.objects.filter(run__unloaded_at__isnull=True).values_list(
            "piece_id", flat=True
        )
    )


def chamber_waiting_groups() -> list[WaitingGroup]:
    """Pieces waiting for a chamber run, grouped by kind and condition (not those loaded)."""
    loaded = _active_run_piece_ids()
    groups: dict[tuple[str, str], WaitingGroup] = {}
    for progress in progress_for(current_assignments().order_by("piece__ident")):
        step = progress.open_step
        if step is None or step.kind not in CHAMBER_KINDS or progress.piece.pk in loaded:
            continue
        condition = condition_of(step.parameters)
        group = groups.get((step.kind, condition))
        if group is None:
            label = MethodKind(step.kind).label if step.kind in MethodKind.values else step.kind
            group = groups[(step.kind, condition)] = WaitingGroup(step.kind, label, condition)
        group.pieces.append(progress)
        if step.method_version not in group.versions:
            group.versions.append(step.method_version)
        for hazard in step.hazards:
            if hazard not in group.hazards:
                group.hazards.append(hazard)
    return sorted(groups.values(), key=lambda g: (g.kind_label, g.condition))


def chamber_waiting_group(key: str) -> WaitingGroup | None:
    return next((g for g in chamber_waiting_groups() if g.key == key), None)


# ---------------------------------------------------------------- run list and run page


def run_list_queryset(user):
    return ChamberRun.objects.visible_to(user).select_related(
        "chamber", "logger", "method_version__method", "loaded_by"
    )


@dataclass(frozen=True)
class RunPieceRow:
    ident: str
    url: str
    lot_number: str
    lot_url: str
    customer: str
    step_name: str


@dataclass(frozen=True)
class ExcursionRow:
    start: datetime.datetime
    end: datetime.datetime
    minutes: float
    causes: str
    direction: str
    worst: list[str]


@dataclass(frozen=True)
class ChartLine:
    points: str  # "x,y x,y ..." in the chart's pixel frame


@dataclass(frozen=True)
class Chart:
    """One panel of the exposure plot, laid out in pixels for an inline SVG."""

    title: str
    unit: str
    width: int
    height: int
    left: int
    top: int
    plot_width: int
    plot_height: int
    line: ChartLine
    limits: list[tuple[float, str]]  # y pixel, label
    y_ticks: list[tuple[float, str]]
    x_ticks: list[tuple[float, str]]
    bands: list[tuple[float, float]]  # excursion spans: x pixel start, width
    description: str


@dataclass(frozen=True)
class RunPage:
    run: ChamberRun
    pieces: list[RunPieceRow]
    check: ExposureCheck | None
    earlier_checks: list[ExposureCheck]
    excursions: list[ExcursionRow]
    charts: list[Chart]
    logs: list[Evidence]
    condition_text: str
    requirement_error: str
    dew_point: dict[str, Any] | None
    cautions: list
    hours_text: str


def _local(iso: str) -> datetime.datetime:
    return timezone.localtime(datetime.datetime.fromisoformat(iso))


def _worst_text(worst: Mapping[str, Any]) -> str:
    unit = "°C" if worst["quantity"] == "temperature" else "% RH"
    return (
        f"{worst['quantity']} {worst['corrected']:.2f} {unit} (logged {worst['raw']:.2f}) at "
        f"{_local(worst['time']):%Y-%m-%d %H:%M}, {worst['beyond']:.2f} beyond the limit "
        f"{worst['limit']:g}; {worst['direction']}"
    )


def excursion_rows(summary: Mapping[str, Any]) -> list[ExcursionRow]:
    rows = []
    for excursion in summary.get("verification", {}).get("excursions", []):
        rows.append(
            ExcursionRow(
                start=_local(excursion["start"]),
                end=_local(excursion["end"]),
                minutes=excursion["duration_minutes"],
                causes=", ".join(excursion["causes"]),
                direction=excursion["direction"],
                worst=[_worst_text(w) for w in excursion["worst"]],
            )
        )
    return rows


# Plot frame (pixels); the page scales the SVG to its width.
_WIDTH, _HEIGHT, _LEFT, _RIGHT, _TOP, _BOTTOM = 760, 220, 56, 16, 24, 34
_MAX_POINTS = 1200


def _decimate(xs: list[float], ys: list[float]) -> tuple[list[float], list[float]]:
    """Keep every extreme: the lowest and highest reading of each bucket, in time order."""
    if len(xs) <= _MAX_POINTS:
        return xs, ys
    buckets = _MAX_POINTS // 2
    size = len(xs) / buckets
    out_x: list[float] = []
    out_y: list[float] = []
    for b in range(buckets):
        lo, hi = int(b * size), max(int((b + 1) * size), int(b * size) + 1)
        indices = range(lo, min(hi, len(xs)))
        low = min(indices, key=lambda i: ys[i])
        high = max(indices, key=lambda i: ys[i])
        for i in sorted({low, high}):
            out_x.append(xs[i])
            out_y.append(ys[i])
    return out_x, out_y


def _nice_step(span: float, target: int) -> float:
    raw = span / max(target, 1)
    magnitude = 10 ** math.floor(math.log10(raw)) if raw > 0 else 1
    for factor in (1, 2, 5, 10):
        if raw <= factor * magnitude:
            return factor * magnitude
    return 10 * magnitude


def _chart(
    title: str,
    unit: str,
    seconds: list[float],
    values: list[float],
    limits: list[tuple[float, str]],
    spans: list[tuple[float, float]],
    origin: datetime.datetime,
    description: str,
) -> Chart:
    plot_w = _WIDTH - _LEFT - _RIGHT
    plot_h = _HEIGHT - _TOP - _BOTTOM
    x_max = max(seconds[-1], 1.0)
    candidates = values + [value for value, _ in limits]
    y_lo, y_hi = min(candidates), max(candidates)
    pad = max((y_hi - y_lo) * 0.08, 0.5)
    y_lo, y_hi = y_lo - pad, y_hi + pad

    def px(second: float) -> float:
        return round(_LEFT + plot_w * min(max(second, 0.0), x_max) / x_max, 1)

    def py(value: float) -> float:
        return round(_TOP + plot_h * (y_hi - value) / (y_hi - y_lo), 1)

    xs, ys = _decimate(seconds, values)
    line = ChartLine(" ".join(f"{px(x)},{py(y)}" for x, y in zip(xs, ys, strict=True)))
    step = _nice_step(y_hi - y_lo, 5)
    first = math.ceil(y_lo / step) * step
    y_ticks = []
    tick = first
    while tick <= y_hi + 1e-9:
        y_ticks.append((py(tick), f"{tick:g}"))
        tick += step
    hours = x_max / 3600
    hour_step = max(1, int(_nice_step(hours, 8)))
    x_ticks = []
    hour = 0
    while hour * 3600 <= x_max + 1e-6:
        moment = timezone.localtime(origin + datetime.timedelta(hours=hour))
        x_ticks.append((px(hour * 3600), f"{moment:%d %H:%M}"))
        hour += hour_step
    bands = [(px(a), round(px(b) - px(a), 1)) for a, b in spans]
    return Chart(
        title,
        unit,
        _WIDTH,
        _HEIGHT,
        _LEFT,
        _TOP,
        plot_w,
        plot_h,
        line,
        [(py(v), label) for v, label in limits],
        y_ticks,
        x_ticks,
        bands,
        description,
    )


def exposure_charts(summary: Mapping[str, Any]) -> list[Chart]:
    """Temperature and humidity against their limits, excursions shaded."""
    readings = summary.get("readings")
    if not readings or len(readings.get("seconds", [])) < 2:
        return []
    origin = datetime.datetime.fromisoformat(readings["origin"])
    seconds = readings["seconds"]
    verification = summary.get("verification", {})
    condition = verification.get("condition", {})
    spans = []
    for excursion in verification.get("excursions", []):
        a = (datetime.datetime.fromisoformat(excursion["start"]) - origin).total_seconds()
        b = (datetime.datetime.fromisoformat(excursion["end"]) - origin).total_seconds()
        spans.append((a, b))
    t_limits = [
        (condition["temperature_min_c"], f"min {condition['temperature_min_c']:g} °C"),
        (condition["temperature_max_c"], f"max {condition['temperature_max_c']:g} °C"),
    ]
    charts = [
        _chart(
            "Temperature (corrected)",
            "°C",
            seconds,
            readings["t"],
            t_limits,
            spans,
            origin,
            f"Corrected chamber temperature over {seconds[-1] / 3600:.1f} h against "
            f"{condition.get('text', '')}; {len(spans)} excursion(s) shaded.",
        )
    ]
    rh = readings.get("rh") or []
    pairs = [(s, h) for s, h in zip(seconds, rh, strict=False) if h is not None]
    if len(pairs) >= 2:
        rh_limits = [
            (condition[key], f"{word} {condition[key]:g} %")
            for key, word in (("rh_min_percent", "min"), ("rh_max_percent", "max"))
            if condition.get(key) is not None
        ]
        charts.append(
            _chart(
                "Relative humidity (corrected)",
                "% RH",
                [p[0] for p in pairs],
                [p[1] for p in pairs],
                rh_limits,
                spans,
                origin,
                f"Corrected relative humidity against {condition.get('text', '')}.",
            )
        )
    return charts


def run_pieces_for(user, run: ChamberRun) -> list[RunPieceRow]:
    """The run's pieces the user may see: a customer sees its own organisation's only."""
    links = (
        ChamberRunPiece.objects.filter(run=run)
        .filter(customer_filter(user, "piece__lot__order__customer_id"))
        .select_related("piece__lot__order__customer")
        .order_by("piece__ident")
    )
    rows = list(links)
    names = {
        step_key: name
        for step_key, name in PlanStep.objects.filter(
            step_key__in={link.step_key for link in rows}
        ).values_list("step_key", "name")
    }
    return [
        RunPieceRow(
            ident=link.piece.ident,
            url=link.piece.get_absolute_url(),
            lot_number=link.piece.lot.number,
            lot_url=link.piece.lot.get_absolute_url(),
            customer=link.piece.lot.order.customer.name,
            step_name=names.get(link.step_key, ""),
        )
        for link in rows
    ]


def run_page(run: ChamberRun, user) -> RunPage:
    """Everything the run page shows, materialised."""
    checks = list(
        ExposureCheck.objects.filter(run=run)
        .select_related("evidence", "checked_by")
        .order_by("-checked_at", "-id")
    )
    check = checks[0] if checks else None
    summary = check.summary if check else {}
    requirement_error = ""
    condition_text = run.condition
    hours_text = ""
    dew = None
    try:
        requirement = exposure_requirement(run.method_version)
        condition_text = requirement.condition.describe()
        hours_text = f"{requirement.required_hours:g} h"
        dew = dew_points_for(requirement.condition)
    except ValidationError as exc:
        requirement_error = " ".join(exc.messages)
    logs = list(
        Evidence.objects.filter(chamber_run=run, kind=EvidenceKind.CHAMBER_LOG)
        .select_related("uploaded_by")
        .order_by("-uploaded_at", "-id")
    )
    return RunPage(
        run=run,
        pieces=run_pieces_for(user, run),
        check=check,
        earlier_checks=checks[1:],
        excursions=excursion_rows(summary),
        charts=exposure_charts(summary),
        logs=logs,
        condition_text=condition_text,
        requirement_error=requirement_error,
        dew_point=dew,
        cautions=cautions_for(run.method_version.hazards),
        hours_text=hours_text,
    )


def chamber_instruments():
    """Instruments that can hold a chamber run: in service, and named a chamber or cabinet."""
    return Instrument.objects.filter(in_service=True).filter(
        Q(kind__icontains="chamber") | Q(kind__icontains="cabinet")
    )


def logger_instruments():
    """Instruments in service whose kind names a data logger."""
    return Instrument.objects.filter(in_service=True, kind__icontains="logger")
