"""The lab's test resources and calendar: chambers, bench stations, lab hours, holidays."""

from django.conf import settings
from django.db import models
from django.db.models import F, Q


class CalendarKind(models.TextChoices):
    ALWAYS = "always", "Around the clock (chamber)"
    LAB_HOURS = "lab_hours", "Lab hours only (bench station)"


class Resource(models.Model):
    ident = models.CharField(max_length=30, unique=True)
    name = models.CharField(max_length=120)
    calendar = models.CharField(max_length=10, choices=CalendarKind.choices)
    kinds = models.JSONField(default=list, help_text="method kinds it can run")
    capacity = models.PositiveIntegerField(help_text="pieces per run, or side by side")
    # e.g. {"temperature_c": [-70, 180], "rh_pct": [10, 98]}
    condition_ranges = models.JSONField(default=dict, blank=True)
    instrument = models.ForeignKey(
        "durability.Instrument",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="resources",
    )
    active = models.BooleanField(default=True)

    class Meta:
        ordering = ["calendar", "ident"]
        constraints = [
            models.CheckConstraint(condition=Q(capacity__gte=1), name="resource_capacity_positive")
        ]

    def __str__(self) -> str:
        return f"{self.ident} {self.name}"

    @property
    def is_chamber(self) -> bool:
        return self.calendar == CalendarKind.ALWAYS


class ResourceBlock(models.Model):
    """A period a resource cannot be used: maintenance, calibration, breakdown."""

    resource = models.ForeignKey(Resource, on_delete=models.PROTECT, related_name="blocks")
    starts_at = models.DateTimeField()
    ends_at = models.DateTimeField()
    reason = models.CharField(max_length=200)
    created_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    created_at = models.DateTimeField()

    class Meta:
        ordering = ["resource", "starts_at"]
        constraints = [
            models.CheckConstraint(
                condition=Q(ends_at__gt=F("starts_at")), name="resource_block_ends_after_start"
            )
        ]

    def __str__(self) -> str:
        return f"{self.resource.ident} blocked {self.starts_at:%Y-%m-%d %H:%M}: {self.reason}"


class LabHoliday(models.Model):
    day = models.DateField(unique=True)
    name = models.CharField(max_length=80)

    class Meta:
        ordering = ["day"]

    def __str__(self) -> str:
        return f"{self.day} {self.name}"


class LabHours(models.Model):
    """The lab's working hours (one row; the newest counts)."""

    weekdays = models.JSONField(default=list, help_text="Monday = 0")
    opens = models.TimeField()
    closes = models.TimeField()
    valid_from = models.DateField()

    class Meta:
        ordering = ["-valid_from"]
        verbose_name_plural = "lab hours"
        constraints = [
            models.CheckConstraint(condition=Q(closes__gt=F("opens")), name="lab_hours_ordered")
        ]

    def __str__(self) -> str:
        return f"lab hours from {self.valid_from}: {self.opens:%H:%M}-{self.closes:%H:%M}"
