"""ISO 9211-4 test methods (``ISO 9211-4 method 01 severity 02``, ``ISO 9211-4-01-02``).

Method 01 abrasion, 02 adhesion, 03 crosshatch (no severity clause), 04 solubility; 01, 02 and 04
have degrees of severity (2012 edition [pub], per shared/reference/test-methods.md, ISO 9211-4
section). Test names after the designation on the same line (``ISO 9211-4, abrasion, severity
2``) belong to it; a second method on the line starts a further requirement.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from durability.callouts.draft import Draft, Item, error_at
from durability.callouts.model import CalloutError, Requirement
from durability.callouts.text import FLAGS, Segment
from durability.callouts.words import TestMention, blank, not_understood, scan

__all__ = ["Iso9211Host", "read_iso9211_4"]

ISO9211_4_RE = re.compile(
    r"\bISO\s*-?\s*9211\s*-\s*4(?![0-9])"
    r"(?:\s*:\s*(?P<ed>[0-9]{4})|\s*\(\s*(?P<ed2>(?:19|20)[0-9]{2})\s*\))?",
    FLAGS,
)
_CODE_AFTER_RE = re.compile(
    r"(?:\s*-\s*|\s+)(?P<m>[0-9]{1,3})(?:\s*-\s*(?P<s>[0-9]{1,3}))?(?![0-9])", FLAGS
)
_CODE_AT_RE = re.compile(r"\s*(?P<m>[0-9]{1,3})(?:\s*-\s*(?P<s>[0-9]{1,3}))?(?![0-9])", FLAGS)
_METHOD_KW_RE = re.compile(
    r"\b(?:method|meth\.?|test)\s*(?:no\.?|number|#)?\s*(?P<m>[0-9]+)(?![0-9])", FLAGS
)
_SEVERITY_KW_RE = re.compile(
    r"\b(?:(?:degree\s*of\s*)?severity|sev\.?|degree|grade|level)\s*(?:no\.?|#|:)?\s*"
    r"(?P<s>[0-9]+)(?![0-9])",
    FLAGS,
)
_PAIR_ANYWHERE_RE = re.compile(
    r"(?<![0-9.\-])(?P<m>[0-9]{1,2})\s*-\s*(?P<s>[0-9]{1,2})(?![0-9.\-])", FLAGS
)
_BARE_PAIR_RE = re.compile(r"^\s*(?P<m>[0-9]{1,3})\s*-\s*(?P<s>[0-9]{1,3})\s*$", FLAGS)

# ISO 9211-4:2012 method numbers [pub, shared/reference/test-methods.md].
_METHOD_NAME = {"01": "abrasion", "02": "adhesion", "03": "crosshatch", "04": "solubility"}
_METHOD_BY_TEST = {
    "abrasion": "01",
    "moderate_abrasion": "01",
    "severe_abrasion": "01",
    "adhesion": "02",
    "crosshatch": "03",
    "solubility": "04",
    "solvent_solubility": "04",
    "salt_solubility": "04",
    "water_solubility": "04",
}


@dataclass
class _Fields:
    methods: list[tuple[str, int, str | None]] = field(default_factory=list)  # value, pos, name
    severities: list[tuple[str, int]] = field(default_factory=list)
    other_tests: list[TestMention] = field(default_factory=list)
    unknown: str = ""
    error: tuple[str, int] | None = None

    @property
    def empty(self) -> bool:
        return not (self.methods or self.severities or self.other_tests)


def _two_digits(value: str, what: str, pos: int, fields: _Fields) -> str | None:
    if len(value) > 2:
        fields.error = (f"ISO 9211-4 {what} {value!r} has more than two digits", pos)
        return None
    return value.zfill(2)


def _read_9211_fields(text: str, code_from: int | None) -> _Fields:
    """Method numbers, severities and test names in ``text`` (a code ``01-02`` right at
    ``code_from``)."""
    fields = _Fields()
    spans: list[tuple[int, int]] = []
    if code_from is not None:
        code_re = _CODE_AFTER_RE if code_from > 0 else _CODE_AT_RE
        code = code_re.match(text, code_from)
        if code is not None:
            spans.append(code.span())
            method = _two_digits(code["m"], "method", code.start("m"), fields)
            if method is not None:
                fields.methods.append((method, code.start("m"), None))
            if code["s"] is not None:
                severity = _two_digits(code["s"], "degree of severity", code.start("s"), fields)
                if severity is not None:
                    fields.severities.append((severity, code.start("s")))
    for found in _METHOD_KW_RE.finditer(text):
        spans.append(found.span())
        method = _two_digits(found["m"], "method", found.start("m"), fields)
        if method is not None:
            fields.methods.append((method, found.start("m"), None))
    for found in _SEVERITY_KW_RE.finditer(text):
        spans.append(found.span())
        severity = _two_digits(found["s"], "degree of severity", found.start("s"), fields)
        if severity is not None:
            fields.severities.append((severity, found.start("s")))
    if code_from is not None and not fields.methods:
        # "ISO 9211-4 abrasion 01-02": the code need not follow the designation directly.
        pair = _PAIR_ANYWHERE_RE.search(blank(text, spans))
        if pair is not None:
            spans.append(pair.span())
            fields.methods.append((pair["m"].zfill(2), pair.start("m"), None))
            fields.severities.append((pair["s"].zfill(2), pair.start("s")))
    rest = scan(blank(text, spans))
    for mention in rest.tests:
        method = _METHOD_BY_TEST.get(mention.key)
        if method is None:
            fields.other_tests.append(mention)
        else:
            fields.methods.append((method, mention.start, mention.written))
    fields.unknown = rest.unknown_text()
    return fields


@dataclass
class _Entry:
    draft: Draft
    edition: str | None
    method: str | None = None
    names: list[str] = field(default_factory=list)
    severity: str | None = None
    severity_conflict: bool = False

    def take_method(self, value: str, name: str | None) -> None:
        if self.method is not None and self.method != value:
            self.draft.note(
                f"method {value} ({name or _METHOD_NAME.get(value, 'unknown')}) conflicts with "
                f"method {self.method} written for the same callout",
                review=True,
            )
            return
        self.method = value
        if name is not None and name.lower() not in self.names:
            self.names.append(name.lower())

    def finish(self) -> list[Requirement | CalloutError]:
        draft = self.draft
        draft.standard = "ISO 9211-4"
        draft.edition = self.edition
        draft.method = self.method
        draft.severity = self.severity
        designation = "ISO 9211-4" + (f":{self.edition}" if self.edition else "")
        normal = designation
        if self.method is None:
            draft.note(
                "no method given (01 abrasion, 02 adhesion, 03 crosshatch, 04 solubility)",
                review=True,
            )
            if self.severity is not None:
                normal += f" severity {self.severity}"
        else:
            normal += f" method {self.method}"
            if self.severity is not None:
                normal += f" severity {self.severity}"
            if self.names:
                normal += f" ({', '.join(self.names)})"
            known = _METHOD_NAME.get(self.method)
            if known is None:
                draft.note(
                    f"method {self.method} is not one of the 2012 edition's methods 01-04",
                    review=True,
                )
            elif self.names:
                draft.note(
                    f"method read from the test name: {self.method} is {known} in ISO "
                    "9211-4:2012 [public summary]"
                )
            if self.edition is not None and self.edition != "2012":
                draft.note(
                    f"method numbers checked against the 2012 edition; edition {self.edition} "
                    "may number them differently",
                    review=True,
                )
            if self.method == "03" and self.severity is not None:
                draft.note(
                    "method 03 (crosshatch) has no severity clause: the severity is kept as "
                    "written",
                    review=True,
                )
            elif self.method in ("01", "02", "04") and self.severity is None:
                draft.note("no degree of severity given: not filled in", review=True)
            if (
                self.method == "01"
                and any("severe" in n.lower() or "eraser" in n.lower() for n in self.names)
                and self.severity is None
            ):
                draft.note(
                    "'severe' does not fix the severity code: ISO 9211-4 abrasion severities "
                    "are recalled only from memory"
                )
        if self.severity_conflict:
            draft.note("more than one degree of severity written: kept the first", review=True)
        draft.normal = normal
        return draft.build()


@dataclass
class Iso9211Host:
    """An ISO 9211-4 callout, taking in ``abrasion``, ``severity 2`` and codes after it."""

    entries: list[_Entry]

    def apply(self, fields: _Fields, segment: Segment, attaching: bool) -> list[Item]:
        """Put the fields read from ``segment`` into entries; return the entries started."""
        new: list[Item] = []
        current = self.entries[-1]
        distinct = list(dict.fromkeys(value for value, _, _ in fields.methods))
        touched: list[_Entry] = []
        for value in distinct:
            names = [name for v, _, name in fields.methods if v == value and name]
            if not touched and (current.method is None or current.method == value):
                entry = current
                if attaching:
                    entry.draft.end = segment.end
            else:
                entry = _Entry(draft=Draft.at("test_method", segment), edition=current.edition)
                entry.draft.note("ISO 9211-4 taken from earlier on the same line")
                self.entries.append(entry)
                new.append(_EntryItem(entry))
            entry.take_method(value, names[0] if names else None)
            for name in names[1:]:
                if name.lower() not in entry.names:
                    entry.names.append(name.lower())
            touched.append(entry)
        target = touched[-1] if touched else current
        if attaching and not touched and fields.severities:
            target.draft.end = segment.end
        for value, _pos in fields.severities:
            if len(touched) > 1:
                for entry in touched:
                    entry.draft.note(
                        f"severity {value} written for several methods: applied to none",
                        review=True,
                    )
            elif target.severity is None:
                target.severity = value
            elif target.severity != value:
                target.severity_conflict = True
        for mention in fields.other_tests:
            target.draft.note(
                f"{mention.written!r} is not an ISO 9211-4 method (see ISO 9022 or the lab's "
                "methods): kept for engineering review",
                review=True,
            )
        return new

    def attach(self, segment: Segment) -> list[Item] | None:
        """Take a following ``abrasion``, ``severity 2``, ``method 02`` or ``01-02``."""
        text = segment.text
        pair = _BARE_PAIR_RE.match(text)
        fields = _read_9211_fields(text, 0 if pair is not None else None)
        if fields.unknown or fields.empty or fields.other_tests:
            return None
        if fields.error is not None:
            return [error_at(segment, fields.error[0], fields.error[1])]
        if not fields.methods and self.entries[-1].severity is not None:
            return None
        return self.apply(fields, segment, attaching=True)

    def build(self) -> list[Requirement | CalloutError]:
        """The first entry's requirement; later entries are built as their own items."""
        return self.entries[0].finish()


@dataclass
class _EntryItem:
    entry: _Entry

    def build(self) -> list[Requirement | CalloutError]:
        return self.entry.finish()


def read_iso9211_4(segment: Segment) -> tuple[Iso9211Host | None, list[Item]]:
    """Read ``ISO 9211-4 method 01 severity 02``, ``ISO 9211-4-01-02``, ``ISO 9211-4:2012``.

    Returns (host or None, the items to add, in order).
    """
    text = segment.text
    found = ISO9211_4_RE.search(text)
    if found is None:
        return None, []
    edition = found["ed"] or found["ed2"]
    body = blank(text, [found.span()])
    fields = _read_9211_fields(body, found.end())
    if fields.error is not None:
        return None, [error_at(segment, fields.error[0], fields.error[1])]
    entry = _Entry(draft=Draft.at("test_method", segment), edition=edition)
    host = Iso9211Host(entries=[entry])
    new = host.apply(fields, segment, attaching=False)
    if fields.unknown:
        entry.draft.note(not_understood(fields.unknown), review=True)
    return host, [host, *new]
