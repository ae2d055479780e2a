"""Step results: what was recorded for one step on one piece. Revisioned.

The verdict is computed by `durability.verdicts` at recording time and stored
with its reason and conventions, so the record shows exactly what was decided
and why. Instruments and consumables used are append-only link rows.
"""

from django.conf import settings
from django.db import models
from django.db.models import Q

from labrecords.models.revisions import AppendOnlyModel, AppendOnlyQuerySet, RevisionModel


class Verdict(models.TextChoices):
    PASS = "pass", "Pass"
    FAIL = "fail", "Fail"
    INVALID = "invalid", "Invalid (the test does not count)"


class StepResult(RevisionModel):
    step = models.ForeignKey(
        "labrecords.PlanStep", on_delete=models.PROTECT, related_name="results"
    )
    step_key = models.UUIDField(db_index=True)
    piece = models.ForeignKey(
        "labrecords.WitnessPiece", on_delete=models.PROTECT, related_name="results"
    )
    values = models.JSONField(default=dict, blank=True, help_text="what was entered, by field")
    observation = models.ForeignKey(
        "labrecords.Observation", null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    chamber_run = models.ForeignKey(
        "labrecords.ChamberRun",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="results",
    )
    verdict = models.CharField(max_length=8, choices=Verdict.choices)
    verdict_reason = models.TextField()
    verdict_clause = models.CharField(max_length=120, blank=True)
    conventions = models.JSONField(default=list, blank=True)
    uncertainty = models.DecimalField(max_digits=10, decimal_places=4, null=True, blank=True)
    uncertainty_unit = models.CharField(max_length=20, blank=True)
    # Results from an outside provider (a laser damage test done elsewhere, say).
    external_provider = models.CharField(max_length=120, blank=True)
    external_report_ref = models.CharField(max_length=80, blank=True)
    external_accreditation = models.CharField(max_length=120, blank=True)
    # A result made invalid by the quality manager (instrument out of calibration, say).
    invalid_authorised_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    invalid_reason = models.TextField(blank=True)

    class Meta(RevisionModel.Meta):
        ordering = ["step_key", "piece", "number"]
        constraints = [
            *RevisionModel.Meta.constraints,
            # Two people cannot both record the first result for one step on one piece.
            models.UniqueConstraint(
                fields=["step_key", "piece"],
                condition=Q(number=1),
                name="step_result_first_revision_unique",
            ),
        ]

    def __str__(self) -> str:
        return f"{self.piece} {self.step} rev {self.number}: {self.verdict}"


class StepResultInstrument(AppendOnlyModel):
    result = models.ForeignKey(
        StepResult, on_delete=models.PROTECT, related_name="instrument_links"
    )
    instrument = models.ForeignKey(
        "durability.Instrument", on_delete=models.PROTECT, related_name="result_links"
    )
    calibration_due = models.DateField(help_text="the due date in force when the result was made")

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["result", "instrument"], name="result_instrument_once")
        ]


class StepResultConsumable(AppendOnlyModel):
    result = models.ForeignKey(
        StepResult, on_delete=models.PROTECT, related_name="consumable_links"
    )
    consumable = models.ForeignKey(
        "labrecords.Consumable", on_delete=models.PROTECT, related_name="result_links"
    )

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["result", "consumable"], name="result_consumable_once")
        ]


class MethodAuthorisation(models.Model):
    """Who may record a method: the quality manager's list. Changes are audited."""

    user = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="method_authorisations"
    )
    method = models.ForeignKey(
        "durability.Method", on_delete=models.PROTECT, related_name="authorisations"
    )
    granted_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    granted_at = models.DateTimeField()
    revoked_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    revoked_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        constraints = [
            models.UniqueConstraint(
                fields=["user", "method"],
                condition=Q(revoked_at__isnull=True),
                name="method_authorisation_one_active",
            )
        ]

    def __str__(self) -> str:
        return f"{self.user} may record {self.method.code}"
