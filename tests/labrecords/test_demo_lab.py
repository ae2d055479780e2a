import io

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError

from labrecords.models import AuditEntry, Lot, Observation

pytestmark = pytest.mark.django_db


def test_the_demo_lab_builds_through_services_and_a_second_run_changes_nothing():
    out = io.StringIO()
    call_command("demo_lab", stdout=out)
    assert "Built the demo lab with 40 lots" in out.getvalue()
    assert "tess" in out.getvalue() and "mira" in out.getvalue()
    lots, audit = Lot.objects.count(), AuditEntry.objects.count()
    assert lots == 40
    # Every lot was made by a service, so each has its 'create' audit entry.
    assert AuditEntry.objects.filter(model="labrecords.Lot", action="create").count() == 40
    # The demo includes one corrected observation, with both revisions kept.
    assert Observation.objects.filter(supersedes__isnull=False).count() == 1
    again = io.StringIO()
    call_command("demo_lab", stdout=again)
    assert "already built; nothing changed" in again.getvalue()
    assert (Lot.objects.count(), AuditEntry.objects.count()) == (lots, audit)


def test_every_demo_user_can_sign_in(client):
    from labrecords.demo.build import logins

    call_command("demo_lab", stdout=io.StringIO())
    for username, password, _role in logins():
        assert client.login(username=username, password=password), username
        client.logout()


def test_the_demo_command_refuses_production_settings(settings):
    settings.IS_PRODUCTION = True
    with pytest.raises(CommandError, match="never built in production"):
        call_command("demo_lab", stdout=io.StringIO())
