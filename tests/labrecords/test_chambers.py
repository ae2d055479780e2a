"""Chamber runs and their exposure checks, through the services (both databases)."""

from __future__ import annotations

import datetime
import random

import pytest
from django.core.exceptions import PermissionDenied, ValidationError
from django.core.files.storage import default_storage
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from labrecords import clock
from labrecords.models import AuditEntry, ChamberRunPiece, Evidence, ExposureCheck
from labrecords.selectors_chambers import (
    condition_of,
    exposure_counts_for,
    exposure_requirement,
    version_condition,
    version_parameters,
)
from labrecords.services import chambers
from labrecords.services.evidence import stored_name
from tests.labrecords.evidence_helpers import (
    HUMIDITY_LOG,
    LOADED,
    LOGGER,
    NOW,
    UNLOADED,
    berlin,
    chamber_instruments,
    finish_until,
    plan_lot,
    sequence_steps,
)

pytestmark = pytest.mark.django_db



@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path / "media"
    return settings.MEDIA_ROOT


@pytest.fixture
def humidity(cast):
    """Two lots of two customers, each piece at its humidity step (MIL-C-48497A plan)."""
    own = plan_lot(customer=cast.customer_org)
    other = plan_lot(customer=cast.other_org)
    pieces = []
    for plan in (own, other):
        piece = plan.assignments.get().piece
        finish_until(plan, piece, "humidity", berlin(2025, 6, 9, 10))
        pieces.append(piece)
    step = next(s for s in sequence_steps(own, pieces[0]) if s.kind == "humidity")
    chamber, logger = chamber_instruments()
    return {
        "plans": (own, other),
        "pieces": pieces,
        "step": step,
        "chamber": chamber,
        "logger": logger,
    }


def _load(cast, humidity, pieces=None, at=LOADED, now=NOW):
    with clock.frozen_at(now):
        return chambers.chamber_run_create(
            actor=cast.technician,
            chamber=humidity["chamber"],
            logger=humidity["logger"],
            method_version=humidity["step"].method_version,
            condition=condition_of(humidity["step"].parameters),
            loaded_at=at,
            pieces=pieces or humidity["pieces"],
        )


def _loaded_and_unloaded(cast, humidity):
    run = _load(cast, humidity)
    with clock.frozen_at(NOW):
        return chambers.chamber_run_unload(actor=cast.technician, run=run, unloaded_at=UNLOADED)


def test_the_condition_of_a_step_is_the_condition_of_its_method_version(humidity):
    step = humidity["step"]
    assert condition_of(step.parameters) == version_condition(step.method_version)
    # MIL-C-48497A humidity per shared/reference/test-methods.md [pub]/[mem].
    assert condition_of(step.parameters) == "49 ± 2 °C, 95–100 % RH, 24 h"


def test_it_loads_pieces_of_two_customers_whose_next_step_is_that_exposure(cast, humidity):
    run = _load(cast, humidity)
    assert run.ident == "HC-T1-250610-0800"
    links = ChamberRunPiece.objects.filter(run=run)
    assert {link.piece for link in links} == set(humidity["pieces"])
    assert {link.step_key for link in links} == {
        next(
            s for s in sequence_steps(p.assignments.get().plan, p) if s.kind == "humidity"
        ).step_key
        for p in humidity["pieces"]
    }
    assert AuditEntry.objects.filter(
        model="labrecords.ChamberRun", object_pk=str(run.pk), action="load pieces"
    ).exists()


def test_it_refuses_a_piece_whose_next_step_is_not_the_exposure(cast, humidity):
    fresh = plan_lot(customer=cast.customer_org)  # no step done: the next one is an inspection
    piece = fresh.assignments.get().piece
    with pytest.raises(ValidationError) as caught:
        _load(cast, humidity, pieces=[humidity["pieces"][0], piece])
    message = " ".join(caught.value.message_dict["pieces"])
    assert piece.ident in message and "Visual inspection" in message
    assert not ChamberRunPiece.objects.exists()


def test_it_refuses_another_condition(cast, humidity):
    with clock.frozen_at(NOW), pytest.raises(ValidationError) as caught:
        chambers.chamber_run_create(
            actor=cast.technician,
            chamber=humidity["chamber"],
            method_version=humidity["step"].method_version,
            condition="55 ± 2 °C, 93–97 % RH, 24 h",
            loaded_at=LOADED,
            pieces=humidity["pieces"],
        )
    assert "not humidity at 55 ± 2 °C" in " ".join(caught.value.message_dict["pieces"])


