"""Reviews, signatures and issued reports: who may sign, what voids a review, what is frozen."""

import datetime
import hashlib
import json
import re

import pytest
from django.core.exceptions import PermissionDenied, ValidationError
from django.db import DatabaseError, IntegrityError, connection, transaction

from durability.models import Method
from labrecords import clock
from labrecords.models import (
    AuditEntry,
    LotStage,
    MethodAuthorisation,
    Nonconformance,
    Report,
    ReportKind,
    ReviewedResult,
    Signature,
    SignatureMeaning,
    StepResult,
)
from labrecords.selectors_reports import lot_results, review_is_void
from labrecords.services import reports, reviews
from tests.labrecords.report_fixtures import MOMENT, PASSWORD, correct, finished_lot

pytestmark = pytest.mark.django_db

LATER = MOMENT + datetime.timedelta(hours=2)


@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = str(tmp_path / "media")


def sign(cast, lot, *, at=LATER, actor=None):
    with clock.frozen_at(at):
        return reviews.review_sign(
            actor=actor or cast.reviewer,
            lot=lot,
            password=PASSWORD,
            username=(actor or cast.reviewer).username,
        )


def issue(cast, lot, *, at=LATER + datetime.timedelta(hours=1), actor=None):
    with clock.frozen_at(at):
        return reports.report_issue(
            actor=actor or cast.reviewer,
            lot=lot,
            password=PASSWORD,
            username=(actor or cast.reviewer).username,
        )


def stored_bytes(report: Report) -> bytes:
    with report.pdf.open("rb") as handle:
        return handle.read()


# ---------------------------------------------------------------- review


def test_a_review_covers_the_exact_current_revisions_and_signs_with_meaning(cast, settings):
    lot = finished_lot(cast)
    review = sign(cast, lot)
    current = set(StepResult.objects.current().filter(piece__lot=lot).values_list("pk", flat=True))
    assert (
        set(ReviewedResult.objects.filter(review=review).values_list("result_id", flat=True))
        == current
    )
    signature = Signature.objects.get(review=review)
    # 21 CFR 11.50: printed name, date and time, meaning (records-and-security.md [mem]).
    assert signature.printed_name == cast.reviewer.get_full_name()
    assert signature.meaning == SignatureMeaning.REVIEW
    assert signature.signed_at == LATER and signature.time_zone == settings.TIME_ZONE
    assert signature.role == "reviewer"
    lot.refresh_from_db()
    assert lot.stage == LotStage.SIGNED


