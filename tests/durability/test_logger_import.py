"""The chamber data-logger CSV import (durability/exposure/logger.py).

Sources for the checks:
- Fahrenheit and kelvin: °C = (°F − 32) × 5/9 and T(°C) = T(K) − 273.15, the definitions of the
  scales (NIST SP 811, appendix B, from memory); fixed points 32 °F = 0 °C, 212 °F = 100 °C,
  −40 °F = −40 °C follow from them.
- Daylight saving in Europe/Berlin: EU summer time starts and ends at 01:00 UTC on the last
  Sunday of March and of October (Directive 2000/84/EC, from memory). Expected UTC times below
  are computed from that rule by plain UTC arithmetic, not by zoneinfo.
- US Eastern time: summer time from 02:00 local on the second Sunday of March (Energy Policy Act
  of 2005, from memory).
"""

from __future__ import annotations

import string
from datetime import UTC, datetime, timedelta
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from durability.errors import InputError
from durability.exposure.logger import (
    DateOrder,
    Sample,
    parse_time_zone,
    read_logger_csv,
    read_logger_file,
)

SAMPLES = Path(__file__).resolve().parents[2] / "fixtures" / "instrument-files" / "logger"


def utc(
    year: int, month: int, day: int, hour: int = 0, minute: int = 0, second: int = 0, us: int = 0
) -> datetime:
    return datetime(year, month, day, hour, minute, second, us, tzinfo=UTC)


# ---------------------------------------------------------------- the sample files


def test_it_reads_the_comma_iso_sample() -> None:
    result = read_logger_file(SAMPLES / "comma-iso.csv", time_zone="UTC")
    fmt = result.format
    assert (fmt.separator, fmt.decimal, fmt.date_order) == (",", ".", DateOrder.ISO)
    assert (fmt.temperature_unit, fmt.rh_unit, fmt.time_zone) == ("°C", "%", "UTC")
    assert fmt.time_columns == ("Timestamp",)
    assert len(result.samples) == 37
    assert result.samples[0].time == utc(2025, 6, 2, 8, 0)
    assert result.samples[-1].time == utc(2025, 6, 2, 14, 0)
    assert result.samples[0].line == 2
    assert all(39.0 <= s.temperature_c <= 41.0 for s in result.samples)
    assert result.warnings == ()


def test_it_reads_the_semicolon_sample_with_preamble_bom_and_decimal_comma() -> None:
    result = read_logger_file(
        SAMPLES / "semicolon-decimal-comma-preamble.csv", time_zone="Europe/Berlin"
    )
    fmt = result.format
    assert fmt.encoding == "UTF-8 with byte order mark"
    assert (fmt.separator, fmt.decimal, fmt.date_order) == (";", ",", DateOrder.DAY_FIRST)
    assert (fmt.header_line, fmt.preamble_lines) == (6, 4)
    assert fmt.rh_column == "Humidity [%RH]"
    assert len(result.samples) == 37  # the blank line among the readings is skipped
    # 09:00 CEST on 14 May is 07:00 UTC (EU summer time, UTC+2).
    assert result.samples[0].time == utc(2025, 5, 14, 7, 0)
    first_line = (SAMPLES / "semicolon-decimal-comma-preamble.csv").read_bytes().split(b"\r\n")[6]
    expected = float(first_line.split(b";")[1].decode().replace(",", "."))
    assert result.samples[0].temperature_c == expected
    assert any("decimal comma" in note for note in result.notes)


def test_it_reads_the_tab_fahrenheit_sample_once_the_date_order_is_given() -> None:
    path = SAMPLES / "tab-fahrenheit.txt"
    with pytest.raises(InputError, match=r"line 2, column 'Date \+ Time'.*date order"):
        read_logger_file(path)
    result = read_logger_file(path, date_order="month-first", time_zone="America/New_York")
    fmt = result.format
    assert fmt.encoding == "Windows-1252"
    assert (fmt.separator, fmt.temperature_unit) == ("\t", "°F")
    assert fmt.time_columns == ("Date", "Time")
    assert any("°F and converted to °C" in note for note in result.notes)
    # 10:00 AM EDT (UTC−4) on 3 June; the last reading is 2:00 PM.
    assert result.samples[0].time == utc(2025, 6, 3, 14, 0)
    assert result.samples[-1].time == utc(2025, 6, 3, 18, 0)
    # First reading is 120.0 °F: (120 − 32) × 5/9.
    assert result.samples[0].temperature_c == pytest.approx((120.0 - 32.0) * 5 / 9)


