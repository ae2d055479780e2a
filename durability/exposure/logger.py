"""Import a chamber data logger's CSV export: timestamps, temperature and relative humidity.

Loggers write many small variants of the same table, so the import reads them rather than asking
for one exact layout:

- separator comma, semicolon or tab (found from the column header line, or given);
- decimal point or decimal comma (found from the values, or given);
- units in the headers: ``Temp (°C)``, ``Temperature [°F]``, ``T/K``, ``RH %``, ``%RH``,
  ``Humidity (%RH)``; °F and K are converted to °C and the notes say so;
- a preamble (logger name, serial number, ...) before the column header line, a byte order mark,
  blank lines, a text encoding other than UTF-8 (read as Windows-1252, and said so);
- one timestamp column or a date column plus a time column; ISO timestamps
  (``2024-03-05T14:30:00``, ``2024-03-05 14:30``) and day-first or month-first dates
  (``05.03.2024 14:30``, ``3/5/2024 2:30:00 PM``).

Nothing is guessed silently. Day-first and month-first dates are told apart only by the data
(a day above 12) or by the ``date_order`` parameter; dates that read either way are refused
until the caller says which order the logger writes. Timestamps without a UTC offset are read in
the chamber's time zone and converted to UTC; the hour repeated when clocks go back and the hour
skipped when they go forward are reported in the warnings with the lines concerned.

A file that cannot be read raises :class:`~durability.errors.InputError` naming the line (and the
column where one is involved) and nothing is imported.
"""

from __future__ import annotations

import codecs
import csv
import math
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime, timedelta, timezone, tzinfo
from enum import StrEnum
from pathlib import Path
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

from durability.errors import InputError

__all__ = [
    "DateOrder",
    "LoggerFormat",
    "LoggerImport",
    "Sample",
    "parse_time_zone",
    "read_logger_csv",
    "read_logger_file",
]

# A larger file is not a chamber log of one run; refusing it keeps a web upload bounded.
MAX_FILE_BYTES = 20 * 1024 * 1024

_SEPARATORS: tuple[str, ...] = ("\t", ";", ",")
_SEPARATOR_NAMES = {",": "comma", ";": "semicolon", "\t": "tab"}

# Cells loggers write when a reading is missing.
_MISSING = frozenset({"", "-", "--", "---", "n/a", "na", "nan", "null"})

_NUMBER_RE = re.compile(r"[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d{1,3})?")

_TIME_PART = (
    r"(?:\s*T\s*|\s*,\s*|\s+)"
    r"(?P<H>\d{1,2}):(?P<M>\d{2})(?::(?P<S>\d{2})(?:[.,](?P<f>\d{1,9}))?)?"
    r"\s*(?P<ampm>[ap]\.?\s?m\.?)?"
    r"\s*(?P<off>Z|(?:UTC|GMT)?\s*[+-]\d{2}(?::?\d{2})?|UTC|GMT)?"
)
_ISO_RE = re.compile(
    r"(?P<y>\d{4})(?P<ds>[-/.])(?P<mo>\d{1,2})(?P=ds)(?P<d>\d{1,2})" + _TIME_PART, re.IGNORECASE
)
_DMY_RE = re.compile(
    r"(?P<a>\d{1,2})(?P<ds>[-/.])(?P<b>\d{1,2})(?P=ds)(?P<y>\d{4})" + _TIME_PART, re.IGNORECASE
)
_TWO_DIGIT_YEAR_RE = re.compile(r"\d{1,2}[-/.]\d{1,2}[-/.]\d{2}(?:\D|$)")
_OFFSET_RE = re.compile(r"(?:UTC|GMT)?\s*([+-])(\d{2})(?::?(\d{2}))?", re.IGNORECASE)


class DateOrder(StrEnum):
    """How the dates in a log are written."""

    ISO = "iso"  # year first: 2024-03-05; never ambiguous
    DAY_FIRST = "day-first"  # 05.03.2024, 05/03/2024
    MONTH_FIRST = "month-first"  # 03/05/2024


@dataclass(frozen=True)
class Sample:
    """One logger reading.

    ``temperature_c`` is the logged value converted to °C when the file used °F or K; no sensor
    calibration correction is applied here (that is the exposure check's job). ``line`` is the
    file line the reading came from (None for readings made up in code).
    """

    time: datetime  # aware, UTC
    temperature_c: float
    rh_percent: float | None
    line: int | None = None


@dataclass(frozen=True)
class LoggerFormat:
    """What the import found out about the file's layout."""

    encoding: str
    separator: str
    decimal: str
    date_order: DateOrder
    time_zone: str
    offsets_in_file: bool
    temperature_unit: str  # as written in the file: "°C", "°F" or "K"
    rh_unit: str | None  # "%" or None when the file has no humidity column
    header_line: int
    preamble_lines: int
    time_columns: tuple[str, ...]  # the timestamp column, or the date and the time column
    temperature_column: str
    rh_column: str | None

    @property
    def separator_name(self) -> str:
        """The separator as a word: comma, semicolon or tab."""
        return _SEPARATOR_NAMES.get(self.separator, repr(self.separator))

    def as_dict(self) -> dict[str, object]:
        """The facts as JSON-ready values."""
        return {
            "encoding": self.encoding,
            "separator": self.separator_name,
            "decimal": "comma" if self.decimal == "," else "point",
            "date_order": self.date_order.value,
            "time_zone": self.time_zone,
            "offsets_in_file": self.offsets_in_file,
            "temperature_unit": self.temperature_unit,
            "rh_unit": self.rh_unit,
            "header_line": self.header_line,
            "preamble_lines": self.preamble_lines,
            "time_columns": list(self.time_columns),
            "temperature_column": self.temperature_column,
            "rh_column": self.rh_column,
        }


