from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.contrib.auth.mixins import LoginRequiredMixin
from django.core.exceptions import ValidationError
from django.http import Http404
from django.shortcuts import get_object_or_404, redirect, render
from django.views.decorators.http import require_POST, require_safe
from django_filters.views import FilterView
from django_tables2 import SingleTableMixin

from durability import services
from durability.models import Method
from durability.safety import cautions_for
from durability.web.filters import MethodFilter
from durability.web.forms import ConfirmForm, LabMethodForm, StandardForm
from durability.web.tables import MethodTable
from labrecords.access import require_role
from labrecords.roles import Role, has_role, is_lab_staff


def _lab_only(user) -> None:
    if not is_lab_staff(user):
        raise Http404


def _messages_from(request, exc: ValidationError) -> None:
    if hasattr(exc, "message_dict"):
        for field, errors in exc.message_dict.items():
            for error in errors:
                messages.error(request, f"{field}: {error}" if field != "__all__" else error)
    else:
        for error in exc.messages:
            messages.error(request, error)


class LabStaffMixin(LoginRequiredMixin):
    def dispatch(self, request, *args, **kwargs):
        if request.user.is_authenticated and not is_lab_staff(request.user):
            raise Http404
        return super().dispatch(request, *args, **kwargs)


class CatalogueView(LabStaffMixin, SingleTableMixin, FilterView):
    """The method catalogue: every method's current version with its parameters' status."""

    table_class = MethodTable
    filterset_class = MethodFilter
    template_name = "durability/catalogue.html"
    paginate_by = 100

    def get_queryset(self):
        return Method.objects.select_related("standard").prefetch_related("versions")

    def get_context_data(self, **kwargs):
        context = super().get_context_data(**kwargs)
        context["is_quality_manager"] = has_role(self.request.user, Role.QUALITY_MANAGER)
        return context


@require_safe
@login_required
def method_detail(request, code: str):
    _lab_only(request.user)
    method = get_object_or_404(Method.objects.select_related("standard"), code=code)
    versions = list(method.versions.select_related("created_by").order_by("-number"))
    current = versions[0] if versions else None
    return render(
        request,
        "durability/method_detail.html",
        {
            "method": method,
            "current": current,
            "parameters": current.parameters() if current else [],
            "versions": versions,
            "cautions": cautions_for(current.hazards) if current else [],
            "confirm_form": ConfirmForm(),
            "is_quality_manager": has_role(request.user, Role.QUALITY_MANAGER),
        },
    )


@require_POST
@login_required
def method_confirm(request, code: str):
    _lab_only(request.user)
    require_role(request.user, Role.QUALITY_MANAGER)
    method = get_object_or_404(Method, code=code)
    form = ConfirmForm(request.POST)
    if not form.is_valid():
        for field, errors in form.errors.items():
            text = " ".join(str(e) for e in errors)
            messages.error(request, f"{form.fields[field].label or field}: {text}")
        return redirect("durability:method-detail", code=code)
    value: object = form.cleaned_data["value"] or None
    if isinstance(value, str):
        try:
            value = float(value.replace(",", "."))
        except ValueError:
            pass
    try:
        version = services.method_parameter_confirm(
            actor=request.user,
            method=method,
            parameter=form.cleaned_data["parameter"],
            copy=form.cleaned_data["copy"],
            value=value,
        )
    except ValidationError as exc:
        _messages_from(request, exc)
    else:
        messages.success(request, f"Confirmed; the method is now version {version.number}.")
    return redirect("durability:method-detail", code=code)


@login_required
def standard_create(request):
    _lab_only(request.user)
    require_role(request.user, Role.QUALITY_MANAGER)
    form = StandardForm(request.POST or None)
    if request.method == "POST" and form.is_valid():
        try:
            services.standard_create(actor=request.user, **form.cleaned_data)
        except ValidationError as exc:
            _messages_from(request, exc)
        else:
            messages.success(request, "Standard added.")
            return redirect("durability:catalogue")
    return render(
        request, "durability/form.html", {"form": form, "title": "Add a standard or edition"}
    )


@login_required
def lab_method_create(request):
    _lab_only(request.user)
    require_role(request.user, Role.QUALITY_MANAGER)
    form = LabMethodForm(request.POST or None)
    if request.method == "POST" and form.is_valid():
        data = form.cleaned_data
        entry = {
            "parameters": data["parameters"],
            "destructive": data["destructive"],
            "hazards": data["hazards"],
            "acceptance": {
                "text": data["acceptance_text"],
                "rule": {"rule": "engineer_judgement", "text": data["acceptance_text"]},
                "status": "confirmed",
            },
        }
        try:
            method = services.lab_method_create(
                actor=request.user,
                code=data["code"],
                standard=data["standard"],
                name=data["name"],
                kind=data["kind"],
                entry=entry,
            )
        except ValidationError as exc:
            _messages_from(request, exc)
        else:
            messages.success(request, f"{method.code} added as version 1.")
            return redirect("durability:method-detail", code=method.code)
    return render(request, "durability/form.html", {"form": form, "title": "Add a lab procedure"})
