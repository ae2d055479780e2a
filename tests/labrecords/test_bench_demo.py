"""The bench demo: results recorded through the services, with its stories."""

import pytest

from durability.models import Instrument
from labrecords.models import (
    AuditEntry,
    LotStage,
    MethodAuthorisation,
    Nonconformance,
    StepResult,
)
from labrecords.roles import Role

pytestmark = pytest.mark.django_db


@pytest.fixture
def demo():
    from durability.services import catalogue_seed
    from labrecords.demo import bench, build

    catalogue_seed()
    lab = build.build()
    return lab, bench.record_demo_results(lab)


def test_the_bench_demo_records_results_and_tells_its_stories(demo):
    lab, out = demo
    technician = lab.staff[Role.TECHNICIAN]
    assert out.skipped == []
    assert len(out.results) > 100
    # Every first revision was recorded by the service, so each has its 'record' entry.
    firsts = StepResult.objects.filter(number=1).count()
    assert AuditEntry.objects.filter(model="labrecords.StepResult", action="record").count() \
        == firsts
    assert MethodAuthorisation.objects.filter(user=technician, revoked_at__isnull=True).exists()
    stages = set(lot.stage for lot in type(lab.lots[0]).objects.all())
    assert {LotStage.IN_TEST, LotStage.RESULTS_COMPLETE} <= stages
    # The demo's stories (one build for both, the build being slow).
    quality = lab.staff[Role.QUALITY_MANAGER]
    failures = Nonconformance.objects.filter(kind="coating_failure")
    assert failures.count() >= 2
    assert set(failures.values_list("disposition", flat=True)) >= {"reject_lot", "concession", ""}
    # SP-01 is out of calibration in the demo: its measurement is invalid, with the
    # quality manager's reason, and a retest runs on a new piece.
    invalid = out.invalid
    sp01 = Instrument.objects.get(ident="SP-01")
    assert invalid.verdict == "invalid" and invalid.invalid_authorised_by == quality
    assert invalid.instrument_links.get().instrument == sp01
    assert invalid.observed_at.date() > sp01.calibration_due
    nc = Nonconformance.objects.get(result=invalid)
    assert nc.kind == "invalid_test" and nc.disposition == "retest"
    retest_steps = out.retest_plan.steps.filter(retest_of__isnull=False)
    assert retest_steps.filter(step_key__in=StepResult.objects.values("step_key")).exists()
    assert any(s.retest_of.step_key == invalid.step_key for s in retest_steps)
    correction = out.correction
    assert correction.number == 2 and correction.reason and correction.supersedes is not None
