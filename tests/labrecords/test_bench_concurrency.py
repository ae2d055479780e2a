"""Saves that really race: threads with their own connections start together on a barrier
(PostgreSQL only: the in-memory SQLite test database cannot be shared between threads, and
SQLite's single writer serialises these saves anyway)."""

import threading

import pytest
from django.db import connection

from labrecords import clock
from labrecords.models import Nonconformance, StepResult
from labrecords.services import bench, nonconformances
from labrecords.services.bench import InspectionEntry, ResultValues, StaleResultError
from tests.labrecords.bench_support import NOW, bench_setup, record

pytestmark = [
    pytest.mark.django_db(transaction=True),
    pytest.mark.skipif("connection.vendor != 'postgresql'",
                       reason="threads need a shared database server"),
]
THREADS = 4


def _race(work):
    barrier = threading.Barrier(THREADS)
    outcomes: list[object] = [None] * THREADS

    def run(index: int) -> None:
        from django.db import connection as own

        try:
            barrier.wait(timeout=10)
            outcomes[index] = work(index)
        except Exception as exc:  # the outcome under test, kept for the assertions
            outcomes[index] = exc
        finally:
            own.close()

    threads = [threading.Thread(target=run, args=(i,)) for i in range(THREADS)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(timeout=60)
    return outcomes


def test_only_one_of_several_simultaneous_corrections_is_saved(cast):
    b = bench_setup(cast)
    first = record(b, 1)

    def correct(index: int):
        with clock.frozen_at(NOW):
            return bench.step_result_correct(
                actor=cast.technician, revision=first, reason=f"second look number {index}",
                values=ResultValues(inspection=InspectionEntry(
                    no_defects=False, defects=({"defect": "haze", "zone": f"zone {index}"},))),
                instruments=[b.microscope])

    outcomes = _race(correct)
    saved = [o for o in outcomes if isinstance(o, StepResult)]
    refused = [o for o in outcomes if isinstance(o, StaleResultError)]
    assert len(saved) == 1 and len(refused) == THREADS - 1, outcomes
    assert all(r.current.pk == saved[0].pk for r in refused)
    assert StepResult.objects.filter(record_key=first.record_key).count() == 2
    # The observation behind it got exactly one correction too.
    assert first.observation.__class__.objects.filter(
        record_key=first.observation.record_key).count() == 2


def test_simultaneous_first_records_of_one_step_keep_one(cast):
    b = bench_setup(cast)

    def first_record(index: int):
        return record(b, 1)

    outcomes = _race(first_record)
    saved = [o for o in outcomes if isinstance(o, StepResult)]
    assert len(saved) == 1, outcomes
    assert all(isinstance(o, StaleResultError) for o in outcomes if o is not saved[0])
    assert StepResult.objects.count() == 1


def test_simultaneous_nonconformances_get_distinct_numbers(cast):
    b = bench_setup(cast)
    lot = b.piece.lot

    def open_one(index: int):
        with clock.frozen_at(NOW):
            return nonconformances.nonconformance_open(
                actor=cast.quality_manager, kind="equipment", lot=lot,
                description=f"parallel opening {index}")

    outcomes = _race(open_one)
    assert all(isinstance(o, Nonconformance) for o in outcomes), outcomes
    numbers = sorted(o.number for o in outcomes)
    assert numbers == [f"NC-26-{n:04d}" for n in range(1, THREADS + 1)]
    assert connection.vendor == "postgresql"
