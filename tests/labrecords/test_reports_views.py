"""Report pages walk anonymous, outsider, other customer, lab staff without the role, the
allowed user, and the wrong HTTP method."""

import datetime
import hashlib

import pytest

from labrecords import clock
from labrecords.models import Evidence, Report, ReportKind, Review
from labrecords.services import reports, reviews
from tests.labrecords.report_fixtures import MOMENT, PASSWORD, finished_lot

pytestmark = pytest.mark.django_db

LATER = MOMENT + datetime.timedelta(hours=3)


@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = str(tmp_path / "media")


def issue_for(cast, customer=None):
    lot = finished_lot(cast, customer=customer)
    with clock.frozen_at(LATER):
        reviews.review_sign(actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev")
        return reports.report_issue(actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev")


@pytest.fixture
def issued(cast):
    own = issue_for(cast)
    other = issue_for(cast, customer=cast.other_org)
    evidence = Evidence(
        kind="photo",
        lot=own.lot,
        file="evidence/00/photo",
        sha256="0" * 64,
        original_name="photo.jpg",
        content_type="image/jpeg",
        size=1,
        uploaded_by=cast.technician,
        uploaded_at=MOMENT,
    )
    evidence.save()
    return own, other, evidence


def record_urls(report: Report, evidence: Evidence) -> list[str]:
    lot, order = report.lot, report.lot.order
    return [
        f"/reports/{report.number}/",
        f"/reports/{report.number}/pdf/",
        f"/lots/{lot.pk}/",
        f"/evidence/{evidence.pk}/download/",
        f"/orders/{order.pk}/results.csv",
        f"/orders/{order.pk}/results.xlsx",
    ]


def lab_urls(report: Report) -> list[str]:
    lot = report.lot
    return [
        f"/lots/{lot.pk}/review/",
        f"/lots/{lot.pk}/report/",
        f"/lots/{lot.pk}/report/draft.pdf",
        f"/reports/{report.number}/amend/",
        f"/reports/{report.number}/reissue/",
    ]


def test_anonymous_users_are_sent_to_sign_in(client, issued):
    own, _, evidence = issued
    for url in ["/reports/", *record_urls(own, evidence), *lab_urls(own)]:
        response = client.get(url)
        assert response.status_code == 302, url
        assert response["Location"].startswith("/login/"), url


def test_an_outsider_gets_404_for_every_report_lot_evidence_and_export_url(client, cast, issued):
    own, other, evidence = issued
    client.force_login(cast.outsider)
    for url in [*record_urls(own, evidence), *record_urls(other, evidence), *lab_urls(own)]:
        assert client.get(url).status_code == 404, url
    listing = client.get("/reports/").content.decode()
    assert own.number not in listing and other.number not in listing


def test_another_customer_gets_404_for_every_url_of_this_customer(client, cast, issued):
    own, other, evidence = issued
    client.force_login(cast.other_customer)
    for url in [*record_urls(own, evidence), *lab_urls(own), *lab_urls(other)]:
        assert client.get(url).status_code == 404, url
    listing = client.get("/reports/").content.decode()
    assert other.number in listing and own.number not in listing


def test_a_customer_sees_and_downloads_its_own_report_exactly_as_issued(client, cast, issued):
    own, _, _ = issued
    client.force_login(cast.customer)
    assert own.number in client.get("/reports/").content.decode()
    page = client.get(f"/reports/{own.number}/").content.decode()
    assert own.sha256 in page and "In force" in page
    assert "Issue an amendment" not in page
    response = client.get(f"/reports/{own.number}/pdf/")
    assert response.status_code == 200
    assert response["Content-Type"] == "application/pdf"
    assert response["Content-Disposition"].startswith("attachment")
    served = b"".join(response.streaming_content)
    assert hashlib.sha256(served).hexdigest() == own.sha256


def test_a_tampered_stored_pdf_is_not_served(client, cast, issued):
    own, _, _ = issued
    with open(own.pdf.path, "ab") as handle:
        handle.write(b"tampered")
    client.force_login(cast.customer)
    response = client.get(f"/reports/{own.number}/pdf/")
    assert response.status_code == 500
    assert b"does not match its recorded SHA-256" in response.content


def test_lab_staff_without_the_role_may_look_but_not_sign(client, cast, issued):
    own, _, _ = issued
    lot = finished_lot(cast)
    client.force_login(cast.technician)
    page = client.get(f"/lots/{lot.pk}/review/")
    assert page.status_code == 200 and b"Sign the review" not in page.content
    assert client.post(f"/lots/{lot.pk}/review/", {"password": PASSWORD}).status_code == 403
    assert client.post(f"/lots/{lot.pk}/report/", {"password": PASSWORD}).status_code == 403
    assert (
        client.post(
            f"/reports/{own.number}/amend/", {"password": PASSWORD, "change_description": "x"}
        ).status_code
        == 403
    )
    assert not Review.objects.filter(lot=lot).exists()


def test_the_wrong_http_method_is_refused(client, cast, issued):
    own, _, _ = issued
    client.force_login(cast.reviewer)
    assert client.post(f"/reports/{own.number}/").status_code == 405
    assert client.post(f"/reports/{own.number}/pdf/").status_code == 405
    assert client.delete(f"/lots/{own.lot.pk}/review/").status_code == 405
    assert client.put(f"/lots/{own.lot.pk}/report/").status_code == 405
    assert client.post(f"/orders/{own.lot.order.pk}/results.csv").status_code == 405


def test_a_reviewer_signs_and_issues_the_password_asked_again_each_time(client, cast):
    lot = finished_lot(cast)
    client.force_login(cast.reviewer)
    url = f"/lots/{lot.pk}/review/"
    # First signing in the session: the user name is asked for too.
    page = client.post(url, {"password": PASSWORD})
    assert page.status_code == 200
    assert "This field is required." in page.content.decode()
    assert 'id="id_username-error"' in page.content.decode()
    page = client.post(url, {"username": "rev", "password": "wrong password"})
    assert reviews.WRONG_CREDENTIALS in page.content.decode()
    assert not Review.objects.filter(lot=lot).exists()
    with clock.frozen_at(LATER):
        response = client.post(url, {"username": "rev", "password": PASSWORD})
    assert response.status_code == 302 and response["Location"] == f"/lots/{lot.pk}/report/"
    # Later signatures in the same session ask for the password only.
    form = client.get(f"/lots/{lot.pk}/report/").content.decode()
    assert 'name="password"' in form and 'name="username"' not in form
    with clock.frozen_at(LATER + datetime.timedelta(minutes=5)):
        response = client.post(f"/lots/{lot.pk}/report/", {"password": PASSWORD})
    report = Report.objects.get(lot=lot)
    assert response["Location"] == f"/reports/{report.number}/"
    # A new session starts over with both.
    client.logout()
    client.force_login(cast.reviewer)
    assert 'name="username"' in client.get(f"/reports/{report.number}/amend/").content.decode()


def test_issue_refused_shows_the_missing_item(client, cast, settings):
    settings.LAB_ADDRESS = ""
    lot = finished_lot(cast)
    client.force_login(cast.quality_manager)
    page = client.get(f"/lots/{lot.pk}/report/").content.decode()
    assert "Missing the lab&#x27;s address (record the lab profile, or set LAB_ADDRESS)." in page
    response = client.post(f"/lots/{lot.pk}/report/", {"username": "qm", "password": PASSWORD})
    assert response.status_code == 200
    assert "Cannot issue the report: missing the lab&#x27;s address" in response.content.decode()
    assert not Report.objects.exists()


def test_an_amendment_and_a_reissue_through_the_pages(client, cast, issued):
    own, _, _ = issued
    client.force_login(cast.reviewer)
    with clock.frozen_at(LATER + datetime.timedelta(days=1)):
        response = client.post(
            f"/reports/{own.number}/amend/",
            {
                "username": "rev",
                "password": PASSWORD,
                "change_description": "The customer's order number was misprinted.",
            },
        )
    amendment = Report.objects.get(kind=ReportKind.AMENDMENT)
    assert response["Location"] == f"/reports/{amendment.number}/"
    assert amendment.number in client.get(f"/reports/{own.number}/").content.decode()
    with clock.frozen_at(LATER + datetime.timedelta(days=2)):
        client.post(
            f"/reports/{own.number}/reissue/",
            {"password": PASSWORD, "change_description": "Complete re-issue."},
        )
    reissue = Report.objects.get(kind=ReportKind.REISSUE)
    page = client.get(f"/reports/{own.number}/").content.decode()
    assert f"Superseded by {reissue.number}" in page and "Issue an amendment" not in page
    # The superseded report stays retrievable, bytes as issued.
    response = client.get(f"/reports/{own.number}/pdf/")
    assert hashlib.sha256(b"".join(response.streaming_content)).hexdigest() == own.sha256


def test_the_preview_is_the_same_content_as_the_pdf(client, cast):
    lot = finished_lot(cast)
    client.force_login(cast.engineer)
    page = client.get(f"/lots/{lot.pk}/report/").content.decode()
    assert "Draft: not reviewed" in page and f"Lot {lot.number} conforms" in page
    draft = client.get(f"/lots/{lot.pk}/report/draft.pdf")
    assert draft.status_code == 200 and draft["Content-Type"] == "application/pdf"


def test_the_report_list_does_not_query_per_row(client, cast, django_assert_max_num_queries):
    for _ in range(3):
        issue_for(cast)
    client.force_login(cast.quality_manager)
    with django_assert_max_num_queries(14):
        page = client.get("/reports/")
    assert page.status_code == 200 and page.content.decode().count("Download") == 3
