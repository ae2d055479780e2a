"""Reads for reviews, reports and result exports, materialised into plain dataclasses.

`lot_results` answers "which step on which piece has which current result". `report_content`
gathers everything a report prints (ISO/IEC 17025 7.8.2.1 a-p, per
shared/reference/records-and-security.md [pub]) into the frozen dataclasses of
`labrecords.reporting.content`, holding only strings, numbers, dates and tuples: the PDF
layout (labrecords.reporting.pdf) and the HTML preview read the same object, and neither
can trigger a query.
"""

from __future__ import annotations

import datetime
import hashlib
import zoneinfo
from collections import defaultdict
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from django.conf import settings
from django.core.files.storage import default_storage
from django.db.models import Q

from durability.errors import InputError
from durability.verdicts import DecisionRule as VerdictDecisionRule
from labrecords.lab import lab_identity
from labrecords.models import (
    ChamberRunPiece,
    DecisionRule,
    Evidence,
    EvidenceKind,
    ExposureCheck,
    InspectionPoint,
    Lot,
    Observation,
    PlanStep,
    Report,
    ReportKind,
    Review,
    ReviewedResult,
    Signature,
    SignatureMeaning,
    StepResult,
    TestPlan,
    Verdict,
    WitnessPiece,
)
from labrecords.reporting.content import (
    ChangeLine,
    ConformityBlock,
    CustomerBlock,
    DatesBlock,
    ExposureLine,
    ExternalLine,
    ItemsBlock,
    LabBlock,
    LimitLine,
    MethodLine,
    PieceLine,
    ReportContent,
    ReportHeader,
    ResultLine,
    SignatureBlock,
    SpectrumPlotData,
)
from labrecords.reporting.text import label_and_unit, number_text, value_text, values_lines

# Spectra longer than this are thinned (every k-th point, ends kept) for the plot only.
PLOT_MAX_POINTS = 1500


# ---------------------------------------------------------------- the lot's results


@dataclass(frozen=True)
class PlannedResult:
    """One step of the lot's current plan on one assigned piece, with its current result."""

    step: PlanStep
    piece: WitnessPiece
    result: StepResult | None
    repeated: bool  # a retest step of the plan repeats this step on new pieces

    @property
    def where(self) -> str:
        return (
            f"piece {self.piece.ident}, step {self.step.sequence.label}.{self.step.order} "
            f"{self.step.name}"
        )

    @property
    def counts(self) -> bool:
        """Whether the result enters the conformity statement."""
        return self.result is not None and not (
            self.repeated and self.result.verdict == Verdict.INVALID
        )


@dataclass(frozen=True)
class LotResults:
    lot: Lot
    plan: TestPlan | None
    planned: tuple[PlannedResult, ...]

    @property
    def results(self) -> list[StepResult]:
        return [p.result for p in self.planned if p.result is not None]

    def problems(self) -> list[str]:
        """What keeps the results from being complete, each naming the item."""
        if self.plan is None:
            return ["a released test plan for the lot"]
        if not self.planned:
            return ["steps on witness pieces in the released plan"]
        problems = []
        for row in self.planned:
            if row.result is None:
                problems.append(f"a result for {row.where}")
            elif row.result.verdict == Verdict.INVALID and not row.repeated:
                problems.append(
                    f"a valid result for {row.where} (the recorded one is invalid: the test "
                    "does not count; repeat it or plan a retest)"
                )
        return problems


def current_plan(lot: Lot) -> TestPlan | None:
    """The lot's released plan that no released revision supersedes."""
    return TestPlan.objects.current_released().filter(lot=lot).order_by("-number").first()


