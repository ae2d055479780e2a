"""Nonconformances and their dispositions, instrument deviations, calibration status,
consumables and salt fog checks."""

import datetime
from decimal import Decimal

import pytest
from django.core.exceptions import PermissionDenied, ValidationError

from labrecords import clock
from labrecords.models import (
    AuditEntry,
    Disposition,
    LotStage,
    Nonconformance,
    PlanStatus,
    TestPlan,
)
from labrecords.services import consumables, instruments, nonconformances
from labrecords.services.bench import InspectionEntry, ResultValues
from labrecords.services.instruments import CalibrationStatus, calibration_state
from tests.factories import InstrumentFactory, WitnessPieceFactory
from tests.labrecords.bench_support import NOW, TODAY, at, bench_setup, record, record_through

pytestmark = pytest.mark.django_db
DAY = datetime.timedelta(days=1)


def _failed_humidity(cast):
    b = bench_setup(cast)
    record_through(b, 2)
    failed = record(b, 3, values=ResultValues(inspection=InspectionEntry(
        no_defects=False, defects=({"defect": "blistering", "zone": "centre"},))))
    return b, failed


# ---------------------------------------------------------------- nonconformances


def test_a_failed_step_opens_a_numbered_coating_failure_nonconformance(cast):
    b, failed = _failed_humidity(cast)
    nc = Nonconformance.objects.get()
    assert nc.kind == "coating_failure" and nc.result == failed and nc.lot == b.piece.lot
    assert nc.number == "NC-26-0001" and nc.disposition == ""
    assert b.piece.ident in nc.description and "blistering" in nc.description
    assert nc.opened_by == cast.technician
    assert AuditEntry.objects.filter(model="labrecords.Nonconformance", action="open").exists()


def test_numbers_follow_on_and_skip_a_number_taken_meanwhile(cast):
    b, failed = _failed_humidity(cast)
    with clock.frozen_at(NOW):
        second = nonconformances.nonconformance_open(
            actor=cast.quality_manager, kind="equipment", lot=b.piece.lot,
            description="test entry")
    assert second.number == "NC-26-0002"
    # Another opening took the next number between our read and our insert: the unique
    # constraint refuses ours and the retry takes the following one.
    original = nonconformances._next_number
    calls = []

    def stale_then_fresh(prefix):
        calls.append(prefix)
        return "NC-26-0002" if len(calls) == 1 else original(prefix)

    nonconformances._next_number = stale_then_fresh
    try:
        with clock.frozen_at(NOW):
            third = nonconformances.nonconformance_open(
                actor=cast.quality_manager, kind="equipment", lot=b.piece.lot,
                description="another")
    finally:
        nonconformances._next_number = original
    assert third.number == "NC-26-0003" and len(calls) == 2


def test_only_the_quality_manager_disposes_and_only_once(cast):
    _, failed = _failed_humidity(cast)
    nc = Nonconformance.objects.get()
    with pytest.raises(PermissionDenied):
        nonconformances.nonconformance_dispose(actor=cast.technician, nonconformance=nc,
                                               disposition="reject_lot", note="x")
    with clock.frozen_at(NOW):
        nonconformances.nonconformance_dispose(actor=cast.quality_manager, nonconformance=nc,
                                               disposition="reject_lot",
                                               note="blistering on the witness")
        with pytest.raises(ValidationError, match="already has a disposition"):
            nonconformances.nonconformance_dispose(
                actor=cast.quality_manager, nonconformance=nc, disposition="no_impact",
                note="second thoughts")
    nc.refresh_from_db()
    assert nc.disposition == Disposition.REJECT_LOT and nc.disposed_by == cast.quality_manager


def test_a_concession_needs_the_customers_agreement_reference(cast):
    _failed_humidity(cast)
    nc = Nonconformance.objects.get()
    with clock.frozen_at(NOW), pytest.raises(ValidationError) as error:
        nonconformances.nonconformance_dispose(actor=cast.quality_manager, nonconformance=nc,
                                               disposition="concession")
    assert "customer_agreement_ref" in error.value.message_dict
    with clock.frozen_at(NOW):
        nonconformances.nonconformance_dispose(
            actor=cast.quality_manager, nonconformance=nc, disposition="concession",
            customer_agreement_ref="customer e-mail 2026-11-09, ref CA-17")
    nc.refresh_from_db()
    assert nc.customer_agreement_ref == "customer e-mail 2026-11-09, ref CA-17"


