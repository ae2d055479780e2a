"""Who may record which method: the quality manager's authorisation list.

A grant is a row; a revocation stamps that row with who and when (the row is
kept, so the list's history stays readable). Both are audited. Recording a
step result checks the list through `require_method_authorisation`.
"""

from __future__ import annotations

from django.core.exceptions import PermissionDenied, ValidationError
from django.db import IntegrityError, transaction

from durability.models import Method
from labrecords import clock
from labrecords.access import require_role
from labrecords.models import MethodAuthorisation
from labrecords.roles import Role, has_role
from labrecords.services.audit import audit_record, change_audited, snapshot

# Only people who record results can be put on the list.
RECORDING_ROLES = (Role.TECHNICIAN, Role.ENGINEER)
# The list serves both who may record a method and who may review its results.
AUTHORISABLE_ROLES = (*RECORDING_ROLES, Role.REVIEWER)


def is_authorised(user, method: Method) -> bool:
    """True when `user` holds an active authorisation for `method`."""
    return MethodAuthorisation.objects.filter(
        user=user, method=method, revoked_at__isnull=True
    ).exists()


def require_method_authorisation(user, method: Method) -> None:
    """Refuse (403) a user who is not on the list for `method`."""
    if not is_authorised(user, method):
        raise PermissionDenied(
            f"{user.get_full_name() or user.get_username()} is not authorised to record "
            f"{method.code} ({method.name}); the quality manager keeps the authorisation list."
        )


@transaction.atomic
def method_authorisation_grant(*, actor, user, method: Method,
                               reason: str = "") -> MethodAuthorisation:
    """Put `user` on the list for `method` (quality manager). Refused when already on it.

    A technician or engineer on the list may record the method; a reviewer on it may review
    its results (recording still needs a recording role).
    """
    require_role(actor, Role.QUALITY_MANAGER)
    if not has_role(user, *AUTHORISABLE_ROLES):
        raise ValidationError(
            {"user": f"{user.get_username()} holds no role the list is for "
                     "(technician, engineer or reviewer)."}
        )
    if is_authorised(user, method):
        raise ValidationError(
            {"method": f"{user.get_username()} is already authorised for {method.code}."}
        )
    grant = MethodAuthorisation(user=user, method=method, granted_by=actor,
                                granted_at=clock.now())
    grant.full_clean(validate_constraints=False)
    try:
        with transaction.atomic():
            grant.save()
    except IntegrityError:
        # Two grants at once: the partial unique constraint keeps one active row.
        raise ValidationError(
            {"method": f"{user.get_username()} is already authorised for {method.code}."}
        ) from None
    audit_record(actor=actor, action="grant", obj=grant, after=snapshot(grant), reason=reason)
    return grant


@transaction.atomic
def method_authorisation_revoke(*, actor, authorisation: MethodAuthorisation,
                                reason: str) -> MethodAuthorisation:
    """Take a user off the list for a method (quality manager, with a reason)."""
    require_role(actor, Role.QUALITY_MANAGER)
    if not reason.strip():
        raise ValidationError({"reason": "Say why the authorisation is revoked."})
    locked = MethodAuthorisation.objects.select_for_update().get(pk=authorisation.pk)
    if locked.revoked_at is not None:
        raise ValidationError({"authorisation": "This authorisation is already revoked."})
    return change_audited(actor=actor, obj=locked,
                          changes={"revoked_by": actor, "revoked_at": clock.now()},
                          reason=reason)