@dataclass(frozen=True)
class LoggerImport:
    """The readings of one log with the facts found about its format.

    ``notes`` state what was assumed or converted; ``warnings`` are things a person should look
    at (daylight-saving repeats and gaps, rows left out for a missing reading).
    """

    samples: tuple[Sample, ...]
    format: LoggerFormat
    notes: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()

    def as_dict(self) -> dict[str, object]:
        """Format facts, counts, first and last time, notes and warnings (not the samples)."""
        return {
            "format": self.format.as_dict(),
            "samples": len(self.samples),
            "first": self.samples[0].time.isoformat() if self.samples else None,
            "last": self.samples[-1].time.isoformat() if self.samples else None,
            "notes": list(self.notes),
            "warnings": list(self.warnings),
        }


# ---------------------------------------------------------------- time zones


def parse_time_zone(text: str) -> tuple[tzinfo, str]:
    """Read a time zone: an IANA name (``Europe/Berlin``), ``UTC``, or a fixed ``UTC+01:00``.

    A fixed offset suits a logger whose clock stays on standard time all year. Returns the tzinfo
    and its canonical name; raises InputError for anything else.
    """
    name = text.strip()
    if name.upper() in {"UTC", "Z", "GMT"}:
        return UTC, "UTC"
    offset = _OFFSET_RE.fullmatch(name)
    if offset is not None:
        delta = _offset_delta(offset)
        if delta is None:
            raise InputError(f"time zone {text!r}: the offset must be less than 24 hours")
        return timezone(delta), _offset_name(delta)
    if not name or "\x00" in name or len(name) > 100:
        raise InputError(f"time zone {text!r} is not a time zone name such as Europe/Berlin")
    try:
        return ZoneInfo(name), name
    except (ZoneInfoNotFoundError, ValueError, OSError):
        raise InputError(
            f"time zone {text!r} is not known (use an IANA name such as Europe/Berlin, "
            "UTC, or a fixed offset such as UTC+01:00)"
        ) from None


def _offset_delta(match: re.Match[str]) -> timedelta | None:
    sign = -1 if match.group(1) == "-" else 1
    hours = int(match.group(2))
    minutes = int(match.group(3) or 0)
    if minutes >= 60 or hours >= 24:
        return None
    return sign * timedelta(hours=hours, minutes=minutes)


def _offset_name(delta: timedelta) -> str:
    total = int(delta.total_seconds()) // 60
    sign = "-" if total < 0 else "+"
    hours, minutes = divmod(abs(total), 60)
    return f"UTC{sign}{hours:02d}:{minutes:02d}"


# ---------------------------------------------------------------- decoding and lines


def _decode(data: bytes) -> tuple[str, str]:
    if data.startswith(codecs.BOM_UTF8):
        try:
            return data[len(codecs.BOM_UTF8) :].decode("utf-8"), "UTF-8 with byte order mark"
        except UnicodeDecodeError as exc:
            raise InputError(
                f"the file starts with a UTF-8 byte order mark but byte {exc.start + 3} "
                "is not UTF-8"
            ) from None
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            return data.decode("utf-16"), "UTF-16"
        except UnicodeDecodeError:
            raise InputError(
                "the file starts with a UTF-16 byte order mark but is not UTF-16 text"
            ) from None
    try:
        return data.decode("utf-8"), "UTF-8"
    except UnicodeDecodeError:
        pass
    try:
        return data.decode("cp1252"), "Windows-1252"
    except UnicodeDecodeError:
        return data.decode("latin-1"), "ISO-8859-1"


def _lines(text: str) -> list[str]:
    # Only CR and LF end a line: str.splitlines would also split on form feeds and other
    # separators a CSV cell may hold, and the line numbers in messages must match an editor's.
    lines = text.replace("\r\n", "\n").replace("\r", "\n").split("\n")
    for number, line in enumerate(lines, start=1):
        if "\x00" in line:
            raise InputError(
                f"line {number}: contains a NUL character (is this a binary or a UTF-16 file "
                "without byte order mark?)"
            )
    return lines


def _split(line: str, separator: str, line_no: int) -> list[str]:
    try:
        rows = list(csv.reader([line], delimiter=separator, quotechar='"', strict=True))
    except csv.Error as exc:
        raise InputError(f"line {line_no}: cannot split into columns ({exc})") from None
    if not rows:
        return []
    return [cell.strip() for cell in rows[0]]


# ---------------------------------------------------------------- the column header


@dataclass(frozen=True)
class _Columns:
    time: int | None
    date: int | None
    clock: int | None
    temperature: int
    rh: int | None
    temperature_unit: str | None
    header_zone: str | None
    order_hint: DateOrder | None
    names: tuple[str, ...]
    ignored: tuple[str, ...]

    @property
    def time_names(self) -> tuple[str, ...]:
        """The timestamp column's name, or the date and the time column's names."""
        if self.date is not None and self.clock is not None:
            return (self.names[self.date], self.names[self.clock])
        return (self.names[self.time if self.time is not None else 0],)

    @property
    def needed(self) -> int:
        used = [
            i
            for i in (self.time, self.date, self.clock, self.temperature, self.rh)
            if i is not None
        ]
        return max(used) + 1


_UNIT_BRACKET_RE = re.compile(r"(.*?)\s*[(\[{]\s*([^)\]}]*?)\s*[)\]}]\s*")
_UNIT_TRAILING_RE = re.compile(
    r"(.*?)\s*(?:/|,|\bin\b)?\s*(°\s*[cfk]|º\s*[cfk]|℃|℉|deg\.?\s*[cf]|%\s*rh|%)",
    re.IGNORECASE,
)

