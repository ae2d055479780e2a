"""Issuing reports: a frozen PDF with its SHA-256, amendments and re-issues.

Issued means frozen: the PDF bytes are stored under MEDIA_ROOT (named by their digest) and
the Report row, append-only in the database, keeps the digest and a random verification
code. A change after issue follows ISO/IEC 17025 7.8.8 (shared/reference/records-and-
security.md [pub]): an amendment is a further document titled "Amendment n to report X"
saying what changed and why; a re-issue is a complete report with a new number naming the
report it replaces, which stays retrievable and is shown as superseded.

Report numbers are R<yy>-<nnnn> (year of issue in the lab's time zone); an amendment is
<report number>-A<n>. The number column is unique: a number taken by a concurrent issue
makes the insert fail, and the issue retries with the next number (never max + 1 alone).

Who issues: the reviewer or quality manager role (the review itself is the independent
check), with the password again (see labrecords.services.reviews).
"""

from __future__ import annotations

import base64
import hashlib
import re
import secrets
from collections.abc import Callable
from dataclasses import replace

from django.conf import settings
from django.core.exceptions import ValidationError
from django.core.files.base import ContentFile
from django.core.files.storage import default_storage
from django.db import IntegrityError, transaction
from django.db.models import Q

from durability.models import LabProfile
from labrecords import clock
from labrecords.access import require_role
from labrecords.lab import lab_identity
from labrecords.models import (
    DecisionRule,
    ExposureCheck,
    Lot,
    LotStage,
    Report,
    ReportKind,
    Review,
    ReviewedResult,
    Signature,
    SignatureMeaning,
)
from labrecords.reporting.content import ReportContent, ReportHeader, SignatureBlock
from labrecords.reporting.pdf import render_report
from labrecords.roles import Role
from labrecords.selectors_reports import (
    in_force_report,
    lab_zone,
    latest_review,
    lot_results,
    printed_name,
    provider_report_missing,
    report_content,
    review_void_reasons,
)
from labrecords.services.audit import audit_record, snapshot
from labrecords.services.lots import lot_stage_set
from labrecords.services.reviews import signer_role, signing_credentials_check

ISSUERS = (Role.REVIEWER, Role.QUALITY_MANAGER)
# 10 random bytes from `secrets`: an 80-bit code, unrelated to the report number.
VERIFICATION_CODE_BYTES = 10
NUMBER_ATTEMPTS = 20


class ReportNotReady(ValidationError):
    """Issuing was refused: the message names every missing item."""

    def __init__(self, items: list[str], verb: str = "issue the report"):
        self.items = items
        super().__init__({"report": [f"Cannot {verb}: missing {item}." for item in items]})


def new_verification_code() -> str:
    """A random code from `secrets` (80 bits), base32 in four groups: "K7QF-2M3X-P0LA-9ZTB"."""
    raw = base64.b32encode(secrets.token_bytes(VERIFICATION_CODE_BYTES)).decode("ascii")
    return "-".join(raw[i : i + 4] for i in range(0, len(raw), 4))


def normalise_code(text: str) -> str:
    """A code as typed (any case, spaces or dashes) in its stored form."""
    raw = re.sub(r"[^A-Za-z0-9]", "", text or "").upper()
    return "-".join(raw[i : i + 4] for i in range(0, len(raw), 4))


def verify_url(code: str) -> str:
    return f"{settings.REPORT_VERIFY_BASE_URL.rstrip('/')}/verify/{code}/"


