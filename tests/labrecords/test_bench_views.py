"""Bench pages: each walks anonymous, outsider and other customer (404), a role without the
right (403), the allowed user, and the wrong HTTP method; scanning; two people correcting one
result; photo uploads; query counts."""

import datetime

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.utils import timezone

from labrecords import clock
from labrecords.models import Evidence, StepResult
from tests.factories import LotFactory, OrderFactory
from tests.labrecords.bench_support import bench_setup, record

pytestmark = pytest.mark.django_db

JPEG = b"\xff\xd8\xff\xe0\x00\x10JFIF\x00\x01\x01\x00\x00\x01\x00\x01\x00\x00" + b"\x00" * 200
PNG = b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + b"\x00" * 200


def _now_text(hours_ago: int = 1) -> str:
    moment = timezone.localtime(clock.now()) - datetime.timedelta(hours=hours_ago)
    return moment.strftime("%Y-%m-%dT%H:%M")


def _entry_data(**fields):
    """A bench POST with the defect and spectral row management forms (all rows blank)."""
    data = {
        "observed_at": _now_text(),
        "defect-TOTAL_FORMS": "4", "defect-INITIAL_FORMS": "0",
        "defect-MIN_NUM_FORMS": "0", "defect-MAX_NUM_FORMS": "20",
        "spectral-TOTAL_FORMS": "2", "spectral-INITIAL_FORMS": "0",
        "spectral-MIN_NUM_FORMS": "0", "spectral-MAX_NUM_FORMS": "12",
    }
    for index in range(2):
        data[f"spectral-{index}-quantity"] = "R"
        data[f"spectral-{index}-statistic"] = "average"
    data.update(fields)
    return data


@pytest.fixture
def own(cast):
    """A bench on a lot of the customer's organisation."""
    return bench_setup(cast, lot=LotFactory(order=OrderFactory(customer=cast.customer_org)))


@pytest.fixture
def other(cast):
    return bench_setup(cast, lot=LotFactory(order=OrderFactory(customer=cast.other_org)))


def _step_url(b, order=1):
    return f"/bench/{b.piece.ident}/{b.step(order).step_key}/"


# ---------------------------------------------------------------- who gets in


def test_anonymous_users_are_sent_to_sign_in(client, own):
    result = record(own, 1)
    for url in ("/bench/", _step_url(own, 2), f"/results/{result.record_key}/",
                f"/pieces/{own.piece.ident}/results/", "/nonconformances/", "/instruments/",
                "/consumables/", "/authorisations/"):
        response = client.get(url)
        assert response.status_code == 302, url
        assert response["Location"].startswith("/login/")


def test_an_outsider_gets_404_everywhere(client, cast, own):
    result = record(own, 1)
    client.force_login(cast.outsider)
    for url in ("/bench/", _step_url(own, 2), f"/results/{result.record_key}/",
                f"/pieces/{own.piece.ident}/results/", "/nonconformances/", "/instruments/",
                "/consumables/", "/authorisations/", f"/instruments/{own.microscope.ident}/"):
        assert client.get(url).status_code == 404, url


def test_a_customer_sees_its_own_results_but_no_bench_and_not_anothers(client, cast, own,
                                                                        other):
    mine = record(own, 1)
    theirs = record(other, 1)
    client.force_login(cast.customer)
    assert client.get(f"/results/{mine.record_key}/").status_code == 200
    assert client.get(f"/pieces/{own.piece.ident}/results/").status_code == 200
    assert client.get(f"/results/{theirs.record_key}/").status_code == 404
    assert client.get(f"/pieces/{other.piece.ident}/results/").status_code == 404
    for url in ("/bench/", _step_url(own, 2), "/nonconformances/", "/instruments/"):
        assert client.get(url).status_code == 404, url
    page = client.get(f"/results/{mine.record_key}/").content.decode()
    assert "Correct this result" not in page and "Audit trail" not in page
    assert client.post(f"/results/{mine.record_key}/correct/", {}).status_code == 404


def test_lab_staff_without_a_recording_role_get_403_on_the_bench_form(client, cast, own):
    client.force_login(cast.reviewer)
    assert client.get("/bench/").status_code == 200
    assert client.get(_step_url(own)).status_code == 403
    assert client.post(_step_url(own), _entry_data()).status_code == 403
    assert not StepResult.objects.exists()