_TIMESTAMP_NAMES = frozenset(
    {
        "time",
        "timestamp",
        "time stamp",
        "date time",
        "datetime",
        "date and time",
        "local time",
        "sample time",
    }
)
_NOT_A_READING = frozenset(
    {"set", "setpoint", "sp", "target", "dew", "dewpoint", "abs", "absolute", "min", "max"}
)


def _header_cell(cell: str) -> tuple[str, str | None]:
    """Split a header cell into its name and the unit written with it."""
    text = " ".join(cell.replace("Â°", "°").replace("Âº", "º").split())
    bracket = _UNIT_BRACKET_RE.fullmatch(text)
    if bracket is not None and bracket.group(1):
        return bracket.group(1), bracket.group(2)
    trailing = _UNIT_TRAILING_RE.fullmatch(text)
    if trailing is not None:
        unit = trailing.group(2)
        if trailing.group(1):
            return trailing.group(1), unit
        if "rh" in unit.lower():
            return "RH", "%"
    return text, None


_DAY_FIRST_HINT_RE = re.compile(r"d{1,2}\W?m{1,2}\W?y{2,4}", re.IGNORECASE)
_MONTH_FIRST_HINT_RE = re.compile(r"m{1,2}\W?d{1,2}\W?y{2,4}", re.IGNORECASE)
_ISO_HINT_RE = re.compile(r"y{4}\W?m{1,2}\W?d{1,2}", re.IGNORECASE)


def _order_hint(unit: str | None) -> DateOrder | None:
    """A date pattern written in the time column's header, such as ``Date (DD.MM.YYYY)``."""
    if unit is None:
        return None
    if _ISO_HINT_RE.match(unit):
        return DateOrder.ISO
    if _DAY_FIRST_HINT_RE.match(unit):
        return DateOrder.DAY_FIRST
    if _MONTH_FIRST_HINT_RE.match(unit):
        return DateOrder.MONTH_FIRST
    return None


def _words(name: str) -> list[str]:
    return re.findall(r"[a-z]+", name.lower())


def _temperature_unit(unit: str | None) -> str | None:
    if unit is None:
        return None
    key = re.sub(r"[\s.]", "", unit.lower()).replace("degrees", "deg").replace("grad", "deg")
    if key in {"°c", "ºc", "℃", "degc", "c", "celsius", "°celsius", "degcelsius"}:
        return "°C"
    if key in {"°f", "ºf", "℉", "degf", "f", "fahrenheit", "°fahrenheit", "degfahrenheit"}:
        return "°F"
    if key in {"k", "°k", "kelvin"}:
        return "K"
    return "?" + unit


def _rh_unit_ok(unit: str | None) -> bool:
    if unit is None:
        return True
    key = re.sub(r"[\s.]", "", unit.lower())
    return key in {"%", "%rh", "rh%", "rh", "percent", "%r"}


def _match_columns(cells: Sequence[str]) -> _Columns | None:
    """Recognise a header line; None when the line is not one."""
    times: list[int] = []
    dates: list[int] = []
    temperatures: list[tuple[int, str | None]] = []
    humidities: list[tuple[int, str | None]] = []
    header_zone: str | None = None
    order_hint: DateOrder | None = None
    ignored: list[str] = []
    for index, cell in enumerate(cells):
        name, unit = _header_cell(cell)
        words = _words(name)
        joined = " ".join(words)
        if not words:
            if cell:
                ignored.append(cell)
            continue
        if joined in _TIMESTAMP_NAMES or joined in {"date", "utc", "utc time"}:
            if joined == "date":
                dates.append(index)
            else:
                times.append(index)
            hint = _order_hint(unit)
            if hint is not None:
                order_hint = hint
            elif joined.startswith("utc"):
                header_zone = "UTC"
            elif unit is not None:
                header_zone = unit
            continue
        if _NOT_A_READING.intersection(words):
            ignored.append(cell)
            continue
        if "temperature" in words or "temp" in words or words == ["t"]:
            temperatures.append((index, unit))
        elif "rh" in words or "humidity" in words:
            humidities.append((index, unit))
        else:
            ignored.append(cell)
    if not temperatures or not (times or dates):
        return None
    if len(temperatures) > 1:
        names = ", ".join(repr(cells[i]) for i, _ in temperatures)
        raise _HeaderError(f"more than one temperature column ({names}); pass temperature_column")
    if len(humidities) > 1:
        names = ", ".join(repr(cells[i]) for i, _ in humidities)
        raise _HeaderError(f"more than one humidity column ({names}); pass rh_column")
    time_index: int | None = None
    date_index: int | None = None
    clock_index: int | None = None
    if dates and times and len(dates) == 1 and len(times) == 1:
        date_index, clock_index = dates[0], times[0]
    elif len(times) == 1 and not dates:
        time_index = times[0]
    elif len(dates) == 1 and not times:
        time_index = dates[0]
    else:
        return None
    temperature_index, temperature_unit = temperatures[0]
    rh_index, rh_unit = humidities[0] if humidities else (None, None)
    if rh_index is not None and not _rh_unit_ok(rh_unit):
        raise _HeaderError(
            f"the humidity column {cells[rh_index]!r} is in {rh_unit!r}, not percent RH"
        )
    return _Columns(
        time=time_index,
        date=date_index,
        clock=clock_index,
        temperature=temperature_index,
        rh=rh_index,
        temperature_unit=temperature_unit,
        header_zone=header_zone,
        order_hint=order_hint,
        names=tuple(cells),
        ignored=tuple(ignored),
    )


class _HeaderError(Exception):
    """A header line that was recognised but cannot be used; becomes an InputError with line."""


