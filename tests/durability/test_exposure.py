"""Exposure verification (durability/exposure/verify.py).

Rules checked here come from shared/reference/computations.md, "Chamber exposure verification"
[practice], and the ISO 9022 3 K start rule and "a stated time is a minimum" from
shared/reference/test-methods.md [pub]. Hand-worked logs carry their arithmetic beside them;
the random logs are checked against an independent reference built on numpy.interp (linear) and
numpy.searchsorted (zero-order hold) on a fine time grid.
"""

from __future__ import annotations

from datetime import UTC, datetime, timedelta
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from durability.errors import InputError
from durability.exposure.logger import Sample, read_logger_file
from durability.exposure.verify import (
    DurationRule,
    ExposureCondition,
    Interpolation,
    SensorCorrection,
    SevereSide,
    verify_exposure,
)

SAMPLES = Path(__file__).resolve().parents[2] / "fixtures" / "instrument-files" / "logger"
T0 = datetime(2025, 6, 10, 6, 0, tzinfo=UTC)
# MIL-C-48497A humidity: 49 °C (±2 °C [mem]), 95-100 % RH, 24 h (test-methods.md [pub]).
HUMIDITY = ExposureCondition.from_setpoint(49.0, 2.0, rh_min_percent=95.0, rh_max_percent=100.0)
DRY = ExposureCondition.from_setpoint(49.0, 2.0)


def log(
    minutes: list[float], temperatures: list[float], rh: list[float] | None = None
) -> list[Sample]:
    humidity: list[float | None] = list(rh) if rh is not None else [None] * len(minutes)
    return [
        Sample(time=T0 + timedelta(minutes=m), temperature_c=t, rh_percent=h)
        for m, t, h in zip(minutes, temperatures, humidity, strict=True)
    ]


def at(minutes: float) -> datetime:
    return T0 + timedelta(minutes=minutes)


# ---------------------------------------------------------------- a hand-worked triangle


TRIANGLE = log([0, 60, 120, 180], [49.0, 49.0, 54.0, 50.0])


def test_interpolation_gives_exact_crossing_times_of_a_triangle_excursion() -> None:
    result = verify_exposure(TRIANGLE, DRY, required_hours=1.65)
    # Up through 51 °C between 49 (60 min) and 54 (120 min): 2/5 of the way = 84 min.
    # Down through 51 °C between 54 (120 min) and 50 (180 min): 3/4 of the way = 165 min.
    # Cross-check of both crossing instants with numpy.interp on the inverted segments:
    up = float(np.interp(51.0, [49.0, 54.0], [60.0, 120.0]))
    down = float(np.interp(-51.0, [-54.0, -50.0], [120.0, 180.0]))
    assert (up, down) == (84.0, 165.0)
    (excursion,) = result.excursions
    assert (excursion.start, excursion.end) == (at(84), at(165))
    assert excursion.duration_hours == pytest.approx(81 / 60)
    assert excursion.causes == ("temperature high",)
    assert excursion.direction == "more severe"
    (worst,) = excursion.worst
    assert (worst.time, worst.corrected, worst.limit, worst.beyond) == (at(120), 54.0, 51.0, 3.0)
    # In tolerance: 180 − 81 = 99 min = 1.65 h; runs 0-84 min and 165-180 min.
    assert result.in_tolerance_hours == pytest.approx(1.65)
    assert result.longest_run_hours == pytest.approx(84 / 60)
    assert result.counts  # exactly the required 1.65 h: a stated time is a minimum
    assert result.over_test
    assert result.convention is Interpolation.INTERPOLATED


def test_hold_counts_the_same_triangle_differently() -> None:
    result = verify_exposure(TRIANGLE, DRY, required_hours=1.65, interpolation="hold")
    # Held: 49 stands 0-120 min, 54 stands 120-180 min; the last reading covers no time.
    (excursion,) = result.excursions
    assert (excursion.start, excursion.end) == (at(120), at(180))
    assert excursion.worst[0].corrected == 54.0
    assert result.in_tolerance_hours == pytest.approx(2.0)
    assert result.longest_run_hours == pytest.approx(2.0)
    assert result.convention is Interpolation.HOLD
    assert "zero-order hold" in result.as_dict()["convention_text"]  # type: ignore[operator]