def test_a_review_is_refused_while_a_result_is_missing_and_names_it(cast):
    lot = _lot_without_results(cast)
    first = lot_results(lot).planned[0]
    with pytest.raises(ValidationError) as refused:
        reviews.review_sign(actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev")
    assert f"Cannot sign the review: missing a result for {first.where}." in refused.value.messages
    assert not lot.reviews.exists()


def _lot_without_results(cast):
    from tests.factories import LotFactory, OrderFactory, released_plan

    lot = LotFactory(order=OrderFactory(customer=cast.customer_org))
    released_plan(lot=lot, engineer=cast.engineer)
    return lot


def test_who_did_the_work_cannot_review_it(cast):
    lot = finished_lot(cast)
    # The reviewer corrects one result: they now did part of the work.
    result = StepResult.objects.current().filter(piece__lot=lot).first()
    with clock.frozen_at(MOMENT + datetime.timedelta(minutes=30)):
        correct(result, by=cast.reviewer, reason="typo in the stroke count")
    with pytest.raises(ValidationError, match="did not do the work"):
        sign(cast, lot)
    assert not lot.reviews.exists()


def test_a_method_with_an_authorisation_list_needs_the_reviewer_on_it(cast):
    lot = finished_lot(cast)
    method = Method.objects.get(code="MIL-C-48497A:humidity")
    MethodAuthorisation.objects.create(
        user=cast.quality_manager, method=method, granted_by=cast.administrator, granted_at=MOMENT
    )
    with pytest.raises(
        ValidationError, match="not on the authorisation list for method MIL-C-48497A:humidity"
    ):
        sign(cast, lot)
    MethodAuthorisation.objects.create(
        user=cast.reviewer, method=method, granted_by=cast.administrator, granted_at=MOMENT
    )
    assert sign(cast, lot).reviewer == cast.reviewer


def test_a_revoked_authorisation_does_not_count(cast):
    lot = finished_lot(cast)
    method = Method.objects.get(code="MIL-C-48497A:humidity")
    MethodAuthorisation.objects.create(
        user=cast.reviewer,
        method=method,
        granted_by=cast.administrator,
        granted_at=MOMENT,
        revoked_by=cast.administrator,
        revoked_at=MOMENT,
    )
    MethodAuthorisation.objects.create(
        user=cast.quality_manager, method=method, granted_by=cast.administrator, granted_at=MOMENT
    )
    with pytest.raises(ValidationError, match="authorisation list"):
        sign(cast, lot)


def test_only_the_reviewer_role_reviews(cast):
    lot = finished_lot(cast)
    with pytest.raises(PermissionDenied):
        reviews.review_sign(actor=cast.engineer, lot=lot, password=PASSWORD, username="eng")


# ---------------------------------------------------------------- credentials


def test_signing_needs_the_password_and_a_refusal_is_audited(cast):
    lot = finished_lot(cast)
    with pytest.raises(ValidationError) as refused:
        reviews.review_sign(
            actor=cast.reviewer, lot=lot, password="not my password", username="rev"
        )
    assert refused.value.message_dict == {"password": [reviews.WRONG_CREDENTIALS]}
    assert not lot.reviews.exists()
    entry = AuditEntry.objects.get(action="signing refused")
    assert entry.actor == cast.reviewer
    assert entry.changes["because"] == [None, "wrong user name or password"]
    assert "not my password" not in json.dumps(entry.changes)  # never the typed secret


def test_the_first_signing_in_a_session_needs_the_user_name_later_ones_the_password(cast):
    lot = finished_lot(cast)
    with pytest.raises(ValidationError) as refused:
        reviews.review_sign(
            actor=cast.reviewer, lot=lot, password=PASSWORD, username="", first_in_session=True
        )
    assert "username" in refused.value.message_dict
    with pytest.raises(ValidationError, match="not correct"):
        reviews.review_sign(
            actor=cast.reviewer,
            lot=lot,
            password=PASSWORD,
            username="someone-else",
            first_in_session=True,
        )
    with clock.frozen_at(LATER):
        review = reviews.review_sign(
            actor=cast.reviewer, lot=lot, password=PASSWORD, username=None, first_in_session=False
        )
    assert review.pk
    with pytest.raises(ValidationError, match="not correct"):
        reports.report_issue(actor=cast.reviewer, lot=lot, password="", first_in_session=False)
    assert not Report.objects.exists()


# ---------------------------------------------------------------- void reviews


def test_a_correction_voids_the_review_and_issue_names_it(cast):
    lot = finished_lot(cast)
    review = sign(cast, lot)
    assert not review_is_void(review)
    result = ReviewedResult.objects.filter(review=review).first().result
    with clock.frozen_at(LATER + datetime.timedelta(minutes=10)):
        correct(result, by=cast.technician, reason="strokes were 50, not 25")
    assert review_is_void(review)
    with pytest.raises(reports.ReportNotReady) as refused:
        issue(cast, lot)
    message = str(refused.value)
    assert "missing a valid review" in message and "strokes were 50, not 25" in message
    assert f"piece {result.piece.ident}" in message
    assert not Report.objects.exists()


def test_a_result_recorded_after_the_review_is_not_covered(cast):
    lot = finished_lot(cast)
    review = sign(cast, lot)
    link = ReviewedResult.objects.filter(review=review).first()
    # A result can only appear after the review as a correction, which voids the review;
    # a new review then covers it.
    with clock.frozen_at(LATER + datetime.timedelta(minutes=10)):
        correct(link.result, by=cast.technician, reason="re-read the grade")
    second = sign(cast, lot, at=LATER + datetime.timedelta(minutes=20))
    assert not review_is_void(second)
    assert issue(cast, lot).review == second


# ---------------------------------------------------------------- issue


def test_issue_stores_the_pdf_and_its_digest_and_freezes_the_row(cast):
    lot = finished_lot(cast)
    sign(cast, lot)
    report = issue(cast, lot)
    data = stored_bytes(report)
    assert data.startswith(b"%PDF")
    assert hashlib.sha256(data).hexdigest() == report.sha256
    assert report.pdf.name == f"reports/{report.sha256[:2]}/{report.sha256}.pdf"
    assert re.fullmatch(r"R26-\d{4}", report.number)
    approval = Signature.objects.get(report=report)
    assert approval.meaning == SignatureMeaning.APPROVAL and approval.signer == cast.reviewer
    lot.refresh_from_db()
    assert lot.stage == LotStage.REPORT_ISSUED
    # Frozen in the database too (labrecords.immutability): no UPDATE gets through.
    with (
        pytest.raises((DatabaseError, IntegrityError), match="append-only"),
        transaction.atomic(),
        connection.cursor() as cursor,
    ):
        cursor.execute("UPDATE labrecords_report SET sha256 = 'x' WHERE id = %s", [report.pk])


def test_the_verification_code_is_random_and_long_enough(cast):
    codes = {reports.new_verification_code() for _ in range(200)}
    assert len(codes) == 200
    for code in codes:
        # 16 base32 characters (RFC 4648 alphabet) carry 16 x 5 = 80 bits >= 40.
        assert re.fullmatch(r"[A-Z2-7]{4}(-[A-Z2-7]{4}){3}", code)
    assert reports.normalise_code("k7qf 2m3x-p0la9ztb") == "K7QF-2M3X-P0LA-9ZTB"
    lot_a, lot_b = finished_lot(cast), finished_lot(cast)
    sign(cast, lot_a)
    sign(cast, lot_b)
    a, b = issue(cast, lot_a), issue(cast, lot_b)
    assert a.verification_code != b.verification_code
    for report in (a, b):
        assert report.number.replace("-", "") not in report.verification_code.replace("-", "")


def test_issue_is_refused_naming_each_missing_item(cast, settings):
    settings.LAB_ADDRESS = ""
    lot = finished_lot(cast)
    lot.received_on = None
    lot.save()
    with pytest.raises(reports.ReportNotReady) as refused:
        issue(cast, lot)
    items = refused.value.items
    assert "the lab's address (record the lab profile, or set LAB_ADDRESS)" in items
    assert f"the date the witness pieces of lot {lot.number} were received" in items
    assert "a signed review of the results" in items
    assert (
        "Cannot issue the report: missing the lab's address (record the lab profile, or "
        "set LAB_ADDRESS)."
    ) in refused.value.messages


def test_an_open_nonconformance_withholds_the_report(cast):
    lot = finished_lot(cast)
    sign(cast, lot)
    Nonconformance.objects.create(
        number="NC-26-001",
        kind="coating_failure",
        lot=lot,
        description="haze after humidity",
        opened_at=MOMENT,
    )
    with pytest.raises(reports.ReportNotReady, match="disposition for nonconformance NC-26-001"):
        issue(cast, lot)


def test_only_a_reviewer_or_quality_manager_issues(cast):
    lot = finished_lot(cast)
    sign(cast, lot)
    with pytest.raises(PermissionDenied):
        issue(cast, lot, actor=cast.engineer)
    assert issue(cast, lot, actor=cast.quality_manager).issued_by == cast.quality_manager


def test_a_second_report_for_the_same_lot_is_refused(cast):
    lot = finished_lot(cast)
    sign(cast, lot)
    first = issue(cast, lot)
    with pytest.raises(ValidationError, match=f"already has report {first.number}"):
        issue(cast, lot)


def test_a_number_taken_meanwhile_is_retried_never_reused(cast, monkeypatch):
    lot_a, lot_b = finished_lot(cast), finished_lot(cast)
    sign(cast, lot_a)
    sign(cast, lot_b)
    first = issue(cast, lot_a)
    real = reports._report_numbers

    def stale_numbers(year):
        """Simulates a concurrent issue: the first candidate is a number already taken."""
        fresh = real(year)
        calls = {"n": 0}

        def candidate(tried):
            calls["n"] += 1
            return first.number if calls["n"] == 1 else fresh(tried)

        return candidate

    monkeypatch.setattr(reports, "_report_numbers", stale_numbers)
    second = issue(cast, lot_b)
    assert second.number != first.number
    assert int(second.number[-4:]) == int(first.number[-4:]) + 1


# ---------------------------------------------------------------- corrections after issue


def test_an_amendment_says_what_changed_and_leaves_the_original_untouched(cast):
    lot = finished_lot(cast)
    sign(cast, lot)
    original = issue(cast, lot)
    before = stored_bytes(original)
    result = ReviewedResult.objects.filter(review=original.review).first().result
    with clock.frozen_at(LATER + datetime.timedelta(days=1)):
        correct(
            result,
            by=cast.technician,
            reason="transcription error in the grade",
            values={"note": "grade corrected"},
        )
    sign(cast, lot, at=LATER + datetime.timedelta(days=1, hours=1))
    with clock.frozen_at(LATER + datetime.timedelta(days=1, hours=2)):
        amendment = reports.report_amend(
            actor=cast.reviewer,
            report=original,
            password=PASSWORD,
            username="rev",
            change_description="Result corrected after a transcription error.",
        )
    assert amendment.kind == ReportKind.AMENDMENT and amendment.amends == original
    assert amendment.number == f"{original.number}-A1"
    original.refresh_from_db()
    assert stored_bytes(original) == before
    assert hashlib.sha256(before).hexdigest() == original.sha256
    text = _text(stored_bytes(amendment))
    assert f"Amendment 1 to report {original.number}" in text
    assert "transcription error in the grade" in text  # the correction's own reason
    assert "Result corrected after a transcription error." in text


def test_a_reissue_gets_a_new_number_and_the_replaced_report_stays_superseded(cast):
    lot = finished_lot(cast)
    sign(cast, lot)
    original = issue(cast, lot)
    original_bytes = stored_bytes(original)
    with clock.frozen_at(LATER + datetime.timedelta(days=2)):
        reissue = reports.report_reissue(
            actor=cast.reviewer,
            report=original,
            password=PASSWORD,
            username="rev",
            change_description="Customer address corrected.",
        )
    assert reissue.kind == ReportKind.REISSUE and reissue.replaces == original
    assert reissue.number != original.number and re.fullmatch(r"R26-\d{4}", reissue.number)
    original.refresh_from_db()
    assert original.replaced_by == reissue
    assert stored_bytes(original) == original_bytes
    text = _text(stored_bytes(reissue))
    assert f"replaces report {original.number}" in text
    with pytest.raises(ValidationError, match=f"replaced by {reissue.number}"):
        reports.report_amend(
            actor=cast.reviewer,
            report=original,
            password=PASSWORD,
            username="rev",
            change_description="x",
        )
    with pytest.raises(ValidationError, match=f"replaced by {reissue.number}"):
        reports.report_reissue(
            actor=cast.reviewer,
            report=original,
            password=PASSWORD,
            username="rev",
            change_description="again",
        )


def test_a_correction_needs_a_description(cast):
    lot = finished_lot(cast)
    sign(cast, lot)
    original = issue(cast, lot)
    with pytest.raises(ValidationError, match="what changed and why"):
        reports.report_amend(
            actor=cast.reviewer,
            report=original,
            password=PASSWORD,
            username="rev",
            change_description="  ",
        )


def test_results_from_an_outside_provider_need_their_report_and_are_marked(cast):
    lot = finished_lot(cast)
    row = lot_results(lot).planned[-1]
    with clock.frozen_at(MOMENT + datetime.timedelta(minutes=40)):
        external = StepResult(
            record_key=row.result.record_key,
            number=2,
            supersedes=row.result,
            step=row.step,
            step_key=row.step.step_key,
            piece=row.piece,
            values={"note": "see their report"},
            verdict="pass",
            verdict_reason="pass per the provider's report",
            recorded_by=cast.technician,
            recorded_at=clock.now(),
            observed_at=clock.now(),
            reason="measured by an outside provider",
            external_provider="Invented Test House",
            external_report_ref="ITH-2026-0412",
            external_accreditation="invented accreditor no. 0000",
        )
        external.save()
    sign(cast, lot, at=LATER)
    with pytest.raises(reports.ReportNotReady, match="outside provider's report"):
        issue(cast, lot)
    from labrecords.models import Evidence

    evidence = Evidence(
        kind="provider_report",
        lot=lot,
        piece=row.piece,
        step_key=row.step.step_key,
        file="evidence/00/provider.pdf",
        sha256="0" * 64,
        original_name="ITH-2026-0412.pdf",
        content_type="application/pdf",
        size=10,
        uploaded_by=cast.technician,
        uploaded_at=MOMENT,
    )
    evidence.save()
    text = _text(stored_bytes(issue(cast, lot)))
    assert "Invented Test House" in text and "ITH-2026-0412" in text
    assert "invented accreditor no. 0000" in text and "[E1]" in text


def _text(data: bytes) -> str:
    import io

    from pypdf import PdfReader

    # Words only: table cells wrap their text over lines.
    return " ".join(
        " ".join(page.extract_text().split()) for page in PdfReader(io.BytesIO(data)).pages
    )
