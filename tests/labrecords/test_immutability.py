"""Records are sacred: the database itself refuses to change or delete them.

These run on whichever database the suite runs on; CI runs the suite on SQLite
and on PostgreSQL, so each assertion is proven on both.
"""

import datetime

import pytest
from django.db import DatabaseError, IntegrityError, connection, transaction

from labrecords import clock
from labrecords.immutability import maintenance_window, protected_tables
from labrecords.models import AuditEntry, ImmutableRecordError, Observation
from labrecords.services.observations import (
    StaleRevisionError,
    observation_correct,
    observation_record,
)
from tests.factories import WitnessPieceFactory

pytestmark = pytest.mark.django_db

NOW = datetime.datetime(2026, 11, 20, 10, 0, tzinfo=datetime.UTC)


@pytest.fixture
def observation(cast):
    piece = WitnessPieceFactory()
    with clock.frozen_at(NOW):
        return observation_record(
            actor=cast.technician,
            piece=piece,
            point="initial",
            observed_at=NOW - datetime.timedelta(minutes=5),
            no_defects=True,
        )


def _raw(sql: str, params=()):
    with transaction.atomic(), connection.cursor() as cursor:
        cursor.execute(sql, params)


def test_the_migrations_protect_every_append_only_table():
    from labrecords.migrations import _0004_tables

    assert set(protected_tables()) >= {
        "labrecords_observation",
        "labrecords_auditentry",
        "labrecords_stockmovement",
        "durability_methodversion",
        *_0004_tables(),
    }


def test_raw_sql_update_of_a_result_revision_is_refused(observation):
    with pytest.raises((DatabaseError, IntegrityError), match="append-only"):
        _raw("UPDATE labrecords_observation SET notes = 'changed' WHERE id = %s", [observation.pk])
    assert Observation.objects.get(pk=observation.pk).notes == ""


def test_raw_sql_delete_of_a_result_revision_is_refused(observation):
    with pytest.raises((DatabaseError, IntegrityError), match="append-only"):
        _raw("DELETE FROM labrecords_observation WHERE id = %s", [observation.pk])
    assert Observation.objects.filter(pk=observation.pk).exists()


def test_raw_sql_update_and_delete_of_an_audit_entry_are_refused(observation):
    entry = AuditEntry.objects.filter(model="labrecords.Observation").first()
    with pytest.raises((DatabaseError, IntegrityError), match="append-only"):
        _raw("UPDATE labrecords_auditentry SET reason = 'rewritten' WHERE id = %s", [entry.pk])
    with pytest.raises((DatabaseError, IntegrityError), match="append-only"):
        _raw("DELETE FROM labrecords_auditentry WHERE id = %s", [entry.pk])
    assert AuditEntry.objects.get(pk=entry.pk).reason == ""


@pytest.mark.skipif(connection.vendor != "postgresql", reason="TRUNCATE exists on PostgreSQL only")
def test_truncate_of_revision_and_audit_tables_is_refused_on_postgresql(observation):
    # Django's foreign keys are deferred; settle them so TRUNCATE reaches our trigger.
    _raw("SET CONSTRAINTS ALL IMMEDIATE")
    for table in ("labrecords_observation", "labrecords_auditentry"):
        with pytest.raises(DatabaseError, match="append-only"):
            _raw(f"TRUNCATE {table} CASCADE")
    assert Observation.objects.count() == 1


def test_the_orm_refuses_update_and_delete_before_the_database_is_asked(observation):
    with pytest.raises(ImmutableRecordError):
        Observation.objects.filter(pk=observation.pk).update(notes="x")
    with pytest.raises(ImmutableRecordError):
        observation.delete()
    observation.notes = "x"
    with pytest.raises(ImmutableRecordError):
        observation.save()


def test_a_correction_keeps_both_revisions_and_writes_one_audit_entry(cast, observation):
    audit_before = AuditEntry.objects.count()
    with clock.frozen_at(NOW + datetime.timedelta(hours=1)):
        correction = observation_correct(
            actor=cast.engineer,
            revision=observation,
            reason="haze at the edge was missed",
            no_defects=False,
            defects=[{"defect": "haze", "zone": "edge", "intensity": 1}],
        )
    revisions = list(Observation.objects.history(observation.record_key))
    assert [r.number for r in revisions] == [1, 2]
    assert revisions[0].no_defects is True  # the original stays as recorded
    assert revisions[1].supersedes_id == observation.pk
    assert list(Observation.objects.current().filter(record_key=observation.record_key)) == [
        correction
    ]
    assert AuditEntry.objects.count() == audit_before + 1
    entry = AuditEntry.objects.order_by("-id").first()
    assert entry.action == "correct"
    assert entry.reason == "haze at the edge was missed"
    assert entry.changes["no_defects"] == [True, False]


def test_a_second_correction_of_the_same_revision_is_refused(cast, observation):
    with clock.frozen_at(NOW + datetime.timedelta(hours=1)):
        first = observation_correct(
            actor=cast.engineer,
            revision=observation,
            reason="first look was wrong",
            no_defects=False,
            defects=[{"defect": "spots", "quantity": 2}],
        )
        with pytest.raises(StaleRevisionError) as refused:
            observation_correct(
                actor=cast.technician,
                revision=observation,
                reason="stale screen",
                no_defects=True,
            )
    assert refused.value.current == first
    assert "revision 2" in str(refused.value)
    assert Observation.objects.filter(record_key=observation.record_key).count() == 2


def test_the_database_refuses_a_second_superseding_row_even_past_the_service(cast, observation):
    later = NOW + datetime.timedelta(hours=2)
    common = dict(
        piece=observation.piece,
        point="initial",
        no_defects=True,
        recorded_by=cast.technician,
        recorded_at=later,
        observed_at=later,
        record_key=observation.record_key,
        reason="r",
    )
    Observation(supersedes=observation, number=2, **common).save()
    with pytest.raises(IntegrityError), transaction.atomic():
        Observation(supersedes=observation, number=3, **common).save()


def test_observed_at_later_than_recorded_at_is_refused_by_the_database(cast, observation):
    with pytest.raises(IntegrityError), transaction.atomic():
        Observation(
            piece=observation.piece,
            point="initial",
            no_defects=True,
            recorded_by=cast.technician,
            recorded_at=NOW,
            observed_at=NOW + datetime.timedelta(seconds=1),
        ).save()


def test_the_maintenance_switch_is_closed_outside_its_window(observation):
    with maintenance_window():
        pass
    with pytest.raises((DatabaseError, IntegrityError), match="append-only"):
        _raw("DELETE FROM labrecords_observation WHERE id = %s", [observation.pk])


def test_application_code_never_calls_the_maintenance_switch():
    """Only the test conftest may open the window (DEVELOPERS.md, 'Records are sacred')."""
    import pathlib

    root = pathlib.Path(__file__).resolve().parents[2]
    callers = [
        path.relative_to(root).as_posix()
        for folder in ("durability", "labrecords")
        for path in (root / folder).rglob("*.py")
        if "maintenance_window(" in path.read_text(encoding="utf-8")
    ]
    assert callers == ["labrecords/immutability.py"]


@pytest.mark.django_db(transaction=True)
def test_a_transactional_test_can_still_be_emptied_afterwards(cast):
    piece = WitnessPieceFactory()
    with clock.frozen_at(NOW):
        observation_record(
            actor=cast.technician, piece=piece, point="initial", observed_at=NOW, no_defects=True
        )
    assert Observation.objects.count() == 1
