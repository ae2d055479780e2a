"""Build the demo lab through the real services, on an injected clock.

Every demo record is made by the same service a person would use, at the
moment it would have been made in the invented history, so the audit trail
reads like three months of real work.
"""

from __future__ import annotations

import datetime
import random
from dataclasses import dataclass, field
from decimal import Decimal

from django.contrib.auth import get_user_model
from django.db import transaction
from django.utils import timezone

from durability import services as reference
from durability.models import Coater, CoatingDesign, Glass, WitnessStock
from labrecords import clock
from labrecords.demo import scenario
from labrecords.roles import Role
from labrecords.services import customers as customer_services
from labrecords.services import lots as lot_services
from labrecords.services import observations as observation_services
from labrecords.services import orders as order_services
from labrecords.services import plans as plan_services

LOT_COUNT = 40
HISTORY_DAYS = 90


@dataclass
class DemoLab:
    staff: dict[str, object] = field(default_factory=dict)
    lots: list = field(default_factory=list)


def logins() -> list[tuple[str, str, str]]:
    """(user name, password, role) for every demo login."""
    from labrecords.demo.reports import SECOND_REVIEWER

    rows = [(u, pw, role) for u, _, role, pw in scenario.STAFF]
    username, _, password = SECOND_REVIEWER
    if get_user_model().objects.filter(username=username).exists():
        rows.append((username, password, "reviewer and engineer"))
    rows += [(u, pw, f"customer ({code})") for u, _, code, pw in scenario.CUSTOMER_USERS]
    return rows


def already_built() -> bool:
    return get_user_model().objects.filter(username=scenario.STAFF[0][0]).exists()


def _at(day: datetime.date, hour: int, minute: int = 0) -> datetime.datetime:
    local = datetime.datetime.combine(day, datetime.time(hour, minute))
    return timezone.make_aware(local, timezone.get_default_timezone())


@transaction.atomic
def build_all(*, today: datetime.date | None = None) -> DemoLab:
    """The whole demo: the lab and its lots, then each later stage of their history."""
    from labrecords.demo import bench, evidence, reports, schedule

    lab = build(today=today)
    bench.record_demo_results(lab)
    evidence.check_bench_runs(lab)
    evidence.record_demo_evidence(lab)
    reports.issue_demo_reports(lab)
    schedule.build_demo_schedule(lab, today=today)
    return lab


