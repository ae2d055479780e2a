"""Bench services: verdicts per rule, validity (calibration, expiry), authorisation, the
sequence order, corrections and the stale-save refusal, the lot stage."""

import datetime
from decimal import Decimal

import pytest
from django.core.exceptions import PermissionDenied, ValidationError

from durability.grading import CORRESPONDENCE_NOTE
from durability.verdicts import CALIBRATION_CONVENTION, SpectralStatistic
from labrecords import clock
from labrecords.models import (
    AuditEntry,
    LotStage,
    Nonconformance,
    Observation,
    StepResult,
    StepResultInstrument,
)
from labrecords.services import authorisations, bench, consumables
from labrecords.services.bench import InspectionEntry, ResultValues, StaleResultError
from tests.factories import InstrumentFactory, LotFactory
from tests.labrecords.bench_support import NOW, TODAY, at, bench_setup, record, record_through

pytestmark = pytest.mark.django_db
DAY = datetime.timedelta(days=1)


# ---------------------------------------------------------------- verdicts per rule


def test_an_initial_inspection_is_recorded_only_and_links_an_initial_observation(cast):
    b = bench_setup(cast)
    result = record(b, 1)
    assert result.verdict == "pass"
    assert "recorded" in result.verdict_reason
    assert result.observation.point == "initial" and result.observation.no_defects
    assert result.instrument_links.get().instrument == b.microscope
    assert AuditEntry.objects.filter(model="labrecords.StepResult", action="record",
                                     object_pk=str(result.pk)).exists()


def test_tape_adhesion_passes_when_no_coating_is_removed_and_fails_naming_where(cast):
    b = bench_setup(cast)
    record_through(b, 4)
    failed = record(b, 5, values=ResultValues(coating_removed=True,
                                              removal_location="edge at 3 o'clock"))
    assert failed.verdict == "fail"
    # MIL-C-48497A adhesion: no coating removed (test-methods.md [pub]).
    assert "edge at 3 o'clock" in failed.verdict_reason
    assert "MIL-C-48497A" in failed.verdict_reason
    other = bench_setup(cast)
    record_through(other, 4)
    passed = record(other, 5)
    assert passed.verdict == "pass" and "no coating was removed" in passed.verdict_reason


def test_tape_adhesion_without_a_location_is_refused_on_that_field(cast):
    b = bench_setup(cast)
    record_through(b, 4)
    with pytest.raises(ValidationError) as error:
        record(b, 5, values=ResultValues(coating_removed=True))
    assert "removal_location" in error.value.message_dict
    assert not StepResult.objects.filter(step_key=b.step(5).step_key).exists()


def test_humidity_fails_when_a_listed_defect_appears_after_exposure(cast):
    b = bench_setup(cast)
    record_through(b, 2)
    result = record(b, 3, values=ResultValues(inspection=InspectionEntry(
        no_defects=False, defects=({"defect": "peeling", "zone": "centre", "quantity": 2},))))
    # MIL-C-48497A humidity: no flaking, peeling, cracking or blistering (test-methods.md
    # [pub]/[mem]); the comparison is against the piece's initial inspection.
    assert result.verdict == "fail"
    assert "peeling appeared after exposure" in result.verdict_reason
    assert result.values["comparison"]["new_defects"] == ["peeling"]
    assert result.chamber_run.chamber == b.chamber
    assert result.observation.point == "after_exposure"


def test_a_defect_already_in_the_initial_inspection_and_not_worse_passes(cast):
    b = bench_setup(cast)
    stain = ({"defect": "peeling", "zone": "edge", "quantity": 1, "size": 1},)
    record(b, 1, values=ResultValues(inspection=InspectionEntry(no_defects=False,
                                                                defects=stain)))
    record(b, 2)
    same = record(b, 3, values=ResultValues(inspection=InspectionEntry(no_defects=False,
                                                                       defects=stain)))
    assert same.verdict == "pass"
    assert "present before exposure and not worse: peeling" in same.verdict_reason


