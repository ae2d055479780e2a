"""Quality pages: nonconformances, authorisations, instruments, consumables. Each walks
anonymous, outsider and customer (404), a role without the right (403), the allowed user,
the wrong HTTP method, and the number of queries of its list."""

import datetime

import pytest
from django.utils import timezone

from labrecords import clock
from labrecords.models import (
    Consumable,
    ConsumableCheck,
    InstrumentDeviation,
    MethodAuthorisation,
    Nonconformance,
)
from labrecords.services import consumables, nonconformances
from labrecords.services.bench import InspectionEntry, ResultValues
from tests.factories import InstrumentFactory, LotFactory, WitnessPieceFactory
from tests.labrecords.bench_support import bench_setup, record, record_through

pytestmark = pytest.mark.django_db


@pytest.fixture
def failed(cast):
    b = bench_setup(cast)
    record_through(b, 2)
    result = record(b, 3, values=ResultValues(inspection=InspectionEntry(
        no_defects=False, defects=({"defect": "cracking", "zone": "rim"},))))
    return b, result, Nonconformance.objects.get(result=result)


@pytest.fixture
def solution(cast):
    with clock.frozen_at(timezone.now()):
        return consumables.consumable_register(
            actor=cast.technician, kind="salt_solution", name="NaCl 5 %", supplier_lot="S-77",
            expiry=timezone.localdate() + datetime.timedelta(days=20),
            received_on=timezone.localdate())


def test_anonymous_outsiders_and_customers_do_not_see_quality_pages(client, cast, failed,
                                                                    solution):
    b, _, nc = failed
    urls = ("/nonconformances/", f"/nonconformances/{nc.number}/", "/authorisations/",
            "/instruments/", f"/instruments/{b.microscope.ident}/", "/consumables/",
            f"/consumables/{solution.pk}/")
    for url in urls:
        assert client.get(url)["Location"].startswith("/login/"), url
    for user in (cast.outsider, cast.customer, cast.other_customer):
        client.force_login(user)
        for url in urls:
            assert client.get(url).status_code == 404, (user, url)
        assert client.post(f"/nonconformances/{nc.number}/disposition/",
                           {"disposition": "reject_lot"}).status_code == 404
    assert Nonconformance.objects.get().disposition == ""


def test_the_wrong_http_method_is_refused(client, cast, failed, solution):
    b, _, nc = failed
    client.force_login(cast.quality_manager)
    assert client.get(f"/nonconformances/{nc.number}/disposition/").status_code == 405
    assert client.get(f"/instruments/{b.microscope.ident}/deviation/").status_code == 405
    assert client.post(f"/instruments/{b.microscope.ident}/").status_code == 405
    assert client.get(f"/consumables/{solution.pk}/checks/").status_code == 405
    grant = MethodAuthorisation.objects.first()
    assert client.get(f"/authorisations/{grant.pk}/revoke/").status_code == 405
    assert client.put("/consumables/").status_code == 405
    assert client.post("/nonconformances/").status_code == 405


# ---------------------------------------------------------------- nonconformances


def test_the_list_shows_open_nonconformances_first(client, cast, failed):
    _, _, nc = failed
    client.force_login(cast.technician)
    page = client.get("/nonconformances/").content.decode()
    assert nc.number in page and "coating failed" in page
    with clock.frozen_at(timezone.now()):
        nonconformances.nonconformance_dispose(actor=cast.quality_manager, nonconformance=nc,
                                               disposition="reject_lot", note="cracked")
    assert nc.number not in client.get("/nonconformances/").content.decode()
    assert nc.number in client.get("/nonconformances/", {"state": "disposed"}).content.decode()