def test_a_retest_releases_a_plan_revision_repeating_the_sequence_on_a_new_piece(cast):
    b, failed = _failed_humidity(cast)
    spare = WitnessPieceFactory(lot=b.piece.lot, ident=f"{b.piece.lot.number}-SPARE")
    nc = Nonconformance.objects.get()
    with clock.frozen_at(NOW):
        outcome = nonconformances.nonconformance_dispose(
            actor=cast.quality_manager, nonconformance=nc, disposition="retest")
    plan = outcome.retest_plan
    assert plan.status == PlanStatus.RELEASED and plan.supersedes == b.plan
    assert list(TestPlan.objects.current_released().filter(lot=b.piece.lot)) == [plan]
    assert outcome.retest_pieces == [spare]
    repeated = next(s for s in outcome.retest_steps if s.retest_of.step_key == failed.step_key)
    assert repeated.step_key != failed.step_key and repeated.kind == "humidity"
    assert repeated.sequence.label == "A-R1"
    # The rest of the plan is unchanged and keeps its step keys, so results follow.
    assert set(plan.steps.filter(retest_of__isnull=True).values_list("step_key", flat=True)) \
        == set(b.plan.steps.values_list("step_key", flat=True))
    lot = b.piece.lot
    lot.refresh_from_db()
    assert lot.stage == LotStage.RETEST
    nc.refresh_from_db()
    assert nc.disposition == "retest" and spare.ident in nc.disposition_note


def test_a_retest_without_a_free_piece_is_refused_saying_how_many(cast):
    _failed_humidity(cast)
    nc = Nonconformance.objects.get()
    with clock.frozen_at(NOW), pytest.raises(ValidationError, match="needs 1 new witness"):
        nonconformances.nonconformance_dispose(actor=cast.quality_manager, nonconformance=nc,
                                               disposition="retest")
    nc.refresh_from_db()
    assert nc.disposition == ""


# ---------------------------------------------------------------- calibration status


@pytest.mark.parametrize(("due", "status"), [
    # Valid through the due date, out of calibration from the day after (the glossary's
    # definition of an instrument; ISO/IEC 17025 6.4.8 asks for the status to be visible,
    # records-and-security.md).
    (TODAY + 31 * DAY, CalibrationStatus.VALID),
    (TODAY + 30 * DAY, CalibrationStatus.DUE_SOON),
    (TODAY, CalibrationStatus.DUE_SOON),
    (TODAY - DAY, CalibrationStatus.OUT_OF_CALIBRATION),
])
def test_calibration_status_is_computed_from_the_due_date(due, status):
    assert calibration_state(calibration_due=due, today=TODAY).status == status


def test_an_instrument_out_of_service_shows_so_whatever_its_due_date():
    state = calibration_state(calibration_due=TODAY + 100 * DAY, today=TODAY, in_service=False)
    assert state.status == CalibrationStatus.OUT_OF_SERVICE


def test_out_of_calibration_names_the_first_day_out():
    state = calibration_state(calibration_due=TODAY - DAY, today=TODAY)
    assert state.label == "out of calibration since 2026-11-10"


# ---------------------------------------------------------------- deviations


def test_a_deviation_lists_the_results_that_used_the_instrument_since_then_and_opens_ncs(cast):
    b = bench_setup(cast)
    gauge = InstrumentFactory(ident="FG-D1", calibration_due=TODAY + 200 * DAY)
    before = record(b, 1, instruments=[b.microscope, gauge],
                    observed_at=at(TODAY - 5 * DAY, 9))
    after = record(b, 2, instruments=[gauge], observed_at=at(TODAY - 2 * DAY, 9))
    exposed = record(b, 3)  # in a run of the chamber, not the gauge
    with clock.frozen_at(NOW):
        outcome = instruments.instrument_deviation_record(
            actor=cast.quality_manager, instrument=gauge, since=TODAY - 3 * DAY,
            description="reads 4 % high at 5 N", take_out_of_service=True)
    assert outcome.results == [after]
    assert before not in outcome.results and exposed not in outcome.results
    assert [n.result for n in outcome.nonconformances] == [after]
    nc = outcome.nonconformances[0]
    assert nc.kind == "equipment" and "FG-D1" in nc.description
    gauge.refresh_from_db()
    assert gauge.in_service is False
    # Recording the same deviation again opens no second nonconformance for the result.
    with clock.frozen_at(NOW):
        again = instruments.instrument_deviation_record(
            actor=cast.quality_manager, instrument=gauge, since=TODAY - 3 * DAY,
            description="confirmed by the calibration lab")
    assert again.results == [after] and again.nonconformances == []


