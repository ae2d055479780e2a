"""CSV and TXT spectrophotometer exports: header lines, then rows of numbers.

How a file is read (the convention, stated so a lab can check it against its
instrument's export):

* Separator and decimal mark are tried in this order: tab, semicolon, comma,
  whitespace; with a decimal point first, then a decimal comma (never with the
  comma separator). The first reading under which every row after the header is a
  row of numbers wins.
* The data start at the first row of numbers (at least two numeric fields) that
  is followed by another, or that is the last line. Everything before is header.
  A header line just before the data whose first field is a number is taken as a
  broken data row and refused, so a bad first row is never silently dropped.
* Every non-blank line after the data start must be a row of numbers with the
  same number of fields; anything else is refused naming the line.
* The column-name line is the last header line when it has as many fields as the
  data rows. Other header lines become metadata (`key: value`, `key = value` or
  `key<separator>value`).
* The x unit comes from the x column name or a unit line (`nm`, `µm`/`um`,
  `cm-1`/`1/cm`/`wavenumber`); a column named only "wavelength" is read as nm,
  with a note. The y unit and R/T come from the y column name and from header
  lines whose key names the y axis, mode, measurement, quantity or units.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass

from durability.errors import InputError
from durability.spectra.importers import (
    Quantity,
    Spectrum,
    Unit,
    XUnit,
    build_spectrum,
    resolve_ordinate,
    split_lines,
)


@dataclass(frozen=True)
class _Dialect:
    name: str
    separator: str | None  # None: any run of whitespace
    decimal: str  # "." or ","

    def describe(self) -> str:
        mark = "decimal point" if self.decimal == "." else "decimal comma"
        return f"{self.name}-separated, {mark}"


_DIALECTS = (
    _Dialect("tab", "\t", "."),
    _Dialect("tab", "\t", ","),
    _Dialect("semicolon", ";", "."),
    _Dialect("semicolon", ";", ","),
    _Dialect("comma", ",", "."),
    _Dialect("whitespace", None, "."),
    _Dialect("whitespace", None, ","),
)

_NUMBER = {
    ".": re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"),
    ",": re.compile(r"[+-]?(?:\d+(?:,\d*)?|,\d+)(?:[eE][+-]?\d+)?"),
}

_X_UNIT_PATTERNS: tuple[tuple[XUnit, re.Pattern[str]], ...] = (
    ("nm", re.compile(r"\bnm\b|nanomet", re.IGNORECASE)),
    ("um", re.compile(r"µm|μm|\bum\b|micromet|micron", re.IGNORECASE)),
    (
        "1/cm",
        re.compile(r"cm\s*(?:-1|⁻¹|\^\s*-\s*1|\^\(-1\))|1\s*/\s*cm|wave\s*numbers?", re.IGNORECASE),
    ),
)
_X_KEY = re.compile(r"\bx\b|x[ _-]?units?|abscissa|x[ _-]?axis|\bunits?\b", re.IGNORECASE)
_Y_KEY = re.compile(
    r"\by\b|y[ _-]?units?|ordinate|y[ _-]?axis|\bmode\b|measure|quantity|\bunits?\b|data\s*type",
    re.IGNORECASE,
)


def _fields(line: str, dialect: _Dialect) -> list[str]:
    parts = line.split() if dialect.separator is None else line.split(dialect.separator)
    fields = [p.strip().strip('"').strip("'").strip() for p in parts]
    # A trailing separator (common in semicolon exports) leaves one empty field.
    while fields and fields[-1] == "":
        fields.pop()
    return fields


def _number(text: str, dialect: _Dialect) -> float | None:
    if not _NUMBER[dialect.decimal].fullmatch(text):
        return None
    value = float(text.replace(",", ".")) if dialect.decimal == "," else float(text)
    return value if math.isfinite(value) else None


def _numeric_row(line: str, dialect: _Dialect) -> list[float] | None:
    fields = _fields(line, dialect)
    if len(fields) < 2:
        return None
    numbers = [_number(f, dialect) for f in fields]
    if any(n is None for n in numbers):
        return None
    return [n for n in numbers if n is not None]


@dataclass
class _Reading:
    dialect: _Dialect
    start: int  # index of the first data line
    rows: list[tuple[int, list[float]]]  # (1-based line number, numbers)


def _read_with(lines: Sequence[str], dialect: _Dialect) -> tuple[_Reading | None, int, str]:
    """Try one dialect. Returns (reading or None, numeric rows seen, error message)."""
    numeric = [_numeric_row(line, dialect) for line in lines]
    seen = sum(1 for n in numeric if n is not None)
    start = None
    for index, row in enumerate(numeric):
        if row is None:
            continue
        following = next((j for j in range(index + 1, len(lines)) if lines[j].strip()), None)
        if following is None or numeric[following] is not None:
            start = index
            break
    if start is None:
        return None, seen, f"no rows of numbers found ({dialect.describe()})"
    first = numeric[start]
    assert first is not None
    width = len(first)
    # Header lines just before the data that start with a number: a lone count is
    # header, but a row of the data's width with a bad field, or a broken line among
    # rows of numbers, means the data were interrupted.
    block: list[int] = []
    for index in range(start - 1, -1, -1):
        if not lines[index].strip():
            continue
        fields = _fields(lines[index], dialect)
        if not fields or _number(fields[0], dialect) is None:
            break
        block.append(index)
    block.reverse()
    full_rows = [i for i in block if numeric[i] is not None]
    if full_rows:
        broken = next(i for i in block if i > full_rows[0] and numeric[i] is None)
        return (
            None,
            seen,
            f"line {broken + 1}: {lines[broken].strip()!r} breaks the rows of numbers that "
            f"start at line {full_rows[0] + 1} ({dialect.describe()})",
        )
    for index in block:
        fields = _fields(lines[index], dialect)
        if len(fields) == width:
            bad = next((f for f in fields if _number(f, dialect) is None), fields[0])
            return (
                None,
                seen,
                f"line {index + 1}: {lines[index].strip()!r} looks like a data row but "
                f"{bad!r} is not a number",
            )
    rows: list[tuple[int, list[float]]] = []
    for index in range(start, len(lines)):
        line = lines[index]
        if not line.strip():
            continue
        row = numeric[index]
        if row is None:
            fields = _fields(line, dialect)
            bad = next((f for f in fields if _number(f, dialect) is None), line.strip())
            return (
                None,
                seen,
                f"line {index + 1}: {line.strip()!r} is not a row of numbers ({bad!r}); "
                f"data rows started at line {start + 1} ({dialect.describe()})",
            )
        if len(row) != width:
            return (
                None,
                seen,
                f"line {index + 1}: {len(row)} fields where the data rows have {width} "
                f"({dialect.describe()})",
            )
        rows.append((index + 1, row))
    return _Reading(dialect, start, rows), seen, ""


def _choose_reading(lines: Sequence[str]) -> _Reading:
    best_error = "no rows of numbers found: the file holds no data"
    best_seen = 0
    for dialect in _DIALECTS:
        reading, seen, error = _read_with(lines, dialect)
        if reading is not None:
            return reading
        if seen > best_seen:
            best_seen, best_error = seen, error
    raise InputError(best_error)


def _header(
    lines: Sequence[str], reading: _Reading
) -> tuple[list[str] | None, str, dict[str, str]]:
    """Split the header into column names, the column-name line and key/value metadata.

    The last header line names the columns when it has one field per data column;
    failing that, when it is not a `key: value` line it is kept whole (column names
    with spaces in a whitespace-separated file) and describes every column.
    """
    width = len(reading.rows[0][1])
    header_indexes = [i for i in range(reading.start) if lines[i].strip()]
    columns: list[str] | None = None
    column_line = ""
    if header_indexes:
        last = header_indexes[-1]
        fields = _fields(lines[last], reading.dialect)
        if len(fields) == width and all(fields):
            columns = fields
            column_line = lines[last].strip()
            header_indexes = header_indexes[:-1]
        elif not re.search(r"[:=]", lines[last]):
            column_line = lines[last].strip()
            header_indexes = header_indexes[:-1]
    metadata: dict[str, str] = {}
    for index in header_indexes:
        line = lines[index].strip()
        match = re.match(r"^\s*([^:=]{1,80}?)\s*[:=]\s*(.*)$", line)
        if match:
            key, value = match.group(1), match.group(2)
        else:
            fields = _fields(line, reading.dialect)
            if len(fields) >= 2:
                key, value = fields[0], " ".join(fields[1:])
            else:
                key, value = f"line {index + 1}", line
        key = key.strip().strip('"').strip("#").strip() or f"line {index + 1}"
        value = value.strip().strip('"').strip()
        metadata[key] = f"{metadata[key]} | {value}" if key in metadata else value
    if column_line:
        metadata["columns"] = " | ".join(columns) if columns else column_line
    return columns, column_line, metadata


def _x_unit(descriptions: Sequence[str], given: XUnit | None) -> tuple[XUnit, list[str]]:
    text = " | ".join(d for d in descriptions if d)
    found = {
        unit for unit, pattern in _X_UNIT_PATTERNS if any(pattern.search(d) for d in descriptions)
    }
    if len(found) > 1:
        if given is not None and given in found:
            return given, [f"x unit {given} as given (the header names several: {text})"]
        raise InputError(
            f"the header names several x units ({', '.join(sorted(found))}: {text!r}); "
            "give the x unit"
        )
    if found:
        unit = found.pop()
        if given is not None and given != unit:
            raise InputError(
                f"the header says the x unit is {unit} ({text!r}) but {given} was given"
            )
        return unit, []
    if given is not None:
        return given, [f"x unit {given} as given by the caller (the header does not say)"]
    if any(re.search(r"wave\s*length|lambda|λ", d, re.IGNORECASE) for d in descriptions):
        return "nm", [f"x unit read as nm: the header says wavelength with no unit ({text!r})"]
    raise InputError(
        f"no x unit found in the header (looked at {text or 'nothing'!r}); "
        "give the x unit (nm, um or 1/cm)"
    )


def parse_text_export(
    text: str,
    *,
    x_unit: XUnit | None = None,
    y_unit: Unit | None = None,
    quantity: Quantity | None = None,
    y_column: int | None = None,
) -> Spectrum:
    """Read a CSV/TXT export with header lines (see the module docstring for the rules).

    x is the first column; with more than two columns, `y_column` (1-based) must say
    which holds the y values.
    """
    lines = split_lines(text)
    if not any(line.strip() for line in lines):
        raise InputError("the file is empty")
    reading = _choose_reading(lines)
    columns, column_line, metadata = _header(lines, reading)
    width = len(reading.rows[0][1])
    if y_column is None:
        if width > 2:
            names = f" ({', '.join(columns)})" if columns else ""
            raise InputError(
                f"line {reading.rows[0][0]}: the data have {width} columns{names}; "
                "say which column holds the y values (y_column, counted from 1)"
            )
        y_index = 1
    else:
        if not 2 <= y_column <= width:
            raise InputError(f"y_column {y_column} is not between 2 and {width} (column 1 is x)")
        y_index = y_column - 1

    x_descriptions = [columns[0]] if columns else [column_line]
    y_descriptions = [columns[y_index]] if columns else [column_line]
    for key, value in metadata.items():
        if key == "columns":
            continue
        if _X_KEY.search(key) or re.search(r"wave\s*length", key, re.IGNORECASE):
            x_descriptions.append(value)
        if _Y_KEY.search(key):
            y_descriptions.append(value)

    xs = [row[0] for _, row in reading.rows]
    ys = [row[y_index] for _, row in reading.rows]
    line_numbers = [line for line, _ in reading.rows]
    unit, x_notes = _x_unit(x_descriptions, x_unit)
    ordinate = resolve_ordinate(y_descriptions, ys, line_numbers, y_unit=y_unit, quantity=quantity)
    notes = [
        f"read as {reading.dialect.describe()}; {reading.start} header line(s), "
        f"data on lines {line_numbers[0]}-{line_numbers[-1]}",
        *x_notes,
    ]
    if width > 2:
        notes.append(f"y taken from column {y_index + 1} of {width}")
    return build_spectrum(
        xs,
        ys,
        line_numbers,
        x_unit=unit,
        ordinate=ordinate,
        source_format="text",
        notes=notes,
        metadata=metadata,
    )
