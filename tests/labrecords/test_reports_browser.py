"""The daily uses, end to end in headless Chromium (Debian's package, driven by Playwright).

Each test signs in through the login page like a person, saves screenshots under
artifacts/screenshots/ (git-ignored) and checks what the records hold afterwards.
Without /usr/bin/chromium these tests skip with the reason; with CI=true they fail instead.
"""

from __future__ import annotations

import datetime
import hashlib
import io
import os
import re
from pathlib import Path

import pytest

from labrecords import clock
from labrecords.models import Evidence, Report, StepResult
from labrecords.services import reports, reviews
from tests.labrecords.bench_support import bench_setup, record, record_through
from tests.labrecords.report_fixtures import MOMENT, PASSWORD, finished_lot

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

CHROMIUM = Path("/usr/bin/chromium")
ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]
SHOTS = Path(__file__).resolve().parents[2] / "artifacts" / "screenshots"
ON_CI = os.environ.get("CI", "").lower() in ("1", "true", "yes")


@pytest.fixture(scope="module")
def browser():
    if not CHROMIUM.exists():
        reason = "Debian's chromium is not installed (apt-get install -y chromium)"
        if ON_CI:
            pytest.fail(f"{reason}: browser tests are required under CI")
        pytest.skip(reason)
    # Playwright's sync API runs an event loop in this thread; the test's own database
    # calls around it are synchronous and safe.
    # Set for these tests only, and taken back after them.
    previous = os.environ.get("DJANGO_ALLOW_ASYNC_UNSAFE")
    os.environ["DJANGO_ALLOW_ASYNC_UNSAFE"] = "true"
    from playwright.sync_api import sync_playwright

    try:
        with sync_playwright() as playwright:
            browser = playwright.chromium.launch(
                executable_path=str(CHROMIUM), args=ARGS, headless=True
            )
            yield browser
            browser.close()
    finally:
        if previous is None:
            os.environ.pop("DJANGO_ALLOW_ASYNC_UNSAFE", None)
        else:
            os.environ["DJANGO_ALLOW_ASYNC_UNSAFE"] = previous


@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = str(tmp_path / "media")


@pytest.fixture
def page(browser, request):
    context = browser.new_context(accept_downloads=True, viewport={"width": 1024, "height": 900})
    page = context.new_page()
    page.set_default_timeout(15_000)
    SHOTS.mkdir(parents=True, exist_ok=True)
    yield page
    context.close()


def shot(page, name: str) -> None:
    path = SHOTS / f"{name}.png"
    page.screenshot(path=str(path), full_page=True)
    assert path.stat().st_size > 0


def sign_in(page, live_server, username: str) -> None:
    page.goto(f"{live_server.url}/login/")
    page.fill("input[name=username]", username)
    page.fill("input[name=password]", PASSWORD)
    page.press("input[name=password]", "Enter")
    page.wait_for_url(re.compile(r".*/$"))


def png_bytes() -> bytes:
    from PIL import Image

    buffer = io.BytesIO()
    Image.new("RGB", (64, 48), (180, 190, 200)).save(buffer, format="PNG")
    return buffer.getvalue()


def test_a_technician_scans_a_piece_and_logs_a_crosshatch_result_with_a_photo(
    page, live_server, cast, tmp_path
):
    bench = bench_setup(cast, callouts="ISO 2409 class 1 max")
    crosshatch = next(step for step in bench.steps if step.kind == "crosshatch")
    record_through(bench, crosshatch.order - 1)
    photo = tmp_path / "crosshatch.png"
    photo.write_bytes(png_bytes())

    sign_in(page, live_server, "tech")
    page.goto(f"{live_server.url}/bench/")
    scan = page.get_by_label(re.compile("type its ID"))
    scan.fill(bench.piece.ident)
    scan.press("Enter")
    page.wait_for_url(re.compile(rf".*/bench/{bench.piece.ident}/{crosshatch.step_key}/"))
    shot(page, "bench-1-crosshatch-form")
    page.select_option("select[name=crosshatch_class]", "0")
    page.check(f"input[name=instruments][value='{bench.microscope.pk}']")
    page.set_input_files("input[name=photos]", str(photo))
    page.get_by_role("button", name="Save the result").click()
    page.wait_for_url(re.compile(r".*/bench/(\?.*)?$"))
    shot(page, "bench-2-saved")
    assert f"Saved {bench.piece.ident} step {crosshatch.order}" in page.content()

    result = StepResult.objects.get(piece=bench.piece, step_key=crosshatch.step_key)
    assert result.recorded_by == cast.technician and result.verdict == "pass"
    assert (
        Evidence.objects.filter(
            piece=bench.piece, step_key=crosshatch.step_key, kind="photo"
        ).count()
        == 1
    )


