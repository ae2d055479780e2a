from django.conf import settings
from django.db import models

from labrecords.models.revisions import AppendOnlyModel, AppendOnlyQuerySet


class NonconformanceKind(models.TextChoices):
    COATING_FAILURE = "coating_failure", "The coating failed the test"
    INVALID_TEST = "invalid_test", "The test itself does not count"
    EQUIPMENT = "equipment", "Equipment found out of tolerance"


class Disposition(models.TextChoices):
    RETEST = "retest", "Retest on new pieces"
    CONCESSION = "concession", "Concession with the customer's agreement"
    REJECT_LOT = "reject_lot", "Reject the lot"
    NO_IMPACT = "no_impact", "No impact on the result (reasoned)"


class NonconformanceQuerySet(models.QuerySet):
    def open(self) -> "NonconformanceQuerySet":
        return self.filter(disposition="")

    def visible_to(self, user) -> "NonconformanceQuerySet":
        from labrecords.access import customer_filter

        return self.filter(customer_filter(user, "lot__order__customer_id"))


class Nonconformance(models.Model):
    number = models.CharField(max_length=20, unique=True)
    kind = models.CharField(max_length=16, choices=NonconformanceKind.choices)
    lot = models.ForeignKey(
        "labrecords.Lot", on_delete=models.PROTECT, related_name="nonconformances"
    )
    result = models.ForeignKey(
        "labrecords.StepResult",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="nonconformances",
    )
    report = models.ForeignKey(
        "labrecords.Report",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="nonconformances",
    )
    description = models.TextField()
    opened_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, on_delete=models.PROTECT, related_name="+"
    )
    opened_at = models.DateTimeField()
    disposition = models.CharField(max_length=12, choices=Disposition.choices, blank=True)
    disposition_note = models.TextField(blank=True)
    customer_agreement_ref = models.CharField(max_length=120, blank=True)
    disposed_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    disposed_at = models.DateTimeField(null=True, blank=True)

    objects = NonconformanceQuerySet.as_manager()

    class Meta:
        ordering = ["-opened_at"]
        constraints = [
            models.CheckConstraint(
                condition=~models.Q(disposition="concession")
                | ~models.Q(customer_agreement_ref=""),
                name="concession_names_customer_agreement",
            )
        ]

    def __str__(self) -> str:
        return self.number


class InstrumentDeviation(AppendOnlyModel):
    """An instrument or chamber sensor found out of tolerance since a date."""

    instrument = models.ForeignKey(
        "durability.Instrument", on_delete=models.PROTECT, related_name="deviations"
    )
    since = models.DateField()
    description = models.TextField()
    found_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    found_at = models.DateTimeField()

    objects = AppendOnlyQuerySet.as_manager()
