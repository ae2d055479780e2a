"""Reads for custody and labels: where a piece is, its history, and label contents."""

from __future__ import annotations

import datetime
from dataclasses import dataclass

from django.conf import settings
from django.urls import reverse

from labrecords.models import CustodyEvent, Lot, PlaceKind, SequencePiece, TestPlan, WitnessPiece
from labrecords.services.custody import retention_date


@dataclass(frozen=True)
class CustodyView:
    """A piece's custody: its events oldest first, the latest (where it is), retention."""

    events: tuple[CustodyEvent, ...]
    retain_until: datetime.date | None

    @property
    def current(self) -> CustodyEvent | None:
        return self.events[-1] if self.events else None

    @property
    def disposed(self) -> bool:
        return self.current is not None and self.current.place_kind == PlaceKind.DISPOSED


def piece_custody(piece: WitnessPiece) -> CustodyView:
    """Every custody event of the piece with who moved it (three queries)."""
    events = tuple(piece.custody.select_related("moved_by").order_by("moved_at", "id"))
    return CustodyView(events=events, retain_until=retention_date(piece))


def base_url(request=None) -> str:
    """Where printed links point: REPORT_VERIFY_BASE_URL, else the request's host."""
    configured = (getattr(settings, "REPORT_VERIFY_BASE_URL", "") or "").rstrip("/")
    if configured:
        return configured
    if request is not None:
        return request.build_absolute_uri("/").rstrip("/")
    return ""


def piece_url(piece_ident: str, base: str) -> str:
    return base + reverse("labrecords:piece-detail", args=[piece_ident])


@dataclass(frozen=True)
class Label:
    """What one piece label carries."""

    piece: str
    lot: str
    glass: str
    sequence: str
    url: str


def lot_labels(lot: Lot, base: str) -> list[Label]:
    """One label per witness piece of the lot, with its sequence in the newest plan."""
    plan = TestPlan.objects.filter(lot=lot).order_by("-number").first()
    sequence_of: dict[int, str] = {}
    if plan is not None:
        for piece_id, label, summary in SequencePiece.objects.filter(plan=plan).values_list(
            "piece_id", "sequence__label", "sequence__summary"
        ):
            sequence_of[piece_id] = f"{label} {summary}".strip()
    return [
        Label(
            piece=p.ident,
            lot=lot.number,
            glass=p.glass.name,
            sequence=sequence_of.get(p.pk, "not assigned yet"),
            url=piece_url(p.ident, base),
        )
        for p in lot.pieces.select_related("glass").order_by("ident")
    ]