def _select_columns(
    cells: Sequence[str], temperature_column: str | None, rh_column: str | None
) -> _Columns | None:
    """Like _match_columns, but a named column wins over recognition by name."""
    if temperature_column is None and rh_column is None:
        return _match_columns(cells)
    stripped = [c.strip() for c in cells]
    keep = list(stripped)
    for wanted in (temperature_column, rh_column):
        if wanted is not None and wanted.strip() not in stripped:
            return None
    # Blank out the competing candidates so recognition sees exactly the chosen ones.
    for index, cell in enumerate(stripped):
        name, _ = _header_cell(cell)
        words = _words(name)
        if temperature_column is not None and cell != temperature_column.strip():
            if "temperature" in words or "temp" in words or words == ["t"]:
                keep[index] = ""
        if rh_column is not None and cell != rh_column.strip():
            if "rh" in words or "humidity" in words:
                keep[index] = ""
    found = _match_columns(keep)
    if found is None:
        return None
    return _Columns(
        time=found.time,
        date=found.date,
        clock=found.clock,
        temperature=found.temperature,
        rh=found.rh,
        temperature_unit=found.temperature_unit,
        header_zone=found.header_zone,
        order_hint=found.order_hint,
        names=tuple(stripped),
        ignored=tuple(c for c in stripped if c and c not in keep),
    )


# ---------------------------------------------------------------- timestamps


@dataclass(frozen=True)
class _RawTime:
    line: int
    column: str
    text: str
    iso: bool
    first: int  # ISO: month; otherwise the first date field
    second: int  # ISO: day; otherwise the second date field
    year: int
    hour: int
    minute: int
    second_of_minute: int
    microsecond: int
    offset: timedelta | None


def _parse_time(text: str, line: int, column: str) -> _RawTime:
    compact = text.strip()
    match = _ISO_RE.fullmatch(compact)
    iso = match is not None
    if match is None:
        match = _DMY_RE.fullmatch(compact)
    if match is None:
        hint = ""
        if _TWO_DIGIT_YEAR_RE.match(compact):
            hint = " (two-digit years are not read: the century would be a guess)"
        raise InputError(
            f"line {line}, column {column!r}: {text!r} is not a date and time this import "
            f"reads{hint}; expected e.g. 2024-03-05 14:30:00, 05.03.2024 14:30 or "
            "3/5/2024 2:30 PM"
        )
    hour = int(match.group("H"))
    ampm = match.group("ampm")
    if ampm is not None:
        if not 1 <= hour <= 12:
            raise InputError(f"line {line}, column {column!r}: {text!r} has hour {hour} with AM/PM")
        pm = ampm.lower().startswith("p")
        hour = hour % 12 + (12 if pm else 0)
    fraction = match.group("f") or ""
    offset: timedelta | None = None
    offset_text = match.group("off")
    if offset_text is not None:
        upper = offset_text.strip().upper()
        if upper in {"Z", "UTC", "GMT"}:
            offset = timedelta(0)
        else:
            parsed = _OFFSET_RE.fullmatch(offset_text.strip())
            offset = _offset_delta(parsed) if parsed is not None else None
            if offset is None:
                raise InputError(
                    f"line {line}, column {column!r}: {text!r} has a UTC offset of 24 hours or more"
                )
    if iso:
        first, second = int(match.group("mo")), int(match.group("d"))
    else:
        first, second = int(match.group("a")), int(match.group("b"))
    return _RawTime(
        line=line,
        column=column,
        text=text,
        iso=iso,
        first=first,
        second=second,
        year=int(match.group("y")),
        hour=hour,
        minute=int(match.group("M")),
        second_of_minute=int(match.group("S") or 0),
        microsecond=int((fraction + "000000")[:6]),
        offset=offset,
    )


def _date_order(
    raws: Sequence[_RawTime],
    wanted: DateOrder | None,
    hint: DateOrder | None,
    notes: list[str],
) -> DateOrder:
    """Decide how the dates are written, from the caller, the header and the data, in turn.

    Day-first and month-first are told apart by a field above 12; dates that read either way
    are refused unless the caller or the header says which order the logger writes.
    """
    if any(raw.iso for raw in raws) and not all(raw.iso for raw in raws):
        first_iso = next(r for r in raws if r.iso)
        first_other = next(r for r in raws if not r.iso)
        raise InputError(
            f"line {max(first_iso.line, first_other.line)}: the dates switch form "
            f"({first_iso.text!r} on line {first_iso.line}, {first_other.text!r} on line "
            f"{first_other.line}); a log must use one form"
        )
    if raws[0].iso:
        if wanted not in {None, DateOrder.ISO}:
            notes.append(f"dates are ISO (year-month-day); the {wanted} setting did not apply")
        return DateOrder.ISO
    if wanted is DateOrder.ISO:
        raise InputError(
            f"line {raws[0].line}, column {raws[0].column!r}: {raws[0].text!r} is not an ISO "
            "date (year-month-day) as the date order setting says"
        )
    day_first = next((r for r in raws if r.first > 12), None)
    month_first = next((r for r in raws if r.second > 12), None)
    if day_first is not None and month_first is not None:
        raise InputError(
            f"line {month_first.line}: {month_first.text!r} can only be month-first but line "
            f"{day_first.line} ({day_first.text!r}) can only be day-first"
        )
    for stated, source in ((wanted, "the date order setting"), (hint, "the column header")):
        if stated is None or stated is DateOrder.ISO:
            continue
        contrary = month_first if stated is DateOrder.DAY_FIRST else day_first
        if contrary is not None:
            field_value = contrary.second if stated is DateOrder.DAY_FIRST else contrary.first
            raise InputError(
                f"line {contrary.line}, column {contrary.column!r}: {contrary.text!r} has month "
                f"{field_value} when read {stated}, as {source} says; the logger writes the "
                f"{'month' if stated is DateOrder.DAY_FIRST else 'day'} first"
            )
        notes.append(f"dates read {stated}, as {source} says")
        return stated
    if day_first is not None:
        notes.append(
            f"dates read day-first: line {day_first.line} has {day_first.text!r}, which has no "
            "month-first reading"
        )
        return DateOrder.DAY_FIRST
    if month_first is not None:
        notes.append(
            f"dates read month-first: line {month_first.line} has {month_first.text!r}, which "
            "has no day-first reading"
        )
        return DateOrder.MONTH_FIRST
    ambiguous = next((r for r in raws if r.first != r.second), None)
    if ambiguous is None:
        notes.append("every date has the same day and month, so the date order does not matter")
        return DateOrder.DAY_FIRST
    raise InputError(
        f"line {ambiguous.line}, column {ambiguous.column!r}: {ambiguous.text!r} reads as "
        f"day {ambiguous.first} of month {ambiguous.second} (day-first) or day "
        f"{ambiguous.second} of month {ambiguous.first} (month-first), and nothing in the file "
        "settles it; set the date order the logger writes (day-first or month-first)"
    )