def test_it_refuses_loading_before_the_previous_step_was_done(cast, humidity):
    with pytest.raises(ValidationError) as caught:
        _load(cast, humidity, at=berlin(2025, 6, 9, 9))
    assert "comes before its previous step was done" in str(caught.value)


def test_it_refuses_a_logger_out_of_calibration_on_the_day_of_loading(cast, humidity):
    humidity["logger"].calibration_due = datetime.date(2025, 6, 9)
    humidity["logger"].save()
    with pytest.raises(ValidationError) as caught:
        _load(cast, humidity)
    assert "out of calibration on 2025-06-10" in caught.value.message_dict["logger"][0]


def test_it_refuses_a_piece_still_in_another_run(cast, humidity):
    _load(cast, humidity)
    with pytest.raises(ValidationError) as caught:
        _load(cast, humidity, at=berlin(2025, 6, 10, 9))
    assert "still in chamber run HC-T1-250610-0800" in str(caught.value)


def test_a_reviewer_may_not_load_a_run(cast, humidity):
    with clock.frozen_at(NOW), pytest.raises(PermissionDenied):
        chambers.chamber_run_create(
            actor=cast.reviewer,
            chamber=humidity["chamber"],
            method_version=humidity["step"].method_version,
            condition=condition_of(humidity["step"].parameters),
            loaded_at=LOADED,
            pieces=humidity["pieces"],
        )


def test_unloading_is_recorded_once_and_after_loading(cast, humidity):
    run = _load(cast, humidity)
    with clock.frozen_at(NOW), pytest.raises(ValidationError):
        chambers.chamber_run_unload(actor=cast.technician, run=run, unloaded_at=LOADED)
    with clock.frozen_at(NOW):
        chambers.chamber_run_unload(actor=cast.technician, run=run, unloaded_at=UNLOADED)
        with pytest.raises(ValidationError) as caught:
            chambers.chamber_run_unload(actor=cast.technician, run=run, unloaded_at=UNLOADED)
    assert "already unloaded" in str(caught.value)
    run.refresh_from_db()
    assert run.unloaded_at == UNLOADED


def test_the_humidity_sample_log_counts_cumulatively_with_interpolated_crossings(cast, humidity):
    run = _loaded_and_unloaded(cast, humidity)
    assert exposure_counts_for(run) is None
    with clock.frozen_at(NOW):
        check = chambers.chamber_log_upload(
            actor=cast.technician, run=run, data=HUMIDITY_LOG, original_name="C:\\logs\\run 7.csv"
        )
    summary = check.summary
    verification = summary["verification"]
    # Hand-worked in fixtures/instrument-files/logger/README.md: 1550 - 35 - 21 1/3 - 50 min
    # in tolerance under linear interpolation = 24.0611 h; the longest run 35:00 -> 606:40.
    assert verification["in_tolerance_hours"] == pytest.approx(
        (1550 - 35 - 64 / 3 - 50) / 60, abs=1e-6
    )
    assert verification["longest_run_hours"] == pytest.approx((606 + 2 / 3 - 35) / 60, abs=1e-6)
    assert check.counts is True and exposure_counts_for(run) is True
    assert check.convention == "interpolated"
    assert verification["duration_rule"] == "cumulative"
    assert "does not say" in summary["duration_rule_source"]
    causes = [tuple(e["causes"]) for e in verification["excursions"]]
    assert causes == [("humidity low", "temperature low"), ("humidity low",), ("no data",)]
    dip = verification["excursions"][1]
    assert dip["worst"][0]["corrected"] == pytest.approx(91.0)
    assert dip["direction"] == "less severe"
    assert summary["time_zone"] == "Europe/Berlin"
    assert len(summary["readings"]["seconds"]) == 152
    assert summary["summary"].startswith("The exposure counts")
    # Stored by content; the client's name is only a label.
    evidence = check.evidence
    assert evidence.kind == "chamber_log" and evidence.chamber_run == run
    assert evidence.file.name == stored_name(evidence.sha256)
    assert "run 7" not in evidence.file.name and evidence.original_name == "run 7.csv"
    assert default_storage.open(evidence.file.name).read() == HUMIDITY_LOG


