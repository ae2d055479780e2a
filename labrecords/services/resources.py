"""Chambers and bench stations, their blocked periods, and the lab's calendar.

The quality manager or the administrator keeps these. Every change is audited;
blocked periods and holidays removed are kept in the audit trail with the reason.
"""

from __future__ import annotations

import datetime
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

from django.core.exceptions import ValidationError
from django.db import transaction

from durability.models import (
    CalendarKind,
    Instrument,
    LabHoliday,
    LabHours,
    MethodKind,
    Resource,
    ResourceBlock,
)
from labrecords import clock
from labrecords.access import require_role
from labrecords.roles import Role
from labrecords.services.audit import audit_record, change_audited, create_audited, snapshot

RESOURCE_ROLES = (Role.QUALITY_MANAGER, Role.ADMINISTRATOR)
RANGE_NAMES = ("temperature_c", "rh_pct")


def _kinds(kinds: Iterable[str]) -> list[str]:
    known = {choice.value for choice in MethodKind}
    cleaned = sorted(set(kinds))
    unknown = [k for k in cleaned if k not in known]
    if unknown:
        raise ValidationError({"kinds": f"Unknown method kind(s): {', '.join(unknown)}."})
    if not cleaned:
        raise ValidationError({"kinds": "Name at least one method kind the resource runs."})
    return cleaned


def _ranges(ranges: Mapping[str, Sequence[float]] | None) -> dict[str, list[float]]:
    cleaned: dict[str, list[float]] = {}
    for name, bounds in (ranges or {}).items():
        if name not in RANGE_NAMES:
            raise ValidationError(
                {"condition_ranges": (f"Unknown range {name!r}; use {' or '.join(RANGE_NAMES)}.")}
            )
        try:
            low, high = (float(b) for b in bounds)
        except (TypeError, ValueError):
            raise ValidationError(
                {"condition_ranges": (f"{name}: give two numbers, the lowest and the highest.")}
            ) from None
        if low > high:
            raise ValidationError({"condition_ranges": f"{name}: {low:g} is above {high:g}."})
        cleaned[name] = [low, high]
    return cleaned


@transaction.atomic
def resource_create(
    *,
    actor,
    ident: str,
    name: str,
    calendar: str,
    kinds: Iterable[str],
    capacity: int,
    condition_ranges: Mapping[str, Sequence[float]] | None = None,
    instrument: Instrument | None = None,
) -> Resource:
    """Register a chamber (calendar 'always') or a bench station (calendar 'lab_hours')."""
    require_role(actor, *RESOURCE_ROLES)
    if calendar not in CalendarKind.values:
        raise ValidationError(
            {"calendar": "Choose a chamber (always) or a bench station (lab hours)."}
        )
    resource = Resource(
        ident=ident,
        name=name,
        calendar=calendar,
        kinds=_kinds(kinds),
        capacity=capacity,
        condition_ranges=_ranges(condition_ranges),
        instrument=instrument,
    )
    return create_audited(actor=actor, obj=resource)


@transaction.atomic
def resource_update(*, actor, resource: Resource, reason: str, **changes: Any) -> Resource:
    """Change a resource's name, kinds, capacity, condition ranges, instrument or activity."""
    require_role(actor, *RESOURCE_ROLES)
    allowed = {"name", "kinds", "capacity", "condition_ranges", "instrument", "active"}
    unknown = set(changes) - allowed
    if unknown:
        raise TypeError(f"Unknown resource fields: {', '.join(sorted(unknown))}")
    if not reason.strip():
        raise ValidationError({"reason": "Say why the resource changes."})
    if "kinds" in changes:
        changes["kinds"] = _kinds(changes["kinds"])
    if "condition_ranges" in changes:
        changes["condition_ranges"] = _ranges(changes["condition_ranges"])
    locked = Resource.objects.select_for_update().get(pk=resource.pk)
    return change_audited(actor=actor, obj=locked, changes=changes, reason=reason)


def _aware(moment: datetime.datetime, field: str) -> datetime.datetime:
    if not isinstance(moment, datetime.datetime) or moment.tzinfo is None:
        raise ValidationError({field: "Give a date and time with its time zone."})
    return moment


