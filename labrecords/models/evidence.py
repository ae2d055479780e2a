"""Evidence files: chamber logs, spectra, photos, outside providers' reports.

Stored under MEDIA_ROOT by their SHA-256 (never by the client's filename),
served only through access-checked views as attachments. Append-only.
"""

from django.conf import settings
from django.db import models

from labrecords.models.revisions import AppendOnlyModel, AppendOnlyQuerySet


class EvidenceKind(models.TextChoices):
    CHAMBER_LOG = "chamber_log", "Chamber log"
    SPECTRUM = "spectrum", "Spectrum"
    PHOTO = "photo", "Photo"
    PROVIDER_REPORT = "provider_report", "Outside provider's report"
    OTHER = "other", "Other"


class EvidenceQuerySet(AppendOnlyQuerySet):
    def visible_to(self, user) -> "EvidenceQuerySet":
        from labrecords.access import customer_filter

        return self.filter(customer_filter(user, "lot__order__customer_id"))


class Evidence(AppendOnlyModel):
    kind = models.CharField(max_length=16, choices=EvidenceKind.choices)
    lot = models.ForeignKey(
        "labrecords.Lot", on_delete=models.PROTECT, related_name="evidence", null=True, blank=True
    )
    piece = models.ForeignKey(
        "labrecords.WitnessPiece",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="evidence",
    )
    step_key = models.UUIDField(null=True, blank=True, db_index=True)
    chamber_run = models.ForeignKey(
        "labrecords.ChamberRun",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="evidence",
    )
    stage = models.CharField(max_length=10, blank=True, help_text="before or after a test")
    file = models.FileField(upload_to="evidence/")
    sha256 = models.CharField(max_length=64)
    original_name = models.CharField(max_length=200)
    content_type = models.CharField(max_length=80)
    size = models.PositiveIntegerField()
    summary = models.JSONField(default=dict, blank=True, help_text="what the import computed")
    note = models.CharField(max_length=200, blank=True)
    uploaded_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    uploaded_at = models.DateTimeField()

    objects = EvidenceQuerySet.as_manager()

    class Meta:
        ordering = ["-uploaded_at"]
        verbose_name_plural = "evidence"

    def __str__(self) -> str:
        return f"{self.get_kind_display()} {self.original_name}"
