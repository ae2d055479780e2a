"""What the callout parser returns: requirements, callout errors, and the options it reads with."""

from __future__ import annotations

import copy
from dataclasses import dataclass, field
from typing import Any

from durability.catalogue_data import TEST_KEYS
from durability.errors import InputError
from durability.grading import BoundaryConvention

__all__ = [
    "KINDS",
    "TEST_KEYS",
    "CalloutError",
    "ParseOptions",
    "ParseResult",
    "Requirement",
]

# TEST_KEYS (imported above) are the catalogue's test keys; MIL coating-spec requirements
# name their tests with them. KINDS are the kinds of requirement the parser returns.
KINDS: tuple[str, ...] = (
    "coating_spec",
    "environmental",
    "test_method",
    "crosshatch_limit",
    "scratch_dig",
    "iso10110_7",
    "unknown",
)


@dataclass(frozen=True)
class ParseOptions:
    """Choices the parser leaves to the lab.

    ``mil_48497_temperature_solvent_basic``: published summaries of MIL-C-48497A disagree on
    whether the temperature and solvent-solubility tests are basic (always run) or run only when
    specified. False (the default) treats them as when-specified; every MIL-C-48497 requirement
    states the choice in its assumptions.

    ``crosshatch_boundary``: which class a share lying exactly on a class boundary takes; it
    decides whether a share equal to a crosshatch limit's maximum still meets it (the
    ``max_share_included`` entry of the limit).
    """

    mil_48497_temperature_solvent_basic: bool = False
    crosshatch_boundary: BoundaryConvention = BoundaryConvention.BETTER_CLASS

    def __post_init__(self) -> None:
        if not isinstance(self.mil_48497_temperature_solvent_basic, bool):
            raise InputError(
                "parse options: mil_48497_temperature_solvent_basic must be true or false, "
                f"got {self.mil_48497_temperature_solvent_basic!r}"
            )
        try:
            convention = BoundaryConvention(self.crosshatch_boundary)
        except ValueError:
            choices = ", ".join(c.value for c in BoundaryConvention)
            raise InputError(
                f"parse options: crosshatch_boundary {self.crosshatch_boundary!r} is unknown "
                f"(expected {choices})"
            ) from None
        object.__setattr__(self, "crosshatch_boundary", convention)


@dataclass(frozen=True)
class Requirement:
    """What the parser made of one callout.

    ``text`` is the callout exactly as written (for a MIL spec with named tests on the same line,
    the whole stretch from the spec to its last named test); ``line`` and ``column`` (both
    1-based, column counted in characters) say where it starts. ``normal`` is the callout
    rewritten in one spelling; parsing ``normal`` again gives the same requirement.
    ``limit`` is JSON-ready; it is excluded from the hash so requirements stay hashable.
    """

    text: str
    normal: str
    kind: str
    standard: str | None
    edition: str | None
    method: str | None
    severity: str | None
    state: str | None
    tests: tuple[str, ...]
    limit: dict[str, Any] | None = field(hash=False)
    assumptions: tuple[str, ...]
    needs_review: bool
    line: int
    column: int

    def as_json(self) -> dict[str, Any]:
        """Return the JSON-ready dict the ``callout`` command prints for this requirement."""
        return {
            "text": self.text,
            "normal": self.normal,
            "kind": self.kind,
            "standard": self.standard,
            "edition": self.edition,
            "method": self.method,
            "severity": self.severity,
            "state": self.state,
            "tests": list(self.tests),
            "limit": copy.deepcopy(self.limit),
            "assumptions": list(self.assumptions),
            "needs_review": self.needs_review,
            "line": self.line,
            "column": self.column,
        }


@dataclass(frozen=True)
class CalloutError:
    """A callout that could not be read: its text, where it is (1-based) and what is wrong."""

    text: str
    line: int
    column: int
    message: str

    def as_json(self) -> dict[str, Any]:
        """Return the JSON-ready dict the ``callout`` command prints for this error."""
        return {
            "text": self.text,
            "line": self.line,
            "column": self.column,
            "message": self.message,
        }

    def __str__(self) -> str:
        return f"line {self.line}, column {self.column}: {self.message} (callout {self.text!r})"


@dataclass(frozen=True)
class ParseResult:
    """Every requirement read, in the order written, and every callout that could not be read."""

    requirements: tuple[Requirement, ...]
    errors: tuple[CalloutError, ...]

    @property
    def ok(self) -> bool:
        """True when every callout was read."""
        return not self.errors

    @property
    def needs_review(self) -> tuple[Requirement, ...]:
        """The requirements an engineer must look at."""
        return tuple(r for r in self.requirements if r.needs_review)

    def as_json(self) -> dict[str, Any]:
        """Return ``{"requirements": [...], "errors": [...]}``."""
        return {
            "requirements": [r.as_json() for r in self.requirements],
            "errors": [e.as_json() for e in self.errors],
        }
