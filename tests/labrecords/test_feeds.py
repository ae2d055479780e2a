"""Calendar feeds: per-user tokens stored as SHA-256 only, a read-only iCalendar feed per
resource without sign-in, 404 for revoked or unknown tokens, no tokens for customers."""

import hashlib
import re

import pytest
from django.contrib.auth.models import Group
from django.core.cache import cache
from django.core.exceptions import PermissionDenied

from labrecords import clock
from labrecords.models import AuditEntry, CalendarFeedToken
from labrecords.services import feeds as feed_services
from tests.labrecords.test_ical import parse, unfold
from tests.labrecords.test_schedule import MONDAY
from tests.labrecords.test_views_schedule import lab  # noqa: F401  (fixture)

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def _empty_cache():
    cache.clear()
    yield
    cache.clear()


def make_token(client, user) -> str:
    client.force_login(user)
    with clock.frozen_at(MONDAY):
        response = client.post("/feeds/new/")
    assert response.status_code == 200 and response["Cache-Control"] == "no-store"
    urls = re.findall(r"http://testserver/feeds/([^/]+)/SF-1\.ics", response.content.decode())
    assert len(urls) == 1
    client.logout()
    return urls[0]


def test_only_the_tokens_hash_is_stored(client, cast, lab):  # noqa: F811
    token = make_token(client, cast.technician)
    row = CalendarFeedToken.objects.get()
    # SHA-256 per FIPS 180-4, computed by Python's hashlib as the reference.
    assert row.token_hash == hashlib.sha256(token.encode()).hexdigest()
    assert row.user == cast.technician and row.revoked_at is None
    assert token not in str(list(AuditEntry.objects.values_list("changes", flat=True)))
    assert row.token_hash not in str(list(AuditEntry.objects.values_list("changes", flat=True)))


def test_the_feed_opens_without_sign_in_and_reads_as_rfc_5545(client, cast, lab):  # noqa: F811
    token = make_token(client, cast.engineer)
    with clock.frozen_at(MONDAY):
        response = client.get(f"/feeds/{token}/SF-1.ics")
    assert response.status_code == 200
    assert response["Content-Type"] == "text/calendar; charset=utf-8"
    raw = response.content
    # RFC 5545 3.1: CRLF line ends and at most 75 octets a line.
    assert raw.count(b"\n") == raw.count(b"\r\n")
    assert max(len(line) for line in raw.split(b"\r\n")) <= 75
    text = raw.decode("utf-8")
    events = parse(text)
    runs = [e for e in events if e["SUMMARY"].startswith("SF-1: ")]
    assert runs, "the salt fog run of the demo lot is in the feed"
    assert all(e["DTSTART"].endswith("Z") and e["DTEND"].endswith("Z") for e in events)
    assert all(e["UID"].endswith("@durability-records") and e["DTSTAMP"] for e in events)
    assert any(line.startswith("X-WR-CALNAME:SF-1") for line in unfold(text))
    icalendar = pytest.importorskip("icalendar")
    calendar = icalendar.Calendar.from_ical(text)
    assert len(list(calendar.walk("VEVENT"))) == len(events)


def test_a_revoked_unknown_or_orphaned_token_gets_404(client, cast, lab):  # noqa: F811
    token = make_token(client, cast.technician)
    with clock.frozen_at(MONDAY):
        assert client.get(f"/feeds/{token}/SF-1.ics").status_code == 200
        assert client.get(f"/feeds/{token}/NOPE-1.ics").status_code == 404
        assert client.get(f"/feeds/{token[:-1]}x/SF-1.ics").status_code == 404
        assert client.get("/feeds/not-a-token/SF-1.ics").status_code == 404
        # A token of someone who is no longer lab staff opens nothing.
        cast.technician.groups.remove(Group.objects.get(name="technician"))
        assert client.get(f"/feeds/{token}/SF-1.ics").status_code == 404
        cast.technician.groups.add(Group.objects.get(name="technician"))
        client.force_login(cast.technician)
        row = CalendarFeedToken.objects.get()
        assert client.post(f"/feeds/{row.pk}/revoke/").status_code == 302
        client.logout()
        assert client.get(f"/feeds/{token}/SF-1.ics").status_code == 404
    row.refresh_from_db()
    assert row.revoked_at == MONDAY


def test_customers_never_get_a_token(client, cast, lab):  # noqa: F811
    with pytest.raises(PermissionDenied):
        feed_services.calendar_feed_token_create(actor=cast.customer)
    client.force_login(cast.customer)
    assert client.get("/feeds/").status_code == 404
    assert client.post("/feeds/new/").status_code == 404
    client.force_login(cast.outsider)
    assert client.post("/feeds/new/").status_code == 404
    assert not CalendarFeedToken.objects.exists()


def test_only_the_owner_or_the_administrator_revokes_a_token(client, cast, lab):  # noqa: F811
    make_token(client, cast.technician)
    row = CalendarFeedToken.objects.get()
    client.force_login(cast.engineer)
    assert client.post(f"/feeds/{row.pk}/revoke/").status_code == 404
    assert client.get("/feeds/").context["tokens"] == []
    client.force_login(cast.administrator)
    assert client.get("/feeds/").context["tokens"] == [row]
    with clock.frozen_at(MONDAY):
        assert client.post(f"/feeds/{row.pk}/revoke/").status_code == 302
    row.refresh_from_db()
    assert row.revoked_at is not None


def test_feed_pages_refuse_wrong_methods_and_anonymous_users(client, cast, lab):  # noqa: F811
    assert client.get("/feeds/").status_code == 302
    assert client.post("/feeds/new/").status_code == 302
    token = make_token(client, cast.technician)
    assert client.post(f"/feeds/{token}/SF-1.ics").status_code == 405
    client.force_login(cast.technician)
    assert client.get("/feeds/new/").status_code == 405
    assert client.post("/feeds/").status_code == 405
