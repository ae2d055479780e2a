"""iCalendar (RFC 5545) text for the read-only resource feeds, written by hand.

Plain Python, no Django: takes events and returns the calendar text. The rules
followed (RFC 5545, section numbers from the RFC):

- 3.1: content lines end with CRLF; a line longer than 75 octets is folded by
  inserting CRLF followed by one space; a fold never splits a UTF-8 character.
- 3.3.11: in TEXT values a backslash, semicolon and comma are escaped with a
  backslash and a line break is written as ``\\n``.
- 3.3.5: DTSTART, DTEND and DTSTAMP are written in UTC with the ``Z`` suffix.
- 3.6.1, 3.8.4.7, 3.8.7.2: every VEVENT has a UID and a DTSTAMP.
- 3.7.3, 3.7.4: the calendar carries PRODID and VERSION:2.0.
"""

from __future__ import annotations

import datetime
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

CRLF = "\r\n"
MAX_OCTETS = 75
PRODID = "-//Durability records//Resource schedule feed//EN"


@dataclass(frozen=True)
class Event:
    """One VEVENT: a scheduled step, a chamber run or a blocked period."""

    uid: str
    start: datetime.datetime
    end: datetime.datetime
    summary: str
    description: str = ""
    location: str = ""
    categories: Sequence[str] = ()


def escape_text(value: str) -> str:
    """A TEXT value escaped per RFC 5545 3.3.11 (backslash first, so escapes stay single)."""
    value = value.replace("\\", "\\\\").replace(";", "\\;").replace(",", "\\,")
    value = value.replace("\r\n", "\n").replace("\r", "\n")
    return value.replace("\n", "\\n")


def fold(line: str) -> str:
    """One content line folded to at most 75 octets per physical line (RFC 5545 3.1).

    Continuation lines start with one space, which counts towards their 75 octets.
    Characters are kept whole: a fold falls between characters, never inside one.
    """
    pieces: list[str] = []
    current: list[str] = []
    size = 0
    limit = MAX_OCTETS
    for char in line:
        octets = len(char.encode("utf-8"))
        if size + octets > limit:
            pieces.append("".join(current))
            current, size = [], 0
            limit = MAX_OCTETS - 1  # the leading space of a continuation line
        current.append(char)
        size += octets
    pieces.append("".join(current))
    return (CRLF + " ").join(pieces)


def utc_stamp(moment: datetime.datetime) -> str:
    """A DATE-TIME in UTC form (RFC 5545 3.3.5), e.g. 20260302T070000Z. Needs an aware time."""
    if moment.tzinfo is None or moment.utcoffset() is None:
        raise ValueError("an iCalendar UTC time needs an aware datetime")
    return moment.astimezone(datetime.UTC).strftime("%Y%m%dT%H%M%SZ")


def _property(name: str, value: str) -> str:
    return fold(f"{name}:{value}") + CRLF


def calendar_text(events: Iterable[Event], *, name: str, stamp: datetime.datetime) -> str:
    """A whole VCALENDAR with one VEVENT per event; `stamp` is every event's DTSTAMP."""
    out = [
        _property("BEGIN", "VCALENDAR"),
        _property("VERSION", "2.0"),
        _property("PRODID", PRODID),
        _property("CALSCALE", "GREGORIAN"),
        _property("METHOD", "PUBLISH"),
        # Widely read calendar name (an extension property, RFC 5545 3.8.8.2).
        _property("X-WR-CALNAME", escape_text(name)),
    ]
    dtstamp = utc_stamp(stamp)
    for event in events:
        if event.end <= event.start:
            raise ValueError(f"event {event.uid!r} ends before it starts")
        out += [
            _property("BEGIN", "VEVENT"),
            _property("UID", event.uid),
            _property("DTSTAMP", dtstamp),
            _property("DTSTART", utc_stamp(event.start)),
            _property("DTEND", utc_stamp(event.end)),
            _property("SUMMARY", escape_text(event.summary)),
        ]
        if event.description:
            out.append(_property("DESCRIPTION", escape_text(event.description)))
        if event.location:
            out.append(_property("LOCATION", escape_text(event.location)))
        if event.categories:
            out.append(_property("CATEGORIES", ",".join(escape_text(c) for c in event.categories)))
        out += [_property("TRANSP", "OPAQUE"), _property("END", "VEVENT")]
    out.append(_property("END", "VCALENDAR"))
    return "".join(out)
