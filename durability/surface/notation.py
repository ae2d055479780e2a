"""Parsers for surface-imperfection callouts as drawings write them.

Two notations are read here:

- MIL-PRF-13830B scratch-dig, e.g. ``60-40``, ``60/40``, ``S/D 60/40``, ``S-D 60-40``,
  ``scratch-dig 80-50``, ``80 - 50``. The first number is the scratch number (a visibility
  grade, not a width), the second the dig number (dig diameter in 0.01 mm).
- ISO 10110-7 surface imperfections, e.g. ``5/3x0,16; C2x0.1; L2x0.004; E0.5``: ``5/`` is the
  drawing code, ``N x A`` the number of allowed imperfections of the maximum grade and the grade
  number A (the square root of the imperfection area, mm); ``C`` coating imperfections,
  ``L`` long scratches (count x maximum width, mm), ``E`` edge chips (maximum extent, mm).
  ``x`` or ``×``, decimal comma or point, semicolon-separated fields, spaces tolerated.
  Any grade number written on a drawing is accepted; the preferred series is not enforced.

Both parsers raise :class:`durability.errors.InputError` naming the character position (1-based)
or the field that is wrong.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from durability.errors import InputError

__all__ = [
    "Iso10110Spec",
    "ScratchDigSpec",
    "format_mm",
    "parse_iso10110_7",
    "parse_scratch_dig",
]


@dataclass(frozen=True)
class ScratchDigSpec:
    """A MIL-PRF-13830B scratch-dig callout.

    ``scratch`` is the scratch number (visibility grade), ``dig`` the dig number (maximum dig
    diameter in 0.01 mm), ``normal`` the callout rewritten as ``"60-40"``.
    """

    scratch: int
    dig: int
    normal: str

    @property
    def max_dig_diameter_mm(self) -> float:
        """Maximum dig diameter in mm: the dig number is the diameter in 0.01 mm."""
        return self.dig / 100.0

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict."""
        return {"scratch": self.scratch, "dig": self.dig, "normal": self.normal}


@dataclass(frozen=True)
class Iso10110Spec:
    """An ISO 10110-7 surface-imperfection callout (``5/N x A; CN' x A'; LN'' x A''; EA'''``).

    ``count`` and ``grade_mm`` are N and A of the ``5/`` field; ``coating`` is (N', A') or None;
    ``long_scratch`` is (count, maximum width mm) or None; ``edge_chip_mm`` is the maximum edge
    chip extent or None; ``normal`` is the callout rewritten with ``x``, decimal points and
    ``"; "`` between fields in the order 5/, C, L, E.
    """

    count: int
    grade_mm: float
    coating: tuple[int, float] | None
    long_scratch: tuple[int, float] | None
    edge_chip_mm: float | None
    normal: str

    def as_json(self) -> dict[str, object]:
        """Return a JSON-ready dict."""
        return {
            "count": self.count,
            "grade_mm": self.grade_mm,
            "coating": (
                None
                if self.coating is None
                else {"count": self.coating[0], "grade_mm": self.coating[1]}
            ),
            "long_scratch": (
                None
                if self.long_scratch is None
                else {"count": self.long_scratch[0], "max_width_mm": self.long_scratch[1]}
            ),
            "edge_chip_mm": self.edge_chip_mm,
            "normal": self.normal,
        }


def format_mm(value: float) -> str:
    """Write a length in mm without trailing zeros or exponent (0.16 -> "0.16", 2.0 -> "2")."""
    text = f"{value:.6f}".rstrip("0").rstrip(".")
    return text if text else "0"


# ---------------------------------------------------------------- scratch-dig

_SD_PREFIXES = ("scratch-dig", "scratch/dig", "s/d", "s-d")


def _sd_error(text: str, pos: int, what: str) -> InputError:
    return InputError(f"scratch-dig {text!r}: {what} at position {pos + 1}")


def parse_scratch_dig(text: str) -> ScratchDigSpec:
    """Parse a MIL-PRF-13830B scratch-dig callout such as ``"S/D 60/40"``.

    Raises InputError naming the position of the first unexpected character.
    """
    if not isinstance(text, str):
        raise InputError(f"scratch-dig: expected text, got {type(text).__name__}")
    pos = 0
    n = len(text)

    def skip_spaces() -> None:
        nonlocal pos
        while pos < n and text[pos].isspace():
            pos += 1

    def read_int(label: str) -> int:
        nonlocal pos
        start = pos
        while pos < n and text[pos] in "0123456789":
            pos += 1
        if start == pos:
            found = repr(text[pos]) if pos < n else "end of text"
            raise _sd_error(text, start, f"expected the {label} number, found {found}")
        value = int(text[start:pos])
        if value <= 0:
            raise _sd_error(text, start, f"the {label} number must be positive")
        return value

    skip_spaces()
    lowered = text.lower()
    for prefix in _SD_PREFIXES:
        if lowered.startswith(prefix, pos):
            pos += len(prefix)
            if pos < n and not text[pos].isspace() and text[pos] not in "0123456789":
                raise _sd_error(text, pos, f"unexpected character {text[pos]!r}")
            break
    skip_spaces()
    scratch = read_int("scratch")
    skip_spaces()
    if pos >= n or text[pos] not in "-/":
        found = repr(text[pos]) if pos < n else "end of text"
        raise _sd_error(text, pos, f"expected '-' or '/' between scratch and dig, found {found}")
    pos += 1
    skip_spaces()
    dig = read_int("dig")
    skip_spaces()
    if pos < n:
        raise _sd_error(text, pos, f"unexpected character {text[pos]!r}")
    return ScratchDigSpec(scratch=scratch, dig=dig, normal=f"{scratch}-{dig}")