def test_it_reads_the_fall_back_sample_into_evenly_spaced_utc_times() -> None:
    result = read_logger_file(SAMPLES / "dst-fall-back.csv", time_zone="Europe/Berlin")
    # Summer time ends 01:00 UTC on Sunday 26 October 2025, so local 00:00 CEST is 22:00 UTC the
    # day before and the wall clock runs 00:00-02:50, 02:00-05:00: every reading 10 min apart.
    expected = [utc(2025, 10, 25, 22, 0) + timedelta(minutes=10 * i) for i in range(37)]
    assert [s.time for s in result.samples] == expected
    assert len(result.warnings) == 2
    assert result.warnings[0].startswith("lines 14-19") and "first occurrence" in result.warnings[0]
    assert (
        result.warnings[1].startswith("lines 20-25") and "second occurrence" in result.warnings[1]
    )
    assert any("between lines 19 and 20" in note for note in result.notes)


def test_it_reads_the_humidity_run_sample() -> None:
    result = read_logger_file(SAMPLES / "humidity-24h-gap-excursion.csv", time_zone="Europe/Berlin")
    assert len(result.samples) == 152
    assert result.samples[0].time == utc(2025, 6, 10, 6, 0)
    assert (result.samples[0].temperature_c, result.samples[0].rh_percent) == (23.0, 50.0)


# ---------------------------------------------------------------- header and unit variants


@pytest.mark.parametrize(
    ("header", "unit", "value", "celsius"),
    [
        ("Temp (°C)", "°C", "21.5", 21.5),
        ("Temperature [°F]", "°F", "212", 100.0),
        ("Temperature [°F]", "°F", "32", 0.0),
        ("Temperature [°F]", "°F", "-40", -40.0),
        ("Temp °F", "°F", "50", 10.0),
        ("T/°C", "°C", "-5.5", -5.5),
        ("Temperature (degC)", "°C", "49", 49.0),
        ("Temperature [K]", "K", "273.15", 0.0),
        ("Temperature", "°C", "30", 30.0),
        ("Temp (Â°C)", "°C", "30", 30.0),  # UTF-8 degree sign read as Windows-1252 upstream
    ],
)
def test_it_reads_the_temperature_unit_from_the_header(
    header: str, unit: str, value: str, celsius: float
) -> None:
    text = f"Time,{header},RH %\n2025-01-01 00:00,{value},50\n2025-01-01 00:10,{value},50\n"
    result = read_logger_csv(text)
    assert result.format.temperature_unit == unit
    assert result.samples[0].temperature_c == pytest.approx(celsius, abs=1e-12)


@pytest.mark.parametrize(
    "header", ["RH %", "%RH", "RH (%)", "RH[%]", "Humidity (%RH)", "Relative humidity [%]", "rh"]
)
def test_it_recognises_humidity_headers(header: str) -> None:
    text = f"Time;Temp (°C);{header}\n2025-01-01 00:00;49;96,5\n2025-01-01 00:10;49;97\n"
    result = read_logger_csv(text)
    assert result.format.rh_column == header
    assert result.samples[0].rh_percent == 96.5


def test_a_file_without_humidity_column_imports_temperatures_only() -> None:
    result = read_logger_csv("Time\tTemp (°C)\n2025-01-01 00:00\t85\n2025-01-01 00:10\t85.2\n")
    assert result.format.rh_column is None and result.format.rh_unit is None
    assert [s.rh_percent for s in result.samples] == [None, None]


