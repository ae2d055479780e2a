"""MIL coating specs: MIL-C-48497A, MIL-C-675C, MIL-M-13508C, MIL-PRF-13830B App. C and D.

A spec alone means its basic tests; test names written after it on the same line (``MIL-C-48497A,
severe abrasion, salt fog``) add its when-specified tests. The designation is stored exactly
(``MIL-C-48497A``) however it was typed; a missing revision letter is never filled in.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from durability.callouts.draft import Draft, Item
from durability.callouts.model import TEST_KEYS, CalloutError, ParseOptions, Requirement
from durability.callouts.text import FLAGS, Segment
from durability.callouts.words import HUMAN, TestMention, blank, not_understood, scan

__all__ = ["MIL_RE", "MilHost", "MilSpec", "SPECS", "mil_designation", "read_mil"]

MIL_RE = re.compile(
    r"\bMIL\s*-?\s*(?P<series>PRF|DTL|STD|HDBK|[A-Z])\s*-?\s*(?P<number>[0-9]{3,6})"
    r"(?:\s*-?\s*(?P<rev>[A-Z])(?![a-z0-9]))?",
    FLAGS,
)
APPENDIX_RE = re.compile(r"\b(?:appendix|app)\s*\.?\s*(?P<letter>[A-Z])(?![a-z0-9])", FLAGS)
_AMENDMENT_RE = re.compile(
    r"(?:\(\s*(?P<paren>[0-9]{1,2})\s*\)"
    r"|\b(?:w\s*/\s*)?(?:amendment|amdt|amd|am)\s*\.?\s*(?:no\.?\s*)?(?P<word>[0-9]{1,2})\b)",
    FLAGS,
)
_NOTICE_RE = re.compile(r"\bnotice\s*\.?\s*(?:no\.?\s*)?(?P<n>[0-9]{1,2})\b", FLAGS)


@dataclass(frozen=True)
class MilSpec:
    """A MIL coating spec the parser knows, with its basic and when-specified tests."""

    base: str
    revision: str
    appendix: str | None
    basic: tuple[str, ...]
    when_specified: tuple[str, ...]
    source: str

    @property
    def designation(self) -> str:
        """``MIL-C-48497A`` or ``MIL-PRF-13830B App. C``."""
        return mil_designation(self.base, self.revision, self.appendix)


def mil_designation(base: str, revision: str | None, appendix: str | None) -> str:
    """Join a base number, revision letter and appendix into the stored designation."""
    text = base + (revision or "")
    return f"{text} App. {appendix}" if appendix else text


_CORE = ("adhesion", "humidity", "moderate_abrasion")

# Keyed by (base number without revision, appendix).
SPECS: dict[tuple[str, str | None], MilSpec] = {
    # Basic: adhesion, humidity, moderate abrasion [pub]; temperature and solvent solubility are
    # basic in some summaries and when-specified in others [pub] (see ParseOptions); severe
    # abrasion, salt and water solubility, salt fog when specified [pub]/[mem] - all per
    # shared/reference/test-methods.md, MIL-C-48497A table.
    ("MIL-C-48497", None): MilSpec(
        base="MIL-C-48497",
        revision="A",
        appendix=None,
        basic=_CORE,
        when_specified=("severe_abrasion", "salt_solubility", "water_solubility", "salt_fog"),
        source="MIL-C-48497A test groups per public summaries (shared reference [pub])",
    ),
    # Adhesion [pub], humidity [pub]/[mem], moderate and severe abrasion [mem], salt test
    # [mem?] (probably salt spray); the salt-spray test is recorded under the catalogue key
    # salt_fog. Per shared/reference/test-methods.md, MIL-C-675C / App. C section.
    ("MIL-C-675", None): MilSpec(
        base="MIL-C-675",
        revision="C",
        appendix=None,
        basic=_CORE,
        when_specified=("severe_abrasion", "salt_fog"),
        source=(
            "MIL-C-675C tests: adhesion [pub], humidity, abrasion [from memory], salt spray "
            "[from memory, placeholder] (shared reference)"
        ),
    ),
    ("MIL-PRF-13830", "C"): MilSpec(
        base="MIL-PRF-13830",
        revision="B",
        appendix="C",
        basic=_CORE,
        when_specified=("severe_abrasion", "salt_fog"),
        source=(
            "MIL-PRF-13830B App. C took over MIL-C-675C [pub]; tests: adhesion [pub], humidity, "
            "abrasion [from memory], salt spray [from memory, placeholder] (shared reference)"
        ),
    ),
    # Adhesion [mem], abrasion [mem?], humidity [mem?]: shared/reference/test-methods.md,
    # MIL-M-13508C / App. D section.
    ("MIL-M-13508", None): MilSpec(
        base="MIL-M-13508",
        revision="C",
        appendix=None,
        basic=("adhesion", "moderate_abrasion", "humidity"),
        when_specified=(),
        source=(
            "MIL-M-13508C tests (adhesion, moderate abrasion, humidity) are from memory "
            "(shared reference [mem]/[mem?]): confirm against the lab's copy"
        ),
    ),
    ("MIL-PRF-13830", "D"): MilSpec(
        base="MIL-PRF-13830",
        revision="B",
        appendix="D",
        basic=("adhesion", "moderate_abrasion", "humidity"),
        when_specified=(),
        source=(
            "MIL-PRF-13830B App. D tests (adhesion, moderate abrasion, humidity) are from "
            "memory (shared reference [mem]/[mem?]): confirm against the lab's copy"
        ),
    ),
}
_KNOWN_BASES = frozenset(base for base, _ in SPECS)
_TEMPERATURE_SOLVENT = ("temperature", "solvent_solubility")


@dataclass
class MilHost:
    """A MIL coating-spec callout, taking in the test names that follow it on its line."""

    draft: Draft
    base: str
    revision: str | None
    options: ParseOptions
    appendix: str | None = None
    amendments: list[str] = field(default_factory=list)
    named: list[TestMention] = field(default_factory=list)
    unknown_words: list[str] = field(default_factory=list)
    # Tests written before the designation ("humidity per MIL-C-48497A"): only those are meant.
    only: list[TestMention] = field(default_factory=list)

    def attach(self, segment: Segment) -> list[Item] | None:
        """Take a following ``severe abrasion``, ``salt fog``, ``App. C`` or ``Amendment 3``."""
        text = segment.text
        spans: list[tuple[int, int]] = []
        appendix = None
        if self.base == "MIL-PRF-13830" and self.appendix is None:
            found = APPENDIX_RE.search(text)
            if found is not None:
                appendix = found["letter"].upper()
                spans.append(found.span())
        amendments = _amendments(text, spans)
        found_tests = scan(blank(text, spans))
        # Only test names, an appendix, an amendment or words that carry nothing ("basic
        # tests") belong to the spec; anything else is a callout of its own.
        if found_tests.unknown:
            return None
        if appendix is not None:
            self.appendix = appendix
        self.amendments.extend(amendments)
        self.named.extend(found_tests.tests)
        self.draft.end = segment.end
        return []

    def build(self) -> list[Requirement | CalloutError]:
        """The coating-spec requirement with its tests and assumptions."""
        draft = self.draft
        draft.standard = mil_designation(self.base, self.revision, self.appendix)
        if self.amendments:
            draft.edition = ", ".join(dict.fromkeys(self.amendments))
        chosen = self._resolve_tests()
        order = {key: index for index, key in enumerate(TEST_KEYS)}
        listed = [HUMAN[key] for key in sorted(set(chosen), key=order.__getitem__)]
        designation = draft.standard + (f" {draft.edition}" if draft.edition else "")
        if not self.only:
            draft.normal = ", ".join([designation, *listed])
        elif listed:
            draft.normal = f"{' + '.join(listed)} per {designation}"
        else:
            draft.normal = " ".join(self.draft.raw[draft.start : draft.end].split())
        if self.unknown_words:
            words = " ".join(self.unknown_words)
            draft.note(
                not_understood(words),
                review=True,
            )
        return draft.build()

    def _resolve_tests(self) -> list[str]:
        """Fill the draft's tests; return the named tests that go into the normal form."""
        draft = self.draft
        spec = SPECS.get((self.base, self.appendix))
        if self.base == "MIL-PRF-13830" and self.appendix is None:
            draft.note(
                "MIL-PRF-13830B without an appendix: App. C (single-layer MgF2 anti-reflection) "
                "or App. D (aluminized mirrors)? no tests listed until an engineer decides",
                review=True,
            )
            self._named_without_spec()
            return []
        if spec is None:
            draft.note(
                f"appendix {self.appendix} of {self.base} is not a coating-durability appendix "
                "the parser knows (C and D): no tests listed",
                review=True,
            )
            self._named_without_spec()
            return []
        draft.note(spec.source)
        if self.revision is None:
            draft.note(
                f"revision letter missing: {self.base} stored without one; the tests listed are "
                f"those of {spec.designation}, the revision the parser knows - confirm the "
                "revision with the customer",
                review=True,
            )
        elif self.revision != spec.revision:
            draft.note(
                f"revision {self.revision}: the parser knows revision {spec.revision} only; the "
                f"tests listed are those of {spec.designation}",
                review=True,
            )
        basic = list(spec.basic)
        optional = list(spec.when_specified)
        if self.base == "MIL-C-48497":
            if self.options.mil_48497_temperature_solvent_basic:
                basic.extend(_TEMPERATURE_SOLVENT)
                choice = "basic (always run)"
            else:
                optional.extend(_TEMPERATURE_SOLVENT)
                choice = "when specified (run only when named)"
            draft.note(
                "temperature and solvent_solubility taken as "
                f"{choice}: sources disagree (option mil_48497_temperature_solvent_basic="
                f"{self.options.mil_48497_temperature_solvent_basic})"
            )
        if self.only:
            draft.note(
                "tests named before the spec: only those are required, not its whole basic set"
            )
            chosen = self._place([*self.only, *self.named], spec, basic, optional, only=True)
            draft.tests.extend(chosen)
            return chosen
        draft.tests.extend(basic)
        chosen = self._place(self.named, spec, basic, optional, only=False)
        draft.tests.extend(chosen)
        return chosen

    def _place(
        self,
        mentions: list[TestMention],
        spec: MilSpec,
        basic: list[str],
        optional: list[str],
        only: bool,
    ) -> list[str]:
        """The named tests that are the spec's (all of them when ``only``, else the
        when-specified ones); the rest become notes."""
        draft = self.draft
        chosen: list[str] = []
        for mention in mentions:
            key = mention.key
            if key == "abrasion":
                if only:
                    chosen.append("moderate_abrasion")
                draft.note(
                    f"{mention.written!r} does not say moderate or severe: moderate_abrasion "
                    "kept; confirm whether severe_abrasion is wanted",
                    review=True,
                )
            elif key == "solubility":
                draft.note(
                    f"{mention.written!r} does not say solvent, salt or water solubility: "
                    "not added",
                    review=True,
                )
            elif key in basic:
                if only:
                    chosen.append(key)
                else:
                    draft.note(
                        f"{HUMAN[key]} is a basic test of {spec.designation}: included anyway"
                    )
            elif key in optional:
                chosen.append(key)
                if key == "salt_fog" and spec.base != "MIL-C-48497":
                    draft.note("salt spray recorded under the test key salt_fog")
            else:
                draft.note(
                    f"{mention.written!r} is not a test of {spec.designation}: not added, kept "
                    "for engineering review",
                    review=True,
                )
        return chosen

    def _named_without_spec(self) -> None:
        if self.named or self.only:
            written = ", ".join(m.written for m in [*self.only, *self.named])
            self.draft.note(f"named tests kept for engineering review: {written}", review=True)