def lot_results(lot: Lot) -> LotResults:
    """Every (step, piece) pair of the current plan with its current result. Five queries."""
    plan = current_plan(lot)
    if plan is None:
        return LotResults(lot=lot, plan=None, planned=())
    steps = list(
        plan.steps.select_related(
            "sequence", "retest_of", "method_version__method__standard"
        ).order_by("sequence__position", "order")
    )
    pieces_by_sequence: dict[int, list[WitnessPiece]] = defaultdict(list)
    for assignment in plan.assignments.select_related("piece__glass").order_by("piece__ident"):
        pieces_by_sequence[assignment.sequence_id].append(assignment.piece)
    current = {
        (r.step_key, r.piece_id): r
        for r in StepResult.objects.current()
        .filter(piece__lot=lot)
        .select_related("recorded_by", "chamber_run__chamber", "invalid_authorised_by")
    }
    repeated = {s.retest_of.step_key for s in steps if s.retest_of_id is not None}
    planned = tuple(
        PlannedResult(
            step=step,
            piece=piece,
            result=current.get((step.step_key, piece.pk)),
            repeated=step.step_key in repeated,
        )
        for step in steps
        for piece in pieces_by_sequence[step.sequence_id]
    )
    return LotResults(lot=lot, plan=plan, planned=planned)


def review_void_reasons(review: Review) -> list[str]:
    """Why a review no longer holds: each covered revision that a correction superseded."""
    corrected = (
        ReviewedResult.objects.filter(review=review, result__superseded_by__isnull=False)
        .select_related("result__piece", "result__step", "result__superseded_by__recorded_by")
        .order_by("result__piece__ident", "result__step__order")
    )
    reasons = []
    for link in corrected:
        result = link.result
        newer = result.superseded_by
        reasons.append(
            f"the result for piece {result.piece.ident}, step {result.step.name} was corrected "
            f"by {newer.recorded_by} after the review ({newer.reason})"
        )
    return reasons


def review_is_void(review: Review) -> bool:
    """A review is void once any revision it covers is superseded (computed, never stored)."""
    return ReviewedResult.objects.filter(
        review=review, result__superseded_by__isnull=False
    ).exists()


def latest_review(lot: Lot) -> Review | None:
    return lot.reviews.select_related("reviewer").order_by("-reviewed_at", "-id").first()


def in_force_report(lot: Lot) -> Report | None:
    """The lot's report (or re-issue) that no re-issue replaced, or None."""
    return (
        Report.objects.filter(
            lot=lot, kind__in=[ReportKind.REPORT, ReportKind.REISSUE], replaced_by__isnull=True
        )
        .order_by("-issued_at")
        .first()
    )


# ---------------------------------------------------------------- report content


def lab_zone() -> zoneinfo.ZoneInfo:
    return zoneinfo.ZoneInfo(settings.TIME_ZONE)


def _local(moment: datetime.datetime | None) -> datetime.datetime | None:
    return moment.astimezone(lab_zone()) if moment is not None else None


def signature_block(signature: Signature) -> SignatureBlock:
    return SignatureBlock(
        printed_name=signature.printed_name,
        role=signature.role,
        meaning=signature.meaning,
        meaning_label=SignatureMeaning(signature.meaning).label,
        signed_at=signature.signed_at.astimezone(zoneinfo.ZoneInfo(signature.time_zone)),
        time_zone=signature.time_zone,
    )


def printed_name(user) -> str:
    return user.get_full_name().strip() or user.get_username()


def decision_rule_text(rule: str) -> str:
    """The order's decision rule in words, from the verdict code's own sentence."""
    kind = "guarded" if rule == DecisionRule.GUARD_BAND else "simple"
    sentence = VerdictDecisionRule(kind=kind).sentence.removeprefix("decision rule: ")
    return sentence[:1].upper() + sentence[1:] + "."


def _condition_on_receipt(observation: Observation | None) -> str:
    if observation is None:
        return "not recorded"
    if observation.no_defects:
        return "no defects observed"
    parts = []
    for defect in observation.defects:
        text = defect.get("defect", "").replace("_", " ")
        where = ", ".join(x for x in (defect.get("zone", ""), defect.get("extent", "")) if x)
        parts.append(f"{text} ({where})" if where else text)
    return "; ".join(parts)


