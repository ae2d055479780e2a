"""ISO 9022 environmental test codes (``ISO 9022-12-06-1``).

Test code ``ISO 9022-MM-SS-O``: MM conditioning method (two digits), SS degree of severity (two
digits, kept as the code string), O state of operation 0, 1 or 2 (structure [mem] and states
[pub], per shared/reference/test-methods.md, ISO 9022 section). The part follows from the method:
10-16 part 2, 40 part 4, 75-77 part 14 (same source); other methods leave the part open for an
engineer.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from durability.callouts.draft import Draft, ErrorItem, Item, error_at
from durability.callouts.model import CalloutError, Requirement
from durability.callouts.text import FLAGS, Segment, collapse
from durability.callouts.words import blank, not_understood, scan

__all__ = ["Iso9022Host", "leftover_words", "read_iso9022"]

ISO9022_RE = re.compile(r"\bISO\s*-?\s*9022(?![0-9])", FLAGS)
_GROUP_RE = re.compile(r"(?P<sep>\s*-\s*|\s*:\s*|\s+)(?P<num>[0-9]+)(?![0-9])", FLAGS)
_BARE_CODE_RE = re.compile(
    r"^\s*(?P<mm>[0-9]+)\s*-\s*(?P<ss>[0-9]+)\s*-\s*(?P<o>[0-9]+)\s*$", FLAGS
)

# Method -> part, per shared/reference/test-methods.md (ISO 9022 parts [pub], methods [mem]).
_PART_BY_METHOD: dict[int, int] = {
    **{method: 2 for method in range(10, 17)},
    40: 4,
    75: 14,
    76: 14,
    77: 14,
}
# Method names, from memory except part 14 [pub] (shared/reference/test-methods.md).
_METHOD_NAMES: dict[int, str] = {
    10: "cold",
    11: "dry heat",
    12: "damp heat",
    13: "condensed water",
    14: "slow temperature change",
    15: "rapid temperature change",
    16: "damp heat, cyclic",
    40: "salt mist",
    75: "dew",
    76: "hoarfrost, then thaw",
    77: "ice, then thaw",
}
# Words that may describe an ISO 9022 code without changing it ("(damp heat)", "state 1").
_ISO9022_WORDS = frozenset(
    """
    cold dry damp heat humid salt mist fog dew hoarfrost ice thaw condensed water slow rapid
    change cyclic code conditioning method severity degree state operation operating packed
    unpacked part
    """.split()
)


@dataclass
class _Code:
    part: str | None
    edition: str | None
    groups: list[tuple[str, int]]  # (digits, offset in segment text)
    end: int


def _read_groups(text: str, pos: int) -> _Code:
    """Read the number groups after ``ISO 9022``: part, ``:edition``, method, severity, state."""
    groups: list[tuple[str, int]] = []
    edition: str | None = None
    space_ok = True
    while True:
        found = _GROUP_RE.match(text, pos)
        if found is None:
            break
        sep = found["sep"].strip()
        if sep == ":":
            if edition is not None or len(found["num"]) != 4:
                break
            edition = found["num"]
            space_ok = True
        elif sep == "-" or space_ok:
            groups.append((found["num"], found.start("num")))
            space_ok = False
        else:
            break
        pos = found.end()
    return _Code(part=None, edition=edition, groups=groups, end=pos)


def _code_draft(
    segment: Segment,
    draft: Draft,
    written_part: str | None,
    edition: str | None,
    mm: tuple[str, int],
    ss: tuple[str, int],
    state: tuple[str, int],
) -> Draft | ErrorItem:
    """Check method, severity and state, fill the draft; an error item when malformed."""
    code_text = f"{mm[0]}-{ss[0]}-{state[0]}"
    if len(mm[0]) != 2:
        return error_at(
            segment,
            f"ISO 9022 test code {code_text!r}: the conditioning method {mm[0]!r} must be two "
            "digits (ISO 9022-MM-SS-O)",
            mm[1],
        )
    severity = ss[0]
    if len(severity) == 1:
        severity = "0" + severity
        draft.note(f"degree of severity written {ss[0]!r}: read as {severity!r}")
    elif len(severity) != 2:
        return error_at(
            segment,
            f"ISO 9022 test code {code_text!r}: the degree of severity {ss[0]!r} must be two "
            "digits (ISO 9022-MM-SS-O)",
            ss[1],
        )
    if state[0] not in ("0", "1", "2"):
        return error_at(
            segment,
            f"ISO 9022 test code {code_text!r}: the state of operation {state[0]!r} must be 0, 1 "
            "or 2",
            state[1],
        )
    method = int(mm[0])
    part = _PART_BY_METHOD.get(method)
    if part is None:
        draft.standard = f"ISO 9022-{int(written_part)}" if written_part else "ISO 9022"
        draft.note(
            f"conditioning method {mm[0]} is not in the parser's method table (10-16 part 2, "
            "40 part 4, 75-77 part 14): the part is left for an engineer",
            review=True,
        )
    else:
        draft.note(
            f"method {mm[0]} ({_METHOD_NAMES[method]}) is in ISO 9022-{part}; its severity "
            "table is entered by the lab"
        )
        if written_part is not None and int(written_part) != part:
            draft.standard = f"ISO 9022-{int(written_part)}"
            draft.note(
                f"written as part {int(written_part)}, but method {mm[0]} belongs to part {part}",
                review=True,
            )
        else:
            draft.standard = f"ISO 9022-{part}"
    draft.method = mm[0]
    draft.severity = severity
    draft.state = state[0]
    draft.edition = edition
    code = f"{draft.method}-{draft.severity}-{draft.state}"
    if written_part is not None and (part is None or int(written_part) != part):
        prefix = f"ISO 9022-{int(written_part)}"
    elif edition is not None:
        prefix = draft.standard
    else:
        prefix = "ISO 9022"
    if edition is not None:
        draft.normal = f"{prefix}:{edition} {code}"
    else:
        draft.normal = f"{prefix}-{code}"
    return draft


_NO_CODE = "no test code (method-severity-state)"


@dataclass
class Iso9022Host:
    """An ISO 9022 callout; bare codes after it on the line (``, 13-03-1``) are further codes."""

    first: Draft | ErrorItem
    written_part: str | None
    edition: str | None
    part_only: bool = False

    def attach(self, segment: Segment) -> list[Item] | None:
        """Take a following bare test code ``MM-SS-O``: the code of a part-only callout
        (``ISO 9022-2, 12-06-1``), else another ISO 9022 requirement."""
        found = _BARE_CODE_RE.match(segment.text)
        if found is None:
            return None
        groups = (
            (found["mm"], found.start("mm")),
            (found["ss"], found.start("ss")),
            (found["o"], found.start("o")),
        )
        if self.part_only and isinstance(self.first, Draft):
            self.part_only = False
            before = self.first
            draft = Draft(
                kind="environmental",
                line=before.line,
                start=before.start,
                end=segment.end,
                raw=before.raw,
            )
            result = _code_draft(segment, draft, self.written_part, self.edition, *groups)
            if isinstance(result, Draft):
                for note in before.assumptions:
                    if not note.startswith(_NO_CODE):
                        result.note(note, review=True)
            self.first = result
            return []
        draft = Draft.at("environmental", segment)
        result = _code_draft(segment, draft, self.written_part, self.edition, *groups)
        if isinstance(result, Draft):
            result.note("ISO 9022 taken from earlier on the same line")
        return [result]

    def build(self) -> list[Requirement | CalloutError]:
        """The first code's requirement (or error)."""
        return self.first.build()