def _amendments(text: str, spans: list[tuple[int, int]]) -> list[str]:
    """Amendment and notice numbers in ``text``; their spans are appended to ``spans``."""
    found: list[str] = []
    for match in _AMENDMENT_RE.finditer(text):
        found.append(f"Amendment {int(match['paren'] or match['word'])}")
        spans.append(match.span())
    for match in _NOTICE_RE.finditer(text):
        found.append(f"Notice {int(match['n'])}")
        spans.append(match.span())
    return found


def read_mil(segment: Segment, options: ParseOptions) -> MilHost | Draft | None:
    """Read a MIL coating spec from ``segment``.

    Returns a :class:`MilHost` for a coating spec the parser knows (with or without its
    revision letter), a review :class:`Draft` for another MIL designation, None when the
    segment names no MIL document.
    """
    text = segment.text
    found = MIL_RE.search(text)
    if found is None:
        return None
    base = f"MIL-{found['series'].upper()}-{found['number']}"
    revision = found["rev"].upper() if found["rev"] else None
    if base not in _KNOWN_BASES:
        draft = Draft.at("unknown", segment)
        draft.standard = base + (revision or "")
        draft.normal = " ".join(segment.original.split())
        draft.note(
            f"{draft.standard} is not a coating spec the parser knows: kept as written for "
            "engineering review",
            review=True,
        )
        return draft
    spans = [found.span()]
    appendix = None
    if base == "MIL-PRF-13830":
        app = APPENDIX_RE.search(text)
        if app is not None:
            appendix = app["letter"].upper()
            spans.append(app.span())
    amendments = _amendments(text, spans)
    rest = scan(blank(text, spans))
    host = MilHost(
        draft=Draft.at("coating_spec", segment),
        base=base,
        revision=revision,
        options=options,
        appendix=appendix,
        amendments=amendments,
        named=[m for m in rest.tests if m.start >= found.start()],
        unknown_words=[word for word, _ in rest.unknown],
        only=[m for m in rest.tests if m.start < found.start()],
    )
    return host
