"""The server's clock, injectable.

Services stamp `recorded_at` and audit times with `now()`. In production that
is the real time. The demo command builds three months of history by running
the real services inside `frozen_at(...)`, so every demo record is a genuine
record with a consistent audit trail.
"""

from __future__ import annotations

import datetime
from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar

from django.utils import timezone

_fixed: ContextVar[datetime.datetime | None] = ContextVar("labrecords_clock", default=None)


def now() -> datetime.datetime:
    fixed = _fixed.get()
    return fixed if fixed is not None else timezone.now()


@contextmanager
def frozen_at(moment: datetime.datetime) -> Iterator[None]:
    if timezone.is_naive(moment):
        raise ValueError("frozen_at needs an aware datetime")
    token = _fixed.set(moment)
    try:
        yield
    finally:
        _fixed.reset(token)
