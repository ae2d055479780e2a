"""factory_boy factories for test setup. Records under test are made through services."""

import datetime
from decimal import Decimal

import factory
from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group

from durability.models import Coater, CoatingDesign, Glass, Instrument, WitnessStock
from labrecords.models import CoatingSpec, Customer, CustomerUser, Lot, Order, WitnessPiece


class UserFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = get_user_model()
        django_get_or_create = ("username",)
        skip_postgeneration_save = True

    username = factory.Sequence(lambda n: f"user{n}")
    first_name = "Test"
    last_name = factory.Sequence(lambda n: f"Person{n}")
    password = factory.django.Password("correct horse battery")

    @factory.post_generation
    def roles(self, create, extracted, **kwargs):
        for role in extracted or ():
            group, _ = Group.objects.get_or_create(name=str(role))
            self.groups.add(group)


class CustomerFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Customer

    name = factory.Sequence(lambda n: f"Invented Optics {n}")
    code = factory.Sequence(lambda n: f"C{n:03d}")


def customer_user(customer: Customer, username: str):
    user = UserFactory(username=username, roles=["customer"])
    CustomerUser.objects.create(user=user, customer=customer)
    return user


class GlassFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Glass
        django_get_or_create = ("name",)

    name = factory.Sequence(lambda n: f"Crown {n}")
    n_d = Decimal("1.51680")
    v_d = Decimal("64.17")


class CoatingDesignFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = CoatingDesign

    code = factory.Sequence(lambda n: f"D-{n:03d}")
    name = "Single-layer AR"
    coating_type = "single_layer_ar"
    materials = "MgF2"


class CoaterFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Coater
        django_get_or_create = ("name",)

    name = factory.Sequence(lambda n: f"Coater {n}")


class OrderFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Order

    customer = factory.SubFactory(CustomerFactory)
    number = factory.Sequence(lambda n: f"O-{n:05d}")
    customer_order_number = factory.Sequence(lambda n: f"PO-{n}")
    received_on = datetime.date(2026, 10, 1)


class CoatingSpecFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = CoatingSpec

    order = factory.SubFactory(OrderFactory)
    part_number = factory.Sequence(lambda n: f"P-{n:04d}")
    glass = factory.SubFactory(GlassFactory)


class LotFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Lot

    order = factory.SubFactory(OrderFactory)
    spec = factory.LazyAttribute(lambda o: CoatingSpecFactory(order=o.order))
    number = factory.Sequence(lambda n: f"L{n:05d}")
    design = factory.SubFactory(CoatingDesignFactory)
    coater = factory.SubFactory(CoaterFactory)
    run_date = datetime.date(2026, 10, 5)
    parts = "test lenses"
    quantity = 10


class WitnessPieceFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = WitnessPiece

    lot = factory.SubFactory(LotFactory)
    ident = factory.Sequence(lambda n: f"W{n:05d}")
    glass = factory.SubFactory(GlassFactory)


class WitnessStockFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = WitnessStock

    glass = factory.SubFactory(GlassFactory)
    form = factory.Sequence(lambda n: f"25 mm × 3 mm batch {n}")


class InstrumentFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Instrument

    ident = factory.Sequence(lambda n: f"INS-{n:03d}")
    name = "Humidity chamber"
    kind = "humidity chamber"
    calibration_due = datetime.date(2027, 6, 30)


def released_plan(
    *, lot=None, callouts: str = "MIL-C-48497A", engineer=None, pieces: int | None = None
):
    """A lot with a plan released through the real services (seeds the catalogue if empty).

    Returns the released TestPlan; its lot has just enough witness pieces.
    """
    from durability.models import Method
    from durability.services import catalogue_seed
    from labrecords.services import plans

    if not Method.objects.exists():
        catalogue_seed()
    engineer = engineer or UserFactory(username="plan-engineer", roles=["engineer"])
    lot = lot or LotFactory()
    lot.spec.callout_text = callouts
    lot.spec.save()
    draft = plans.plan_draft_create(actor=engineer, lot=lot)
    needed = sum(s.pieces_needed for s in draft.sequences.all()) if pieces is None else pieces
    for _ in range(needed - lot.pieces.count()):
        WitnessPieceFactory(lot=lot, glass=lot.spec.glass)
    plans.plan_pieces_assign(actor=engineer, plan=draft)
    return plans.plan_release(actor=engineer, plan=draft, review_items_acknowledged=True)