def test_the_wrong_http_method_is_refused(client, cast, own):
    result = record(own, 1)
    client.force_login(cast.technician)
    assert client.post("/bench/").status_code == 405
    assert client.put(_step_url(own, 2)).status_code == 405
    assert client.post(f"/results/{result.record_key}/").status_code == 405
    assert client.get(f"/results/{result.record_key}/correct/").status_code == 405
    assert client.post(f"/pieces/{own.piece.ident}/results/").status_code == 405


# ---------------------------------------------------------------- scanning


def test_the_scan_field_has_focus_when_the_page_opens(client, cast):
    client.force_login(cast.technician)
    page = client.get("/bench/").content.decode()
    assert 'name="scan"' in page and "autofocus" in page


def test_a_scanned_id_or_label_url_opens_the_pieces_next_step(client, cast, own):
    client.force_login(cast.technician)
    response = client.get("/bench/", {"scan": own.piece.ident})
    assert response.status_code == 302 and response["Location"] == _step_url(own, 1)
    record(own, 1)
    qr = f"http://lab.example/pieces/{own.piece.ident}/"
    response = client.get("/bench/", {"scan": qr, "lot": own.piece.lot.number})
    assert response.status_code == 302
    assert response["Location"].startswith(_step_url(own, 2))


def test_unknown_pieces_other_lots_and_finished_pieces_get_a_clear_message(client, cast, own,
                                                                            other):
    client.force_login(cast.technician)
    page = client.get("/bench/", {"scan": "NO-SUCH-PIECE"}).content.decode()
    assert "No witness piece NO-SUCH-PIECE is known." in page
    page = client.get("/bench/", {"scan": other.piece.ident,
                                  "lot": own.piece.lot.number}).content.decode()
    assert f"belongs to lot {other.piece.lot.number}, not to lot {own.piece.lot.number}" in page
    for step in own.steps:
        record(own, step.order)
    page = client.get("/bench/", {"scan": own.piece.ident}).content.decode()
    assert f"Piece {own.piece.ident} has no open step" in page


# ---------------------------------------------------------------- recording


def test_a_technician_records_the_open_step_in_one_post(client, cast, own,
                                                        django_assert_max_num_queries):
    client.force_login(cast.technician)
    page = client.get(_step_url(own)).content.decode()
    assert "No defects observed" in page and "MS-T1" in page and "valid through" in page
    from tests.factories import InstrumentFactory

    more = [InstrumentFactory(ident=f"LX-{n}") for n in range(3)]
    data = _entry_data(no_defects="on", lighting="dark field",
                       instruments=[str(i.pk) for i in (own.microscope, *more)])
    # One POST saves everything; the number of queries does not grow with the instruments.
    with django_assert_max_num_queries(70):
        response = client.post(_step_url(own) + "?lot=" + own.piece.lot.number, data)
    assert response.status_code == 302
    assert response["Location"] == f"/bench/?lot={own.piece.lot.number}"
    result = StepResult.objects.get()
    assert result.verdict == "pass" and result.recorded_by == cast.technician
    assert result.instrument_links.count() == 4
    page = client.get(f"/results/{result.record_key}/").content.decode()
    assert "verdict-pass" in page and "MS-T1" in page
    # Opening a recorded step leads to its result page.
    assert client.get(_step_url(own))["Location"] == f"/results/{result.record_key}/"


def test_bad_input_is_shown_next_to_its_field_and_nothing_is_saved(client, cast, own):
    client.force_login(cast.technician)
    data = _entry_data(observed_at="2999-01-01T10:00")
    page = client.post(_step_url(own), data).content.decode()
    assert "When the work was done: When the work was done cannot be in the future." in page
    page = client.post(_step_url(own), _entry_data()).content.decode()
    assert "no defects observed" in page.lower() and "Record the inspection" in page
    assert not StepResult.objects.exists()


def test_a_technician_not_authorised_for_the_method_sees_why_and_cannot_post(client, cast):
    b = bench_setup(cast, authorise=False)
    client.force_login(cast.technician)
    page = client.get(_step_url(b)).content.decode()
    assert "not on the authorisation list" in page and "Save the result" not in page
    response = client.post(_step_url(b), _entry_data(no_defects="on"))
    assert response.status_code == 403
    assert not StepResult.objects.exists()


