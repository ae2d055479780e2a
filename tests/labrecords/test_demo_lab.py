"""The demo lab: built through the services, safe to repeat, refused in production.

Building it takes a while, so one test builds it and checks everything it promises.
"""

import io

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError

from labrecords.demo.build import logins
from labrecords.models import (
    AuditEntry,
    ChamberRun,
    Lot,
    Observation,
    PlanStatus,
    Report,
    StepResult,
    TestPlan,
)

pytestmark = pytest.mark.django_db


def _check_plan_rules(plan: TestPlan) -> None:
    pieces = [a.piece_id for s in plan.sequences.all() for a in s.assignments.all()]
    assert len(pieces) == len(set(pieces)), plan  # a piece runs one sequence
    for sequence in plan.sequences.all():
        steps = sorted(sequence.steps.all(), key=lambda s: s.order)
        # An initial inspection before any exposure (common practice; ISO 9022's sequence
        # starts with an initial test, per shared/reference/test-methods.md [pub]).
        assert steps[0].kind == "inspection"
        assert sum(1 for s in steps if s.destructive) <= 1
        assert len(sequence.assignments.all()) >= sequence.pieces_needed


def test_the_demo_lab_builds_its_whole_history_and_a_second_run_changes_nothing(client):
    out = io.StringIO()
    call_command("demo_lab", stdout=out)
    assert "Built the demo lab with 40 lots" in out.getvalue()
    assert "tess" in out.getvalue() and "mira" in out.getvalue()
    assert Lot.objects.count() == 40
    # Every lot was made by a service, so each has its 'create' audit entry.
    assert AuditEntry.objects.filter(model="labrecords.Lot", action="create").count() == 40
    # Corrections keep both revisions.
    assert Observation.objects.filter(supersedes__isnull=False).exists()
    assert StepResult.objects.filter(supersedes__isnull=False).exists()
    # Plans for older lots are released and follow the plan rules; one waits as a draft.
    released = list(TestPlan.objects.filter(status=PlanStatus.RELEASED)
                    .prefetch_related("sequences__steps", "sequences__assignments"))
    assert len(released) >= 20
    for plan in released:
        _check_plan_rules(plan)
    assert TestPlan.objects.filter(status=PlanStatus.DRAFT).exists()
    # Results with failures, chamber runs, reports with an amendment and a re-issue.
    assert StepResult.objects.filter(verdict="fail").exists()
    assert StepResult.objects.filter(verdict="invalid").exists()
    assert ChamberRun.objects.exists()
    assert Report.objects.filter(kind="report").exists()
    assert Report.objects.filter(kind="amendment").exists()
    assert Report.objects.filter(kind="reissue").exists()
    counts = (Lot.objects.count(), AuditEntry.objects.count(), StepResult.objects.count())
    again = io.StringIO()
    call_command("demo_lab", stdout=again)
    assert "already built; nothing changed" in again.getvalue()
    assert (Lot.objects.count(), AuditEntry.objects.count(), StepResult.objects.count()) == counts
    for username, password, _role in logins():
        assert client.login(username=username, password=password), username
        client.logout()


def test_the_demo_command_refuses_production_settings(settings):
    settings.IS_PRODUCTION = True
    with pytest.raises(CommandError, match="never built in production"):
        call_command("demo_lab", stdout=io.StringIO())
    assert not Lot.objects.exists()


def test_the_dry_run_says_what_it_would_do_and_changes_nothing():
    out = io.StringIO()
    call_command("demo_lab", "--dry-run", stdout=out)
    assert "not built yet" in out.getvalue()
    assert not Lot.objects.exists()