def test_crosshatch_class_from_the_share_with_both_scales_and_the_correspondence_note(cast):
    b = bench_setup(cast, callouts="ISO 2409 class 1 max")
    record_through(b, 2)
    # ISO 2409 / ASTM D3359 method B: up to 5 % detached is class 1 / 4B (test-methods.md
    # [pub]); exactly 5 % takes the better class under the stated convention.
    result = record(b, 3, values=ResultValues(detached_share_pct=5.0))
    assert result.verdict == "pass"
    assert result.values["crosshatch"]["iso2409"] == 1
    assert result.values["crosshatch"]["astm_d3359"] == "4B"
    assert CORRESPONDENCE_NOTE in result.conventions
    other = bench_setup(cast, callouts="ISO 2409 class 1 max")
    record_through(other, 2)
    # Over 5 to 15 % is class 2 / 3B (same table), beyond the class 1 maximum.
    failed = record(other, 3, values=ResultValues(detached_share_pct=5.5))
    assert failed.verdict == "fail" and failed.values["crosshatch"]["astm_d3359"] == "3B"


def test_a_crosshatch_class_that_contradicts_the_share_is_refused(cast):
    b = bench_setup(cast, callouts="ISO 2409 class 1 max")
    record_through(b, 2)
    with pytest.raises(ValidationError) as error:
        record(b, 3, values=ResultValues(detached_share_pct=20.0, crosshatch_class=1))
    assert "crosshatch_class" in error.value.message_dict


def test_scratch_dig_at_final_inspection(cast):
    from durability.surface.scratch_dig import Dig, Scratch, ScratchDigObservation

    b = bench_setup(cast, callouts="Mil-C-48497a\n60-40")
    record_through(b, 7)
    # MIL-PRF-13830B (computations.md [pub]): maximum-number scratches may total D/4 in
    # length; D = 20 mm gives 5 mm, so one 60 scratch of 4 mm passes and of 6 mm fails.
    ok = ScratchDigObservation(aperture_diameter_mm=20.0, scratches=(Scratch(60, 4.0),),
                               digs=(Dig(0.3),))
    inspection = InspectionEntry(no_defects=False, defects=({"defect": "scratches"},))
    result = record(b, 8, values=ResultValues(inspection=inspection, scratch_dig=ok))
    assert result.verdict == "pass" and "60-40" in result.verdict_reason
    other = bench_setup(cast, callouts="Mil-C-48497a\n60-40")
    record_through(other, 7)
    too_long = ScratchDigObservation(aperture_diameter_mm=20.0, scratches=(Scratch(60, 6.0),))
    failed = record(other, 8, values=ResultValues(inspection=inspection, scratch_dig=too_long))
    assert failed.verdict == "fail" and failed.verdict_clause == "MIL-PRF-13830B"


def test_iso_10110_7_area_budget_at_final_inspection(cast):
    from durability.surface.iso10110 import Iso10110Observation

    b = bench_setup(cast, callouts="5/3x0,16; L2x0.004; E0.5\nISO 9211-4-02-02")
    final = next(s for s in b.steps if s.role == "final_inspection")
    record_through(b, final.order - 1)
    # ISO 10110-7 area equivalence (computations.md [pub]): three imperfections of grade
    # 0.16 mm use the budget N x A^2 exactly; a value equal to its limit passes.
    result = record(b, final.order, values=ResultValues(
        inspection=InspectionEntry(no_defects=True),
        surface=Iso10110Observation(imperfections_mm=(0.16, 0.16, 0.16))))
    assert result.verdict == "pass"
    other = bench_setup(cast, callouts="5/3x0,16; L2x0.004; E0.5\nISO 9211-4-02-02")
    record_through(other, final.order - 1)
    failed = record(other, final.order, values=ResultValues(
        inspection=InspectionEntry(no_defects=True),
        surface=Iso10110Observation(imperfections_mm=(0.16, 0.16, 0.16, 0.16))))
    assert failed.verdict == "fail"


def _spectral_lot(decision_rule: str = "simple"):
    from tests.factories import OrderFactory

    lot = LotFactory(order=OrderFactory(decision_rule=decision_rule))
    spec = lot.spec
    spec.wavelength_min_nm, spec.wavelength_max_nm = Decimal(400), Decimal(700)
    spec.quantity, spec.statistic, spec.limit_max_pct = "R", "average", Decimal("0.5")
    spec.save()
    return lot