def report_missing_items(lot: Lot) -> tuple[Review | None, list[str]]:
    """The review a report would rest on, and every required item still missing (named)."""
    lot = Lot.objects.select_related("order__customer").get(pk=lot.pk)
    items: list[str] = []
    if not LabProfile.objects.exists() and not settings.LAB_NAME.strip():
        items.append("the lab's name (record the lab profile, or set LAB_NAME)")
    if not lab_identity().address.strip():
        items.append("the lab's address (record the lab profile, or set LAB_ADDRESS)")
    customer = lot.order.customer
    if not (customer.contact_name or customer.contact_email or customer.address):
        items.append(
            f"the customer's contact details (customer {customer.name}: a contact "
            "name, e-mail or address)"
        )
    if lot.received_on is None:
        items.append(f"the date the witness pieces of lot {lot.number} were received")
    state = lot_results(lot)
    items += state.problems()
    items += provider_report_missing(state.planned)
    if lot.order.decision_rule == DecisionRule.GUARD_BAND:
        items += [
            f"the measurement uncertainty for {row.where} (the order's decision rule is a "
            "guard band)"
            for row in state.planned
            if row.result is not None
            and row.result.uncertainty is None
            and row.step.kind == "spectral_measurement"
        ]
    runs = {
        row.result.chamber_run
        for row in state.planned
        if row.result is not None and row.result.chamber_run is not None
    }
    checked = set(ExposureCheck.objects.filter(run__in=runs).values_list("run_id", flat=True))
    items += [
        f"a checked chamber log for run {run.ident} (its time in tolerance)"
        for run in sorted(runs, key=lambda r: r.ident)
        if run.pk not in checked
    ]
    items += [
        f"a disposition for nonconformance {nc.number}"
        for nc in lot.nonconformances.open().order_by("number")
    ]
    review = latest_review(lot)
    if review is None:
        items.append("a signed review of the results")
        return None, items
    void = review_void_reasons(review)
    if void:
        items.append(
            f"a valid review (the review signed {review.reviewed_at:%Y-%m-%d %H:%M} "
            f"UTC by {printed_name(review.reviewer)} is void: {'; '.join(void)})"
        )
        return review, items
    covered = set(ReviewedResult.objects.filter(review=review).values_list("result_id", flat=True))
    items += [
        f"a review of the result for {row.where} (recorded after the review)"
        for row in state.planned
        if row.result is not None and row.result.pk not in covered
    ]
    return review, items


def draft_content(lot: Lot) -> ReportContent:
    """The report as it would read now, marked as a draft (for the preview)."""
    review = latest_review(lot)
    if review is not None and review_void_reasons(review):
        review = None
    header = ReportHeader(
        number="",
        kind=ReportKind.REPORT,
        title=f"Draft test report, lot {lot.number}",
        issued_at=None,
        draft=True,
    )
    return report_content(lot, header=header, review=review, authorisation=None)


def report_pdf_bytes(report: Report) -> bytes:
    """The stored PDF exactly as issued; refused if the bytes no longer match the digest."""
    with default_storage.open(report.pdf.name, "rb") as handle:
        data = handle.read()
    if hashlib.sha256(data).hexdigest() != report.sha256:
        raise ValidationError(
            f"The stored PDF of report {report.number} does not match its "
            "recorded SHA-256: it must not be served. Restore it from the "
            "archive."
        )
    return data


# ---------------------------------------------------------------- numbers


def _free_number(make: Callable[[int], str], pattern: str, tried: set[str]) -> str:
    taken = [
        int(m.group(1))
        for number in Report.objects.filter(number__regex=pattern).values_list("number", flat=True)
        if (m := re.fullmatch(pattern, number))
    ]
    taken += [int(m.group(1)) for number in tried if (m := re.fullmatch(pattern, number))]
    return make(max(taken, default=0) + 1)


def _report_numbers(year: int) -> Callable[[set[str]], str]:
    prefix = f"R{year % 100:02d}-"
    return lambda tried: _free_number(lambda n: f"{prefix}{n:04d}", rf"^{prefix}(\d+)$", tried)


def _amendment_numbers(report: Report) -> Callable[[set[str]], str]:
    stem = re.escape(report.number)
    return lambda tried: _free_number(lambda n: f"{report.number}-A{n}", rf"^{stem}-A(\d+)$", tried)


# ---------------------------------------------------------------- issuing


