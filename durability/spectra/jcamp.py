"""JCAMP-DX 4.24 / 5.x single-spectrum files, including the compressed data forms.

Source for the format: R. S. McDonald and P. A. Wilks, "JCAMP-DX: A Standard Form
for Exchange of Infrared Spectra in Computer Readable Form", Applied Spectroscopy
42(1), 151-162 (1988) (the 4.24 rules, IUPAC-hosted copy), and the 5.x additions
(A. N. Davies and P. Lampen, Appl. Spectrosc. 47, 1093 (1993)). The character
tables below and the Y-check rule are written from memory of those papers [mem];
the tests check them against hand-decoded lines.

What is read:

* `##XYDATA=(X++(Y..Y))`: each data line starts with X (in units of XFACTOR) and
  carries consecutive Y values (in units of YFACTOR). Y values may be AFFN (free
  numbers), PAC (packed: the sign separates), SQZ (squeezed: the first digit and
  sign in one letter), DIF (difference from the previous value) and DUP (repeat
  count of the previous value or difference).
* The DIF Y-check: when a line ends in DIF form, the next line starts with the
  last Y again, as a check. It must match and is then dropped. A last line that
  holds only X and that check value is how DIF files close.
* The X at each line start is checked against FIRSTX + i * DELTAX (i = index of the
  line's first Y); the point count against NPOINTS; DELTAX against
  (LASTX - FIRSTX) / (NPOINTS - 1); FIRSTY against the first Y. The abscissas used
  are FIRSTX + i * (LASTX - FIRSTX) / (NPOINTS - 1), not the rounded line X values.
* `##XYPOINTS=(XY..XY)`: x, y pairs in AFFN, scaled by XFACTOR and YFACTOR.

Refused with a message: compound files (##BLOCKS, several ##TITLE), ##NTUPLES,
peak tables, other variable lists, missing ##END, '?' (missing) values.
"""

from __future__ import annotations

import decimal
import math
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from decimal import Decimal

from durability.errors import InputError
from durability.spectra.importers import (
    MAX_POINTS,
    Quantity,
    Spectrum,
    Unit,
    XUnit,
    build_spectrum,
    resolve_ordinate,
    split_lines,
)

# ASDF character tables (McDonald and Wilks 1988, table of compression characters) [mem].
SQZ_DIGITS = {"@": 0, **{c: i + 1 for i, c in enumerate("ABCDEFGHI")}}
SQZ_DIGITS.update({c: -(i + 1) for i, c in enumerate("abcdefghi")})
DIF_DIGITS = {"%": 0, **{c: i + 1 for i, c in enumerate("JKLMNOPQR")}}
DIF_DIGITS.update({c: -(i + 1) for i, c in enumerate("jklmnopqr")})
DUP_DIGITS = {c: i + 1 for i, c in enumerate("STUVWXYZs")}

_AFFN = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]\d+)?")
_ASDF_TAIL = re.compile(r"\d*(?:\.\d*)?")
_DUP_TAIL = re.compile(r"\d*")
_SEPARATORS = " \t,;"

_REFUSED_LABELS = {
    "BLOCKS": "a compound file (##BLOCKS) holds several spectra; export one spectrum per file",
    "NTUPLES": "##NTUPLES (n-dimensional JCAMP-DX 5 data) is not supported; export ##XYDATA",
    "PEAKTABLE": "a peak table is not a measured spectrum; export ##XYDATA or ##XYPOINTS",
    "PEAKASSIGNMENTS": "peak assignments are not a measured spectrum",
    "RADATA": "##RADATA (area data) is not a spectrum",
    "LINK": "linked blocks (##LINK) are not supported; export one spectrum per file",
}
_SINGLE_LABELS = (
    "TITLE",
    "JCAMPDX",
    "XUNITS",
    "YUNITS",
    "XFACTOR",
    "YFACTOR",
    "FIRSTX",
    "LASTX",
    "DELTAX",
    "NPOINTS",
    "FIRSTY",
)


