"""Waiting work: what each piece waits for, filters, sorting, CSV export, query count."""

from __future__ import annotations

import csv
import datetime
import io
from decimal import Decimal

import pytest

from labrecords import clock
from labrecords.exports import csv_text, escape_cell
from labrecords.models import ChamberRun, ChamberRunPiece, LotStage, Review, ReviewedResult
from labrecords.selectors_waiting import WaitKind, waiting_assignments, waiting_rows
from tests.factories import CustomerFactory, InstrumentFactory, LotFactory, OrderFactory
from tests.labrecords.evidence_helpers import (
    berlin,
    finish_until,
    plan_lot,
    record_done,
    sequence_steps,
)

pytestmark = pytest.mark.django_db

NOW = berlin(2025, 6, 12, 9)


@pytest.fixture(autouse=True)
def frozen():
    with clock.frozen_at(NOW):
        yield


def _rows(**kwargs):
    return {row.piece: row for row in waiting_rows(waiting_assignments(), now=NOW, **kwargs)}


def _piece(plan):
    return plan.assignments.get().piece


def test_a_fresh_piece_waits_for_a_bench_station_once_its_wait_has_passed(cast):
    plan = plan_lot(customer=cast.customer_org, due_date=datetime.date(2025, 6, 30))
    row = _rows()[_piece(plan).ident]
    assert row.step == "1. Visual inspection" and row.kind == "inspection"
    assert row.wait_kind is WaitKind.BENCH
    assert row.waiting_since == plan.released_at
    assert row.waited_hours == pytest.approx((NOW - plan.released_at).total_seconds() / 3600)
    assert row.late is False and row.due == datetime.date(2025, 6, 30)
    assert row.promised is None


def test_a_minimum_wait_that_has_not_passed_is_shown_with_its_end(cast):
    released = NOW - datetime.timedelta(hours=2)
    plan = plan_lot(customer=cast.customer_org, released_at=released)
    row = _rows()[_piece(plan).ident]
    # The first step's plan waits 12 h (ISO 9211-4 storage after coating, [pub]).
    assert row.wait_kind is WaitKind.WAIT_TIME
    assert row.waits_for.startswith("wait time until 2025-06-12 19:00")


def test_a_piece_at_its_exposure_waits_for_a_chamber_run_of_that_condition(cast):
    plan = plan_lot(customer=cast.customer_org)
    piece = _piece(plan)
    finish_until(plan, piece, "humidity", berlin(2025, 6, 9, 10))
    row = _rows()[piece.ident]
    assert row.wait_kind is WaitKind.CHAMBER_RUN
    assert "humidity chamber run at 49 ± 2 °C, 95–100 % RH, 24 h" in row.waits_for
    assert row.waiting_since == berlin(2025, 6, 9, 10, 1)  # the previous step's result
    assert "hot_chamber" in row.hazards


def test_a_loaded_piece_waits_for_unloading_then_for_its_result(cast):
    plan = plan_lot(customer=cast.customer_org)
    piece = _piece(plan)
    finish_until(plan, piece, "humidity", berlin(2025, 6, 9, 10))
    step = next(s for s in sequence_steps(plan, piece) if s.kind == "humidity")
    chamber = InstrumentFactory(ident="HC-W1", kind="humidity chamber")
    run = ChamberRun.objects.create(
        ident="HC-W1-1",
        chamber=chamber,
        method_version=step.method_version,
        condition="49 ± 2 °C",
        loaded_at=berlin(2025, 6, 10, 8),
        loaded_by=cast.technician,
    )
    ChamberRunPiece.objects.create(run=run, piece=piece, step_key=step.step_key)
    row = _rows()[piece.ident]
    assert row.wait_kind is WaitKind.IN_CHAMBER and "HC-W1-1" in row.waits_for
    assert row.waiting_since == run.loaded_at
    run.unloaded_at = berlin(2025, 6, 11, 9)
    run.save()
    row = _rows()[piece.ident]
    assert row.wait_kind is WaitKind.RESULT and row.waiting_since == run.unloaded_at


