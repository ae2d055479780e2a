"""Lots with complete results, for the review and report tests.

Results are revision rows written directly here (the bench entry services are another
helper's work): each carries who recorded it, when, the verdict and its reason, exactly
as a StepResult row holds them.
"""

from __future__ import annotations

import datetime
from decimal import Decimal

from django.utils import timezone

from labrecords import clock
from labrecords.models import (
    Customer,
    Lot,
    Observation,
    StepResult,
    Verdict,
)
from tests.factories import LotFactory, OrderFactory, released_plan

MOMENT = timezone.make_aware(datetime.datetime(2026, 10, 12, 9, 0), datetime.UTC)
PASSWORD = "correct horse battery"  # tests.factories.UserFactory's password


def values_for(step) -> dict:
    """Plausible entered values for a step kind (invented)."""
    return {
        "adhesion": {"coating_removed": False},
        "crosshatch": {"crosshatch_class": 0, "detached_share_pct": 0.0},
        "humidity": {"inspection": "no defects observed"},
        "moderate_abrasion": {"strokes": 25, "inspection": "no scratches"},
        "severe_abrasion": {"strokes": 20},
        "inspection": {"no_defects": True},
        "spectral_measurement": {"r_average_pct": 0.41},
    }.get(step.kind, {"note": "recorded"})


def record(*, step, piece, by, verdict: str = Verdict.PASS, values: dict | None = None,
           at: datetime.datetime | None = None, **extra) -> StepResult:
    at = at or clock.now()
    result = StepResult(
        step=step, step_key=step.step_key, piece=piece, values=values or values_for(step),
        verdict=verdict, verdict_reason=extra.pop("verdict_reason", f"{step.name}: {verdict} "
                                                  "against the acceptance criterion"),
        verdict_clause=extra.pop("verdict_clause", "clause per method"),
        recorded_by=by, recorded_at=at, observed_at=at - datetime.timedelta(minutes=20),
        **extra)
    result.save()
    return result


def correct(result: StepResult, *, by, reason: str, verdict: str | None = None,
            values: dict | None = None, at: datetime.datetime | None = None) -> StepResult:
    at = at or clock.now()
    correction = StepResult(
        record_key=result.record_key, number=result.number + 1, supersedes=result,
        step=result.step, step_key=result.step_key, piece=result.piece,
        values=values if values is not None else result.values,
        verdict=verdict or result.verdict, verdict_reason=result.verdict_reason,
        verdict_clause=result.verdict_clause, recorded_by=by, recorded_at=at,
        observed_at=result.observed_at, reason=reason)
    correction.save()
    return correction


def finished_lot(cast, *, customer: Customer | None = None, callouts: str = "MIL-C-48497A",
                 fail_one: bool = False, at: datetime.datetime = MOMENT) -> Lot:
    """A lot of `customer` (the cast's own by default) with every planned result recorded
    by the technician, and the initial inspection as an observation."""
    customer = customer or cast.customer_org
    if not (customer.contact_name or customer.address):
        Customer.objects.filter(pk=customer.pk).update(
            contact_name="Ivy Invented", address="9 Made-up Lane, Nowhere")
    lot = LotFactory(order=OrderFactory(customer=customer),
                     received_on=datetime.date(2026, 10, 6))
    with clock.frozen_at(at - datetime.timedelta(days=2)):
        plan = released_plan(lot=lot, callouts=callouts, engineer=cast.engineer)
    with clock.frozen_at(at):
        first = True
        for assignment in plan.assignments.select_related("piece", "sequence"):
            Observation(piece=assignment.piece, point="initial", no_defects=True,
                        recorded_by=cast.technician, recorded_at=at,
                        observed_at=at - datetime.timedelta(hours=1)).save()
            for step in assignment.sequence.steps.order_by("order"):
                verdict = Verdict.PASS
                if fail_one and first and step.kind != "inspection":
                    verdict, first = Verdict.FAIL, False
                record(step=step, piece=assignment.piece, by=cast.technician, verdict=verdict)
    lot.refresh_from_db()
    return lot


def add_uncertainty(result: StepResult, *, by, value: str, unit: str) -> StepResult:
    """A correction that adds the expanded uncertainty to a result."""
    at = clock.now()
    correction = StepResult(
        record_key=result.record_key, number=result.number + 1, supersedes=result,
        step=result.step, step_key=result.step_key, piece=result.piece, values=result.values,
        verdict=result.verdict, verdict_reason=result.verdict_reason, recorded_by=by,
        recorded_at=at, observed_at=result.observed_at, reason="uncertainty added",
        uncertainty=Decimal(value), uncertainty_unit=unit)
    correction.save()
    return correction
