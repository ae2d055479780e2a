"""The callout parser: requirement text in, requirements and callout errors out."""

from __future__ import annotations

import re

from durability.callouts.crosshatch import CrosshatchHost, read_crosshatch
from durability.callouts.draft import Draft, Host, Item, error_at
from durability.callouts.iso9022 import read_iso9022
from durability.callouts.iso9211 import read_iso9211_4
from durability.callouts.mil import MilHost, read_mil
from durability.callouts.model import CalloutError, ParseOptions, ParseResult, Requirement
from durability.callouts.surface import read_iso10110_7, read_scratch_dig
from durability.callouts.text import FLAGS, Segment, collapse, split_lines, split_segments
from durability.callouts.words import HUMAN, scan
from durability.errors import InputError

__all__ = ["parse_callouts"]

# A designation of some other standard, for requirements the parser does not know.
_OTHER_STANDARD_RE = re.compile(
    r"\b(?P<org>ISO|IEC|EN|DIN|ASTM|ANSI|BS|JIS|SAE|IEEE|ECSS|OEOSC|TELCORDIA)\b[\s-]*"
    r"(?P<rest>(?:[A-Z]{1,4}[\s-]*)?[0-9][0-9A-Z]*(?:\s*[-.]\s*[0-9][0-9A-Z]*)*"
    r"(?:\s*:\s*[0-9]{4})?)",
    FLAGS,
)
_BARE_APPENDIX_RE = re.compile(r"^\s*(?:appendix|app)\s*\.?\s*(?P<letter>[A-Z])\s*\.?\s*$", FLAGS)


def _other_standard(text: str) -> str | None:
    found = _OTHER_STANDARD_RE.search(text)
    if found is None:
        return None
    rest = re.sub(r"\s*([-.:])\s*", r"\1", collapse(found["rest"]))
    return f"{found['org'].upper()} {rest.upper()}"


def _bare_tests(segment: Segment) -> Draft | None:
    """``adhesion + humidity`` with no standard: kept, flagged for engineering review."""
    found = scan(segment.text)
    if not found.tests or found.unknown:
        return None
    draft = Draft.at("test_method", segment)
    names: list[str] = []
    for mention in found.tests:
        key = mention.key
        if key == "abrasion":
            key = "moderate_abrasion"
            draft.note(f"{mention.written!r} read as moderate_abrasion (moderate or severe?)")
        elif key == "solubility":
            draft.note(
                f"{mention.written!r} does not say solvent, salt or water solubility: not added"
            )
            continue
        draft.tests.append(key)
        if HUMAN[key] not in names:
            names.append(HUMAN[key])
    draft.normal = " + ".join(names) if names else collapse(segment.original)
    draft.note(
        "test names without a standard: which standard's methods apply is left for an engineer",
        review=True,
    )
    return draft


def _unknown(segment: Segment) -> Draft:
    draft = Draft.at("unknown", segment)
    draft.standard = _other_standard(segment.text)
    draft.normal = collapse(segment.original)
    if draft.standard is not None:
        draft.note(
            f"{draft.standard} is not a standard the parser reads: kept as written for "
            "engineering review",
            review=True,
        )
    else:
        draft.note(
            "not a callout the parser knows: kept as free text for engineering review",
            review=True,
        )
    return draft


def _bare_appendix(segment: Segment) -> Draft | None:
    found = _BARE_APPENDIX_RE.match(segment.text)
    if found is None:
        return None
    draft = Draft.at("unknown", segment)
    draft.normal = collapse(segment.original)
    draft.note(
        f"appendix {found['letter'].upper()} without a standard on this line (MIL-PRF-13830B "
        f"App. {found['letter'].upper()}?): not filled in, kept for engineering review",
        review=True,
    )
    return draft


def _classify(segment: Segment, options: ParseOptions) -> tuple[list[Item], Host | None]:
    """Read one callout; returns its items and the host later callouts may attach to."""
    if not segment.text.strip():
        draft = Draft.at("unknown", segment)
        draft.normal = collapse(segment.original)
        draft.note("only a note number: no callout to read", review=True)
        return [draft], None
    for reader in (read_iso10110_7, read_scratch_dig):
        surface = reader(segment)
        if surface is not None:
            return [surface], None
    iso9022 = read_iso9022(segment)
    if iso9022 is not None:
        return [iso9022], iso9022
    host9211, items = read_iso9211_4(segment)
    if host9211 is not None or items:
        return items, host9211
    crosshatch = read_crosshatch(segment, options)
    if isinstance(crosshatch, Draft) and CrosshatchHost.wanted(crosshatch):
        waiting = CrosshatchHost(crosshatch, segment, options)
        return [waiting], waiting
    if crosshatch is not None:
        return [crosshatch], None
    mil = read_mil(segment, options)
    if isinstance(mil, MilHost):
        return [mil], mil
    if mil is not None:
        return [mil], None
    for reader_plain in (_bare_appendix, _bare_tests):
        plain = reader_plain(segment)
        if plain is not None:
            return [plain], None
    return [_unknown(segment)], None


def _read_line(line: int, raw: str, options: ParseOptions) -> list[Item]:
    items: list[Item] = []
    host: Host | None = None
    for segment in split_segments(line, raw):
        try:
            if host is not None:
                attached = host.attach(segment)
                if attached is not None:
                    items.extend(attached)
                    continue
            new, host = _classify(segment, options)
            items.extend(new)
        except InputError as exc:
            items.append(error_at(segment, str(exc)))
            host = None
        except Exception as exc:  # noqa: BLE001 - one bad callout must not lose the others
            items.append(
                error_at(
                    segment,
                    f"the parser failed on this callout ({type(exc).__name__}: {exc}); "
                    "kept for engineering review - please report it",
                )
            )
            host = None
    return items


def parse_callouts(text: str, options: ParseOptions | None = None) -> ParseResult:
    """Read requirement text (callouts separated by newlines, commas or semicolons).

    Returns every requirement read, in the order written, and a :class:`CalloutError` (text,
    line, column, message) for each callout that could not be read. Unknown standards and bare
    test names are kept as requirements flagged ``needs_review``; nothing is dropped.
    Raises InputError only when ``text`` is not a string or ``options`` is not ParseOptions.
    """
    if not isinstance(text, str):
        raise InputError(f"callouts: expected text, got {type(text).__name__}")
    if options is None:
        options = ParseOptions()
    elif not isinstance(options, ParseOptions):
        raise InputError(f"callouts: options must be ParseOptions, got {type(options).__name__}")
    requirements: list[Requirement] = []
    errors: list[CalloutError] = []
    for line, raw in split_lines(text):
        for item in _read_line(line, raw, options):
            try:
                built = item.build()
            except Exception as exc:  # noqa: BLE001 - same reason as in _read_line
                built = [
                    CalloutError(
                        text=raw.strip(),
                        line=line,
                        column=1,
                        message=f"the parser failed on this line ({type(exc).__name__}: {exc})",
                    )
                ]
            for result in built:
                if isinstance(result, CalloutError):
                    errors.append(result)
                else:
                    requirements.append(result)
    return ParseResult(requirements=tuple(requirements), errors=tuple(errors))