def _items(lot: Lot, pieces: Sequence[WitnessPiece]) -> ItemsBlock:
    initial = {
        o.piece_id: o
        for o in Observation.objects.current()
        .filter(piece__lot=lot, point=InspectionPoint.INITIAL)
        .order_by("recorded_at")
    }
    design = lot.design
    detail = ", ".join(
        x
        for x in (
            design.get_coating_type_display(),
            design.materials,
            f"{design.layer_count} layer(s)",
            design.process,
        )
        if x
    )
    spec = lot.spec
    represents = f"{lot.parts} (coating run {lot.number}, {lot.quantity} part(s))"
    return ItemsBlock(
        lot_number=lot.number,
        coater=lot.coater.name,
        design=f"{design.code} {design.name}",
        design_detail=detail,
        glass=spec.glass.name if spec.glass else "not stated",
        parts=lot.parts,
        quantity=lot.quantity,
        spec=f"{spec.part_number} {spec.title}".strip(),
        callouts=spec.callout_text.strip(),
        pieces=tuple(
            PieceLine(
                ident=p.ident,
                glass=p.glass.name,
                position=p.position or "not recorded",
                represents=represents,
                condition_on_receipt=_condition_on_receipt(initial.get(p.pk)),
            )
            for p in pieces
        ),
    )


def _methods(steps: Iterable[PlanStep]) -> tuple[MethodLine, ...]:
    seen: dict[tuple[int, tuple[str, ...], tuple[str, ...]], MethodLine] = {}
    for step in steps:
        version = step.method_version
        method = version.method
        parameters = []
        deviations = []
        for name, spec in step.parameters.items():
            if not isinstance(spec, dict) or spec.get("value") in (None, ""):
                continue
            label, suffix_unit = label_and_unit(name)
            unit = spec.get("unit") or suffix_unit
            space = "" if unit in ("°", "") else " "
            text = f"{label} {value_text(spec['value'])}{space}{unit}"
            parameters.append(text)
            if spec.get("status") == "plan_value":
                deviations.append(f"{text}, set in the test plan instead of the method's value")
        key = (version.pk, tuple(parameters), tuple(deviations))
        if key not in seen:
            seen[key] = MethodLine(
                code=method.code,
                name=method.name,
                standard=method.standard.designation,
                edition=method.standard.edition or "edition not stated",
                clause=method.clause or "not stated",
                version=version.number,
                parameters=tuple(parameters),
                deviations=tuple(deviations) or ("none",),
            )
    return tuple(seen.values())


def _uncertainty(result: StepResult) -> str:
    if result.uncertainty is None:
        return ""
    text = number_text(result.uncertainty.normalize())
    return f"± {text} {result.uncertainty_unit}".strip()


def _results(
    rows: Sequence[PlannedResult],
) -> tuple[tuple[ResultLine, ...], tuple[ExternalLine, ...]]:
    markers: dict[tuple[str, str, str], str] = {}
    covers: dict[str, list[str]] = defaultdict(list)
    lines = []
    for row in sorted(rows, key=lambda r: (r.piece.ident, r.step.sequence.position, r.step.order)):
        result = row.result
        if result is None:
            continue
        marker = ""
        if result.external_provider:
            key = (
                result.external_provider,
                result.external_report_ref,
                result.external_accreditation,
            )
            marker = markers.setdefault(key, f"E{len(markers) + 1}")
            covers[marker].append(row.where)
        lines.append(
            ResultLine(
                piece=row.piece.ident,
                step=f"{row.step.sequence.label}.{row.step.order} {row.step.name}",
                method=row.step.method_version.method.code,
                values=values_lines(result.values),
                verdict=result.verdict,
                verdict_label=Verdict(result.verdict).label,
                reason=result.verdict_reason,
                clause=result.verdict_clause,
                uncertainty=_uncertainty(result),
                observed=_local(result.observed_at),
                revision=result.number,
                external_marker=marker,
                counts=row.counts,
                note="" if row.counts else "does not count: repeated by a retest on new pieces",
            )
        )
    reports = _provider_reports(rows) if markers else {}
    externals = tuple(
        ExternalLine(
            marker=marker,
            provider=provider,
            report_ref=ref or "not recorded",
            accreditation=accreditation or "not stated",
            covers=tuple(covers[marker]),
            evidence=tuple(reports.get(provider, ())) or ("no provider report attached",),
        )
        for (provider, ref, accreditation), marker in markers.items()
    )
    return tuple(lines), externals


