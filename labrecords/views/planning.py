"""The engineer's screens: coating spec (callouts, spec check, glass cautions, witness
choice and allocation) and the lot's test plan."""

from django.conf import settings
from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.core.exceptions import ValidationError
from django.http import Http404
from django.shortcuts import get_object_or_404, redirect, render
from django.views.decorators.http import require_POST, require_safe

from labrecords import selectors_planning as planning
from labrecords.access import lot_for_user, require_role, spec_for_user
from labrecords.forms_planning import (
    AllocateForm,
    CalloutsForm,
    NeffForm,
    PlanCreateForm,
    ReasonForm,
    ReleaseForm,
    StepEditForm,
)
from labrecords.models import PlanStep
from labrecords.roles import Role, has_role, is_lab_staff
from labrecords.services import lots as lot_services
from labrecords.services import orders as order_services
from labrecords.services import plans as plan_services


def _errors(exc: ValidationError) -> list[str]:
    if hasattr(exc, "message_dict"):
        return [
            f"{field}: {m}" if field != "__all__" else m
            for field, msgs in exc.message_dict.items()
            for m in msgs
        ]
    return list(exc.messages)


def _lab_only(user) -> None:
    if not is_lab_staff(user):
        raise Http404


@require_safe
@login_required
def spec_detail(request, pk: int):
    spec = spec_for_user(request.user, pk)
    context = {"spec": spec, "lots": list(spec.lots.all())}
    if is_lab_staff(request.user):
        neff = NeffForm(request.GET or None)
        n_eff = (
            float(neff.cleaned_data["n_eff"])
            if neff.is_valid() and neff.cleaned_data["n_eff"]
            else None
        )
        choice, stock = planning.witness_choice_for(spec)
        context.update(
            neff_form=neff,
            callouts=planning.callouts_read(
                spec.callout_text, settings.MIL_48497_TEMPERATURE_SOLVENT_BASIC
            ),
            check=planning.spec_check_for(spec, n_eff=n_eff),
            cautions=planning.glass_cautions_for(spec.glass) if spec.glass else None,
            choice=choice,
            stock=stock,
            callouts_form=CalloutsForm(initial={"callout_text": spec.callout_text}),
            allocate_form=AllocateForm(spec=spec),
            can_plan=has_role(request.user, Role.ENGINEER),
        )
    return render(request, "labrecords/spec_detail.html", context)


@require_POST
@login_required
def spec_callouts(request, pk: int):
    spec = spec_for_user(request.user, pk)
    _lab_only(request.user)
    require_role(request.user, Role.ENGINEER)
    form = CalloutsForm(request.POST)
    if form.is_valid():
        order_services.coating_spec_update(
            actor=request.user,
            spec=spec,
            reason=form.cleaned_data["reason"],
            callout_text=form.cleaned_data["callout_text"],
        )
        messages.success(request, "Callouts saved.")
    else:
        for field, errors in form.errors.items():
            messages.error(request, f"{form.fields[field].label}: {' '.join(errors)}")
    return redirect(spec.get_absolute_url())


@require_POST
@login_required
def witness_allocate(request, pk: int):
    spec = spec_for_user(request.user, pk)
    _lab_only(request.user)
    require_role(request.user, Role.ENGINEER, Role.TECHNICIAN)
    form = AllocateForm(request.POST, spec=spec)
    if not form.is_valid():
        for field, errors in form.errors.items():
            messages.error(request, f"{form.fields[field].label or field}: {' '.join(errors)}")
        return redirect(spec.get_absolute_url())
    try:
        pieces = lot_services.witness_pieces_allocate(
            actor=request.user,
            lot=form.cleaned_data["lot"],
            stock=form.cleaned_data["stock"],
            count=form.cleaned_data["count"],
        )
    except ValidationError as exc:
        for message in _errors(exc):
            messages.error(request, message)
    else:
        messages.success(
            request, f"Allocated {len(pieces)} piece(s): {', '.join(p.ident for p in pieces)}."
        )
    return redirect(spec.get_absolute_url())


