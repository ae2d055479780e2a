from django.conf import settings
from django.db import models
from django.urls import reverse

from durability.models import Coater, CoatingDesign, Glass, WitnessStock
from labrecords.models.revisions import AppendOnlyModel, AppendOnlyQuerySet


class LotStage(models.TextChoices):
    PLANNED = "planned", "Planned"
    IN_TEST = "in_test", "In test"
    RESULTS_COMPLETE = "results_complete", "Results complete"
    SIGNED = "signed", "Signed"
    REPORT_ISSUED = "report_issued", "Report issued"
    RETEST = "retest", "Retest"


class LotQuerySet(models.QuerySet):
    def visible_to(self, user) -> "LotQuerySet":
        from labrecords.access import customer_filter

        return self.filter(customer_filter(user, "order__customer_id"))

    def for_listing(self) -> "LotQuerySet":
        return self.select_related("order__customer", "design", "coater", "spec__glass")


class Lot(models.Model):
    """One coating run for one order."""

    number = models.CharField(max_length=24, unique=True)
    order = models.ForeignKey("labrecords.Order", on_delete=models.PROTECT, related_name="lots")
    spec = models.ForeignKey(
        "labrecords.CoatingSpec", on_delete=models.PROTECT, related_name="lots"
    )
    design = models.ForeignKey(CoatingDesign, on_delete=models.PROTECT, related_name="lots")
    coater = models.ForeignKey(Coater, on_delete=models.PROTECT, related_name="lots")
    run_date = models.DateField()
    received_on = models.DateField(null=True, blank=True, help_text="witness pieces received")
    parts = models.CharField(max_length=200, help_text="the customer's parts in this run")
    quantity = models.PositiveIntegerField()
    stage = models.CharField(max_length=20, choices=LotStage.choices, default=LotStage.PLANNED)
    priority = models.PositiveSmallIntegerField(
        default=0, help_text="larger is more urgent: a rush lot gets 1 or more"
    )

    objects = LotQuerySet.as_manager()

    class Meta:
        ordering = ["-run_date", "number"]
        constraints = [
            models.CheckConstraint(
                condition=models.Q(quantity__gte=1), name="lot_quantity_positive"
            )
        ]

    def __str__(self) -> str:
        return self.number

    def get_absolute_url(self) -> str:
        return reverse("labrecords:lot-detail", args=[self.pk])


class PieceStatus(models.TextChoices):
    ALLOCATED = "allocated", "Allocated"
    IN_TEST = "in_test", "In test"
    TESTED = "tested", "Tested, kept for re-inspection"
    DISPOSED = "disposed", "Disposed"


class WitnessPieceQuerySet(models.QuerySet):
    def visible_to(self, user) -> "WitnessPieceQuerySet":
        from labrecords.access import customer_filter

        return self.filter(customer_filter(user, "lot__order__customer_id"))


class WitnessPiece(models.Model):
    ident = models.CharField("piece ID", max_length=24, unique=True)
    lot = models.ForeignKey(Lot, on_delete=models.PROTECT, related_name="pieces")
    glass = models.ForeignKey(Glass, on_delete=models.PROTECT, related_name="+")
    stock = models.ForeignKey(
        WitnessStock, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    position = models.CharField("position in the coater", max_length=40, blank=True)
    status = models.CharField(
        max_length=12, choices=PieceStatus.choices, default=PieceStatus.ALLOCATED
    )

    objects = WitnessPieceQuerySet.as_manager()

    class Meta:
        ordering = ["ident"]

    def __str__(self) -> str:
        return self.ident

    def get_absolute_url(self) -> str:
        return reverse("labrecords:piece-detail", args=[self.ident])


class StockMovement(AppendOnlyModel):
    """A change of witness stock on hand: a receipt (+) or an allocation to a lot (−)."""

    stock = models.ForeignKey(WitnessStock, on_delete=models.PROTECT, related_name="movements")
    delta = models.IntegerField()
    lot = models.ForeignKey(Lot, null=True, blank=True, on_delete=models.PROTECT, related_name="+")
    note = models.CharField(max_length=200, blank=True)
    by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    at = models.DateTimeField()

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        ordering = ["at", "id"]
        constraints = [
            models.CheckConstraint(condition=~models.Q(delta=0), name="stock_movement_nonzero")
        ]
