"""The schedule built from the records: workload, promised dates, blocks, running steps.

Expected times are worked by hand from the scheduling conventions (common practice,
stated in durability.scheduling.solver.CONVENTION and labrecords.selectors_schedule):
lab hours Monday to Friday 08:00-17:00, a chamber run is loaded in lab hours and runs
around the clock, a bench step lies inside one lab-hours window.
"""

import datetime

import pytest
from django.core.cache import cache
from django.core.exceptions import PermissionDenied, ValidationError
from django.utils import timezone

from durability.scheduling import SolverOptions
from labrecords import clock
from labrecords.models import AuditEntry, StepResult
from labrecords.selectors_chambers import condition_of
from labrecords.selectors_schedule import covers, promised_dates, schedule_inputs
from labrecords.services import chambers as chamber_services
from labrecords.services import lots as lot_services
from labrecords.services import resources as resource_services
from labrecords.services import scheduling
from labrecords.services.scheduling import lab_schedule
from tests.factories import InstrumentFactory, LotFactory, OrderFactory, released_plan

pytestmark = pytest.mark.django_db

# Fixed passes and a generous budget: the same inputs give the same schedule.
OPTIONS = SolverOptions(time_budget_s=60.0, max_passes=12)
SALT_FOG_CALLOUTS = "Coating per MIL-C-48497A, severe abrasion, salt fog"


def at(year, month, day, hour, minute=0):
    return timezone.make_aware(
        datetime.datetime(year, month, day, hour, minute), timezone.get_default_timezone()
    )


# Monday 2026-11-02, 07:00 in the lab: an hour before the lab opens.
MONDAY = at(2026, 11, 2, 7)


@pytest.fixture(autouse=True)
def _empty_cache():
    cache.clear()
    yield
    cache.clear()


@pytest.fixture
def lab(cast):
    """A small lab: one humidity chamber, one salt fog cabinet, one station per bench kind."""
    qm = cast.quality_manager
    hum_instrument = InstrumentFactory(ident="HC-T1", kind="humidity chamber")
    with clock.frozen_at(MONDAY - datetime.timedelta(days=30)):
        resource_services.lab_hours_set(
            actor=qm,
            weekdays=[0, 1, 2, 3, 4],
            opens=datetime.time(8),
            closes=datetime.time(17),
            valid_from=datetime.date(2026, 1, 1),
        )
        made = {
            "HUM-1": resource_services.resource_create(
                actor=qm,
                ident="HUM-1",
                name="Humidity chamber",
                calendar="always",
                kinds=["humidity"],
                capacity=4,
                instrument=hum_instrument,
            ),
            "SF-1": resource_services.resource_create(
                actor=qm,
                ident="SF-1",
                name="Salt fog cabinet",
                calendar="always",
                kinds=["salt_fog"],
                capacity=4,
            ),
        }
        for ident, kinds in (
            ("INSP-1", ["inspection"]),
            ("SPEC-1", ["spectral_measurement"]),
            ("TAPE-1", ["adhesion", "crosshatch"]),
            ("ABR-1", ["moderate_abrasion", "severe_abrasion"]),
        ):
            made[ident] = resource_services.resource_create(
                actor=qm, ident=ident, name=ident, calendar="lab_hours", kinds=kinds, capacity=1
            )
    made["hum_instrument"] = hum_instrument
    return made


def plan_with_due(callouts, due, engineer=None):
    lot = LotFactory(order=OrderFactory(due_date=due))
    return released_plan(lot=lot, callouts=callouts, engineer=engineer)


def record_done(step, piece, moment, user):
    """Set-up only: a current result for a step (the bench entry is tested elsewhere)."""
    return StepResult.objects.create(
        step=step,
        step_key=step.step_key,
        piece=piece,
        verdict="pass",
        verdict_reason="set-up",
        recorded_by=user,
        recorded_at=moment,
        observed_at=moment,
    )


