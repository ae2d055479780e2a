from django.db import models

from labrecords.models.revisions import RevisionModel


class InspectionPoint(models.TextChoices):
    INITIAL = "initial", "Initial (before any exposure)"
    AFTER_EXPOSURE = "after_exposure", "After an exposure"
    RE_INSPECTION = "re_inspection", "Re-inspection"


class Observation(RevisionModel):
    """What was seen on a witness piece at one inspection. Revisioned."""

    piece = models.ForeignKey(
        "labrecords.WitnessPiece", on_delete=models.PROTECT, related_name="observations"
    )
    point = models.CharField(max_length=16, choices=InspectionPoint.choices)
    no_defects = models.BooleanField(help_text="explicit 'no defects observed'")
    # [{"defect": "peeling", "zone": "edge", "extent": "...", "quantity": 0-5, "size": 0-5,
    #   "intensity": 0-5}]
    defects = models.JSONField(default=list, blank=True)
    lighting = models.CharField(max_length=80, blank=True)
    background = models.CharField(max_length=80, blank=True)
    magnification = models.CharField(max_length=20, blank=True)
    notes = models.TextField(blank=True)

    class Meta(RevisionModel.Meta):
        ordering = ["piece", "recorded_at", "number"]
        constraints = RevisionModel.Meta.constraints

    def __str__(self) -> str:
        return f"{self.piece} {self.get_point_display()} rev {self.number}"
