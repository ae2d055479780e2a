from __future__ import annotations

import datetime

from django.core.exceptions import ValidationError
from django.db import transaction
from django.db.models import Sum

from durability.models import Coater, CoatingDesign, Glass, WitnessStock
from labrecords import clock
from labrecords.access import require_role
from labrecords.models import CoatingSpec, Lot, LotStage, Order, StockMovement, WitnessPiece
from labrecords.roles import Role
from labrecords.services.audit import change_audited, create_audited


@transaction.atomic
def lot_create(
    *,
    actor,
    order: Order,
    spec: CoatingSpec,
    number: str,
    design: CoatingDesign,
    coater: Coater,
    run_date: datetime.date,
    parts: str,
    quantity: int,
    received_on: datetime.date | None = None,
) -> Lot:
    """Register one coating run of an order; it starts in the planned stage."""
    require_role(actor, Role.ENGINEER)
    if spec.order_id != order.pk:
        raise ValidationError({"spec": "The coating spec belongs to another order."})
    lot = Lot(
        order=order,
        spec=spec,
        number=number,
        design=design,
        coater=coater,
        run_date=run_date,
        parts=parts,
        quantity=quantity,
        received_on=received_on,
    )
    return create_audited(actor=actor, obj=lot)


@transaction.atomic
def lot_stage_set(*, actor, lot: Lot, stage: LotStage, reason: str = "") -> Lot:
    """Move a lot to another stage (audited)."""
    locked = Lot.objects.select_for_update().get(pk=lot.pk)
    return change_audited(actor=actor, obj=locked, changes={"stage": stage}, reason=reason)


def stock_on_hand(stock: WitnessStock) -> int:
    return stock.movements.aggregate(total=Sum("delta"))["total"] or 0


@transaction.atomic
def stock_receive(*, actor, stock: WitnessStock, count: int, note: str = "") -> StockMovement:
    """Add uncoated witness pieces to the shelf."""
    if count <= 0:
        raise ValidationError({"count": "Receive at least one piece."})
    movement = StockMovement(stock=stock, delta=count, note=note, by=actor, at=clock.now())
    return create_audited(actor=actor, obj=movement)


@transaction.atomic
def witness_pieces_allocate(
    *, actor, lot: Lot, stock: WitnessStock, count: int, positions: list[str] | None = None
) -> list[WitnessPiece]:
    """Take `count` pieces from stock for a lot: decrement the stock and create the pieces.

    A piece belongs to one lot. Refused when the shelf holds fewer than `count`.
    """
    require_role(actor, Role.ENGINEER, Role.TECHNICIAN)
    if count <= 0:
        raise ValidationError({"count": "Allocate at least one piece."})
    # Lock the stock row so two allocations cannot both take the last pieces.
    WitnessStock.objects.select_for_update().filter(pk=stock.pk).first()
    on_hand = stock_on_hand(stock)
    if on_hand < count:
        raise ValidationError(
            {"count": f"Only {on_hand} piece(s) of {stock} on the shelf; {count} asked for."}
        )
    create_audited(
        actor=actor,
        obj=StockMovement(
            stock=stock,
            delta=-count,
            lot=lot,
            note=f"allocated to lot {lot.number}",
            by=actor,
            at=clock.now(),
        ),
    )
    existing = lot.pieces.count()
    pieces = []
    for index in range(count):
        position = positions[index] if positions and index < len(positions) else ""
        piece = WitnessPiece(
            ident=f"{lot.number}-W{existing + index + 1:02d}",
            lot=lot,
            glass=stock.glass,
            stock=stock,
            position=position,
        )
        pieces.append(create_audited(actor=actor, obj=piece))
    return pieces


@transaction.atomic
def witness_piece_create(*, actor, lot: Lot, glass: Glass, position: str = "") -> WitnessPiece:
    """Register a witness piece supplied with the lot (not from the lab's stock)."""
    require_role(actor, Role.ENGINEER, Role.TECHNICIAN)
    number = lot.pieces.count() + 1
    piece = WitnessPiece(
        ident=f"{lot.number}-W{number:02d}", lot=lot, glass=glass, position=position
    )
    return create_audited(actor=actor, obj=piece)


@transaction.atomic
def lot_priority_set(*, actor, lot: Lot, priority: int, reason: str) -> Lot:
    """Mark a lot as a rush (priority above 0) or back to normal; the schedule follows."""
    require_role(actor, Role.ENGINEER, Role.QUALITY_MANAGER)
    if priority < 0:
        raise ValidationError({"priority": "Priority is 0 (normal) or more (rush)."})
    if not reason.strip():
        raise ValidationError({"reason": "Say why the lot's priority changes."})
    locked = Lot.objects.select_for_update().get(pk=lot.pk)
    return change_audited(actor=actor, obj=locked, changes={"priority": priority}, reason=reason)