def test_it_leaves_set_point_and_dew_point_columns_alone() -> None:
    text = (
        "No.,Time,Temp setpoint (°C),Temp (°C),Dew point (°C),RH %\n"
        "1,2025-01-01 00:00,49,48.7,47.9,96\n"
        "2,2025-01-01 00:10,49,48.9,48.1,96\n"
    )
    result = read_logger_csv(text)
    assert result.format.temperature_column == "Temp (°C)"
    assert result.samples[0].temperature_c == 48.7
    assert any("not used" in note and "Dew point" in note for note in result.notes)


def test_quoted_cells_carry_a_decimal_comma_in_a_comma_separated_file() -> None:
    text = (
        '"Time","Temp (°C)","RH %"\n'
        '"2025-01-01 00:00","49,5","97,0"\n'
        '"2025-01-01 00:10","49,6","96,9"\n'
    )
    result = read_logger_csv(text)
    assert (result.format.separator, result.format.decimal) == (",", ",")
    assert result.samples[1].temperature_c == 49.6


def test_it_handles_cr_only_line_ends_bom_in_text_and_blank_lines() -> None:
    text = "\ufeff\r\rTime;Temp (°C);RH %\r2025-01-01 00:00;49;96\r\r2025-01-01 00:10;49;96\r"
    result = read_logger_csv(text)
    assert len(result.samples) == 2
    assert result.format.header_line == 3


def test_it_decodes_utf16_with_byte_order_mark() -> None:
    text = "Time\tTemp (°C)\tRH %\n2025-01-01 00:00\t49\t96\n2025-01-01 00:10\t49\t96\n"
    result = read_logger_csv(text.encode("utf-16"))
    assert result.format.encoding == "UTF-16"
    assert len(result.samples) == 2


def test_the_caller_can_name_the_columns_when_two_match() -> None:
    text = (
        "Time,Temp 1 (°C),Temp 2 (°C),RH %\n"
        "2025-01-01 00:00,49.1,48.2,96\n2025-01-01 00:10,49.3,48.4,96\n"
    )
    with pytest.raises(InputError, match="line 1: more than one temperature column"):
        read_logger_csv(text)
    result = read_logger_csv(text, temperature_column="Temp 2 (°C)")
    assert [s.temperature_c for s in result.samples] == [48.2, 48.4]


# ---------------------------------------------------------------- timestamps


@pytest.mark.parametrize(
    ("stamp", "expected"),
    [
        ("2025-03-05T14:30:00", utc(2025, 3, 5, 14, 30)),
        ("2025-03-05 14:30", utc(2025, 3, 5, 14, 30)),
        ("2025/03/05 14:30:15.250", utc(2025, 3, 5, 14, 30, 15, 250000)),
        ("2025-03-05T14:30:00Z", utc(2025, 3, 5, 14, 30)),
        ("2025-03-05T14:30:00+02:00", utc(2025, 3, 5, 12, 30)),
        ("2025-03-05 14:30:00 -0500", utc(2025, 3, 5, 19, 30)),
        ("2025-03-05 12:05:00 AM", utc(2025, 3, 5, 0, 5)),
        ("2025-03-05 12:05:00 PM", utc(2025, 3, 5, 12, 5)),
    ],
)
def test_it_reads_iso_timestamps(stamp: str, expected: datetime) -> None:
    later = "2025-03-06T00:00:00Z"
    result = read_logger_csv(f"Time;Temp\n{stamp};20\n{later};20\n", time_zone="UTC")
    assert result.samples[0].time == expected


def test_day_first_dates_are_taken_when_a_day_above_12_proves_them() -> None:
    text = "Time,Temp\n12.03.2025 23:50,20\n13.03.2025 00:00,20\n"
    result = read_logger_csv(text)
    assert result.format.date_order is DateOrder.DAY_FIRST
    assert result.samples[1].time == utc(2025, 3, 13, 0, 0)


def test_month_first_dates_are_taken_when_a_day_above_12_proves_them() -> None:
    text = "Time,Temp\n03/12/2025 11:50 PM,20\n03/13/2025 12:00 AM,20\n"
    result = read_logger_csv(text)
    assert result.format.date_order is DateOrder.MONTH_FIRST
    assert result.samples[1].time == utc(2025, 3, 13, 0, 0)


