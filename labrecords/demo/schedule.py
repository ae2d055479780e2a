"""Demo additions for scheduling: resources, lab hours, holidays, a planned maintenance
block and custody moves, made through the real services on the injected clock.

Call after the demo lab is built::

    from labrecords.demo import build, schedule
    lab = build.build()
    schedule.build_demo_schedule(lab)

All names are invented.
"""

from __future__ import annotations

import datetime

from django.db import transaction
from django.utils import timezone

from durability import services as reference
from durability.models import Instrument
from labrecords import clock
from labrecords.models import PlaceKind
from labrecords.roles import Role
from labrecords.services import custody as custody_services
from labrecords.services import resources as resource_services

# ident, name, calendar, kinds, capacity, condition ranges, instrument ident
RESOURCES = [
    (
        "HUM-1",
        "Humidity chamber 1",
        "always",
        ["humidity"],
        12,
        {"temperature_c": [10, 85], "rh_pct": [20, 100]},
        "HC-01",
    ),
    (
        "HUM-2",
        "Humidity chamber 2",
        "always",
        ["humidity"],
        8,
        {"temperature_c": [10, 85], "rh_pct": [20, 100]},
        "HC-02",
    ),
    ("SF-1", "Salt fog cabinet", "always", ["salt_fog"], 20, {"temperature_c": [20, 50]}, "SF-01"),
    (
        "TEMP-1",
        "Temperature chamber",
        "always",
        ["temperature"],
        12,
        {"temperature_c": [-70, 180]},
        "TC-01",
    ),
    (
        "TS-1",
        "Thermal shock pair (hot and cold chamber)",
        "always",
        ["thermal_shock"],
        6,
        {"temperature_c": [-65, 150]},
        "TS-01",
    ),
    ("OVEN-1", "Drying oven", "always", ["temperature"], 16, {"temperature_c": [40, 250]}, "OV-01"),
    (
        "IMM-1",
        "Immersion tank rack",
        "always",
        ["water_solubility", "salt_solubility"],
        10,
        {"temperature_c": [15, 30]},
        None,
    ),
    (
        "ABR-1",
        "Abrasion tester",
        "lab_hours",
        ["moderate_abrasion", "severe_abrasion"],
        1,
        {},
        "AB-01",
    ),
    ("TAPE-1", "Tape and crosshatch bench", "lab_hours", ["adhesion", "crosshatch"], 2, {}, None),
    ("SOLV-1", "Solvent hood", "lab_hours", ["solvent_solubility", "cleanability"], 2, {}, None),
    (
        "SPEC-1",
        "Spectrophotometer station 1",
        "lab_hours",
        ["spectral_measurement"],
        1,
        {},
        "SP-01",
    ),
    (
        "SPEC-2",
        "Spectrophotometer station 2",
        "lab_hours",
        ["spectral_measurement"],
        1,
        {},
        "SP-02",
    ),
    ("INSP-1", "Inspection bench", "lab_hours", ["inspection", "other"], 2, {}, "MS-01"),
]

HOLIDAYS = [(10, "Lab closure"), (24, "Lab closure: stocktaking")]


def _at(day: datetime.date, hour: int, minute: int = 0) -> datetime.datetime:
    return timezone.make_aware(
        datetime.datetime.combine(day, datetime.time(hour, minute)), timezone.get_default_timezone()
    )


def _weekday_on_or_after(day: datetime.date) -> datetime.date:
    while day.weekday() >= 5:
        day += datetime.timedelta(days=1)
    return day


@transaction.atomic
def build_demo_schedule(lab, *, today: datetime.date | None = None) -> dict[str, object]:
    """Add the scheduling demo to a built DemoLab (see labrecords.demo.build.DemoLab).

    Returns what was made: resources, holidays, the maintenance block, custody events.
    """
    today = today or timezone.localdate()
    quality = lab.staff[Role.QUALITY_MANAGER]
    technician = lab.staff[Role.TECHNICIAN]
    setup_day = today - datetime.timedelta(days=60)
    made: dict[str, object] = {}

    with clock.frozen_at(_at(setup_day, 9)):
        if not Instrument.objects.filter(ident="HC-02").exists():
            reference.instrument_create(
                actor=quality,
                ident="HC-02",
                name="Humidity chamber 2",
                kind="humidity chamber",
                calibration_due=today + datetime.timedelta(days=190),
            )
        instruments = {i.ident: i for i in Instrument.objects.all()}
        resources = [
            resource_services.resource_create(
                actor=quality,
                ident=ident,
                name=name,
                calendar=calendar,
                kinds=kinds,
                capacity=capacity,
                condition_ranges=ranges,
                instrument=instruments.get(instrument) if instrument else None,
            )
            for ident, name, calendar, kinds, capacity, ranges, instrument in RESOURCES
        ]
        made["resources"] = resources
        made["lab_hours"] = resource_services.lab_hours_set(
            actor=quality,
            weekdays=[0, 1, 2, 3, 4],
            opens=datetime.time(8, 0),
            closes=datetime.time(17, 0),
            valid_from=setup_day,
        )

    with clock.frozen_at(_at(today - datetime.timedelta(days=7), 10)):
        made["holidays"] = [
            resource_services.lab_holiday_create(
                actor=quality,
                day=_weekday_on_or_after(today + datetime.timedelta(days=d)),
                name=name,
            )
            for d, name in HOLIDAYS
        ]
        hum2 = next(r for r in resources if r.ident == "HUM-2")
        service_day = _weekday_on_or_after(today + datetime.timedelta(days=3))
        made["maintenance"] = resource_services.resource_block_create(
            actor=quality,
            resource=hum2,
            starts_at=_at(service_day, 8),
            ends_at=_at(service_day + datetime.timedelta(days=1), 17),
            reason="planned maintenance: humidifier service and door seal",
        )

    events = []
    for lot in lab.lots[:8]:
        pieces = list(lot.pieces.order_by("ident"))
        if not pieces or lot.received_on is None or lot.received_on >= today:
            continue
        with clock.frozen_at(_at(lot.received_on, 16, 30)):
            for index, piece in enumerate(pieces):
                events.append(
                    custody_services.custody_move(
                        actor=technician,
                        piece=piece,
                        place_kind=PlaceKind.SHELF,
                        place=f"shelf A{1 + index % 4}",
                        note="received with the lot",
                    )
                )
        moved_day = lot.received_on + datetime.timedelta(days=1)
        if moved_day < today:
            with clock.frozen_at(_at(moved_day, 9, 10)):
                events.append(
                    custody_services.custody_move(
                        actor=technician,
                        piece=pieces[0],
                        place_kind=PlaceKind.BENCH,
                        place="inspection bench INSP-1",
                        note="initial inspection",
                    )
                )
            with clock.frozen_at(_at(moved_day, 9, 50)):
                events.append(
                    custody_services.custody_move(
                        actor=technician,
                        piece=pieces[0],
                        place_kind=PlaceKind.SHELF,
                        place="shelf B2",
                        note="back after inspection",
                    )
                )
    made["custody"] = events
    return made