@dataclass
class _Record:
    """One labelled data record (LDR): `##LABEL=value` and its continuation lines."""

    label: str  # normalised: upper case, no spaces, hyphens, slashes or underscores
    raw_label: str
    value: str
    line: int
    continuation: list[tuple[int, str]] = field(default_factory=list)


@dataclass(frozen=True)
class _Token:
    kind: str  # "abs" (AFFN, PAC, SQZ), "dif", "dup"
    text: str  # decimal text of the value or DUP count
    form: str  # "AFFN", "PAC", "SQZ", "DIF", "DUP"


def normalise_label(label: str) -> str:
    """JCAMP-DX label names ignore case, spaces, hyphens, slashes and underscores."""
    return re.sub(r"[\s\-/_]", "", label).upper()


def _strip_comment(line: str) -> str:
    position = line.find("$$")
    return line if position < 0 else line[:position]


def _records(lines: Sequence[str]) -> list[_Record]:
    records: list[_Record] = []
    ended = False
    for index, raw in enumerate(lines):
        number = index + 1
        line = _strip_comment(raw)
        if not line.strip():
            continue
        if ended:
            raise InputError(
                f"line {number}: text after ##END= ({line.strip()[:40]!r}); a file with "
                "several blocks holds several spectra: export one spectrum per file"
            )
        stripped = line.lstrip()
        if stripped.startswith("##"):
            if "=" not in stripped:
                raise InputError(f"line {number}: label {stripped.strip()!r} has no '='")
            raw_label, value = stripped[2:].split("=", 1)
            label = normalise_label(raw_label)
            if not label:
                raise InputError(f"line {number}: '##=' has no label name")
            records.append(_Record(label, raw_label.strip(), value.strip(), number))
            if label == "END":
                ended = True
            continue
        if not records:
            raise InputError(
                f"line {number}: text before the first label ({stripped.strip()[:40]!r}); "
                "a JCAMP-DX file starts with ##TITLE="
            )
        records[-1].continuation.append((number, line))
    if not records:
        raise InputError("no JCAMP-DX labels (##LABEL=) found")
    if not ended:
        raise InputError(
            f"the file ends at line {len(lines)} without ##END=: it is truncated or not JCAMP-DX"
        )
    return records


def _number(record: _Record) -> float:
    text = record.value.strip()
    if not _AFFN.fullmatch(text):
        raise InputError(f"line {record.line}: ##{record.raw_label}={text!r} is not a number")
    value = float(text)
    if not math.isfinite(value):
        raise InputError(f"line {record.line}: ##{record.raw_label}={text!r} is not finite")
    return value


def tokenize(line: str, number: int) -> list[_Token]:
    """Split one data line into AFFN/PAC/SQZ/DIF/DUP tokens (comments already removed)."""
    tokens: list[_Token] = []
    position = 0
    length = len(line)
    while position < length:
        char = line[position]
        if char in _SEPARATORS:
            position += 1
            continue
        if char == "?":
            raise InputError(
                f"line {number}: '?' marks a missing value; a spectrum with gaps is not imported"
            )
        if char in "+-" or char.isdigit() or char == ".":
            match = _AFFN.match(line, position)
            if match is None:
                raise InputError(f"line {number}, column {position + 1}: {char!r} starts no number")
            form = "PAC" if char in "+-" else "AFFN"
            tokens.append(_Token("abs", match.group(), form))
            position = match.end()
            continue
        if char in SQZ_DIGITS or char in DIF_DIGITS:
            digit = SQZ_DIGITS.get(char, DIF_DIGITS.get(char, 0))
            tail = _ASDF_TAIL.match(line, position + 1)
            rest = tail.group() if tail else ""
            sign = "-" if digit < 0 else ""
            text = f"{sign}{abs(digit)}{rest}"
            if char in SQZ_DIGITS:
                tokens.append(_Token("abs", text, "SQZ"))
            else:
                tokens.append(_Token("dif", text, "DIF"))
            position += 1 + len(rest)
            continue
        if char in DUP_DIGITS:
            tail = _DUP_TAIL.match(line, position + 1)
            rest = tail.group() if tail else ""
            if len(rest) > 7:
                raise InputError(f"line {number}: DUP count {char}{rest} is implausibly large")
            tokens.append(_Token("dup", f"{DUP_DIGITS[char]}{rest}", "DUP"))
            position += 1 + len(rest)
            continue
        raise InputError(f"line {number}, column {position + 1}: {char!r} is not JCAMP-DX data")
    return tokens