@transaction.atomic
def resource_block_create(
    *,
    actor,
    resource: Resource,
    starts_at: datetime.datetime,
    ends_at: datetime.datetime,
    reason: str,
) -> ResourceBlock:
    """Block a resource for a period (maintenance, calibration, breakdown), with the reason."""
    require_role(actor, *RESOURCE_ROLES)
    starts_at = _aware(starts_at, "starts_at")
    ends_at = _aware(ends_at, "ends_at")
    if not reason.strip():
        raise ValidationError({"reason": "Say why the resource is blocked."})
    if ends_at <= clock.now():
        raise ValidationError({"ends_at": "This block would already be over."})
    if ends_at <= starts_at:
        raise ValidationError({"ends_at": "The block must end after it starts."})
    block = ResourceBlock(
        resource=resource,
        starts_at=starts_at,
        ends_at=ends_at,
        reason=reason.strip(),
        created_by=actor,
        created_at=clock.now(),
    )
    return create_audited(actor=actor, obj=block, reason=reason.strip())


def resource_mark_broken(
    *, actor, resource: Resource, expected_end: datetime.datetime, reason: str
) -> ResourceBlock:
    """A breakdown: block the resource from now until the expected end of the repair."""
    try:
        return resource_block_create(
            actor=actor,
            resource=resource,
            starts_at=clock.now(),
            ends_at=expected_end,
            reason=reason,
        )
    except ValidationError as exc:
        # Name the field as this service's caller knows it.
        if hasattr(exc, "message_dict") and "ends_at" in exc.message_dict:
            errors = dict(exc.message_dict)
            errors["expected_end"] = errors.pop("ends_at")
            raise ValidationError(errors) from None
        raise


@transaction.atomic
def resource_block_end(*, actor, block: ResourceBlock, reason: str) -> ResourceBlock | None:
    """End a block now (the chamber is repaired early), or cancel one not started yet.

    A block that has started is cut short at now; a future one is removed. Both are
    audited with the reason; a block already over is refused.
    """
    require_role(actor, *RESOURCE_ROLES)
    if not reason.strip():
        raise ValidationError({"reason": "Say why the block ends early."})
    locked = ResourceBlock.objects.select_for_update().get(pk=block.pk)
    now = clock.now()
    if locked.ends_at <= now:
        raise ValidationError({"block": "This block is already over."})
    if locked.starts_at >= now:
        audit_record(
            actor=actor, action="cancel block", obj=locked, before=snapshot(locked), reason=reason
        )
        locked.delete()
        return None
    return change_audited(actor=actor, obj=locked, changes={"ends_at": now}, reason=reason)


@transaction.atomic
def lab_holiday_create(*, actor, day: datetime.date, name: str) -> LabHoliday:
    """A day the lab is closed: no bench work and no chamber loading."""
    require_role(actor, *RESOURCE_ROLES)
    if not name.strip():
        raise ValidationError({"name": "Name the holiday or closure."})
    if LabHoliday.objects.filter(day=day).exists():
        raise ValidationError({"day": f"{day:%Y-%m-%d} is already a lab holiday."})
    return create_audited(actor=actor, obj=LabHoliday(day=day, name=name.strip()))


@transaction.atomic
def lab_holiday_remove(*, actor, holiday: LabHoliday, reason: str) -> None:
    """Take a holiday off the calendar (audited with the reason)."""
    require_role(actor, *RESOURCE_ROLES)
    if not reason.strip():
        raise ValidationError({"reason": "Say why the holiday is removed."})
    audit_record(
        actor=actor, action="remove holiday", obj=holiday, before=snapshot(holiday), reason=reason
    )
    holiday.delete()


@transaction.atomic
def lab_hours_set(
    *,
    actor,
    weekdays: Iterable[int],
    opens: datetime.time,
    closes: datetime.time,
    valid_from: datetime.date,
) -> LabHours:
    """Record the lab's hours from a date on (a new row; earlier hours stay on record)."""
    require_role(actor, *RESOURCE_ROLES)
    days = sorted({int(d) for d in weekdays})
    if not days:
        raise ValidationError({"weekdays": "Choose at least one working day."})
    if any(not 0 <= d <= 6 for d in days):
        raise ValidationError({"weekdays": "Weekdays are numbered Monday = 0 to Sunday = 6."})
    if closes <= opens:
        raise ValidationError({"closes": "The lab must close after it opens (same day)."})
    hours = LabHours(weekdays=days, opens=opens, closes=closes, valid_from=valid_from)
    hours.full_clean()
    hours.save()
    # Times of day written out by hand: the audit snapshot knows dates, not times.
    after = {
        **snapshot(hours, ["weekdays", "valid_from"]),
        "opens": opens.strftime("%H:%M"),
        "closes": closes.strftime("%H:%M"),
    }
    audit_record(actor=actor, action="create", obj=hours, after=after)
    return hours
