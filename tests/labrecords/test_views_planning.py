"""The engineer's screens: spec check, glass cautions, witness allocation, the plan."""

import pytest

from durability.models import Method
from durability.services import catalogue_seed
from labrecords.models import PlanStatus, TestPlan
from tests.factories import (
    GlassFactory,
    LotFactory,
    OrderFactory,
    WitnessStockFactory,
    released_plan,
)

pytestmark = pytest.mark.django_db


@pytest.fixture
def lot(cast):
    glass = GlassFactory(
        name="Test crown",
        acid_class="4",
        alkali_class="2",
        phosphate_class="3",
        expansion_per_k_e6="9.5",
    )
    lot = LotFactory(order=OrderFactory(customer=cast.customer_org), spec__glass=glass)
    lot.spec.glass = glass
    lot.spec.callout_text = "MIL-C-48497A"
    lot.spec.save()
    return lot


def test_the_spec_page_shows_what_is_missing_with_questions_and_glass_cautions(client, cast, lot):
    client.force_login(cast.engineer)
    page = client.get(f"/specs/{lot.spec.pk}/").content.decode()
    assert "Spec check" in page
    assert "wavelength" in page.lower() and "?" in page  # a question to ask the customer
    assert "Glass cautions" in page and "ultrasonic" in page.lower()
    assert "MIL-C-48497A" in page  # the callout as read


def test_a_customer_sees_its_spec_without_the_engineering_sections(client, cast, lot):
    client.force_login(cast.customer)
    page = client.get(f"/specs/{lot.spec.pk}/").content.decode()
    assert "Spec check" not in page
    client.force_login(cast.other_customer)
    assert client.get(f"/specs/{lot.spec.pk}/").status_code == 404
    client.force_login(cast.outsider)
    assert client.get(f"/specs/{lot.spec.pk}/").status_code == 404


def test_saving_callouts_needs_the_engineer_role_and_a_reason(client, cast, lot):
    url = f"/specs/{lot.spec.pk}/callouts/"
    client.force_login(cast.technician)
    assert client.post(url, {"callout_text": "x", "reason": "y"}).status_code == 403
    client.force_login(cast.engineer)
    client.post(url, {"callout_text": "ISO 9022-12-06-1", "reason": ""})
    lot.spec.refresh_from_db()
    assert lot.spec.callout_text == "MIL-C-48497A"  # nothing changed without a reason
    client.post(url, {"callout_text": "ISO 9022-12-06-1", "reason": "customer drawing rev B"})
    lot.spec.refresh_from_db()
    assert lot.spec.callout_text == "ISO 9022-12-06-1"
    assert client.get(url).status_code == 405


def test_allocating_witness_pieces_decrements_stock_and_refuses_too_many(client, cast, lot):
    from labrecords.services.lots import stock_on_hand, stock_receive

    stock = WitnessStockFactory(glass=lot.spec.glass)
    stock_receive(actor=cast.technician, stock=stock, count=3)
    client.force_login(cast.engineer)
    url = f"/specs/{lot.spec.pk}/allocate/"
    client.post(url, {"lot": lot.pk, "stock": stock.pk, "count": 2})
    assert lot.pieces.count() == 2 and stock_on_hand(stock) == 1
    response = client.post(url, {"lot": lot.pk, "stock": stock.pk, "count": 5}, follow=True)
    assert "Only 1 piece" in response.content.decode()
    assert lot.pieces.count() == 2 and stock_on_hand(stock) == 1


def test_an_engineer_makes_assigns_and_releases_a_plan_from_the_screen(client, cast, lot):
    catalogue_seed()
    client.force_login(cast.engineer)
    client.post(f"/lots/{lot.pk}/plan/new/", {"pieces_per_sequence": 1, "spare_pieces": 0})
    plan = TestPlan.objects.get(lot=lot)
    page = client.get(f"/lots/{lot.pk}/plan/").content.decode()
    assert "Humidity" in page
    assert "safety data sheets" in page  # the hazard cautions shown on each step
    from tests.factories import WitnessPieceFactory

    for _ in range(sum(s.pieces_needed for s in plan.sequences.all())):
        WitnessPieceFactory(lot=lot)
    client.post(f"/lots/{lot.pk}/plan/assign/")
    client.post(f"/lots/{lot.pk}/plan/release/", {"review_items_acknowledged": "on"})
    plan.refresh_from_db()
    assert plan.status == PlanStatus.RELEASED and plan.released_by == cast.engineer