def _average_r(value, uncertainty=None):
    return ResultValues(spectral=(SpectralStatistic(
        band_nm=(400.0, 700.0), quantity="R", statistic="average", value=value,
        expanded_uncertainty=uncertainty),))


def test_spectral_limits_simple_and_guarded_acceptance(cast):
    b = bench_setup(cast, lot=_spectral_lot())
    record(b, 1)
    # Simple acceptance: the value against the limit itself, equal passes (ILAC-G8, from
    # memory, as durability.verdicts states).
    assert record(b, 2, values=_average_r(0.5)).verdict == "pass"
    guarded = bench_setup(cast, lot=_spectral_lot("guard_band"))
    record(guarded, 1)
    # Guarded acceptance: 0.45 % with U = 0.1 % is above max - w = 0.4 %.
    result = record(guarded, 2, values=_average_r(0.45, 0.1))
    assert result.verdict == "fail" and "acceptance limit 0.4 %" in result.verdict_reason


def test_a_judgement_step_is_recorded_by_an_engineer_only(cast):
    b = bench_setup(cast, callouts="ISO 9022-12-06-1")
    record_through(b, 2)
    with pytest.raises(PermissionDenied, match="engineer"):
        record(b, 3)
    result = record(b, 3, actor=b.engineer)
    assert result.verdict == "pass" and "judged the result a pass" in result.verdict_reason


# ---------------------------------------------------------------- validity


def test_an_instrument_is_valid_through_its_calibration_due_date(cast):
    b = bench_setup(cast)
    on_the_day = InstrumentFactory(ident="FG-T1", calibration_due=TODAY)
    result = record(b, 1, instruments=[on_the_day], observed_at=at(TODAY, 9))
    assert result.verdict == "pass" and CALIBRATION_CONVENTION in result.conventions
    assert StepResultInstrument.objects.get(result=result).calibration_due == TODAY


def test_an_instrument_out_of_calibration_since_yesterday_refuses_the_result(cast):
    b = bench_setup(cast)
    lapsed = InstrumentFactory(ident="FG-T2", calibration_due=TODAY - DAY)
    with pytest.raises(ValidationError) as error:
        record(b, 1, instruments=[lapsed], observed_at=at(TODAY, 9))
    message = error.value.message_dict["instruments"][0]
    assert "FG-T2 was out of calibration on 2026-11-10" in message
    assert "Nothing was saved" in message
    assert not StepResult.objects.exists() and not Observation.objects.exists()


def test_a_quality_manager_may_authorise_recording_it_as_invalid_which_opens_a_nc(cast):
    b = bench_setup(cast)
    lapsed = InstrumentFactory(ident="FG-T3", calibration_due=TODAY - DAY)
    with pytest.raises(ValidationError, match="reason"):
        record(b, 1, instruments=[lapsed], invalid_authorised_by=b.quality_manager)
    with pytest.raises(ValidationError, match="not a quality manager"):
        record(b, 1, instruments=[lapsed], invalid_authorised_by=b.engineer,
               invalid_reason="x")
    result = record(b, 1, instruments=[lapsed], invalid_authorised_by=b.quality_manager,
                    invalid_reason="inspection could not wait; repeat on a new piece")
    assert result.verdict == "invalid"
    assert result.invalid_authorised_by == b.quality_manager
    assert "not a coating failure" in result.verdict_reason
    nc = Nonconformance.objects.get(result=result)
    assert nc.kind == "invalid_test" and nc.number == "NC-26-0001"


def test_quality_manager_fields_without_a_validity_problem_are_refused(cast):
    b = bench_setup(cast)
    with pytest.raises(ValidationError) as error:
        record(b, 1, invalid_authorised_by=b.quality_manager, invalid_reason="just in case")
    assert "invalid_reason" in error.value.message_dict


