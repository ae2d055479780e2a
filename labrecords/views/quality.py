"""Quality pages: nonconformances, the authorisation list, instruments, consumables.

All are lab pages (404 for customers and outsiders); the actions are the quality
manager's (403 for other lab staff), except registering and checking consumables, which a
technician does too.
"""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.core.exceptions import ValidationError
from django.shortcuts import get_object_or_404, redirect, render
from django.utils import timezone
from django.views.decorators.http import require_POST, require_safe
from django_filters.views import FilterView
from django_tables2 import SingleTableMixin

from durability.models import Instrument
from durability.web.views import LabStaffMixin
from labrecords import clock, selectors
from labrecords.access import lab_staff_only, nonconformance_for_user, require_role
from labrecords.filters_quality import (
    AuthorisationFilter,
    ConsumableFilter,
    InstrumentFilter,
    NonconformanceFilter,
)
from labrecords.forms_quality import (
    ConsumableCheckForm,
    ConsumableForm,
    DeviationForm,
    DispositionForm,
    GrantForm,
    RevokeForm,
)
from labrecords.models import (
    ChamberRun,
    Consumable,
    InstrumentDeviation,
    MethodAuthorisation,
    Nonconformance,
)
from labrecords.roles import Role, has_role
from labrecords.services import authorisations, consumables, instruments, nonconformances
from labrecords.services.consumables import salt_fog_limits
from labrecords.tables_quality import (
    AuthorisationTable,
    ConsumableTable,
    InstrumentTable,
    NonconformanceTable,
)
from labrecords.views.chambers import form_errors_from

CONSUMABLE_ROLES = (Role.TECHNICIAN, Role.QUALITY_MANAGER)


# ---------------------------------------------------------------- nonconformances


class NonconformanceListView(LabStaffMixin, SingleTableMixin, FilterView):
    """Nonconformances, the open ones first shown."""

    table_class = NonconformanceTable
    filterset_class = NonconformanceFilter
    template_name = "labrecords/quality/nonconformances.html"
    paginate_by = 50

    def get_queryset(self):
        return Nonconformance.objects.select_related(
            "lot__order__customer", "result__piece", "result__step").order_by("-opened_at")


def _nonconformance_page(request, nc: Nonconformance, form: DispositionForm | None = None,
                         status: int = 200):
    is_quality_manager = has_role(request.user, Role.QUALITY_MANAGER)
    return render(request, "labrecords/quality/nonconformance.html", {
        "nc": nc,
        "form": form or (DispositionForm() if is_quality_manager and not nc.disposition
                         else None),
        "audit": selectors.audit_trail(nc),
        "free_pieces": [p.ident for p in nc.lot.pieces.filter(assignments__isnull=True)
                        .order_by("ident")],
    }, status=status)


@require_safe
@login_required
def nonconformance_detail(request, number: str):
    """A nonconformance with its disposition (the quality manager records it here)."""
    return _nonconformance_page(request, nonconformance_for_user(request.user, number))


@require_POST
@login_required
def nonconformance_dispose(request, number: str):
    nc = nonconformance_for_user(request.user, number)
    require_role(request.user, Role.QUALITY_MANAGER)
    form = DispositionForm(request.POST)
    if form.is_valid():
        try:
            outcome = nonconformances.nonconformance_dispose(
                actor=request.user, nonconformance=nc,
                disposition=form.cleaned_data["disposition"],
                note=form.cleaned_data["disposition_note"],
                customer_agreement_ref=form.cleaned_data["customer_agreement_ref"])
        except ValidationError as exc:
            form_errors_from(form, exc)
        else:
            text = f"{nc.number}: {outcome.nonconformance.get_disposition_display()}."
            if outcome.retest_plan is not None:
                text += (f" Plan {outcome.retest_plan.number} is released with the retest on "
                         f"{', '.join(p.ident for p in outcome.retest_pieces)}.")
            messages.success(request, text)
            return redirect("labrecords:nonconformance-detail", number=nc.number)
    return _nonconformance_page(request, nc, form)


