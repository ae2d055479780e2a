"""Reads for the bench pages, materialised for templates (no lazy queries left)."""

from __future__ import annotations

import re
import uuid
from collections import defaultdict
from dataclasses import dataclass, field
from typing import Any
from urllib.parse import unquote, urlsplit

from django.db.models import Prefetch
from django.utils import timezone

from durability.models import Instrument, ParameterStatus
from durability.models.methods import TYPED_PARAMETERS
from durability.safety import Caution, cautions_for
from labrecords import clock
from labrecords.models import (
    ChamberRun,
    Consumable,
    Evidence,
    EvidenceKind,
    Lot,
    MethodAuthorisation,
    Nonconformance,
    Observation,
    PlanStep,
    StepResult,
    StepResultConsumable,
    StepResultInstrument,
    WitnessPiece,
)
from labrecords.selectors_progress import progress_of_pieces
from labrecords.services.bench import current_released_plan
from labrecords.services.instruments import CalibrationState, instrument_state

_PIECE_URL = re.compile(r"/pieces/([^/?#]+)/?")


def piece_ident_from_scan(text: str) -> str:
    """The piece ID a scanner typed: the ID itself, or the piece page URL from a QR code."""
    text = text.strip()
    if "/" in text:
        match = _PIECE_URL.search(urlsplit(text).path if "://" in text else text)
        if match:
            return unquote(match.group(1)).strip()
    return text


@dataclass(frozen=True)
class OpenStep:
    """A step the piece can be recorded for now."""

    step: PlanStep
    plan_number: int
    sequence_label: str
    cautions: list[Caution] = field(default_factory=list)


def open_steps(piece: WitnessPiece) -> list[OpenStep]:
    """The piece's open step in the lot's current released plan: the first step of its
    sequence without a current result (a list, for a piece that would have several)."""
    progress = progress_of_pieces([piece]).get(piece.pk)
    if progress is None or progress.open_step is None:
        return []
    step = (PlanStep.objects.select_related("sequence", "method_version__method__standard")
            .get(pk=progress.open_step.pk))
    return [OpenStep(step=step, plan_number=progress.plan.number,
                     sequence_label=step.sequence.label, cautions=_cautions(step))]


def _cautions(step: PlanStep) -> list[Caution]:
    return cautions_for(step.hazards or step.method_version.hazards)


@dataclass
class ScanOutcome:
    """What a scan found: the piece and its open steps, or the message to show."""

    text: str
    piece: WitnessPiece | None = None
    steps: list[OpenStep] = field(default_factory=list)
    error: str = ""


def resolve_scan(user, text: str, lot_number: str = "") -> ScanOutcome:
    """Find the scanned piece among those the user may see and its open step(s)."""
    ident = piece_ident_from_scan(text)
    outcome = ScanOutcome(text=ident)
    if not ident:
        outcome.error = "Scan or type a piece ID."
        return outcome
    piece = (WitnessPiece.objects.visible_to(user).select_related("lot__order__customer")
             .filter(ident__iexact=ident).first())
    if piece is None:
        outcome.error = f"No witness piece {ident} is known."
        return outcome
    outcome.piece = piece
    lot_number = lot_number.strip()
    if lot_number and piece.lot.number.lower() != lot_number.lower():
        outcome.error = (f"Piece {piece.ident} belongs to lot {piece.lot.number}, not to lot "
                         f"{lot_number} chosen above. Clear the lot to record it.")
        return outcome
    if current_released_plan(piece.lot) is None:
        outcome.error = f"Lot {piece.lot.number} has no released test plan yet."
        return outcome
    outcome.steps = open_steps(piece)
    if not outcome.steps:
        outcome.error = (f"Piece {piece.ident} has no open step: every step of its sequence "
                         "has a result, or it goes through no sequence of the plan.")
    return outcome


@dataclass(frozen=True)
class InstrumentRow:
    instrument: Instrument
    state: CalibrationState


def instrument_rows(queryset=None) -> list[InstrumentRow]:
    """Instruments with their calibration status today."""
    today = timezone.localdate(clock.now())
    instruments = queryset if queryset is not None else Instrument.objects.order_by("ident")
    return [InstrumentRow(i, instrument_state(i, today)) for i in instruments]


