"""Standards and the versioned catalogue of test methods.

A `Method` is a stable identity (its code); everything a record depends on
lives in an immutable `MethodVersion`. Editing a method, or confirming one of
its parameters, makes a new version through
`durability.services.method_version_create`; records point at the version
they used. Versions are append-only in the database too (see the migration
that protects the table).
"""

from django.conf import settings
from django.db import models
from django.db.models import Max


class StandardStatus(models.TextChoices):
    ACTIVE = "active", "Active"
    INACTIVE = "inactive", "Inactive for new design"


class Standard(models.Model):
    designation = models.CharField(max_length=80, help_text="e.g. MIL-C-48497A, ISO 9022-2")
    edition = models.CharField(max_length=80, blank=True, help_text="edition or year, as known")
    title = models.CharField(max_length=300, blank=True)
    status = models.CharField(
        max_length=10, choices=StandardStatus.choices, default=StandardStatus.ACTIVE
    )
    note = models.TextField(blank=True)

    class Meta:
        ordering = ["designation", "edition"]
        constraints = [
            models.UniqueConstraint(
                fields=["designation", "edition"], name="standard_designation_edition_unique"
            )
        ]

    def __str__(self) -> str:
        return f"{self.designation} ({self.edition})" if self.edition else self.designation


class MethodKind(models.TextChoices):
    ADHESION = "adhesion", "Adhesion"
    CROSSHATCH = "crosshatch", "Crosshatch"
    MODERATE_ABRASION = "moderate_abrasion", "Moderate abrasion"
    SEVERE_ABRASION = "severe_abrasion", "Severe abrasion"
    HUMIDITY = "humidity", "Humidity"
    TEMPERATURE = "temperature", "Temperature"
    THERMAL_SHOCK = "thermal_shock", "Thermal shock"
    SALT_FOG = "salt_fog", "Salt fog"
    SALT_SOLUBILITY = "salt_solubility", "Salt solubility"
    WATER_SOLUBILITY = "water_solubility", "Water solubility"
    SOLVENT_SOLUBILITY = "solvent_solubility", "Solvent solubility"
    CLEANABILITY = "cleanability", "Cleanability"
    INSPECTION = "inspection", "Inspection"
    SPECTRAL_MEASUREMENT = "spectral_measurement", "Spectral measurement"
    OTHER = "other", "Other"


class ParameterStatus(models.TextChoices):
    PUBLIC_SUMMARY = "public_summary", "Public summary"
    FROM_MEMORY = "from_memory", "From memory"
    COMMON_PRACTICE = "common_practice", "Common practice"
    TO_BE_ENTERED = "to_be_entered", "To be entered by the lab"
    CONFIRMED = "confirmed", "Confirmed"


class MethodQuerySet(models.QuerySet):
    def with_current_version(self) -> "MethodQuerySet":
        return self.annotate(current_number=Max("versions__number"))


class Method(models.Model):
    code = models.CharField(max_length=80, unique=True, help_text="e.g. MIL-C-48497A:humidity")
    standard = models.ForeignKey(Standard, on_delete=models.PROTECT, related_name="methods")
    clause = models.CharField(max_length=40, blank=True)
    name = models.CharField(max_length=120)
    kind = models.CharField(max_length=24, choices=MethodKind.choices)
    test_key = models.CharField(
        max_length=40, blank=True, help_text="the callout test name this method answers"
    )
    lab_procedure = models.BooleanField(default=False, help_text="written by the lab itself")

    objects = MethodQuerySet.as_manager()

    class Meta:
        ordering = ["code"]

    def __str__(self) -> str:
        return f"{self.code} {self.name}"

    def current_version(self) -> "MethodVersion | None":
        return self.versions.order_by("-number").first()


# The typed parameters a method commonly has. Anything else goes to `extra`.
TYPED_PARAMETERS: dict[str, tuple[str, str]] = {
    "temperature_c": ("Temperature", "°C"),
    "temperature_tolerance_c": ("Temperature tolerance (±)", "°C"),
    "temperature_low_c": ("Low temperature", "°C"),
    "temperature_high_c": ("High temperature", "°C"),
    "rh_min_pct": ("Relative humidity, minimum", "%"),
    "rh_max_pct": ("Relative humidity, maximum", "%"),
    "duration_h": ("Duration", "h"),
    "cycles": ("Cycles", ""),
    "strokes": ("Strokes", ""),
    "force_n": ("Force", "N"),
    "solution": ("Solution", ""),
    "concentration_pct": ("Concentration", "%"),
}