def test_a_value_on_a_limit_is_in_tolerance() -> None:
    result = verify_exposure(log([0, 60], [51.0, 47.0]), DRY, required_hours=1)
    assert result.in_tolerance_hours == pytest.approx(1.0)
    assert result.excursions == ()


def test_a_curve_that_only_touches_a_limit_is_one_excursion() -> None:
    result = verify_exposure(log([0, 60, 120], [45.0, 47.0, 45.0]), DRY, required_hours=1)
    assert result.in_tolerance_hours == 0.0
    assert len(result.excursions) == 1
    assert result.excursions[0].duration_hours == pytest.approx(2.0)


# ---------------------------------------------------------------- gaps and duration rules


GAPPY = log([0, 10, 20, 40, 50, 60, 90, 100, 110], [49.0] * 9)


def test_a_spacing_longer_than_twice_the_interval_is_a_gap_out_of_tolerance() -> None:
    result = verify_exposure(GAPPY, DRY, required_hours=1)
    # Spacings 10,10,20,10,10,30,10,10: median 10 min. 20 min is exactly twice (not longer),
    # so it is bridged; 30 min is a gap. In tolerance 110 − 30 = 80 min.
    assert result.logging_interval_s == 600.0
    assert result.gap_threshold_s == 1200.0
    (gap,) = result.excursions
    assert (gap.start, gap.end, gap.causes) == (at(60), at(90), ("no data",))
    assert gap.direction == "unknown (no data)"
    assert gap.worst == ()
    assert result.in_tolerance_hours == pytest.approx(80 / 60)


def test_continuous_needs_one_run_cumulative_adds_runs() -> None:
    required = 70 / 60  # runs are 0-60 and 90-110 min: 60 + 20 = 80 min
    cumulative = verify_exposure(GAPPY, DRY, required_hours=required)
    continuous = verify_exposure(GAPPY, DRY, required_hours=required, duration_rule="continuous")
    assert cumulative.counts and cumulative.duration_rule is DurationRule.CUMULATIVE
    assert not continuous.counts and continuous.duration_rule is DurationRule.CONTINUOUS
    assert continuous.longest_run_hours == pytest.approx(1.0)
    assert continuous.longest_run is not None and continuous.longest_run.start == at(0)


def test_a_given_logging_interval_overrides_the_median() -> None:
    result = verify_exposure(GAPPY, DRY, required_hours=1, logging_interval=timedelta(minutes=20))
    assert result.excursions == ()  # 30 min is not longer than 2 × 20 min
    assert result.in_tolerance_hours == pytest.approx(110 / 60)


def test_a_window_wider_than_the_log_counts_the_uncovered_time_as_no_data() -> None:
    result = verify_exposure(
        log([0, 60], [49.0, 49.0]),
        DRY,
        required_hours=1,
        window_start=at(-15),
        window_end=at(90),
    )
    assert [(e.start, e.end) for e in result.excursions] == [(at(-15), at(0)), (at(60), at(90))]
    assert result.exposure_hours == pytest.approx(105 / 60)
    assert result.in_tolerance_hours == pytest.approx(1.0)


# ---------------------------------------------------------------- humidity, direction, severity


def test_humidity_low_is_less_severe_and_temperature_high_more_severe() -> None:
    readings = log([0, 10, 20, 30, 40], [49, 49, 49, 52, 49], [97, 93, 97, 97, 97])
    result = verify_exposure(readings, HUMIDITY, required_hours=0.1, interpolation="hold")
    humid, hot = result.excursions
    assert humid.causes == ("humidity low",) and humid.direction == "less severe"
    assert hot.causes == ("temperature high",) and hot.direction == "more severe"
    assert result.over_test


def test_both_directions_at_once_is_mixed() -> None:
    readings = log([0, 10, 20], [49, 52, 49], [97, 93, 97])
    result = verify_exposure(readings, HUMIDITY, required_hours=0.1)
    (excursion,) = result.excursions
    assert excursion.direction == "mixed"
    assert {w.quantity: w.direction for w in excursion.worst} == {
        "temperature": "more severe",
        "humidity": "less severe",
    }


def test_a_cold_test_turns_the_temperature_side_round() -> None:
    cold = ExposureCondition.from_setpoint(-40.0, 2.0, temperature_severe_side=SevereSide.LOWER)
    readings = log([0, 10, 20, 30, 40], [-40, -44, -40, -36, -40])
    result = verify_exposure(readings, cold, required_hours=0.1, interpolation="hold")
    colder, warmer = result.excursions
    assert colder.direction == "more severe" and warmer.direction == "less severe"


