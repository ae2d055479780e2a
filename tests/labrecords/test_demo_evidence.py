"""The evidence demo: chamber runs with logs (one that does not count) and spectra."""

from __future__ import annotations

import datetime
from decimal import Decimal

import pytest

from labrecords.demo.build import DemoLab
from labrecords.demo.evidence import record_demo_evidence
from labrecords.models import AuditEntry, ChamberRun, Evidence, ExposureCheck
from labrecords.roles import Role
from labrecords.selectors_chambers import exposure_counts_for
from tests.factories import InstrumentFactory, UserFactory
from tests.labrecords.evidence_helpers import berlin, finish_until, plan_lot

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path / "media"


@pytest.fixture
def lab(cast):
    """Three lots whose pieces stand at their humidity step, ready on three days."""
    InstrumentFactory(
        ident="HC-01", kind="humidity chamber", calibration_due=datetime.date(2027, 1, 1)
    )
    InstrumentFactory(ident="DL-01", kind="data logger", calibration_due=datetime.date(2027, 1, 1))
    lots = []
    for day in (2, 6, 10):
        plan = plan_lot(
            customer=cast.customer_org,
            released_at=berlin(2025, 5, day, 9),
            pieces_per_sequence=2,
            wavelength_min_nm=Decimal("400"),
            wavelength_max_nm=Decimal("700"),
            quantity="R",
            statistic="average",
            limit_max_pct=Decimal("2.0"),
        )
        for assignment in plan.assignments.all():
            finish_until(plan, assignment.piece, "humidity", berlin(2025, 5, day + 1, 10))
        lots.append(plan.lot)
    technician = UserFactory(username="demo-tech", roles=["technician"])
    return DemoLab(staff={Role.TECHNICIAN: technician}, lots=lots)


def test_it_makes_runs_with_checked_logs_one_of_which_does_not_count(lab):
    made = record_demo_evidence(lab, now=berlin(2025, 6, 1, 12))
    assert len(made.runs) == 3 and len(made.checks) == 3, made.skipped
    counts = [exposure_counts_for(run) for run in made.runs]
    assert counts == [True, False, True]
    failing = made.checks[1]
    assert failing.summary["verification"]["over_test"] is True
    assert any("humidity low" in e["causes"] for e in failing.summary["verification"]["excursions"])
    for run in made.runs:
        assert run.unloaded_at is not None and run.pieces.count() == 2
        assert AuditEntry.objects.filter(
            model="labrecords.ChamberRun", object_pk=str(run.pk)
        ).exists()
    assert ExposureCheck.objects.count() == 3


def test_it_adds_before_and_after_spectra_with_the_change(lab):
    made = record_demo_evidence(lab, now=berlin(2025, 6, 1, 12))
    stages = sorted(e.stage for e in made.spectra)
    assert stages == ["after"] * 6 + ["before"] * 6
    after = next(e for e in made.spectra if e.stage == "after")
    assert after.summary["change"] is not None
    # The invented after-curve raises the film index 1.38 -> 1.39 (water uptake): the
    # quarter-wave minimum moves to the red by about 550 x 0.01/1.38 = 4 nm (lambda0 = 4nd).
    assert 2.0 < after.summary["change"]["extremum_shift_nm"] < 6.0
    assert Evidence.objects.filter(kind="spectrum").count() == 12


def test_a_run_not_yet_ended_stays_in_the_chamber(lab):
    made = record_demo_evidence(lab, now=berlin(2025, 5, 12, 12))
    assert [run.unloaded_at for run in made.runs][-1] is None
    assert ChamberRun.objects.filter(unloaded_at__isnull=True).count() == 1


def test_without_pieces_at_a_chamber_step_it_says_so(cast):
    plan = plan_lot(customer=cast.customer_org)
    lab = DemoLab(
        staff={Role.TECHNICIAN: UserFactory(username="t2", roles=["technician"])}, lots=[plan.lot]
    )
    made = record_demo_evidence(lab, now=berlin(2025, 6, 1, 12))
    assert made.runs == [] and "record the bench steps" in made.skipped[-1]
