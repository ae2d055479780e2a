"""Calendar feed tokens: a per-user secret that opens the read-only resource feeds.

Only the SHA-256 of a token is stored; the token itself is shown once, when it is
made. Only lab staff get tokens (a customer never does), and a token stops
working when it is revoked or its owner is no longer lab staff.
"""

from __future__ import annotations

import hashlib
import secrets

from django.core.exceptions import PermissionDenied, ValidationError
from django.db import transaction

from labrecords import clock
from labrecords.models import CalendarFeedToken
from labrecords.roles import Role, has_role, is_lab_staff
from labrecords.services.audit import audit_record, change_audited, snapshot

TOKEN_BYTES = 32


def token_hash(token: str) -> str:
    return hashlib.sha256(token.encode("utf-8")).hexdigest()


@transaction.atomic
def calendar_feed_token_create(*, actor) -> tuple[CalendarFeedToken, str]:
    """Make a feed token for `actor` (lab staff only). Returns the row and the token, which
    is not stored and cannot be shown again."""
    if not is_lab_staff(actor):
        raise PermissionDenied("Calendar feeds are for lab staff only.")
    token = secrets.token_urlsafe(TOKEN_BYTES)
    row = CalendarFeedToken(user=actor, token_hash=token_hash(token), created_at=clock.now())
    row.full_clean()
    row.save()
    # The hash is left out of the audit trail too: it is the key to the feed.
    audit_record(
        actor=actor,
        action="create feed token",
        obj=row,
        after=snapshot(row, ["user_id", "created_at"]),
    )
    return row, token


@transaction.atomic
def calendar_feed_token_revoke(
    *, actor, token: CalendarFeedToken, reason: str = ""
) -> CalendarFeedToken:
    """Revoke a token: its owner may, and so may the administrator."""
    if token.user_id != actor.pk and not has_role(actor, Role.ADMINISTRATOR):
        raise PermissionDenied("Only the token's owner or the administrator may revoke it.")
    locked = CalendarFeedToken.objects.select_for_update().get(pk=token.pk)
    if locked.revoked_at is not None:
        raise ValidationError({"token": "This token is already revoked."})
    return change_audited(
        actor=actor, obj=locked, changes={"revoked_at": clock.now()}, reason=reason or "revoked"
    )


def feed_user(token: str):
    """The lab staff user a live token belongs to, or None (unknown, revoked, not staff)."""
    if not token or len(token) > 200:
        return None
    row = (
        CalendarFeedToken.objects.select_related("user")
        .filter(token_hash=token_hash(token), revoked_at__isnull=True)
        .first()
    )
    if row is None or not is_lab_staff(row.user):
        return None
    return row.user
