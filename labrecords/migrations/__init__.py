import importlib


def _0004_tables() -> tuple[str, ...]:
    """The append-only tables migration 0004 protects (read by the tests)."""
    module = importlib.import_module("labrecords.migrations.0004_append_only_and_frozen_plans")
    return module.APPEND_ONLY
