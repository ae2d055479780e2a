"""The revision mechanism every recorded result uses.

A result is a chain of revision rows sharing one `record_key`. A correction is
a new row that names the revision it supersedes; the one-to-one link makes
the database refuse a second correction of the same revision, so two people
cannot both supersede it. "Current" is computed (no row supersedes it), never
a flag that gets updated. Rows are never updated or deleted: the model refuses
in Python, and triggers made by the migrations refuse in the database (see
labrecords.immutability).
"""

import uuid

from django.conf import settings
from django.db import models
from django.db.models import F, Q


class ImmutableRecordError(Exception):
    """An attempt to change or delete a row that is append-only."""


class AppendOnlyQuerySet(models.QuerySet):
    def update(self, **kwargs):
        raise ImmutableRecordError(f"{self.model._meta.label} rows are never updated.")

    def delete(self):
        raise ImmutableRecordError(f"{self.model._meta.label} rows are never deleted.")


class RevisionQuerySet(AppendOnlyQuerySet):
    def current(self) -> "RevisionQuerySet":
        return self.filter(superseded_by__isnull=True)

    def history(self, record_key: uuid.UUID) -> "RevisionQuerySet":
        return self.filter(record_key=record_key).order_by("number")


class AppendOnlyModel(models.Model):
    class Meta:
        abstract = True

    def save(self, *args, **kwargs):
        if not self._state.adding:
            raise ImmutableRecordError(f"{self._meta.label} rows are never updated.")
        kwargs["force_insert"] = True
        super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        raise ImmutableRecordError(f"{self._meta.label} rows are never deleted.")


class RevisionModel(AppendOnlyModel):
    record_key = models.UUIDField(default=uuid.uuid4, editable=False, db_index=True)
    number = models.PositiveIntegerField(default=1, editable=False)
    supersedes = models.OneToOneField(
        "self",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="superseded_by",
        editable=False,
    )
    recorded_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+", editable=False
    )
    recorded_at = models.DateTimeField(editable=False, help_text="set by the server, UTC")
    observed_at = models.DateTimeField(help_text="when the work was done")
    reason = models.TextField(blank=True, help_text="why this correction was made")

    objects = RevisionQuerySet.as_manager()

    class Meta:
        abstract = True
        constraints = [
            models.UniqueConstraint(
                fields=["record_key", "number"], name="%(app_label)s_%(class)s_revision_unique"
            ),
            models.CheckConstraint(
                condition=Q(observed_at__lte=F("recorded_at")),
                name="%(app_label)s_%(class)s_observed_not_after_recorded",
            ),
            models.CheckConstraint(
                condition=Q(supersedes__isnull=True, number=1)
                | (Q(supersedes__isnull=False, number__gt=1) & ~Q(reason="")),
                name="%(app_label)s_%(class)s_correction_has_reason",
            ),
        ]

    @property
    def is_correction(self) -> bool:
        return getattr(self, "supersedes_id", None) is not None