def test_an_out_of_calibration_instrument_is_refused_at_the_bench_then_recorded_invalid(
        client, cast, own):
    from tests.factories import InstrumentFactory

    lapsed = InstrumentFactory(ident="SP-X1", calibration_due=timezone.localdate(clock.now())
                               - datetime.timedelta(days=12))
    client.force_login(cast.technician)
    data = _entry_data(no_defects="on", instruments=[str(lapsed.pk)])
    page = client.post(_step_url(own), data).content.decode()
    assert "SP-X1 was out of calibration" in page and not StepResult.objects.exists()
    page = client.post(_step_url(own), {**data, "invalid_qm": "qm",
                                        "invalid_qm_password": "wrong",
                                        "invalid_reason": "x"}).content.decode()
    assert "user name or password is wrong" in page and not StepResult.objects.exists()
    response = client.post(_step_url(own), {**data, "invalid_qm": "qm",
                                            "invalid_qm_password": "correct horse battery",
                                            "invalid_reason": "could not wait for SP-02"})
    assert response.status_code == 302
    result = StepResult.objects.get()
    assert result.verdict == "invalid" and result.invalid_authorised_by == cast.quality_manager


# ---------------------------------------------------------------- two people, one result


def test_the_second_of_two_corrections_is_refused_showing_the_current_value(cast, own):
    from django.test import Client

    first = record(own, 1)
    url = f"/results/{first.record_key}/"
    alice, bob = Client(), Client()
    alice.force_login(cast.technician)
    bob.force_login(cast.engineer)
    assert f'name="revision" value="{first.pk}"' in alice.get(url).content.decode()
    assert f'name="revision" value="{first.pk}"' in bob.get(url).content.decode()
    base = _entry_data(observed_at=timezone.localtime(first.observed_at).strftime(
        "%Y-%m-%dT%H:%M"), instruments=[str(own.microscope.pk)], revision=str(first.pk))
    won = alice.post(url + "correct/", {
        **base, "reason": "haze near the edge was missed",
        "defect-0-defect": "haze", "defect-0-zone": "edge"})
    assert won.status_code == 302
    lost = bob.post(url + "correct/", {**base, "no_defects": "on",
                                       "reason": "bob's own reading of the piece"})
    assert lost.status_code == 409
    page = lost.content.decode()
    assert "Someone else corrected this result first: revision 2" in page
    assert "haze" in page  # the current value is shown
    assert "bob&#x27;s own reading of the piece" in page  # bob's entry is kept in the form
    assert StepResult.objects.filter(record_key=first.record_key).count() == 2


def test_a_correction_shows_every_revision_with_the_superseded_one_struck_through(client,
                                                                                cast, own):
    first = record(own, 1)
    client.force_login(cast.technician)
    url = f"/results/{first.record_key}/"
    response = client.post(url + "correct/", _entry_data(
        observed_at=timezone.localtime(first.observed_at).strftime("%Y-%m-%dT%H:%M"),
        no_defects="on", revision=str(first.pk), reason="lighting noted wrongly",
        lighting="bright field", instruments=[str(own.microscope.pk)]))
    assert response.status_code == 302
    page = client.get(url).content.decode()
    assert 'class="superseded"' in page and "(superseded)" in page and "(current)" in page
    assert "lighting noted wrongly" in page
    rows = client.get(f"/pieces/{own.piece.ident}/results/").content.decode()
    assert "(superseded)" in rows and "lighting noted wrongly" in rows


# ---------------------------------------------------------------- photos


def _photo_post(client, b, upload):
    data = _entry_data(no_defects="on", instruments=[str(b.microscope.pk)], photos=upload)
    return client.post(_step_url(b), data)


def test_a_jpeg_photo_is_stored_by_its_sha256_never_by_its_name(client, cast, own, settings,
                                                                 tmp_path):
    settings.MEDIA_ROOT = tmp_path
    client.force_login(cast.technician)
    upload = SimpleUploadedFile("../../etc/evil name.jpg", JPEG, content_type="image/png")
    assert _photo_post(client, own, upload).status_code == 302
    photo = Evidence.objects.get(kind="photo")
    assert photo.content_type == "image/jpeg"  # from the bytes, not the client's header
    assert photo.file.name == f"evidence/{photo.sha256[:2]}/{photo.sha256}"
    assert (tmp_path / photo.file.name).read_bytes() == JPEG
    assert "evil" not in photo.file.name and ".." not in photo.file.name
    assert photo.step_key == own.step(1).step_key and photo.piece == own.piece


