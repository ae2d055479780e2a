"""Crosshatch limits: ISO 2409 classes and ASTM D3359 method B classes.

Both scales become one number, the maximum share of the lattice detached (%), through the class
table in :mod:`durability.grading` (ISO 2409 / ASTM D3359 cross-cut table, per
shared/reference/test-methods.md [pub]): ISO class 1 max == ASTM 4B min == at most 5 % detached.
ISO classes run 0 (nothing detached) to 5, so an ISO limit is a maximum class; ASTM classes run
5B (nothing detached) to 0B, so an ASTM limit is a minimum class.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from durability.callouts.draft import Draft, ErrorItem, Item, error_at
from durability.callouts.model import CalloutError, ParseOptions, Requirement
from durability.callouts.text import FLAGS, Segment
from durability.callouts.words import blank, not_understood, scan
from durability.grading import (
    CORRESPONDENCE_NOTE,
    BoundaryConvention,
    astm_to_iso,
    iso_to_astm,
    max_share_pct,
)

__all__ = ["CrosshatchHost", "read_crosshatch"]

_ISO2409_RE = re.compile(r"\bISO\s*-?\s*2409(?![0-9])(?:\s*:\s*(?P<ed>[0-9]{4}))?", FLAGS)
_ASTM_RE = re.compile(
    r"\bASTM\s*-?\s*D\s*-?\s*3359(?![0-9])"
    r"(?:\s*-\s*(?P<ed>[0-9]{2}(?:[a-z][0-9]{0,2})?)(?![a-z0-9]))?",
    FLAGS,
)
_ISO_CLASS_RE = re.compile(
    r"\b(?P<word>class|cl\.?|gt|grade|rating)\s*(?:<=|\u2264|=|:)?\s*(?P<n>[0-9]{1,3})(?![a-z0-9])",
    FLAGS,
)
_ASTM_CLASS_RE = re.compile(
    r"(?<![a-z0-9.])(?P<n>[0-9]{1,3})\s*(?P<letter>[AB])(?![a-z0-9])", FLAGS
)
_ASTM_METHOD_RE = re.compile(r"\bmethod\s*(?P<letter>[AB])(?![a-z0-9])", FLAGS)
_CONTEXT_RE = re.compile(
    r"\b(?:cross\s*-?\s*(?:hatch|cut)|crosshatch|crosscut|lattice|adhesion|tape)", FLAGS
)

_MAX_RE = re.compile(
    r"(?:\bmax(?:imum)?\b\.?|\bat\s+most\b|\bor\s+(?:less|lower)\b|\u2264|<=|"
    r"\b(?:not|no)\s+worse\s+than\b|\bup\s+to\b)",
    FLAGS,
)
_MIN_RE = re.compile(
    r"(?:\bmin(?:imum)?\b\.?|\bat\s+least\b|\bor\s+(?:higher|more|above)\b|\u2265|>=|"
    r"\bno\s+less\s+than\b)",
    FLAGS,
)
_BETTER_RE = re.compile(r"\bor\s+(?:better|best)\b", FLAGS)
_WORSE_RE = re.compile(r"\bor\s+worse\b", FLAGS)

_NO_CLASS = "no class given: no limit read; kept for engineering review"
_OK_WORDS = frozenset("class cl gt grade rating cut cross lattice method b".split())


def read_crosshatch(segment: Segment, options: ParseOptions) -> Draft | ErrorItem | None:
    """Read ``ISO 2409 class 1 max``, ``ISO 2409 Gt 1``, ``ASTM D3359 4B min``, ``4B or better``.

    Returns None when the segment is not a crosshatch limit.
    """
    text = segment.text
    iso = _ISO2409_RE.search(text)
    astm = _ASTM_RE.search(text)
    designations = [m.span() for m in (iso, astm) if m is not None]
    body = blank(text, designations)
    iso_class = _ISO_CLASS_RE.search(body)
    astm_class = _ASTM_CLASS_RE.search(blank(body, [iso_class.span()] if iso_class else []))
    max_q = _MAX_RE.search(body)
    min_q = _MIN_RE.search(body)
    better = _BETTER_RE.search(body)
    worse = _WORSE_RE.search(body)
    context = _CONTEXT_RE.search(body) is not None
    gt = iso_class is not None and iso_class["word"].lower() == "gt"
    if not (
        iso
        or astm
        or gt
        or (context and (iso_class or astm_class))
        or (astm_class and (min_q or better))
    ):
        return None
    if iso_class is None and astm_class is None:
        if iso is None and astm is None:
            return None
        draft = Draft.at("unknown", segment)
        if iso is not None:
            draft.standard, draft.edition = "ISO 2409", iso["ed"]
        elif astm is not None:
            draft.standard, draft.edition = "ASTM D3359", astm["ed"]
        draft.normal = " ".join(segment.original.split())
        draft.note(_NO_CLASS, review=True)
        return draft

    draft = Draft.at("crosshatch_limit", segment)
    spans = list(designations)
    if iso_class is not None:
        spans.append(iso_class.span())
    if astm_class is not None:
        spans.append(astm_class.span())
    method = _ASTM_METHOD_RE.search(body)
    if method is not None:
        spans.append(method.span())
    for found in (max_q, min_q, better, worse):
        if found is not None:
            spans.append(found.span())

    iso_value: int | None = None
    if iso_class is not None:
        number = int(iso_class["n"])
        if number > 5:
            return error_at(
                segment,
                f"crosshatch class {iso_class['n']!r} is not an ISO 2409 class (0 to 5)",
                iso_class.start("n"),
            )
        iso_value = number
    astm_value: int | None = None
    astm_written: str | None = None
    if astm_class is not None:
        astm_written = f"{int(astm_class['n'])}{astm_class['letter'].upper()}"
        if astm_class["letter"].upper() == "A":
            draft.kind = "unknown"
            draft.standard = "ASTM D3359"
            draft.edition = astm["ed"] if astm is not None else None
            draft.normal = " ".join(segment.original.split())
            draft.note(
                f"{astm_written} is an ASTM D3359 method A (X-cut) class: it has no lattice "
                "share, so no maximum share was computed; kept for engineering review",
                review=True,
            )
            return draft
        if int(astm_class["n"]) > 5:
            return error_at(
                segment,
                f"crosshatch class {astm_written!r} is not an ASTM D3359 method B class (5B to 0B)",
                astm_class.start("n"),
            )
        astm_value = astm_to_iso(astm_written)
        if method is not None and method["letter"].upper() == "A":
            draft.note(
                f"'method A' written with a method B class {astm_written}: read as method B",
                review=True,
            )

    if iso_class is not None and astm_class is not None and iso_value != astm_value:
        return error_at(
            segment,
            f"ISO 2409 class {iso_value} and ASTM D3359 {astm_written} are different limits "
            f"({max_share_pct(iso_value or 0):g} % and {max_share_pct(astm_value or 0):g} % "
            "detached at most)",
        )
    if iso is not None and iso_class is None:
        return error_at(
            segment,
            f"ISO 2409 with the ASTM D3359 class {astm_written}: ISO 2409 classes are 0 to 5",
            astm_class.start() if astm_class else None,
        )
    if astm is not None and astm_class is None:
        return error_at(
            segment,
            f"ASTM D3359 with class {iso_value}: ASTM D3359 method B classes are 5B to 0B",
            iso_class.start() if iso_class else None,
        )

    # Which scale the limit is written on decides which direction a qualifier must point.
    on_astm = astm_class is not None and iso_class is None
    cls = astm_value if on_astm else iso_value
    assert cls is not None
    dual = iso_class is not None and astm_class is not None
    if dual:
        draft.note(f"written on both scales: class {iso_value} and {astm_written}")
    elif on_astm:
        if max_q is not None or worse is not None:
            bad = (max_q or worse).group()  # type: ignore[union-attr]
            return error_at(
                segment,
                f"{astm_written} with {bad.strip()!r}: ASTM D3359 classes run from 5B (nothing "
                f"detached) down to 0B, so a limit is a minimum class ('{astm_written} min' or "
                f"'{astm_written} or better')",
                (max_q or worse).start(),  # type: ignore[union-attr]
            )
    elif min_q is not None or worse is not None:
        bad = (min_q or worse).group()  # type: ignore[union-attr]
        return error_at(
            segment,
            f"class {iso_value} with {bad.strip()!r}: ISO 2409 classes run from 0 (nothing "
            f"detached) up to 5, so a limit is a maximum class ('class {iso_value} max' or "
            f"'class {iso_value} or better')",
            (min_q or worse).start(),  # type: ignore[union-attr]
        )
    if not (max_q or min_q or better):
        draft.note(
            "no 'max'/'min' written: the class is taken as the worst class accepted", review=False
        )

    if iso is not None:
        draft.standard = "ISO 2409"
        draft.edition = iso["ed"]
    elif astm is not None:
        draft.standard = "ASTM D3359"
        draft.edition = astm["ed"]
    elif on_astm:
        draft.standard = "ASTM D3359"
        draft.note(
            f"standard read from the class notation: {astm_written} is an ASTM D3359 method B class"
        )
    elif gt:
        draft.standard = "ISO 2409"
        draft.note("standard read from the class notation: Gt classes are ISO 2409's")
    else:
        draft.note(
            f"class {iso_value} read on the ISO 2409 scale (0 best to 5 worst); no standard "
            "written",
            review=True,
        )

    convention = options.crosshatch_boundary
    draft.limit = {
        "max_share_detached_pct": max_share_pct(cls),
        "max_share_included": convention is BoundaryConvention.BETTER_CLASS or cls == 5,
        "iso2409_class": cls,
        "astm_d3359_class": iso_to_astm(cls),
        "written_as": " ".join(segment.original.split()),
        "convention": convention.sentence,
    }
    draft.note(CORRESPONDENCE_NOTE)
    if draft.standard == "ASTM D3359":
        normal = "ASTM D3359" + (f"-{draft.edition}" if draft.edition else "")
        draft.normal = f"{normal} {iso_to_astm(cls)} min"
    elif draft.standard == "ISO 2409":
        normal = "ISO 2409" + (f":{draft.edition}" if draft.edition else "")
        draft.normal = f"{normal} class {cls} max"
    else:
        draft.normal = f"crosshatch class {cls} max"
    rest = scan(blank(body, spans), _OK_WORDS)
    strays = [m.written for m in rest.tests if m.key not in ("crosshatch", "adhesion")]
    strays += [word for word, _ in rest.unknown]
    if strays:
        draft.note(
            not_understood(" ".join(strays)),
            review=True,
        )
    return draft


@dataclass
class CrosshatchHost:
    """A crosshatch standard without a class (``adhesion per ASTM D3359 method B``), waiting
    for the class that follows it on the line (``, 4B min``)."""

    item: Draft | ErrorItem
    segment: Segment
    options: ParseOptions

    @staticmethod
    def wanted(item: Draft | ErrorItem) -> bool:
        """True when ``item`` is a crosshatch standard still missing its class."""
        return isinstance(item, Draft) and _NO_CLASS in item.assumptions

    def attach(self, segment: Segment) -> list[Item] | None:
        """Read the standard and the following class together as one limit."""
        if _ISO2409_RE.search(segment.text) or _ASTM_RE.search(segment.text):
            return None
        combined = Segment(
            line=segment.line,
            start=self.segment.start,
            end=segment.end,
            raw=segment.raw,
            rec=segment.rec,
        )
        result = read_crosshatch(combined, self.options)
        if result is None or (isinstance(result, Draft) and result.kind != "crosshatch_limit"):
            return None
        self.item = result
        return []

    def build(self) -> list[Requirement | CalloutError]:
        """The limit (or the standard alone, flagged, when no class followed)."""
        return self.item.build()
