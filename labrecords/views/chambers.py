"""Chamber runs: the list, loading pieces, the run page, unloading, the data logger's log."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.contrib.auth.mixins import LoginRequiredMixin
from django.core.exceptions import ValidationError
from django.db.models import Count, OuterRef, Subquery
from django.http import Http404
from django.shortcuts import redirect, render
from django.views.decorators.http import require_http_methods, require_POST, require_safe
from django_tables2 import SingleTableView

from durability.safety import cautions_for
from labrecords.access import chamber_run_for_user, lab_staff_only, require_role
from labrecords.forms_evidence import (
    ChamberLogForm,
    ChamberRunForm,
    ExposureRecheckForm,
    UnloadForm,
)
from labrecords.models import Evidence, EvidenceKind, ExposureCheck
from labrecords.roles import has_role, is_lab_staff
from labrecords.selectors_chambers import (
    chamber_waiting_group,
    chamber_waiting_groups,
    run_list_queryset,
    run_page,
)
from labrecords.services import chambers as services
from labrecords.tables_chambers import ChamberRunTable


def form_errors_from(form, exc: ValidationError) -> None:
    """Put a service's ValidationError next to the field it names (or on the form)."""
    if hasattr(exc, "error_dict"):
        for field, errors in exc.error_dict.items():
            for error in errors:
                for message in error.messages:
                    form.add_error(field if field in form.fields else None, message)
    else:
        for message in exc.messages:
            form.add_error(None, message)


class ChamberRunListView(LoginRequiredMixin, SingleTableView):
    """Every chamber run with its exposure check (lab staff)."""

    table_class = ChamberRunTable
    template_name = "labrecords/chambers/list.html"
    paginate_by = 50

    def dispatch(self, request, *args, **kwargs):
        if request.user.is_authenticated and not is_lab_staff(request.user):
            raise Http404
        return super().dispatch(request, *args, **kwargs)

    def get_queryset(self):
        latest = ExposureCheck.objects.filter(run=OuterRef("pk")).order_by("-checked_at", "-id")
        return (
            run_list_queryset(self.request.user)
            .annotate(
                piece_count=Count("pieces", distinct=True),
                exposure_counts=Subquery(latest.values("counts")[:1]),
            )
            .order_by("-loaded_at", "-id")
        )

    def get_context_data(self, **kwargs):
        context = super().get_context_data(**kwargs)
        context["can_load"] = has_role(self.request.user, *services.CHAMBER_ROLES)
        return context


@require_http_methods(["GET", "HEAD", "POST"])
@login_required
def chamber_run_new(request):
    """Pieces waiting for a chamber run, by kind and condition; load a run for one group."""
    lab_staff_only(request.user)
    require_role(request.user, *services.CHAMBER_ROLES)
    key = request.GET.get("group") or request.POST.get("group")
    if not key:
        if request.method == "POST":
            messages.error(request, "Choose a group of pieces to load first.")
            return redirect("labrecords:chamber-new")
        return render(request, "labrecords/chambers/new.html", {"groups": chamber_waiting_groups()})
    group = chamber_waiting_group(key)
    if group is None:
        messages.error(request, "No pieces wait for a chamber run of that kind and condition.")
        return redirect("labrecords:chamber-new")
    form = ChamberRunForm(request.POST or None, group=group)
    if request.method == "POST" and form.is_valid():
        data = form.cleaned_data
        try:
            run = services.chamber_run_create(
                actor=request.user,
                chamber=data["chamber"],
                logger=data["logger"],
                method_version=data["method_version"],
                condition=group.condition,
                loaded_at=data["loaded_at"],
                pieces=list(data["pieces"]),
            )
        except ValidationError as exc:
            form_errors_from(form, exc)
        else:
            messages.success(request, f"Chamber run {run.ident} loaded.")
            return redirect("labrecords:chamber-detail", pk=run.pk)
    return render(
        request,
        "labrecords/chambers/load.html",
        {
            "group": group,
            "form": form,
            "cautions": cautions_for(group.hazards),
        },
    )


