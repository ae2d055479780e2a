"""Chamber runs and their exposure checks, consumables and their checks."""

from django.conf import settings
from django.db import models
from django.db.models import Q

from labrecords.models.revisions import AppendOnlyModel, AppendOnlyQuerySet


class ChamberRunQuerySet(models.QuerySet):
    def visible_to(self, user) -> "ChamberRunQuerySet":
        """Lab staff see every run; a customer sees runs holding one of its pieces."""
        from labrecords.access import customer_filter

        return self.filter(
            customer_filter(user, "pieces__piece__lot__order__customer_id")
        ).distinct()


class ChamberRun(models.Model):
    """One exposure of a group of pieces under one condition, loaded and unloaded together."""

    ident = models.CharField(max_length=30, unique=True)
    chamber = models.ForeignKey(
        "durability.Instrument", on_delete=models.PROTECT, related_name="chamber_runs"
    )
    logger = models.ForeignKey(
        "durability.Instrument",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="logged_runs",
    )
    method_version = models.ForeignKey(
        "durability.MethodVersion", on_delete=models.PROTECT, related_name="+"
    )
    condition = models.CharField(max_length=120)
    loaded_at = models.DateTimeField()
    unloaded_at = models.DateTimeField(null=True, blank=True)
    loaded_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )

    objects = ChamberRunQuerySet.as_manager()

    class Meta:
        ordering = ["-loaded_at"]
        constraints = [
            models.CheckConstraint(
                condition=Q(unloaded_at__isnull=True) | Q(unloaded_at__gt=models.F("loaded_at")),
                name="chamber_run_unloaded_after_loaded",
            )
        ]

    def __str__(self) -> str:
        return self.ident


class ChamberRunPiece(AppendOnlyModel):
    run = models.ForeignKey(ChamberRun, on_delete=models.PROTECT, related_name="pieces")
    piece = models.ForeignKey(
        "labrecords.WitnessPiece", on_delete=models.PROTECT, related_name="chamber_runs"
    )
    step_key = models.UUIDField()

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["run", "piece"], name="chamber_run_piece_once")
        ]


class ExposureCheck(AppendOnlyModel):
    """The verification of a run's log against the method. The latest one counts."""

    run = models.ForeignKey(ChamberRun, on_delete=models.PROTECT, related_name="exposure_checks")
    evidence = models.ForeignKey("labrecords.Evidence", on_delete=models.PROTECT, related_name="+")
    counts = models.BooleanField()
    convention = models.CharField(max_length=20)
    summary = models.JSONField(default=dict)
    checked_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    checked_at = models.DateTimeField()

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        ordering = ["run", "-checked_at", "-id"]


class ConsumableKind(models.TextChoices):
    TAPE = "tape", "Tape"
    CHEESECLOTH = "cheesecloth", "Cheesecloth"
    ERASER = "eraser", "Eraser"
    SOLVENT = "solvent", "Solvent"
    SALT_SOLUTION = "salt_solution", "Salt solution"
    OTHER = "other", "Other"


class Consumable(models.Model):
    kind = models.CharField(max_length=16, choices=ConsumableKind.choices)
    name = models.CharField(max_length=120)
    supplier = models.CharField(max_length=120, blank=True)
    supplier_lot = models.CharField(max_length=60)
    expiry = models.DateField(help_text="usable through this date")
    grade = models.CharField(max_length=60, blank=True, help_text="e.g. solvent grade")
    concentration_pct = models.DecimalField(max_digits=6, decimal_places=2, null=True, blank=True)
    ph = models.DecimalField("pH", max_digits=4, decimal_places=2, null=True, blank=True)
    received_on = models.DateField()
    note = models.CharField(max_length=200, blank=True)

    class Meta:
        ordering = ["kind", "-received_on"]
        constraints = [
            models.UniqueConstraint(fields=["kind", "supplier_lot"], name="consumable_lot_unique")
        ]

    def __str__(self) -> str:
        return f"{self.name} lot {self.supplier_lot}"

    def usable_on(self, day) -> bool:
        return day <= self.expiry


class ConsumableCheck(AppendOnlyModel):
    """A salt fog cabinet's collection-rate or pH check, or a solution's concentration check."""

    run = models.ForeignKey(
        ChamberRun,
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="consumable_checks",
    )
    consumable = models.ForeignKey(
        Consumable, null=True, blank=True, on_delete=models.PROTECT, related_name="checks"
    )
    quantity = models.CharField(max_length=30, help_text="collection rate, pH, concentration")
    value = models.DecimalField(max_digits=8, decimal_places=3)
    unit = models.CharField(max_length=30, blank=True)
    low = models.DecimalField(max_digits=8, decimal_places=3, null=True, blank=True)
    high = models.DecimalField(max_digits=8, decimal_places=3, null=True, blank=True)
    within_limits = models.BooleanField()
    checked_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    checked_at = models.DateTimeField()

    objects = AppendOnlyQuerySet.as_manager()