class MethodVersion(models.Model):
    method = models.ForeignKey(Method, on_delete=models.PROTECT, related_name="versions")
    number = models.PositiveIntegerField()
    group = models.CharField(
        max_length=20, blank=True, help_text="basic, when specified, or disputed between sources"
    )
    temperature_c = models.DecimalField(max_digits=7, decimal_places=2, null=True, blank=True)
    temperature_tolerance_c = models.DecimalField(
        max_digits=6, decimal_places=2, null=True, blank=True
    )
    temperature_low_c = models.DecimalField(max_digits=7, decimal_places=2, null=True, blank=True)
    temperature_high_c = models.DecimalField(max_digits=7, decimal_places=2, null=True, blank=True)
    rh_min_pct = models.DecimalField(max_digits=5, decimal_places=1, null=True, blank=True)
    rh_max_pct = models.DecimalField(max_digits=5, decimal_places=1, null=True, blank=True)
    duration_h = models.DecimalField(max_digits=8, decimal_places=2, null=True, blank=True)
    cycles = models.PositiveIntegerField(null=True, blank=True)
    strokes = models.PositiveIntegerField(null=True, blank=True)
    force_n = models.DecimalField(max_digits=7, decimal_places=2, null=True, blank=True)
    solution = models.CharField(max_length=120, blank=True)
    concentration_pct = models.DecimalField(max_digits=6, decimal_places=2, null=True, blank=True)
    extra = models.JSONField(default=dict, blank=True, help_text="other parameters: name -> value")
    # name -> {"status", "placeholder", "note", "unit", "confirmed_by", "confirmed_on", "copy"}
    parameter_status = models.JSONField(default=dict, blank=True)
    acceptance_text = models.TextField(blank=True)
    acceptance_rule = models.JSONField(default=dict, blank=True)
    acceptance_status = models.CharField(
        max_length=20, choices=ParameterStatus.choices, default=ParameterStatus.TO_BE_ENTERED
    )
    destructive = models.BooleanField(default=False)
    hazards = models.JSONField(default=list, blank=True)
    note = models.TextField(blank=True)
    origin = models.CharField(max_length=10, default="seed", help_text="seed or lab")
    seed_digest = models.CharField(
        max_length=64, blank=True, help_text="SHA-256 of the seed entry this version came from"
    )
    reason = models.TextField(blank=True, help_text="why this version was made")
    created_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    created_at = models.DateTimeField()

    class Meta:
        ordering = ["method", "-number"]
        constraints = [
            models.UniqueConstraint(fields=["method", "number"], name="method_version_unique"),
            models.CheckConstraint(
                condition=models.Q(number__gte=1), name="method_version_number_positive"
            ),
        ]

    def __str__(self) -> str:
        return f"{self.method.code} v{self.number}"

    def parameters(self) -> list[dict[str, object]]:
        """Every parameter with a value or a status, typed ones first, as plain dicts."""
        rows: list[dict[str, object]] = []
        seen: set[str] = set()
        for name, (label, unit) in TYPED_PARAMETERS.items():
            value = getattr(self, name)
            status = self.parameter_status.get(name)
            if value in (None, "") and status is None:
                continue
            rows.append(self._row(name, label, value, unit, status or {}))
            seen.add(name)
        for name, value in self.extra.items():
            status = self.parameter_status.get(name, {})
            rows.append(self._row(name, _label(name), value, status.get("unit", ""), status))
            seen.add(name)
        for name, status in self.parameter_status.items():
            if name not in seen:
                rows.append(self._row(name, _label(name), None, status.get("unit", ""), status))
        return rows

    @staticmethod
    def _row(name: str, label: str, value: object, unit: str, status: dict) -> dict[str, object]:
        return {
            "name": name,
            "label": label,
            "value": value,
            "unit": status.get("unit", unit),
            "status": status.get("status", ParameterStatus.TO_BE_ENTERED),
            "status_label": ParameterStatus(
                status.get("status", ParameterStatus.TO_BE_ENTERED)
            ).label,
            "placeholder": bool(status.get("placeholder")),
            "note": status.get("note", ""),
            "confirmed_by": status.get("confirmed_by", ""),
            "confirmed_on": status.get("confirmed_on", ""),
            "copy": status.get("copy", ""),
        }


def _label(name: str) -> str:
    return name.replace("_", " ").capitalize()
