"""Piece labels (PDF with a QR code of the piece page) and piece custody."""

import datetime
import io
from urllib.parse import urlparse

import pytest
from django.core.exceptions import PermissionDenied, ValidationError
from django.urls import resolve
from pypdf import PdfReader

from labrecords import clock
from labrecords.labels import PER_SHEET, labels_pdf
from labrecords.models import CustodyEvent, PieceStatus, PlaceKind, StepResult
from labrecords.selectors_custody import Label
from labrecords.services import custody as custody_services
from tests.factories import LotFactory, OrderFactory, WitnessPieceFactory, released_plan
from tests.labrecords.test_schedule import MONDAY

pytestmark = pytest.mark.django_db


@pytest.fixture
def lot(cast):
    """A lot of the cast's own customer with a released plan (three pieces)."""
    plan = released_plan(
        lot=LotFactory(order=OrderFactory(customer=cast.customer_org)),
        callouts="Coating per MIL-C-48497A, severe abrasion, salt fog",
    )
    return plan.lot


def link_uris(pdf: bytes) -> list[str]:
    reader = PdfReader(io.BytesIO(pdf))
    uris = []
    for page in reader.pages:
        for annotation in page.get("/Annots") or []:
            action = annotation.get_object().get("/A")
            if action is not None and "/URI" in action:
                uris.append(str(action["/URI"]))
    return uris


def test_labels_print_every_piece_with_a_code_that_opens_its_page(client, cast, lot):
    client.force_login(cast.engineer)
    response = client.get(f"/lots/{lot.pk}/labels.pdf")
    assert response.status_code == 200 and response["Content-Type"] == "application/pdf"
    reader = PdfReader(io.BytesIO(response.content))
    assert len(reader.pages) == 1
    # A4 is 210 × 297 mm (ISO 216) = 595.28 × 841.89 pt.
    box = reader.pages[0].mediabox
    assert (round(float(box.width), 1), round(float(box.height), 1)) == (595.3, 841.9)
    text = reader.pages[0].extract_text()
    pieces = list(lot.pieces.order_by("ident"))
    for piece in pieces:
        assert piece.ident in text
    assert f"Lot {lot.number}" in text and "Seq. A" in text
    uris = link_uris(response.content)
    assert len(uris) == len(pieces)
    for uri, piece in zip(uris, pieces, strict=True):
        # settings.REPORT_VERIFY_BASE_URL is http://testserver in the test settings.
        assert uri == f"http://testserver/pieces/{piece.ident}/"
        match = resolve(urlparse(uri).path)
        assert match.view_name == "labrecords:piece-detail"
        assert match.kwargs == {"ident": piece.ident}
        assert client.get(urlparse(uri).path).status_code == 200


def test_labels_skip_used_places_and_run_onto_a_second_sheet():
    labels = [
        Label(
            piece=f"L1-W{n:02d}",
            lot="L1",
            glass="Crown ÄÖ ≤",
            sequence="A",
            url=f"https://lab.invalid/pieces/L1-W{n:02d}/",
        )
        for n in range(1, 6)
    ]
    pdf = labels_pdf(labels, title="t", skip=PER_SHEET - 2)
    reader = PdfReader(io.BytesIO(pdf))
    assert len(reader.pages) == 2
    assert "L1-W01" in reader.pages[0].extract_text()
    assert "L1-W03" in reader.pages[1].extract_text()
    assert len(link_uris(pdf)) == 5


def test_label_sheets_are_for_lab_staff_only(client, cast, lot):
    assert client.get(f"/lots/{lot.pk}/labels.pdf").status_code == 302
    for user in (cast.customer, cast.other_customer, cast.outsider):
        client.force_login(user)
        assert client.get(f"/lots/{lot.pk}/labels.pdf").status_code == 404
    client.force_login(cast.technician)
    assert client.post(f"/lots/{lot.pk}/labels.pdf").status_code == 405


