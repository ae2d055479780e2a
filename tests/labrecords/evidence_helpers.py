"""Set-up for the chamber, spectra and waiting-work tests.

Lots get a plan released through the real planning services; the results of the steps
before the one under test are written as plain StepResult rows (the bench entry's own
rules are tested with the bench), so these tests depend only on the models.
"""

from __future__ import annotations

import datetime
from pathlib import Path
from zoneinfo import ZoneInfo

from django.utils import timezone

from labrecords import clock
from labrecords.models import StepResult, Verdict
from tests.factories import (
    InstrumentFactory,
    LotFactory,
    OrderFactory,
    UserFactory,
    WitnessPieceFactory,
)

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "instrument-files"
LOGGER = FIXTURES / "logger"
SPECTRA = FIXTURES / "spectra"
BERLIN = ZoneInfo("Europe/Berlin")


def berlin(*args: int) -> datetime.datetime:
    return datetime.datetime(*args, tzinfo=BERLIN)


def plan_lot(
    *,
    customer=None,
    callouts: str = "MIL-C-48497A",
    pieces_per_sequence: int = 1,
    released_at: datetime.datetime | None = None,
    due_date=None,
    lot=None,
    **spec,
):
    """A lot with a released plan (made through the planning services at `released_at`)."""
    from durability.models import Method
    from durability.services import catalogue_seed
    from labrecords.services import plans

    if not Method.objects.exists():
        catalogue_seed()
    engineer = UserFactory(username="plan-engineer", roles=["engineer"])
    if lot is None:
        order = (
            OrderFactory(customer=customer, due_date=due_date)
            if customer
            else OrderFactory(due_date=due_date)
        )
        lot = LotFactory(order=order)
    lot.spec.callout_text = callouts
    for name, value in spec.items():
        setattr(lot.spec, name, value)
    lot.spec.save()
    with clock.frozen_at(released_at or berlin(2025, 6, 1, 9)):
        draft = plans.plan_draft_create(
            actor=engineer, lot=lot, pieces_per_sequence=pieces_per_sequence
        )
        needed = sum(s.pieces_needed for s in draft.sequences.all())
        for _ in range(needed - lot.pieces.count()):
            WitnessPieceFactory(lot=lot, glass=lot.spec.glass)
        plans.plan_pieces_assign(actor=engineer, plan=draft)
        return plans.plan_release(actor=engineer, plan=draft, review_items_acknowledged=True)


def sequence_steps(plan, piece):
    assignment = plan.assignments.get(piece=piece)
    return list(assignment.sequence.steps.order_by("order"))


def record_done(piece, step, at: datetime.datetime, user=None) -> StepResult:
    """A current result for the step on the piece, observed at `at`."""
    user = user or UserFactory(username="bench-tech", roles=["technician"])
    return StepResult.objects.create(
        step=step,
        step_key=step.step_key,
        piece=piece,
        verdict=Verdict.PASS,
        verdict_reason="set up for the test",
        recorded_by=user,
        recorded_at=at,
        observed_at=at,
    )


def finish_until(plan, piece, kind: str, at: datetime.datetime) -> list:
    """Record every step of the piece's sequence before the first step of `kind`."""
    done = []
    for index, step in enumerate(sequence_steps(plan, piece)):
        if step.kind == kind:
            return done
        done.append(record_done(piece, step, at + datetime.timedelta(minutes=index)))
    raise AssertionError(f"the piece's sequence has no {kind} step")


def chamber_instruments():
    chamber = InstrumentFactory(
        ident="HC-T1",
        name="Humidity chamber",
        kind="humidity chamber",
        calibration_due=datetime.date(2027, 6, 30),
    )
    logger = InstrumentFactory(
        ident="DL-T1",
        name="Data logger",
        kind="data logger",
        calibration_due=datetime.date(2027, 6, 30),
    )
    return chamber, logger


def local(moment: datetime.datetime) -> datetime.datetime:
    return timezone.localtime(moment)


# The humidity sample log (fixtures/instrument-files/logger) runs 2025-06-10 08:00 to
# 2025-06-11 09:50 Berlin summer time; the chamber tests load, unload and check around it.
HUMIDITY_LOG = (LOGGER / "humidity-24h-gap-excursion.csv").read_bytes()
LOADED = berlin(2025, 6, 10, 8, 0)
UNLOADED = berlin(2025, 6, 11, 9, 50)
NOW = berlin(2025, 6, 12, 9, 0)