def _store(report: Report, pdf: bytes) -> bool:
    """Write the PDF under its digest and insert the row; False when the number was taken."""
    digest = hashlib.sha256(pdf).hexdigest()
    name = f"reports/{digest[:2]}/{digest}.pdf"
    if default_storage.exists(name):
        with default_storage.open(name, "rb") as handle:
            if hashlib.sha256(handle.read()).hexdigest() != digest:
                raise ValidationError(f"The file store holds a damaged {name}; not issued.")
    else:
        saved = default_storage.save(name, ContentFile(pdf))
        if saved != name:  # the same bytes were stored concurrently under that name
            default_storage.delete(saved)
    report.pdf.name = name
    report.sha256 = digest
    report.full_clean(validate_unique=False)
    try:
        with transaction.atomic():
            report.save()
    except IntegrityError:
        if Report.objects.filter(
            Q(number=report.number) | Q(verification_code=report.verification_code)
        ).exists():
            return False
        raise
    return True


def _title(kind: str, number: str, amends: Report | None, replaces: Report | None) -> str:
    if kind == ReportKind.AMENDMENT and amends is not None:
        return f"Amendment {number.rsplit('-A', 1)[-1]} to report {amends.number}"
    if kind == ReportKind.REISSUE and replaces is not None:
        return f"Test report {number} (re-issue, replaces {replaces.number})"
    return f"Test report {number}"


def _issue(
    *,
    actor,
    lot: Lot,
    kind: str,
    review: Review,
    numbers: Callable[[set[str]], str],
    amends: Report | None = None,
    replaces: Report | None = None,
    change_description: str = "",
) -> Report:
    now = clock.now()
    local = now.astimezone(lab_zone())
    authorisation = SignatureBlock(
        printed_name=printed_name(actor),
        role=signer_role(actor, *ISSUERS),
        meaning=SignatureMeaning.APPROVAL,
        meaning_label=SignatureMeaning.APPROVAL.label,
        signed_at=local,
        time_zone=settings.TIME_ZONE,
    )
    header = ReportHeader(
        number="",
        kind=kind,
        title="",
        issued_at=local,
        amends_number=amends.number if amends else "",
        amends_issued_at=amends.issued_at.astimezone(lab_zone()) if amends else None,
        replaces_number=replaces.number if replaces else "",
        replaces_issued_at=replaces.issued_at.astimezone(lab_zone()) if replaces else None,
        change_description=change_description,
    )
    content = report_content(
        lot,
        header=header,
        review=review,
        authorisation=authorisation,
        amended_review=amends.review if amends else None,
    )
    tried: set[str] = set()
    for _ in range(NUMBER_ATTEMPTS):
        number = numbers(tried)
        tried.add(number)
        code = new_verification_code()
        header = replace(
            content.header,
            number=number,
            title=_title(kind, number, amends, replaces),
            verification_code=code,
            verify_url=verify_url(code),
        )
        pdf = render_report(replace(content, header=header))
        report = Report(
            number=number,
            kind=kind,
            lot=lot,
            review=review,
            amends=amends,
            replaces=replaces,
            change_description=change_description,
            decision_rule=lot.order.decision_rule,
            issued_by=actor,
            issued_at=now,
            verification_code=code,
        )
        if _store(report, pdf):
            break
    else:
        raise ValidationError(
            {
                "report": f"No free report number after {NUMBER_ATTEMPTS} "
                "attempts; nothing was issued. Try again."
            }
        )
    Signature(
        signer=actor,
        printed_name=authorisation.printed_name,
        role=authorisation.role,
        meaning=SignatureMeaning.APPROVAL,
        signed_at=now,
        time_zone=settings.TIME_ZONE,
        report=report,
    ).save()
    audit_record(
        actor=actor,
        action=f"issue {kind}",
        obj=report,
        after={
            **snapshot(
                report,
                [
                    "number",
                    "kind",
                    "lot_id",
                    "review_id",
                    "amends_id",
                    "replaces_id",
                    "sha256",
                    "issued_at",
                ],
            ),
            "pdf": report.pdf.name,
        },
        reason=change_description,
    )
    if lot.stage != LotStage.REPORT_ISSUED:
        lot_stage_set(
            actor=actor,
            lot=lot,
            stage=LotStage.REPORT_ISSUED,
            reason=f"{ReportKind(kind).label} {report.number} issued",
        )
    return report


