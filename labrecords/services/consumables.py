"""Consumables (tape, cheesecloth, eraser, solvents, salt solution) and their checks.

A consumable is registered with the supplier's lot and expiry (usable through
that date). Salt fog checks (collection rate, pH, concentration) are compared
with the limits of the salt fog method: the current version of MIL-STD-810
method 509 in the catalogue, or the published values when the catalogue lacks
them.
"""

from __future__ import annotations

import datetime
from dataclasses import dataclass
from decimal import Decimal

from django.core.exceptions import ValidationError
from django.db import transaction

from durability.models import Method, MethodVersion
from labrecords import clock
from labrecords.access import require_role
from labrecords.models import ChamberRun, Consumable, ConsumableCheck, ConsumableKind
from labrecords.roles import Role
from labrecords.services.audit import create_audited

SALT_FOG_METHOD = "MIL-STD-810:509"


@dataclass(frozen=True)
class CheckLimits:
    """The accepted range of one check quantity and where it comes from."""

    quantity: str
    label: str
    unit: str
    low: Decimal
    high: Decimal
    source: str


# MIL-STD-810 method 509 salt fog: fallout 1-3 ml per 80 cm² per hour, pH 6.5-7.2,
# NaCl 5 ± 1 % by weight, per shared/reference/test-methods.md [pub].
_PUBLISHED = {
    "collection_rate": ("Collection rate (fallout)", "ml/(80 cm²·h)", Decimal("1"),
                        Decimal("3")),
    "ph": ("pH", "", Decimal("6.5"), Decimal("7.2")),
    "concentration": ("NaCl concentration", "% by weight", Decimal("4"), Decimal("6")),
}
CHECK_QUANTITIES = tuple((key, row[0]) for key, row in _PUBLISHED.items())
_PARAMETERS = {
    "collection_rate": ("fallout_min_ml_per_80cm2_h", "fallout_max_ml_per_80cm2_h"),
    "ph": ("ph_min", "ph_max"),
}


def _number(value: object) -> Decimal | None:
    if value in (None, "") or isinstance(value, bool):
        return None
    try:
        return Decimal(str(value))
    except ArithmeticError:
        return None


def _version_limits(quantity: str, version: MethodVersion
                    ) -> tuple[Decimal, Decimal] | None:
    values = {row["name"]: row["value"] for row in version.parameters()}
    if quantity in _PARAMETERS:
        low, high = (_number(values.get(name)) for name in _PARAMETERS[quantity])
    else:
        centre = _number(values.get("concentration_pct"))
        spread = _number(values.get("concentration_tolerance_pct"))
        if centre is None or spread is None:
            return None
        low, high = centre - spread, centre + spread
    return (low, high) if low is not None and high is not None else None


def salt_fog_limits(quantity: str, version: MethodVersion | None = None) -> CheckLimits:
    """The limits for a salt fog check: from `version` (a run's method) when it states them,
    else from the current MIL-STD-810 method 509 version, else the published values."""
    if quantity not in _PUBLISHED:
        raise ValidationError({"quantity": f"Unknown check {quantity!r}."})
    label, unit, low, high = _PUBLISHED[quantity]
    source = "MIL-STD-810 method 509 as published (test-methods.md [pub])"
    method = Method.objects.filter(code=SALT_FOG_METHOD).first()
    candidates = [version, method.current_version() if method is not None else None]
    for candidate in candidates:
        found = _version_limits(quantity, candidate) if candidate is not None else None
        if found is not None:
            low, high = found
            source = f"{candidate.method.code} v{candidate.number}"
            break
    return CheckLimits(quantity=quantity, label=label, unit=unit, low=low, high=high,
                       source=source)


@transaction.atomic
def consumable_register(*, actor, kind: str, name: str, supplier_lot: str,
                        expiry: datetime.date, received_on: datetime.date, supplier: str = "",
                        grade: str = "", concentration_pct: Decimal | None = None,
                        ph: Decimal | None = None, note: str = "") -> Consumable:
    """Register a consumable with its supplier's lot and expiry (usable through that date)."""
    require_role(actor, Role.TECHNICIAN, Role.QUALITY_MANAGER)
    if kind not in ConsumableKind.values:
        raise ValidationError({"kind": f"Unknown consumable kind {kind!r}."})
    if expiry < received_on:
        raise ValidationError({"expiry": "The expiry date is before the date received."})
    return create_audited(actor=actor, obj=Consumable(
        kind=kind, name=name, supplier=supplier, supplier_lot=supplier_lot, expiry=expiry,
        grade=grade, concentration_pct=concentration_pct, ph=ph, received_on=received_on,
        note=note))


@transaction.atomic
def consumable_check_record(*, actor, quantity: str, value: Decimal,
                            consumable: Consumable | None = None,
                            run: ChamberRun | None = None) -> ConsumableCheck:
    """Record a salt fog check of a solution or a run against the method's limits.

    `within_limits` is computed (inclusive limits); a value outside is recorded too.
    """
    require_role(actor, Role.TECHNICIAN, Role.QUALITY_MANAGER)
    if consumable is None and run is None:
        raise ValidationError({"consumable": "Name the solution or the chamber run checked."})
    limits = salt_fog_limits(quantity, run.method_version if run is not None else None)
    check = ConsumableCheck(
        run=run, consumable=consumable, quantity=quantity, value=value, unit=limits.unit,
        low=limits.low, high=limits.high, within_limits=limits.low <= value <= limits.high,
        checked_by=actor, checked_at=clock.now())
    return create_audited(actor=actor, obj=check, reason=f"limits from {limits.source}")