def test_hold_convention_and_a_continuous_rule_are_selectable_and_stated(cast, humidity):
    run = _loaded_and_unloaded(cast, humidity)
    with clock.frozen_at(NOW):
        held = chambers.chamber_log_upload(
            actor=cast.technician,
            run=run,
            data=HUMIDITY_LOG,
            original_name="log.csv",
            interpolation="hold",
        )
    # Hand-worked (same README): hold gives 1550 - 40 - 20 - 50 = 1440 min, exactly 24 h,
    # and a stated time is a minimum (ISO 9022 [pub]), so it counts.
    assert held.summary["verification"]["in_tolerance_hours"] == pytest.approx(24.0, abs=1e-9)
    assert held.counts is True and held.convention == "hold"
    assert "zero-order hold" in held.summary["verification"]["convention_text"]
    with clock.frozen_at(NOW + datetime.timedelta(minutes=5)):
        continuous = chambers.chamber_log_upload(
            actor=cast.technician,
            run=run,
            data=HUMIDITY_LOG,
            original_name="log.csv",
            duration_rule="continuous",
        )
    # Continuous: the longest run (9.5278 h) is short of 24 h: the exposure does not count.
    assert continuous.counts is False
    assert exposure_counts_for(run) is False  # the latest check counts
    # The same bytes are stored once and both checks point at that evidence.
    assert Evidence.objects.filter(chamber_run=run).count() == 1
    assert ExposureCheck.objects.filter(run=run).count() == 2


def test_the_sensor_offset_is_applied_and_both_values_kept(cast, humidity):
    run = _loaded_and_unloaded(cast, humidity)
    with clock.frozen_at(NOW):
        check = chambers.chamber_log_upload(
            actor=cast.technician,
            run=run,
            data=HUMIDITY_LOG,
            original_name="log.csv",
            temperature_offset_k=-0.5,
            rh_offset_percent=1.5,
        )
    readings = check.summary["readings"]
    for raw, corrected in zip(readings["t_raw"], readings["t"], strict=True):
        assert corrected == pytest.approx(raw - 0.5)
    for raw, corrected in zip(readings["rh_raw"], readings["rh"], strict=True):
        assert corrected == pytest.approx(raw + 1.5)
    assert check.summary["verification"]["correction"]["temperature_offset_k"] == -0.5


def test_the_dew_point_of_the_set_point_is_given(cast, humidity):
    run = _loaded_and_unloaded(cast, humidity)
    with clock.frozen_at(NOW):
        check = chambers.chamber_log_upload(
            actor=cast.technician, run=run, data=HUMIDITY_LOG, original_name="log.csv"
        )
    rows = check.summary["dew_point"]["rows"]
    # Magnus with Alduchov-Eskridge 1996 coefficients (shared/reference/computations.md [pub]):
    # at 100 % RH the dew point equals the air temperature; at 95 % RH it is
    # b*g/(a-g) with g = ln(0.95) + a*49/(b+49).
    import math

    a, b = 17.625, 243.04
    gamma = math.log(0.95) + a * 49 / (b + 49)
    assert rows[0]["dew_point_c"] == pytest.approx(b * gamma / (a - gamma), abs=0.01)
    assert rows[1]["dew_point_c"] == pytest.approx(49.0, abs=0.01)


def test_a_log_in_another_time_zone_reports_the_dst_repeat(cast, humidity):
    run = _load(cast, humidity, at=berlin(2025, 10, 26, 0, 0), now=berlin(2025, 10, 27, 9))
    with clock.frozen_at(berlin(2025, 10, 27, 9)):
        chambers.chamber_run_unload(
            actor=cast.technician, run=run, unloaded_at=berlin(2025, 10, 26, 5, 0)
        )
        check = chambers.chamber_log_upload(
            actor=cast.technician,
            run=run,
            data=(LOGGER / "dst-fall-back.csv").read_bytes(),
            original_name="dst.csv",
            time_zone="Europe/Berlin",
        )
    warnings = check.summary["import"]["warnings"]
    assert any("occur twice in Europe/Berlin" in w for w in warnings)
    # 00:00-05:00 local across the change is 6 h of wall clock but 37 readings 10 min apart
    # in UTC (README of the logger samples): the log covers 6 h, not 5.
    assert check.summary["verification"]["exposure_hours"] == pytest.approx(6.0)


def test_a_method_version_without_a_tolerance_is_refused_by_name(cast):
    plan = plan_lot(customer=cast.customer_org, callouts="MIL-PRF-13830B App. C")
    step = next(s for s in plan.steps.all() if s.kind == "humidity")
    with pytest.raises(ValidationError) as caught:
        exposure_requirement(step.method_version)
    assert (
        "temperature_tolerance_c is to be entered" in caught.value.message_dict["method_version"][0]
    )


