"""Chamber run pages: anonymous, outsider, other customer, role, allowed user, wrong method."""

from __future__ import annotations

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from labrecords import clock
from labrecords.models import ChamberRun, ChamberRunPiece, Evidence, ExposureCheck
from labrecords.selectors_chambers import condition_of
from labrecords.services import chambers
from tests.labrecords.evidence_helpers import (
    HUMIDITY_LOG,
    LOADED,
    NOW,
    UNLOADED,
    berlin,
    chamber_instruments,
    finish_until,
    plan_lot,
    sequence_steps,
)

pytestmark = pytest.mark.django_db



@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path / "media"
    return settings.MEDIA_ROOT


@pytest.fixture(autouse=True)
def frozen():
    with clock.frozen_at(NOW):
        yield


@pytest.fixture
def setup(cast):
    own = plan_lot(customer=cast.customer_org)
    other = plan_lot(customer=cast.other_org)
    pieces = []
    for plan in (own, other):
        piece = plan.assignments.get().piece
        finish_until(plan, piece, "humidity", berlin(2025, 6, 9, 10))
        pieces.append(piece)
    step = next(s for s in sequence_steps(own, pieces[0]) if s.kind == "humidity")
    chamber, logger = chamber_instruments()
    return {"pieces": pieces, "step": step, "chamber": chamber, "logger": logger}


@pytest.fixture
def run(cast, setup):
    """A run holding one piece of each customer, unloaded, with its log checked."""
    run = chambers.chamber_run_create(
        actor=cast.technician,
        chamber=setup["chamber"],
        logger=setup["logger"],
        method_version=setup["step"].method_version,
        condition=condition_of(setup["step"].parameters),
        loaded_at=LOADED,
        pieces=setup["pieces"],
    )
    chambers.chamber_run_unload(actor=cast.technician, run=run, unloaded_at=UNLOADED)
    chambers.chamber_log_upload(
        actor=cast.technician, run=run, data=HUMIDITY_LOG, original_name="log.csv"
    )
    return run


def test_anonymous_users_are_sent_to_sign_in(client, run):
    for url in (
        "/chambers/",
        "/chambers/new/",
        f"/chambers/{run.pk}/",
        f"/chambers/{run.pk}/log/",
        f"/evidence/{run.evidence.get().pk}/download/",
    ):
        response = client.get(url)
        assert response.status_code == 302 and response["Location"].startswith("/login/")


def test_outsiders_get_404_everywhere(client, cast, run):
    client.force_login(cast.outsider)
    evidence = run.evidence.get()
    for url in (
        "/chambers/",
        "/chambers/new/",
        f"/chambers/{run.pk}/",
        f"/chambers/{run.pk}/log/",
        f"/chambers/{run.pk}/recheck/",
        f"/evidence/{evidence.pk}/download/",
    ):
        assert client.get(url).status_code == 404, url
    assert client.post(f"/chambers/{run.pk}/unload/").status_code == 404


def test_a_customer_sees_only_its_own_pieces_of_a_shared_run(client, cast, setup, run):
    own, other = setup["pieces"]
    client.force_login(cast.customer)
    page = client.get(f"/chambers/{run.pk}/").content.decode()
    assert own.ident in page and other.ident not in page
    assert cast.other_org.name not in page
    assert "The exposure counts" in page
    client.force_login(cast.other_customer)
    page = client.get(f"/chambers/{run.pk}/").content.decode()
    assert other.ident in page and own.ident not in page


def test_a_customer_without_a_piece_in_the_run_gets_404(client, cast, setup):
    lone = chambers.chamber_run_create(
        actor=cast.technician,
        chamber=setup["chamber"],
        method_version=setup["step"].method_version,
        condition=condition_of(setup["step"].parameters),
        loaded_at=LOADED,
        pieces=[setup["pieces"][1]],
    )
    client.force_login(cast.customer)
    assert client.get(f"/chambers/{lone.pk}/").status_code == 404
    client.force_login(cast.other_customer)
    assert client.get(f"/chambers/{lone.pk}/").status_code == 200


def test_customers_may_not_open_the_lab_pages_of_a_run(client, cast, run):
    client.force_login(cast.customer)
    for url in ("/chambers/", "/chambers/new/", f"/chambers/{run.pk}/log/"):
        assert client.get(url).status_code == 404, url


