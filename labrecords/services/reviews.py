"""Reviews and electronic signatures.

A review is the check of a lot's results by a second person; its signature points at the
exact result revisions it covers (ReviewedResult), so a later correction of any of them
voids it (computed in `labrecords.selectors_reports.review_is_void`).

Who may review (the rule, stated once here):
  - the reviewer role;
  - did not do the work: recorded no revision of any covered result;
  - for each method of the covered steps: on that method's active MethodAuthorisation list
    when the list has anyone on it; when nobody is on it, the reviewer role suffices.

Signing (in the spirit of 21 CFR 11.50 and 11.200, per shared/reference/records-and-
security.md [mem]): every signature asks for the password again; the first signing in a
session asks for the user name too. A signature records the printed name, the role, the
date and time with the time zone, and its meaning. A refused attempt is written to the
audit trail (and logged), so repeated attempts can be seen.
"""

from __future__ import annotations

import logging
from collections import defaultdict

from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import transaction

from labrecords import clock
from labrecords.access import require_role
from labrecords.models import (
    Lot,
    LotStage,
    MethodAuthorisation,
    Review,
    ReviewedResult,
    Signature,
    SignatureMeaning,
    StepResult,
)
from labrecords.roles import Role, roles_of
from labrecords.selectors_reports import LotResults, lot_results, printed_name
from labrecords.services.audit import audit_record, create_audited
from labrecords.services.lots import lot_stage_set

logger = logging.getLogger("labrecords.signing")

WRONG_CREDENTIALS = "The user name or password is not correct; nothing was signed."
USERNAME_NEEDED = (
    "Enter your user name as well: the first signing in a session asks for "
    "both user name and password."
)


def signing_credentials_check(
    *, actor, password: str, username: str | None, first_in_session: bool, what: str
) -> None:
    """Refuse a signature unless the signer re-entered their credentials.

    `first_in_session`: the caller's session has not signed yet, so the user name is
    required as well. A refusal is audited (in its own transaction) and raised as a
    ValidationError on the field to show it next to.
    """
    problem: tuple[str, str] | None = None
    if first_in_session and not (username or "").strip():
        problem = ("username", USERNAME_NEEDED)
    elif username and username.strip() != actor.get_username():
        problem = ("password", WRONG_CREDENTIALS)
    elif not password or not actor.check_password(password):
        problem = ("password", WRONG_CREDENTIALS)
    if problem is None:
        return
    if problem[1] == WRONG_CREDENTIALS:
        with transaction.atomic():
            audit_record(
                actor=actor,
                action="signing refused",
                obj=actor,
                after={"signing": what, "because": "wrong user name or password"},
            )
        logger.warning(
            "signing refused for user %s (%s): wrong user name or password", actor.pk, what
        )
    raise ValidationError({problem[0]: problem[1]})


def signer_role(user, *allowed: Role) -> str:
    """The role a user signs in: the first of `allowed` they hold."""
    held = roles_of(user)
    return next((role.value for role in allowed if role in held), "")


def reviewer_problems(user, state: LotResults) -> list[str]:
    """Why `user` may not review these results (empty when they may). See the module doc."""
    problems = []
    rows = [row for row in state.planned if row.result is not None]
    keys = {row.result.record_key for row in rows}
    own = set(
        StepResult.objects.filter(record_key__in=keys, recorded_by=user).values_list(
            "record_key", flat=True
        )
    )
    if own:
        done = [row.where for row in rows if row.result.record_key in own]
        problems.append(
            f"{printed_name(user)} recorded {len(done)} of these results ({'; '.join(done[:3])}"
            f"{'; ...' if len(done) > 3 else ''}): the review is done by someone who did "
            "not do the work"
        )
    methods = {row.step.method_version.method_id: row.step.method_version.method for row in rows}
    listed: dict[int, set[int]] = defaultdict(set)
    for method_id, user_id in MethodAuthorisation.objects.filter(
        method_id__in=methods, revoked_at__isnull=True
    ).values_list("method_id", "user_id"):
        listed[method_id].add(user_id)
    for method_id, method in sorted(methods.items(), key=lambda item: item[1].code):
        if listed[method_id] and user.pk not in listed[method_id]:
            problems.append(
                f"{printed_name(user)} is not on the authorisation list for method {method.code}"
            )
    return problems


def review_sign(
    *,
    actor,
    lot: Lot,
    password: str,
    username: str | None = None,
    first_in_session: bool = True,
    comment: str = "",
) -> Review:
    """Review a lot's current results and sign the review (meaning: review).

    Refused (ValidationError naming each item) while a result is missing or invalid, or when
    the actor may not review them (see the module doc). Moves the lot to "signed".
    """
    require_role(actor, Role.REVIEWER)
    signing_credentials_check(
        actor=actor,
        password=password,
        username=username,
        first_in_session=first_in_session,
        what=f"review of lot {lot}",
    )
    return _review_sign(actor=actor, lot=lot, comment=comment)


@transaction.atomic
def _review_sign(*, actor, lot: Lot, comment: str) -> Review:
    lot = Lot.objects.select_for_update().get(pk=lot.pk)
    state = lot_results(lot)
    missing = state.problems()
    if missing:
        raise ValidationError(
            {"review": [f"Cannot sign the review: missing {item}." for item in missing]}
        )
    problems = reviewer_problems(actor, state)
    if problems:
        raise ValidationError({"review": [f"Cannot sign the review: {p}." for p in problems]})
    now = clock.now()
    review = create_audited(
        actor=actor, obj=Review(lot=lot, reviewer=actor, reviewed_at=now, comment=comment)
    )
    results = state.results
    ReviewedResult.objects.bulk_create(
        [ReviewedResult(review=review, result=result) for result in results]
    )
    signature = Signature(
        signer=actor,
        printed_name=printed_name(actor),
        role=signer_role(actor, Role.REVIEWER),
        meaning=SignatureMeaning.REVIEW,
        signed_at=now,
        time_zone=settings.TIME_ZONE,
        review=review,
    )
    create_audited(actor=actor, obj=signature)
    audit_record(
        actor=actor,
        action="review covers",
        obj=review,
        after={"results": sorted(r.pk for r in results), "lot": lot.pk},
    )
    if lot.stage != LotStage.SIGNED:
        lot_stage_set(
            actor=actor,
            lot=lot,
            stage=LotStage.SIGNED,
            reason=f"results reviewed and signed by {printed_name(actor)}",
        )
    return review