def test_the_workload_follows_each_pieces_sequence(lab):
    plan = plan_with_due("MIL-C-48497A", datetime.date(2026, 11, 6))
    piece = plan.lot.pieces.get()
    inputs = schedule_inputs(MONDAY)
    workload = inputs.workload
    assert workload["start"] == "2026-11-02T07:00"
    assert workload["lab_hours"] == {"days": [0, 1, 2, 3, 4], "from": "08:00", "to": "17:00"}
    steps = workload["steps"]
    assert [s["id"] for s in steps] == [f"{piece.ident}#{n}" for n in range(1, 10)]
    assert steps[0]["after"] == [] and steps[0]["wait_hours"] == 0  # coated a month ago
    for before, step in zip(steps, steps[1:], strict=False):
        assert step["after"] == [before["id"]]
    humidity = steps[2]
    assert humidity["kind"] == "humidity" and humidity["hours"] == 24.0
    assert humidity["condition"].startswith("MIL-C-48497A:humidity v1")
    assert steps[3]["wait_hours"] == 1.0  # recovery after humidity, from the plan
    # The order's due date, at the end of that day.
    assert workload["lots"] == [{"id": plan.lot.number, "due": "2026-11-07T00:00", "priority": 0}]


def test_done_steps_leave_the_workload_and_the_wait_counts_from_the_last_result(lab, cast):
    plan = plan_with_due("MIL-C-48497A", None)
    piece = plan.lot.pieces.get()
    steps = list(plan.steps.order_by("order"))
    record_done(steps[0], piece, MONDAY - datetime.timedelta(hours=3), cast.technician)
    record_done(steps[1], piece, MONDAY - datetime.timedelta(hours=2), cast.technician)
    # The inspection after humidity waits 1 h; give humidity a result 30 min before start.
    rows = schedule_inputs(MONDAY).workload["steps"]
    assert [r["id"] for r in rows][0] == f"{piece.ident}#3"
    assert rows[0]["after"] == []
    record_done(steps[2], piece, MONDAY - datetime.timedelta(minutes=30), cast.technician)
    rows = schedule_inputs(MONDAY).workload["steps"]
    assert rows[0]["id"] == f"{piece.ident}#4"
    assert rows[0]["wait_hours"] == 0.5


def test_a_single_piece_is_promised_at_the_end_of_its_hand_worked_chain(lab):
    plan = plan_with_due("MIL-C-48497A", datetime.date(2026, 11, 6))
    schedule = lab_schedule(now=MONDAY, options=OPTIONS)
    assert schedule.error is None
    # By hand: the lab opens Mon 08:00; inspection 08:00-08:15, spectrum 08:15-08:45,
    # humidity 08:45 -> Tue 08:45, 1 h recovery, then five bench steps of 0.25 h and a
    # spectrum of 0.5 h: 09:45 + 1.25 h + 0.5 h = Tue 11:30.
    row = next(r for r in schedule.lots if r.lot_id == plan.lot_id)
    assert row.promised == at(2026, 11, 3, 11, 30)
    assert not row.late and row.due == datetime.date(2026, 11, 6)
    assert schedule.makespan_hours == pytest.approx(28.5)
    assert schedule.ratio == pytest.approx(1.0)
    with clock.frozen_at(MONDAY):
        assert promised_dates() == {plan.lot_id: at(2026, 11, 3, 11, 30)}


def test_a_lot_due_before_its_chain_can_end_is_late_with_the_reason(lab):
    plan = plan_with_due("MIL-C-48497A", datetime.date(2026, 11, 2))
    schedule = lab_schedule(now=MONDAY, options=OPTIONS)
    row = next(r for r in schedule.lots if r.lot_id == plan.lot_id)
    assert row.late and row.late_hours == pytest.approx(11.5)  # Tue 11:30 vs Tue 00:00
    assert "chain of steps" in row.reason
    assert schedule.late == (row,)


def test_marking_the_only_salt_fog_cabinet_broken_moves_its_lots_later_never_earlier(lab, cast):
    salt = [plan_with_due(SALT_FOG_CALLOUTS, datetime.date(2026, 11, 13)) for _ in range(3)]
    other = plan_with_due("MIL-C-48497A", datetime.date(2026, 11, 13))
    before = lab_schedule(now=MONDAY, options=OPTIONS)
    needs = {s.lot_id for s in before.steps if s.kind == "salt_fog"}
    assert needs == {p.lot_id for p in salt}
    expected_end = MONDAY + datetime.timedelta(days=4)
    with clock.frozen_at(MONDAY):
        resource_services.resource_mark_broken(
            actor=cast.quality_manager,
            resource=lab["SF-1"],
            expected_end=expected_end,
            reason="fog nozzle cracked",
        )
    after = lab_schedule(now=MONDAY, options=OPTIONS)
    assert after.fingerprint != before.fingerprint
    old = {r.lot_id: r.promised for r in before.lots}
    new = {r.lot_id: r.promised for r in after.lots}
    for lot_id in needs:
        assert new[lot_id] >= old[lot_id]
    assert any(new[lot_id] > old[lot_id] for lot_id in needs)
    # Nothing runs in the cabinet while it is broken.
    assert all(s.start >= expected_end for s in after.steps if s.resource == "SF-1")
    assert other.lot_id not in needs