def test_the_latest_custody_event_is_where_the_piece_is(client, cast, lot):
    piece = lot.pieces.order_by("ident").first()
    with clock.frozen_at(MONDAY):
        custody_services.custody_move(
            actor=cast.technician, piece=piece, place_kind=PlaceKind.SHELF, place="shelf A1"
        )
    client.force_login(cast.technician)
    with clock.frozen_at(MONDAY + datetime.timedelta(hours=2)):
        response = client.post(
            f"/pieces/{piece.ident}/custody/move/",
            {"place_kind": "chamber", "place": "HUM-1", "note": "humidity run"},
        )
    assert response.status_code == 302
    page = client.get(f"/pieces/{piece.ident}/")
    custody = page.context["custody"]
    assert [e.place for e in custody.events] == ["shelf A1", "HUM-1"]
    assert custody.current.place == "HUM-1" and custody.current.moved_by == cast.technician
    assert "Now: <b>Chamber</b>, HUM-1" in page.content.decode()
    # The history is the lab's: a customer sees the piece but not its custody.
    client.force_login(cast.customer)
    page = client.get(f"/pieces/{piece.ident}/")
    assert page.status_code == 200 and page.context["custody"] is None
    assert "Custody" not in page.content.decode()


def test_custody_actions_check_role_and_access(client, cast, lot):
    piece = lot.pieces.first()
    url = f"/pieces/{piece.ident}/custody/move/"
    data = {"place_kind": "shelf", "place": "B1"}
    assert client.post(url, data).status_code == 302  # to sign in
    client.force_login(cast.other_customer)
    assert client.post(url, data).status_code == 404
    client.force_login(cast.customer)
    assert client.post(url, data).status_code == 404
    client.force_login(cast.reviewer)
    assert client.post(url, data).status_code == 403
    client.force_login(cast.technician)
    assert client.get(url).status_code == 405
    assert not CustodyEvent.objects.exists()
    with pytest.raises(PermissionDenied):
        custody_services.custody_move(
            actor=cast.reviewer, piece=piece, place_kind=PlaceKind.SHELF, place="B1"
        )


def test_disposal_is_refused_before_the_retention_date(client, cast, lot):
    piece = lot.pieces.first()
    StepResult.objects.create(
        step=lot.plans.get().steps.first(),
        step_key=lot.plans.get().steps.first().step_key,
        piece=piece,
        verdict="pass",
        verdict_reason="set-up",
        recorded_by=cast.technician,
        recorded_at=MONDAY,
        observed_at=MONDAY,
    )
    with clock.frozen_at(MONDAY):
        with pytest.raises(ValidationError, match="no report is issued"):
            custody_services.custody_dispose(actor=cast.technician, piece=piece, note="bin")
        with pytest.raises(ValidationError, match="give the date"):
            custody_services.custody_retain(actor=cast.technician, piece=piece, place="R2")
        custody_services.custody_retain(
            actor=cast.technician,
            piece=piece,
            place="retain cabinet R2",
            retain_until=datetime.date(2026, 12, 1),
        )
        with pytest.raises(ValidationError, match="never shortened"):
            custody_services.custody_retain(
                actor=cast.technician,
                piece=piece,
                place="R2",
                retain_until=datetime.date(2026, 11, 30),
            )
    piece.refresh_from_db()
    assert piece.status == PieceStatus.TESTED
    client.force_login(cast.technician)
    with clock.frozen_at(MONDAY):
        response = client.post(f"/pieces/{piece.ident}/custody/dispose/", {"note": "bin"})
    assert response.status_code == 302
    messages = [str(m) for m in response.wsgi_request._messages]
    assert any("kept for re-inspection until 2026-12-01" in m for m in messages)
    # On the retention date itself the piece may go (kept until that date).
    with clock.frozen_at(MONDAY.replace(month=12, day=1, hour=10)):
        custody_services.custody_dispose(actor=cast.technician, piece=piece, note="glass waste bin")
        with pytest.raises(ValidationError, match="was disposed of"):
            custody_services.custody_move(
                actor=cast.technician, piece=piece, place_kind=PlaceKind.SHELF, place="A1"
            )
    piece.refresh_from_db()
    assert piece.status == PieceStatus.DISPOSED
    assert piece.custody.order_by("-moved_at", "-id").first().place_kind == PlaceKind.DISPOSED


def test_an_untested_spare_piece_may_be_disposed_of(cast, lot):
    spare = WitnessPieceFactory(lot=lot, glass=lot.spec.glass)
    with clock.frozen_at(MONDAY):
        event = custody_services.custody_dispose(
            actor=cast.engineer, piece=spare, note="chipped on arrival"
        )
    assert event.place_kind == PlaceKind.DISPOSED