def test_only_the_quality_manager_records_a_disposition(client, cast, failed):
    _, _, nc = failed
    url = f"/nonconformances/{nc.number}/disposition/"
    client.force_login(cast.technician)
    assert "Record the disposition" not in client.get(
        f"/nonconformances/{nc.number}/").content.decode()
    assert client.post(url, {"disposition": "reject_lot", "disposition_note": "x"}
                       ).status_code == 403
    client.force_login(cast.quality_manager)
    page = client.post(url, {"disposition": "concession"}).content.decode()
    assert "Customer&#x27;s agreement reference (concession): A concession needs" in page
    assert Nonconformance.objects.get().disposition == ""
    response = client.post(url, {"disposition": "concession",
                                 "customer_agreement_ref": "letter CA-2026-14"})
    assert response.status_code == 302
    nc.refresh_from_db()
    assert nc.disposition == "concession" and nc.disposed_by == cast.quality_manager


def test_a_retest_from_the_page_releases_the_retest_steps(client, cast, failed):
    b, result, nc = failed
    WitnessPieceFactory(lot=b.piece.lot, ident="RETEST-W01")
    client.force_login(cast.quality_manager)
    response = client.post(f"/nonconformances/{nc.number}/disposition/",
                           {"disposition": "retest"}, follow=True)
    page = response.content.decode()
    assert "is released with the retest on RETEST-W01" in page
    client.force_login(cast.technician)
    scan = client.get("/bench/", {"scan": "RETEST-W01"})
    assert scan.status_code == 302


def test_the_nonconformance_list_does_not_query_per_row(client, cast, failed,
                                                        django_assert_max_num_queries):
    b, _, _ = failed
    with clock.frozen_at(timezone.now()):
        for n in range(15):
            nonconformances.nonconformance_open(actor=cast.quality_manager, kind="equipment",
                                                lot=LotFactory(), description=f"entry {n}")
    client.force_login(cast.quality_manager)
    with django_assert_max_num_queries(12):
        assert client.get("/nonconformances/").status_code == 200


# ---------------------------------------------------------------- authorisations


def test_the_quality_manager_grants_and_revokes_on_the_authorisation_page(client, cast):
    b = bench_setup(cast, authorise=False)
    method = b.step(1).method_version.method
    client.force_login(cast.technician)
    assert client.post("/authorisations/", {"user": cast.technician.pk,
                                            "method": method.pk}).status_code == 403
    client.force_login(cast.quality_manager)
    response = client.post("/authorisations/", {"user": cast.technician.pk, "method": method.pk,
                                                "reason": "trained 2026-10"})
    assert response.status_code == 302
    grant = MethodAuthorisation.objects.get()
    listing = client.get("/authorisations/").content.decode()
    assert f'action="/authorisations/{grant.pk}/revoke/"' in listing
    assert 'name="csrfmiddlewaretoken" value=""' not in listing
    page = client.post("/authorisations/", {"user": cast.technician.pk,
                                            "method": method.pk}).content.decode()
    assert "already authorised" in page
    client.force_login(cast.reviewer)
    assert client.post(f"/authorisations/{grant.pk}/revoke/",
                       {"reason": "x"}).status_code == 403
    client.force_login(cast.quality_manager)
    client.post(f"/authorisations/{grant.pk}/revoke/", {"reason": "moved to another team"})
    grant.refresh_from_db()
    assert grant.revoked_by == cast.quality_manager


def test_the_authorisation_list_does_not_query_per_row(client, cast,
                                                       django_assert_max_num_queries):
    bench_setup(cast)  # authorises two people for every method of the plan
    assert MethodAuthorisation.objects.count() >= 8
    client.force_login(cast.technician)
    with django_assert_max_num_queries(12):
        page = client.get("/authorisations/")
    assert page.status_code == 200 and "Why revoked" not in page.content.decode()


# ---------------------------------------------------------------- instruments