def test_a_consumable_is_usable_through_its_expiry_and_refused_the_day_after(cast):
    b = bench_setup(cast)
    record_through(b, 4)
    with clock.frozen_at(NOW):
        last_day = consumables.consumable_register(
            actor=cast.technician, kind="tape", name="Tape", supplier_lot="T-LAST",
            expiry=TODAY, received_on=TODAY - 60 * DAY)
        expired = consumables.consumable_register(
            actor=cast.technician, kind="tape", name="Tape", supplier_lot="T-OLD",
            expiry=TODAY - DAY, received_on=TODAY - 60 * DAY)
    with pytest.raises(ValidationError) as error:
        record(b, 5, consumables=[expired])
    assert "lot T-OLD was past its expiry on 2026-11-10" in error.value.message_dict[
        "consumables"][0]
    assert record(b, 5, consumables=[last_day]).verdict == "pass"


def test_an_instrument_out_of_service_is_refused(cast):
    b = bench_setup(cast)
    retired = InstrumentFactory(ident="OLD-1", in_service=False)
    with pytest.raises(ValidationError, match="out of service"):
        record(b, 1, instruments=[retired])


def test_observed_at_in_the_future_is_refused(cast):
    b = bench_setup(cast)
    with pytest.raises(ValidationError) as error:
        record(b, 1, observed_at=NOW + datetime.timedelta(minutes=1))
    assert "observed_at" in error.value.message_dict


# ---------------------------------------------------------------- who and in which order


def test_a_technician_not_on_the_authorisation_list_is_refused(cast):
    b = bench_setup(cast, authorise=False)
    with pytest.raises(PermissionDenied, match="not authorised to record LAB:inspection"):
        record(b, 1)
    method = b.step(1).method_version.method
    with clock.frozen_at(NOW):
        grant = authorisations.method_authorisation_grant(
            actor=cast.quality_manager, user=cast.technician, method=method)
    record(b, 1)
    with clock.frozen_at(NOW):
        authorisations.method_authorisation_revoke(
            actor=cast.quality_manager, authorisation=grant, reason="training lapsed")
    assert AuditEntry.objects.filter(model="labrecords.MethodAuthorisation",
                                     reason="training lapsed").exists()
    other = bench_setup(cast, authorise=False)
    with pytest.raises(PermissionDenied):
        record(other, 1)


def test_only_the_quality_manager_grants_and_a_customer_cannot_be_granted(cast):
    b = bench_setup(cast, authorise=False)
    method = b.step(1).method_version.method
    with pytest.raises(PermissionDenied):
        authorisations.method_authorisation_grant(actor=cast.technician,
                                                  user=cast.technician, method=method)
    with pytest.raises(ValidationError, match="no role the list is for"):
        authorisations.method_authorisation_grant(actor=cast.quality_manager,
                                                  user=cast.customer, method=method)


def test_a_reviewer_on_the_list_may_review_the_method_but_still_cannot_record(cast):
    b = bench_setup(cast)
    method = b.step(1).method_version.method
    authorisations.method_authorisation_grant(actor=cast.quality_manager, user=cast.reviewer,
                                              method=method, reason="trained reviewer")
    assert authorisations.is_authorised(cast.reviewer, method)
    with pytest.raises(PermissionDenied):
        record(b, 1, actor=cast.reviewer)


def test_a_reviewer_cannot_record(cast):
    b = bench_setup(cast)
    with pytest.raises(PermissionDenied):
        record(b, 1, actor=cast.reviewer)


def test_steps_are_recorded_in_sequence_order(cast):
    b = bench_setup(cast)
    record(b, 1)
    with pytest.raises(ValidationError, match=r"Step 2 \(.*\) comes first"):
        record(b, 3)


# ---------------------------------------------------------------- corrections


def test_a_correction_is_a_new_revision_with_who_when_why_and_a_new_verdict(cast):
    b = bench_setup(cast)
    record_through(b, 4)
    first = record(b, 5)
    with clock.frozen_at(NOW + datetime.timedelta(hours=1)):
        corrected = bench.step_result_correct(
            actor=cast.engineer, revision=first, reason="the photo shows a lifted edge",
            values=ResultValues(coating_removed=True, removal_location="edge, 1 mm"),
            instruments=[b.microscope], consumables=[b.tape])
    assert corrected.number == 2 and corrected.supersedes == first
    assert corrected.verdict == "fail" and corrected.reason == "the photo shows a lifted edge"
    assert corrected.recorded_by == cast.engineer
    assert list(StepResult.objects.current().filter(record_key=first.record_key)) == [corrected]
    entry = AuditEntry.objects.get(model="labrecords.StepResult", action="correct")
    assert entry.changes["verdict"] == ["pass", "fail"]
    assert Nonconformance.objects.get(result=corrected).kind == "coating_failure"


