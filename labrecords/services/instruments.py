"""Instruments: calibration status, and what follows when one is found out of tolerance.

Calibration status is computed from the due date, never stored: an instrument
is valid THROUGH its calibration due date and out of calibration from the day
after (the same convention as `durability.verdicts`).

When the quality manager records that an instrument was found out of tolerance
since a date, every current result that used it since then (directly, or
through a chamber run whose chamber or logger it is) is listed, with every
issued report covering one of those results, and a nonconformance of kind
"equipment" is opened for each result that has none yet.
"""

from __future__ import annotations

import datetime
from dataclasses import dataclass, field
from enum import StrEnum

from django.core.exceptions import ValidationError
from django.db import transaction
from django.db.models import Q
from django.utils import timezone

from durability import services as reference
from durability.models import Instrument
from labrecords import clock
from labrecords.access import require_role
from labrecords.models import (
    InstrumentDeviation,
    Nonconformance,
    NonconformanceKind,
    Report,
    StepResult,
)
from labrecords.roles import Role
from labrecords.services.audit import audit_record, create_audited
from labrecords.services.nonconformances import nonconformance_open

# A month's notice to book a calibration before it falls due (common practice).
DUE_SOON_DAYS = 30


class CalibrationStatus(StrEnum):
    VALID = "valid"
    DUE_SOON = "due_soon"
    OUT_OF_CALIBRATION = "out_of_calibration"
    OUT_OF_SERVICE = "out_of_service"


@dataclass(frozen=True)
class CalibrationState:
    """An instrument's calibration status on a day, with the words to show."""

    status: CalibrationStatus
    label: str


def calibration_state(*, calibration_due: datetime.date, today: datetime.date,
                      in_service: bool = True,
                      due_soon_days: int = DUE_SOON_DAYS) -> CalibrationState:
    """The status on `today`: valid through the due date, due soon within `due_soon_days`
    of it, out of calibration from the day after; out of service overrides."""
    if not in_service:
        return CalibrationState(CalibrationStatus.OUT_OF_SERVICE, "out of service")
    if today > calibration_due:
        since = calibration_due + datetime.timedelta(days=1)
        return CalibrationState(CalibrationStatus.OUT_OF_CALIBRATION,
                                f"out of calibration since {since.isoformat()}")
    left = (calibration_due - today).days
    if left <= due_soon_days:
        days = "today is the last valid day" if left == 0 else f"{left} day(s) left"
        return CalibrationState(CalibrationStatus.DUE_SOON,
                                f"due soon: valid through {calibration_due.isoformat()} ({days})")
    return CalibrationState(CalibrationStatus.VALID,
                            f"valid through {calibration_due.isoformat()}")


def instrument_state(instrument: Instrument, today: datetime.date | None = None
                     ) -> CalibrationState:
    """The instrument's calibration status today (the lab's date)."""
    return calibration_state(calibration_due=instrument.calibration_due,
                             today=today or timezone.localdate(clock.now()),
                             in_service=instrument.in_service)


@dataclass
class DeviationOutcome:
    """What recording a deviation found and opened."""

    deviation: InstrumentDeviation
    results: list[StepResult] = field(default_factory=list)
    reports: list[Report] = field(default_factory=list)
    nonconformances: list[Nonconformance] = field(default_factory=list)


def results_using_instrument_since(instrument: Instrument, since: datetime.date
                                   ) -> list[StepResult]:
    """Current results that used the instrument on or after `since` (the lab's date):
    linked to it directly, or exposed in a chamber run it served as chamber or logger."""
    start = timezone.make_aware(datetime.datetime.combine(since, datetime.time.min))
    direct = Q(instrument_links__instrument=instrument, observed_at__gte=start)
    through_run = (Q(chamber_run__chamber=instrument) | Q(chamber_run__logger=instrument)) & (
        Q(chamber_run__unloaded_at__gte=start) | Q(chamber_run__unloaded_at__isnull=True))
    return list(
        StepResult.objects.current().filter(direct | through_run).distinct()
        .select_related("piece__lot", "step", "chamber_run", "recorded_by")
        .order_by("observed_at", "pk"))


def reports_covering(results: list[StepResult]) -> list[Report]:
    """Issued reports whose review covered any revision of these results."""
    keys = {r.record_key for r in results}
    if not keys:
        return []
    return list(Report.objects.filter(review__covered__result__record_key__in=keys)
                .distinct().select_related("lot").order_by("issued_at"))


@transaction.atomic
def instrument_deviation_record(*, actor, instrument: Instrument, since: datetime.date,
                                description: str,
                                take_out_of_service: bool = False) -> DeviationOutcome:
    """Record that an instrument was found out of tolerance since `since` (quality manager).

    Lists the results and reports affected and opens an equipment nonconformance for each
    affected result that has none. Optionally takes the instrument out of service.
    """
    require_role(actor, Role.QUALITY_MANAGER)
    today = timezone.localdate(clock.now())
    if since > today:
        raise ValidationError({"since": "The date found out of tolerance cannot be in the future."})
    if not description.strip():
        raise ValidationError({"description": "Describe what was found."})
    deviation = create_audited(actor=actor, obj=InstrumentDeviation(
        instrument=instrument, since=since, description=description, found_by=actor,
        found_at=clock.now()))
    outcome = DeviationOutcome(deviation=deviation)
    outcome.results = results_using_instrument_since(instrument, since)
    outcome.reports = reports_covering(outcome.results)
    report_of = {}
    for report in outcome.reports:
        for key in report.review.covered.values_list("result__record_key", flat=True):
            report_of.setdefault(key, report)
    already = set(Nonconformance.objects.filter(
        kind=NonconformanceKind.EQUIPMENT,
        result__record_key__in=[r.record_key for r in outcome.results],
    ).values_list("result__record_key", flat=True))
    for result in outcome.results:
        if result.record_key in already:
            continue
        observed = timezone.localtime(result.observed_at)
        outcome.nonconformances.append(nonconformance_open(
            actor=actor, kind=NonconformanceKind.EQUIPMENT, lot=result.piece.lot,
            result=result, report=report_of.get(result.record_key),
            description=(
                f"Instrument {instrument.ident} was found out of tolerance since "
                f"{since.isoformat()} ({description.strip()}); piece {result.piece.ident}, "
                f"step {result.step.order} ({result.step.name}), observed "
                f"{observed:%Y-%m-%d}, depends on it.")))
    if take_out_of_service and instrument.in_service:
        reference.instrument_update(actor=actor, instrument=instrument, in_service=False,
                                    reason=f"found out of tolerance since {since.isoformat()}")
    audit_record(actor=actor, action="deviation impact", obj=deviation, after={
        "results": [str(r.record_key) for r in outcome.results],
        "reports": [r.number for r in outcome.reports],
        "nonconformances": [n.number for n in outcome.nonconformances],
    })
    return outcome