def test_a_running_step_stays_in_its_chamber_when_the_schedule_is_made_again(lab, cast):
    plan = plan_with_due("MIL-C-48497A", None)
    piece = plan.lot.pieces.get()
    steps = list(plan.steps.order_by("order"))
    record_done(steps[0], piece, MONDAY - datetime.timedelta(days=1), cast.technician)
    record_done(steps[1], piece, MONDAY - datetime.timedelta(days=1), cast.technician)
    loaded = MONDAY - datetime.timedelta(hours=5)
    with clock.frozen_at(MONDAY - datetime.timedelta(hours=4)):
        run = chamber_services.chamber_run_create(
            actor=cast.technician,
            chamber=lab["hum_instrument"],
            method_version=steps[2].method_version,
            condition=condition_of(steps[2].parameters),
            loaded_at=loaded,
            pieces=[piece],
        )
    rows = schedule_inputs(MONDAY).workload["steps"]
    assert rows[0]["fixed"] == {"resource": "HUM-1", "start": "2026-11-02T02:00"}
    assert rows[0]["condition"] == f"chamber run {run.ident}"
    # A breakdown reported now does not move what is already in the chamber.
    with clock.frozen_at(MONDAY):
        resource_services.resource_mark_broken(
            actor=cast.quality_manager,
            resource=lab["HUM-1"],
            expected_end=MONDAY + datetime.timedelta(days=2),
            reason="controller fault",
        )
    schedule = lab_schedule(now=MONDAY, options=OPTIONS)
    running = next(s for s in schedule.steps if s.step_id == f"{piece.ident}#3")
    assert running.fixed and running.resource == "HUM-1"
    assert (running.start, running.end) == (loaded, loaded + datetime.timedelta(hours=24))
    after = next(s for s in schedule.steps if s.step_id == f"{piece.ident}#4")
    assert after.start >= running.end + datetime.timedelta(hours=1)


def test_a_step_no_resource_can_run_leaves_its_lot_without_a_promise(lab, cast):
    with clock.frozen_at(MONDAY):
        resource_services.resource_update(
            actor=cast.quality_manager, resource=lab["SF-1"], active=False, reason="cabinet sold"
        )
    salt = plan_with_due(SALT_FOG_CALLOUTS, datetime.date(2026, 11, 13))
    plain = plan_with_due("MIL-C-48497A", datetime.date(2026, 11, 13))
    schedule = lab_schedule(now=MONDAY, options=OPTIONS)
    stuck = [u for u in schedule.unschedulable if u.lot_id == salt.lot_id]
    assert len(stuck) == 1 and "no active resource runs salt fog" in stuck[0].reason
    rows = {r.lot_id: r for r in schedule.lots}
    assert rows[salt.lot_id].promised is None and "cannot be scheduled" in rows[salt.lot_id].note
    assert rows[plain.lot_id].promised is not None
    # The salt fog piece's later steps wait behind the step that cannot be placed.
    salt_piece = next(u.piece_ident for u in stuck)
    assert not any(
        s.piece_ident == salt_piece and s.step_id.endswith(("#4", "#5")) for s in schedule.steps
    )


def test_condition_ranges_that_cover_no_step_value_are_refused_with_the_reason(lab, cast):
    with clock.frozen_at(MONDAY):
        resource_services.resource_update(
            actor=cast.quality_manager,
            resource=lab["HUM-1"],
            condition_ranges={"rh_pct": [10, 90]},
            reason="humidifier limited",
        )
    plan = plan_with_due("MIL-C-48497A", None)
    schedule = lab_schedule(now=MONDAY, options=OPTIONS)
    assert [u.lot_id for u in schedule.unschedulable] == [plan.lot_id]
    assert "condition ranges" in schedule.unschedulable[0].reason


def test_covers_reads_step_values_against_the_resource_ranges():
    # MIL-C-48497A humidity: 49 °C, 95-100 % RH (shared/reference/test-methods.md [pub]).
    humidity = {
        "temperature_c": {"value": 49},
        "rh_min_pct": {"value": 95},
        "rh_max_pct": {"value": 100},
    }
    assert covers({"temperature_c": [10, 85], "rh_pct": [20, 100]}, humidity)
    assert not covers({"rh_pct": [20, 98]}, humidity)
    assert not covers({"temperature_c": [60, 180]}, humidity)
    assert covers({}, humidity) and covers({"temperature_c": [0, 10]}, {})


