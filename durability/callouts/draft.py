"""Requirements under construction, and the items a line's callouts turn into."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Protocol

from durability.callouts.model import TEST_KEYS, CalloutError, Requirement
from durability.callouts.text import Segment

__all__ = ["Draft", "ErrorItem", "Host", "Item", "error_at"]


class Item(Protocol):
    """Something a callout became; built into requirements and errors once the line is read."""

    def build(self) -> list[Requirement | CalloutError]: ...


class Host(Item, Protocol):
    """A callout that later callouts on its line may attach to (a MIL spec and its tests)."""

    def attach(self, segment: Segment) -> list[Item] | None:
        """Take ``segment`` in: None when it does not belong here, else new items (maybe none)."""
        ...


@dataclass
class Draft:
    """A requirement being assembled; ``start``/``end`` index its line (end exclusive)."""

    kind: str
    line: int
    start: int
    end: int
    raw: str
    normal: str = ""
    standard: str | None = None
    edition: str | None = None
    method: str | None = None
    severity: str | None = None
    state: str | None = None
    tests: list[str] = field(default_factory=list)
    limit: dict[str, Any] | None = None
    assumptions: list[str] = field(default_factory=list)
    needs_review: bool = False

    @classmethod
    def at(cls, kind: str, segment: Segment) -> Draft:
        """A draft spanning ``segment``."""
        return cls(
            kind=kind, line=segment.line, start=segment.start, end=segment.end, raw=segment.raw
        )

    def note(self, text: str, review: bool = False) -> None:
        """Record an assumption; ``review`` flags the requirement for an engineer."""
        if text not in self.assumptions:
            self.assumptions.append(text)
        self.needs_review = self.needs_review or review

    def build(self) -> list[Requirement | CalloutError]:
        """The finished requirement."""
        order = {key: index for index, key in enumerate(TEST_KEYS)}
        tests = sorted(dict.fromkeys(self.tests), key=lambda k: order.get(k, len(order)))
        return [
            Requirement(
                text=self.raw[self.start : self.end],
                normal=self.normal,
                kind=self.kind,
                standard=self.standard,
                edition=self.edition,
                method=self.method,
                severity=self.severity,
                state=self.state,
                tests=tuple(tests),
                limit=self.limit,
                assumptions=tuple(self.assumptions),
                needs_review=self.needs_review,
                line=self.line,
                column=self.start + 1,
            )
        ]


@dataclass
class ErrorItem:
    """A callout that could not be read."""

    error: CalloutError

    def build(self) -> list[Requirement | CalloutError]:
        """The error."""
        return [self.error]


def error_at(segment: Segment, message: str, offset: int | None = None) -> ErrorItem:
    """An error for ``segment``; ``offset`` (within the segment) moves the column to the fault."""
    column = segment.column if offset is None else segment.start + max(offset, 0) + 1
    return ErrorItem(
        CalloutError(text=segment.original, line=segment.line, column=column, message=message)
    )