def test_an_under_test_note_when_every_excursion_is_less_severe() -> None:
    readings = log([0, 10, 20], [49, 46, 49])
    result = verify_exposure(readings, DRY, required_hours=0.1)
    assert not result.over_test
    assert any("extend the exposure" in note for note in result.notes)


# ---------------------------------------------------------------- sensor correction


def test_the_correction_is_applied_and_raw_values_kept() -> None:
    readings = log([0, 60, 120], [46.5, 46.5, 46.5], [94.0, 94.0, 94.0])
    uncorrected = verify_exposure(readings, HUMIDITY, required_hours=2)
    assert uncorrected.in_tolerance_hours == 0.0 and not uncorrected.counts
    correction = SensorCorrection(temperature_offset_k=0.6, rh_offset_percent=1.5)
    corrected = verify_exposure(readings, HUMIDITY, required_hours=2, correction=correction)
    assert corrected.counts and corrected.in_tolerance_hours == pytest.approx(2.0)
    first = corrected.readings[0]
    assert first.temperature_raw_c == 46.5
    assert first.temperature_c == pytest.approx(47.1)
    assert first.rh_raw_percent == 94.0
    assert first.rh_percent == pytest.approx(95.5)
    assert first.in_tolerance


def test_worst_values_show_logged_and_corrected() -> None:
    correction = SensorCorrection(temperature_gain=1.01, temperature_offset_k=-0.5)
    readings = log([0, 10, 20], [49.0, 52.0, 49.0])
    result = verify_exposure(readings, DRY, required_hours=0.1, correction=correction)
    (worst,) = result.excursions[0].worst
    # 1.01 × 52 − 0.5 = 52.52 − 0.5 = 52.02 °C, 1.02 K over 51 °C.
    assert worst.raw == 52.0
    assert worst.corrected == pytest.approx(52.02)
    assert worst.beyond == pytest.approx(1.02)
    assert "1.01 × T_logged -0.5 K" in result.correction.describe()


# ---------------------------------------------------------------- ISO 9022 start when stable


RAMP = log(list(range(0, 130, 10)), [20.0, 30.0, 40.0] + [49.0] * 10)


def test_start_when_stable_counts_from_the_first_instant_within_3_k() -> None:
    result = verify_exposure(RAMP, DRY, required_hours=1.5, start_when_stable=True)
    # Within 3 K of 49 °C means 46 °C or more: between 40 (20 min) and 49 (30 min) that is 6/9
    # of the way, at 26 min 40 s. 47 °C is reached at 7/9, 27 min 46.67 s.
    assert result.exposure_start == at(20 + 10 * 6 / 9)
    (excursion,) = result.excursions
    assert excursion.start == at(20 + 10 * 6 / 9)
    assert excursion.end == at(20 + 10 * 7 / 9)
    assert result.in_tolerance_hours == pytest.approx((120 - (20 + 70 / 9)) / 60)
    assert any("first instant within 3 K" in note for note in result.notes)


def test_start_when_stable_with_hold_waits_for_a_reading_in_the_band() -> None:
    result = verify_exposure(
        RAMP, DRY, required_hours=1.5, start_when_stable=True, interpolation="hold"
    )
    assert result.exposure_start == at(30)
    assert result.excursions == ()
    assert result.in_tolerance_hours == pytest.approx(1.5)


def test_never_stable_counts_nothing() -> None:
    result = verify_exposure(
        log([0, 60], [20.0, 30.0]), DRY, required_hours=1, start_when_stable=True
    )
    assert result.exposure_start is None
    assert result.in_tolerance_hours == 0.0 and not result.counts
    assert any("never came within 3 K" in note for note in result.notes)


def test_every_result_carries_the_iso_9022_note() -> None:
    result = verify_exposure(TRIANGLE, DRY, required_hours=1)
    assert any(note.startswith("ISO 9022: exposure starts only once") for note in result.notes)


# ---------------------------------------------------------------- the 24 h sample file


@pytest.fixture(scope="module")
def humidity_run() -> list[Sample]:
    path = SAMPLES / "humidity-24h-gap-excursion.csv"
    return list(read_logger_file(path, time_zone="Europe/Berlin").samples)


