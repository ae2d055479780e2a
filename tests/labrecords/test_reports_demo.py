"""The demo's reports: issued through the services for finished lots, with one amendment and
one re-issue after real corrections."""

import datetime
import hashlib
from types import SimpleNamespace

import pytest
from django.utils import timezone

from labrecords import clock
from labrecords.demo import scenario
from labrecords.demo.build import DemoLab
from labrecords.demo.reports import SECOND_REVIEWER, issue_demo_reports
from labrecords.models import (
    ChamberRun,
    Evidence,
    ExposureCheck,
    LotStage,
    Report,
    ReportKind,
    StepResult,
)
from labrecords.roles import Role
from labrecords.services import customers as customer_services
from tests.factories import CustomerFactory, LotFactory, OrderFactory
from tests.labrecords.bench_support import NOW, bench_setup, record_through

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = str(tmp_path / "media")


def demo_lab() -> DemoLab:
    """The demo's staff (scenario logins) and three lots finished at the bench, each with its
    chamber log checked, plus one lot still in test."""
    lab = DemoLab()
    with clock.frozen_at(NOW - datetime.timedelta(days=60)):
        customer_services.roles_ensure()
        admin = None
        for username, full_name, role, password in sorted(
            scenario.STAFF, key=lambda row: row[2] != Role.ADMINISTRATOR
        ):
            user = customer_services.user_create(
                actor=admin,
                username=username,
                password=password,
                full_name=full_name,
                roles=[Role(role)],
            )
            admin = admin or user
            lab.staff[Role(role)] = user
    people = SimpleNamespace(
        technician=lab.staff[Role.TECHNICIAN],
        engineer=lab.staff[Role.ENGINEER],
        quality_manager=lab.staff[Role.QUALITY_MANAGER],
    )
    customer = CustomerFactory(
        name="Invented Heron Optics",
        code="IHO",
        contact_name="Nell Invented",
        address="4 Nowhere Row",
    )
    for index in range(4):
        lot = LotFactory(
            order=OrderFactory(customer=customer), received_on=datetime.date(2026, 11, 2)
        )
        bench = bench_setup(people, lot=lot)
        last = max(step.order for step in bench.steps)
        record_through(bench, last if index < 3 else 2)
        lab.lots.append(lot)
        for run in ChamberRun.objects.filter(results__piece__lot=lot).distinct():
            log = Evidence(
                kind="chamber_log",
                chamber_run=run,
                file="evidence/00/log",
                sha256="0" * 64,
                original_name="log.csv",
                content_type="text/csv",
                size=1,
                uploaded_by=people.technician,
                uploaded_at=NOW,
            )
            log.save()
            ExposureCheck(
                run=run,
                evidence=log,
                counts=True,
                convention="interpolated",
                summary={"in_tolerance_hours": 24.2, "required_hours": 24.0},
                checked_by=people.technician,
                checked_at=NOW,
            ).save()
    return lab


def test_the_demo_issues_reports_an_amendment_and_a_reissue():
    lab = demo_lab()
    done = issue_demo_reports(lab, now=NOW + datetime.timedelta(days=10))
    assert len(done.issued) == 3
    assert done.skipped == {lab.lots[3].number: done.skipped[lab.lots[3].number]}
    assert done.skipped[lab.lots[3].number].startswith(
        "results not complete: missing a result for piece"
    )
    amendment = Report.objects.get(number=done.amendment)
    assert amendment.kind == ReportKind.AMENDMENT
    assert amendment.amends.number == done.issued[0]
    assert "10x loupe" in amendment.change_description
    reissue = Report.objects.get(number=done.reissue)
    assert reissue.replaces.number == done.issued[1]
    assert reissue.change_description.startswith("Complete re-issue.")
    for report in Report.objects.all():
        with report.pdf.open("rb") as handle:
            assert hashlib.sha256(handle.read()).hexdigest() == report.sha256
        # Reviewed by someone who did not do the work, in a working hour.
        assert report.review.reviewer.username == SECOND_REVIEWER[0]
        local = timezone.localtime(report.issued_at)
        assert 8 <= local.hour < 17 and local.weekday() < 5
        assert report.issued_at > report.review.reviewed_at
    corrections = StepResult.objects.filter(number=2)
    assert corrections.count() == 2
    assert all("10x loupe" in c.reason and c.verdict == c.supersedes.verdict for c in corrections)
    for lot in lab.lots[:3]:
        lot.refresh_from_db()
        assert lot.stage == LotStage.REPORT_ISSUED


def test_nothing_is_issued_before_the_results_are_old_enough():
    lab = demo_lab()
    done = issue_demo_reports(lab, now=NOW + datetime.timedelta(hours=1))
    assert done.issued == [] and done.amendment is None and done.reissue is None
    assert "too recently" in done.skipped[lab.lots[0].number]
    assert not Report.objects.exists()
