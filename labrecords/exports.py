"""CSV exports: the one place a cell is made safe for a spreadsheet.

A spreadsheet reads a cell that starts with ``=``, ``+``, ``-`` or ``@`` as a formula
(CSV injection; OWASP ASVS, per shared/reference/records-and-security.md [mem]), and a
leading tab or carriage return can smuggle one past a naive check. Every CSV export in
Records writes its cells through `escape_cell`, which prefixes such text with a single
quote. Numbers stay numbers: a negative temperature is data, not a formula.
"""

from __future__ import annotations

import csv
import datetime
import decimal
import io
from collections.abc import Iterable

from django.http import HttpResponse

_FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def escape_cell(value: object) -> object:
    """A CSV cell value that no spreadsheet runs as a formula.

    Text starting with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return gets a
    leading single quote. Numbers (int, float, Decimal; not bool) are returned
    unchanged, None becomes an empty cell, dates and times their ISO form, and
    anything else its text, escaped the same way.
    """
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int | float | decimal.Decimal):
        return value
    if isinstance(value, datetime.datetime | datetime.date | datetime.time):
        return value.isoformat()
    text = str(value)
    if text.startswith(_FORMULA_STARTS):
        return "'" + text
    return text


def csv_text(rows: Iterable[Iterable[object]]) -> str:
    """The rows as CSV text (header included if it is the first row), every cell escaped."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\r\n")
    for row in rows:
        writer.writerow([escape_cell(cell) for cell in row])
    return buffer.getvalue()


def csv_response(filename: str, rows: Iterable[Iterable[object]]) -> HttpResponse:
    """An attachment download of the rows as UTF-8 CSV (with a byte order mark for
    spreadsheets that otherwise guess the encoding)."""
    response = HttpResponse("\ufeff" + csv_text(rows), content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="{filename}"'
    response["X-Content-Type-Options"] = "nosniff"
    return response
