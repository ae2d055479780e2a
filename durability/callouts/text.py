"""Cutting requirement text into callouts, with their line and column.

A line holds one or more callouts separated by commas or semicolons. Inside an ISO 10110-7
callout (it starts with ``5/``) semicolons separate the notation's own fields (``C``, ``L``,
``E``) and a comma between two digits is a decimal comma, so neither ends the callout there.

Matching is done on a normalized copy of each line of exactly the same length (dashes, slashes,
full-width punctuation and odd spaces are mapped one character to one character), so a position
found in the normalized copy is the position in the original text.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from dataclasses import dataclass

__all__ = ["Segment", "collapse", "normalize", "split_lines", "split_segments", "FLAGS"]

# ASCII so that \d, \w and \b mean what the notations mean (no Arabic-Indic digits in a code).
FLAGS = re.ASCII | re.IGNORECASE

_ONE_FOR_ONE = {
    # dashes and minus signs people type or paste from word processors
    "\u2010": "-",
    "\u2011": "-",
    "\u2012": "-",
    "\u2013": "-",
    "\u2014": "-",
    "\u2015": "-",
    "\u2212": "-",
    "\ufe58": "-",
    "\ufe63": "-",
    "\uff0d": "-",
    "\u2044": "/",
    "\u2215": "/",
    "\uff0f": "/",
    "\uff1a": ":",
    "\uff0c": ",",
    "\uff1b": ";",
    "\u200b": " ",
    "\u200c": " ",
    "\u200d": " ",
    "\u2060": " ",
    "\ufeff": " ",
    # full-width ASCII forms (U+FF01..U+FF5E) typed with an East Asian input method
    **{chr(code): chr(code - 0xFEE0) for code in range(0xFF01, 0xFF5F)},
}


def normalize(text: str) -> str:
    """Return ``text`` with dashes, slashes and spaces unified, one character for one."""
    out = []
    for char in text:
        mapped = _ONE_FOR_ONE.get(char)
        if mapped is None:
            mapped = " " if char.isspace() else char
        out.append(mapped)
    return "".join(out)


def collapse(text: str) -> str:
    """Return ``text`` with runs of whitespace made single spaces and ends trimmed."""
    return " ".join(text.split())


@dataclass(frozen=True)
class Segment:
    """One callout's stretch of a line.

    ``start``/``end`` index the line (0-based, end exclusive); ``raw`` is the original line and
    ``rec`` its normalized copy used for matching (a leading note number such as ``3.`` is
    blanked there, but kept in the callout's text).
    """

    line: int
    start: int
    end: int
    raw: str
    rec: str

    @property
    def column(self) -> int:
        """1-based column of the first character."""
        return self.start + 1

    @property
    def original(self) -> str:
        """The callout as written."""
        return self.raw[self.start : self.end]

    @property
    def text(self) -> str:
        """The normalized callout, same length as :attr:`original`."""
        return self.rec[self.start : self.end]


def split_lines(text: str) -> Iterator[tuple[int, str]]:
    """Yield (1-based line number, line) for ``text`` split at newlines (CR LF accepted)."""
    for number, line in enumerate(text.split("\n"), start=1):
        yield number, line[:-1] if line.endswith("\r") else line


# A drawing note's number or bullet at the start of a line: "3. ", "(2) ", "a) ", "- ", "* ".
_NOTE_MARKER = re.compile(
    r"^\s*(?:\(?[0-9]{1,2}[.)]|\(?[a-z][.)]|[-*\u2022\u00b7])\s+(?=\S)", FLAGS
)

# Where an ISO 10110-7 callout begins: a "5/" that is not the tail of a larger number.
_ISO10110_START = re.compile(r"(?<![0-9.,/])5\s*/\s*[0-9]", FLAGS)

# After a ';' inside an ISO 10110-7 callout: another of its fields (C, L or E and a number).
_ISO10110_FIELD = re.compile(r"\s*[CLE]\s*[0-9.,]", FLAGS)


def _iso10110_start(rec: str, start: int) -> int:
    """Index where an ISO 10110-7 callout begins in the stretch from ``start`` to the next
    separator, or -1."""
    stop = len(rec)
    for index in range(start, len(rec)):
        if rec[index] in ",;":
            stop = index
            break
    found = _ISO10110_START.search(rec, start, stop)
    return -1 if found is None else found.start()


def _is_separator(rec: str, index: int, iso_from: int) -> bool:
    char = rec[index]
    if char not in ",;":
        return False
    if 0 <= iso_from < index:
        if char == "," and _ascii_digit(rec, index - 1) and _ascii_digit(rec, index + 1):
            return False
        if char == ";" and _ISO10110_FIELD.match(rec, index + 1):
            return False
    return True


# "ISO 9022-12-06-1 and ISO 9022-40-04-0": a joining word before another standard's designation
# starts a new callout (the joining word goes with it, so the callout text stays contiguous).
_JOINED_DESIGNATION = re.compile(
    r"(?<=\s)(?:and|&|\+|plus)\s+(?=(?:DIN\s+EN\s+)?(?:ISO|MIL|ASTM)(?![a-z]))", FLAGS
)


def _ascii_digit(text: str, index: int) -> bool:
    return 0 <= index < len(text) and text[index] in "0123456789"


def split_segments(line: int, raw: str) -> list[Segment]:
    """Cut one line into callout segments, whitespace trimmed; empty stretches are dropped."""
    norm = normalize(raw)
    rec = norm
    marker = _NOTE_MARKER.match(norm)
    if marker is not None:
        rec = " " * marker.end() + norm[marker.end() :]
    segments: list[Segment] = []
    seg_start = 0
    iso_from = _iso10110_start(rec, 0)
    for index in range(len(rec) + 1):
        if index < len(rec) and not _is_separator(rec, index, iso_from):
            continue
        start, end = seg_start, index
        while start < end and norm[start].isspace():
            start += 1
        while end > start and norm[end - 1].isspace():
            end -= 1
        cuts = [start]
        cuts += [m.start() for m in _JOINED_DESIGNATION.finditer(rec, start, end)]
        for piece_start, piece_end in zip(cuts, [*cuts[1:], end], strict=True):
            while piece_end > piece_start and norm[piece_end - 1].isspace():
                piece_end -= 1
            if piece_start < piece_end and any(c.isalnum() for c in raw[piece_start:piece_end]):
                segments.append(
                    Segment(line=line, start=piece_start, end=piece_end, raw=raw, rec=rec)
                )
        seg_start = index + 1
        if seg_start <= len(rec):
            iso_from = _iso10110_start(rec, seg_start)
    return segments