def test_the_run_page_shows_the_check_excursions_plot_and_cautions(client, cast, run):
    client.force_login(cast.reviewer)
    page = client.get(f"/chambers/{run.pk}/").content.decode()
    assert "The exposure counts" in page
    assert "linear interpolation between readings" in page
    assert page.count("<svg") == 2 and "Relative humidity (corrected)" in page
    assert "humidity low" in page and "no data" in page
    assert "Hot chamber" in page  # durability.safety caution for the hot_chamber hazard
    assert "Dew point at the set point" in page


def test_a_reviewer_may_look_but_not_act(client, cast, run):
    client.force_login(cast.reviewer)
    assert client.get("/chambers/").status_code == 200
    assert client.get("/chambers/new/").status_code == 403
    assert client.get(f"/chambers/{run.pk}/log/").status_code == 403
    assert (
        client.post(f"/chambers/{run.pk}/unload/", {"unloaded_at": "2025-06-11T10:00"}).status_code
        == 403
    )


def test_a_technician_loads_a_run_from_the_waiting_groups(client, cast, setup):
    client.force_login(cast.technician)
    groups = client.get("/chambers/new/").content.decode()
    assert "49 ± 2 °C, 95–100 % RH, 24 h" in groups
    key = f"humidity|{condition_of(setup['step'].parameters)}"
    form = client.get("/chambers/new/", {"group": key})
    assert form.status_code == 200 and "Hot chamber" in form.content.decode()
    response = client.post(
        "/chambers/new/",
        {
            "group": key,
            "chamber": setup["chamber"].pk,
            "logger": setup["logger"].pk,
            "method_version": setup["step"].method_version.pk,
            "loaded_at": "2025-06-10T08:00",
            "pieces": [p.pk for p in setup["pieces"]],
        },
    )
    run = ChamberRun.objects.get()
    assert response.status_code == 302 and response["Location"] == f"/chambers/{run.pk}/"
    assert run.loaded_at == LOADED and run.pieces.count() == 2


def test_a_bad_loading_time_is_shown_next_to_the_field(client, cast, setup):
    client.force_login(cast.technician)
    key = f"humidity|{condition_of(setup['step'].parameters)}"
    response = client.post(
        "/chambers/new/",
        {
            "group": key,
            "chamber": setup["chamber"].pk,
            "method_version": setup["step"].method_version.pk,
            "loaded_at": "2025-06-13T08:00",
            "pieces": [setup["pieces"][0].pk],
        },
    )
    assert response.status_code == 200
    assert response.context["form"].errors["loaded_at"] == ["This time is in the future."]
    assert not ChamberRun.objects.exists()


def test_unloading_and_uploading_through_the_pages(client, cast, setup):
    run = chambers.chamber_run_create(
        actor=cast.technician,
        chamber=setup["chamber"],
        logger=setup["logger"],
        method_version=setup["step"].method_version,
        condition=condition_of(setup["step"].parameters),
        loaded_at=LOADED,
        pieces=setup["pieces"],
    )
    client.force_login(cast.technician)
    response = client.post(f"/chambers/{run.pk}/unload/", {"unloaded_at": "2025-06-11T09:50"})
    assert response.status_code == 302
    run.refresh_from_db()
    assert run.unloaded_at == UNLOADED
    upload = SimpleUploadedFile("../../etc/passwd.csv", HUMIDITY_LOG, content_type="text/html")
    response = client.post(
        f"/chambers/{run.pk}/log/",
        {
            "file": upload,
            "time_zone": "Europe/Berlin",
            "date_order": "",
            "interpolation": "hold",
            "duration_rule": "cumulative",
            "temperature_offset_k": "0",
            "rh_offset_percent": "0",
        },
    )
    assert response.status_code == 302
    check = ExposureCheck.objects.get()
    assert check.convention == "hold" and check.counts
    assert check.evidence.original_name == "passwd.csv"
    assert check.evidence.content_type == "text/csv"