@dataclass
class _Decoded:
    x_at_line: list[tuple[int, Decimal, int]]  # (line, X as written, index of first Y)
    ys: list[Decimal]
    y_lines: list[int]
    forms: set[str]
    y_checks: int


def decode_xydata(data_lines: Sequence[tuple[int, str]]) -> _Decoded:
    """Decode (X++(Y..Y)) lines into Y values (unscaled) with the DIF Y-check applied."""
    ys: list[Decimal] = []
    y_lines: list[int] = []
    x_at_line: list[tuple[int, Decimal, int]] = []
    forms: set[str] = set()
    checks = 0
    previous_ended_in_dif = False
    for number, line in data_lines:
        tokens = tokenize(line, number)
        if not tokens:
            continue
        first, *rest = tokens
        if first.kind != "abs" or first.form == "SQZ":
            raise InputError(
                f"line {number}: a data line starts with its X value in plain digits, "
                f"not {first.form}"
            )
        x_value = Decimal(first.text)
        line_ys: list[Decimal] = []
        last_kind = ""
        last_delta = Decimal(0)
        for token in rest:
            forms.add(token.form)
            if token.kind == "abs":
                line_ys.append(Decimal(token.text))
                last_kind = "abs"
            elif token.kind == "dif":
                if not line_ys:
                    raise InputError(
                        f"line {number}: the first Y after X is a DIF difference; it must be "
                        "an absolute value (SQZ or AFFN)"
                    )
                last_delta = Decimal(token.text)
                line_ys.append(line_ys[-1] + last_delta)
                last_kind = "dif"
            else:
                if not line_ys or last_kind in ("dup", "dif-dup"):
                    raise InputError(
                        f"line {number}: DUP count {token.text} follows no value to repeat"
                    )
                count = int(token.text)
                if len(ys) + len(line_ys) + count > MAX_POINTS:
                    raise InputError(f"line {number}: more than {MAX_POINTS} points")
                for _ in range(count - 1):
                    step = last_delta if last_kind == "dif" else Decimal(0)
                    line_ys.append(line_ys[-1] + step)
                last_kind = "dup" if last_kind != "dif" else "dif-dup"
        first_index = len(ys)
        if previous_ended_in_dif:
            if not line_ys:
                raise InputError(
                    f"line {number}: the line after DIF data must start with the Y-check value"
                )
            if line_ys[0] != ys[-1]:
                raise InputError(
                    f"line {number}: Y-check value {line_ys[0]} does not equal the last value "
                    f"{ys[-1]} of the line before (DIF data corrupted or a line lost)"
                )
            line_ys = line_ys[1:]
            first_index -= 1
            checks += 1
        x_at_line.append((number, x_value, first_index))
        ys.extend(line_ys)
        y_lines.extend([number] * len(line_ys))
        if len(ys) > MAX_POINTS:
            raise InputError(f"line {number}: more than {MAX_POINTS} points")
        previous_ended_in_dif = last_kind in ("dif", "dif-dup")
    return _Decoded(x_at_line, ys, y_lines, forms, checks)