def _naive(raw: _RawTime, order: DateOrder) -> datetime:
    if order is DateOrder.MONTH_FIRST:
        month, day = raw.first, raw.second
    elif order is DateOrder.DAY_FIRST:
        day, month = raw.first, raw.second
    else:
        month, day = raw.first, raw.second
    try:
        return datetime(
            raw.year,
            month,
            day,
            raw.hour,
            raw.minute,
            raw.second_of_minute,
            raw.microsecond,
        )
    except ValueError as exc:
        raise InputError(
            f"line {raw.line}, column {raw.column!r}: {raw.text!r} is not a valid date and "
            f"time ({exc}, read {order.value})"
        ) from None


@dataclass(frozen=True)
class _ZoneEvent:
    line: int
    local: datetime
    offset: timedelta
    first_pass: bool  # for a repeated hour: read as its first occurrence


@dataclass
class _ZoneEvents:
    """Daylight-saving events met while converting, grouped into line ranges for messages."""

    repeats: list[_ZoneEvent] = field(default_factory=list)
    skipped: list[_ZoneEvent] = field(default_factory=list)
    changes: list[tuple[int, int, timedelta, timedelta]] = field(default_factory=list)


def _to_utc(
    raws: Sequence[_RawTime],
    naives: Sequence[datetime],
    zone: tzinfo,
    events: _ZoneEvents,
) -> list[datetime]:
    result: list[datetime] = []
    previous_utc: datetime | None = None
    previous_offset: tuple[int, timedelta] | None = None
    for raw, naive in zip(raws, naives, strict=True):
        try:
            if raw.offset is not None:
                utc_naive = naive - raw.offset
            else:
                offset = _local_offset(naive, zone, previous_utc, raw.line, events)
                utc_naive = naive - offset
                if previous_offset is not None and previous_offset[1] != offset:
                    events.changes.append(
                        (previous_offset[0], raw.line, previous_offset[1], offset)
                    )
                previous_offset = (raw.line, offset)
        except OverflowError:
            raise InputError(
                f"line {raw.line}, column {raw.column!r}: {raw.text!r} is out of the range of "
                "dates this import handles"
            ) from None
        utc = utc_naive.replace(tzinfo=UTC)
        result.append(utc)
        previous_utc = utc
    return result


def _local_offset(
    naive: datetime,
    zone: tzinfo,
    previous_utc: datetime | None,
    line: int,
    events: _ZoneEvents,
) -> timedelta:
    early = zone.utcoffset(naive.replace(tzinfo=zone, fold=0))
    late = zone.utcoffset(naive.replace(tzinfo=zone, fold=1))
    if early is None or late is None:
        raise InputError(f"line {line}: the time zone gives no UTC offset for {naive}")
    if early == late:
        return early
    if early < late:
        # Clocks went forward: this wall time was skipped. PEP 495's fold=0 reads it with the
        # offset from before the change, i.e. as if the logger's clock had not been moved yet.
        events.skipped.append(_ZoneEvent(line, naive, early, first_pass=True))
        return early
    # Clocks went back: the wall time occurs twice. Read it as the first occurrence unless the
    # log has already passed that instant, which puts the row in the second occurrence.
    if previous_utc is not None and (naive - early).replace(tzinfo=UTC) <= previous_utc:
        events.repeats.append(_ZoneEvent(line, naive, late, first_pass=False))
        return late
    events.repeats.append(_ZoneEvent(line, naive, early, first_pass=True))
    return early


def _line_ranges(lines: Sequence[int]) -> str:
    return f"line {lines[0]}" if len(lines) == 1 else f"lines {lines[0]}-{lines[-1]}"


def _group(events: Sequence[_ZoneEvent]) -> list[list[_ZoneEvent]]:
    groups: list[list[_ZoneEvent]] = []
    for event in events:
        last = groups[-1][-1] if groups else None
        if last is not None and last.offset == event.offset and last.local <= event.local:
            groups[-1].append(event)
        else:
            groups.append([event])
    return groups


