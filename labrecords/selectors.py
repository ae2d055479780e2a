"""Reads across models, materialised for templates (no lazy queries left)."""

from __future__ import annotations

from dataclasses import dataclass

from labrecords.models import AuditEntry, Lot, Observation, WitnessPiece


@dataclass(frozen=True)
class PieceRow:
    piece: WitnessPiece
    observation_count: int


def lot_pieces(lot: Lot) -> list[WitnessPiece]:
    return list(lot.pieces.select_related("glass").order_by("ident"))


def piece_observations(piece: WitnessPiece) -> list[Observation]:
    """Every revision of every observation on the piece, oldest first, with who recorded it."""
    return list(
        Observation.objects.filter(piece=piece)
        .select_related("recorded_by", "supersedes", "superseded_by")
        .order_by("recorded_at", "number")
    )


def audit_trail(obj) -> list[AuditEntry]:
    return list(
        AuditEntry.objects.filter(model=obj._meta.label, object_pk=str(obj.pk))
        .select_related("actor")
        .order_by("at", "id")
    )
