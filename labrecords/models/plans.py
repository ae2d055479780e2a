"""Test plans: the ordered steps for a lot, released by an engineer.

A plan is edited as a draft and then released (who and when recorded). A
released plan never changes: the database refuses UPDATE and DELETE on it and
on its sequences, steps and piece assignments, and refuses new rows under it
(migration `plans_frozen_after_release`). A change after release is a new
plan revision that supersedes it, with a reason. Each step keeps a
`step_key` that stays the same across revisions, so results follow a step
through plan revisions.
"""

import uuid

from django.conf import settings
from django.db import models
from django.db.models import Q


class PlanStatus(models.TextChoices):
    DRAFT = "draft", "Draft"
    RELEASED = "released", "Released"


class TestPlanQuerySet(models.QuerySet):
    def released(self) -> "TestPlanQuerySet":
        return self.filter(status=PlanStatus.RELEASED)

    def current_released(self) -> "TestPlanQuerySet":
        """Released plans not superseded by a released revision."""
        return self.released().exclude(superseded_by__status=PlanStatus.RELEASED)

    def visible_to(self, user) -> "TestPlanQuerySet":
        from labrecords.access import customer_filter

        return self.filter(customer_filter(user, "lot__order__customer_id"))


class TestPlan(models.Model):
    __test__ = False  # not a pytest test class despite its name
    lot = models.ForeignKey("labrecords.Lot", on_delete=models.PROTECT, related_name="plans")
    number = models.PositiveIntegerField(default=1)
    supersedes = models.OneToOneField(
        "self", null=True, blank=True, on_delete=models.PROTECT, related_name="superseded_by"
    )
    reason = models.TextField(blank=True, help_text="why this revision was made")
    status = models.CharField(max_length=10, choices=PlanStatus.choices, default=PlanStatus.DRAFT)
    created_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    created_at = models.DateTimeField()
    released_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    released_at = models.DateTimeField(null=True, blank=True)
    # What the plan was made from and the choices it used, for the report and the auditor.
    requirements = models.JSONField(default=list, blank=True)
    review_items = models.JSONField(default=list, blank=True)
    notes = models.JSONField(default=list, blank=True)
    assumptions = models.JSONField(default=list, blank=True)
    options = models.JSONField(default=dict, blank=True)

    objects = TestPlanQuerySet.as_manager()

    class Meta:
        ordering = ["lot", "-number"]
        constraints = [
            models.UniqueConstraint(fields=["lot", "number"], name="test_plan_revision_unique"),
            models.CheckConstraint(
                condition=Q(status=PlanStatus.DRAFT, released_at__isnull=True)
                | Q(
                    status=PlanStatus.RELEASED, released_at__isnull=False, released_by__isnull=False
                ),
                name="test_plan_release_recorded",
            ),
            models.CheckConstraint(
                condition=Q(supersedes__isnull=True) | ~Q(reason=""),
                name="test_plan_revision_has_reason",
            ),
        ]

    def __str__(self) -> str:
        return f"Plan {self.number} for lot {self.lot_id}"


class PlanSequence(models.Model):
    plan = models.ForeignKey(TestPlan, on_delete=models.PROTECT, related_name="sequences")
    position = models.PositiveIntegerField()
    label = models.CharField(max_length=20)
    summary = models.CharField(max_length=300, blank=True)
    pieces_needed = models.PositiveIntegerField(default=1)

    class Meta:
        ordering = ["plan", "position"]
        constraints = [
            models.UniqueConstraint(
                fields=["plan", "position"], name="plan_sequence_position_unique"
            )
        ]

    def __str__(self) -> str:
        return f"Sequence {self.label}"


class PlanStep(models.Model):
    plan = models.ForeignKey(TestPlan, on_delete=models.PROTECT, related_name="steps")
    sequence = models.ForeignKey(PlanSequence, on_delete=models.PROTECT, related_name="steps")
    step_key = models.UUIDField(default=uuid.uuid4, db_index=True)
    order = models.PositiveIntegerField()
    role = models.CharField(max_length=30, blank=True, help_text="e.g. initial inspection")
    method_version = models.ForeignKey(
        "durability.MethodVersion", on_delete=models.PROTECT, related_name="+"
    )
    kind = models.CharField(max_length=24)
    name = models.CharField(max_length=120)
    # name -> {"value", "unit", "status", ...}: the values this plan uses, with their status.
    parameters = models.JSONField(default=dict, blank=True)
    acceptance = models.JSONField(default=dict, blank=True)
    acceptance_text = models.TextField(blank=True)
    hazards = models.JSONField(default=list, blank=True)
    destructive = models.BooleanField(default=False)
    wait_hours_before = models.DecimalField(max_digits=7, decimal_places=2, default=0)
    wait_reason = models.CharField(max_length=200, blank=True)
    hours = models.DecimalField("expected duration (h)", max_digits=7, decimal_places=2, default=0)
    severity = models.CharField(max_length=4, blank=True)
    state = models.CharField(max_length=2, blank=True)
    note = models.TextField(blank=True)
    retest_of = models.ForeignKey(
        "self",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="retests",
        help_text="the step this one repeats on new pieces",
    )

    class Meta:
        ordering = ["plan", "sequence__position", "order"]
        constraints = [
            models.UniqueConstraint(fields=["sequence", "order"], name="plan_step_order_unique"),
            models.UniqueConstraint(fields=["plan", "step_key"], name="plan_step_key_unique"),
        ]

    def __str__(self) -> str:
        return f"{self.order}. {self.name}"


class SequencePiece(models.Model):
    """Which witness piece goes through which sequence of a plan."""

    plan = models.ForeignKey(TestPlan, on_delete=models.PROTECT, related_name="assignments")
    sequence = models.ForeignKey(PlanSequence, on_delete=models.PROTECT, related_name="assignments")
    piece = models.ForeignKey(
        "labrecords.WitnessPiece", on_delete=models.PROTECT, related_name="assignments"
    )

    class Meta:
        ordering = ["sequence", "piece"]
        constraints = [
            models.UniqueConstraint(fields=["plan", "piece"], name="sequence_piece_once_per_plan")
        ]

    def __str__(self) -> str:
        return f"{self.piece} in {self.sequence}"