@transaction.atomic
def build(*, today: datetime.date | None = None, seed: int = 2026) -> DemoLab:
    """Create the whole demo lab. Call only on a database without it (see already_built)."""
    rng = random.Random(seed)
    today = today or timezone.localdate()
    start = today - datetime.timedelta(days=HISTORY_DAYS + 5)
    lab = DemoLab()

    with clock.frozen_at(_at(start, 8)):
        customer_services.roles_ensure()
        admin_row = next(row for row in scenario.STAFF if row[2] == Role.ADMINISTRATOR)
        admin = customer_services.user_create(
            actor=None,
            username=admin_row[0],
            password=admin_row[3],
            full_name=admin_row[1],
            roles=[Role.ADMINISTRATOR],
        )
        lab.staff[Role.ADMINISTRATOR] = admin
        for username, full_name, role, password in scenario.STAFF:
            if role == Role.ADMINISTRATOR:
                continue
            lab.staff[Role(role)] = customer_services.user_create(
                actor=admin,
                username=username,
                password=password,
                full_name=full_name,
                roles=[Role(role)],
            )
    engineer = lab.staff[Role.ENGINEER]
    quality = lab.staff[Role.QUALITY_MANAGER]
    technician = lab.staff[Role.TECHNICIAN]

    with clock.frozen_at(_at(start, 9)):
        reference.lab_profile_set(actor=admin, name=scenario.LAB_NAME,
                                  address=scenario.LAB_ADDRESS,
                                  accreditation="demo only: no accreditation")
        glasses = {
            row["name"]: reference.glass_create(actor=admin, **row) for row in scenario.GLASSES
        }
        coaters = [
            reference.coater_create(actor=admin, name=n, description=d) for n, d in scenario.COATERS
        ]
        designs = [
            reference.coating_design_create(
                actor=admin,
                code=code,
                name=name,
                coating_type=kind,
                materials=materials,
                layer_count=layers,
                process=process,
                design_wavelength_nm=wl,
                n_eff=n_eff,
            )
            for code, name, kind, materials, layers, process, wl, n_eff in scenario.DESIGNS
        ]
        for ident, name, kind, due_in_days, in_service in scenario.INSTRUMENTS:
            reference.instrument_create(
                actor=quality,
                ident=ident,
                name=name,
                kind=kind,
                in_service=in_service,
                calibration_due=today + datetime.timedelta(days=due_in_days),
            )
        stocks: dict[str, WitnessStock] = {}
        for glass_name, form, count in scenario.STOCK:
            stock = reference.witness_stock_create(
                actor=admin, glass=glasses[glass_name], form=form
            )
            lot_services.stock_receive(
                actor=technician, stock=stock, count=count, note="opening stock"
            )
            stocks[glass_name] = stock
        customers = {}
        for name, code, contact in scenario.CUSTOMERS:
            customers[code] = customer_services.customer_create(
                actor=admin,
                name=name,
                code=code,
                contact_name=contact,
                address=f"{rng.randint(2, 98)} Invented Road, Nowhere Bay",
            )
        for username, full_name, code, password in scenario.CUSTOMER_USERS:
            customer_services.user_create(
                actor=admin,
                username=username,
                password=password,
                full_name=full_name,
                roles=[Role.CUSTOMER],
                customer=customers[code],
            )

    glass_list = list(glasses.values())
    for index in range(LOT_COUNT):
        received = start + datetime.timedelta(days=5 + index * HISTORY_DAYS // LOT_COUNT)
        customer = customers[scenario.CUSTOMERS[index % len(scenario.CUSTOMERS)][1]]
        design = designs[(index * 7) % len(designs)]
        glass = glass_list[(index * 5) % len(glass_list)]
        lab.lots.append(
            _order_and_lot(
                index=index,
                rng=rng,
                received=received,
                customer=customer,
                design=design,
                glass=glass,
                coater=coaters[index % len(coaters)],
                stock=stocks[glass.name],
                engineer=engineer,
                technician=technician,
            )
        )
    for lot in lab.lots:
        if lot.run_date <= today - datetime.timedelta(days=PLAN_AFTER_DAYS):
            _release_plan(lot=lot, stock=stocks[lot.spec.glass.name], engineer=engineer)
    return lab


# Lots coated at least this long ago have a released plan; newer ones wait for the engineer.
PLAN_AFTER_DAYS = 6


def _release_plan(*, lot, stock: WitnessStock, engineer) -> None:
    """Plan a lot from its callouts and release it, as the engineer did the day after coating.

    A lot whose callouts need engineering review before anything can be planned keeps its
    draft, so the demo shows one waiting for the engineer.
    """
    with clock.frozen_at(_at(lot.run_date + datetime.timedelta(days=1), 11)):
        draft = plan_services.plan_draft_create(actor=engineer, lot=lot)
        if not draft.sequences.exists():
            return
        needed = sum(s.pieces_needed for s in draft.sequences.all()) - lot.pieces.count()
        if needed > 0:
            lot_services.witness_pieces_allocate(actor=engineer, lot=lot, stock=stock, count=needed)
        plan_services.plan_pieces_assign(actor=engineer, plan=draft)
        plan_services.plan_release(actor=engineer, plan=draft, review_items_acknowledged=True)


def _spec_fields(
    index: int, rng: random.Random, design: CoatingDesign, glass: Glass
) -> dict[str, object]:
    """A coating spec as an invented drawing states it; some leave essentials out on purpose."""
    fields: dict[str, object] = {
        "title": scenario.PARTS[design.code][0],
        "glass": glass,
        "callout_text": scenario.CALLOUTS[index % len(scenario.CALLOUTS)],
        "sides_coated": 2 if design.coating_type.endswith("_ar") else 1,
    }
    if design.coating_type in {"single_layer_ar", "multilayer_ar"}:
        fields.update(
            wavelength_min_nm=Decimal("400"),
            wavelength_max_nm=Decimal("700"),
            quantity="R",
            statistic="average",
            limit_max_pct=Decimal("0.5"),
            aoi_min_deg=Decimal("0"),
            aoi_max_deg=Decimal("15"),
        )
    elif design.coating_type in {"metal_mirror", "protected_metal_mirror"}:
        fields.update(
            wavelength_min_nm=Decimal("450"),
            wavelength_max_nm=Decimal("650"),
            quantity="R",
            statistic="average",
            limit_min_pct=Decimal("87"),
            aoi_min_deg=Decimal("40"),
            aoi_max_deg=Decimal("50"),
        )
    elif design.code == "HR-1064":
        fields.update(
            wavelength_min_nm=Decimal("1054"),
            wavelength_max_nm=Decimal("1074"),
            quantity="R",
            statistic="absolute",
            limit_min_pct=Decimal("99.5"),
            aoi_min_deg=Decimal("45"),
            aoi_max_deg=Decimal("45"),
            polarization="s",
            laser_damage="certification at 10 J/cm², 10 ns, 1064 nm",
        )
    elif design.code == "BS-5050":
        fields.update(
            wavelength_min_nm=Decimal("500"),
            wavelength_max_nm=Decimal("700"),
            quantity="T",
            statistic="average",
            limit_min_pct=Decimal("45"),
            limit_max_pct=Decimal("55"),
            aoi_min_deg=Decimal("45"),
            aoi_max_deg=Decimal("45"),
        )
    else:
        fields.update(
            wavelength_min_nm=Decimal("660"),
            wavelength_max_nm=Decimal("900"),
            quantity="T",
            statistic="average",
            limit_min_pct=Decimal("90"),
            aoi_min_deg=Decimal("0"),
            aoi_max_deg=Decimal("20"),
        )
    if index % 3 != 1:
        fields["clear_aperture_mm"] = Decimal(rng.choice(["18", "22.5", "36", "45"]))
    if index % 4 == 0:
        fields.update(
            witness_requirement="two witness pieces per run",
            documentation="certificate of conformance",
            marking="none",
            packaging="lens tissue and foam box",
        )
    if index % 5 == 2:
        fields.pop("aoi_min_deg", None)
        fields.pop("aoi_max_deg", None)
    return fields


def _order_and_lot(
    *,
    index: int,
    rng: random.Random,
    received: datetime.date,
    customer,
    design: CoatingDesign,
    glass: Glass,
    coater: Coater,
    stock: WitnessStock,
    engineer,
    technician,
):
    number = f"SO-{received:%y}-{index + 101:03d}"
    with clock.frozen_at(_at(received, 10)):
        order = order_services.order_create(
            actor=engineer,
            customer=customer,
            number=number,
            customer_order_number=f"PO-{customer.code}-{4100 + index * 3}",
            received_on=received,
            due_date=received + datetime.timedelta(days=rng.choice([21, 28, 35])),
        )
        stem = scenario.PARTS[design.code][1]
        spec = order_services.coating_spec_create(
            actor=engineer,
            order=order,
            part_number=f"{stem}{2000 + index * 11}",
            **_spec_fields(index, rng, design, glass),
        )
    run_date = received + datetime.timedelta(days=rng.choice([2, 3, 4]))
    with clock.frozen_at(_at(run_date, 16)):
        lot = lot_services.lot_create(
            actor=engineer,
            order=order,
            spec=spec,
            number=f"L{run_date:%y}-{index + 1:04d}",
            design=design,
            coater=coater,
            run_date=run_date,
            parts=f"{spec.title}, part {spec.part_number}",
            quantity=rng.choice([6, 12, 24, 40]),
            received_on=run_date,
        )
        pieces = lot_services.witness_pieces_allocate(
            actor=engineer,
            lot=lot,
            stock=stock,
            count=rng.choice([3, 4, 5, 6]),
            positions=["dome ring 1", "dome ring 2", "dome ring 3", "centre", "edge", "ring 2 b"],
        )
    inspected = run_date + datetime.timedelta(days=1)
    if inspected < timezone.localdate():
        for piece in pieces:
            with clock.frozen_at(_at(inspected, 9, 30)):
                observation_services.observation_record(
                    actor=technician,
                    piece=piece,
                    point="initial",
                    observed_at=_at(inspected, 9, 15),
                    no_defects=True,
                    lighting="dark-field, 1000 lx",
                    background="matte black",
                    magnification="unaided eye",
                )
    if index == 3 and inspected < timezone.localdate():
        first = pieces[0].observations.get()
        with clock.frozen_at(_at(inspected, 14)):
            observation_services.observation_correct(
                actor=technician,
                revision=first,
                reason="a small stain near the edge was missed at the first look",
                no_defects=False,
                defects=[
                    {
                        "defect": "stain_discoloration",
                        "zone": "edge, 2 o'clock",
                        "extent": "about 1 mm",
                        "quantity": 1,
                        "size": 1,
                        "intensity": 1,
                    }
                ],
                lighting=first.lighting,
                background=first.background,
                magnification=first.magnification,
            )
    return lot
