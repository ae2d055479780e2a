from django.db import models
from django.urls import reverse

from durability.models import Glass


class DecisionRule(models.TextChoices):
    SIMPLE = "simple", "Simple acceptance"
    GUARD_BAND = "guard_band", "Guarded acceptance (guard band = expanded uncertainty)"


class OrderQuerySet(models.QuerySet):
    def visible_to(self, user) -> "OrderQuerySet":
        from labrecords.access import customer_filter

        return self.filter(customer_filter(user, "customer_id"))


class Order(models.Model):
    customer = models.ForeignKey(
        "labrecords.Customer", on_delete=models.PROTECT, related_name="orders"
    )
    number = models.CharField("lab order number", max_length=24, unique=True)
    customer_order_number = models.CharField(max_length=60)
    received_on = models.DateField()
    due_date = models.DateField(null=True, blank=True)
    decision_rule = models.CharField(
        max_length=12, choices=DecisionRule.choices, default=DecisionRule.SIMPLE
    )
    note = models.TextField(blank=True)

    objects = OrderQuerySet.as_manager()

    class Meta:
        ordering = ["-received_on", "number"]

    def __str__(self) -> str:
        return f"{self.number} ({self.customer_order_number})"


class Quantity(models.TextChoices):
    REFLECTION = "R", "Reflection"
    TRANSMISSION = "T", "Transmission"


class Statistic(models.TextChoices):
    AVERAGE = "average", "Average over the band"
    ABSOLUTE = "absolute", "At every wavelength in the band"


class Polarization(models.TextChoices):
    UNPOLARIZED = "unpolarized", "Unpolarized (average of s and p)"
    S = "s", "s"
    P = "p", "p"
    BOTH = "both", "s and p separately"
    NOT_STATED = "", "Not stated"


class CoatingSpecQuerySet(models.QuerySet):
    def visible_to(self, user) -> "CoatingSpecQuerySet":
        from labrecords.access import customer_filter

        return self.filter(customer_filter(user, "order__customer_id"))


class CoatingSpec(models.Model):
    """A customer's requirement set for one coating. Blank means 'not stated'."""

    order = models.ForeignKey(Order, on_delete=models.PROTECT, related_name="specs")
    part_number = models.CharField(max_length=60)
    title = models.CharField(max_length=120, blank=True)
    glass = models.ForeignKey(Glass, null=True, blank=True, on_delete=models.PROTECT)
    wavelength_min_nm = models.DecimalField(max_digits=7, decimal_places=1, null=True, blank=True)
    wavelength_max_nm = models.DecimalField(max_digits=7, decimal_places=1, null=True, blank=True)
    quantity = models.CharField(max_length=1, choices=Quantity.choices, blank=True)
    statistic = models.CharField(max_length=10, choices=Statistic.choices, blank=True)
    limit_min_pct = models.DecimalField(max_digits=6, decimal_places=3, null=True, blank=True)
    limit_max_pct = models.DecimalField(max_digits=6, decimal_places=3, null=True, blank=True)
    aoi_min_deg = models.DecimalField(max_digits=5, decimal_places=1, null=True, blank=True)
    aoi_max_deg = models.DecimalField(max_digits=5, decimal_places=1, null=True, blank=True)
    polarization = models.CharField(
        max_length=12, choices=Polarization.choices, blank=True, default=""
    )
    clear_aperture_mm = models.DecimalField(max_digits=7, decimal_places=2, null=True, blank=True)
    sides_coated = models.PositiveSmallIntegerField(null=True, blank=True)
    callout_text = models.TextField(blank=True)
    laser_damage = models.CharField(max_length=200, blank=True)
    witness_requirement = models.CharField(max_length=200, blank=True)
    documentation = models.CharField(max_length=200, blank=True)
    marking = models.CharField(max_length=200, blank=True)
    packaging = models.CharField(max_length=200, blank=True)

    objects = CoatingSpecQuerySet.as_manager()

    class Meta:
        ordering = ["order", "part_number"]
        constraints = [
            models.CheckConstraint(
                condition=models.Q(wavelength_min_nm__isnull=True)
                | models.Q(wavelength_max_nm__isnull=True)
                | models.Q(wavelength_min_nm__lte=models.F("wavelength_max_nm")),
                name="coating_spec_band_ordered",
            ),
        ]

    def __str__(self) -> str:
        return f"{self.part_number} {self.title}".strip()

    def get_absolute_url(self) -> str:
        return reverse("labrecords:spec-detail", args=[self.pk])