@require_safe
@login_required
def lot_plan(request, pk: int):
    lot = lot_for_user(request.user, pk)
    _lab_only(request.user)
    view = planning.lot_plan(lot)
    return render(
        request,
        "labrecords/plan.html",
        {
            "lot": lot,
            "view": view,
            "create_form": PlanCreateForm(),
            "release_form": ReleaseForm(),
            "reason_form": ReasonForm(),
            "can_plan": has_role(request.user, Role.ENGINEER),
            "unassigned": list(lot.pieces.exclude(assignments__plan__lot=lot).order_by("ident"))
            if view is None or view.plan.status == "draft"
            else [],
        },
    )


def _engineer_lot(request, pk: int):
    """The lot, for an engineer's plan action (404 outside the lab, 403 without the role)."""
    lot = lot_for_user(request.user, pk)
    _lab_only(request.user)
    require_role(request.user, Role.ENGINEER)
    return lot


def _plan_action(request, lot, action) -> None:
    try:
        action()
    except ValidationError as exc:
        for message in _errors(exc):
            messages.error(request, message)


@require_POST
@login_required
def plan_create(request, pk: int):
    lot = _engineer_lot(request, pk)
    form = PlanCreateForm(request.POST)
    if form.is_valid():
        _plan_action(
            request,
            lot,
            lambda: plan_services.plan_draft_create(
                actor=request.user, lot=lot, **form.cleaned_data
            ),
        )
    return redirect("labrecords:lot-plan", pk=lot.pk)


@require_POST
@login_required
def plan_assign(request, pk: int):
    lot = _engineer_lot(request, pk)
    view = planning.lot_plan(lot)
    if view is not None:
        _plan_action(
            request,
            lot,
            lambda: plan_services.plan_pieces_assign(actor=request.user, plan=view.plan),
        )
    return redirect("labrecords:lot-plan", pk=lot.pk)


@require_POST
@login_required
def plan_release(request, pk: int):
    lot = _engineer_lot(request, pk)
    view = planning.lot_plan(lot)
    form = ReleaseForm(request.POST)
    if view is not None and form.is_valid():
        _plan_action(
            request,
            lot,
            lambda: plan_services.plan_release(
                actor=request.user,
                plan=view.plan,
                review_items_acknowledged=form.cleaned_data["review_items_acknowledged"],
            ),
        )
        if view.plan.pk and not messages.get_messages(request):
            messages.success(request, "Plan released.")
    return redirect("labrecords:lot-plan", pk=lot.pk)


@require_POST
@login_required
def plan_revise(request, pk: int):
    lot = _engineer_lot(request, pk)
    view = planning.lot_plan(lot)
    form = ReasonForm(request.POST)
    if view is None:
        raise Http404
    if form.is_valid():
        _plan_action(
            request,
            lot,
            lambda: plan_services.plan_revise(
                actor=request.user, plan=view.plan, reason=form.cleaned_data["reason"]
            ),
        )
    else:
        messages.error(request, "Why: say why the released plan changes.")
    return redirect("labrecords:lot-plan", pk=lot.pk)


@login_required
def plan_step_edit(request, pk: int, step_pk: int):
    lot = lot_for_user(request.user, pk)
    _lab_only(request.user)
    step = get_object_or_404(
        PlanStep.objects.select_related("plan", "method_version__method"), pk=step_pk, plan__lot=lot
    )
    if request.method == "POST":
        require_role(request.user, Role.ENGINEER)
        form = StepEditForm(request.POST)
        if form.is_valid():
            try:
                plan_services.plan_step_update(actor=request.user, step=step, **form.cleaned_data)
            except ValidationError as exc:
                for message in _errors(exc):
                    form.add_error(None, message)
            else:
                messages.success(request, f"Step {step.order} saved.")
                return redirect("labrecords:lot-plan", pk=lot.pk)
    elif request.method == "GET":
        form = StepEditForm(
            initial={
                "hours": step.hours,
                "wait_hours_before": step.wait_hours_before,
                "note": step.note,
            }
        )
    else:
        from django.http import HttpResponseNotAllowed

        return HttpResponseNotAllowed(["GET", "POST"])
    from durability.safety import cautions_for

    return render(
        request,
        "labrecords/plan_step_edit.html",
        {"lot": lot, "step": step, "form": form, "cautions": cautions_for(step.hazards)},
    )