def test_an_instrument_past_its_calibration_blocks_its_resource(lab):
    instrument = lab["hum_instrument"]
    instrument.calibration_due = datetime.date(2026, 11, 3)
    instrument.save()
    inputs = schedule_inputs(MONDAY)
    hum = next(r for r in inputs.workload["resources"] if r["id"] == "HUM-1")
    assert hum["blocked"][0]["from"] == "2026-11-04T00:00"
    assert "calibration due 2026-11-03" in hum["blocked"][0]["reason"]


def test_the_schedule_is_cached_by_its_inputs(lab, cast, monkeypatch):
    plan_with_due("MIL-C-48497A", None)
    calls = []
    real = scheduling.compute

    def counting(inputs, options=None):
        calls.append(inputs.fingerprint)
        return real(inputs, options)

    monkeypatch.setattr(scheduling, "compute", counting)
    # 07:01 and 07:10 both round up to a 07:15 start: the same inputs.
    first = lab_schedule(now=MONDAY + datetime.timedelta(minutes=1), options=OPTIONS)
    second = lab_schedule(now=MONDAY + datetime.timedelta(minutes=10), options=OPTIONS)
    assert len(calls) == 1 and second.fingerprint == first.fingerprint
    with clock.frozen_at(MONDAY):
        resource_services.lab_holiday_create(
            actor=cast.quality_manager, day=datetime.date(2026, 11, 2), name="Lab closure"
        )
    third = lab_schedule(now=MONDAY + datetime.timedelta(minutes=1), options=OPTIONS)
    assert len(calls) == 2 and third.fingerprint != first.fingerprint
    # The holiday moves the hand-worked chain of the single-piece test by one day:
    # Tue 08:00 start, humidity Tue 08:45 -> Wed 08:45, done Wed 11:30.
    assert third.lots[0].promised == at(2026, 11, 4, 11, 30)


def test_input_the_scheduler_refuses_is_reported_not_raised(lab):
    from labrecords.selectors_schedule import ScheduleInputs

    inputs = schedule_inputs(MONDAY)
    broken = dict(
        inputs.workload, steps=[{"id": "x", "piece": "p", "lot": "L", "kind": "nope", "hours": 1}]
    )
    bad = ScheduleInputs(**{**inputs.__dict__, "workload": broken})
    result = scheduling.compute(bad, OPTIONS)
    assert result.error is not None and "unknown kind 'nope'" in result.error
    assert result.steps == () and result.lots == ()


def test_a_rush_lot_is_promised_no_later_than_before_and_the_change_is_audited(lab, cast):
    # Six lots due today compete for one humidity chamber of four places, so every lot is
    # late and the order matters; the rush lot's lateness weighs more (common practice).
    plans = [plan_with_due("MIL-C-48497A", datetime.date(2026, 11, 2)) for _ in range(6)]
    before = lab_schedule(now=MONDAY, options=OPTIONS)
    old = {r.lot_id: r.promised for r in before.lots}
    latest = max(plans, key=lambda p: old[p.lot_id])
    with clock.frozen_at(MONDAY):
        lot_services.lot_priority_set(actor=cast.engineer, lot=latest.lot, priority=2,
                                      reason="customer line down")
    after = lab_schedule(now=MONDAY, options=OPTIONS)
    new = {r.lot_id: r.promised for r in after.lots}
    assert new[latest.lot_id] < old[latest.lot_id]
    assert AuditEntry.objects.filter(model="labrecords.Lot", object_pk=str(latest.lot_id),
                                     reason="customer line down").exists()


def test_setting_a_priority_needs_a_reason_and_the_engineer_role(lab, cast):
    plan = plan_with_due("MIL-C-48497A", datetime.date(2026, 11, 6))
    with pytest.raises(PermissionDenied):
        lot_services.lot_priority_set(actor=cast.technician, lot=plan.lot, priority=1,
                                      reason="x")
    with pytest.raises(ValidationError, match="why"):
        lot_services.lot_priority_set(actor=cast.engineer, lot=plan.lot, priority=1, reason="")
    plan.lot.refresh_from_db()
    assert plan.lot.priority == 0