def test_plan_pages_refuse_customers_and_technicians_cannot_release(client, cast, lot):
    plan = released_plan(lot=LotFactory(order=lot.order), engineer=cast.engineer)
    client.force_login(cast.customer)
    assert client.get(f"/lots/{plan.lot.pk}/plan/").status_code == 404
    client.force_login(cast.technician)
    assert client.get(f"/lots/{plan.lot.pk}/plan/").status_code == 200
    assert client.post(f"/lots/{plan.lot.pk}/plan/revise/", {"reason": "x"}).status_code == 403


def test_the_catalogue_filters_by_verification_status(client, cast):
    catalogue_seed()
    client.force_login(cast.engineer)
    page = client.get("/methods/?status=to_be_entered").content.decode()
    assert "ISO 9022-2:12" in page  # its severity table is to be entered by the lab
    page = client.get("/methods/?status=confirmed").content.decode()
    assert "ISO 9022-2:12" not in page


def test_a_quality_manager_confirms_a_value_as_a_new_version(client, cast):
    catalogue_seed()
    method = Method.objects.get(code="MIL-C-48497A:humidity")
    client.force_login(cast.engineer)
    url = f"/methods/{method.code}/confirm/"
    assert (
        client.post(url, {"parameter": "temperature_tolerance_c", "copy": "x"}).status_code == 403
    )
    client.force_login(cast.quality_manager)
    client.post(
        url,
        {
            "parameter": "temperature_tolerance_c",
            "value": "2.2",
            "copy": "lab copy of MIL-C-48497A amendment 3",
        },
    )
    current = method.current_version()
    assert current.number == 2
    status = current.parameter_status["temperature_tolerance_c"]
    assert status["status"] == "confirmed" and status["copy"].startswith("lab copy")
    assert float(current.temperature_tolerance_c) == 2.2
    assert method.versions.get(number=1).temperature_tolerance_c is not None  # v1 unchanged
    page = client.get(f"/methods/{method.code}/").content.decode()
    assert "Confirmed" in page and "v2" in page


def test_a_quality_manager_adds_an_edition_and_a_lab_procedure(client, cast):
    from durability.models import Standard

    catalogue_seed()
    client.force_login(cast.engineer)
    assert client.get("/methods/standards/new/").status_code == 403
    client.force_login(cast.quality_manager)
    client.post("/methods/standards/new/", {"designation": "ISO 9211-4", "edition": "2022",
                                             "title": "abrasion, adhesion and resistance to water",
                                             "status": "active"})
    assert Standard.objects.filter(designation="ISO 9211-4", edition="2022").exists()
    lab = Standard.objects.get(designation="LAB")
    response = client.post("/methods/procedures/new/", {
        "code": "LAB:boil-tape", "standard": lab.pk, "name": "Boiling water then tape",
        "kind": "adhesion", "parameters": "duration_h = 1 h\nwater = deionised",
        "acceptance_text": "no coating removed", "hazards": ["boiling_water"]})
    assert response.status_code == 302
    method = Method.objects.get(code="LAB:boil-tape")
    version = method.current_version()
    assert method.lab_procedure and version.number == 1 and float(version.duration_h) == 1
    assert version.extra["water"] == "deionised"
    page = client.get(f"/methods/{method.code}/").content.decode()
    assert "Boiling water" in page and "safety data sheets" in page


def test_a_bad_parameter_line_names_the_line_and_saves_nothing(client, cast):
    from durability.models import Standard

    catalogue_seed()
    client.force_login(cast.quality_manager)
    lab = Standard.objects.get(designation="LAB")
    response = client.post("/methods/procedures/new/", {
        "code": "LAB:x", "standard": lab.pk, "name": "X", "kind": "other",
        "parameters": "duration_h = 1 h\nthis line has no equals sign",
        "acceptance_text": "y"})
    assert response.status_code == 200
    assert "Line 2" in response.content.decode()
    assert not Method.objects.filter(code="LAB:x").exists()
