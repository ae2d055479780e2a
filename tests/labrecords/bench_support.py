"""Shared set-up for the bench tests: a released plan, an authorised technician, instruments
and consumables, and a helper that records a step with values that satisfy its sections."""

from __future__ import annotations

import datetime
from dataclasses import dataclass, field
from typing import Any

from django.utils import timezone

from durability.models import Instrument, Method
from durability.verdicts import SpectralStatistic
from labrecords import clock
from labrecords.models import Consumable, PlanStep, StepResult
from labrecords.services import authorisations, consumables
from labrecords.services.bench import (
    ChamberRunEntry,
    InspectionEntry,
    ResultValues,
    entry_sections,
    step_result_record,
    step_rule,
)
from tests.factories import InstrumentFactory, LotFactory, released_plan

TODAY = datetime.date(2026, 11, 10)


def at(day: datetime.date, hour: int = 10, minute: int = 0) -> datetime.datetime:
    """An aware time on `day` in the lab's time zone."""
    return timezone.make_aware(datetime.datetime.combine(day, datetime.time(hour, minute)))


NOW = at(TODAY, 17)


@dataclass
class Bench:
    plan: Any
    piece: Any
    steps: list[PlanStep]
    technician: Any
    engineer: Any
    quality_manager: Any
    microscope: Any
    chamber: Any
    tape: Any
    extra: dict[str, Any] = field(default_factory=dict)

    def step(self, order: int) -> PlanStep:
        return next(s for s in self.steps if s.order == order)


def bench_setup(cast, *, callouts: str = "MIL-C-48497A", lot=None,
                authorise: bool = True) -> Bench:
    """A released plan for one piece, the technician and engineer authorised for every method
    of the plan (when `authorise`), a valid microscope and chamber, and a tape."""
    plan = released_plan(lot=lot or LotFactory(), callouts=callouts, engineer=cast.engineer)
    steps = list(plan.steps.select_related("sequence", "method_version__method__standard")
                 .order_by("sequence__position", "order"))
    first_sequence = steps[0].sequence_id
    piece = plan.assignments.get(sequence_id=first_sequence).piece
    steps = [s for s in steps if s.sequence_id == first_sequence]
    with clock.frozen_at(at(TODAY - datetime.timedelta(days=30), 9)):
        if authorise:
            for method in Method.objects.filter(
                    pk__in=[s.method_version.method_id for s in plan.steps.all()]):
                for user in (cast.technician, cast.engineer):
                    if authorisations.is_authorised(user, method):
                        continue
                    authorisations.method_authorisation_grant(
                        actor=cast.quality_manager, user=user, method=method)
        tape = Consumable.objects.filter(supplier_lot="T-0001").first() or \
            consumables.consumable_register(
            actor=cast.quality_manager, kind="tape", name="Cellophane tape 12.7 mm",
            supplier_lot="T-0001", expiry=TODAY + datetime.timedelta(days=200),
            received_on=TODAY - datetime.timedelta(days=30))
    microscope = Instrument.objects.filter(ident="MS-T1").first() or InstrumentFactory(
        ident="MS-T1", name="Inspection microscope", kind="microscope",
        calibration_due=TODAY + datetime.timedelta(days=300))
    chamber = InstrumentFactory(
        ident=f"HC-{piece.ident}", name="Humidity chamber", kind="humidity chamber",
        calibration_due=TODAY + datetime.timedelta(days=300))
    return Bench(plan=plan, piece=piece, steps=steps, technician=cast.technician,
                 engineer=cast.engineer, quality_manager=cast.quality_manager,
                 microscope=microscope, chamber=chamber, tape=tape)


def passing_values(bench: Bench, step: PlanStep) -> dict[str, Any]:
    """Keyword arguments that satisfy every section of the step with a passing result."""
    sections = entry_sections(step)
    rule = step_rule(step)
    values: dict[str, Any] = {}
    kwargs: dict[str, Any] = {"instruments": [bench.microscope]}
    if "tape" in sections:
        values["coating_removed"] = False
        kwargs["consumables"] = [bench.tape]
    if "crosshatch" in sections:
        values["detached_share_pct"] = 0.0
    if "abrasion" in sections:
        values.update(strokes=50, force_n=4.5)
    if "solubility" in sections:
        values.update(solution="acetone, reagent grade", immersion_min=10.0)
    if "inspection" in sections:
        values["inspection"] = InspectionEntry(no_defects=True, lighting="dark field",
                                               background="matte black",
                                               magnification="unaided eye")
    if "spectral" in sections:
        limits = rule.get("limits") or [{"band_nm": [400.0, 700.0], "quantity": "R",
                                         "statistic": "average"}]
        values["spectral"] = tuple(
            SpectralStatistic(band_nm=tuple(limit["band_nm"]), quantity=limit["quantity"],
                              statistic=limit["statistic"], value=0.3)
            for limit in limits)
    if "judgement" in sections:
        values.update(judgement_outcome="pass", judgement_reason="no change seen")
    if "chamber" in sections:
        # Loaded after the step before was done, unloaded before this one is observed.
        hour = 8 + min(step.order, 8)
        kwargs["new_run"] = ChamberRunEntry(chamber=bench.chamber,
                                            loaded_at=at(TODAY, hour - 1, 10),
                                            unloaded_at=at(TODAY, hour - 1, 50))
    kwargs["values"] = ResultValues(**values)
    return kwargs


def record(bench: Bench, order: int, *, actor=None, observed_at=None, now=NOW,
           **overrides: Any) -> StepResult:
    """Record step `order` on the bench's piece with passing values, changed by `overrides`."""
    step = bench.step(order)
    kwargs = passing_values(bench, step)
    kwargs.update(overrides)
    with clock.frozen_at(now):
        return step_result_record(
            actor=actor or bench.technician, piece=bench.piece, step=step,
            observed_at=observed_at or at(TODAY, 8 + min(order, 8)), **kwargs)


def record_through(bench: Bench, last: int, **kwargs: Any) -> list[StepResult]:
    """Record every step up to and including `last`, all passing."""
    return [record(bench, step.order, **kwargs) for step in bench.steps if step.order <= last]
