"""Schedule, timeline, resources and lab calendar pages: who sees what, who may change
what, and what the pages say."""

import datetime

import pytest
from django.core.cache import cache

from durability.models import LabHoliday, LabHours, ResourceBlock
from labrecords import clock
from labrecords.services import resources as resource_services
from tests.factories import LotFactory, OrderFactory, released_plan
from tests.labrecords.test_schedule import MONDAY, SALT_FOG_CALLOUTS, at

pytestmark = pytest.mark.django_db

PAGES = ("/schedule/", "/schedule/timeline/", "/resources/", "/resources/SF-1/", "/calendar/")


@pytest.fixture(autouse=True)
def _empty_cache():
    cache.clear()
    yield
    cache.clear()


@pytest.fixture
def lab(cast):
    qm = cast.quality_manager
    with clock.frozen_at(MONDAY - datetime.timedelta(days=30)):
        resource_services.resource_create(
            actor=qm,
            ident="SF-1",
            name="Salt fog cabinet",
            calendar="always",
            kinds=["salt_fog"],
            capacity=4,
        )
        resource_services.resource_create(
            actor=qm,
            ident="HUM-1",
            name="Humidity chamber",
            calendar="always",
            kinds=["humidity"],
            capacity=4,
        )
        for ident, kinds in (
            ("INSP-1", ["inspection"]),
            ("SPEC-1", ["spectral_measurement"]),
            ("TAPE-1", ["adhesion", "crosshatch"]),
            ("ABR-1", ["moderate_abrasion", "severe_abrasion"]),
        ):
            resource_services.resource_create(
                actor=qm,
                ident=ident,
                name=f"{ident} station",
                calendar="lab_hours",
                kinds=kinds,
                capacity=1,
            )
    own = released_plan(
        lot=LotFactory(
            order=OrderFactory(customer=cast.customer_org, due_date=datetime.date(2026, 11, 2))
        ),
        callouts=SALT_FOG_CALLOUTS,
    )
    other = released_plan(
        lot=LotFactory(
            order=OrderFactory(customer=cast.other_org, due_date=datetime.date(2026, 11, 20))
        ),
        callouts="MIL-C-48497A",
        engineer=own.created_by,
    )
    return own.lot, other.lot


def test_anonymous_users_are_sent_to_sign_in(client, lab):
    for url in PAGES:
        response = client.get(url)
        assert response.status_code == 302 and response["Location"].startswith("/login/"), url


def test_customers_and_outsiders_get_404(client, cast, lab):
    for user in (cast.customer, cast.other_customer, cast.outsider):
        client.force_login(user)
        for url in PAGES:
            assert client.get(url).status_code == 404, (user, url)


def test_lab_staff_see_late_lots_with_the_reason_and_the_quality_ratio(client, cast, lab):
    own, other = lab
    client.force_login(cast.engineer)
    with clock.frozen_at(MONDAY):
        page = client.get("/schedule/").content.decode()
    assert "Late lots" in page and own.number in page and other.number in page
    # Due Mon 2026-11-02 end of day; the salt fog chain cannot end that day.
    assert "its chain of steps with waits needs" in page
    assert "makespan / lower bound" in page
    # The salt fog and humidity steps bring their safety cautions.
    assert "Safety cautions" in page


def test_the_timeline_is_an_accessible_svg_with_a_table(client, cast, lab):
    client.force_login(cast.technician)
    with clock.frozen_at(MONDAY):
        response = client.get("/schedule/timeline/", {"days": 3})
    page = response.content.decode()
    assert response.status_code == 200
    assert 'role="img"' in page and '<title id="timeline-title">' in page
    assert '<desc id="timeline-desc">' in page and "url(#hatch)" not in page.split("<defs>")[0]
    assert "Timeline as a table" in page and "<caption>" in page
    assert "SF-1" in page and "now</text>" in page
    # Lab hours: Mon, Tue, Wed 08:00-17:00 shaded, one band each.
    assert page.count('fill="#e6f0f5"') == 3
    with clock.frozen_at(MONDAY):
        one = client.get("/schedule/timeline/", {"resource": "SF-1"}).content.decode()
    assert '<caption><a href="/resources/SF-1/">SF-1</a>' in one
    assert "/resources/HUM-1/" not in one.split("Timeline as a table")[1]


def test_a_blocked_period_is_hatched_on_the_timeline(client, cast, lab):
    with clock.frozen_at(MONDAY):
        resource_services.resource_block_create(
            actor=cast.quality_manager,
            resource=lab_resource("SF-1"),
            starts_at=at(2026, 11, 3, 8),
            ends_at=at(2026, 11, 3, 17),
            reason="calibration",
        )
        client.force_login(cast.engineer)
        page = client.get("/schedule/timeline/").content.decode()
    assert 'fill="url(#hatch)"' in page and "Blocked: calibration" in page


def lab_resource(ident):
    from durability.models import Resource

    return Resource.objects.get(ident=ident)


def test_marking_a_chamber_broken_through_the_page_moves_promised_dates_later(client, cast, lab):
    own, _ = lab
    client.force_login(cast.engineer)
    with clock.frozen_at(MONDAY):
        before = client.get(f"/lots/{own.pk}/").context["promise"].promised
        client.force_login(cast.quality_manager)
        response = client.post(
            "/resources/SF-1/broken/",
            {"broken-expected_end": "2026-11-06T12:00", "broken-reason": "heater failed"},
        )
        assert response.status_code == 302
        client.force_login(cast.engineer)
        after_page = client.get(f"/lots/{own.pk}/")
    after = after_page.context["promise"].promised
    assert after > before and after > at(2026, 11, 6, 12)
    assert "Promised date" in after_page.content.decode()
    block = ResourceBlock.objects.get()
    assert (block.starts_at, block.reason) == (MONDAY, "heater failed")