def test_a_piece_with_every_step_done_waits_for_review_until_reviewed(cast):
    plan = plan_lot(customer=cast.customer_org)
    piece = _piece(plan)
    results = []
    for index, step in enumerate(sequence_steps(plan, piece)):
        results.append(record_done(piece, step, berlin(2025, 6, 9, 10 + index)))
    row = _rows()[piece.ident]
    assert row.wait_kind is WaitKind.REVIEW and row.step == ""
    assert row.waiting_since == results[-1].observed_at
    review = Review.objects.create(lot=piece.lot, reviewer=cast.reviewer, reviewed_at=NOW)
    for result in results:
        ReviewedResult.objects.create(review=review, result=result)
    assert piece.ident not in _rows()


def test_late_lots_come_first_and_signed_lots_are_gone(cast):
    on_time = plan_lot(customer=cast.customer_org, due_date=datetime.date(2025, 7, 1))
    late = plan_lot(customer=cast.customer_org, due_date=datetime.date(2025, 6, 10))
    signed = plan_lot(customer=cast.customer_org)
    signed.lot.stage = LotStage.SIGNED
    signed.lot.save()
    rows = waiting_rows(waiting_assignments(), now=NOW)
    assert [r.piece for r in rows] == [_piece(late).ident, _piece(on_time).ident]
    assert rows[0].late and not rows[1].late


def test_the_promised_date_hook_fills_the_column(cast):
    plan = plan_lot(customer=cast.customer_org)
    promised = berlin(2025, 6, 20, 17)
    row = _rows(promised={plan.lot_id: promised})[_piece(plan).ident]
    assert row.promised == promised


# ---------------------------------------------------------------- the page


def test_the_page_walks_the_cast(client, cast):
    plan_lot(customer=cast.customer_org)
    assert client.get("/waiting/").status_code == 302
    for user in (cast.outsider, cast.customer, cast.other_customer):
        client.force_login(user)
        assert client.get("/waiting/").status_code == 404
        assert client.get("/waiting/?export=csv").status_code == 404
    client.force_login(cast.reviewer)
    page = client.get("/waiting/")
    assert page.status_code == 200 and "Visual inspection" in page.content.decode()
    assert "Promised" not in page.content.decode()  # no schedule yet: no promised column
    assert client.post("/waiting/").status_code == 405


def test_filters_by_customer_kind_stage_and_due_window(client, cast):
    mine = plan_lot(customer=cast.customer_org, due_date=datetime.date(2025, 6, 15))
    theirs = plan_lot(customer=cast.other_org, due_date=datetime.date(2025, 6, 1))
    at_humidity = plan_lot(customer=cast.other_org, due_date=datetime.date(2025, 8, 1))
    finish_until(at_humidity, _piece(at_humidity), "humidity", berlin(2025, 6, 9, 10))
    in_test = plan_lot(customer=cast.customer_org)
    in_test.lot.stage = LotStage.IN_TEST
    in_test.lot.save()
    client.force_login(cast.engineer)

    def pieces(**query):
        response = client.get("/waiting/", query)
        assert response.status_code == 200
        return {row.piece for row in response.context["table"].data}

    assert pieces(customer=cast.customer_org.pk) == {_piece(mine).ident, _piece(in_test).ident}
    assert pieces(kind="humidity") == {_piece(at_humidity).ident}
    assert pieces(stage="in_test") == {_piece(in_test).ident}
    assert pieces(due="late") == {_piece(theirs).ident}
    assert pieces(due="7") == {_piece(mine).ident}
    assert pieces(due="none") == {_piece(in_test).ident}


