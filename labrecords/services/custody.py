"""Custody of witness pieces: where each piece is, who moved it, how long it is kept.

Custody events are append-only; the latest one says where the piece is. A tested
piece is kept for re-inspection until its retention date; disposal before that
date is refused. Retention convention: disposal is allowed on the retention date
itself and after it ("kept until" that date).
"""

from __future__ import annotations

import datetime

from django.core.exceptions import ValidationError
from django.db import transaction
from django.utils import timezone

from labrecords import clock
from labrecords.access import require_role
from labrecords.models import (
    ChamberRunPiece,
    CustodyEvent,
    PieceStatus,
    PlaceKind,
    Report,
    StepResult,
    WitnessPiece,
)
from labrecords.roles import Role
from labrecords.services.audit import change_audited, create_audited

CUSTODY_ROLES = (Role.TECHNICIAN, Role.ENGINEER, Role.QUALITY_MANAGER)
# How long a tested piece is kept after the lot's first report (common practice: a year;
# a lab sets its own with `retain_until`).
DEFAULT_RETENTION_DAYS = 365
MOVE_KINDS = (PlaceKind.SHELF, PlaceKind.CHAMBER, PlaceKind.BENCH, PlaceKind.RETURNED)


def _latest(piece: WitnessPiece) -> CustodyEvent | None:
    return piece.custody.order_by("-moved_at", "-id").first()


def retention_date(piece: WitnessPiece) -> datetime.date | None:
    """Until when the piece is kept: the latest retention recorded for it, else (for a
    tested piece) the lot's first report date plus the default retention; None otherwise."""
    recorded = (
        piece.custody.exclude(retain_until=None)
        .order_by("-moved_at", "-id")
        .values_list("retain_until", flat=True)
        .first()
    )
    if recorded is not None:
        return recorded
    first_report = Report.objects.filter(lot_id=piece.lot_id).order_by("issued_at").first()
    if first_report is not None and StepResult.objects.filter(piece=piece).exists():
        issued = timezone.localdate(first_report.issued_at)
        return issued + datetime.timedelta(days=DEFAULT_RETENTION_DAYS)
    return None


def _event(
    *,
    actor,
    piece: WitnessPiece,
    place_kind: str,
    place: str,
    note: str = "",
    retain_until: datetime.date | None = None,
) -> CustodyEvent:
    latest = _latest(piece)
    if latest is not None and latest.place_kind == PlaceKind.DISPOSED:
        raise ValidationError(
            {
                "piece": f"{piece.ident} was disposed of on "
                f"{timezone.localdate(latest.moved_at):%Y-%m-%d}."
            }
        )
    event = CustodyEvent(
        piece=piece,
        place_kind=place_kind,
        place=place.strip(),
        retain_until=retain_until,
        note=note.strip(),
        moved_by=actor,
        moved_at=clock.now(),
    )
    return create_audited(actor=actor, obj=event)


@transaction.atomic
def custody_move(
    *, actor, piece: WitnessPiece, place_kind: str, place: str, note: str = ""
) -> CustodyEvent:
    """Record that a piece now is at `place` (a shelf, a chamber, a bench station), or was
    returned to the customer."""
    require_role(actor, *CUSTODY_ROLES)
    if place_kind not in MOVE_KINDS:
        raise ValidationError(
            {
                "place_kind": (
                    "Use retain to keep a piece for re-inspection and dispose to dispose of it."
                )
            }
        )
    if not place.strip():
        raise ValidationError({"place": "Say where the piece is (e.g. shelf B3, HC-01)."})
    WitnessPiece.objects.select_for_update().filter(pk=piece.pk).first()
    return _event(actor=actor, piece=piece, place_kind=place_kind, place=place, note=note)


@transaction.atomic
def custody_retain(
    *,
    actor,
    piece: WitnessPiece,
    place: str,
    retain_until: datetime.date | None = None,
    note: str = "",
) -> CustodyEvent:
    """Keep a tested piece for re-inspection at `place` until its retention date.

    Without `retain_until` the date is the lot's first report plus the default retention;
    a lot without a report needs the date given. A retention is never shortened.
    """
    require_role(actor, *CUSTODY_ROLES)
    WitnessPiece.objects.select_for_update().filter(pk=piece.pk).first()
    if not place.strip():
        raise ValidationError({"place": "Say where the piece is kept (e.g. retain cabinet R2)."})
    current = retention_date(piece)
    if retain_until is None:
        retain_until = current
        if retain_until is None:
            raise ValidationError(
                {
                    "retain_until": (
                        f"No report is issued for lot {piece.lot.number} yet: give the date until "
                        "which the piece is kept."
                    )
                }
            )
    if current is not None and retain_until < current:
        raise ValidationError(
            {
                "retain_until": (
                    f"{piece.ident} is already kept until {current:%Y-%m-%d}; a retention is never "
                    "shortened."
                )
            }
        )
    event = _event(
        actor=actor,
        piece=piece,
        place_kind=PlaceKind.RETAINED,
        place=place,
        note=note,
        retain_until=retain_until,
    )
    if piece.status in (PieceStatus.ALLOCATED, PieceStatus.IN_TEST):
        change_audited(
            actor=actor,
            obj=piece,
            changes={"status": PieceStatus.TESTED},
            reason=f"kept for re-inspection until {retain_until:%Y-%m-%d}",
        )
    return event


@transaction.atomic
def custody_dispose(*, actor, piece: WitnessPiece, note: str = "") -> CustodyEvent:
    """Dispose of a piece. Refused before its retention date, for a tested piece whose
    retention has not started (no report yet), and for a piece in an open chamber run."""
    require_role(actor, *CUSTODY_ROLES)
    WitnessPiece.objects.select_for_update().filter(pk=piece.pk).first()
    today = timezone.localdate(clock.now())
    keep = retention_date(piece)
    if keep is not None and today < keep:
        raise ValidationError(
            {
                "piece": (
                    f"{piece.ident} is kept for re-inspection until {keep:%Y-%m-%d}; it cannot be "
                    "disposed of before then."
                )
            }
        )
    if keep is None and StepResult.objects.filter(piece=piece).exists():
        raise ValidationError(
            {
                "piece": (
                    f"{piece.ident} has results and no report is issued for lot {piece.lot.number} "
                    "yet: a tested piece is kept until its retention ends."
                )
            }
        )
    if ChamberRunPiece.objects.filter(piece=piece, run__unloaded_at__isnull=True).exists():
        raise ValidationError({"piece": f"{piece.ident} is in a chamber run that is not unloaded."})
    event = _event(
        actor=actor, piece=piece, place_kind=PlaceKind.DISPOSED, place="disposed", note=note
    )
    change_audited(
        actor=actor,
        obj=piece,
        changes={"status": PieceStatus.DISPOSED},
        reason=note or "disposed after its retention",
    )
    return event