def _provider_reports(rows: Sequence[PlannedResult]) -> dict[str, list[str]]:
    """File names of the provider reports attached to the external results, by provider."""
    wanted = {
        (r.piece.pk, r.result.step_key): r.result.external_provider
        for r in rows
        if r.result is not None and r.result.external_provider
    }
    lot_id = rows[0].piece.lot_id
    found: dict[str, list[str]] = defaultdict(list)
    for evidence in Evidence.objects.filter(
        Q(piece__lot_id=lot_id) | Q(lot_id=lot_id), kind=EvidenceKind.PROVIDER_REPORT
    ).order_by("uploaded_at", "id"):
        provider = wanted.get((evidence.piece_id, evidence.step_key)) or next(
            (
                p
                for (_, key), p in wanted.items()
                if evidence.piece_id is None and key == evidence.step_key
            ),
            None,
        )
        if provider and evidence.original_name not in found[provider]:
            found[provider].append(evidence.original_name)
    return found


def provider_report_missing(planned: Sequence[PlannedResult]) -> list[str]:
    """External results without their provider's report attached, each named."""
    rows = [r for r in planned if r.result is not None and r.result.external_provider]
    if not rows:
        return []
    lot_id = rows[0].piece.lot_id
    attached = set(
        Evidence.objects.filter(
            Q(piece__lot_id=lot_id) | Q(lot_id=lot_id), kind=EvidenceKind.PROVIDER_REPORT
        ).values_list("piece_id", "step_key")
    )
    missing = []
    for row in rows:
        key = row.result.step_key
        if (row.piece.pk, key) not in attached and (None, key) not in attached:
            missing.append(
                f"the outside provider's report ({row.result.external_provider}) attached to "
                f"{row.where}"
            )
        if not row.result.external_report_ref:
            missing.append(f"the outside provider's report reference for {row.where}")
    return missing


def _exposures(rows: Sequence[PlannedResult]) -> tuple[ExposureLine, ...]:
    runs = {
        r.result.chamber_run.pk: r.result.chamber_run
        for r in rows
        if r.result is not None and r.result.chamber_run is not None
    }
    if not runs:
        return ()
    latest: dict[int, ExposureCheck] = {}
    for check in ExposureCheck.objects.filter(run_id__in=runs).order_by(
        "run", "-checked_at", "-id"
    ):
        latest.setdefault(check.run_id, check)
    lot_piece_ids = {r.piece.pk for r in rows}
    pieces: dict[int, list[str]] = defaultdict(list)
    for link in (
        ChamberRunPiece.objects.filter(run_id__in=runs)
        .select_related("piece")
        .order_by("piece__ident")
    ):
        if link.piece_id in lot_piece_ids:
            pieces[link.run_id].append(link.piece.ident)
    lines = []
    for run in sorted(runs.values(), key=lambda r: r.loaded_at):
        check = latest.get(run.pk)
        summary = check.summary if check is not None else {}
        lines.append(
            ExposureLine(
                run=run.ident,
                chamber=f"{run.chamber.ident} {run.chamber.name}",
                condition=run.condition,
                loaded=_local(run.loaded_at),
                unloaded=_local(run.unloaded_at),
                pieces=tuple(pieces[run.pk]),
                in_tolerance_hours=_float(summary.get("in_tolerance_hours")),
                required_hours=_float(summary.get("required_hours")),
                counts=check.counts if check is not None else None,
                convention=str(
                    summary.get("convention_text") or (check.convention if check else "")
                ),
                checked=check is not None,
            )
        )
    return tuple(lines)


def _float(value: object) -> float | None:
    try:
        return float(value) if value is not None else None
    except (TypeError, ValueError):
        return None


def _evidence_bytes(evidence: Evidence) -> bytes:
    with default_storage.open(evidence.file.name, "rb") as handle:
        data = handle.read()
    if hashlib.sha256(data).hexdigest() != evidence.sha256:
        raise InputError(f"the stored file of evidence {evidence.pk} does not match its SHA-256")
    return data