def _decode_xypoints(data_lines: Sequence[tuple[int, str]]) -> tuple[list[Decimal], list[int]]:
    numbers: list[Decimal] = []
    lines: list[int] = []
    for number, line in data_lines:
        for token in tokenize(line, number):
            if token.kind != "abs" or token.form == "SQZ":
                raise InputError(
                    f"line {number}: {token.form} value in ##XYPOINTS; pairs are plain numbers"
                )
            numbers.append(Decimal(token.text))
            lines.append(number)
            if len(numbers) > 2 * MAX_POINTS:
                raise InputError(f"line {number}: more than {MAX_POINTS} points")
    if len(numbers) % 2:
        last = lines[-1] if lines else 0
        raise InputError(f"line {last}: ##XYPOINTS ends with an x value that has no y")
    return numbers, lines


def _x_unit(record: _Record | None, given: XUnit | None) -> tuple[XUnit, list[str]]:
    if record is None:
        if given is None:
            raise InputError("the file has no ##XUNITS=; give the x unit (nm, um or 1/cm)")
        return given, [f"x unit {given} as given by the caller (no ##XUNITS)"]
    text = record.value.strip()
    word = re.sub(r"[\s.]", "", text).lower()
    found: XUnit | None
    if word in ("1/cm", "cm-1", "cm^-1", "cm⁻¹", "wavenumbers", "wavenumber", "1/centimeters"):
        found = "1/cm"
    elif word in ("nanometers", "nanometres", "nanometer", "nanometre", "nm"):
        found = "nm"
    elif word in ("micrometers", "micrometres", "micrometer", "micrometre", "um", "µm", "μm"):
        found = "um"
    elif word in ("microns", "micron"):
        found = "um"
    else:
        found = None
    if found is None:
        raise InputError(
            f"line {record.line}: ##XUNITS={text!r} is not a wavelength or wavenumber unit "
            "(NANOMETERS, MICROMETERS or 1/CM)"
        )
    if given is not None and given != found:
        raise InputError(f"line {record.line}: ##XUNITS={text!r} but {given} was given")
    return found, []


def parse_jcamp(
    text: str,
    *,
    x_unit: XUnit | None = None,
    y_unit: Unit | None = None,
    quantity: Quantity | None = None,
) -> Spectrum:
    """Read a single-spectrum JCAMP-DX 4.24 / 5.x file (see the module docstring)."""
    lines = split_lines(text)
    try:
        with decimal.localcontext() as context:
            context.traps[decimal.InvalidOperation] = True
            return _parse(lines, x_unit=x_unit, y_unit=y_unit, quantity=quantity)
    except (decimal.DecimalException, OverflowError) as exc:
        raise InputError(f"a number in the data is out of range ({type(exc).__name__})") from exc