def test_the_second_of_two_corrections_of_one_revision_is_refused_with_the_current_value(cast):
    b = bench_setup(cast)
    record_through(b, 4)
    first = record(b, 5)
    with clock.frozen_at(NOW + datetime.timedelta(hours=1)):
        winner = bench.step_result_correct(
            actor=cast.technician, revision=first, reason="wrong tape lot noted",
            values=ResultValues(coating_removed=False), instruments=[b.microscope])
        before = StepResult.objects.count()
        with pytest.raises(StaleResultError) as error:
            bench.step_result_correct(
                actor=cast.engineer, revision=first, reason="a second look",
                values=ResultValues(coating_removed=True, removal_location="centre"))
    assert error.value.current == winner
    assert "revision 2" in str(error.value) and "Pass" in str(error.value)
    assert "Nothing was saved" in str(error.value)
    assert StepResult.objects.count() == before  # exactly one revision was added, by the winner
    assert StepResult.objects.filter(record_key=first.record_key).count() == 2


def test_recording_a_step_someone_recorded_first_is_refused_with_their_value(cast):
    b = bench_setup(cast)
    first = record(b, 1)
    # A second bench had the same step open and saves after the first one.
    with pytest.raises(StaleResultError) as error:
        record(b, 1, actor=cast.engineer, values=ResultValues(
            inspection=InspectionEntry(no_defects=False, defects=({"defect": "haze"},))))
    assert error.value.current == first and "recorded this result first" in str(error.value)
    assert StepResult.objects.count() == 1 and Observation.objects.count() == 1


def test_a_correction_needs_a_reason(cast):
    b = bench_setup(cast)
    first = record(b, 1)
    with pytest.raises(ValidationError, match="why"):
        bench.step_result_correct(actor=cast.technician, revision=first, reason=" ",
                                  values=ResultValues())


# ---------------------------------------------------------------- lot stage


def test_the_lot_moves_to_in_test_then_results_complete(cast):
    b = bench_setup(cast)
    lot = b.piece.lot
    assert lot.stage == LotStage.PLANNED
    record(b, 1)
    lot.refresh_from_db()
    assert lot.stage == LotStage.IN_TEST
    assert len(bench.lot_outstanding_steps(lot)) == len(b.steps) - 1
    record_through_rest = [s.order for s in b.steps if s.order > 1]
    for order in record_through_rest:
        record(b, order)
    lot.refresh_from_db()
    assert bench.lot_outstanding_steps(lot) == []
    assert lot.stage == LotStage.RESULTS_COMPLETE


def test_an_invalid_result_keeps_the_lot_open_until_its_disposition(cast):
    from labrecords.services.nonconformances import nonconformance_dispose

    b = bench_setup(cast)
    record_through(b, len(b.steps) - 1)
    lapsed = InstrumentFactory(ident="SP-T9", calibration_due=TODAY - DAY)
    last = record(b, len(b.steps), instruments=[lapsed],
                  invalid_authorised_by=b.quality_manager, invalid_reason="spectrometer lapsed")
    lot = b.piece.lot
    lot.refresh_from_db()
    assert lot.stage == LotStage.IN_TEST
    assert "awaits the quality manager's disposition" in bench.lot_outstanding_steps(lot)[0]
    with clock.frozen_at(NOW):
        nonconformance_dispose(actor=cast.quality_manager,
                               nonconformance=Nonconformance.objects.get(result=last),
                               disposition="no_impact",
                               note="the initial spectrum with SP-02 covers the requirement")
    lot.refresh_from_db()
    assert lot.stage == LotStage.RESULTS_COMPLETE