def test_a_malformed_upload_shows_the_line_and_stores_nothing(client, cast, setup, media):
    run = chambers.chamber_run_create(
        actor=cast.technician,
        chamber=setup["chamber"],
        method_version=setup["step"].method_version,
        condition=condition_of(setup["step"].parameters),
        loaded_at=LOADED,
        pieces=setup["pieces"],
    )
    client.force_login(cast.engineer)
    lines = HUMIDITY_LOG.decode().split("\n")
    line = 26  # 2025-06-10T12:00:00: its temperature cell becomes text
    lines[line - 1] = lines[line - 1].replace(",48.6,", ",4q.6,")
    bad = "\n".join(lines).encode()
    response = client.post(
        f"/chambers/{run.pk}/log/",
        {
            "file": SimpleUploadedFile("bad.csv", bad),
            "time_zone": "Europe/Berlin",
            "interpolation": "interpolated",
            "duration_rule": "cumulative",
            "temperature_offset_k": "0",
            "rh_offset_percent": "0",
        },
    )
    assert response.status_code == 200
    assert f"line {line}" in response.context["form"].errors["file"][0]
    assert Evidence.objects.count() == 0 and ExposureCheck.objects.count() == 0
    assert not (media / "evidence").exists()


def test_an_upload_above_the_size_limit_is_refused(client, cast, setup, settings):
    settings.EVIDENCE_MAX_BYTES = 1000
    run = chambers.chamber_run_create(
        actor=cast.technician,
        chamber=setup["chamber"],
        method_version=setup["step"].method_version,
        condition=condition_of(setup["step"].parameters),
        loaded_at=LOADED,
        pieces=setup["pieces"],
    )
    client.force_login(cast.technician)
    response = client.post(
        f"/chambers/{run.pk}/log/",
        {
            "file": SimpleUploadedFile("big.csv", HUMIDITY_LOG),
            "time_zone": "Europe/Berlin",
            "interpolation": "interpolated",
            "duration_rule": "cumulative",
            "temperature_offset_k": "0",
            "rh_offset_percent": "0",
        },
    )
    assert response.status_code == 200
    assert "at most 1000 bytes" in response.context["form"].errors["file"][0]
    assert Evidence.objects.count() == 0


def test_a_recheck_with_a_reason_makes_the_latest_check(client, cast, run):
    client.force_login(cast.technician)
    evidence = run.evidence.get()
    response = client.post(
        f"/chambers/{run.pk}/recheck/",
        {
            "evidence": evidence.pk,
            "reason": "the method requires a continuous exposure",
            "time_zone": "Europe/Berlin",
            "interpolation": "interpolated",
            "duration_rule": "continuous",
            "temperature_offset_k": "0",
            "rh_offset_percent": "0",
        },
    )
    assert response.status_code == 302
    latest = ExposureCheck.objects.order_by("-checked_at", "-id").first()
    assert latest.counts is False and ExposureCheck.objects.count() == 2
    page = client.get(f"/chambers/{run.pk}/").content.decode()
    assert "does not count" in page and "Earlier checks" in page


def test_the_log_download_is_an_attachment_with_nosniff(client, cast, run):
    evidence = run.evidence.get()
    client.force_login(cast.customer)
    response = client.get(f"/evidence/{evidence.pk}/download/")
    assert response.status_code == 200
    assert response["Content-Disposition"].startswith("attachment")
    assert response["X-Content-Type-Options"] == "nosniff"
    assert b"".join(response.streaming_content) == HUMIDITY_LOG


def test_the_pages_refuse_the_wrong_method(client, cast, run):
    client.force_login(cast.technician)
    assert client.post(f"/chambers/{run.pk}/").status_code == 405
    assert client.get(f"/chambers/{run.pk}/unload/").status_code == 405
    assert client.post("/chambers/").status_code == 405
    assert client.post(f"/evidence/{run.evidence.get().pk}/download/").status_code == 405


def test_the_run_list_does_not_query_per_row(client, cast, setup, django_assert_max_num_queries):
    # Rows made directly: the list is under test, not the loading rules.
    for hour in range(8):
        run = ChamberRun.objects.create(
            ident=f"HC-T1-250610-{8 + hour:02d}00",
            chamber=setup["chamber"],
            method_version=setup["step"].method_version,
            condition="49 ± 2 °C",
            loaded_at=berlin(2025, 6, 10, 8 + hour),
            loaded_by=cast.technician,
        )
        ChamberRunPiece.objects.create(
            run=run, piece=setup["pieces"][hour % 2], step_key=setup["step"].step_key
        )
    client.force_login(cast.engineer)
    with django_assert_max_num_queries(10):
        page = client.get("/chambers/")
    assert page.status_code == 200 and page.content.decode().count("HC-T1-2506") == 8
