"""Resources and the lab calendar: the list, a resource with its blocked periods, marking
a chamber broken, lab holidays and lab hours. Changes: quality manager or administrator."""

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.contrib.auth.mixins import LoginRequiredMixin
from django.core.exceptions import ValidationError
from django.db.models import Prefetch
from django.shortcuts import get_object_or_404, redirect, render
from django.utils import timezone
from django.views.decorators.http import require_POST, require_safe
from django_filters.views import FilterView
from django_tables2 import SingleTableMixin

from durability.models import LabHoliday, LabHours, Resource, ResourceBlock
from labrecords import clock
from labrecords.access import lab_staff_only, require_role, resource_for_user
from labrecords.filters_schedule import ResourceFilter
from labrecords.forms_schedule import (
    WEEKDAYS,
    BlockForm,
    BrokenForm,
    HolidayForm,
    LabHoursForm,
    ReasonForm,
    local_default,
)
from labrecords.roles import has_role
from labrecords.selectors import audit_trail
from labrecords.services import resources as resource_services
from labrecords.services.resources import RESOURCE_ROLES
from labrecords.tables_schedule import ResourceTable


def _form_errors(form, exc: ValidationError) -> None:
    """Put a service's refusal next to the field it names."""
    if hasattr(exc, "message_dict"):
        for field, errors in exc.message_dict.items():
            for error in errors:
                form.add_error(field if field in form.fields else None, error)
    else:
        for error in exc.messages:
            form.add_error(None, error)


class ResourceListView(LoginRequiredMixin, SingleTableMixin, FilterView):
    """Every chamber and bench station with what it runs and whether it is blocked now."""

    table_class = ResourceTable
    filterset_class = ResourceFilter
    template_name = "labrecords/schedule/resources.html"
    paginate_by = 100

    def dispatch(self, request, *args, **kwargs):
        if request.user.is_authenticated:
            lab_staff_only(request.user)
        return super().dispatch(request, *args, **kwargs)

    def get_queryset(self):
        now = clock.now()
        current = ResourceBlock.objects.filter(starts_at__lte=now, ends_at__gt=now)
        return Resource.objects.select_related("instrument").prefetch_related(
            Prefetch("blocks", queryset=current.order_by("-ends_at"), to_attr="current_blocks")
        )

    def get_context_data(self, **kwargs):
        context = super().get_context_data(**kwargs)
        context["can_change"] = has_role(self.request.user, *RESOURCE_ROLES)
        return context


def _resource_page(request, resource, *, block_form=None, broken_form=None, status=200):
    now = clock.now()
    blocks = list(
        resource.blocks.filter(ends_at__gt=now).select_related("created_by").order_by("starts_at")
    )
    past = list(
        resource.blocks.filter(ends_at__lte=now)
        .select_related("created_by")
        .order_by("-starts_at")[:20]
    )
    return render(
        request,
        "labrecords/schedule/resource_detail.html",
        {
            "resource": resource,
            "blocks": blocks,
            "past_blocks": past,
            "now": now,
            "can_change": has_role(request.user, *RESOURCE_ROLES),
            "block_form": block_form
            or BlockForm(
                prefix="block",
                initial={"starts_at": local_default(24), "ends_at": local_default(48)},
            ),
            "broken_form": broken_form
            or BrokenForm(prefix="broken", initial={"expected_end": local_default(48)}),
            "end_form": ReasonForm(),
            "audit": audit_trail(resource),
        },
        status=status,
    )


@require_safe
@login_required
def resource_detail(request, ident: str):
    resource = resource_for_user(request.user, ident)
    return _resource_page(request, resource)


@require_POST
@login_required
def resource_block_add(request, ident: str):
    resource = resource_for_user(request.user, ident)
    require_role(request.user, *RESOURCE_ROLES)
    form = BlockForm(request.POST, prefix="block")
    if form.is_valid():
        try:
            resource_services.resource_block_create(
                actor=request.user, resource=resource, **form.cleaned_data
            )
        except ValidationError as exc:
            _form_errors(form, exc)
        else:
            messages.success(request, f"{resource.ident} is blocked for that period.")
            return redirect("labrecords:resource-detail", ident=resource.ident)
    return _resource_page(request, resource, block_form=form, status=400)