@pytest.mark.parametrize(
    ("mangle", "line"),
    [
        (lambda lines: lines.__setitem__(40, "2025-06-10T14:30:00,49.1"), 41),
        (lambda lines: lines.__setitem__(60, lines[60].replace("49.", "4x.")), 61),
        (lambda lines: lines.__setitem__(80, lines[79]), 81),
        (lambda lines: lines.__setitem__(100, lines[100].split(",")[0] + ",49.2,250"), 101),
    ],
    ids=["missing-column", "not-a-number", "repeated-time", "humidity-out-of-range"],
)
def test_a_malformed_log_names_the_line_and_stores_nothing(cast, humidity, media, mangle, line):
    run = _loaded_and_unloaded(cast, humidity)
    lines = HUMIDITY_LOG.decode().split("\n")
    mangle(lines)
    before = (Evidence.objects.count(), ExposureCheck.objects.count(), AuditEntry.objects.count())
    with clock.frozen_at(NOW), pytest.raises(ValidationError) as caught:
        chambers.chamber_log_upload(
            actor=cast.technician, run=run, data="\n".join(lines).encode(), original_name="bad.csv"
        )
    assert f"line {line}" in caught.value.message_dict["file"][0]
    assert (
        Evidence.objects.count(),
        ExposureCheck.objects.count(),
        AuditEntry.objects.count(),
    ) == before
    assert not (media / "evidence").exists()


_GARBAGE = st.sampled_from(["", "abc", "1e999", "--", "49..1", "NaN", "12:00", ";", "\x00"])


@settings(max_examples=40, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(
    row=st.integers(min_value=2, max_value=152),
    column=st.integers(0, 2),
    junk=_GARBAGE,
    seed=st.integers(0, 10_000),
)
def test_fuzzed_logs_either_check_or_name_a_line_and_store_nothing(
    cast, humidity, media, row, column, junk, seed
):
    run = humidity.get("run")
    if run is None:
        run = humidity["run"] = _loaded_and_unloaded(cast, humidity)
    lines = HUMIDITY_LOG.decode().split("\n")
    cells = lines[row - 1].split(",")
    cells[column] = junk
    if random.Random(seed).random() < 0.3:
        cells = cells[: random.Random(seed).randint(0, 2)]
    lines[row - 1] = ",".join(cells)
    data = "\n".join(lines).encode()
    counts = (Evidence.objects.count(), ExposureCheck.objects.count())
    try:
        with clock.frozen_at(NOW):
            chambers.chamber_log_upload(
                actor=cast.technician, run=run, data=data, original_name="fuzz.csv"
            )
    except ValidationError as exc:
        message = " ".join(exc.messages)
        assert "line " in message, message
        assert (Evidence.objects.count(), ExposureCheck.objects.count()) == counts
    else:
        # A readable variant (a missing reading is left out) is checked and stored.
        assert ExposureCheck.objects.count() == counts[1] + 1


def test_a_cold_method_that_requires_continuous_hours_is_read_as_such():
    from decimal import Decimal

    from durability.models import Method, MethodVersion

    method = Method(code="LAB:cold-soak", name="Cold soak", kind="temperature")
    version = MethodVersion(
        method=method,
        number=1,
        temperature_c=Decimal("-40"),
        temperature_tolerance_c=Decimal("2"),
        duration_h=Decimal("5"),
        extra={"duration_rule": "continuous"},
    )
    requirement = exposure_requirement(version)
    assert requirement.duration_rule.value == "continuous"
    assert requirement.required_hours == 5.0
    # A cold test: the lower side is the harder one (common practice).
    assert requirement.condition.temperature_severe_side.value == "lower"
    assert (requirement.condition.temperature_min_c, requirement.condition.temperature_max_c) == (
        -42.0,
        -38.0,
    )
    assert condition_of(version_parameters(version)) == "-40 ± 2 °C, 5 h"


def test_a_pass_recorded_before_a_log_that_does_not_count_gets_a_nonconformance(cast, humidity):
    from labrecords.models import Nonconformance, StepResult, Verdict

    run = _loaded_and_unloaded(cast, humidity)
    piece = humidity["pieces"][0]
    step = humidity["step"]
    StepResult.objects.create(
        step=step, step_key=step.step_key, piece=piece, chamber_run=run,
        verdict=Verdict.PASS, verdict_reason="recorded before the log was checked",
        recorded_by=cast.technician, recorded_at=NOW, observed_at=UNLOADED,
    )
    with clock.frozen_at(NOW):
        check = chambers.chamber_log_upload(
            actor=cast.technician, run=run, data=HUMIDITY_LOG, original_name="log.csv",
            duration_rule="continuous",
        )
    assert check.counts is False
    opened = Nonconformance.objects.get(lot=piece.lot)
    # Invalid means the test itself does not count, not a coating failure.
    assert opened.kind == "invalid_test" and opened.disposition == ""
    assert run.ident in opened.description and piece.ident in opened.description