def test_a_technician_may_not_change_resources_or_the_calendar(client, cast, lab):
    client.force_login(cast.technician)
    with clock.frozen_at(MONDAY):
        assert (
            client.post(
                "/resources/SF-1/broken/",
                {"broken-expected_end": "2026-11-06T12:00", "broken-reason": "x"},
            ).status_code
            == 403
        )
        assert client.post("/resources/SF-1/block/", {}).status_code == 403
        assert client.post("/calendar/holidays/", {}).status_code == 403
        assert client.post("/calendar/hours/", {}).status_code == 403
    assert not ResourceBlock.objects.exists()


def test_a_refused_block_is_shown_next_to_its_field_and_nothing_changes(client, cast, lab):
    client.force_login(cast.quality_manager)
    with clock.frozen_at(MONDAY):
        response = client.post(
            "/resources/SF-1/broken/",
            {"broken-expected_end": "2026-11-01T12:00", "broken-reason": "fell over"},
        )
    assert response.status_code == 400
    assert response.context["broken_form"].errors["expected_end"] == [
        "This block would already be over."
    ]
    assert not ResourceBlock.objects.exists()


def test_a_block_ends_early_with_a_reason(client, cast, lab):
    with clock.frozen_at(MONDAY):
        block = resource_services.resource_mark_broken(
            actor=cast.quality_manager,
            resource=lab_resource("SF-1"),
            expected_end=MONDAY + datetime.timedelta(days=3),
            reason="pump",
        )
    client.force_login(cast.quality_manager)
    with clock.frozen_at(MONDAY + datetime.timedelta(hours=5)):
        response = client.post(
            f"/resources/SF-1/blocks/{block.pk}/end/", {"reason": "pump replaced"}
        )
    assert response.status_code == 302
    block.refresh_from_db()
    assert block.ends_at == MONDAY + datetime.timedelta(hours=5)


def test_the_lab_calendar_takes_holidays_and_hours(client, cast, lab):
    client.force_login(cast.administrator)
    with clock.frozen_at(MONDAY):
        assert (
            client.post(
                "/calendar/holidays/", {"holiday-day": "2026-11-11", "holiday-name": "Lab closure"}
            ).status_code
            == 302
        )
        twice = client.post(
            "/calendar/holidays/", {"holiday-day": "2026-11-11", "holiday-name": "Lab closure"}
        )
        assert twice.status_code == 400
        assert "already a lab holiday" in twice.context["holiday_form"].errors["day"][0]
        assert (
            client.post(
                "/calendar/hours/",
                {
                    "hours-weekdays": ["0", "1", "2", "3"],
                    "hours-opens": "07:30",
                    "hours-closes": "16:00",
                    "hours-valid_from": "2026-11-02",
                },
            ).status_code
            == 302
        )
        page = client.get("/calendar/").content.decode()
    assert "Lab closure" in page and "Monday, Tuesday, Wednesday, Thursday" in page
    hours = LabHours.objects.get()
    assert (hours.weekdays, hours.opens) == ([0, 1, 2, 3], datetime.time(7, 30))
    holiday = LabHoliday.objects.get()
    with clock.frozen_at(MONDAY):
        assert (
            client.post(
                f"/calendar/holidays/{holiday.pk}/remove/", {"reason": "opened after all"}
            ).status_code
            == 302
        )
    assert not LabHoliday.objects.exists()


def test_wrong_methods_are_refused(client, cast, lab):
    client.force_login(cast.quality_manager)
    for url in PAGES:
        assert client.post(url).status_code == 405, url
    for url in (
        "/resources/SF-1/broken/",
        "/resources/SF-1/block/",
        "/calendar/holidays/",
        "/calendar/hours/",
    ):
        assert client.get(url).status_code == 405, url


def test_the_resource_list_does_not_query_per_row(client, cast, lab, django_assert_max_num_queries):
    with clock.frozen_at(MONDAY):
        for n in range(12):
            resource = resource_services.resource_create(
                actor=cast.quality_manager,
                ident=f"X-{n}",
                name="extra",
                calendar="lab_hours",
                kinds=["inspection"],
                capacity=1,
            )
            resource_services.resource_mark_broken(
                actor=cast.quality_manager,
                resource=resource,
                expected_end=MONDAY + datetime.timedelta(days=1),
                reason="spare parts",
            )
    client.force_login(cast.engineer)
    with clock.frozen_at(MONDAY), django_assert_max_num_queries(10):
        page = client.get("/resources/", {"kind": "inspection"}).content.decode()
    assert page.count("blocked until") == 12 and "SF-1" not in page


def test_the_lot_page_shows_the_promised_date_and_only_staff_see_why(client, cast, lab):
    own, _ = lab
    client.force_login(cast.customer)
    with clock.frozen_at(MONDAY):
        page = client.get(f"/lots/{own.pk}/").content.decode()
    assert "Promised date" in page and "later than due" in page
    assert "Why:" not in page and "labels.pdf" not in page
    client.force_login(cast.engineer)
    with clock.frozen_at(MONDAY):
        page = client.get(f"/lots/{own.pk}/").content.decode()
    assert "Why:" in page and f"/lots/{own.pk}/labels.pdf" in page


def test_a_lot_without_a_released_plan_says_why_it_has_no_promised_date(client, cast, lab):
    lot = LotFactory(order=OrderFactory(customer=cast.customer_org))
    client.force_login(cast.engineer)
    with clock.frozen_at(MONDAY):
        page = client.get(f"/lots/{lot.pk}/").content.decode()
    assert "No released test plan yet" in page