def test_dates_that_read_either_way_are_refused_until_the_order_is_given() -> None:
    text = "Time,Temp\n03/04/2025 10:00,20\n03/04/2025 10:10,20\n"
    with pytest.raises(InputError, match=r"line 2, column 'Time'.*day 3 of month 4"):
        read_logger_csv(text)
    day_first = read_logger_csv(text, date_order="day-first")
    month_first = read_logger_csv(text, date_order=DateOrder.MONTH_FIRST)
    assert day_first.samples[0].time == utc(2025, 4, 3, 10, 0)
    assert month_first.samples[0].time == utc(2025, 3, 4, 10, 0)


def test_a_date_pattern_in_the_header_settles_the_order() -> None:
    text = "Date (MM/DD/YYYY),Time,Temp\n03/04/2025,10:00,20\n03/04/2025,10:10,20\n"
    result = read_logger_csv(text)
    assert result.format.date_order is DateOrder.MONTH_FIRST
    assert result.samples[0].time == utc(2025, 3, 4, 10, 0)


def test_a_date_order_contradicted_by_the_data_is_refused() -> None:
    text = "Time,Temp\n03/12/2025 10:00,20\n03/13/2025 10:00,20\n"
    with pytest.raises(InputError, match=r"line 3, column 'Time'.*month 13 when read day-first"):
        read_logger_csv(text, date_order="day-first")


def test_dates_proving_both_orders_are_refused() -> None:
    text = "Time,Temp\n13/03/2025 10:00,20\n03/14/2025 10:00,20\n"
    with pytest.raises(InputError, match="line 3"):
        read_logger_csv(text)


def test_dates_with_equal_day_and_month_need_no_order() -> None:
    result = read_logger_csv("Time,Temp\n05/05/2025 10:00,20\n05/05/2025 10:10,20\n")
    assert result.samples[0].time == utc(2025, 5, 5, 10, 0)


def test_two_digit_years_are_refused_rather_than_guessed() -> None:
    with pytest.raises(InputError, match=r"line 2, column 'Time'.*two-digit years"):
        read_logger_csv("Time,Temp\n14.03.25 10:00,20\n14.03.25 10:10,20\n")


# ---------------------------------------------------------------- time zones and daylight saving


def test_spring_forward_is_converted_across_the_change() -> None:
    # Summer time starts 01:00 UTC on Sunday 30 March 2025: local 01:50 CET is 00:50 UTC and the
    # next wall-clock reading, 03:00 CEST, is 01:00 UTC.
    text = (
        "Time,Temp\n2025-03-30 01:40,20\n2025-03-30 01:50,20\n"
        "2025-03-30 03:00,20\n2025-03-30 03:10,20\n"
    )
    result = read_logger_csv(text, time_zone="Europe/Berlin")
    assert [s.time for s in result.samples] == [
        utc(2025, 3, 30, 0, 40),
        utc(2025, 3, 30, 0, 50),
        utc(2025, 3, 30, 1, 0),
        utc(2025, 3, 30, 1, 10),
    ]
    assert result.warnings == ()
    assert any("clocks go forward" in note for note in result.notes)


def test_skipped_wall_times_are_reported_not_hidden() -> None:
    # A logger on standard time writes 02:10 and 02:20 on 30 March 2025, which do not exist in
    # Europe/Berlin; read with the offset before the change (UTC+1) they stay 10 min apart.
    text = "Time,Temp\n2025-03-30 01:50,20\n2025-03-30 02:10,20\n2025-03-30 02:20,20\n"
    result = read_logger_csv(text, time_zone="Europe/Berlin")
    assert [s.time for s in result.samples][1:] == [
        utc(2025, 3, 30, 1, 10),
        utc(2025, 3, 30, 1, 20),
    ]
    assert len(result.warnings) == 1
    assert result.warnings[0].startswith("lines 3-4") and "do not exist" in result.warnings[0]


def test_a_logger_on_standard_time_reads_cleanly_with_a_fixed_offset() -> None:
    text = "Time,Temp\n2025-03-30 01:50,20\n2025-03-30 02:00,20\n2025-03-30 02:10,20\n"
    result = read_logger_csv(text, time_zone="UTC+01:00")
    assert result.format.time_zone == "UTC+01:00"
    assert [s.time for s in result.samples] == [
        utc(2025, 3, 30, 0, 50),
        utc(2025, 3, 30, 1, 0),
        utc(2025, 3, 30, 1, 10),
    ]
    assert result.warnings == ()


