"""Surface-quality callouts: scratch-dig (``60-40``) and ISO 10110-7 (``5/3x0,16; L2x0.004``).

The notations themselves are read by :mod:`durability.surface.notation`; this module only finds
them in a callout, with the words people put around them, and turns the result into a
requirement.
"""

from __future__ import annotations

import re
from typing import Any

from durability.callouts.draft import Draft, ErrorItem, error_at
from durability.callouts.mil import MIL_RE
from durability.callouts.text import FLAGS, Segment
from durability.callouts.words import blank
from durability.errors import InputError
from durability.surface.notation import parse_iso10110_7, parse_scratch_dig

__all__ = ["read_iso10110_7", "read_scratch_dig"]

_ISO10110_RE = re.compile(
    r"^\s*(?:ISO\s*-?\s*10110\s*-\s*7(?![0-9])(?:\s*:\s*(?P<ed>[0-9]{4}))?\s*[:,]?\s*)?"
    r"(?:surface\s*(?:imperfections?|quality)\s*:?\s*)?(?P<body>5\s*/.*)$",
    FLAGS | re.DOTALL,
)
_SD_WORDS = (
    r"(?:surface\s*quality|cosmetics?|cosmetic\s*surface\s*quality|sq|s\s*/\s*d|s\s*-\s*d"
    r"|scratch\s*(?:-|/|and|&)?\s*dig)"
)
_SCRATCH_DIG_RE = re.compile(
    rf"^\s*(?:{_SD_WORDS}\s*:?\s*)*(?P<core>[0-9]+\s*[-/]\s*[0-9]+)\s*(?:{_SD_WORDS}\s*)?"
    r"(?:(?:per|iaw|to)\s*)?$",
    FLAGS,
)
# Scratch-dig belongs to MIL-PRF-13830B (and its predecessor MIL-O-13830A).
_SD_STANDARDS = frozenset({"MIL-PRF-13830", "MIL-O-13830"})


def _json_ready(value: dict[str, Any]) -> dict[str, Any]:
    return {key: item for key, item in value.items() if key != "normal"}


def read_scratch_dig(segment: Segment) -> Draft | ErrorItem | None:
    """Read ``60-40``, ``S/D 60/40``, ``scratch-dig 80-50``, ``60-40 per MIL-PRF-13830B``."""
    text = segment.text
    standard = None
    body = text
    designation = MIL_RE.search(text)
    if designation is not None:
        base = f"MIL-{designation['series'].upper()}-{designation['number']}"
        if base not in _SD_STANDARDS:
            return None
        standard = base + (designation["rev"].upper() if designation["rev"] else "")
        body = blank(text, [designation.span()])
    found = _SCRATCH_DIG_RE.match(body)
    if found is None:
        return None
    try:
        spec = parse_scratch_dig(found["core"])
    except InputError as exc:
        return error_at(segment, str(exc), found.start("core"))
    draft = Draft.at("scratch_dig", segment)
    draft.limit = _json_ready(spec.as_json())
    draft.standard = standard
    if standard is None:
        draft.normal = spec.normal
        draft.note(
            "scratch-dig read as in MIL-PRF-13830B; no standard written (the notation is used "
            "by more than one standard)"
        )
    else:
        draft.normal = f"{spec.normal} per {standard}"
        if designation is not None and designation["rev"] is None:
            draft.note(f"revision letter missing: {standard} stored without one", review=True)
    draft.note(
        "the scratch number is a visibility grade judged against master standards, not a "
        "width; the dig number is the dig diameter in 0.01 mm"
    )
    return draft


def read_iso10110_7(segment: Segment) -> Draft | ErrorItem | None:
    """Read ``5/3x0,16; L2x0.004; E0.5`` (optionally after ``ISO 10110-7[:2017]``)."""
    text = segment.text
    found = _ISO10110_RE.match(text)
    if found is None:
        return None
    try:
        spec = parse_iso10110_7(found["body"])
    except InputError as exc:
        return error_at(segment, str(exc), found.start("body"))
    draft = Draft.at("iso10110_7", segment)
    draft.standard = "ISO 10110-7"
    draft.edition = found["ed"]
    draft.limit = _json_ready(spec.as_json())
    if draft.edition is None:
        draft.normal = spec.normal
        draft.note(
            "standard read from the notation (5/ is ISO 10110-7's surface imperfection code); "
            "edition not written: editions differ in details, confirm which one applies"
        )
    else:
        draft.normal = f"ISO 10110-7:{draft.edition} {spec.normal}"
    return draft
