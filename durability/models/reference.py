"""The lab's own reference data: glasses, coating designs, coaters, instruments."""

import datetime

from django.db import models


class Glass(models.Model):
    """A substrate or witness material. Names are generic or the lab's own."""

    name = models.CharField(max_length=80, unique=True)
    description = models.CharField(max_length=200, blank=True)
    n_d = models.DecimalField(max_digits=7, decimal_places=5, help_text="index at 587.56 nm")
    v_d = models.DecimalField(max_digits=6, decimal_places=2, help_text="Abbe number")
    # Sellmeier n² − 1 = Σ Bᵢλ²/(λ² − Cᵢ), λ in µm, Cᵢ in µm² (not √Cᵢ).
    sellmeier_b = models.JSONField(default=list, blank=True)
    sellmeier_c_um2 = models.JSONField(default=list, blank=True)
    expansion_per_k_e6 = models.DecimalField(
        "thermal expansion (10⁻⁶/K)", max_digits=6, decimal_places=2, null=True, blank=True
    )
    acid_class = models.CharField("acid resistance (ISO 8424)", max_length=20, blank=True)
    alkali_class = models.CharField("alkali resistance (ISO 10629)", max_length=20, blank=True)
    phosphate_class = models.CharField("phosphate resistance (ISO 9689)", max_length=20, blank=True)
    climate_class = models.CharField("supplier's climate class", max_length=40, blank=True)
    stain_class = models.CharField("supplier's stain class", max_length=40, blank=True)

    class Meta:
        ordering = ["name"]
        verbose_name_plural = "glasses"
        constraints = [
            models.CheckConstraint(
                condition=models.Q(n_d__gt=1) & models.Q(n_d__lt=4), name="glass_n_d_plausible"
            ),
            models.CheckConstraint(condition=models.Q(v_d__gt=0), name="glass_v_d_positive"),
        ]

    def __str__(self) -> str:
        return self.name


class CoatingType(models.TextChoices):
    SINGLE_LAYER_AR = "single_layer_ar", "Single-layer AR"
    MULTILAYER_AR = "multilayer_ar", "Multilayer AR"
    METAL_MIRROR = "metal_mirror", "Metal mirror"
    PROTECTED_METAL_MIRROR = "protected_metal_mirror", "Protected metal mirror"
    DIELECTRIC_MIRROR = "dielectric_mirror", "Dielectric mirror"
    BEAMSPLITTER = "beamsplitter", "Beamsplitter"
    FILTER = "filter", "Filter"
    OTHER = "other", "Other"


class CoatingDesign(models.Model):
    code = models.CharField(max_length=40, unique=True)
    name = models.CharField(max_length=120)
    coating_type = models.CharField(max_length=30, choices=CoatingType.choices)
    materials = models.CharField(max_length=200, blank=True, help_text="e.g. MgF2, or Ta2O5/SiO2")
    layer_count = models.PositiveIntegerField(default=1)
    process = models.CharField(max_length=120, blank=True, help_text="deposition process")
    design_wavelength_nm = models.DecimalField(
        max_digits=7, decimal_places=1, null=True, blank=True
    )
    n_eff = models.DecimalField(
        "effective index for angle shift", max_digits=5, decimal_places=3, null=True, blank=True
    )

    class Meta:
        ordering = ["code"]

    def __str__(self) -> str:
        return f"{self.code} {self.name}"


class Coater(models.Model):
    """A deposition machine a lot was coated in (not a test chamber)."""

    name = models.CharField(max_length=40, unique=True)
    description = models.CharField(max_length=200, blank=True)

    class Meta:
        ordering = ["name"]

    def __str__(self) -> str:
        return self.name


class InstrumentQuerySet(models.QuerySet):
    def valid_on(self, day: datetime.date) -> "InstrumentQuerySet":
        """In service and calibrated through `day` (the due date itself still counts)."""
        return self.filter(in_service=True, calibration_due__gte=day)


class Instrument(models.Model):
    ident = models.CharField("instrument ID", max_length=40, unique=True)
    name = models.CharField(max_length=120)
    kind = models.CharField(max_length=60, help_text="e.g. humidity chamber, spectrophotometer")
    serial = models.CharField(max_length=60, blank=True)
    location = models.CharField(max_length=80, blank=True)
    calibration_due = models.DateField(help_text="valid through this date, not after")
    in_service = models.BooleanField(default=True)
    note = models.TextField(blank=True)

    objects = InstrumentQuerySet.as_manager()

    class Meta:
        ordering = ["ident"]

    def __str__(self) -> str:
        return f"{self.ident} {self.name}"

    def is_valid_on(self, day: datetime.date) -> bool:
        return self.in_service and day <= self.calibration_due


class WitnessStock(models.Model):
    """Uncoated witness pieces on the shelf for one glass and form.

    The quantity on hand is the sum of its movements (labrecords.StockMovement),
    never a counter that gets overwritten.
    """

    glass = models.ForeignKey(Glass, on_delete=models.PROTECT, related_name="stock")
    form = models.CharField(max_length=60, help_text="e.g. 25 mm dia × 3 mm, one side polished")

    class Meta:
        ordering = ["glass__name", "form"]
        constraints = [
            models.UniqueConstraint(fields=["glass", "form"], name="witness_stock_unique")
        ]

    def __str__(self) -> str:
        return f"{self.glass} {self.form}"


class LabProfile(models.Model):
    """The lab's name and address as reports print them. The newest row counts; older rows
    stay so an old report's identity can still be read."""

    name = models.CharField(max_length=160)
    address = models.TextField()
    accreditation = models.CharField(max_length=200, blank=True)
    valid_from = models.DateTimeField()

    class Meta:
        ordering = ["-valid_from", "-id"]

    def __str__(self) -> str:
        return self.name
