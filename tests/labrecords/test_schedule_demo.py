"""The scheduling demo, walked through the test client: promised dates for every planned
demo lot, a chamber timeline, what is late and why, labels for a lot, and a breakdown of
the only salt fog cabinet moving promised dates later."""

import datetime
import io

import pytest
from django.core.cache import cache
from django.core.management import call_command
from django.utils import timezone
from pypdf import PdfReader

from durability.models import Resource
from labrecords import clock
from labrecords.demo import build
from labrecords.demo.schedule import build_demo_schedule
from labrecords.models import CustodyEvent, Lot, TestPlan
from labrecords.roles import Role

pytestmark = pytest.mark.django_db


@pytest.fixture
def demo():
    cache.clear()
    call_command("catalogue_seed", verbosity=0)
    lab = build.build()
    made = build_demo_schedule(lab)
    yield lab, made
    cache.clear()


def test_the_demo_gives_every_planned_lot_a_promised_date(client, demo):
    lab, made = demo
    assert len(made["resources"]) == Resource.objects.count() == 13
    assert CustodyEvent.objects.exists()
    client.force_login(lab.staff[Role.ENGINEER])
    planned = Lot.objects.filter(plans__in=TestPlan.objects.current_released()).distinct()
    assert planned.exists()
    for lot in planned:
        page = client.get(f"/lots/{lot.pk}/")
        assert page.status_code == 200
        promise = page.context["promise"]
        assert promise.promised is not None or promise.note, lot.number
    schedule_page = client.get("/schedule/").content.decode()
    assert "Late lots" in schedule_page and "Why late" in schedule_page
    timeline = client.get("/schedule/timeline/", {"resource": "HUM-1"}).content.decode()
    assert "HUM-1" in timeline and "<svg" in timeline
    # The planned maintenance of HUM-2 shows on its page.
    assert "planned maintenance" in client.get("/resources/HUM-2/").content.decode()


def test_labels_for_a_demo_lot_point_at_its_pieces(client, demo):
    lab, _ = demo
    lot = lab.lots[-1]
    client.force_login(lab.staff[Role.TECHNICIAN])
    pdf = client.get(f"/lots/{lot.pk}/labels.pdf").content
    text = "".join(page.extract_text() for page in PdfReader(io.BytesIO(pdf)).pages)
    for piece in lot.pieces.all():
        assert piece.ident in text
        assert client.get(f"/pieces/{piece.ident}/").status_code == 200


def test_a_broken_salt_fog_cabinet_moves_promised_dates_later_never_earlier(client, demo):
    from labrecords.services.scheduling import lab_schedule

    lab, _ = demo
    now = timezone.now()
    with clock.frozen_at(now):
        before = lab_schedule()
        needs = {s.lot_id for s in before.steps if s.resource == "SF-1"}
        assert needs, "the demo has salt fog work"
        # Broken until a day after the last salt fog run planned now: every run must move.
        last = max(s.end for s in before.steps if s.resource == "SF-1")
        expected_end = timezone.localtime(last + datetime.timedelta(days=1))
        client.force_login(lab.staff[Role.QUALITY_MANAGER])
        response = client.post(
            "/resources/SF-1/broken/",
            {
                "broken-expected_end": expected_end.strftime("%Y-%m-%dT%H:%M"),
                "broken-reason": "salt fog nozzle blocked",
            },
        )
        assert response.status_code == 302
        after = lab_schedule()
    old = {r.lot_id: r.promised for r in before.lots}
    new = {r.lot_id: r.promised for r in after.lots}
    for lot_id in needs:
        assert new[lot_id] >= old[lot_id]
    assert any(new[lot_id] > old[lot_id] for lot_id in needs)
