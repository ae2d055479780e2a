"""The callout parser: requirement text as a drawing or order carries it, read into requirements.

``parse_callouts(text, options)`` returns a :class:`ParseResult` with one :class:`Requirement` per
callout (MIL coating specs with their tests, ISO 9022 test codes, ISO 9211-4 methods, crosshatch
limits, scratch-dig and ISO 10110-7 surface callouts, and anything else kept as free text for
engineering review) and one :class:`CalloutError` per callout that could not be read.
"""

from durability.callouts.model import (
    KINDS,
    TEST_KEYS,
    CalloutError,
    ParseOptions,
    ParseResult,
    Requirement,
)
from durability.callouts.parser import parse_callouts

__all__ = [
    "KINDS",
    "TEST_KEYS",
    "CalloutError",
    "ParseOptions",
    "ParseResult",
    "Requirement",
    "parse_callouts",
]
