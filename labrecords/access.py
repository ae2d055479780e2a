"""Who may see which record. One helper per model; querysets filter by it.

Lab staff (technician, engineer, reviewer, quality manager, administrator) see
every lab record. A customer user sees only records of its own organisation.
Anyone else, and anyone asking for an object outside their right, is an
outsider and gets 404, so a URL never confirms that a record exists.
"""

from __future__ import annotations

from django.core.exceptions import PermissionDenied
from django.db.models import Q
from django.http import Http404
from django.shortcuts import get_object_or_404

from labrecords.roles import Role, has_role, is_lab_staff

_NOTHING = Q(pk__in=[])


def customer_id_of(user) -> int | None:
    """The organisation of a customer user, or None."""
    if not has_role(user, Role.CUSTOMER):
        return None
    link = getattr(user, "customer_link", None)
    return link.customer_id if link is not None else None


def customer_filter(user, customer_field: str) -> Q:
    """A filter on `customer_field` (a path to a Customer id) that keeps what `user` may see."""
    if is_lab_staff(user):
        return Q()
    customer_id = customer_id_of(user)
    if customer_id is None:
        return _NOTHING
    return Q(**{customer_field: customer_id})


def require_role(user, *roles: Role) -> None:
    """Refuse an action to a user who holds none of `roles` (403: the page itself is known)."""
    if not has_role(user, *roles):
        raise PermissionDenied("Your role does not allow this.")


def lot_for_user(user, pk: int):
    from labrecords.models import Lot

    return get_object_or_404(Lot.objects.visible_to(user).for_listing(), pk=pk)


def order_for_user(user, pk: int):
    from labrecords.models import Order

    return get_object_or_404(Order.objects.visible_to(user).select_related("customer"), pk=pk)


def spec_for_user(user, pk: int):
    from labrecords.models import CoatingSpec

    return get_object_or_404(
        CoatingSpec.objects.visible_to(user).select_related("order__customer", "glass"), pk=pk
    )


def piece_for_user(user, ident: str):
    from labrecords.models import WitnessPiece

    return get_object_or_404(
        WitnessPiece.objects.visible_to(user).select_related("lot__order__customer", "glass"),
        ident=ident,
    )


def lab_staff_only(user) -> None:
    """Pages that exist only for the lab: an outsider or customer sees 404."""
    if not is_lab_staff(user):
        raise Http404


def chamber_run_for_user(user, pk: int):
    """A chamber run holding at least one piece the user may see (lab staff: any run)."""
    from labrecords.models import ChamberRun

    return get_object_or_404(
        ChamberRun.objects.visible_to(user).select_related(
            "chamber", "logger", "method_version__method", "loaded_by"
        ),
        pk=pk,
    )


def evidence_for_user(user, pk: int):
    """An evidence file of the user's own lots, or of a chamber run holding one of their
    pieces (lab staff: any)."""
    from labrecords.models import Evidence

    visible = customer_filter(user, "lot__order__customer_id") | customer_filter(
        user, "chamber_run__pieces__piece__lot__order__customer_id"
    )
    ids = Evidence.objects.filter(visible).filter(pk=pk).values("pk")
    return get_object_or_404(
        Evidence.objects.select_related("piece__lot__spec", "chamber_run"), pk__in=ids
    )


def report_for_user(user, number: str):
    """An issued report (or amendment, or re-issue) of the user's organisation (lab: any)."""
    from labrecords.models import Report

    return get_object_or_404(
        Report.objects.visible_to(user).select_related(
            "lot__order__customer", "issued_by", "amends__replaced_by", "replaces", "replaced_by",
            "review__reviewer"),
        number=number,
    )


def resource_for_user(user, ident: str):
    """A chamber or bench station: lab staff only (404 for anyone else)."""
    from durability.models import Resource

    lab_staff_only(user)
    return get_object_or_404(Resource.objects.select_related("instrument"), ident=ident)


def result_for_user(user, record_key):
    """The current revision of a step result on a piece the user may see (lab: any)."""
    from labrecords.models import StepResult

    return get_object_or_404(
        StepResult.objects.current()
        .filter(customer_filter(user, "piece__lot__order__customer_id"))
        .select_related("piece__lot__order__customer", "step__method_version__method__standard"),
        record_key=record_key,
    )


def nonconformance_for_user(user, number: str):
    """A nonconformance: lab staff only (404 for anyone else)."""
    from labrecords.models import Nonconformance

    lab_staff_only(user)
    return get_object_or_404(
        Nonconformance.objects.select_related(
            "lot__order__customer", "result__piece", "result__step", "report", "opened_by",
            "disposed_by"),
        number=number,
    )