def read_iso9022(segment: Segment) -> Iso9022Host | None:
    """Read ``ISO 9022-12-06-1`` (also with part or edition: ``ISO 9022-2:2012 12-06-1``)."""
    text = segment.text
    found = ISO9022_RE.search(text)
    if found is None:
        return None
    code = _read_groups(text, found.end())
    draft = Draft.at("environmental", segment)
    groups = code.groups
    written_part: str | None = None
    result: Draft | ErrorItem
    if len(groups) in (0, 1):
        if groups:
            written_part = groups[0][0]
            if len(written_part) > 2 or int(written_part) == 0:
                return Iso9022Host(
                    error_at(
                        segment,
                        f"ISO 9022 part {written_part!r} is not a part number; expected "
                        "ISO 9022-MM-SS-O (method, degree of severity, state of operation)",
                        groups[0][1],
                    ),
                    None,
                    None,
                )
            draft.standard = f"ISO 9022-{int(written_part)}"
        else:
            draft.standard = "ISO 9022"
        draft.edition = code.edition
        draft.normal = draft.standard + (f":{code.edition}" if code.edition else "")
        draft.note(
            f"{_NO_CODE}: the conditioning is left for an engineer",
            review=True,
        )
        result = draft
    elif len(groups) in (3, 4):
        if len(groups) == 4:
            written_part = groups[0][0]
            groups = groups[1:]
        result = _code_draft(
            segment, draft, written_part, code.edition, groups[0], groups[1], groups[2]
        )
    else:
        written = collapse(text[found.start() : code.end])
        return Iso9022Host(
            error_at(
                segment,
                f"ISO 9022 test code {written!r} has {len(groups)} number groups; expected "
                "ISO 9022-MM-SS-O (method, degree of severity, state of operation), e.g. "
                "ISO 9022-12-06-1",
                found.start(),
            ),
            None,
            None,
        )
    if isinstance(result, Draft):
        leftover_words(result, blank(text, [(found.start(), code.end)]), _ISO9022_WORDS)
    return Iso9022Host(result, written_part, code.edition, part_only=len(groups) < 2)


def leftover_words(draft: Draft, text: str, extra_ok: frozenset[str]) -> None:
    """Flag ``draft`` for review when ``text`` holds words other than fillers or ``extra_ok``."""
    rest = scan(text, extra_ok)
    if rest.unknown:
        draft.note(
            not_understood(rest.unknown_text()),
            review=True,
        )
