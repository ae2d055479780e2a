"""The iCalendar writer against RFC 5545 rules, read back by a small parser of our own
and by the `icalendar` package (a reference library from PyPI, test-only).

No database: labrecords.ical is plain Python.
"""

import datetime
import zoneinfo

import pytest
from hypothesis import given
from hypothesis import strategies as st

from labrecords.ical import Event, calendar_text, escape_text, fold, utc_stamp

BERLIN = zoneinfo.ZoneInfo("Europe/Berlin")


def unfold(text: str) -> list[str]:
    """RFC 5545 3.1: remove every CRLF followed by one space or tab; split on CRLF."""
    assert text.endswith("\r\n")
    body = text.replace("\r\n ", "").replace("\r\n\t", "")
    return body[:-2].split("\r\n")


def unescape(value: str) -> str:
    """RFC 5545 3.3.11 TEXT, read back: \\\\ \\; \\, \\n and \\N."""
    out, i = [], 0
    while i < len(value):
        char = value[i]
        if char == "\\" and i + 1 < len(value):
            nxt = value[i + 1]
            out.append({"n": "\n", "N": "\n"}.get(nxt, nxt))
            i += 2
            continue
        out.append(char)
        i += 1
    return "".join(out)


def parse(text: str) -> list[dict[str, str]]:
    """Our own small reader: the VEVENTs as property -> unescaped value."""
    events, current = [], None
    for line in unfold(text):
        name, _, value = line.partition(":")
        if line == "BEGIN:VEVENT":
            current = {}
        elif line == "END:VEVENT":
            events.append(current)
            current = None
        elif current is not None:
            current[name] = (
                unescape(value) if name in {"SUMMARY", "DESCRIPTION", "LOCATION"} else value
            )
    return events


def sample_events():
    start = datetime.datetime(2026, 3, 2, 8, 0, tzinfo=BERLIN)
    return [
        Event(
            uid="HUM-1-W01#3@durability-records",
            start=start,
            end=start + datetime.timedelta(hours=24),
            summary="HUM-1: Humidity, lots L26-0001, L26-0002; 49 °C \\ 95 %",
            description="L26-0001-W01 (lot L26-0001, sequence A): Humidity\n"
            "L26-0002-W03 (lot L26-0002, sequence B): Humidity, with a very long "
            "note that runs well past seventy-five octets on one line ÄÖÜ ± µ",
            location="Humidity chamber 1",
            categories=("humidity",),
        ),
        Event(
            uid="HUM-1-block-7@durability-records",
            start=start + datetime.timedelta(days=2),
            end=start + datetime.timedelta(days=3),
            summary="HUM-1 blocked: door seal, humidifier; see log",
        ),
    ]


def test_escaping_follows_rfc_5545_text_rules():
    # RFC 5545 3.3.11: backslash, semicolon, comma escaped; a line break becomes \n.
    assert escape_text("a,b;c\\d\ne") == "a\\,b\\;c\\\\d\\ne"
    assert escape_text("one\r\ntwo\rthree") == "one\\ntwo\\nthree"
    assert unescape(escape_text("x\\;,\ny")) == "x\\;,\ny"


def test_every_physical_line_has_at_most_75_octets_and_ends_in_crlf():
    text = calendar_text(
        sample_events(),
        name="HUM-1 Humidity chamber 1",
        stamp=datetime.datetime(2026, 3, 1, 12, 0, tzinfo=datetime.UTC),
    )
    raw = text.encode("utf-8")
    # RFC 5545 3.1: lines are delimited by CRLF, never by a bare LF or CR.
    assert raw.count(b"\n") == raw.count(b"\r\n") == raw.count(b"\r")
    lines = raw.split(b"\r\n")
    assert lines[-1] == b""
    # RFC 5545 3.1: no line longer than 75 octets, excluding the line break.
    assert max(len(line) for line in lines) <= 75
    assert any(line.startswith(b" ") for line in lines), "the long description was folded"
    for line in lines:
        line.decode("utf-8")  # a fold never splits a multi-octet character


@given(st.text(min_size=0, max_size=400))
def test_folding_keeps_the_text_and_the_octet_limit(value):
    folded = fold("DESCRIPTION:" + value.replace("\r", "").replace("\n", ""))
    physical = folded.split("\r\n")
    assert all(len(p.encode("utf-8")) <= 75 for p in physical)
    assert all(p.startswith(" ") for p in physical[1:])
    assert folded.replace("\r\n ", "") == "DESCRIPTION:" + value.replace("\r", "").replace("\n", "")


def test_events_carry_uid_dtstamp_and_utc_times_and_read_back():
    stamp = datetime.datetime(2026, 3, 1, 12, 30, tzinfo=BERLIN)
    events = sample_events()
    text = calendar_text(events, name="HUM-1", stamp=stamp)
    lines = unfold(text)
    assert lines[0] == "BEGIN:VCALENDAR" and lines[-1] == "END:VCALENDAR"
    assert "VERSION:2.0" in lines and any(line.startswith("PRODID:") for line in lines)
    parsed = parse(text)
    assert len(parsed) == 2
    first = parsed[0]
    # RFC 5545 3.3.5 form 2 (UTC): 08:00 in Berlin in March (UTC+1) is 07:00Z.
    assert first["DTSTART"] == "20260302T070000Z"
    assert first["DTEND"] == "20260303T070000Z"
    assert first["DTSTAMP"] == "20260301T113000Z"
    assert first["UID"] == events[0].uid
    assert first["SUMMARY"] == events[0].summary
    assert first["DESCRIPTION"] == events[0].description
    assert parsed[1]["SUMMARY"] == events[1].summary


def test_the_icalendar_package_reads_the_same_events():
    icalendar = pytest.importorskip("icalendar")
    events = sample_events()
    text = calendar_text(
        events, name="HUM-1", stamp=datetime.datetime(2026, 3, 1, 12, 0, tzinfo=datetime.UTC)
    )
    calendar = icalendar.Calendar.from_ical(text)
    read = list(calendar.walk("VEVENT"))
    assert [str(e["UID"]) for e in read] == [e.uid for e in events]
    assert str(read[0]["SUMMARY"]) == events[0].summary
    assert str(read[0]["DESCRIPTION"]) == events[0].description
    assert read[0]["DTSTART"].dt == events[0].start
    assert read[0]["DTEND"].dt == events[0].end
    assert read[0].decoded("DTSTART").tzinfo is not None
    # And the package's own output of our calendar unfolds to the same properties.
    assert parse(calendar.to_ical().decode())[0]["SUMMARY"] == events[0].summary


def test_utc_stamp_refuses_a_naive_time():
    with pytest.raises(ValueError, match="aware"):
        utc_stamp(datetime.datetime(2026, 3, 2, 8, 0))
    assert utc_stamp(datetime.datetime(2026, 7, 1, 8, 0, tzinfo=BERLIN)) == "20260701T060000Z"


def test_an_event_ending_before_it_starts_is_refused():
    start = datetime.datetime(2026, 3, 2, 8, 0, tzinfo=datetime.UTC)
    with pytest.raises(ValueError, match="ends before it starts"):
        calendar_text([Event(uid="x", start=start, end=start, summary="s")], name="n", stamp=start)