def _zone_messages(events: _ZoneEvents, zone_name: str) -> tuple[list[str], list[str]]:
    notes: list[str] = []
    warnings: list[str] = []
    for before_line, after_line, before, after in events.changes:
        direction = "forward" if after > before else "back"
        notes.append(
            f"the log crosses a daylight-saving change in {zone_name} between lines "
            f"{before_line} and {after_line} (clocks go {direction}: {_offset_name(before)} to "
            f"{_offset_name(after)}); times were converted to UTC across it"
        )
    for group in _group(events.repeats):
        lines = [event.line for event in group]
        which = "first" if group[0].first_pass else "second"
        warnings.append(
            f"{_line_ranges(lines)}: local times {group[0].local:%Y-%m-%d %H:%M} to "
            f"{group[-1].local:%H:%M} occur twice in {zone_name} (clocks go back); read as "
            f"their {which} occurrence ({_offset_name(group[0].offset)}) from the order of the "
            "rows. If the logger keeps standard time all year, give a fixed offset such as "
            "UTC+01:00 instead"
        )
    for group in _group(events.skipped):
        lines = [event.line for event in group]
        warnings.append(
            f"{_line_ranges(lines)}: local times {group[0].local:%Y-%m-%d %H:%M} to "
            f"{group[-1].local:%H:%M} do not exist in {zone_name} (clocks go forward); read "
            f"with the offset before the change ({_offset_name(group[0].offset)}). The logger "
            "probably keeps standard time all year: give a fixed offset such as UTC+01:00 "
            "instead"
        )
    return notes, warnings


# ---------------------------------------------------------------- numbers


def _decimal_mark(
    cells: Sequence[tuple[int, str, str]], wanted: str | None
) -> tuple[str, list[str]]:
    """The decimal mark: as given, or the one the values use; both in one file is refused."""
    if wanted is not None:
        return wanted, []
    point = next((c for c in cells if "." in c[2]), None)
    comma = next((c for c in cells if "," in c[2]), None)
    if point is not None and comma is not None:
        later, earlier = (point, comma) if point[0] > comma[0] else (comma, point)
        later_mark = "point" if later is point else "comma"
        earlier_mark = "comma" if later is point else "point"
        raise InputError(
            f"line {later[0]}, column {later[1]!r}: {later[2]!r} uses a decimal {later_mark} "
            f"but line {earlier[0]} ({earlier[2]!r}) uses a decimal {earlier_mark}"
        )
    if comma is not None:
        return ",", ["values use a decimal comma"]
    return ".", []


def _number(text: str, decimal: str, line: int, column: str) -> float:
    if not _NUMBER_RE.fullmatch(text):
        raise InputError(f"line {line}, column {column!r}: {text!r} is not a number")
    other = "," if decimal == "." else "."
    if other in text:
        raise InputError(
            f"line {line}, column {column!r}: {text!r} does not use the file's decimal mark "
            f"{decimal!r}"
        )
    value = float(text.replace(",", "."))
    if not math.isfinite(value):
        raise InputError(f"line {line}, column {column!r}: {text!r} is not a finite number")
    return value


def _to_celsius(value: float, unit: str) -> float:
    if unit == "°F":
        return (value - 32.0) * 5.0 / 9.0
    if unit == "K":
        return value - 273.15
    return value


# ---------------------------------------------------------------- the import


def read_logger_file(
    path: str | Path,
    *,
    time_zone: str | None = None,
    date_order: DateOrder | str | None = None,
    separator: str | None = None,
    decimal: str | None = None,
    temperature_unit: str | None = None,
    temperature_column: str | None = None,
    rh_column: str | None = None,
) -> LoggerImport:
    """Read a logger export from a file; see :func:`read_logger_csv` for the options."""
    file_path = Path(path)
    try:
        size = file_path.stat().st_size
        if size > MAX_FILE_BYTES:
            raise InputError(
                f"{file_path.name}: {size} bytes is more than a chamber log of "
                f"{MAX_FILE_BYTES // (1024 * 1024)} MB this import reads"
            )
        data = file_path.read_bytes()
    except OSError as exc:
        raise InputError(f"cannot read {str(file_path)!r}: {exc.strerror or exc}") from None
    return read_logger_csv(
        data,
        time_zone=time_zone,
        date_order=date_order,
        separator=separator,
        decimal=decimal,
        temperature_unit=temperature_unit,
        temperature_column=temperature_column,
        rh_column=rh_column,
    )


def read_logger_csv(
    data: bytes | str,
    *,
    time_zone: str | None = None,
    date_order: DateOrder | str | None = None,
    separator: str | None = None,
    decimal: str | None = None,
    temperature_unit: str | None = None,
    temperature_column: str | None = None,
    rh_column: str | None = None,
) -> LoggerImport:
    """Import a data logger's CSV export.

    ``time_zone`` is the chamber's zone (IANA name or fixed ``UTC+01:00``) for timestamps
    without an offset; when it is None the time column's header may name one (``Time (UTC)``),
    otherwise UTC is used and a note says so. ``date_order`` is needed only for day-first or
    month-first dates that the data alone cannot settle. ``separator``, ``decimal``,
    ``temperature_unit`` (°C, °F or K when the header has none) and the column names override
    what the import would find itself.

    Returns the readings in UTC with the format facts, notes and warnings. Raises InputError
    naming the line (and column) for a file it cannot read, and imports nothing then.
    """
    text, encoding = _text(data)
    order = _date_order_option(date_order)
    if separator is not None and separator not in _SEPARATORS:
        raise InputError(f"separator {separator!r}: use ',', ';' or a tab")
    if decimal is not None and decimal not in {".", ","}:
        raise InputError(f"decimal mark {decimal!r}: use '.' or ','")
    forced_unit = _temperature_unit(temperature_unit) if temperature_unit is not None else None
    if forced_unit is not None and forced_unit.startswith("?"):
        raise InputError(f"temperature unit {temperature_unit!r}: use °C, °F or K")

    notes: list[str] = []
    warnings: list[str] = []
    if encoding in {"Windows-1252", "ISO-8859-1"}:
        notes.append(f"the file is not UTF-8; read as {encoding}")
    lines = _lines(text)
    header_index, sep, columns = _find_header(lines, separator, temperature_column, rh_column)
    header_no = header_index + 1
    preamble = sum(1 for line in lines[:header_index] if line.strip())
    if preamble:
        notes.append(f"{preamble} preamble line(s) before the column header on line {header_no}")
    if columns.ignored:
        notes.append("columns not used: " + ", ".join(repr(name) for name in columns.ignored))
    unit = _unit_for(forced_unit, columns, header_no, notes)
    zone, zone_name = _zone_for(time_zone, columns, header_no, notes)

    rows = _data_rows(lines, header_index, sep, columns)
    readings, mark, rh_present = _readings(rows, columns, unit, decimal, notes, warnings)
    raws = [reading.time for reading in readings]
    order = _date_order(raws, order, columns.order_hint, notes)
    times = _times(raws, order, zone, zone_name, notes, warnings)

    rh_name = columns.names[columns.rh] if columns.rh is not None and rh_present else None
    return LoggerImport(
        samples=tuple(
            Sample(time=time, temperature_c=r.temperature_c, rh_percent=r.rh_percent, line=r.line)
            for time, r in zip(times, readings, strict=True)
        ),
        format=LoggerFormat(
            encoding=encoding,
            separator=sep,
            decimal=mark,
            date_order=order,
            time_zone=zone_name,
            offsets_in_file=any(raw.offset is not None for raw in raws),
            temperature_unit=unit,
            rh_unit="%" if rh_name is not None else None,
            header_line=header_no,
            preamble_lines=preamble,
            time_columns=columns.time_names,
            temperature_column=columns.names[columns.temperature],
            rh_column=rh_name,
        ),
        notes=tuple(notes),
        warnings=tuple(warnings),
    )


