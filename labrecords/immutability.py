"""Database-level refusal of UPDATE, DELETE (and TRUNCATE on PostgreSQL) on
append-only tables: revisions, the audit trail, method versions, signatures.

The triggers are created by migrations through `protect_tables`. They fire for
every client, raw SQL included, and can be passed only through the one
maintenance switch, `maintenance_window()`, which exists for test teardown
(emptying the test database between transactional tests). Application code
never calls it; DEVELOPERS.md says so and a test checks the call sites.

- PostgreSQL: the trigger function reads the session setting
  `labrecords.maintenance`; the switch sets it for this connection only.
- SQLite: the trigger's WHEN clause calls `labrecords_maintenance()`, a
  function this module registers on each Django connection; it reads a flag
  on that connection. A client that has not registered the function (the
  sqlite3 shell, say) gets "no such function" and its change is refused too.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from contextlib import contextmanager

from django.db import DEFAULT_DB_ALIAS, connections
from django.db.migrations.operations.special import RunPython

_PG_FUNCTION = """
CREATE OR REPLACE FUNCTION labrecords_refuse_change() RETURNS trigger AS $$
BEGIN
    IF current_setting('labrecords.maintenance', true) = 'on' THEN
        IF TG_OP = 'DELETE' THEN RETURN OLD; END IF;
        RETURN NEW;
    END IF;
    RAISE EXCEPTION '% is append-only: % refused (a correction is a new revision)',
        TG_TABLE_NAME, TG_OP USING ERRCODE = 'integrity_constraint_violation';
END
$$ LANGUAGE plpgsql;
"""


def _pg_sql(table: str) -> list[str]:
    return [
        _PG_FUNCTION,
        *_drop_sql("postgresql", table),
        f'CREATE TRIGGER "{table}_append_only" BEFORE UPDATE OR DELETE ON "{table}" '
        "FOR EACH ROW EXECUTE FUNCTION labrecords_refuse_change();",
        f'CREATE TRIGGER "{table}_no_truncate" BEFORE TRUNCATE ON "{table}" '
        "FOR EACH STATEMENT EXECUTE FUNCTION labrecords_refuse_change();",
    ]


def _sqlite_sql(table: str) -> list[str]:
    return [
        f'CREATE TRIGGER IF NOT EXISTS "{table}_no_{op.lower()}" BEFORE {op} ON "{table}" '
        "WHEN NOT labrecords_maintenance() BEGIN "
        f"SELECT RAISE(ABORT, '{table} is append-only: {op} refused "
        "(a correction is a new revision)'); END;"
        for op in ("UPDATE", "DELETE")
    ]


def _drop_sql(vendor: str, table: str) -> list[str]:
    if vendor == "postgresql":
        return [
            f'DROP TRIGGER IF EXISTS "{table}_append_only" ON "{table}";',
            f'DROP TRIGGER IF EXISTS "{table}_no_truncate" ON "{table}";',
        ]
    return [f'DROP TRIGGER IF EXISTS "{table}_no_{op}";' for op in ("update", "delete")]


def create_sql(vendor: str, table: str) -> list[str]:
    if vendor == "postgresql":
        return _pg_sql(table)
    if vendor == "sqlite":
        return _sqlite_sql(table)
    raise NotImplementedError(f"No append-only triggers written for the {vendor} database.")


def protect_tables(*tables: str) -> RunPython:
    """A migration operation that makes the named tables append-only.

    Idempotent. On SQLite, Django rebuilds a table to alter it and the rebuild
    drops its triggers: a migration that alters a protected table must end with
    `protect_tables(...)` for it again (a test checks every protected table).
    """

    def forwards(apps, schema_editor) -> None:
        vendor = schema_editor.connection.vendor
        for table in tables:
            for statement in create_sql(vendor, table):
                schema_editor.execute(statement, params=None)

    def backwards(apps, schema_editor) -> None:
        vendor = schema_editor.connection.vendor
        for table in tables:
            for statement in _drop_sql(vendor, table):
                schema_editor.execute(statement, params=None)

    return RunPython(forwards, backwards, elidable=False)


def register_sqlite_switch(sender, connection, **kwargs) -> None:
    """connection_created receiver: give each SQLite connection the switch function."""
    if connection.vendor != "sqlite":
        return
    wrapper = connection
    connection.connection.create_function(
        "labrecords_maintenance",
        0,
        lambda: 1 if getattr(wrapper, "labrecords_maintenance", False) else 0,
        deterministic=False,
    )


@contextmanager
def maintenance_window(using: str = DEFAULT_DB_ALIAS) -> Iterator[None]:
    """Let this connection change append-only tables. For test teardown only."""
    connection = connections[using]
    connection.ensure_connection()
    if connection.vendor == "postgresql":
        with connection.cursor() as cursor:
            cursor.execute("SELECT set_config('labrecords.maintenance', 'on', false)")
    connection.labrecords_maintenance = True
    try:
        yield
    finally:
        connection.labrecords_maintenance = False
        if connection.vendor == "postgresql" and connection.connection is not None:
            with connection.cursor() as cursor:
                cursor.execute("SELECT set_config('labrecords.maintenance', 'off', false)")


def protected_tables(using: str = DEFAULT_DB_ALIAS) -> Sequence[str]:
    """The tables that carry append-only triggers, read back from the database."""
    connection = connections[using]
    with connection.cursor() as cursor:
        if connection.vendor == "postgresql":
            cursor.execute(
                "SELECT DISTINCT event_object_table FROM information_schema.triggers "
                "WHERE trigger_name LIKE '%%_append_only'"
            )
        else:
            cursor.execute(
                "SELECT DISTINCT tbl_name FROM sqlite_master "
                "WHERE type = 'trigger' AND name LIKE '%_no_update'"
            )
        return sorted(row[0] for row in cursor.fetchall())
