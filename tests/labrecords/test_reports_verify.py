"""The public verification page: open without login, confirms number, date and digest only,
rate-limited per client address."""

import datetime

import pytest
from django.core.cache import cache

from labrecords import clock
from labrecords.services import reports, reviews
from labrecords.views.reports import VERIFY_LIMIT
from tests.labrecords.report_fixtures import MOMENT, PASSWORD, finished_lot

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def media_and_cache(settings, tmp_path):
    settings.MEDIA_ROOT = str(tmp_path / "media")
    cache.clear()
    yield
    cache.clear()


@pytest.fixture
def report(cast):
    lot = finished_lot(cast)
    with clock.frozen_at(MOMENT + datetime.timedelta(hours=3)):
        reviews.review_sign(actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev")
        return reports.report_issue(actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev")


def test_the_qr_link_confirms_number_date_and_digest_without_login(client, report):
    assert (
        reports.verify_url(report.verification_code)
        == f"http://testserver/verify/{report.verification_code}/"
    )
    response = client.get(f"/verify/{report.verification_code}/")
    assert response.status_code == 200
    page = response.content.decode()
    assert report.number in page and report.sha256 in page
    assert "2026-10-12 14:00 CEST" in page  # issued 12:00 UTC, shown in the lab's zone


def test_the_page_reveals_nothing_else(client, report):
    page = client.get(f"/verify/{report.verification_code}/").content.decode()
    lot = report.lot
    for secret in (
        lot.number,
        lot.order.number,
        lot.order.customer.name,
        lot.order.customer_order_number,
        lot.spec.part_number,
        report.issued_by.get_full_name(),
        "Reviewed",
        "conforms",
    ):
        assert secret not in page, secret
    assert "Sign out" not in page  # no navigation for anonymous visitors


def test_a_typed_code_in_any_case_and_spacing_is_found(client, report):
    typed = report.verification_code.replace("-", " ").lower()
    response = client.get("/verify/", {"code": typed})
    assert response.status_code == 200 and report.sha256 in response.content.decode()


def test_an_unknown_code_is_404_and_says_only_that(client, report):
    response = client.get("/verify/AAAA-BBBB-CCCC-DDDD/")
    assert response.status_code == 404
    page = response.content.decode()
    assert "No report has this verification code" in page and report.number not in page
    assert client.get("/verify/").status_code == 200  # the empty form


def test_lookups_are_limited_per_client_address(client, report):
    url = f"/verify/{report.verification_code}/"
    for _ in range(VERIFY_LIMIT):
        assert client.get(url, REMOTE_ADDR="192.0.2.10").status_code == 200
    refused = client.get(url, REMOTE_ADDR="192.0.2.10")
    assert refused.status_code == 429
    assert int(refused["Retry-After"]) > 0
    assert report.sha256 not in refused.content.decode()
    # Unknown codes count too: guessing is what the limit is for.
    assert client.get("/verify/AAAA-BBBB-CCCC-DDDD/", REMOTE_ADDR="192.0.2.10").status_code == 429
    # Another address is not affected (192.0.2.0/24 is documentation space, RFC 5737).
    assert client.get(url, REMOTE_ADDR="192.0.2.11").status_code == 200


def test_the_verification_page_refuses_post(client, report):
    assert client.post(f"/verify/{report.verification_code}/").status_code == 405