def test_us_eastern_spring_forward() -> None:
    # 9 March 2025: 01:50 EST (UTC−5) is 06:50 UTC; 03:00 EDT (UTC−4) is 07:00 UTC.
    text = "Time,Temp\n3/9/2025 1:50 AM,20\n3/9/2025 3:00 AM,20\n"
    result = read_logger_csv(text, time_zone="America/New_York", date_order="month-first")
    assert [s.time for s in result.samples] == [utc(2025, 3, 9, 6, 50), utc(2025, 3, 9, 7, 0)]


def test_the_time_columns_header_may_name_the_zone() -> None:
    result = read_logger_csv("Time (UTC),Temp\n2025-07-01 10:00,20\n2025-07-01 10:10,20\n")
    assert result.format.time_zone == "UTC"
    assert result.samples[0].time == utc(2025, 7, 1, 10, 0)
    with pytest.raises(InputError, match="line 1: the time column's header gives time zone UTC"):
        read_logger_csv(
            "Time (UTC),Temp\n2025-07-01 10:00,20\n2025-07-01 10:10,20\n",
            time_zone="Europe/Berlin",
        )


def test_no_time_zone_means_utc_and_says_so() -> None:
    result = read_logger_csv("Time,Temp\n2025-07-01 10:00,20\n2025-07-01 10:10,20\n")
    assert result.format.time_zone == "UTC"
    assert any("no time zone was given" in note for note in result.notes)


@pytest.mark.parametrize("name", ["Mars/Olympus", "", "../etc/passwd", "UTC+25:00", "\x00"])
def test_unknown_time_zones_are_refused(name: str) -> None:
    with pytest.raises(InputError, match="time zone"):
        parse_time_zone(name)


# ---------------------------------------------------------------- missing readings


def test_rows_without_a_reading_are_left_out_with_a_warning() -> None:
    text = (
        "Time;Temp (°C);RH %\n2025-01-01 00:00;49;96\n2025-01-01 00:10;---;96\n"
        "2025-01-01 00:20;49;\n2025-01-01 00:30;49;96\n"
    )
    result = read_logger_csv(text)
    assert [s.line for s in result.samples] == [2, 5]
    assert len(result.warnings) == 1 and "line(s) 3, 4" in result.warnings[0]


# ---------------------------------------------------------------- malformed files


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("just some words\nno header here\n", r"no column header found in lines 1-3"),
        ("Time,Temp (°C)\n", r"line 1: the column header is followed by no readings"),
        (
            "Time,Temp (°C),RH %\n2025-01-01 00:00,49,96\n2025-01-01 00:10,4x9,96\n",
            r"line 3, column 'Temp \(°C\)': '4x9' is not a number",
        ),
        ("Time,Temp (°C),RH %\n2025-01-01 00:00,49\n", r"line 2: 2 column\(s\) where the header"),
        ("Time,Temp (°C),RH %\nyesterday,49,96\n", r"line 2, column 'Time': 'yesterday'"),
        ("Time,Temp (°C),RH %\n2025-02-30 00:00,49,96\n", r"line 2, column 'Time'.*not a valid"),
        (
            "Time,Temp (°C),RH %\n2025-01-01 00:10,49,96\n2025-01-01 00:00,49,96\n",
            r"line 3, column 'Time'.*is not later than line 2",
        ),
        (
            "Time,Temp (°C),RH %\n2025-01-01 00:00,49,96\n2025-01-01 00:00,49,96\n",
            r"line 3.*not later than line 2",
        ),
        ("Time,Temp (°C),RH %\n2025-01-01 00:00,49,120\n", r"line 2, column 'RH %'.*0 to 110"),
        ("Time,Temp (°C),RH %\n2025-01-01 00:00,-300,50\n", r"line 2.*below absolute zero"),
        (
            "Time;Temp (°C);RH %\n2025-01-01 00:00;49,5;96\n2025-01-01 00:10;49.5;96\n",
            r"line 3, column 'Temp \(°C\)': '49.5' uses a decimal point but line 2",
        ),
        ("Time;Temp (°C);RH %\n2025-01-01 00:00;1e999;96\n", r"line 2.*not a finite number"),
        ("Time;Temp (°C);RH %\n2025-01-01 13:00 PM;49;96\n", r"line 2.*hour 13 with AM/PM"),
        ("Time,Temp (°C),Humidity (g/m3)\n2025-01-01 00:00,49,96\n", r"line 1: the humidity"),
        ("Time,Temp (°R)\n2025-01-01 00:00,49\n", r"line 1, column 'Temp \(°R\)'"),
        ('Time,Temp\n2025-01-01 00:00,"49\n', r"line 2: cannot split into columns"),
        ("Time,Temp\n2025-01-01 00:00,4\x009\n", r"line 2: contains a NUL character"),
        ("Time,Temp\n9999-12-31 23:59-05:00,20\n", r"line 2, column 'Time'.*out of the range"),
        ("Time,Temp\n2025-01-01 00:00+24:00,20\n", r"line 2, column 'Time'.*24 hours or more"),
        ("Time,Temp\n2025-01-01 00:00,20\n02.01.2025 00:00,20\n", r"line 3: the dates switch"),
    ],
)
def test_malformed_files_name_the_line(text: str, message: str) -> None:
    with pytest.raises(InputError, match=message):
        read_logger_csv(text)


