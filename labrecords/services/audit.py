from __future__ import annotations

import datetime
import decimal
import uuid
from collections.abc import Iterable, Mapping
from typing import TypeVar

from django.db import models

from labrecords import clock
from labrecords.models import AuditEntry

M = TypeVar("M", bound=models.Model)


def _plain(value: object) -> object:
    if isinstance(value, models.Model):
        return value.pk
    if isinstance(value, decimal.Decimal):
        return str(value)
    if isinstance(value, datetime.datetime | datetime.date):
        return value.isoformat()
    if isinstance(value, uuid.UUID):
        return str(value)
    return value


def snapshot(obj: models.Model, fields: Iterable[str] | None = None) -> dict[str, object]:
    """The object's concrete field values as plain JSON-ready values."""
    names = fields or [f.attname for f in obj._meta.concrete_fields]
    return {name: _plain(getattr(obj, name)) for name in names}


def audit_record(
    *,
    actor,
    action: str,
    obj: models.Model,
    before: Mapping[str, object] | None = None,
    after: Mapping[str, object] | None = None,
    reason: str = "",
) -> AuditEntry:
    """Write one audit entry. `before`/`after` are snapshots; only changed keys are kept."""
    before = dict(before or {})
    after = dict(after or {})
    changes = {
        key: [before.get(key), after.get(key)]
        for key in sorted(set(before) | set(after))
        if before.get(key) != after.get(key)
    }
    return AuditEntry.objects.create(
        actor=actor if getattr(actor, "pk", None) else None,
        at=clock.now(),
        action=action,
        model=obj._meta.label,
        object_pk=str(obj.pk),
        object_repr=str(obj)[:200],
        changes=changes,
        reason=reason,
    )


def create_audited(*, actor, obj: M, reason: str = "") -> M:
    """Validate, insert and audit a new object (call inside a transaction)."""
    obj.full_clean()
    obj.save()
    audit_record(actor=actor, action="create", obj=obj, after=snapshot(obj), reason=reason)
    return obj


def change_audited(
    *, actor, obj: M, changes: Mapping[str, object], reason: str = ""
) -> M:
    """Apply field changes, validate, save and audit old and new values."""
    before = snapshot(obj)
    for name, value in changes.items():
        setattr(obj, name, value)
    obj.full_clean()
    obj.save()
    after = snapshot(obj)
    if before != after:
        audit_record(
            actor=actor, action="change", obj=obj, before=before, after=after, reason=reason
        )
    return obj
