"""Reviews, signatures and issued reports.

A review covers exact result revisions; it is void as soon as any of them is
superseded (computed, never stored). Signatures and reports are append-only:
an issued report's PDF bytes and digest never change; a correction is an
amendment (a further document) or a re-issue (a new report that replaces it).
"""

from django.conf import settings
from django.db import models
from django.db.models import Q

from labrecords.models.revisions import AppendOnlyModel, AppendOnlyQuerySet


class Review(AppendOnlyModel):
    lot = models.ForeignKey("labrecords.Lot", on_delete=models.PROTECT, related_name="reviews")
    reviewer = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    reviewed_at = models.DateTimeField()
    comment = models.TextField(blank=True)

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        ordering = ["lot", "-reviewed_at"]


class ReviewedResult(AppendOnlyModel):
    review = models.ForeignKey(Review, on_delete=models.PROTECT, related_name="covered")
    result = models.ForeignKey(
        "labrecords.StepResult", on_delete=models.PROTECT, related_name="reviews"
    )

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["review", "result"], name="reviewed_result_once")
        ]


class SignatureMeaning(models.TextChoices):
    REVIEW = "review", "Reviewed: the results were checked against the records"
    APPROVAL = "approval", "Approved: the report is authorised for issue"
    AUTHORSHIP = "authorship", "Authored"
    RESPONSIBILITY = "responsibility", "Responsible for the work"


class Signature(AppendOnlyModel):
    """An electronic signature: printed name, date and time with zone, and meaning."""

    signer = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="signatures"
    )
    printed_name = models.CharField(max_length=150)
    role = models.CharField(max_length=40)
    meaning = models.CharField(max_length=16, choices=SignatureMeaning.choices)
    signed_at = models.DateTimeField()
    time_zone = models.CharField(max_length=60)
    review = models.ForeignKey(
        Review, null=True, blank=True, on_delete=models.PROTECT, related_name="signatures"
    )
    report = models.ForeignKey(
        "labrecords.Report",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="signatures",
    )

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        ordering = ["signed_at"]
        constraints = [
            models.CheckConstraint(
                condition=Q(review__isnull=False) | Q(report__isnull=False),
                name="signature_signs_something",
            )
        ]


class ReportKind(models.TextChoices):
    REPORT = "report", "Report"
    AMENDMENT = "amendment", "Amendment"
    REISSUE = "reissue", "Re-issue"


class ReportQuerySet(AppendOnlyQuerySet):
    def visible_to(self, user) -> "ReportQuerySet":
        from labrecords.access import customer_filter

        return self.filter(customer_filter(user, "lot__order__customer_id"))


class Report(AppendOnlyModel):
    number = models.CharField(max_length=30, unique=True)
    kind = models.CharField(max_length=10, choices=ReportKind.choices)
    lot = models.ForeignKey("labrecords.Lot", on_delete=models.PROTECT, related_name="reports")
    review = models.ForeignKey(Review, on_delete=models.PROTECT, related_name="reports")
    amends = models.ForeignKey(
        "self", null=True, blank=True, on_delete=models.PROTECT, related_name="amendments"
    )
    replaces = models.OneToOneField(
        "self", null=True, blank=True, on_delete=models.PROTECT, related_name="replaced_by"
    )
    change_description = models.TextField(blank=True, help_text="what changed and why")
    decision_rule = models.CharField(max_length=12)
    issued_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    issued_at = models.DateTimeField()
    pdf = models.FileField(upload_to="reports/")
    sha256 = models.CharField(max_length=64)
    verification_code = models.CharField(max_length=32, unique=True)

    objects = ReportQuerySet.as_manager()

    class Meta:
        ordering = ["-issued_at"]
        constraints = [
            models.CheckConstraint(
                condition=Q(kind="report", amends__isnull=True, replaces__isnull=True)
                | Q(kind="amendment", amends__isnull=False) & ~Q(change_description="")
                | Q(kind="reissue", replaces__isnull=False) & ~Q(change_description=""),
                name="report_kind_links",
            )
        ]

    def __str__(self) -> str:
        return self.number