def test_the_instrument_list_shows_the_calibration_status(client, cast,
                                                          django_assert_max_num_queries):
    today = timezone.localdate()
    InstrumentFactory(ident="OK-1", calibration_due=today + datetime.timedelta(days=90))
    InstrumentFactory(ident="SOON-1", calibration_due=today)
    InstrumentFactory(ident="LATE-1", calibration_due=today - datetime.timedelta(days=1))
    for n in range(10):
        InstrumentFactory(ident=f"MORE-{n}")
    client.force_login(cast.technician)
    with django_assert_max_num_queries(10):
        page = client.get("/instruments/").content.decode()
    assert f"valid through {today + datetime.timedelta(days=90)}" in page
    assert "calibration-due_soon" in page and "today is the last valid day" in page
    assert f"out of calibration since {today}" in page
    only_late = client.get("/instruments/", {"status": "out_of_calibration"}).content.decode()
    assert "LATE-1" in only_late and "OK-1" not in only_late


def test_only_the_quality_manager_records_a_deviation_and_sees_what_it_affects(client, cast):
    b = bench_setup(cast)
    used = record(b, 1, observed_at=timezone.now() - datetime.timedelta(days=1),
                  now=timezone.now())
    url = f"/instruments/{b.microscope.ident}/deviation/"
    data = {"since": (timezone.localdate() - datetime.timedelta(days=2)).isoformat(),
            "description": "reticle loose", "take_out_of_service": "on"}
    client.force_login(cast.technician)
    assert client.post(url, data).status_code == 403
    assert not InstrumentDeviation.objects.exists()
    client.force_login(cast.quality_manager)
    response = client.post(url, data, follow=True)
    page = response.content.decode()
    assert "1 result(s) and 0 issued report(s) depend on it; 1 nonconformance(s) opened" in page
    assert f"/results/{used.record_key}/" in page
    assert Nonconformance.objects.get(kind="equipment").result == used


# ---------------------------------------------------------------- consumables


def test_technicians_register_consumables_and_errors_show_by_the_field(client, cast,
                                                                       solution):
    data = {"kind": "tape", "name": "Cellophane tape", "supplier_lot": "T-55",
            "received_on": timezone.localdate().isoformat(),
            "expiry": (timezone.localdate() + datetime.timedelta(days=90)).isoformat()}
    client.force_login(cast.reviewer)
    assert client.post("/consumables/", data).status_code == 403
    client.force_login(cast.technician)
    response = client.post("/consumables/", data)
    assert response.status_code == 302
    page = client.post("/consumables/", {**data, "expiry": "2000-01-01"}).content.decode()
    assert "Usable through: The expiry date is before the date received." in page
    assert Consumable.objects.filter(supplier_lot="T-55").count() == 1


def test_a_salt_fog_check_is_recorded_against_the_limits(client, cast, solution):
    client.force_login(cast.technician)
    response = client.post(f"/consumables/{solution.pk}/checks/",
                           {"quantity": "ph", "value": "7.4"}, follow=True)
    page = response.content.decode()
    # MIL-STD-810 method 509: pH 6.5-7.2 (test-methods.md [pub]).
    assert "OUTSIDE 6.5" in page and "verdict-fail" in page
    assert ConsumableCheck.objects.get().within_limits is False
    client.force_login(cast.reviewer)
    assert client.post(f"/consumables/{solution.pk}/checks/",
                       {"quantity": "ph", "value": "7"}).status_code == 403


def test_the_consumable_list_does_not_query_per_row(client, cast,
                                                    django_assert_max_num_queries):
    with clock.frozen_at(timezone.now()):
        for n in range(12):
            consumables.consumable_register(
                actor=cast.technician, kind="cheesecloth", name="Cheesecloth pad",
                supplier_lot=f"CC-{n}",
                received_on=timezone.localdate() - datetime.timedelta(days=30),
                expiry=timezone.localdate() + datetime.timedelta(days=n - 3))
    client.force_login(cast.technician)
    with django_assert_max_num_queries(10):
        page = client.get("/consumables/").content.decode()
    assert "expired" in page and "usable" in page