def _parse(
    lines: Sequence[str],
    *,
    x_unit: XUnit | None,
    y_unit: Unit | None,
    quantity: Quantity | None,
) -> Spectrum:
    records = _records(lines)
    by_label: dict[str, _Record] = {}
    for record in records:
        if record.label in _REFUSED_LABELS:
            raise InputError(f"line {record.line}: {_REFUSED_LABELS[record.label]}")
        if record.label in _SINGLE_LABELS and record.label in by_label:
            first = by_label[record.label]
            if record.label == "TITLE":
                raise InputError(
                    f"line {record.line}: a second ##TITLE (first at line {first.line}): "
                    "a file with several blocks holds several spectra; export one per file"
                )
            raise InputError(
                f"line {record.line}: ##{record.raw_label} given twice (also line {first.line})"
            )
        by_label.setdefault(record.label, record)
    if records[0].label != "TITLE":
        raise InputError(f"line {records[0].line}: a JCAMP-DX file starts with ##TITLE=")
    version_record = by_label.get("JCAMPDX")
    if version_record is None:
        raise InputError("no ##JCAMP-DX= label: not a JCAMP-DX file")
    version = version_record.value.strip()
    notes: list[str] = []
    if not re.match(r"^[45](\.\d+)?\b", version):
        notes.append(f"##JCAMP-DX={version!r}: read with the 4.24 / 5.x rules")
    data_records = [r for r in records if r.label in ("XYDATA", "XYPOINTS")]
    others = [
        r
        for r in records
        if r.value.strip().startswith("(")
        and r.label not in ("XYDATA", "XYPOINTS")
        and not r.label.startswith("$")
    ]
    if not data_records:
        extra = f" (found ##{others[0].raw_label} at line {others[0].line})" if others else ""
        raise InputError(f"no ##XYDATA= or ##XYPOINTS= in the file{extra}")
    if len(data_records) > 1:
        raise InputError(
            f"line {data_records[1].line}: a second data table (first at line "
            f"{data_records[0].line}); one spectrum per file"
        )
    data = data_records[0]

    x_factor = _factor(by_label.get("XFACTOR"), "XFACTOR", notes)
    y_factor = _factor(by_label.get("YFACTOR"), "YFACTOR", notes)
    if data.label == "XYDATA":
        xs, ys, y_lines, form_note = _xydata(data, by_label, x_factor, y_factor)
    else:
        xs, ys, y_lines, form_note = _xypoints(data, by_label, x_factor, y_factor)
    notes.insert(0, form_note)

    unit, x_notes = _x_unit(by_label.get("XUNITS"), x_unit)
    notes.extend(x_notes)
    y_record = by_label.get("YUNITS")
    descriptions = [y_record.value] if y_record else []
    if y_record and re.search(r"arbitrary|counts", y_record.value, re.IGNORECASE):
        if y_unit is None or quantity is None:
            raise InputError(
                f"line {y_record.line}: ##YUNITS={y_record.value.strip()!r} is not a "
                "reflectance or transmittance; give both the y unit and the quantity if it is"
            )
        descriptions = []
    ordinate = resolve_ordinate(descriptions, ys, y_lines, y_unit=y_unit, quantity=quantity)
    metadata = {
        r.raw_label: "\n".join([r.value, *(t.strip() for _, t in r.continuation)]).strip()
        for r in records
        if r.label not in ("XYDATA", "XYPOINTS", "END")
    }
    return build_spectrum(
        xs,
        ys,
        y_lines,
        x_unit=unit,
        ordinate=ordinate,
        source_format=f"JCAMP-DX {version} {data.label}".strip(),
        notes=notes,
        metadata=metadata,
    )


def _factor(record: _Record | None, name: str, notes: list[str]) -> float:
    if record is None:
        notes.append(f"no ##{name}; taken as 1")
        return 1.0
    value = _number(record)
    if value == 0:
        raise InputError(f"line {record.line}: ##{name}=0 would erase the data")
    return value


def _required(by_label: dict[str, _Record], names: Sequence[str], table: _Record) -> None:
    missing = [name for name in names if name not in by_label]
    if missing:
        raise InputError(
            f"line {table.line}: ##XYDATA needs "
            + ", ".join(f"##{name}" for name in missing)
            + " (missing)"
        )


