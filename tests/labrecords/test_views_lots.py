"""The first pages walk anonymous, outsider, other customer, allowed users, wrong method."""

import pytest

from tests.factories import LotFactory, OrderFactory, WitnessPieceFactory

pytestmark = pytest.mark.django_db


@pytest.fixture
def lots(cast):
    own = LotFactory(order=OrderFactory(customer=cast.customer_org))
    other = LotFactory(order=OrderFactory(customer=cast.other_org))
    WitnessPieceFactory(lot=own, ident="OWN-W01")
    WitnessPieceFactory(lot=other, ident="OTHER-W01")
    return own, other


def test_anonymous_users_are_sent_to_sign_in(client, lots):
    own, _ = lots
    for url in ("/", f"/lots/{own.pk}/", "/pieces/OWN-W01/", "/methods/"):
        response = client.get(url)
        assert response.status_code == 302
        assert response["Location"].startswith("/login/")


def test_an_outsider_gets_404_for_a_lot_page_and_sees_no_lots(client, cast, lots):
    own, other = lots
    client.force_login(cast.outsider)
    assert client.get(f"/lots/{own.pk}/").status_code == 404
    assert client.get(f"/lots/{other.pk}/").status_code == 404
    assert client.get("/pieces/OWN-W01/").status_code == 404
    home = client.get("/")
    assert own.number not in home.content.decode()


def test_a_customer_sees_its_own_lot_and_gets_404_for_another_customers(client, cast, lots):
    own, other = lots
    client.force_login(cast.customer)
    assert client.get(f"/lots/{own.pk}/").status_code == 200
    assert client.get(f"/lots/{other.pk}/").status_code == 404
    assert client.get("/pieces/OWN-W01/").status_code == 200
    assert client.get("/pieces/OTHER-W01/").status_code == 404
    page = client.get("/").content.decode()
    assert own.number in page and other.number not in page


def test_a_customer_cannot_open_the_method_catalogue(client, cast):
    client.force_login(cast.customer)
    assert client.get("/methods/").status_code == 404


def test_lab_staff_see_every_lot_with_its_stage(client, cast, lots):
    own, other = lots
    client.force_login(cast.technician)
    page = client.get("/").content.decode()
    assert own.number in page and other.number in page and "Planned" in page
    detail = client.get(f"/lots/{own.pk}/").content.decode()
    assert "OWN-W01" in detail


def test_the_lot_page_refuses_post(client, cast, lots):
    own, _ = lots
    client.force_login(cast.engineer)
    assert client.post(f"/lots/{own.pk}/").status_code == 405


def test_the_home_list_does_not_query_per_row(client, cast, django_assert_max_num_queries):
    for _ in range(12):
        LotFactory()
    client.force_login(cast.engineer)
    with django_assert_max_num_queries(12):
        assert client.get("/").status_code == 200