def chamber_runs_for(step: PlanStep, piece: WitnessPiece) -> list[ChamberRun]:
    """The chamber runs that held the piece for this step, latest first."""
    return list(ChamberRun.objects.filter(pieces__piece=piece, pieces__step_key=step.step_key)
                .select_related("chamber").order_by("-loaded_at"))


def consumables_for_picker() -> list[Consumable]:
    return list(Consumable.objects.order_by("kind", "name", "-expiry"))


def is_authorised(user, step: PlanStep) -> bool:
    return MethodAuthorisation.objects.filter(
        user=user, method_id=step.method_version.method_id, revoked_at__isnull=True).exists()


def initial_observation(piece: WitnessPiece) -> Observation | None:
    return (Observation.objects.current().filter(piece=piece, point="initial")
            .select_related("recorded_by").order_by("-observed_at", "-pk").first())


def parameter_rows(step: PlanStep) -> list[dict[str, object]]:
    """The plan's parameter values for the step, as rows to show."""
    statuses = dict(ParameterStatus.choices)
    rows = []
    for name, spec in step.parameters.items():
        spec = spec if isinstance(spec, dict) else {"value": spec}
        status = str(spec.get("status", ""))
        label = TYPED_PARAMETERS.get(name, (name.replace("_", " ").capitalize(), ""))[0]
        rows.append({"name": label, "value": spec.get("value"), "unit": spec.get("unit", ""),
                     "status": statuses.get(status, status.replace("_", " "))})
    return rows


def _revisions(queryset) -> list[StepResult]:
    return list(
        queryset.select_related("recorded_by", "invalid_authorised_by", "step", "chamber_run",
                                "superseded_by", "observation", "piece")
        .prefetch_related(
            Prefetch("instrument_links",
                     queryset=StepResultInstrument.objects.select_related("instrument")),
            Prefetch("consumable_links",
                     queryset=StepResultConsumable.objects.select_related("consumable")))
        .order_by("number"))


def result_history(record_key: uuid.UUID) -> list[StepResult]:
    """Every revision of one result, oldest first, with instruments and consumables."""
    return _revisions(StepResult.objects.filter(record_key=record_key))


def step_photos(piece: WitnessPiece, step_key: uuid.UUID) -> list[Evidence]:
    return list(Evidence.objects.filter(piece=piece, step_key=step_key, kind=EvidenceKind.PHOTO)
                .select_related("uploaded_by").order_by("uploaded_at", "pk"))


def result_nonconformances(record_key: uuid.UUID) -> list[Nonconformance]:
    return list(Nonconformance.objects.filter(result__record_key=record_key)
                .select_related("disposed_by").order_by("opened_at"))


@dataclass
class PieceStepRow:
    """One step of a piece's sequence with every revision of its result."""

    step: PlanStep
    revisions: list[StepResult]

    @property
    def current(self) -> StepResult | None:
        return self.revisions[-1] if self.revisions else None


def piece_step_rows(piece: WitnessPiece) -> list[PieceStepRow]:
    """The steps of the piece's sequences in the current plan with their results, and any
    result on the piece for a step no longer in the plan."""
    plan = current_released_plan(piece.lot)
    results = defaultdict(list)
    for result in _revisions(StepResult.objects.filter(piece=piece)):
        results[result.step_key].append(result)
    rows = []
    if plan is not None:
        sequences = plan.assignments.filter(piece=piece).values_list("sequence_id", flat=True)
        for step in (PlanStep.objects.filter(plan=plan, sequence_id__in=list(sequences))
                     .select_related("sequence", "method_version__method")
                     .order_by("sequence__position", "order")):
            rows.append(PieceStepRow(step=step, revisions=results.pop(step.step_key, [])))
    for revisions in results.values():
        rows.append(PieceStepRow(step=revisions[0].step, revisions=revisions))
    return rows


def lots_in_test() -> list[Lot]:
    """Lots a bench user may filter by: those with a released plan and results to record."""
    return list(Lot.objects.filter(plans__status="released").exclude(
        stage__in=["signed", "report_issued"]).distinct().order_by("number"))


def _num(value: Any) -> str:
    return f"{value:g}" if isinstance(value, int | float) else str(value)