def test_bad_options_are_refused() -> None:
    good = "Time,Temp\n2025-01-01 00:00,20\n"
    with pytest.raises(InputError, match="date order 'sideways'"):
        read_logger_csv(good, date_order="sideways")
    with pytest.raises(InputError, match="separator"):
        read_logger_csv(good, separator="|")
    with pytest.raises(InputError, match="decimal mark"):
        read_logger_csv(good, decimal="x")
    with pytest.raises(InputError, match="temperature unit"):
        read_logger_csv(good, temperature_unit="°R")
    with pytest.raises(InputError, match="is not an ISO date"):
        read_logger_csv("Time,Temp\n05.05.2025 00:00,20\n", date_order="iso")


def test_a_missing_file_is_an_input_error(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="cannot read"):
        read_logger_file(tmp_path / "absent.csv")
    with pytest.raises(InputError, match="cannot read"):
        read_logger_file(tmp_path)


# ---------------------------------------------------------------- fuzzing


def _outcome(data: bytes | str, **options: object) -> None:
    try:
        result = read_logger_csv(data, **options)  # type: ignore[arg-type]
    except InputError as exc:
        assert str(exc)  # a message, always
    else:
        times = [s.time for s in result.samples]
        assert times == sorted(times) and len(set(times)) == len(times)
        assert all(t.tzinfo is UTC for t in times)


@settings(max_examples=200)
@given(st.binary(max_size=600))
def test_fuzz_arbitrary_bytes_give_a_result_or_an_input_error(data: bytes) -> None:
    _outcome(data)


HEADERS = ["No.", "Dew point (°C)", "RH %", "%RH", "Humidity (%RH)", "Time (UTC)", "Date"]
TIMES = ["Time", "Timestamp", "Date/Time", "Time (UTC)", "Date (DD.MM.YYYY)"]
TEMPERATURES = ["Temp (°C)", "Temperature [°F]", "T", "Temp °C", "Temperature (K)"]
CELLS = ["49", "49,5", "-0.5", "96.5", "", "---", "1e5", "12:00", "05.05.2025", '"4,5"', "abc"]
STAMPS = [
    "2025-03-30 0{h}:{m}0",
    "2025-10-26 0{h}:{m}0",
    "1{h}.03.2025 10:{m}0",
    "3/{h}/2025 1:{m}0 PM",
    "0{h}/0{h}/2025 10:{m}0",
    "2025-01-01T0{h}:{m}0:00+0{h}:00",
]


