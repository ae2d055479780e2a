"""An order's results as CSV and XLSX: formulas never run, numbers stay numbers, and a
customer gets only what an issued report stated."""

import csv
import datetime
import io

import openpyxl
import pytest

from labrecords import clock
from labrecords.models import StepResult
from labrecords.services import reports, reviews
from tests.labrecords.report_fixtures import MOMENT, PASSWORD, finished_lot

pytestmark = pytest.mark.django_db

NASTY = {
    "note": '=HYPERLINK("http://example.invalid","x")',
    "remark": "+1+2",
    "where": "@SUM(A1:A2)",
    "tabbed": "\t=1",
    "carriage": "\r=1",
    "offset_nm": -1.5,
    "strokes": 25,
}


@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = str(tmp_path / "media")


@pytest.fixture
def lot(cast):
    lot = finished_lot(cast)
    first = StepResult.objects.current().filter(piece__lot=lot).order_by("id").first()
    with clock.frozen_at(MOMENT + datetime.timedelta(minutes=30)):
        StepResult(
            record_key=first.record_key,
            number=2,
            supersedes=first,
            step=first.step,
            step_key=first.step_key,
            piece=first.piece,
            values=NASTY,
            verdict="pass",
            verdict_reason="-not a formula, a reason",
            recorded_by=cast.technician,
            recorded_at=clock.now(),
            observed_at=first.observed_at,
            reason="values re-entered",
        ).save()
    return lot


def csv_rows(content: bytes) -> list[dict[str, str]]:
    text = content.decode("utf-8")
    assert text.startswith("\ufeff")
    return list(csv.DictReader(io.StringIO(text[1:], newline="")))


def test_csv_cells_that_look_like_formulas_are_escaped_and_numbers_stay_numbers(client, cast, lot):
    client.force_login(cast.engineer)
    response = client.get(f"/orders/{lot.order.pk}/results.csv")
    assert response.status_code == 200
    assert (
        response["Content-Disposition"] == f'attachment; filename="{lot.order.number}-results.csv"'
    )
    rows = csv_rows(response.content)
    row = next(r for r in rows if r["revision"] == "2")
    # OWASP CSV injection: a leading quote keeps = + - @ tab CR as text
    # (shared/reference/records-and-security.md [mem]).
    assert row["value: note"] == "'" + NASTY["note"]
    assert row["value: remark"] == "'+1+2"
    assert row["value: where"] == "'@SUM(A1:A2)"
    assert row["value: tabbed"] == "'\t=1"
    assert row["value: carriage"] == "'\r=1"
    assert row["reason"] == "'-not a formula, a reason"
    assert row["value: offset (nm)"] == "-1.5"  # a number, not escaped
    assert row["value: strokes"] == "25"
    assert len(rows) == StepResult.objects.current().filter(piece__lot=lot).count()


def test_xlsx_text_is_typed_as_text_and_numbers_as_numbers(client, cast, lot):
    client.force_login(cast.engineer)
    response = client.get(f"/orders/{lot.order.pk}/results.xlsx")
    assert response.status_code == 200
    sheet = openpyxl.load_workbook(io.BytesIO(response.content))["results"]
    header = [cell.value for cell in sheet[1]]
    cells = {}
    for row in sheet.iter_rows(min_row=2):
        values = dict(zip(header, row, strict=True))
        if values["revision"].value == 2:
            cells = values
    assert cells["value: note"].data_type == "s"
    assert cells["value: note"].value == "'" + NASTY["note"]
    assert cells["reason"].data_type == "s"
    assert cells["value: offset (nm)"].data_type == "n"
    assert cells["value: offset (nm)"].value == -1.5
    assert cells["revision"].data_type == "n"
    for row in sheet.iter_rows():
        for cell in row:
            assert cell.data_type != "f"  # no formula anywhere


def test_a_customer_gets_only_results_an_issued_report_stated(client, cast, lot):
    client.force_login(cast.customer)
    before = csv_rows(client.get(f"/orders/{lot.order.pk}/results.csv").content)
    assert before == []  # nothing is issued yet
    with clock.frozen_at(MOMENT + datetime.timedelta(hours=3)):
        reviews.review_sign(actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev")
        report = reports.report_issue(
            actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev"
        )
    rows = csv_rows(client.get(f"/orders/{lot.order.pk}/results.csv").content)
    assert {r["report"] for r in rows} == {report.number}
    assert len(rows) == StepResult.objects.current().filter(piece__lot=lot).count()
    # A correction after issue is not shown to the customer until a report states it.
    result = StepResult.objects.current().filter(piece__lot=lot).order_by("-id").first()
    with clock.frozen_at(MOMENT + datetime.timedelta(hours=4)):
        StepResult(
            record_key=result.record_key,
            number=result.number + 1,
            supersedes=result,
            step=result.step,
            step_key=result.step_key,
            piece=result.piece,
            values={"note": "corrected"},
            verdict="fail",
            verdict_reason="re-read",
            recorded_by=cast.technician,
            recorded_at=clock.now(),
            observed_at=result.observed_at,
            reason="re-read the grade",
        ).save()
    rows = csv_rows(client.get(f"/orders/{lot.order.pk}/results.csv").content)
    assert "corrected" not in str(rows) and {r["verdict"] for r in rows} == {"pass"}


def test_another_customer_and_an_outsider_get_404(client, cast, lot):
    for user in (cast.other_customer, cast.outsider):
        client.force_login(user)
        assert client.get(f"/orders/{lot.order.pk}/results.csv").status_code == 404
        assert client.get(f"/orders/{lot.order.pk}/results.xlsx").status_code == 404