def value_lines(values: dict[str, Any]) -> list[str]:
    """What was entered for a result, as short lines for the record's page."""
    lines: list[str] = []
    if "coating_removed" in values:
        where = values.get("removal_location") or ""
        lines.append("Coating removed: " + (f"yes, {where}" if values["coating_removed"]
                                             else "no"))
    grade = values.get("crosshatch")
    if grade:
        share = grade.get("share_pct")
        lines.append(f"Crosshatch: ISO 2409 class {grade['iso2409']}, ASTM D3359 "
                     f"{grade['astm_d3359']}"
                     + (f", from {_num(share)} % detached" if share is not None else ""))
    if values.get("strokes") is not None:
        lines.append(f"Abrasion: {values['strokes']} strokes at {_num(values.get('force_n'))} N")
    if values.get("solution"):
        lines.append(f"Immersion: {values['solution']}, {_num(values.get('immersion_min'))} min")
    if values.get("chamber_run"):
        lines.append(f"Chamber run {values['chamber_run']}")
    inspection = values.get("inspection")
    if inspection:
        if inspection.get("no_defects"):
            seen = "no defects observed"
        else:
            seen = "; ".join(
                ", ".join(str(p) for p in (
                    str(d.get("defect", "")).replace("_", " "), d.get("zone"), d.get("extent"),
                    *(f"{k} {d[k]}" for k in ("quantity", "size", "intensity") if k in d))
                    if p)
                for d in inspection.get("defects", []))
        how = ", ".join(inspection.get(k) for k in ("lighting", "background", "magnification")
                        if inspection.get(k))
        lines.append(f"Inspection: {seen}" + (f" ({how})" if how else ""))
    comparison = values.get("comparison")
    if comparison:
        changes = [f"new: {d}" for d in comparison.get("new_defects", [])]
        changes += comparison.get("worsened", [])
        lines.append("Against the initial inspection: "
                     + ("; ".join(changes) if changes else "no new or worse defect"))
    sd = values.get("scratch_dig")
    if sd:
        aperture = (f"aperture {_num(sd['aperture_diameter_mm'])} mm"
                    if sd.get("aperture_diameter_mm") is not None
                    else f"aperture area {_num(sd.get('aperture_area_mm2'))} mm²")
        scratches = ", ".join(f"{s['number']} × {_num(s['length_mm'])} mm"
                              for s in sd.get("scratches", [])) or "none"
        digs = ", ".join(_num(d["length_mm"]) + (f" × {_num(d['width_mm'])}"
                                                 if d.get("width_mm") else "") + " mm"
                         for d in sd.get("digs", [])) or "none"
        lines.append(f"Scratch-dig: {aperture}; scratches {scratches}; digs {digs}")
    iso = values.get("iso10110")
    if iso:
        parts = [f"{label} {', '.join(_num(v) for v in iso.get(key, []))} mm"
                 for key, label in (("imperfections_mm", "imperfections"),
                                    ("dig_diameters_mm", "digs"),
                                    ("coating_imperfections_mm", "coating"),
                                    ("edge_chips_mm", "edge chips")) if iso.get(key)]
        parts += [f"scratch {_num(s['length_mm'])} × {_num(s['width_mm'])} mm"
                  for s in iso.get("scratches", [])]
        lines.append("ISO 10110-7 counts: " + ("; ".join(parts) or "none seen"))
    for stat in values.get("spectral", []):
        band = stat["band_nm"]
        u = stat.get("expanded_uncertainty")
        lines.append(f"{stat['statistic'].capitalize()} {stat['quantity']} over "
                     f"{_num(band[0])}–{_num(band[1])} nm: {_num(stat['value'])} %"
                     + (f" (U = {_num(u)} %)" if u is not None else ""))
    judgement = values.get("judgement")
    if judgement:
        lines.append(f"Judgement: {judgement.get('outcome')}: {judgement.get('reason')}")
    if values.get("notes"):
        lines.append(f"Notes: {values['notes']}")
    return lines


def with_lines(results: list[StepResult]) -> list[StepResult]:
    """Attach each revision's value lines (`lines`) for the template."""
    for result in results:
        result.lines = value_lines(result.values or {})
    return results