def test_a_chamber_deviation_reaches_results_through_their_runs(cast):
    b = bench_setup(cast)
    record_through(b, 2)
    exposed = record(b, 3)
    with clock.frozen_at(NOW):
        outcome = instruments.instrument_deviation_record(
            actor=cast.quality_manager, instrument=b.chamber, since=TODAY - 10 * DAY,
            description="humidity sensor drifted")
    assert outcome.results == [exposed]
    assert outcome.nonconformances[0].result == exposed


def test_only_the_quality_manager_records_a_deviation_and_not_in_the_future(cast):
    gauge = InstrumentFactory(ident="FG-D2")
    with pytest.raises(PermissionDenied):
        instruments.instrument_deviation_record(actor=cast.technician, instrument=gauge,
                                                since=TODAY, description="x")
    with clock.frozen_at(NOW), pytest.raises(ValidationError) as error:
        instruments.instrument_deviation_record(actor=cast.quality_manager, instrument=gauge,
                                                since=TODAY + DAY, description="x")
    assert "since" in error.value.message_dict


# ---------------------------------------------------------------- consumables


def test_a_consumable_lot_is_registered_once_and_expiry_not_before_receipt(cast):
    with clock.frozen_at(NOW):
        consumables.consumable_register(
            actor=cast.technician, kind="solvent", name="Acetone", grade="reagent grade",
            supplier_lot="AC-1", expiry=TODAY + 300 * DAY, received_on=TODAY)
        with pytest.raises(ValidationError):
            consumables.consumable_register(
                actor=cast.technician, kind="solvent", name="Acetone", supplier_lot="AC-1",
                expiry=TODAY + 300 * DAY, received_on=TODAY)
        with pytest.raises(ValidationError) as error:
            consumables.consumable_register(
                actor=cast.technician, kind="solvent", name="Acetone", supplier_lot="AC-2",
                expiry=TODAY - DAY, received_on=TODAY)
    assert "expiry" in error.value.message_dict
    with pytest.raises(PermissionDenied):
        consumables.consumable_register(
            actor=cast.reviewer, kind="tape", name="Tape", supplier_lot="T-9",
            expiry=TODAY, received_on=TODAY)


@pytest.mark.parametrize(("quantity", "value", "within"), [
    # MIL-STD-810 method 509 salt fog, per test-methods.md [pub]: fallout 1-3 ml per
    # 80 cm² per hour, pH 6.5-7.2, NaCl 5 ± 1 %; limits inclusive.
    ("collection_rate", "1.0", True),
    ("collection_rate", "3.0", True),
    ("collection_rate", "0.9", False),
    ("collection_rate", "3.1", False),
    ("ph", "6.5", True),
    ("ph", "7.2", True),
    ("ph", "6.4", False),
    ("ph", "7.3", False),
    ("concentration", "4.0", True),
    ("concentration", "6.1", False),
])
def test_salt_fog_checks_against_method_509_limits(cast, quantity, value, within):
    from durability.services import catalogue_seed

    catalogue_seed()
    with clock.frozen_at(NOW):
        solution = consumables.consumable_register(
            actor=cast.technician, kind="salt_solution", name="NaCl 5 %", supplier_lot="S-1",
            expiry=TODAY + 30 * DAY, received_on=TODAY)
        check = consumables.consumable_check_record(
            actor=cast.technician, quantity=quantity, value=Decimal(value), consumable=solution)
    assert check.within_limits is within
    assert AuditEntry.objects.get(model="labrecords.ConsumableCheck").reason.startswith(
        "limits from MIL-STD-810:509 v")


def test_salt_fog_limits_fall_back_to_the_published_values_without_the_catalogue():
    limits = consumables.salt_fog_limits("ph")
    # MIL-STD-810 method 509 pH 6.5-7.2 (test-methods.md [pub]).
    assert (limits.low, limits.high) == (Decimal("6.5"), Decimal("7.2"))
    assert "as published" in limits.source