def _ready(lot: Lot, verb: str) -> Review:
    review, missing = report_missing_items(lot)
    if missing:
        raise ReportNotReady(missing, verb)
    assert review is not None
    return review


def report_issue(
    *, actor, lot: Lot, password: str, username: str | None = None, first_in_session: bool = True
) -> Report:
    """Issue the lot's report: render, store the PDF and its digest, sign (meaning: approval).

    Refused with ReportNotReady naming every missing item; refused when the lot already has
    a report (amend or re-issue that one instead).
    """
    require_role(actor, *ISSUERS)
    signing_credentials_check(
        actor=actor,
        password=password,
        username=username,
        first_in_session=first_in_session,
        what=f"issue of the report for lot {lot}",
    )
    with transaction.atomic():
        lot = Lot.objects.select_for_update().select_related("order").get(pk=lot.pk)
        existing = in_force_report(lot)
        if existing is not None:
            raise ValidationError(
                {
                    "report": f"Lot {lot.number} already has report "
                    f"{existing.number}: amend it or re-issue it."
                }
            )
        review = _ready(lot, "issue the report")
        return _issue(
            actor=actor,
            lot=lot,
            kind=ReportKind.REPORT,
            review=review,
            numbers=_report_numbers(clock.now().astimezone(lab_zone()).year),
        )


def _correctable(report: Report, change_description: str) -> Report:
    report = Report.objects.select_related("lot__order", "review").get(pk=report.pk)
    if not change_description.strip():
        raise ValidationError({"change_description": "Say what changed and why."})
    if report.kind == ReportKind.AMENDMENT:
        raise ValidationError(
            {
                "report": f"{report.number} is an amendment: amend or re-issue "
                f"report {report.amends.number} instead."
            }
        )
    replaced_by = Report.objects.filter(replaces=report).first()
    if replaced_by is not None:
        raise ValidationError(
            {
                "report": f"Report {report.number} was replaced by "
                f"{replaced_by.number}: correct that one."
            }
        )
    return report


def report_amend(
    *,
    actor,
    report: Report,
    change_description: str,
    password: str,
    username: str | None = None,
    first_in_session: bool = True,
) -> Report:
    """Issue an amendment to `report`: a further document saying what changed and why.

    The original's stored bytes stay as they were. The lot's current results must again be
    complete and covered by a valid review (a corrected result needs a new review first).
    """
    require_role(actor, *ISSUERS)
    signing_credentials_check(
        actor=actor,
        password=password,
        username=username,
        first_in_session=first_in_session,
        what=f"amendment to report {report.number}",
    )
    with transaction.atomic():
        Lot.objects.select_for_update().filter(pk=report.lot_id).first()
        report = _correctable(report, change_description)
        review = _ready(report.lot, "issue the amendment")
        return _issue(
            actor=actor,
            lot=report.lot,
            kind=ReportKind.AMENDMENT,
            review=review,
            numbers=_amendment_numbers(report),
            amends=report,
            change_description=change_description.strip(),
        )


def report_reissue(
    *,
    actor,
    report: Report,
    change_description: str,
    password: str,
    username: str | None = None,
    first_in_session: bool = True,
) -> Report:
    """Issue a complete new report with a new number that replaces `report`.

    The replaced report (and its amendments) stay retrievable and show as superseded.
    """
    require_role(actor, *ISSUERS)
    signing_credentials_check(
        actor=actor,
        password=password,
        username=username,
        first_in_session=first_in_session,
        what=f"re-issue of report {report.number}",
    )
    with transaction.atomic():
        Lot.objects.select_for_update().filter(pk=report.lot_id).first()
        report = _correctable(report, change_description)
        review = _ready(report.lot, "re-issue the report")
        return _issue(
            actor=actor,
            lot=report.lot,
            kind=ReportKind.REISSUE,
            review=review,
            numbers=_report_numbers(clock.now().astimezone(lab_zone()).year),
            replaces=report,
            change_description=change_description.strip(),
        )