def test_sorting_by_a_column(client, cast):
    first = plan_lot(customer=cast.customer_org, released_at=berlin(2025, 6, 1, 9))
    second = plan_lot(customer=cast.customer_org, released_at=berlin(2025, 6, 5, 9))
    client.force_login(cast.engineer)
    table = client.get("/waiting/", {"sort": "waited"}).context["table"]
    assert [row.piece for row in table.data] == [_piece(second).ident, _piece(first).ident]
    table = client.get("/waiting/", {"sort": "-waited"}).context["table"]
    assert [row.piece for row in table.data] == [_piece(first).ident, _piece(second).ident]


def test_the_csv_export_escapes_formula_text_and_keeps_numbers(client, cast):
    evil = CustomerFactory(name='=HYPERLINK("http://x.invalid","open")', code="EVL")
    lot = LotFactory(
        order=OrderFactory(customer=evil, due_date=datetime.date(2025, 6, 1)), number="-L0001"
    )
    plan_lot(lot=lot)
    client.force_login(cast.technician)
    response = client.get("/waiting/", {"export": "csv"})
    assert response.status_code == 200
    assert response["Content-Type"].startswith("text/csv")
    assert response["Content-Disposition"].startswith("attachment")
    rows = list(csv.reader(io.StringIO(response.content.decode("utf-8-sig"))))
    header, row = rows[0], rows[1]
    cells = dict(zip(header, row, strict=True))
    assert cells["Customer"] == "'" + evil.name
    assert cells["Lot"] == "'-L0001"
    assert float(cells["Waited (h)"]) > 0 and not cells["Waited (h)"].startswith("'")
    assert cells["Late"] == "late"


def test_the_export_follows_the_filters(client, cast):
    plan_lot(customer=cast.customer_org)
    other = plan_lot(customer=cast.other_org)
    client.force_login(cast.technician)
    response = client.get("/waiting/", {"export": "csv", "customer": cast.other_org.pk})
    rows = list(csv.reader(io.StringIO(response.content.decode("utf-8-sig"))))
    assert len(rows) == 2 and rows[1][3] == _piece(other).ident


@pytest.mark.parametrize("lots", [2, 7])
def test_the_page_does_not_query_per_row(client, cast, lots, django_assert_max_num_queries):
    for index in range(lots):
        plan = plan_lot(
            customer=cast.customer_org if index % 2 else cast.other_org, pieces_per_sequence=2
        )
        if index % 3 == 0:
            for assignment in plan.assignments.all():
                finish_until(plan, assignment.piece, "humidity", berlin(2025, 6, 9, 10))
    client.force_login(cast.engineer)
    # The same ceiling for 2 and 7 lots (4 and 14 pieces): the count does not grow with rows.
    # 13 for the rows, 7 more to read the schedule's inputs for the promised dates.
    with django_assert_max_num_queries(20):
        response = client.get("/waiting/")
    assert len(response.context["table"].data) == 2 * lots
    with django_assert_max_num_queries(20):
        client.get("/waiting/", {"export": "csv"})


# ---------------------------------------------------------------- escape_cell


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        ("=1+1", "'=1+1"),
        ("+41 22", "'+41 22"),
        ("-L7", "'-L7"),
        ("@SUM(A1)", "'@SUM(A1)"),
        ("\tcmd", "'\tcmd"),
        ("\rcmd", "'\rcmd"),
        ("plain", "plain"),
        ("a=b", "a=b"),
        (-3.5, -3.5),
        (12, 12),
        (Decimal("-0.25"), Decimal("-0.25")),
        (None, ""),
        (True, "yes"),
        (datetime.date(2025, 6, 1), "2025-06-01"),
    ],
)
def test_escape_cell(value, expected):
    # OWASP CSV injection guidance (shared/reference/records-and-security.md, [mem]).
    assert escape_cell(value) == expected


def test_numbers_are_written_as_numbers():
    text = csv_text([["a", "b"], [-3.5, "-3.5"]])
    assert text.splitlines()[1] == "-3.5,'-3.5"