def _thin(points: Sequence[tuple[float, float]]) -> tuple[tuple[float, float], ...]:
    if len(points) <= PLOT_MAX_POINTS:
        return tuple(points)
    step = -(-len(points) // PLOT_MAX_POINTS)
    kept = list(points[::step])
    if kept[-1] != points[-1]:
        kept.append(points[-1])
    return tuple(kept)


def _spec_limits(lot: Lot, unit: str) -> tuple[LimitLine, ...]:
    spec = lot.spec
    if spec.wavelength_min_nm is None or spec.wavelength_max_nm is None or not spec.quantity:
        return ()
    lines = []
    scale = 1.0 if unit == "%" else 0.01
    for bound, word in ((spec.limit_max_pct, "max"), (spec.limit_min_pct, "min")):
        if bound is None:
            continue
        statistic = spec.get_statistic_display().lower() if spec.statistic else "limit"
        lines.append(
            LimitLine(
                start_nm=float(spec.wavelength_min_nm),
                end_nm=float(spec.wavelength_max_nm),
                value=float(bound) * scale,
                label=f"{spec.quantity} {word} {number_text(bound.normalize())} % ({statistic})",
            )
        )
    return tuple(lines)


def _spectra(lot: Lot, pieces: Sequence[WitnessPiece]) -> tuple[SpectrumPlotData, ...]:
    """One plot per piece with spectra: its first 'before' and last 'after' spectrum."""
    from durability.spectra import parse_spectrum

    by_piece: dict[int, list[Evidence]] = defaultdict(list)
    for evidence in Evidence.objects.filter(piece__lot=lot, kind=EvidenceKind.SPECTRUM).order_by(
        "uploaded_at", "id"
    ):
        by_piece[evidence.piece_id].append(evidence)
    plots = []
    for piece in pieces:
        files = by_piece.get(piece.pk)
        if not files:
            continue
        if any(e.stage for e in files):
            befores = [e for e in files if e.stage == "before"][:1]
            afters = [e for e in files if e.stage == "after"][-1:]
        else:  # no stage recorded: the first upload is before, the last after
            befores, afters = files[:1], files[1:][-1:]
        chosen = [("before", e) for e in befores] + [("after", e) for e in afters]
        curves: dict[str, tuple[tuple[float, float], ...]] = {}
        labels: dict[str, str] = {}
        notes: list[str] = []
        quantity, unit = "", "%"
        for stage, evidence in chosen:
            # Read the file again with the options its import used (the evidence services
            # keep them in the summary), so the curve is the one that was checked.
            options = (evidence.summary.get("import") or {}).get("options") or {}
            try:
                spectrum = parse_spectrum(
                    _evidence_bytes(evidence),
                    filename=evidence.original_name,
                    quantity=options.get("quantity") or None,
                    x_unit=options.get("x_unit") or None,
                    y_unit=options.get("y_unit") or None,
                )
            except (InputError, OSError) as exc:
                notes.append(f"{stage} spectrum {evidence.original_name} not drawn: {exc}")
                continue
            quantity = quantity or (spectrum.quantity or "")
            shown = spectrum.in_unit("%")
            curves[stage] = _thin(list(zip(shown.wavelength_nm, shown.values, strict=True)))
            labels[stage] = f"{stage} ({_local(evidence.uploaded_at):%Y-%m-%d})"
        if "before" not in curves and "after" not in curves:
            if notes:
                plots.append(
                    SpectrumPlotData(
                        title=f"Piece {piece.ident}",
                        quantity=quantity,
                        unit=unit,
                        before=(),
                        after=(),
                        before_label="",
                        after_label="",
                        limits=(),
                        notes=tuple(notes),
                    )
                )
            continue
        plots.append(
            SpectrumPlotData(
                title=f"Piece {piece.ident}: {quantity or 'R or T'} before and after the tests",
                quantity=quantity,
                unit=unit,
                before=curves.get("before", ()),
                after=curves.get("after", ()),
                before_label=labels.get("before", ""),
                after_label=labels.get("after", ""),
                limits=_spec_limits(lot, unit),
                notes=tuple(notes),
            )
        )
    return tuple(plots)


def _conformity(lot: Lot, planned: Sequence[PlannedResult], rule: str) -> ConformityBlock:
    counted = [r for r in planned if r.counts]
    failing = tuple(
        f"{r.where}: {r.result.verdict_reason}" for r in counted if r.result.verdict == Verdict.FAIL
    )
    invalid = [r for r in counted if r.result.verdict == Verdict.INVALID]
    spec = lot.spec
    specification = (
        f"coating spec {spec.part_number}"
        + (f" ({spec.title})" if spec.title else "")
        + (f", callouts: {' / '.join(spec.callout_text.split())}" if spec.callout_text else "")
    )
    pieces = sorted({r.piece.ident for r in counted})
    covers = (
        (
            f"the {len(counted)} counted result(s) in the results section, on witness "
            f"piece(s) {', '.join(pieces)}"
        )
        if counted
        else "no results"
    )
    if not counted:
        statement = "No conformity statement: no results are recorded."
        conforms = False
    elif failing or invalid:
        conforms = False
        statement = (
            f"Lot {lot.number} does NOT conform to {specification}: "
            f"{len(failing)} of {len(counted)} result(s) failed their acceptance "
            "criterion" + (f" and {len(invalid)} did not count" if invalid else "") + "."
        )
    else:
        conforms = True
        statement = (
            f"Lot {lot.number} conforms to {specification}: all {len(counted)} "
            "result(s) met their acceptance criterion."
        )
    return ConformityBlock(
        conforms=conforms,
        statement=statement,
        covers=covers,
        specification=specification,
        decision_rule=DecisionRule(rule).label,
        decision_rule_text=decision_rule_text(rule),
        failing=failing,
    )


def _changes(old_review: Review, planned: Sequence[PlannedResult]) -> tuple[ChangeLine, ...]:
    """Results that differ from the revisions the earlier review covered."""
    old = {
        link.result.record_key: link.result
        for link in ReviewedResult.objects.filter(review=old_review).select_related(
            "result__piece", "result__step"
        )
    }
    lines = []
    for row in planned:
        result = row.result
        if result is None:
            continue
        before = old.pop(result.record_key, None)
        if before is not None and before.pk == result.pk:
            continue
        lines.append(
            ChangeLine(
                piece=row.piece.ident,
                step=f"{row.step.sequence.label}.{row.step.order} {row.step.name}",
                before=_result_text(before) if before else "no result",
                after=_result_text(result),
                why=result.reason
                or ("added after the report was issued" if before is None else ""),
            )
        )
    for result in old.values():
        lines.append(
            ChangeLine(
                piece=result.piece.ident,
                step=result.step.name,
                before=_result_text(result),
                after="no longer reported",
                why="the step left the test plan",
            )
        )
    return tuple(lines)


def _result_text(result: StepResult) -> str:
    values = "; ".join(values_lines(result.values))
    return f"{Verdict(result.verdict).label} (revision {result.number})" + (
        f": {values}" if values else ""
    )


def report_content(
    lot: Lot,
    *,
    header: ReportHeader,
    review: Review | None,
    authorisation: SignatureBlock | None,
    amended_review: Review | None = None,
) -> ReportContent:
    """Everything the report prints, gathered now (no lazy query is left in the result).

    `review` supplies the review signature; `amended_review` (for an amendment) is the review
    the amended report rested on, and the results that changed since are listed.
    """
    lot = Lot.objects.select_related("order__customer", "spec__glass", "design", "coater").get(
        pk=lot.pk
    )
    state = lot_results(lot)
    planned = state.planned
    pieces = sorted({p.piece.pk: p.piece for p in planned}.values(), key=lambda p: p.ident) or list(
        lot.pieces.select_related("glass").order_by("ident")
    )
    customer = lot.order.customer
    identity = lab_identity()
    observed = [_local(r.result.observed_at) for r in planned if r.result is not None]
    results, externals = _results(planned)
    review_signature = None
    if review is not None:
        signature = review.signatures.filter(meaning=SignatureMeaning.REVIEW).first()
        review_signature = signature_block(signature) if signature is not None else None
    statements = (
        "The results relate only to the items tested: the witness pieces of lot "
        f"{lot.number}, coated in the same run as the parts they represent.",
        "The tests were done at the laboratory's address above, except results marked as from "
        "an outside provider.",
        "This report may be reproduced only in full, unless the laboratory agrees in writing.",
    )
    return ReportContent(
        header=header,
        lab=LabBlock(
            name=identity.name,
            address=identity.address,
            time_zone=settings.TIME_ZONE,
            accreditation=identity.accreditation,
        ),
        customer=CustomerBlock(
            name=customer.name,
            contact_name=customer.contact_name,
            contact_email=customer.contact_email,
            address=customer.address,
            order_number=lot.order.number,
            customer_order_number=lot.order.customer_order_number,
        ),
        items=_items(lot, pieces),
        dates=DatesBlock(
            coating_run=lot.run_date,
            received=lot.received_on,
            tested_from=min(observed).date() if observed else None,
            tested_to=max(observed).date() if observed else None,
            issued=header.issued_at,
        ),
        methods=_methods(p.step for p in planned) if planned else (),
        results=results,
        externals=externals,
        exposures=_exposures(planned),
        spectra=_spectra(lot, pieces),
        conformity=_conformity(lot, planned, lot.order.decision_rule),
        statements=statements,
        review_signature=review_signature,
        authorisation=authorisation,
        changes=_changes(amended_review, planned) if amended_review is not None else (),
        conventions=tuple(
            dict.fromkeys(
                str(text)
                for row in planned
                if row.result is not None
                for text in (row.result.conventions or [])
                if text
            )
        ),
    )


# ---------------------------------------------------------------- lists and exports


def lots_awaiting() -> dict[str, list[Lot]]:
    """Lots whose results wait for a review, and lots signed but without a report."""
    from labrecords.models import LotStage

    listed = Lot.objects.for_listing().order_by("order__due_date", "number")
    return {
        "review": list(listed.filter(stage=LotStage.RESULTS_COMPLETE)[:100]),
        "issue": list(listed.filter(stage=LotStage.SIGNED)[:100]),
    }


def latest_issued(lot: Lot) -> Report | None:
    """The newest document of the lot's report in force (the report or its latest amendment)."""
    report = in_force_report(lot)
    if report is None:
        return None
    return report.amendments.order_by("-issued_at").first() or report


def _export_row(
    lot: Lot, step: PlanStep, piece: WitnessPiece, result: StepResult, report: Report | None
) -> dict[str, object]:
    method = step.method_version.method
    row: dict[str, object] = {
        "order": lot.order.number,
        "customer order": lot.order.customer_order_number,
        "lot": lot.number,
        "report": report.number if report is not None else "",
        "piece": piece.ident,
        "step": f"{step.sequence.label}.{step.order} {step.name}",
        "method": method.code,
        "standard": f"{method.standard.designation} {method.standard.edition}".strip(),
        "clause": method.clause,
        "verdict": result.verdict,
        "reason": result.verdict_reason,
        "uncertainty": result.uncertainty,
        "uncertainty unit": result.uncertainty_unit,
        "observed at": _local(result.observed_at).isoformat(timespec="minutes"),
        "recorded at": _local(result.recorded_at).isoformat(timespec="minutes"),
        "revision": result.number,
        "outside provider": result.external_provider,
        "provider report": result.external_report_ref,
        "provider accreditation": result.external_accreditation,
    }
    for key, value in result.values.items():
        label, unit = label_and_unit(str(key))
        if isinstance(value, dict) and "value" in value:
            unit, value = str(value.get("unit") or unit), value["value"]
        column = f"{label} ({unit})" if unit else label
        if isinstance(value, bool) or not isinstance(value, int | float):
            value = value_text(value) if value not in (None, "") else None
        row[f"value: {column}"] = value
    return row


def order_result_rows(order, user) -> list[dict[str, object]]:
    """An order's results as flat rows for CSV/XLSX.

    Lab staff get every lot's current results. A customer user gets only results a report
    in force has stated: for each lot, the results covered by the review of the newest
    issued document (report, re-issue or amendment); lots without a report give nothing.
    """
    from labrecords.roles import is_lab_staff

    rows: list[dict[str, object]] = []
    for lot in order.lots.select_related("order").order_by("number"):
        state = lot_results(lot)
        report = latest_issued(lot)
        if is_lab_staff(user):
            rows += [
                _export_row(lot, r.step, r.piece, r.result, report)
                for r in state.planned
                if r.result is not None
            ]
            continue
        if report is None:
            continue
        stated = set(
            ReviewedResult.objects.filter(review_id=report.review_id).values_list(
                "result_id", flat=True
            )
        )
        by_key = {(r.step.step_key, r.piece.pk): r for r in state.planned}
        for result in (
            StepResult.objects.filter(pk__in=stated)
            .select_related("piece")
            .order_by("piece__ident")
        ):
            planned = by_key.get((result.step_key, result.piece_id))
            if planned is not None:
                rows.append(_export_row(lot, planned.step, result.piece, result, report))
    return rows