# ---------------------------------------------------------------- ISO 10110-7

_NUMBER = r"\d+(?:[.,]\d+)?|[.,]\d+"
_TIMES = r"\s*[x×X]\s*"
_MAIN_RE = re.compile(rf"^5\s*/\s*(?P<n>\d+){_TIMES}(?P<a>{_NUMBER})$")
_PAIR_RE = re.compile(rf"^(?P<n>\d+){_TIMES}(?P<a>{_NUMBER})$")
_SINGLE_RE = re.compile(rf"^(?P<a>{_NUMBER})$")

_FIELD_NAMES = {
    "5/": "the 5/ (surface imperfection) field",
    "C": "the C (coating imperfection) field",
    "L": "the L (long scratch) field",
    "E": "the E (edge chip) field",
}


def _number(raw: str) -> float:
    return float(raw.replace(",", "."))


def _iso_error(text: str, field_no: int, field: str, key: str, what: str) -> InputError:
    return InputError(
        f"ISO 10110-7 {text!r}: field {field_no} {field.strip()!r}"
        f" ({_FIELD_NAMES.get(key, 'an unknown field')})"
        f": {what}"
    )


def _count_and_size(
    text: str, field_no: int, field: str, key: str, body: str, size_label: str
) -> tuple[int, float]:
    match = _PAIR_RE.match(body)
    if match is None:
        raise _iso_error(
            text, field_no, field, key, f"expected COUNT x {size_label} (e.g. 2x0.1), got {body!r}"
        )
    count = int(match["n"])
    size = _number(match["a"])
    if count <= 0:
        raise _iso_error(text, field_no, field, key, "the count must be positive")
    if size <= 0:
        raise _iso_error(text, field_no, field, key, f"the {size_label} must be positive")
    return count, size


def parse_iso10110_7(text: str) -> Iso10110Spec:
    """Parse an ISO 10110-7 surface-imperfection callout such as ``"5/3x0,16; L2x0.004; E0.5"``.

    The ``5/`` field comes first; ``C``, ``L`` and ``E`` follow in any order, each at most once.
    Raises InputError naming the field (number, text and kind) that is malformed.
    """
    if not isinstance(text, str):
        raise InputError(f"ISO 10110-7: expected text, got {type(text).__name__}")
    if not text.strip():
        raise InputError("ISO 10110-7: the callout is empty")
    fields = text.split(";")
    count = 0
    grade = 0.0
    coating: tuple[int, float] | None = None
    long_scratch: tuple[int, float] | None = None
    edge: float | None = None
    seen: set[str] = set()
    for index, field in enumerate(fields, start=1):
        body = field.strip()
        if not body:
            raise _iso_error(text, index, field, "?", "the field is empty (stray ';'?)")
        if index == 1:
            match = _MAIN_RE.match(body)
            if match is None:
                raise _iso_error(
                    text,
                    index,
                    field,
                    "5/",
                    f"expected 5/COUNT x GRADE (e.g. 5/3x0.16), got {body!r}",
                )
            count = int(match["n"])
            grade = _number(match["a"])
            if count <= 0:
                raise _iso_error(text, index, field, "5/", "the count must be positive")
            if grade <= 0:
                raise _iso_error(text, index, field, "5/", "the grade number must be positive")
            seen.add("5/")
            continue
        key = body[0].upper()
        rest = body[1:].strip()
        if key not in ("C", "L", "E"):
            raise _iso_error(
                text, index, field, key, f"unknown field letter {body[0]!r} (expected C, L or E)"
            )
        if key in seen:
            raise _iso_error(text, index, field, key, "the field appears twice")
        seen.add(key)
        if key == "C":
            coating = _count_and_size(text, index, field, key, rest, "GRADE")
        elif key == "L":
            long_scratch = _count_and_size(text, index, field, key, rest, "WIDTH")
        else:
            match = _SINGLE_RE.match(rest)
            if match is None:
                raise _iso_error(
                    text, index, field, key, f"expected E followed by an extent in mm, got {body!r}"
                )
            edge = _number(match["a"])
            if edge <= 0:
                raise _iso_error(text, index, field, key, "the edge chip extent must be positive")
    parts = [f"5/{count}x{format_mm(grade)}"]
    if coating is not None:
        parts.append(f"C{coating[0]}x{format_mm(coating[1])}")
    if long_scratch is not None:
        parts.append(f"L{long_scratch[0]}x{format_mm(long_scratch[1])}")
    if edge is not None:
        parts.append(f"E{format_mm(edge)}")
    return Iso10110Spec(
        count=count,
        grade_mm=grade,
        coating=coating,
        long_scratch=long_scratch,
        edge_chip_mm=edge,
        normal="; ".join(parts),
    )