# ---------------------------------------------------------------- authorisations


class AuthorisationListView(LabStaffMixin, SingleTableMixin, FilterView):
    """Who may record which method; the quality manager grants and revokes."""

    table_class = AuthorisationTable
    filterset_class = AuthorisationFilter
    template_name = "labrecords/quality/authorisations.html"
    paginate_by = 100

    def get_queryset(self):
        return MethodAuthorisation.objects.select_related(
            "user", "method", "granted_by", "revoked_by").order_by("method__code",
                                                                  "user__username")

    grant_form = None

    def get_context_data(self, **kwargs):
        context = super().get_context_data(**kwargs)
        context["can_manage"] = has_role(self.request.user, Role.QUALITY_MANAGER)
        if context["can_manage"]:
            context["grant_form"] = self.grant_form or GrantForm()
        return context

    def post(self, request, *args, **kwargs):
        """Grant an authorisation (quality manager)."""
        require_role(request.user, Role.QUALITY_MANAGER)
        form = GrantForm(request.POST)
        if form.is_valid():
            try:
                authorisations.method_authorisation_grant(
                    actor=request.user, user=form.cleaned_data["user"],
                    method=form.cleaned_data["method"], reason=form.cleaned_data["reason"])
            except ValidationError as exc:
                form_errors_from(form, exc)
            else:
                messages.success(request, (
                    f"{form.cleaned_data['user'].get_username()} may record "
                    f"{form.cleaned_data['method'].code}."))
                return redirect("labrecords:authorisations")
        self.grant_form = form
        return self.get(request, *args, **kwargs)


@require_POST
@login_required
def authorisation_revoke(request, pk: int):
    lab_staff_only(request.user)
    require_role(request.user, Role.QUALITY_MANAGER)
    grant = get_object_or_404(MethodAuthorisation.objects.select_related("user", "method"),
                              pk=pk)
    form = RevokeForm(request.POST)
    if form.is_valid():
        try:
            authorisations.method_authorisation_revoke(
                actor=request.user, authorisation=grant, reason=form.cleaned_data["reason"])
        except ValidationError as exc:
            messages.error(request, " ".join(exc.messages))
        else:
            messages.success(request, f"{grant.user.get_username()} may no longer record "
                                      f"{grant.method.code}.")
    else:
        messages.error(request, "Say why the authorisation is revoked.")
    return redirect("labrecords:authorisations")


# ---------------------------------------------------------------- instruments


class InstrumentListView(LabStaffMixin, SingleTableMixin, FilterView):
    """Instruments with their calibration status, computed from the due date."""

    table_class = InstrumentTable
    filterset_class = InstrumentFilter
    template_name = "labrecords/quality/instruments.html"
    paginate_by = 100

    def get_queryset(self):
        return Instrument.objects.order_by("ident")


def _instrument_page(request, instrument: Instrument, form: DeviationForm | None = None):
    deviations = []
    for deviation in InstrumentDeviation.objects.filter(instrument=instrument).select_related(
            "found_by").order_by("-found_at"):
        results = instruments.results_using_instrument_since(instrument, deviation.since)
        deviations.append({
            "deviation": deviation,
            "results": results,
            "reports": instruments.reports_covering(results),
        })
    return render(request, "labrecords/quality/instrument.html", {
        "instrument": instrument,
        "state": instruments.instrument_state(instrument),
        "deviations": deviations,
        "form": form or (DeviationForm() if has_role(request.user, Role.QUALITY_MANAGER)
                         else None),
    })


@require_safe
@login_required
def instrument_detail(request, ident: str):
    lab_staff_only(request.user)
    return _instrument_page(request, get_object_or_404(Instrument, ident=ident))