@st.composite
def logger_like_text(draw: st.DrawFn) -> str:
    """A logger-like file: preamble, a plausible header, rows of plausible and odd cells."""
    sep = draw(st.sampled_from([",", ";", "\t"]))
    preamble = draw(st.lists(st.text(string.printable, max_size=20), max_size=2))
    header = [draw(st.sampled_from(TIMES)), draw(st.sampled_from(TEMPERATURES))]
    header += draw(st.lists(st.sampled_from(HEADERS), max_size=2))
    header = draw(st.permutations(header))
    stamp = draw(st.sampled_from(STAMPS))
    lines = [*preamble, sep.join(header)]
    for row in range(draw(st.integers(0, 8))):
        hour, minute = divmod(row + draw(st.integers(0, 1)), 6)
        cells = [draw(st.sampled_from(CELLS)) for _ in header]
        cells[0] = stamp.format(h=hour + 1, m=minute)
        cells = draw(st.permutations(cells))
        lines.append(sep.join(cells))
    text = draw(st.sampled_from(["\n", "\r\n", "\r"])).join(lines)
    # A few random edits anywhere: inserted, deleted or replaced characters.
    for _ in range(draw(st.integers(0, 3))):
        at = draw(st.integers(0, len(text)))
        cut = draw(st.integers(0, 2))
        text = text[:at] + draw(st.text(max_size=2)) + text[at + cut :]
    return text


@settings(max_examples=200)
@given(
    logger_like_text(),
    st.sampled_from([None, "Europe/Berlin", "UTC+01:00", "America/New_York"]),
    st.sampled_from([None, "day-first", "month-first", "iso"]),
)
def test_fuzz_logger_like_text_gives_a_result_or_an_input_error(
    text: str, zone: str | None, order: str | None
) -> None:
    _outcome(text, time_zone=zone, date_order=order)


@st.composite
def logs(draw: st.DrawFn) -> tuple[list[Sample], str, str, str, str]:
    count = draw(st.integers(2, 30))
    start = draw(st.datetimes(min_value=datetime(2001, 1, 1), max_value=datetime(2090, 1, 1)))
    start = start.replace(second=0, microsecond=0, tzinfo=UTC)
    steps = draw(st.lists(st.integers(1, 600), min_size=count - 1, max_size=count - 1))
    values = draw(
        st.lists(
            st.tuples(st.integers(-4000, 15000), st.integers(0, 1000)),
            min_size=count,
            max_size=count,
        )
    )
    times = [start]
    for step in steps:
        times.append(times[-1] + timedelta(minutes=step))
    samples = [
        Sample(time=t, temperature_c=temperature / 100, rh_percent=rh / 10)
        for t, (temperature, rh) in zip(times, values, strict=True)
    ]
    sep = draw(st.sampled_from([",", ";", "\t"]))
    decimal = draw(st.sampled_from([".", ","]).filter(lambda mark: mark != sep))
    form = draw(st.sampled_from(["iso", "day-first", "month-first"]))
    unit = draw(st.sampled_from(["°C", "°F"]))
    return samples, sep, decimal, form, unit


@settings(max_examples=100)
@given(logs())
def test_any_written_variant_reads_back_to_the_same_readings(
    case: tuple[list[Sample], str, str, str, str],
) -> None:
    samples, sep, decimal, form, unit = case
    stamp = {
        "iso": "%Y-%m-%d %H:%M",
        "day-first": "%d.%m.%Y %H:%M",
        "month-first": "%m/%d/%Y %H:%M",
    }
    lines = [sep.join(["Time", f"Temp ({unit})", "RH %"])]
    for s in samples:
        temperature = s.temperature_c if unit == "°C" else s.temperature_c * 9 / 5 + 32
        cells = [f"{temperature:.6f}", f"{s.rh_percent:.1f}"]
        cells = [c.replace(".", decimal) for c in cells]
        lines.append(sep.join([s.time.strftime(stamp[form]), *cells]))
    result = read_logger_csv("\n".join(lines), date_order=None if form == "iso" else form)
    assert [s.time for s in result.samples] == [s.time for s in samples]
    for got, wanted in zip(result.samples, samples, strict=True):
        assert got.temperature_c == pytest.approx(wanted.temperature_c, abs=1e-5)
        assert got.rh_percent == wanted.rh_percent
