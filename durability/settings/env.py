"""Small typed readers for environment variables.

Every difference between environments comes from an environment variable read
through one of these. Each fails loudly, naming the variable, on a value it
cannot read: a typo in a deployment must stop the start, not change behaviour.
"""

from __future__ import annotations

import os
from pathlib import Path
from urllib.parse import parse_qs, unquote, urlsplit
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

from django.core.exceptions import ImproperlyConfigured

_TRUE = {"1", "true", "yes", "on"}
_FALSE = {"0", "false", "no", "off", ""}
_MISSING = object()


def env_str(name: str, default: str | object = _MISSING) -> str:
    value = os.environ.get(name)
    if value is None:
        if default is _MISSING:
            raise ImproperlyConfigured(f"The environment variable {name} is required.")
        return str(default)
    return value


def env_bool(name: str, default: bool) -> bool:
    value = os.environ.get(name)
    if value is None:
        return default
    lowered = value.strip().lower()
    if lowered in _TRUE:
        return True
    if lowered in _FALSE:
        return False
    raise ImproperlyConfigured(f"{name}={value!r} is not a yes/no value (use 1/0, true/false).")


def env_int(name: str, default: int) -> int:
    value = os.environ.get(name)
    if value is None:
        return default
    try:
        return int(value)
    except ValueError:
        raise ImproperlyConfigured(f"{name}={value!r} is not a whole number.") from None


def env_list(name: str, default: list[str] | object = _MISSING) -> list[str]:
    value = os.environ.get(name)
    if value is None:
        if default is _MISSING:
            raise ImproperlyConfigured(f"The environment variable {name} is required.")
        return [str(item) for item in default]  # type: ignore[union-attr]
    items = [item.strip() for item in value.split(",") if item.strip()]
    if not items and default is _MISSING:
        raise ImproperlyConfigured(f"The environment variable {name} must not be empty.")
    return items


def env_path(name: str, default: Path) -> Path:
    value = os.environ.get(name)
    return Path(value).expanduser().resolve() if value else default


def env_time_zone(name: str, default: str) -> str:
    value = os.environ.get(name, default)
    try:
        ZoneInfo(value)
    except (ZoneInfoNotFoundError, ValueError):
        raise ImproperlyConfigured(f"{name}={value!r} is not a known IANA time zone.") from None
    return value


SQLITE_OPTIONS = {
    # WAL with synchronous=FULL: readers don't block the writer, and a power loss
    # cannot drop the last commits (NORMAL could).
    "init_command": "PRAGMA journal_mode=WAL; PRAGMA synchronous=FULL;",
    # IMMEDIATE takes the write lock at BEGIN and waits for it; DEFERRED would
    # fail at once with "database is locked" when a second writer arrives.
    "transaction_mode": "IMMEDIATE",
    "timeout": 20,
}


def database_from_url(url: str, *, name: str = "DATABASE_URL") -> dict[str, object]:
    """Turn `postgresql://user:pw@host:port/db` or `sqlite:///abs/path.sqlite3` into a
    Django DATABASES entry."""
    parts = urlsplit(url)
    scheme = parts.scheme.lower()
    if scheme in {"postgres", "postgresql", "pgsql"}:
        database = unquote(parts.path.lstrip("/"))
        if not database:
            raise ImproperlyConfigured(f"{name} names no database: {url!r}")
        options = {key: values[-1] for key, values in parse_qs(parts.query).items()}
        return {
            "ENGINE": "django.db.backends.postgresql",
            "NAME": database,
            "USER": unquote(parts.username or ""),
            "PASSWORD": unquote(parts.password or ""),
            "HOST": parts.hostname or "",
            "PORT": str(parts.port or ""),
            "OPTIONS": options,
            "CONN_MAX_AGE": 60,
            "CONN_HEALTH_CHECKS": True,
        }
    if scheme == "sqlite":
        # sqlite:////abs/path.sqlite3 is absolute, sqlite:///rel.sqlite3 relative.
        path = unquote(parts.path)[1:]
        if parts.netloc:
            raise ImproperlyConfigured(f"{name}: write sqlite:////absolute/path, got {url!r}")
        if not path or path == "/":
            raise ImproperlyConfigured(f"{name} names no SQLite file: {url!r}")
        return {
            "ENGINE": "django.db.backends.sqlite3",
            "NAME": path,
            "OPTIONS": dict(SQLITE_OPTIONS),
        }
    raise ImproperlyConfigured(
        f"{name} must start with postgresql:// or sqlite:///, got {scheme or 'no scheme'!r}."
    )