@require_POST
@login_required
def instrument_deviation(request, ident: str):
    """Record 'found out of tolerance since DATE': lists and opens what it affects."""
    lab_staff_only(request.user)
    require_role(request.user, Role.QUALITY_MANAGER)
    instrument = get_object_or_404(Instrument, ident=ident)
    form = DeviationForm(request.POST)
    if form.is_valid():
        try:
            outcome = instruments.instrument_deviation_record(
                actor=request.user, instrument=instrument, **form.cleaned_data)
        except ValidationError as exc:
            form_errors_from(form, exc)
        else:
            messages.success(request, (
                f"{instrument.ident}: {len(outcome.results)} result(s) and "
                f"{len(outcome.reports)} issued report(s) depend on it; "
                f"{len(outcome.nonconformances)} nonconformance(s) opened."))
            return redirect("labrecords:instrument-detail", ident=instrument.ident)
    return _instrument_page(request, instrument, form)


# ---------------------------------------------------------------- consumables


class ConsumableListView(LabStaffMixin, SingleTableMixin, FilterView):
    """Consumables with supplier's lot and expiry; technicians register new lots here."""

    table_class = ConsumableTable
    filterset_class = ConsumableFilter
    template_name = "labrecords/quality/consumables.html"
    paginate_by = 100

    def get_queryset(self):
        return Consumable.objects.order_by("kind", "name", "-expiry")

    register_form = None

    def get_context_data(self, **kwargs):
        context = super().get_context_data(**kwargs)
        if has_role(self.request.user, *CONSUMABLE_ROLES):
            context["register_form"] = self.register_form or ConsumableForm()
        return context

    def post(self, request, *args, **kwargs):
        """Register a consumable lot (technician, quality manager)."""
        require_role(request.user, *CONSUMABLE_ROLES)
        form = ConsumableForm(request.POST)
        if form.is_valid():
            try:
                consumable = consumables.consumable_register(actor=request.user,
                                                             **form.cleaned_data)
            except ValidationError as exc:
                form_errors_from(form, exc)
            else:
                messages.success(request, f"Registered {consumable}.")
                return redirect("labrecords:consumable-detail", pk=consumable.pk)
        self.register_form = form
        return self.get(request, *args, **kwargs)


def _salt_fog_runs():
    return (ChamberRun.objects.filter(method_version__method__kind="salt_fog")
            .select_related("chamber").order_by("-loaded_at"))


def _consumable_page(request, consumable: Consumable, form=None):
    checks = list(consumable.checks.select_related("checked_by", "run").order_by("-checked_at"))
    limits = [salt_fog_limits(q) for q in ("collection_rate", "ph", "concentration")]
    can_check = has_role(request.user, *CONSUMABLE_ROLES)
    today = timezone.localdate(clock.now())
    return render(request, "labrecords/quality/consumable.html", {
        "consumable": consumable,
        "usable": consumable.usable_on(today),
        "checks": checks,
        "limits": limits,
        "form": form or (ConsumableCheckForm(runs=_salt_fog_runs()) if can_check else None),
    })


@require_safe
@login_required
def consumable_detail(request, pk: int):
    lab_staff_only(request.user)
    return _consumable_page(request, get_object_or_404(Consumable, pk=pk))


@require_POST
@login_required
def consumable_check(request, pk: int):
    """A salt fog check of this solution (and optionally of a run): compared with 509."""
    lab_staff_only(request.user)
    require_role(request.user, *CONSUMABLE_ROLES)
    consumable = get_object_or_404(Consumable, pk=pk)
    form = ConsumableCheckForm(request.POST, runs=_salt_fog_runs())
    if form.is_valid():
        try:
            check = consumables.consumable_check_record(
                actor=request.user, quantity=form.cleaned_data["quantity"],
                value=form.cleaned_data["value"], consumable=consumable,
                run=form.cleaned_data["run"])
        except ValidationError as exc:
            form_errors_from(form, exc)
        else:
            where = "within" if check.within_limits else "OUTSIDE"
            messages.success(request, f"Recorded {check.quantity} {check.value} {check.unit}: "
                                      f"{where} {check.low}–{check.high}.")
            return redirect("labrecords:consumable-detail", pk=consumable.pk)
    return _consumable_page(request, consumable, form)
