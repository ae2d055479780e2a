"""The schedule pages: promised dates, late lots and why, and the resource timeline."""

import datetime

from django.contrib.auth.decorators import login_required
from django.shortcuts import render
from django.utils import timezone
from django.views.decorators.http import require_safe
from django_tables2 import RequestConfig

from durability.safety import cautions_for
from labrecords import clock
from labrecords.access import lab_staff_only
from labrecords.forms_schedule import TimelineForm
from labrecords.selectors_schedule import lab_zone
from labrecords.services.scheduling import lab_schedule
from labrecords.tables_schedule import PromiseTable
from labrecords.timeline import lanes_from, layout, open_windows


@require_safe
@login_required
def schedule_page(request):
    """Every lot's promised date, the late ones with the reason, and the schedule's quality."""
    lab_staff_only(request.user)
    schedule = lab_schedule()
    table = PromiseTable(list(schedule.lots))
    RequestConfig(request, paginate=False).configure(table)
    return render(
        request,
        "labrecords/schedule/schedule.html",
        {
            "schedule": schedule,
            "table": table,
            "late": list(schedule.late),
            "unschedulable": list(schedule.unschedulable),
            "cautions": cautions_for(sorted(schedule.hazards())),
        },
    )


@require_safe
@login_required
def timeline_page(request):
    """Lanes per resource over the next days (SVG), with the same schedule as a table."""
    lab_staff_only(request.user)
    form = TimelineForm(request.GET or None)
    days, only = 7, ""
    if form.is_valid():
        days = form.cleaned_data["days"] or 7
        only = form.cleaned_data["resource"] or ""
    schedule = lab_schedule()
    zone = lab_zone()
    start = timezone.localtime(clock.now(), zone).replace(hour=0, minute=0, second=0, microsecond=0)
    end = start + datetime.timedelta(days=days)
    resources = [r for r in schedule.resources if not only or r.ident == only]
    lanes = lanes_from(schedule, resources=resources, start=start, end=end)
    windows = open_windows(
        start,
        end,
        zone=zone,
        days=schedule.lab_days,
        opens=schedule.opens,
        closes=schedule.closes,
        holidays=schedule.holidays,
    )
    drawing = layout(lanes, start=start, end=end, now=clock.now(), zone=zone, windows=windows)
    return render(
        request,
        "labrecords/schedule/timeline.html",
        {
            "schedule": schedule,
            "form": form,
            "lanes": lanes,
            "drawing": drawing,
            "days": days,
            "only": only,
            "start": start,
            "end": end,
            "resource_idents": [r.ident for r in schedule.resources],
            "cautions": cautions_for(sorted({h for lane in lanes for h in lane.hazards})),
        },
    )