def _text(data: bytes | str) -> tuple[str, str]:
    """The file as text without byte order mark, and how it was decoded."""
    if isinstance(data, bytes):
        if len(data) > MAX_FILE_BYTES:
            raise InputError(
                f"{len(data)} bytes is more than a chamber log of "
                f"{MAX_FILE_BYTES // (1024 * 1024)} MB this import reads"
            )
        text, encoding = _decode(data)
    elif isinstance(data, str):
        text, encoding = data, "text"
    else:
        raise InputError("the log must be given as bytes or text")
    if text.startswith("\ufeff"):
        text = text[1:]
        if encoding == "text":
            encoding = "text with byte order mark"
    return text, encoding


def _unit_for(forced: str | None, columns: _Columns, header_no: int, notes: list[str]) -> str:
    unit = forced or _temperature_unit(columns.temperature_unit)
    name = columns.names[columns.temperature]
    if unit is None:
        unit = "°C"
        notes.append(f"the temperature column {name!r} names no unit; read as °C")
    elif unit.startswith("?"):
        raise InputError(
            f"line {header_no}, column {name!r}: temperature unit {unit[1:]!r} is not °C, °F or K"
        )
    if unit != "°C":
        notes.append(f"temperatures were logged in {unit} and converted to °C")
    return unit


@dataclass(frozen=True)
class _Row:
    line: int
    time: _RawTime
    temperature: str
    rh: str | None


@dataclass(frozen=True)
class _Reading:
    line: int
    time: _RawTime
    temperature_c: float
    rh_percent: float | None


def _data_rows(
    lines: Sequence[str], header_index: int, separator: str, columns: _Columns
) -> list[_Row]:
    """Split the rows after the header and parse their timestamps."""
    header_no = header_index + 1
    rows: list[_Row] = []
    for index in range(header_index + 1, len(lines)):
        line = lines[index]
        line_no = index + 1
        if not line.strip():
            continue
        cells = _split(line, separator, line_no)
        if all(not cell for cell in cells):
            continue
        if len(cells) < columns.needed:
            raise InputError(
                f"line {line_no}: {len(cells)} column(s) where the header on line {header_no} "
                f"has {len(columns.names)} ({_SEPARATOR_NAMES[separator]}-separated)"
            )
        rh_text = cells[columns.rh] if columns.rh is not None else None
        rows.append(
            _Row(line_no, _row_time(cells, columns, line_no), cells[columns.temperature], rh_text)
        )
    if not rows:
        raise InputError(f"line {header_no}: the column header is followed by no readings")
    return rows


def _missing(text: str | None) -> bool:
    return text is not None and text.lower() in _MISSING


def _readings(
    rows: Sequence[_Row],
    columns: _Columns,
    unit: str,
    decimal: str | None,
    notes: list[str],
    warnings: list[str],
) -> tuple[list[_Reading], str, bool]:
    """Read the values, once the decimal mark is settled from all of them.

    Returns the complete readings, the decimal mark and whether the file has humidity at all.
    Rows with a missing value are left out with a warning.
    """
    temperature_name = columns.names[columns.temperature]
    rh_name = columns.names[columns.rh] if columns.rh is not None else ""
    cells: list[tuple[int, str, str]] = []
    for row in rows:
        if not _missing(row.temperature):
            cells.append((row.line, temperature_name, row.temperature))
        if row.rh is not None and not _missing(row.rh):
            cells.append((row.line, rh_name, row.rh))
    mark, decimal_notes = _decimal_mark(cells, decimal)
    notes.extend(decimal_notes)
    rh_present = any(row.rh is not None and not _missing(row.rh) for row in rows)
    if columns.rh is not None and not rh_present:
        notes.append(f"the humidity column {rh_name!r} is empty; readings have no humidity")

    readings: list[_Reading] = []
    dropped: list[int] = []
    for row in rows:
        if _missing(row.temperature) or (rh_present and _missing(row.rh)):
            dropped.append(row.line)
            continue
        celsius = _to_celsius(_number(row.temperature, mark, row.line, temperature_name), unit)
        if celsius < -273.15:
            raise InputError(
                f"line {row.line}, column {temperature_name!r}: {row.temperature} {unit} is "
                "below absolute zero"
            )
        rh_value: float | None = None
        if rh_present and row.rh is not None:
            rh_value = _number(row.rh, mark, row.line, rh_name)
            # Sensors in saturated air read a little over 100 %; beyond 110 % or below 0 the
            # reading is not a humidity at all.
            if not 0.0 <= rh_value <= 110.0:
                raise InputError(
                    f"line {row.line}, column {rh_name!r}: {row.rh} % RH is outside 0 to 110 %"
                )
        readings.append(_Reading(row.line, row.time, celsius, rh_value))
    if dropped:
        warnings.append(
            f"{len(dropped)} row(s) have no reading and were left out ({_list_lines(dropped)}); "
            "the exposure check treats the time they cover as any other spacing between "
            "readings"
        )
    if not readings:
        raise InputError("no row after the column header has a complete reading")
    return readings, mark, rh_present


