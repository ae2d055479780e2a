from django.conf import settings
from django.db import models

from labrecords.models.revisions import AppendOnlyModel, AppendOnlyQuerySet


class PlaceKind(models.TextChoices):
    SHELF = "shelf", "Shelf"
    CHAMBER = "chamber", "Chamber"
    BENCH = "bench", "Bench station"
    RETAINED = "retained", "Retained for re-inspection"
    DISPOSED = "disposed", "Disposed"
    RETURNED = "returned", "Returned to the customer"


class CustodyEvent(AppendOnlyModel):
    """Where a witness piece is, who moved it and when. The latest event is where it is."""

    piece = models.ForeignKey(
        "labrecords.WitnessPiece", on_delete=models.PROTECT, related_name="custody"
    )
    place_kind = models.CharField(max_length=10, choices=PlaceKind.choices)
    place = models.CharField(max_length=80, help_text="e.g. shelf B3, HC-01, abrasion bench")
    retain_until = models.DateField(null=True, blank=True)
    note = models.CharField(max_length=200, blank=True)
    moved_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    moved_at = models.DateTimeField()

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        ordering = ["piece", "moved_at", "id"]


class CalendarFeedToken(models.Model):
    """A per-user secret for the read-only iCalendar feed; revoking it closes the feed."""

    user = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="calendar_tokens"
    )
    token_hash = models.CharField(max_length=64, unique=True)
    created_at = models.DateTimeField()
    revoked_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        ordering = ["-created_at"]

    def __str__(self) -> str:
        state = "revoked" if self.revoked_at else "active"
        return f"calendar feed token of {self.user} ({state})"
