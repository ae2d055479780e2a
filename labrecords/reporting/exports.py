"""An order's results as CSV and XLSX files (pandas, openpyxl).

Every text cell goes through `labrecords.exports.escape_cell`: text starting with ``=``,
``+``, ``-``, ``@``, a tab or a carriage return gets a leading single quote, so no
spreadsheet runs it as a formula (CSV injection, OWASP; shared/reference/records-and-
security.md [mem]). The XLSX file gets the same escaping, so both files say the same
thing, and on top every text cell is typed as a string (openpyxl would otherwise store a
text starting with ``=`` as a formula). Numbers stay numbers in both.
"""

from __future__ import annotations

import io
from collections.abc import Sequence

import pandas as pd

from labrecords.exports import escape_cell

SHEET = "results"


def results_frame(rows: Sequence[dict[str, object]]) -> pd.DataFrame:
    """The rows as a table, value columns after the fixed ones, every cell escaped."""
    # object dtype: a whole-number column with gaps stays whole numbers (not floats)
    frame = pd.DataFrame(list(rows), dtype=object)
    if frame.empty:
        frame = pd.DataFrame(columns=["order", "lot", "piece", "step", "verdict", "reason"])
    fixed = [c for c in frame.columns if not str(c).startswith("value: ")]
    values = sorted(c for c in frame.columns if str(c).startswith("value: "))
    frame = frame[fixed + values]
    frame = frame.where(frame.notna(), None)
    return frame.map(escape_cell)


def csv_bytes(frame: pd.DataFrame) -> bytes:
    """UTF-8 CSV with a byte-order mark (spreadsheets otherwise guess the encoding)."""
    return ("\ufeff" + frame.to_csv(index=False, lineterminator="\r\n")).encode("utf-8")


def xlsx_bytes(frame: pd.DataFrame) -> bytes:
    """An XLSX workbook with one sheet; text cells typed as strings, numbers as numbers."""
    buffer = io.BytesIO()
    with pd.ExcelWriter(buffer, engine="openpyxl") as writer:
        frame.to_excel(writer, sheet_name=SHEET, index=False)
        sheet = writer.sheets[SHEET]
        for row in sheet.iter_rows():
            for cell in row:
                if isinstance(cell.value, str):
                    cell.data_type = "s"
    return buffer.getvalue()
