from __future__ import annotations

import datetime
from typing import Any

from django.db import transaction

from labrecords.access import require_role
from labrecords.models import CoatingSpec, Customer, Order
from labrecords.roles import Role
from labrecords.services.audit import change_audited, create_audited

SPEC_FIELDS = (
    "part_number",
    "title",
    "glass",
    "wavelength_min_nm",
    "wavelength_max_nm",
    "quantity",
    "statistic",
    "limit_min_pct",
    "limit_max_pct",
    "aoi_min_deg",
    "aoi_max_deg",
    "polarization",
    "clear_aperture_mm",
    "sides_coated",
    "callout_text",
    "laser_damage",
    "witness_requirement",
    "documentation",
    "marking",
    "packaging",
)


@transaction.atomic
def order_create(
    *,
    actor,
    customer: Customer,
    number: str,
    customer_order_number: str,
    received_on: datetime.date,
    due_date: datetime.date | None = None,
    decision_rule: str = "simple",
    note: str = "",
) -> Order:
    """Register a customer's order."""
    require_role(actor, Role.ENGINEER, Role.ADMINISTRATOR, Role.QUALITY_MANAGER)
    order = Order(
        customer=customer,
        number=number,
        customer_order_number=customer_order_number,
        received_on=received_on,
        due_date=due_date,
        decision_rule=decision_rule,
        note=note,
    )
    return create_audited(actor=actor, obj=order)


@transaction.atomic
def coating_spec_create(*, actor, order: Order, part_number: str, **fields: Any) -> CoatingSpec:
    """Record a customer's coating spec for an order (blank fields mean 'not stated')."""
    require_role(actor, Role.ENGINEER)
    unknown = set(fields) - set(SPEC_FIELDS)
    if unknown:
        raise TypeError(f"Unknown coating spec fields: {', '.join(sorted(unknown))}")
    spec = CoatingSpec(order=order, part_number=part_number, **fields)
    return create_audited(actor=actor, obj=spec)


@transaction.atomic
def coating_spec_update(*, actor, spec: CoatingSpec, reason: str, **fields: Any) -> CoatingSpec:
    """Change a coating spec; every change is audited with old and new values and the reason."""
    require_role(actor, Role.ENGINEER)
    unknown = set(fields) - set(SPEC_FIELDS)
    if unknown:
        raise TypeError(f"Unknown coating spec fields: {', '.join(sorted(unknown))}")
    if not reason.strip():
        raise ValueError("Say why the coating spec changes.")
    locked = CoatingSpec.objects.select_for_update().get(pk=spec.pk)
    return change_audited(actor=actor, obj=locked, changes=fields, reason=reason)
