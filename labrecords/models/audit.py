from django.conf import settings
from django.db import models

from labrecords.models.revisions import AppendOnlyModel, AppendOnlyQuerySet


class AuditEntry(AppendOnlyModel):
    """Who changed what, when, from what to what, and why. Append-only."""

    actor = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, on_delete=models.PROTECT, related_name="+"
    )
    at = models.DateTimeField(help_text="set by the server, UTC")
    action = models.CharField(max_length=40)
    model = models.CharField(max_length=80, help_text="app_label.ModelName")
    object_pk = models.CharField(max_length=64)
    object_repr = models.CharField(max_length=200)
    changes = models.JSONField(default=dict, help_text="field -> [old, new]")
    reason = models.TextField(blank=True)

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        ordering = ["-at", "-id"]
        verbose_name_plural = "audit entries"
        indexes = [
            # The audit trail of one record is read on its page.
            models.Index(fields=["model", "object_pk"], name="audit_object_idx"),
        ]

    def __str__(self) -> str:
        return f"{self.at:%Y-%m-%d %H:%M} {self.action} {self.model} {self.object_repr}"
