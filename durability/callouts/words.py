"""Test names as people write them, and a scanner that finds them among other words."""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from durability.callouts.text import FLAGS, collapse

__all__ = [
    "AMBIGUOUS",
    "HUMAN",
    "Scan",
    "TestMention",
    "blank",
    "not_understood",
    "scan",
]

_END = r"(?![a-z0-9])"

# (key, pattern). "abrasion" and "solubility" alone are not catalogue keys: they do not say which
# abrasion or which solubility test, and the caller decides what to make of them.
_ALIASES: tuple[tuple[str, str], ...] = (
    ("adhesion", r"(?:(?:tape|snap)\s*-?\s*){0,2}adhesion"),
    ("adhesion", r"(?:cellophane\s*)?tape\s*(?:snap|pull)?\s*(?:test)?"),
    ("adhesion", r"snap\s*tape"),
    ("humidity", r"humidity"),
    ("moderate_abrasion", r"(?:moderate|mod\.?)\s*-?\s*abrasion"),
    ("moderate_abrasion", r"cheese\s*-?\s*cloth(?:\s*abrasion)?"),
    ("severe_abrasion", r"severe\s*-?\s*abrasion"),
    ("severe_abrasion", r"eraser(?:\s*abrasion)?"),
    ("temperature", r"temperature"),
    ("temperature", r"temp\.?"),
    ("solvent_solubility", r"solubility\s*(?:and|&)\s*cleanability"),
    ("solvent_solubility", r"solvent\s*-?\s*(?:solubility|resistance)"),
    ("solvent_solubility", r"solvents?"),
    ("solvent_solubility", r"cleanability"),
    ("salt_solubility", r"salt\s*-?\s*(?:water\s*)?(?:solubility|immersion)"),
    ("water_solubility", r"(?:distilled\s*)?water\s*-?\s*(?:solubility|immersion)"),
    ("salt_fog", r"salt\s*-?\s*(?:fog|spray|mist)"),
    ("crosshatch", r"cross\s*-?\s*(?:hatch(?:ed)?|cut)(?:\s*adhesion)?"),
    ("abrasion", r"abrasion"),
    ("solubility", r"solubility"),
)
_ALIAS_RES: tuple[tuple[str, re.Pattern[str]], ...] = tuple(
    (key, re.compile(pattern + _END, FLAGS)) for key, pattern in _ALIASES
)

AMBIGUOUS = frozenset({"abrasion", "solubility"})

# How a test key is written in a normal form; the scanner reads each of these back.
HUMAN: dict[str, str] = {
    "adhesion": "adhesion",
    "humidity": "humidity",
    "moderate_abrasion": "moderate abrasion",
    "severe_abrasion": "severe abrasion",
    "temperature": "temperature",
    "solvent_solubility": "solvent solubility",
    "salt_solubility": "salt solubility",
    "water_solubility": "water solubility",
    "salt_fog": "salt fog",
    "crosshatch": "crosshatch",
}

# Joining words and punctuation between test names.
_CONNECTOR = re.compile(
    r"(?:[\s+&/(),.:\[\]]+|(?:and|with|plus|incl|including|also|or)(?![a-z0-9])\.?)", FLAGS
)
_WORD = re.compile(r"[^\s+&/(),:;\[\]]+")

# Words that carry no requirement around a callout ("coating per", "shall pass", "tests").
_FILLER = frozenset(
    """
    coating coatings coated coat per to iaw i.a.w in accordance according accordant shall meet
    meets pass passes passed durability environmental requirement requirements req reqs of the
    a an ar anti-reflection antireflection anti-reflective reflection-reducing mirror mirrors
    test tests tested testing conform conforms conformance comply complies compliance spec specs
    specification specifications surface surfaces all both basic optional when specified note
    notes see be must is are for on using use din en bs film films thin-film interference
    multilayer multi-layer single-layer layer hard dielectric optical lens lenses required
    requires require following durable resistance environment environments performed including
    applicable as
    """.split()
)


def is_filler(word: str) -> bool:
    """True for a word that carries no requirement (``per``, ``coating``, ``tests``)."""
    return word.lower().rstrip(".") in _FILLER


@dataclass(frozen=True)
class TestMention:
    """A test name found in text: its key (or ``abrasion``/``solubility``), as written, where."""

    key: str
    written: str
    start: int
    end: int


@dataclass
class Scan:
    """What a scan found: test names, and words it could not place (fillers left out)."""

    tests: list[TestMention] = field(default_factory=list)
    unknown: list[tuple[str, int]] = field(default_factory=list)

    def unknown_text(self) -> str:
        """The words not understood, joined for a message."""
        return " ".join(word for word, _ in self.unknown)


def not_understood(words: str) -> str:
    """The assumption that flags words the parser could not place (long runs shortened)."""
    if len(words) > 80:
        words = words[:77] + "..."
    return f"words not understood, kept for engineering review: {words!r}"


def blank(text: str, spans: list[tuple[int, int]]) -> str:
    """Return ``text`` with each (start, end) span replaced by spaces (length kept)."""
    chars = list(text)
    for start, end in spans:
        for index in range(max(start, 0), min(end, len(chars))):
            chars[index] = " "
    return "".join(chars)


def scan(text: str, extra_ok: frozenset[str] = frozenset()) -> Scan:
    """Find test names in ``text``; other words (not fillers, not in ``extra_ok``) are unknown."""
    result = Scan()
    pos = 0
    end = len(text)
    while pos < end:
        joint = _CONNECTOR.match(text, pos)
        if joint is not None and joint.end() > pos:
            pos = joint.end()
            continue
        best: tuple[str, re.Match[str]] | None = None
        for key, pattern in _ALIAS_RES:
            found = pattern.match(text, pos)
            if found is not None and (best is None or found.end() > best[1].end()):
                best = (key, found)
        if best is not None:
            key, found = best
            result.tests.append(
                TestMention(key=key, written=collapse(found.group()), start=pos, end=found.end())
            )
            pos = found.end()
            continue
        word = _WORD.match(text, pos)
        if word is None:  # a lone ';' or similar: nothing to read
            pos += 1
            continue
        value = word.group()
        if not is_filler(value) and value.lower().rstrip(".") not in extra_ok:
            result.unknown.append((value, pos))
        pos = word.end()
    return result