def test_the_24_h_sample_run_matches_the_hand_working_interpolated(
    humidity_run: list[Sample],
) -> None:
    # Worked in fixtures/instrument-files/logger/README.md: 1550 − 35 − 21⅓ − 50 min.
    result = verify_exposure(humidity_run, HUMIDITY, required_hours=24)
    assert result.in_tolerance_hours == pytest.approx((1550 - 35 - 64 / 3 - 50) / 60)
    assert result.longest_run_hours == pytest.approx((606 + 2 / 3 - 35) / 60)
    assert result.counts
    ramp, dip, gap = result.excursions
    assert (ramp.start, ramp.end) == (at(0), at(35))
    assert (dip.start, dip.end) == (at(606 + 2 / 3), at(628))
    assert dip.causes == ("humidity low",) and dip.direction == "less severe"
    assert [(w.quantity, w.corrected) for w in dip.worst] == [("humidity", 91.0)]
    assert (gap.start, gap.end, gap.causes) == (at(960), at(1010), ("no data",))
    continuous = verify_exposure(
        humidity_run, HUMIDITY, required_hours=24, duration_rule="continuous"
    )
    assert not continuous.counts


def test_the_24_h_sample_run_matches_the_hand_working_held(humidity_run: list[Sample]) -> None:
    result = verify_exposure(humidity_run, HUMIDITY, required_hours=24, interpolation="hold")
    # 1550 − 40 − 20 − 50 = 1440 min: exactly 24 h, which counts (a stated time is a minimum).
    assert result.in_tolerance_hours == pytest.approx(24.0)
    assert result.longest_run_hours == pytest.approx(9.5)
    assert result.counts
    assert [(e.start, e.end) for e in result.excursions] == [
        (at(0), at(40)),
        (at(610), at(630)),
        (at(960), at(1010)),
    ]


def test_the_24_h_sample_run_starts_at_30_min_when_stable(humidity_run: list[Sample]) -> None:
    result = verify_exposure(humidity_run, HUMIDITY, required_hours=24, start_when_stable=True)
    assert result.exposure_start == at(30)  # the 30 min reading is 46.0 °C, exactly 3 K low
    assert result.excursions[0].start == at(30)
    assert result.in_tolerance_hours == pytest.approx((1550 - 35 - 64 / 3 - 50) / 60)


# ---------------------------------------------------------------- against numpy


def _reference_hours(
    minutes: np.ndarray,
    temperatures: np.ndarray,
    humidities: np.ndarray,
    condition: ExposureCondition,
    hold: bool,
    grid_points: int,
) -> float:
    """Time in tolerance by brute force on a fine grid (midpoint rule), numpy only."""
    edges = np.linspace(minutes[0], minutes[-1], grid_points + 1)
    grid = (edges[:-1] + edges[1:]) / 2
    if hold:
        index = np.searchsorted(minutes, grid, side="right") - 1
        t, h = temperatures[index], humidities[index]
    else:
        t, h = np.interp(grid, minutes, temperatures), np.interp(grid, minutes, humidities)
    ok = (t >= condition.temperature_min_c) & (t <= condition.temperature_max_c)
    assert condition.rh_min_percent is not None and condition.rh_max_percent is not None
    ok &= (h >= condition.rh_min_percent) & (h <= condition.rh_max_percent)
    spacing = np.diff(minutes)
    segment = np.searchsorted(minutes, grid, side="right") - 1
    ok &= spacing[segment] <= 2 * np.median(spacing)
    return float(ok.sum() * (edges[1] - edges[0]) / 60)


@settings(max_examples=60)
@given(
    st.lists(st.integers(1, 30), min_size=2, max_size=25),
    st.lists(st.floats(44.0, 54.0), min_size=26, max_size=26),
    st.lists(st.floats(90.0, 100.0), min_size=26, max_size=26),
    st.booleans(),
)
def test_time_in_tolerance_agrees_with_a_numpy_reference(
    steps: list[int], temperatures: list[float], humidities: list[float], hold: bool
) -> None:
    minutes = np.concatenate([[0.0], np.cumsum(steps)]).astype(float)
    n = len(minutes)
    t, h = np.array(temperatures[:n]), np.array(humidities[:n])
    readings = log(list(minutes), list(t), list(h))
    result = verify_exposure(
        readings, HUMIDITY, required_hours=1, interpolation="hold" if hold else "interpolated"
    )
    grid_points = 100_000
    reference = _reference_hours(minutes, t, h, HUMIDITY, hold, grid_points)
    # Each in/out boundary can misplace at most one grid cell of the reference.
    cell_hours = (minutes[-1] - minutes[0]) / grid_points / 60
    boundaries = 2 * len(result.excursions) + 2
    assert result.in_tolerance_hours == pytest.approx(reference, abs=boundaries * cell_hours)
    runs = sum(run.hours for run in result.runs)
    excursions = sum(e.duration_hours for e in result.excursions)
    assert runs + excursions == pytest.approx(result.exposure_hours)