def test_an_engineer_sees_the_lot_move_in_waiting_work(page, live_server, cast):
    bench = bench_setup(cast, callouts="ISO 2409 class 1 max")
    crosshatch = next(step for step in bench.steps if step.kind == "crosshatch")
    record_through(bench, crosshatch.order - 1)
    lot = bench.plan.lot

    sign_in(page, live_server, "eng")
    page.goto(f"{live_server.url}/waiting/")
    row = page.locator("table.waiting tbody tr", has_text=bench.piece.ident)
    before = row.inner_text()
    shot(page, "waiting-1-before")
    assert lot.number in before and crosshatch.name in before

    record(bench, crosshatch.order, now=datetime.datetime.now(datetime.UTC))
    page.reload()
    after = page.locator("table.waiting tbody tr", has_text=bench.piece.ident).inner_text()
    shot(page, "waiting-2-after")
    following = next(step for step in bench.steps if step.order == crosshatch.order + 1)
    assert crosshatch.name not in after and following.name in after


def test_a_reviewer_signs_the_review_and_issues_the_report(page, live_server, cast):
    lot = finished_lot(cast)
    sign_in(page, live_server, "rev")
    page.goto(f"{live_server.url}/lots/{lot.pk}/review/")
    shot(page, "review-1-results")
    page.fill("input[name=username]", "rev")
    page.fill("input[name=password]", PASSWORD)
    page.get_by_role("button", name="Sign the review").click()
    page.wait_for_url(re.compile(rf".*/lots/{lot.pk}/report/$"))
    shot(page, "review-2-signed")
    assert "Review of lot" in page.content() and "signed" in page.content()
    # The second signature in this session asks for the password only.
    assert page.locator("input[name=username]").count() == 0
    page.fill("input[name=password]", PASSWORD)
    page.get_by_role("button", name="Sign and issue").click()
    page.wait_for_url(re.compile(r".*/reports/R\d\d-\d{4}/$"))
    shot(page, "review-3-issued")
    report = Report.objects.get(lot=lot)
    assert report.number in page.content() and report.sha256 in page.content()
    assert report.review.reviewer == cast.reviewer


def test_the_customer_downloads_its_pdf_and_is_refused_another_customers(page, live_server, cast):
    issued = []
    for customer in (cast.customer_org, cast.other_org):
        lot = finished_lot(cast, customer=customer)
        with clock.frozen_at(MOMENT + datetime.timedelta(hours=3)):
            reviews.review_sign(actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev")
            issued.append(
                reports.report_issue(
                    actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev"
                )
            )
    own, other = issued
    sign_in(page, live_server, "cust")
    page.goto(f"{live_server.url}/reports/")
    shot(page, "customer-1-reports")
    assert own.number in page.content() and other.number not in page.content()
    with page.expect_download() as download_info:
        page.locator("tr", has_text=own.number).get_by_role("link", name="Download").click()
    path = download_info.value.path()
    assert hashlib.sha256(Path(path).read_bytes()).hexdigest() == own.sha256
    assert download_info.value.suggested_filename == f"{own.number}.pdf"
    response = page.goto(f"{live_server.url}/reports/{other.number}/")
    assert response.status == 404
    shot(page, "customer-2-refused")
    response = page.request.get(f"{live_server.url}/reports/{other.number}/pdf/")
    assert response.status == 404