def test_a_png_renamed_jpg_and_a_non_image_are_refused(client, cast, own, settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path
    client.force_login(cast.technician)
    page = _photo_post(client, own, SimpleUploadedFile("piece.jpg", PNG)).content.decode()
    assert "piece.jpg: the content is a PNG image but the name says JPEG" in page
    page = _photo_post(client, own, SimpleUploadedFile(
        "piece.jpg", b"<html><script>alert(1)</script></html>")).content.decode()
    assert "piece.jpg: the content is not a JPEG or PNG image" in page
    assert not StepResult.objects.exists() and not Evidence.objects.exists()
    assert not any(tmp_path.rglob("*.*"))


def test_an_oversize_photo_is_refused(client, cast, own, settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path
    settings.EVIDENCE_MAX_BYTES = 100
    client.force_login(cast.technician)
    page = _photo_post(client, own, SimpleUploadedFile("big.jpg", JPEG)).content.decode()
    assert "big.jpg: The file is" in page and "at most 100 bytes" in page
    assert not StepResult.objects.exists() and not Evidence.objects.exists()


# ---------------------------------------------------------------- query counts


def test_the_piece_results_page_does_not_query_per_revision(client, cast, own,
                                                            django_assert_max_num_queries):
    for step in own.steps:
        record(own, step.order)
    client.force_login(cast.technician)
    with django_assert_max_num_queries(20):
        assert client.get(f"/pieces/{own.piece.ident}/results/").status_code == 200


def test_a_chamber_step_records_its_run_from_the_form(client, cast, own):
    from labrecords.models import ChamberRun

    record(own, 1, now=clock.now(), observed_at=clock.now() - datetime.timedelta(hours=30))
    record(own, 2, now=clock.now(), observed_at=clock.now() - datetime.timedelta(hours=29))
    client.force_login(cast.technician)
    page = client.get(_step_url(own, 3)).content.decode()
    assert "49 ± 2 °C, 95–100 % RH, 24 h" in page and "Hot chamber" in page
    data = _entry_data(
        no_defects="on", instruments=[str(own.microscope.pk)], run_chamber=str(own.chamber.pk),
        run_loaded_at=_now_text(28), run_unloaded_at=_now_text(2))
    response = client.post(_step_url(own, 3), data)
    assert response.status_code == 302, response.content.decode()[-3000:]
    run = ChamberRun.objects.get()
    assert run.chamber == own.chamber and run.pieces.get().piece == own.piece
    assert StepResult.objects.get(step_key=own.step(3).step_key).chamber_run == run
    # The next bench (a correction) offers the run that held the piece.
    result = StepResult.objects.get(step_key=own.step(3).step_key)
    assert run.ident in client.get(f"/results/{result.record_key}/").content.decode()


def test_a_new_run_must_end_after_it_starts_shown_by_the_field(client, cast, own):
    record(own, 1, now=clock.now(), observed_at=clock.now() - datetime.timedelta(hours=30))
    record(own, 2, now=clock.now(), observed_at=clock.now() - datetime.timedelta(hours=29))
    client.force_login(cast.technician)
    data = _entry_data(
        no_defects="on", instruments=[str(own.microscope.pk)], run_chamber=str(own.chamber.pk),
        run_loaded_at=_now_text(3), run_unloaded_at=_now_text(4))
    page = client.post(_step_url(own, 3), data).content.decode()
    assert "Unloaded at: The run must end after it starts." in page


@pytest.mark.parametrize(("scanned", "ident"), [
    ("L26-0001-W01", "L26-0001-W01"),
    ("  L26-0001-W01\n", "L26-0001-W01"),
    ("http://host/pieces/L26-0001-W01/", "L26-0001-W01"),
    ("https://lab.example:8443/pieces/L26-0001-W01", "L26-0001-W01"),
    ("/pieces/L26%2D0001-W01/", "L26-0001-W01"),
])
def test_a_scan_is_read_as_a_piece_id(scanned, ident):
    from labrecords.selectors_bench import piece_ident_from_scan

    assert piece_ident_from_scan(scanned) == ident