def _times(
    raws: Sequence[_RawTime],
    order: DateOrder,
    zone: tzinfo,
    zone_name: str,
    notes: list[str],
    warnings: list[str],
) -> list[datetime]:
    """The readings' times in UTC, strictly increasing; daylight-saving events reported."""
    naives = [_naive(raw, order) for raw in raws]
    events = _ZoneEvents()
    times = _to_utc(raws, naives, zone, events)
    zone_notes, zone_warnings = _zone_messages(events, zone_name)
    notes.extend(zone_notes)
    warnings.extend(zone_warnings)
    if any(raw.offset is not None for raw in raws):
        notes.append("timestamps carry their own UTC offset, which was used for them")
    for index in range(1, len(times)):
        previous, current = times[index - 1], times[index]
        if current <= previous:
            raw, earlier = raws[index], raws[index - 1]
            raise InputError(
                f"line {raw.line}, column {raw.column!r}: {raw.text!r} "
                f"({current:%Y-%m-%d %H:%M:%S} UTC) is not later than line {earlier.line} "
                f"({previous:%Y-%m-%d %H:%M:%S} UTC); readings must be in time order without "
                "repeats"
            )
    return times


def _date_order_option(value: DateOrder | str | None) -> DateOrder | None:
    if value is None or isinstance(value, DateOrder):
        return value
    try:
        return DateOrder(str(value).strip().lower())
    except ValueError:
        raise InputError(
            f"date order {value!r}: use {', '.join(o.value for o in DateOrder)}"
        ) from None


def _find_header(
    lines: Sequence[str],
    separator: str | None,
    temperature_column: str | None,
    rh_column: str | None,
) -> tuple[int, str, _Columns]:
    candidates = (separator,) if separator is not None else _SEPARATORS
    for index, line in enumerate(lines):
        if not line.strip():
            continue
        for sep in candidates:
            if sep not in line and len(candidates) > 1:
                continue
            try:
                cells = _split(line, sep, index + 1)
            except InputError:
                continue  # a preamble line need not be valid CSV
            try:
                found = _select_columns(cells, temperature_column, rh_column)
            except _HeaderError as exc:
                raise InputError(f"line {index + 1}: {exc}") from None
            if found is not None:
                return index, sep, found
    wanted = "a time (or date and time) column and a temperature column"
    if temperature_column is not None:
        wanted = f"a time column and the temperature column {temperature_column!r}"
    raise InputError(
        f"no column header found in lines 1-{len(lines)}: expected a line naming {wanted} "
        "(e.g. 'Time;Temp (°C);RH %'), separated by commas, semicolons or tabs"
    )


def _zone_for(
    time_zone: str | None, columns: _Columns, header_no: int, notes: list[str]
) -> tuple[tzinfo, str]:
    header_zone: tuple[tzinfo, str] | None = None
    if columns.header_zone is not None:
        try:
            header_zone = parse_time_zone(columns.header_zone)
        except InputError:
            notes.append(
                f"the time column's header mentions {columns.header_zone!r}, which is not a "
                "time zone; ignored"
            )
    if time_zone is not None:
        zone, name = parse_time_zone(time_zone)
        if header_zone is not None and header_zone[1] != name:
            raise InputError(
                f"line {header_no}: the time column's header gives time zone {header_zone[1]} "
                f"but {name} was given for this log"
            )
        notes.append(f"timestamps without a UTC offset were read in {name}")
        return zone, name
    if header_zone is not None:
        notes.append(
            f"timestamps without a UTC offset were read in {header_zone[1]}, as the time "
            "column's header says"
        )
        return header_zone
    notes.append(
        "no time zone was given: timestamps without a UTC offset were read as UTC; give the "
        "chamber's time zone if the logger keeps local time"
    )
    return UTC, "UTC"


def _row_time(cells: Sequence[str], columns: _Columns, line_no: int) -> _RawTime:
    if columns.date is not None and columns.clock is not None:
        date_text, clock_text = cells[columns.date], cells[columns.clock]
        name = f"{columns.names[columns.date]} + {columns.names[columns.clock]}"
        if not date_text or not clock_text:
            raise InputError(f"line {line_no}, column {name!r}: no date or no time")
        return _parse_time(f"{date_text} {clock_text}", line_no, name)
    index = columns.time if columns.time is not None else 0
    name = columns.names[index]
    if not cells[index]:
        raise InputError(f"line {line_no}, column {name!r}: no timestamp")
    return _parse_time(cells[index], line_no, name)


def _list_lines(lines: Sequence[int]) -> str:
    shown = ", ".join(str(line) for line in lines[:10])
    more = f" and {len(lines) - 10} more" if len(lines) > 10 else ""
    return f"line(s) {shown}{more}"