@require_safe
@login_required
def chamber_run_detail(request, pk: int):
    """The run, its pieces (a customer sees only its own), its exposure check and plot."""
    run = chamber_run_for_user(request.user, pk)
    page = run_page(run, request.user)
    return render(
        request,
        "labrecords/chambers/detail.html",
        {
            "page": page,
            "run": run,
            "can_act": has_role(request.user, *services.CHAMBER_ROLES),
            "unload_form": UnloadForm(),
        },
    )


@require_POST
@login_required
def chamber_run_unload(request, pk: int):
    lab_staff_only(request.user)
    run = chamber_run_for_user(request.user, pk)
    require_role(request.user, *services.CHAMBER_ROLES)
    form = UnloadForm(request.POST)
    if form.is_valid():
        try:
            services.chamber_run_unload(
                actor=request.user, run=run, unloaded_at=form.cleaned_data["unloaded_at"]
            )
        except ValidationError as exc:
            form_errors_from(form, exc)
        else:
            messages.success(request, f"Chamber run {run.ident} unloaded.")
            return redirect("labrecords:chamber-detail", pk=run.pk)
    for field, errors in form.errors.items():
        label = form.fields[field].label if field in form.fields else "Unloading"
        for error in errors:
            messages.error(request, f"{label}: {error}")
    return redirect("labrecords:chamber-detail", pk=run.pk)


def _options(data) -> dict:
    return {
        "time_zone": data["time_zone"],
        "date_order": data["date_order"] or None,
        "interpolation": data["interpolation"],
        "duration_rule": data["duration_rule"],
        "temperature_offset_k": float(data["temperature_offset_k"]),
        "rh_offset_percent": float(data["rh_offset_percent"]),
    }


@require_http_methods(["GET", "HEAD", "POST"])
@login_required
def chamber_log_upload(request, pk: int):
    """Upload the data logger's CSV and check the exposure against the method version."""
    lab_staff_only(request.user)
    run = chamber_run_for_user(request.user, pk)
    require_role(request.user, *services.CHAMBER_ROLES)
    form = ChamberLogForm(request.POST or None, request.FILES or None)
    if request.method == "POST" and form.is_valid():
        data = form.cleaned_data
        upload = data["file"]
        try:
            check = services.chamber_log_upload(
                actor=request.user,
                run=run,
                data=upload.read(),
                original_name=upload.name,
                note=data["note"],
                **_options(data),
            )
        except ValidationError as exc:
            form_errors_from(form, exc)
        else:
            verdict = "counts" if check.counts else "does not count"
            messages.success(request, f"Log stored; the exposure {verdict}.")
            return redirect("labrecords:chamber-detail", pk=run.pk)
    return render(request, "labrecords/chambers/upload.html", {"run": run, "form": form})


@require_http_methods(["GET", "HEAD", "POST"])
@login_required
def exposure_recheck(request, pk: int):
    """Check a stored log of the run again, with a reason; the new check counts."""
    lab_staff_only(request.user)
    run = chamber_run_for_user(request.user, pk)
    require_role(request.user, *services.CHAMBER_ROLES)
    logs = list(
        Evidence.objects.filter(chamber_run=run, kind=EvidenceKind.CHAMBER_LOG).order_by(
            "-uploaded_at", "-id"
        )
    )
    if not logs:
        messages.error(request, "The run has no stored log to check again.")
        return redirect("labrecords:chamber-detail", pk=run.pk)
    form = ExposureRecheckForm(request.POST or None, logs=logs)
    if request.method == "POST" and form.is_valid():
        data = form.cleaned_data
        evidence = next(e for e in logs if str(e.pk) == data["evidence"])
        try:
            check = services.exposure_check_repeat(
                actor=request.user,
                run=run,
                evidence=evidence,
                reason=data["reason"],
                **_options(data),
            )
        except ValidationError as exc:
            form_errors_from(form, exc)
        else:
            verdict = "counts" if check.counts else "does not count"
            messages.success(request, f"Checked again; the exposure {verdict}.")
            return redirect("labrecords:chamber-detail", pk=run.pk)
    return render(request, "labrecords/chambers/recheck.html", {"run": run, "form": form})