@settings(max_examples=30)
@given(st.integers(1, 30), st.integers(2, 20), st.floats(47.0, 51.0))
def test_a_steady_log_without_gaps_is_in_tolerance_throughout_either_way(
    step: int, count: int, value: float
) -> None:
    minutes = [float(step * i) for i in range(count)]
    readings = log(minutes, [value] * count)
    for convention in Interpolation:
        result = verify_exposure(readings, DRY, required_hours=0.01, interpolation=convention)
        assert result.in_tolerance_hours == pytest.approx(minutes[-1] / 60)
        assert result.excursions == ()


# ---------------------------------------------------------------- bad input


@pytest.mark.parametrize(
    ("readings", "message"),
    [
        (log([0], [49.0]), "at least two readings"),
        (log([0, 0], [49.0, 49.0]), "reading 2: the time is not later"),
        (log([0, 10], [49.0, float("nan")]), "reading 2: temperature"),
        (
            [Sample(datetime(2025, 1, 1), 49.0, None), Sample(datetime(2025, 1, 2), 49.0, None)],
            "reading 1: the time has no time zone",
        ),
    ],
)
def test_unusable_readings_are_refused(readings: list[Sample], message: str) -> None:
    with pytest.raises(InputError, match=message):
        verify_exposure(readings, DRY, required_hours=1)


def test_a_humidity_range_needs_humidity_readings() -> None:
    readings = [Sample(at(0), 49.0, None, line=7), Sample(at(10), 49.0, None, line=8)]
    with pytest.raises(InputError, match="line 7: no humidity reading"):
        verify_exposure(readings, HUMIDITY, required_hours=1)


@pytest.mark.parametrize(
    ("options", "message"),
    [
        ({"required_hours": 0}, "required hours"),
        ({"required_hours": float("inf")}, "required hours"),
        ({"required_hours": 1, "duration_rule": "forever"}, "duration rule 'forever'"),
        ({"required_hours": 1, "interpolation": "cubic"}, "interpolation 'cubic'"),
        ({"required_hours": 1, "window_start": at(30), "window_end": at(10)}, "window ends"),
        ({"required_hours": 1, "window_start": datetime(2025, 1, 1)}, "window start"),
        ({"required_hours": 1, "logging_interval": timedelta(0)}, "logging interval"),
        ({"required_hours": 1, "stable_within_k": -1}, "stable band"),
    ],
)
def test_bad_options_are_refused(options: dict[str, object], message: str) -> None:
    with pytest.raises(InputError, match=message):
        verify_exposure(TRIANGLE, DRY, **options)  # type: ignore[arg-type]


def test_start_when_stable_needs_a_set_point() -> None:
    band = ExposureCondition(temperature_min_c=47.0, temperature_max_c=51.0)
    with pytest.raises(InputError, match="set point"):
        verify_exposure(TRIANGLE, band, required_hours=1, start_when_stable=True)


@pytest.mark.parametrize(
    ("build", "message"),
    [
        (lambda: ExposureCondition(51.0, 47.0), "minimum 51.0 °C is above"),
        (lambda: ExposureCondition(47.0, 51.0, rh_min_percent=101.0), "RH minimum 101.0"),
        (lambda: ExposureCondition(47.0, 51.0, 100.0, 95.0), "RH minimum 100.0 % is above"),
        (lambda: ExposureCondition.from_setpoint(49.0, -1.0), "tolerance -1.0 K is negative"),
        (lambda: ExposureCondition(47.0, 51.0, temperature_setpoint_c=60.0), "outside its band"),
        (lambda: SensorCorrection(temperature_gain=0.0), "gain 0.0 must be above zero"),
        (lambda: SensorCorrection(rh_offset_percent=float("nan")), "RH correction offset"),
    ],
)
def test_bad_conditions_and_corrections_are_refused(build: object, message: str) -> None:
    with pytest.raises(InputError, match=message):
        build()  # type: ignore[operator]