@require_POST
@login_required
def resource_broken(request, ident: str):
    resource = resource_for_user(request.user, ident)
    require_role(request.user, *RESOURCE_ROLES)
    form = BrokenForm(request.POST, prefix="broken")
    if form.is_valid():
        try:
            resource_services.resource_mark_broken(
                actor=request.user, resource=resource, **form.cleaned_data
            )
        except ValidationError as exc:
            _form_errors(form, exc)
        else:
            messages.success(
                request, f"{resource.ident} is marked broken; the schedule plans around it."
            )
            return redirect("labrecords:resource-detail", ident=resource.ident)
    return _resource_page(request, resource, broken_form=form, status=400)


@require_POST
@login_required
def resource_block_end(request, ident: str, block_pk: int):
    resource = resource_for_user(request.user, ident)
    require_role(request.user, *RESOURCE_ROLES)
    block = get_object_or_404(ResourceBlock, pk=block_pk, resource=resource)
    form = ReasonForm(request.POST)
    if not form.is_valid():
        messages.error(request, "Why: say why the block ends early.")
    else:
        try:
            resource_services.resource_block_end(
                actor=request.user, block=block, reason=form.cleaned_data["reason"]
            )
        except ValidationError as exc:
            for error in exc.messages:
                messages.error(request, error)
        else:
            messages.success(request, "The block is ended.")
    return redirect("labrecords:resource-detail", ident=resource.ident)


def _calendar_page(request, *, holiday_form=None, hours_form=None, status=200):
    today = timezone.localdate(clock.now())
    hours = list(LabHours.objects.order_by("-valid_from", "-id")[:10])
    for row in hours:
        row.day_names = ", ".join(WEEKDAYS[int(d)][1] for d in row.weekdays)
    return render(
        request,
        "labrecords/schedule/calendar.html",
        {
            "holidays": list(LabHoliday.objects.filter(day__gte=today).order_by("day")),
            "past_holidays": list(LabHoliday.objects.filter(day__lt=today).order_by("-day")[:10]),
            "hours": hours,
            "can_change": has_role(request.user, *RESOURCE_ROLES),
            "holiday_form": holiday_form or HolidayForm(prefix="holiday"),
            "hours_form": hours_form
            or LabHoursForm(
                prefix="hours",
                initial={
                    "weekdays": hours[0].weekdays if hours else [0, 1, 2, 3, 4],
                    "opens": hours[0].opens if hours else "08:00",
                    "closes": hours[0].closes if hours else "17:00",
                    "valid_from": today,
                },
            ),
            "remove_form": ReasonForm(),
        },
        status=status,
    )


@require_safe
@login_required
def lab_calendar(request):
    lab_staff_only(request.user)
    return _calendar_page(request)


@require_POST
@login_required
def holiday_add(request):
    lab_staff_only(request.user)
    require_role(request.user, *RESOURCE_ROLES)
    form = HolidayForm(request.POST, prefix="holiday")
    if form.is_valid():
        try:
            resource_services.lab_holiday_create(actor=request.user, **form.cleaned_data)
        except ValidationError as exc:
            _form_errors(form, exc)
        else:
            messages.success(request, "Holiday added.")
            return redirect("labrecords:lab-calendar")
    return _calendar_page(request, holiday_form=form, status=400)


@require_POST
@login_required
def holiday_remove(request, pk: int):
    lab_staff_only(request.user)
    require_role(request.user, *RESOURCE_ROLES)
    holiday = get_object_or_404(LabHoliday, pk=pk)
    form = ReasonForm(request.POST)
    if not form.is_valid():
        messages.error(request, "Why: say why the holiday is removed.")
    else:
        resource_services.lab_holiday_remove(
            actor=request.user, holiday=holiday, reason=form.cleaned_data["reason"]
        )
        messages.success(request, "Holiday removed.")
    return redirect("labrecords:lab-calendar")


@require_POST
@login_required
def lab_hours_set(request):
    lab_staff_only(request.user)
    require_role(request.user, *RESOURCE_ROLES)
    form = LabHoursForm(request.POST, prefix="hours")
    if form.is_valid():
        try:
            resource_services.lab_hours_set(actor=request.user, **form.cleaned_data)
        except ValidationError as exc:
            _form_errors(form, exc)
        else:
            messages.success(request, "Lab hours recorded.")
            return redirect("labrecords:lab-calendar")
    return _calendar_page(request, hours_form=form, status=400)
