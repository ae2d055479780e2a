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

from django.core.exceptions import ImproperlyConfigured
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
    raise ImproperlyConfigured(
        f"Records need append-only triggers; they exist for SQLite and PostgreSQL, not {vendor}."
    )


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


# Released test plans: the plan row and every row under it are frozen once the
# plan is released. Drafts stay editable; releasing is the last change a plan
# row accepts.
_PLAN_TABLE = "labrecords_testplan"
PLAN_CHILD_TABLES = ("labrecords_plansequence", "labrecords_planstep", "labrecords_sequencepiece")

_PG_PLAN_FUNCTION = """
CREATE OR REPLACE FUNCTION labrecords_refuse_released_plan_change() RETURNS trigger AS $$
DECLARE
    plan_status text;
BEGIN
    IF current_setting('labrecords.maintenance', true) = 'on' THEN
        IF TG_OP = 'DELETE' THEN RETURN OLD; END IF;
        RETURN NEW;
    END IF;
    IF TG_TABLE_NAME = 'labrecords_testplan' THEN
        plan_status := OLD.status;
    ELSIF TG_OP = 'INSERT' THEN
        SELECT status INTO plan_status FROM labrecords_testplan WHERE id = NEW.plan_id;
    ELSE
        SELECT status INTO plan_status FROM labrecords_testplan WHERE id = OLD.plan_id;
    END IF;
    IF plan_status = 'released' THEN
        RAISE EXCEPTION '% belongs to a released test plan: % refused (make a new plan revision)',
            TG_TABLE_NAME, TG_OP USING ERRCODE = 'integrity_constraint_violation';
    END IF;
    IF TG_OP = 'DELETE' THEN RETURN OLD; END IF;
    RETURN NEW;
END
$$ LANGUAGE plpgsql;
"""


def _plan_sql(vendor: str) -> list[str]:
    statements: list[str] = []
    if vendor == "postgresql":
        statements.append(_PG_PLAN_FUNCTION)
        for table in (_PLAN_TABLE, *PLAN_CHILD_TABLES):
            ops = "UPDATE OR DELETE" if table == _PLAN_TABLE else "INSERT OR UPDATE OR DELETE"
            statements += [
                f'DROP TRIGGER IF EXISTS "{table}_frozen" ON "{table}";',
                f'CREATE TRIGGER "{table}_frozen" BEFORE {ops} ON "{table}" FOR EACH ROW '
                "EXECUTE FUNCTION labrecords_refuse_released_plan_change();",
            ]
        return statements
    if vendor != "sqlite":
        raise ImproperlyConfigured(
            f"Released plans need triggers; they exist for SQLite and PostgreSQL, not {vendor}."
        )
    message = "belongs to a released test plan: {op} refused (make a new plan revision)"
    for op in ("UPDATE", "DELETE"):
        statements.append(
            f'CREATE TRIGGER IF NOT EXISTS "{_PLAN_TABLE}_frozen_{op.lower()}" BEFORE {op} '
            f"ON \"{_PLAN_TABLE}\" WHEN OLD.status = 'released' AND NOT labrecords_maintenance() "
            f"BEGIN SELECT RAISE(ABORT, '{_PLAN_TABLE} {message.format(op=op)}'); END;"
        )
    for table in PLAN_CHILD_TABLES:
        for op, row in (("INSERT", "NEW"), ("UPDATE", "OLD"), ("DELETE", "OLD")):
            statements.append(
                f'CREATE TRIGGER IF NOT EXISTS "{table}_frozen_{op.lower()}" BEFORE {op} '
                f'ON "{table}" WHEN (SELECT status FROM "{_PLAN_TABLE}" WHERE id = {row}.plan_id)'
                " = 'released' AND NOT labrecords_maintenance() "
                f"BEGIN SELECT RAISE(ABORT, '{table} {message.format(op=op)}'); END;"
            )
    return statements


def _plan_drop_sql(vendor: str) -> list[str]:
    tables = (_PLAN_TABLE, *PLAN_CHILD_TABLES)
    if vendor == "postgresql":
        return [f'DROP TRIGGER IF EXISTS "{t}_frozen" ON "{t}";' for t in tables]
    return [
        f'DROP TRIGGER IF EXISTS "{t}_frozen_{op}";'
        for t in tables
        for op in ("insert", "update", "delete")
    ]


def freeze_released_plans() -> RunPython:
    """A migration operation: released plans and their rows refuse every change."""

    def forwards(apps, schema_editor) -> None:
        for statement in _plan_sql(schema_editor.connection.vendor):
            schema_editor.execute(statement, params=None)

    def backwards(apps, schema_editor) -> None:
        for statement in _plan_drop_sql(schema_editor.connection.vendor):
            schema_editor.execute(statement, params=None)

    return RunPython(forwards, backwards, elidable=False)
