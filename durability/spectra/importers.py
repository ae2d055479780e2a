"""Spectrophotometer exports read into one `Spectrum`.

`parse_spectrum` takes the bytes of an uploaded file (or text) and hands it to the
reader for its format: `durability.spectra.csvtext` for CSV/TXT exports with header
lines, `durability.spectra.jcamp` for JCAMP-DX 4.24 / 5.x. Both readers end in
`build_spectrum`, which applies the rules shared by every format:

* the x axis is converted to nm (from µm or cm⁻¹), rounded to 1e-6 nm, sorted
  ascending; repeated wavelengths are refused;
* the y values are kept as given and labelled "%" or "fraction"; the unit comes
  from the file (or the caller) and is inferred from the values only when nothing
  states it, with a note saying so;
* absorbance is refused: coating limits are on reflectance or transmittance.

Every problem with the input raises `durability.errors.InputError` naming the line.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Literal

from durability.errors import InputError

Unit = Literal["%", "fraction"]
Quantity = Literal["R", "T"]
XUnit = Literal["nm", "um", "1/cm"]
FileFormat = Literal["auto", "text", "jcamp"]

UNITS: tuple[Unit, ...] = ("%", "fraction")
QUANTITIES: tuple[Quantity, ...] = ("R", "T")
X_UNITS: tuple[XUnit, ...] = ("nm", "um", "1/cm")

MAX_BYTES = 50_000_000
MAX_POINTS = 1_000_000

# Limits of plausibility for a UV-VIS-NIR or FTIR spectrophotometer: outside them the
# x unit is almost certainly wrong (µm read as nm, or the other way round).
MIN_WAVELENGTH_NM = 100.0
MAX_WAVELENGTH_NM = 100_000.0

# A value that stays at or below this, with no unit stated, is read as a fraction.
FRACTION_INFERENCE_CEILING = 1.5
MAX_PERCENT = 150.0
MIN_PERCENT = -5.0

_WAVELENGTH_DECIMALS = 6


@dataclass(frozen=True)
class Spectrum:
    """One measured curve: wavelengths in nm (ascending) and values as the file gave them.

    `unit` says whether `values` are in % or a fraction (0-1); `unit_inferred` is
    True when the file did not say and the unit was inferred from the values.
    `quantity` is "R" or "T" when the file (or the caller) stated it, else None.
    """

    wavelength_nm: tuple[float, ...]
    values: tuple[float, ...]
    unit: Unit
    quantity: Quantity | None
    source_format: str
    notes: tuple[str, ...] = ()
    metadata: Mapping[str, str] = field(default_factory=dict, compare=False, hash=False)
    unit_inferred: bool = False

    def __post_init__(self) -> None:
        if len(self.wavelength_nm) != len(self.values):
            raise InputError(
                f"spectrum has {len(self.wavelength_nm)} wavelengths but {len(self.values)} values"
            )
        if len(self.values) < 2:
            raise InputError(f"spectrum has {len(self.values)} point(s); at least 2 are needed")
        if self.unit not in UNITS:
            raise InputError(f"spectrum unit {self.unit!r} is not one of {', '.join(UNITS)}")
        if self.quantity is not None and self.quantity not in QUANTITIES:
            raise InputError(f"spectrum quantity {self.quantity!r} is not R or T")
        for index, (w, v) in enumerate(zip(self.wavelength_nm, self.values, strict=True)):
            if not (math.isfinite(w) and math.isfinite(v)):
                raise InputError(f"spectrum point {index + 1} is not a finite number pair")
        for index in range(1, len(self.wavelength_nm)):
            if not self.wavelength_nm[index] > self.wavelength_nm[index - 1]:
                raise InputError(
                    f"spectrum wavelengths must rise strictly; point {index + 1} "
                    f"({self.wavelength_nm[index]} nm) does not"
                )

    @property
    def first_nm(self) -> float:
        """Shortest wavelength in the data."""
        return self.wavelength_nm[0]

    @property
    def last_nm(self) -> float:
        """Longest wavelength in the data."""
        return self.wavelength_nm[-1]

    def in_unit(self, unit: Unit) -> Spectrum:
        """Return this spectrum with its values expressed in `unit` (% <-> fraction, x100).

        The conversion is recorded in the notes; the same spectrum is returned when
        it is already in `unit`.
        """
        if unit not in UNITS:
            raise InputError(f"unit {unit!r} is not one of {', '.join(UNITS)}")
        if unit == self.unit:
            return self
        factor = 100.0 if unit == "%" else 0.01
        note = f"values converted from {self.unit} to {unit} (x{factor:g})"
        return replace(
            self,
            values=tuple(v * factor for v in self.values),
            unit=unit,
            notes=(*self.notes, note),
        )


def convert_value(value: float, from_unit: Unit, to_unit: Unit) -> float:
    """Express a reflectance or transmittance given in `from_unit` in `to_unit`."""
    if from_unit == to_unit:
        return value
    return value * 100.0 if to_unit == "%" else value / 100.0


def parse_spectrum(
    data: bytes | str,
    *,
    filename: str = "",
    file_format: FileFormat = "auto",
    x_unit: XUnit | None = None,
    y_unit: Unit | None = None,
    quantity: Quantity | None = None,
    y_column: int | None = None,
) -> Spectrum:
    """Read a spectrophotometer export (CSV/TXT with header lines, or JCAMP-DX).

    `data` is the file's bytes (or decoded text); `filename` only helps choose the
    format and appears in messages. `x_unit`, `y_unit` and `quantity` state what
    the file leaves unsaid; they are refused when the file says otherwise.
    `y_column` (1-based, CSV/TXT only) picks the y column when there are several.
    Raises `InputError` naming the line for anything malformed; imports nothing then.
    """
    if file_format not in ("auto", "text", "jcamp"):
        raise InputError(f"file format {file_format!r} is not auto, text or jcamp")
    _check_choice("x_unit", x_unit, X_UNITS)
    _check_choice("y_unit", y_unit, UNITS)
    _check_choice("quantity", quantity, QUANTITIES)
    text = decode_bytes(data) if isinstance(data, bytes) else data
    if len(text) > MAX_BYTES:
        raise InputError(f"file is larger than {MAX_BYTES // 1_000_000} MB; not a spectrum export")
    if "\x00" in text:
        raise InputError(
            "file holds NUL characters: it is a binary file (or UTF-16 without a byte-order "
            "mark), not a text or JCAMP-DX export"
        )
    chosen = file_format if file_format != "auto" else _guess_format(text, filename)
    # Imported here rather than at the top: both readers import this module.
    if chosen == "jcamp":
        from durability.spectra.jcamp import parse_jcamp

        if y_column is not None:
            raise InputError("y_column applies to CSV/TXT exports, not to JCAMP-DX files")
        return parse_jcamp(text, x_unit=x_unit, y_unit=y_unit, quantity=quantity)
    from durability.spectra.csvtext import parse_text_export

    return parse_text_export(
        text, x_unit=x_unit, y_unit=y_unit, quantity=quantity, y_column=y_column
    )


def read_spectrum(
    path: str,
    *,
    file_format: FileFormat = "auto",
    x_unit: XUnit | None = None,
    y_unit: Unit | None = None,
    quantity: Quantity | None = None,
    y_column: int | None = None,
) -> Spectrum:
    """Read the file at `path` with `parse_spectrum` (same keyword options)."""
    try:
        with open(path, "rb") as handle:
            data = handle.read(MAX_BYTES + 1)
    except OSError as exc:
        raise InputError(f"cannot read {path}: {exc.strerror or exc}") from exc
    if len(data) > MAX_BYTES:
        raise InputError(f"{path} is larger than {MAX_BYTES // 1_000_000} MB")
    return parse_spectrum(
        data,
        filename=path,
        file_format=file_format,
        x_unit=x_unit,
        y_unit=y_unit,
        quantity=quantity,
        y_column=y_column,
    )


def decode_bytes(data: bytes) -> str:
    """Decode an export: byte-order mark first, then UTF-8, then Windows-1252, then Latin-1."""
    if len(data) > MAX_BYTES:
        raise InputError(f"file is larger than {MAX_BYTES // 1_000_000} MB; not a spectrum export")
    if data.startswith(b"\xef\xbb\xbf"):
        return data[3:].decode("utf-8", errors="replace")
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return data.decode("utf-16")
        except UnicodeDecodeError as exc:
            raise InputError(f"file starts as UTF-16 but byte {exc.start} is not") from exc
    for encoding in ("utf-8", "cp1252"):
        try:
            return data.decode(encoding)
        except UnicodeDecodeError:
            continue
    return data.decode("latin-1")


def split_lines(text: str) -> list[str]:
    """Split on CR LF, CR or LF only, so line numbers match what an editor shows."""
    text = text.removeprefix("\ufeff")
    lines = re.split(r"\r\n|\r|\n", text)
    if lines and lines[-1] == "":
        lines.pop()
    return lines


_JCAMP_LABEL = re.compile(r"^\s*##\s*(TITLE|JCAMP[-_ ]?DX)\s*=", re.IGNORECASE | re.MULTILINE)


def _guess_format(text: str, filename: str) -> FileFormat:
    """JCAMP-DX by extension or by a ##TITLE= / ##JCAMP-DX= label near the top; else text.

    A CSV whose header lines merely start with "##" stays text.
    """
    if filename.lower().endswith((".jdx", ".dx", ".jcamp", ".jcm")):
        return "jcamp"
    return "jcamp" if _JCAMP_LABEL.search(text[:4000]) else "text"


def _check_choice(name: str, value: object, choices: Sequence[str]) -> None:
    if value is not None and value not in choices:
        raise InputError(f"{name} {value!r} is not one of {', '.join(choices)}")


# --- shared reading rules ------------------------------------------------------

_ABSORBANCE = re.compile(
    r"absorb|\babs\b|optical\s*density|\bO\.?D\.?\b|kubelka|log\s*\(?\s*1\s*/", re.IGNORECASE
)
_REFLECTANCE = re.compile(r"%\s*R\b|\bR\s*(%|\[%\]|\(%\))|reflect|^\s*R\s*$", re.IGNORECASE)
_TRANSMITTANCE = re.compile(r"%\s*T\b|\bT\s*(%|\[%\]|\(%\))|transmi|^\s*T\s*$", re.IGNORECASE)
_PERCENT = re.compile(r"%|percent|\bpct\b", re.IGNORECASE)
_FRACTION = re.compile(r"fraction|\(\s*0\s*(-|–|\.\.|to)\s*1\s*\)", re.IGNORECASE)


@dataclass(frozen=True)
class Ordinate:
    """What the y axis was found to be."""

    unit: Unit
    quantity: Quantity | None
    unit_inferred: bool
    notes: tuple[str, ...]


def resolve_ordinate(
    descriptions: Sequence[str],
    values: Sequence[float],
    value_lines: Sequence[int],
    *,
    y_unit: Unit | None,
    quantity: Quantity | None,
) -> Ordinate:
    """Decide the y unit and quantity from the file's words, the caller's and the values.

    `descriptions` are the texts that describe the y axis (column name, unit line,
    YUNITS); `value_lines` give each value's file line for messages.
    """
    notes: list[str] = []
    words = " | ".join(d for d in descriptions if d)
    shown = words.strip() or "(nothing)"
    for description in descriptions:
        if description and _ABSORBANCE.search(description):
            raise InputError(
                f"the y axis is absorbance or a derived quantity ({description.strip()!r}); "
                "coating limits are on reflectance or transmittance: export %R, %T or "
                "R, T as a fraction"
            )

    said_r = any(_REFLECTANCE.search(d) for d in descriptions if d)
    said_t = any(_TRANSMITTANCE.search(d) for d in descriptions if d)
    found_quantity: Quantity | None = None
    if said_r and said_t:
        notes.append(f"the file names both reflectance and transmittance ({shown}); quantity unset")
    elif said_r:
        found_quantity = "R"
    elif said_t:
        found_quantity = "T"
    if quantity is not None:
        if found_quantity is not None and found_quantity != quantity:
            raise InputError(
                f"the file says the y axis is {found_quantity} ({shown}) but {quantity} was given"
            )
        if found_quantity is None:
            notes.append(f"quantity {quantity} as given by the caller (the file does not say)")
        found_quantity = quantity

    said_percent = any(_PERCENT.search(d) for d in descriptions if d)
    said_fraction = any(_FRACTION.search(d) for d in descriptions if d)
    found_unit: Unit | None = None
    if said_percent and said_fraction:
        raise InputError(f"the file describes the y axis both in % and as a fraction ({shown})")
    if said_percent:
        found_unit = "%"
    elif said_fraction:
        found_unit = "fraction"
    inferred = False
    if y_unit is not None:
        if found_unit is not None and found_unit != y_unit:
            raise InputError(
                f"the file says the y unit is {found_unit} ({shown}) but {y_unit} was given"
            )
        if found_unit is None:
            notes.append(f"y unit {y_unit} as given by the caller (the file does not say)")
        found_unit = y_unit
    if found_unit is None:
        largest = max(abs(v) for v in values)
        inferred = True
        if largest <= FRACTION_INFERENCE_CEILING:
            found_unit = "fraction"
            notes.append(
                f"y unit inferred as fraction: the file states none and no value exceeds "
                f"{FRACTION_INFERENCE_CEILING:g} (largest {largest:g}); a % curve that stays "
                "that low (an anti-reflection coating's R) would be misread - state the unit"
            )
        else:
            found_unit = "%"
            notes.append(
                f"y unit inferred as %: the file states none and values reach {largest:g}, "
                f"above {FRACTION_INFERENCE_CEILING:g}"
            )

    low, high = (MIN_PERCENT, MAX_PERCENT)
    if found_unit == "fraction":
        low, high = low / 100.0, high / 100.0
        if not inferred:
            high = FRACTION_INFERENCE_CEILING
    for value, line in zip(values, value_lines, strict=True):
        if not low <= value <= high:
            raise InputError(
                f"line {line}: value {value:g} is not a reflectance or transmittance in "
                f"{found_unit} (expected {low:g} to {high:g})"
            )
    return Ordinate(found_unit, found_quantity, inferred, tuple(notes))


def to_nanometres(x: float, x_unit: XUnit, line: int) -> float:
    """Convert one abscissa to nm (rounded to 1e-6 nm so µm and cm⁻¹ inputs land cleanly)."""
    if x_unit == "nm":
        nm = x
    elif x_unit == "um":
        nm = x * 1000.0
    else:
        if x <= 0:
            raise InputError(f"line {line}: wavenumber {x:g} cm⁻¹ is not positive")
        nm = 1e7 / x
    if not math.isfinite(nm):
        raise InputError(f"line {line}: x value {x!r} is not a finite number")
    return round(nm, _WAVELENGTH_DECIMALS)


def build_spectrum(
    x_values: Sequence[float],
    y_values: Sequence[float],
    lines: Sequence[int],
    *,
    x_unit: XUnit,
    ordinate: Ordinate,
    source_format: str,
    notes: Sequence[str],
    metadata: Mapping[str, str],
) -> Spectrum:
    """Convert to nm, sort, refuse repeats and implausible wavelengths, and build the Spectrum."""
    if len(x_values) < 2:
        raise InputError(f"the file holds {len(x_values)} data point(s); at least 2 are needed")
    if len(x_values) > MAX_POINTS:
        raise InputError(f"the file holds more than {MAX_POINTS} points; not a spectrum export")
    points: list[tuple[float, float, int]] = []
    for x, y, line in zip(x_values, y_values, lines, strict=True):
        if not (math.isfinite(x) and math.isfinite(y)):
            raise InputError(f"line {line}: value is not a finite number")
        nm = to_nanometres(x, x_unit, line)
        if not MIN_WAVELENGTH_NM <= nm <= MAX_WAVELENGTH_NM:
            shown_unit = {"nm": "nm", "um": "µm", "1/cm": "cm⁻¹"}[x_unit]
            raise InputError(
                f"line {line}: x = {x:g} {shown_unit} is {nm:g} nm, outside "
                f"{MIN_WAVELENGTH_NM:g}-{MAX_WAVELENGTH_NM:g} nm: is the x unit right?"
            )
        points.append((nm, y, line))
    points.sort(key=lambda p: p[0])
    for previous, current in zip(points, points[1:], strict=False):
        if current[0] == previous[0]:
            raise InputError(
                f"lines {previous[2]} and {current[2]} both give the wavelength {current[0]:g} nm"
            )
    all_notes = list(notes)
    if x_unit != "nm":
        all_notes.append(
            "x converted to nm from "
            + ("µm (x1000)" if x_unit == "um" else "cm⁻¹ (1e7 / wavenumber)")
            + " and sorted ascending"
        )
    elif any(b[2] < a[2] for a, b in zip(points, points[1:], strict=False)):
        all_notes.append("rows sorted by ascending wavelength")
    all_notes.extend(ordinate.notes)
    return Spectrum(
        wavelength_nm=tuple(p[0] for p in points),
        values=tuple(p[1] for p in points),
        unit=ordinate.unit,
        quantity=ordinate.quantity,
        source_format=source_format,
        notes=tuple(all_notes),
        metadata=dict(metadata),
        unit_inferred=ordinate.unit_inferred,
    )
