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


def test_the_demo_releases_plans_for_older_lots_that_follow_the_plan_rules():
    from labrecords.models import PlanStatus, TestPlan

    call_command("demo_lab", stdout=io.StringIO())
    released = list(TestPlan.objects.filter(status=PlanStatus.RELEASED)
                    .prefetch_related("sequences__steps", "sequences__assignments"))
    assert len(released) >= 20
    for plan in released:
        pieces = [a.piece_id for s in plan.sequences.all() for a in s.assignments.all()]
        assert len(pieces) == len(set(pieces)), plan  # a piece runs one sequence
        for sequence in plan.sequences.all():
            steps = sorted(sequence.steps.all(), key=lambda s: s.order)
            # An initial inspection before any exposure (common practice; ISO 9022's
            # sequence starts with an initial test, per test-methods.md [pub]).
            assert steps[0].kind == "inspection"
            assert sum(1 for s in steps if s.destructive) <= 1
            assert len(sequence.assignments.all()) >= sequence.pieces_needed
    # A lot whose callouts only name bare tests waits for the engineer as a draft.
    assert TestPlan.objects.filter(status=PlanStatus.DRAFT).exists()