def _xydata(
    data: _Record, by_label: dict[str, _Record], x_factor: float, y_factor: float
) -> tuple[list[float], list[float], list[int], str]:
    form = re.sub(r"\s", "", data.value).upper()
    if form != "(X++(Y..Y))":
        raise InputError(
            f"line {data.line}: ##XYDATA={data.value.strip()!r}; only (X++(Y..Y)) is supported"
        )
    _required(by_label, ("FIRSTX", "LASTX", "NPOINTS"), data)
    first_x = _number(by_label["FIRSTX"])
    last_x = _number(by_label["LASTX"])
    npoints_record = by_label["NPOINTS"]
    npoints_value = _number(npoints_record)
    if npoints_value != int(npoints_value) or not 2 <= npoints_value <= MAX_POINTS:
        raise InputError(
            f"line {npoints_record.line}: ##NPOINTS={npoints_record.value.strip()!r} is not a "
            f"whole number from 2 to {MAX_POINTS}"
        )
    npoints = int(npoints_value)
    step = (last_x - first_x) / (npoints - 1)
    if step == 0:
        raise InputError(f"line {data.line}: ##FIRSTX equals ##LASTX; the x axis has no extent")
    delta_record = by_label.get("DELTAX")
    if delta_record is not None:
        delta = _number(delta_record)
        if not math.isclose(delta, step, rel_tol=1e-3):
            raise InputError(
                f"line {delta_record.line}: ##DELTAX={delta:g} but (LASTX - FIRSTX) / "
                f"(NPOINTS - 1) = {step:g}: the header is inconsistent"
            )
    decoded = decode_xydata(data.continuation)
    if len(decoded.ys) != npoints:
        last_line = data.continuation[-1][0] if data.continuation else data.line
        raise InputError(
            f"line {npoints_record.line}: ##NPOINTS={npoints} but the table (lines "
            f"{data.line + 1}-{last_line}) holds {len(decoded.ys)} values: truncated, a line "
            "lost, or corrupt compression"
        )
    tolerance = max(0.5 * abs(step), abs(x_factor))
    for line, x_written, index in decoded.x_at_line:
        expected = first_x + index * step
        actual = float(x_written) * x_factor
        if not abs(actual - expected) <= tolerance:
            raise InputError(
                f"line {line}: X = {x_written} (x XFACTOR = {actual:g}) but its first Y is "
                f"point {index + 1}, which lies at {expected:g} from FIRSTX and DELTAX "
                "(a line lost or out of order)"
            )
    ys = [float(y) * y_factor for y in decoded.ys]
    first_y_record = by_label.get("FIRSTY")
    if first_y_record is not None:
        first_y = _number(first_y_record)
        allowed = max(abs(y_factor), 1e-3 * abs(first_y), 1e-12)
        if not abs(ys[0] - first_y) <= allowed:
            raise InputError(
                f"line {first_y_record.line}: ##FIRSTY={first_y:g} but the first Y decodes to "
                f"{ys[0]:g}: YFACTOR or the data are wrong"
            )
    xs = [first_x + i * step for i in range(npoints)]
    forms = ", ".join(sorted(decoded.forms)) or "no Y values"
    note = (
        f"##XYDATA=(X++(Y..Y)) decoded ({forms}); X x {x_factor:g}, Y x {y_factor:g}; "
        f"NPOINTS, FIRSTX/LASTX/DELTAX and the line-start X values agree"
        + (f"; {decoded.y_checks} DIF Y-check value(s) matched" if decoded.y_checks else "")
    )
    return xs, ys, decoded.y_lines, note


def _xypoints(
    data: _Record, by_label: dict[str, _Record], x_factor: float, y_factor: float
) -> tuple[list[float], list[float], list[int], str]:
    form = re.sub(r"\s", "", data.value).upper()
    if form != "(XY..XY)":
        raise InputError(
            f"line {data.line}: ##XYPOINTS={data.value.strip()!r}; only (XY..XY) is supported"
        )
    numbers, lines = _decode_xypoints(data.continuation)
    xs = [float(v) * x_factor for v in numbers[0::2]]
    ys = [float(v) * y_factor for v in numbers[1::2]]
    y_lines = lines[1::2]
    if not xs:
        raise InputError(f"line {data.line}: ##XYPOINTS holds no points")
    npoints_record = by_label.get("NPOINTS")
    if npoints_record is not None and _number(npoints_record) != len(xs):
        raise InputError(
            f"line {npoints_record.line}: ##NPOINTS={npoints_record.value.strip()} but the "
            f"table holds {len(xs)} pairs"
        )
    for name, value in (("FIRSTX", xs[0]), ("LASTX", xs[-1])):
        record = by_label.get(name)
        if record is not None:
            stated = _number(record)
            if not math.isclose(stated, value, rel_tol=1e-6, abs_tol=abs(x_factor) * 0.5):
                raise InputError(
                    f"line {record.line}: ##{name}={stated:g} but the table gives {value:g}"
                )
    note = f"##XYPOINTS=(XY..XY) read ({len(xs)} pairs); X x {x_factor:g}, Y x {y_factor:g}" + (
        "; NPOINTS agrees" if npoints_record is not None else ""
    )
    return xs, ys, y_lines, note
