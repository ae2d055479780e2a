"""Calendar feeds: the user's feed tokens, and the read-only iCalendar feed per resource.

The feed is one of the two pages open without signing in: the token in its URL is
the key. An unknown or revoked token, a token of someone no longer lab staff, or an
unknown resource all answer 404.
"""

import datetime

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.core.exceptions import ValidationError
from django.http import Http404, HttpResponse
from django.shortcuts import get_object_or_404, redirect, render
from django.urls import reverse
from django.views.decorators.http import require_POST, require_safe

from labrecords import clock
from labrecords.access import lab_staff_only
from labrecords.ical import Event, calendar_text
from labrecords.models import CalendarFeedToken
from labrecords.roles import Role, has_role
from labrecords.selectors_custody import base_url
from labrecords.services import feeds as feed_services
from labrecords.services.scheduling import lab_schedule

# How far ahead the feed lists steps and blocks.
FEED_DAYS = 28


def _tokens_page(request, *, new_token: str | None = None, status: int = 200):
    tokens = CalendarFeedToken.objects.select_related("user")
    if not has_role(request.user, Role.ADMINISTRATOR):
        tokens = tokens.filter(user=request.user)
    schedule = lab_schedule()
    base = base_url(request)
    feed_urls = []
    if new_token:
        feed_urls = [
            (r.ident, base + reverse("labrecords:resource-feed", args=[new_token, r.ident]))
            for r in schedule.resources
        ]
    return render(
        request,
        "labrecords/schedule/feeds.html",
        {
            "tokens": list(tokens.order_by("-created_at")),
            "new_token": new_token,
            "feed_urls": feed_urls,
        },
        status=status,
    )


@require_safe
@login_required
def feed_tokens(request):
    lab_staff_only(request.user)
    return _tokens_page(request)


@require_POST
@login_required
def feed_token_create(request):
    """Make a token and show its feed URLs once (never stored, never sent again)."""
    lab_staff_only(request.user)
    _row, token = feed_services.calendar_feed_token_create(actor=request.user)
    response = _tokens_page(request, new_token=token)
    response["Cache-Control"] = "no-store"
    return response


@require_POST
@login_required
def feed_token_revoke(request, pk: int):
    lab_staff_only(request.user)
    tokens = CalendarFeedToken.objects.all()
    if not has_role(request.user, Role.ADMINISTRATOR):
        tokens = tokens.filter(user=request.user)
    token = get_object_or_404(tokens, pk=pk)
    try:
        feed_services.calendar_feed_token_revoke(actor=request.user, token=token)
    except ValidationError as exc:
        for error in exc.messages:
            messages.error(request, error)
    else:
        messages.success(request, "The token is revoked: its feeds answer nothing now.")
    return redirect("labrecords:feeds")


def _uid(resource: str, key: str) -> str:
    return f"{resource}-{key}@durability-records"


@require_safe
def resource_feed(request, token: str, ident: str):
    """The resource's scheduled runs and steps and its blocked periods, as iCalendar."""
    if feed_services.feed_user(token) is None:
        raise Http404
    schedule = lab_schedule()
    resource = next((r for r in schedule.resources if r.ident == ident), None)
    if resource is None:
        raise Http404
    now = clock.now()
    until = now + datetime.timedelta(days=FEED_DAYS)
    events: list[Event] = []
    groups: dict[str, list] = {}
    for step in schedule.steps_on(ident):
        if step.end <= now or step.start >= until:
            continue
        key = (step.chamber_run or step.step_id) if resource.is_chamber else step.step_id
        groups.setdefault(key, []).append(step)
    for steps in groups.values():
        first = steps[0]
        members = sorted(s.step_id for s in steps)
        lots = sorted({s.lot_number for s in steps})
        if resource.is_chamber:
            summary = f"{ident}: {first.name}, lots {', '.join(lots)}"
        else:
            summary = f"{ident}: {first.name}, {first.piece_ident}"
        description = "\n".join(
            f"{s.piece_ident} (lot {s.lot_number}, sequence {s.sequence}): {s.name}"
            for s in sorted(steps, key=lambda s: s.piece_ident)
        )
        # The UID follows the pieces and steps, so a run moved by re-planning keeps it.
        events.append(
            Event(
                uid=_uid(ident, "+".join(members)),
                start=min(s.start for s in steps),
                end=max(s.end for s in steps),
                summary=summary,
                description=description,
                location=resource.name,
                categories=(first.kind.replace("_", " "),),
            )
        )
    for block in resource.blocks:
        if block.ends_at <= now or block.starts_at >= until:
            continue
        key = f"block-{block.block_id}" if block.block_id else f"block-{block.starts_at:%Y%m%d%H%M}"
        events.append(
            Event(
                uid=_uid(ident, key),
                start=block.starts_at,
                end=block.ends_at,
                summary=f"{ident} blocked: {block.reason}",
                location=resource.name,
                categories=("blocked",),
            )
        )
    events.sort(key=lambda e: (e.start, e.uid))
    text = calendar_text(events, name=f"{ident} {resource.name}", stamp=schedule.start)
    response = HttpResponse(text.encode("utf-8"), content_type="text/calendar; charset=utf-8")
    response["Content-Disposition"] = f'inline; filename="{ident}.ics"'
    response["Cache-Control"] = "private, max-age=300"
    return response
