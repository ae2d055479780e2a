"""Bench entry: scan a piece, record its open step, see and correct a result."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.core.exceptions import ValidationError
from django.http import Http404
from django.shortcuts import get_object_or_404, redirect, render
from django.urls import reverse
from django.utils.http import urlencode
from django.views.decorators.http import require_http_methods, require_POST, require_safe

from durability.models import Instrument
from durability.safety import cautions_for
from labrecords import selectors, selectors_bench
from labrecords.access import (
    lab_staff_only,
    piece_for_user,
    require_role,
    result_for_user,
)
from labrecords.forms_bench import BenchEntry, ScanForm, correction_initial
from labrecords.models import PlanStep, StepResult, WitnessPiece
from labrecords.roles import Role, has_role, is_lab_staff
from labrecords.selectors_chambers import chamber_instruments, condition_of
from labrecords.services import bench as services
from labrecords.services.bench import RECORDING_ROLES, StaleResultError


def _bench_url(lot: str = "") -> str:
    url = reverse("labrecords:bench")
    return f"{url}?{urlencode({'lot': lot})}" if lot else url


def step_entry_url(piece: WitnessPiece, step: PlanStep, lot: str = "") -> str:
    url = reverse("labrecords:bench-step", args=[piece.ident, step.step_key])
    return f"{url}?{urlencode({'lot': lot})}" if lot else url


@require_safe
@login_required
def bench_home(request):
    """Scan a piece (its ID, or the URL of its label's QR code) to open its next step."""
    lab_staff_only(request.user)
    lot = request.GET.get("lot", "").strip()
    outcome = None
    if "scan" in request.GET:
        form = ScanForm(request.GET)
        if form.is_valid():
            outcome = selectors_bench.resolve_scan(request.user, form.cleaned_data["scan"],
                                                   form.cleaned_data["lot"])
            if outcome.error:
                form.add_error("scan", outcome.error)
            elif len(outcome.steps) == 1:
                return redirect(step_entry_url(outcome.piece, outcome.steps[0].step, lot))
    else:
        form = ScanForm(initial={"lot": lot})
    return render(request, "labrecords/bench/home.html", {
        "form": form,
        "outcome": outcome,
        "lot": lot,
        "lots": selectors_bench.lots_in_test(),
        "can_record": has_role(request.user, *RECORDING_ROLES),
    })


def _entry(request, *, step: PlanStep, piece: WitnessPiece, data=None, files=None,
           result: StepResult | None = None, correction: dict | None = None) -> BenchEntry:
    initial = defects = spectral = None
    if result is not None:
        initial, defects, spectral = correction_initial(result)
    else:
        first = selectors_bench.initial_observation(piece)
        if first is not None and step.role != "initial_inspection":
            initial = {"lighting": first.lighting, "background": first.background,
                       "magnification": first.magnification}
    runs = selectors_bench.chamber_runs_for(step, piece)
    return BenchEntry(
        data, files, step=step,
        instruments=list(Instrument.objects.filter(in_service=True).order_by("ident")),
        consumables=selectors_bench.consumables_for_picker(), runs=runs,
        chambers=list(chamber_instruments().order_by("ident")), initial=initial,
        defects=defects, spectral=spectral, correction=correction)


def _errors(entry: BenchEntry, exc: ValidationError) -> None:
    if hasattr(exc, "error_dict"):
        for field, messages_ in exc.message_dict.items():
            for message in messages_:
                entry.add_error(field, message)
    else:
        for message in exc.messages:
            entry.add_error("__all__", message)


def _step_context(piece: WitnessPiece, step: PlanStep, user) -> dict:
    return {
        "piece": piece,
        "step": step,
        "method": step.method_version.method,
        "parameters": selectors_bench.parameter_rows(step),
        "condition": (condition_of(step.parameters)
                      if "chamber" in services.entry_sections(step) else ""),
        "cautions": cautions_for(step.hazards or step.method_version.hazards),
        "initial": selectors_bench.initial_observation(piece),
        "authorised": selectors_bench.is_authorised(user, step),
        "judgement_needs_engineer": services.step_rule(step).get("rule") == "engineer_judgement",
        "is_engineer": has_role(user, Role.ENGINEER),
    }


@require_http_methods(["GET", "HEAD", "POST"])
@login_required
def step_entry(request, ident: str, step_key):
    """The bench form of a piece's open step; saving is one POST."""
    lab_staff_only(request.user)
    require_role(request.user, *RECORDING_ROLES)
    piece = piece_for_user(request.user, ident)
    plan = services.current_released_plan(piece.lot)
    step = None
    if plan is not None:
        step = (PlanStep.objects.filter(plan=plan, step_key=step_key)
                .select_related("sequence", "method_version__method__standard").first())
    if step is None:
        raise Http404
    lot = (request.POST.get("lot_filter") or request.GET.get("lot") or "").strip()
    recorded = StepResult.objects.current().filter(step_key=step_key, piece=piece).first()
    if recorded is not None and request.method != "POST":
        messages.info(request, f"Step {step.order} ({step.name}) on {piece.ident} is recorded; "
                               "correct it here if needed.")
        return redirect("labrecords:result-detail", record_key=recorded.record_key)
    status = 200
    stale = None
    if request.method == "POST":
        entry = _entry(request, step=step, piece=piece, data=request.POST, files=request.FILES)
        if entry.is_valid():
            try:
                result = services.step_result_record(actor=request.user, piece=piece, step=step,
                                                     **entry.service_kwargs())
            except ValidationError as exc:
                _errors(entry, exc)
            except StaleResultError as exc:
                stale, status = exc, 409
            else:
                messages.success(request, (
                    f"Saved {piece.ident} step {step.order} ({step.name}): "
                    f"{result.get_verdict_display()}. {result.verdict_reason}"))
                return redirect(_bench_url(lot))
    else:
        entry = _entry(request, step=step, piece=piece)
    return render(request, "labrecords/bench/step.html", {
        **_step_context(piece, step, request.user),
        "entry": entry,
        "lot": lot,
        "stale": stale,
        "action": step_entry_url(piece, step),
    }, status=status)


def _can_correct(user, step: PlanStep) -> bool:
    return has_role(user, *RECORDING_ROLES) and selectors_bench.is_authorised(user, step)


def _result_page(request, current: StepResult, *, entry: BenchEntry | None = None,
                 stale: StaleResultError | None = None, status: int = 200):
    piece, step = current.piece, current.step
    revisions = selectors_bench.with_lines(selectors_bench.result_history(current.record_key))
    lab = is_lab_staff(request.user)
    can_correct = lab and _can_correct(request.user, step)
    if entry is None and can_correct:
        latest = revisions[-1]
        entry = _entry(request, step=step, piece=piece, result=latest,
                       correction={"revision": latest.pk})
    return render(request, "labrecords/bench/result.html", {
        **_step_context(piece, step, request.user),
        "current": revisions[-1],
        "revisions": revisions,
        "photos": selectors_bench.step_photos(piece, step.step_key),
        "nonconformances": selectors_bench.result_nonconformances(current.record_key)
        if lab else [],
        "audit": selectors.audit_trail(current) if lab else [],
        "entry": entry if can_correct else None,
        "stale": stale,
        "action": reverse("labrecords:result-correct", args=[current.record_key]),
    }, status=status)


@require_safe
@login_required
def result_detail(request, record_key):
    """Every revision of a result (superseded ones struck through) with its verdict."""
    current = result_for_user(request.user, record_key)
    return _result_page(request, current)


@require_POST
@login_required
def result_correct(request, record_key):
    """Correct a result: a new revision; refused when someone else corrected it first."""
    lab_staff_only(request.user)
    require_role(request.user, *RECORDING_ROLES)
    current = result_for_user(request.user, record_key)
    entry = _entry(request, step=current.step, piece=current.piece, data=request.POST,
                   files=request.FILES, correction={})
    if not entry.is_valid():
        return _result_page(request, current, entry=entry)
    revision = get_object_or_404(StepResult, pk=entry.correction.cleaned_data["revision"],
                                 record_key=record_key)
    try:
        result = services.step_result_correct(
            actor=request.user, revision=revision,
            reason=entry.correction.cleaned_data["reason"], **entry.service_kwargs())
    except ValidationError as exc:
        _errors(entry, exc)
        return _result_page(request, current, entry=entry)
    except StaleResultError as exc:
        return _result_page(request, exc.current, entry=entry, stale=exc, status=409)
    messages.success(request, f"Corrected: revision {result.number}, "
                              f"{result.get_verdict_display()}. {result.verdict_reason}")
    return redirect("labrecords:result-detail", record_key=record_key)


@require_safe
@login_required
def piece_results(request, ident: str):
    """Every step of the piece's sequence with every revision of its result."""
    piece = piece_for_user(request.user, ident)
    rows = selectors_bench.piece_step_rows(piece)
    for row in rows:
        selectors_bench.with_lines(row.revisions)
    return render(request, "labrecords/bench/piece_results.html", {
        "piece": piece,
        "rows": rows,
        "open_steps": selectors_bench.open_steps(piece) if is_lab_staff(request.user) else [],
        "can_record": is_lab_staff(request.user) and has_role(request.user, *RECORDING_ROLES),
    })
