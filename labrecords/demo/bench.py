"""Demo additions for the bench: authorisations, consumables and step results, recorded
through the real services on the injected clock.

Call after the demo lab is built and its older lots' plans are released::

    from labrecords.demo import bench, build
    lab = build.build()
    bench.record_demo_results(lab)

For each lot with a released plan, the pieces go through their steps in rounds, in lab
hours, from the day after release until now: bench steps are recorded one after the
other, pieces at the same chamber exposure share one run. The newest lots stop before
their first chamber step, so the evidence demo finds pieces to load. Along the way the
demo records a few failures (the quality manager disposes of two and leaves one open), a
spectral measurement made with SP-01 after its calibration ran out (recorded as invalid
with the quality manager's reason, then retested on a new piece), and a correction.
Every value is invented.
"""

from __future__ import annotations

import datetime
from collections import defaultdict
from dataclasses import dataclass, field, replace
from decimal import Decimal
from typing import Any

from django.core.exceptions import PermissionDenied, ValidationError
from django.db import transaction
from django.utils import timezone

from durability.models import Instrument, Method
from durability.surface.iso10110 import Iso10110Observation
from durability.surface.scratch_dig import Dig, Scratch, ScratchDigObservation
from durability.verdicts import SpectralStatistic
from labrecords import clock
from labrecords.models import (
    ChamberRun,
    Consumable,
    Lot,
    Nonconformance,
    PieceStatus,
    PlanStep,
    StepResult,
    TestPlan,
)
from labrecords.roles import Role
from labrecords.selectors_chambers import condition_of, exposure_requirement
from labrecords.selectors_progress import current_assignments, progress_for
from labrecords.services import authorisations, consumables, nonconformances
from labrecords.services import bench as bench_services
from labrecords.services import chambers as chamber_services
from labrecords.services import lots as lot_services
from labrecords.services.bench import (
    InspectionEntry,
    ResultValues,
    entry_sections,
    statistics_needed,
    step_rule,
)

# The newest lots with a released plan stop before their first chamber step.
STOP_BEFORE_CHAMBER = 3
BENCH_MINUTES = 25
# Steps this long (immersions) run beside the bench work of the round.
LONG_HOURS = 4
OPENS, CLOSES = 8, 17
CHAMBERS = {"humidity": "HC-01", "salt_fog": "SF-01", "temperature": "TC-01",
            "thermal_shock": "TS-01"}
INSTRUMENTS = {"inspection": ["MS-01"], "spectral_measurement": ["SP-02"],
               "moderate_abrasion": ["AB-01", "FG-01"], "severe_abrasion": ["AB-01", "FG-01"]}
# kind, name, grade, supplier lot, days of shelf life
CONSUMABLES = [
    ("tape", "Cellophane tape 12.7 mm", "", "TP-2291", 400),
    ("cheesecloth", "Cheesecloth pads", "bleached, 28 x 24 mesh", "CC-0815", 700),
    ("eraser", "Abrasion erasers", "", "ER-3307", 700),
    ("solvent", "Acetone", "reagent grade", "AC-1102", 500),
    ("solvent", "Ethyl alcohol", "absolute, reagent grade", "EA-7730", 500),
    ("solvent", "Trichloroethylene", "reagent grade", "TC-4410", 500),
    ("salt_solution", "NaCl solution 5 %", "made from reagent NaCl and distilled water",
     "SS-0042", 60),
    ("other", "Distilled water", "", "DW-0917", 120),
]
KIND_CONSUMABLES = {"adhesion": ["tape"], "crosshatch": ["tape"],
                    "moderate_abrasion": ["cheesecloth"], "severe_abrasion": ["eraser"],
                    "solvent_solubility": ["solvent"], "cleanability": ["solvent"],
                    "salt_solubility": ["salt_solution"], "water_solubility": ["other"]}
INSPECTION = dict(lighting="dark-field, 1000 lx", background="matte black",
                  magnification="unaided eye")


@dataclass
class DemoResults:
    """What the demo recorded, and what it could not (with why)."""

    results: list[StepResult] = field(default_factory=list)
    failures: list[Nonconformance] = field(default_factory=list)
    invalid: StepResult | None = None
    retest_plan: TestPlan | None = None
    correction: StepResult | None = None
    skipped: list[str] = field(default_factory=list)


def _lab_hours(moment: datetime.datetime) -> datetime.datetime:
    """The same moment, or the next opening time when the lab is closed then."""
    local = timezone.localtime(moment)
    if local.weekday() < 5 and OPENS <= local.hour < CLOSES:
        return local
    day = local.date() if local.hour < OPENS else local.date() + datetime.timedelta(days=1)
    while day.weekday() >= 5:
        day += datetime.timedelta(days=1)
    return timezone.make_aware(datetime.datetime.combine(day, datetime.time(OPENS, 30)))


class _Demo:
    def __init__(self, lab, now: datetime.datetime):
        self.now = now
        self.technician = lab.staff[Role.TECHNICIAN]
        self.engineer = lab.staff[Role.ENGINEER]
        self.reviewer = lab.staff[Role.REVIEWER]
        self.quality = lab.staff[Role.QUALITY_MANAGER]
        self.out = DemoResults()
        self.instruments = {i.ident: i for i in Instrument.objects.all()}
        self.consumables: dict[str, list[Consumable]] = defaultdict(list)
        # One of each story; each is told on the first step that fits it.
        self.stories = {"humidity_fail", "adhesion_fail", "crosshatch_fail", "invalid",
                        "correction"}
        self.moment = now
        # The next round of a lot starts no earlier than the last decision taken on it.
        self.not_before = now - datetime.timedelta(days=3650)
        self.rejected: set[int] = set()
        self.busy: dict[str, list[tuple[datetime.datetime, datetime.datetime]]] = (
            defaultdict(list))

    # ------------------------------------------------------------ set-up

    def authorise(self, lots: list[Lot], at: datetime.datetime) -> None:
        method_ids = set(PlanStep.objects.filter(plan__lot__in=lots)
                         .values_list("method_version__method_id", flat=True))
        with clock.frozen_at(at):
            for method in Method.objects.filter(pk__in=method_ids).order_by("code"):
                for user in (self.technician, self.engineer, self.reviewer):
                    if not authorisations.is_authorised(user, method):
                        authorisations.method_authorisation_grant(
                            actor=self.quality, user=user, method=method,
                            reason="trained and assessed on the method")

    def register_consumables(self, at: datetime.datetime) -> None:
        day = timezone.localdate(at)
        with clock.frozen_at(at):
            for kind, name, grade, lot, days in CONSUMABLES:
                existing = Consumable.objects.filter(kind=kind, supplier_lot=lot).first()
                self.consumables[kind].append(existing or consumables.consumable_register(
                    actor=self.technician, kind=kind, name=name, grade=grade,
                    supplier="Invented Lab Supplies", supplier_lot=lot,
                    received_on=day, expiry=day + datetime.timedelta(days=days)))
            solution = self.consumables["salt_solution"][0]
            consumables.consumable_check_record(actor=self.technician, quantity="ph",
                                                value=Decimal("6.9"), consumable=solution)
            consumables.consumable_check_record(actor=self.technician, quantity="concentration",
                                                value=Decimal("5.1"), consumable=solution)

    # ------------------------------------------------------------ values per step

    def values(self, step: PlanStep, piece, lot: Lot) -> tuple[dict[str, Any], str]:
        """Keyword arguments for the recording service and the story told, if any."""
        sections = entry_sections(step)
        rule = step_rule(step)
        values: dict[str, Any] = {}
        story = ""
        kwargs: dict[str, Any] = {
            "instruments": [self.instruments[i] for i in INSTRUMENTS.get(step.kind, [])
                            if i in self.instruments],
            "consumables": [c for kind in KIND_CONSUMABLES.get(step.kind, [])
                            for c in self.consumables[kind][:1]],
        }
        if "inspection" in sections:
            values["inspection"] = InspectionEntry(no_defects=True, **INSPECTION)
            if "MS-01" in self.instruments and self.instruments["MS-01"] not in \
                    kwargs["instruments"]:
                kwargs["instruments"].append(self.instruments["MS-01"])
            if (step.kind == "humidity" and rule.get("rule") == "no_listed_defects"
                    and "humidity_fail" in self.stories):
                story = "humidity_fail"
                values["inspection"] = InspectionEntry(
                    no_defects=False, defects=({"defect": "peeling", "zone": "edge, 2-4 o'clock",
                                                "extent": "about 3 mm", "quantity": 2,
                                                "size": 3},), **INSPECTION)
        if "tape" in sections:
            values["coating_removed"] = False
            if "adhesion_fail" in self.stories and rule.get("rule") == "no_coating_removed":
                story = "adhesion_fail"
                values.update(coating_removed=True,
                              removal_location="under the tape at the rim, about 1 mm wide")
        if "crosshatch" in sections:
            values["detached_share_pct"] = 2.0
            if "crosshatch_fail" in self.stories and rule.get("rule") == "crosshatch_max_class":
                story = "crosshatch_fail"
                values["detached_share_pct"] = 8.0
        if "abrasion" in sections:
            strokes = (step.parameters.get("strokes") or step.parameters.get("cycles") or {})
            force = (step.parameters.get("force_n") or step.parameters.get("force_min_n") or {})
            values.update(strokes=int(strokes.get("value") or 20),
                          force_n=float(force.get("value") or 5.0) + 0.2)
        if "solubility" in sections:
            solvents = ", ".join(c.name for c in kwargs["consumables"]) or "distilled water"
            values.update(solution=solvents, immersion_min=10.0 if step.kind.startswith(
                "solvent") else 24 * 60.0)
        if "spectral" in sections:
            values["spectral"] = _spectral(rule)
            spectrometer = "SP-02"
            if "invalid" in self.stories and self._sp01_lapsed_on(self.moment):
                story = "invalid"
                spectrometer = "SP-01"
            kwargs["instruments"] = [self.instruments[spectrometer]]
            if story == "invalid":
                kwargs.update(invalid_authorised_by=self.quality, invalid_reason=(
                    "SP-02 was away for repair; the measurement is kept as a record and "
                    "repeated on a new piece"))
        if "scratch_dig" in sections:
            aperture = float(lot.spec.clear_aperture_mm or 20)
            values["scratch_dig"] = ScratchDigObservation(
                aperture_diameter_mm=aperture, scratches=(Scratch(20, 2.5),),
                digs=(Dig(0.1),))
        if "iso10110" in sections:
            values["surface"] = Iso10110Observation(imperfections_mm=(0.06, 0.04))
        if "judgement" in sections:
            values.update(judgement_outcome="pass", judgement_reason=(
                "no change against the coating spec's criterion seen at the final test"))
        kwargs["values"] = ResultValues(**values)
        return kwargs, story

    def _sp01_lapsed_on(self, moment: datetime.datetime) -> bool:
        sp01 = self.instruments.get("SP-01")
        return (sp01 is not None and "SP-02" in self.instruments
                and timezone.localdate(moment) > sp01.calibration_due)

    # ------------------------------------------------------------ recording

    def record(self, progress, step: PlanStep, observed_at: datetime.datetime,
               run: ChamberRun | None = None) -> StepResult | None:
        self.moment = observed_at
        piece, lot = progress.piece, progress.piece.lot
        kwargs, story = self.values(step, piece, lot)
        if run is not None:
            kwargs["chamber_run"] = run
        actor = self.engineer if "judgement" in entry_sections(step) else self.technician
        try:
            with clock.frozen_at(observed_at + datetime.timedelta(minutes=5)):
                result = bench_services.step_result_record(
                    actor=actor, piece=piece, step=step, observed_at=observed_at, **kwargs)
        except (ValidationError, PermissionDenied) as exc:
            self.out.skipped.append(f"{piece.ident} step {step.order} ({step.name}): "
                                    + " ".join(getattr(exc, "messages", [str(exc)])))
            return None
        self.out.results.append(result)
        if story:
            self.stories.discard(story)
            self.after_story(story, result, observed_at)
        elif "correction" in self.stories and step.kind == "inspection" \
                and step.role == "final_inspection" and result.verdict == "pass":
            self.stories.discard("correction")
            corrected = replace(kwargs["values"], inspection=InspectionEntry(
                no_defects=True, **{**INSPECTION, "magnification": "3x loupe"}))
            with clock.frozen_at(observed_at + datetime.timedelta(hours=1)):
                self.out.correction = bench_services.step_result_correct(
                    actor=self.technician, revision=result,
                    reason="the piece was looked at under a 3x loupe, not by eye",
                    values=corrected, instruments=kwargs["instruments"],
                    consumables=kwargs["consumables"])
            self.not_before = max(self.not_before, observed_at + datetime.timedelta(hours=1))
        return result

    def after_story(self, story: str, result: StepResult, at: datetime.datetime) -> None:
        nc = Nonconformance.objects.filter(result=result).first()
        if nc is None:
            return
        self.out.failures.append(nc)
        later = at + datetime.timedelta(hours=2)
        if later > self.now:
            return
        self.not_before = max(self.not_before, later)
        with clock.frozen_at(later):
            if story == "humidity_fail":
                nonconformances.nonconformance_dispose(
                    actor=self.quality, nonconformance=nc, disposition="reject_lot",
                    note="peeling at the edge after humidity: the run is recoated")
                self.rejected.add(result.piece.lot_id)
            elif story == "adhesion_fail":
                nonconformances.nonconformance_dispose(
                    actor=self.quality, nonconformance=nc, disposition="concession",
                    note="removal only at the rim, outside the clear aperture",
                    customer_agreement_ref=f"customer e-mail of {timezone.localdate(later)}, "
                                           f"ref CA-{nc.number[-4:]}")
            elif story == "invalid":
                self.out.invalid = result
                self._retest(nc, result)

    def _retest(self, nc: Nonconformance, result: StepResult) -> None:
        lot = result.piece.lot
        assigned = set(current_assignments().filter(piece__lot=lot)
                       .values_list("piece_id", flat=True))
        free = lot.pieces.exclude(pk__in=assigned).exclude(status=PieceStatus.DISPOSED)
        sequence = PlanStep.objects.get(plan__lot=lot, step_key=result.step_key,
                                        plan__in=TestPlan.objects.current_released()).sequence
        missing = sequence.pieces_needed - free.count()
        if missing > 0 and result.piece.stock is not None:
            lot_services.witness_pieces_allocate(actor=self.engineer, lot=lot,
                                                 stock=result.piece.stock, count=missing)
        try:
            outcome = nonconformances.nonconformance_dispose(
                actor=self.quality, nonconformance=nc, disposition="retest",
                note="repeat the sequence on a new piece with SP-02 back in service")
        except ValidationError as exc:
            self.out.skipped.append(f"retest of {nc.number}: {' '.join(exc.messages)}")
            return
        self.out.retest_plan = outcome.retest_plan

    # ------------------------------------------------------------ a lot, round by round

    def run_lot(self, lot: Lot, plan: TestPlan, *, stop_at_chamber: bool) -> None:
        t = _lab_hours(plan.released_at + datetime.timedelta(hours=20))
        finished: set[int] = set()
        for _round in range(60):
            rows = [p for p in progress_for(current_assignments().filter(piece__lot=lot)
                                            .order_by("piece__ident"))
                    if p.piece.pk not in finished and p.open_step is not None]
            if not rows or t > self.now or lot.pk in self.rejected:
                return
            chamber: dict[tuple[str, str], list] = defaultdict(list)
            ends = [t]
            moment = t
            for progress in rows:
                step = progress.open_step
                if step.kind in CHAMBERS:
                    if stop_at_chamber:
                        finished.add(progress.piece.pk)
                    else:
                        chamber[(step.kind, condition_of(step.parameters))].append(progress)
                    continue
                if step.hours and float(step.hours) >= LONG_HOURS:
                    # An immersion runs on its own; the piece is looked at when it ends.
                    done = _lab_hours(t + datetime.timedelta(hours=float(step.hours) + 0.5))
                    if done > self.now - datetime.timedelta(minutes=10):
                        finished.add(progress.piece.pk)
                    elif self.record(progress, step, done) is None:
                        finished.add(progress.piece.pk)
                    else:
                        ends.append(done)
                    continue
                moment = moment + datetime.timedelta(minutes=BENCH_MINUTES)
                if moment > self.now - datetime.timedelta(minutes=10):
                    return
                if self.record(progress, step, moment) is None:
                    finished.add(progress.piece.pk)
                ends.append(moment)
            for (kind, condition), members in chamber.items():
                end = self.chamber_run(kind, condition, members, t)
                if end is None:
                    finished.update(p.piece.pk for p in members)
                else:
                    ends.append(end)
            t = _lab_hours(max(*ends, self.not_before) + datetime.timedelta(minutes=30))

    def free_slot(self, chamber: str, start: datetime.datetime,
                  length: datetime.timedelta) -> datetime.datetime:
        """The first time from `start` at which the chamber is free for `length`: a chamber
        holds one run at a time."""
        gap = datetime.timedelta(minutes=30)
        moved = True
        while moved:
            moved = False
            for begins, ends in self.busy[chamber]:
                if start < ends + gap and start + length + gap > begins:
                    start = _lab_hours(ends + gap)
                    moved = True
        return start

    def chamber_run(self, kind: str, condition: str, members: list,
                    t: datetime.datetime) -> datetime.datetime | None:
        step = members[0].open_step
        chamber = self.instruments.get(CHAMBERS.get(kind, ""))
        if chamber is None:
            self.out.skipped.append(f"no chamber for {kind} runs")
            return None
        hours = float(step.hours) if step.hours else 24.0
        length = datetime.timedelta(hours=max(hours, 1.0) + 1.5)
        loaded_at = self.free_slot(chamber.ident, t, length)
        unloaded_at = loaded_at + length
        observed_at = _lab_hours(unloaded_at + datetime.timedelta(minutes=40))
        if observed_at > self.now - datetime.timedelta(minutes=10):
            return None
        try:
            with clock.frozen_at(loaded_at):
                run = chamber_services.chamber_run_create(
                    actor=self.technician, chamber=chamber, method_version=step.method_version,
                    condition=condition, loaded_at=loaded_at, pieces=[p.piece for p in members])
            with clock.frozen_at(unloaded_at + datetime.timedelta(minutes=10)):
                run = chamber_services.chamber_run_unload(actor=self.technician, run=run,
                                                          unloaded_at=unloaded_at)
        except ValidationError as exc:
            self.out.skipped.append(f"{kind} run for {members[0].piece.lot.number}: "
                                    + " ".join(exc.messages))
            return None
        self.busy[chamber.ident].append((loaded_at, unloaded_at))
        moment = observed_at
        for progress in members:
            self.record(progress, progress.open_step, moment, run=run)
            moment += datetime.timedelta(minutes=BENCH_MINUTES)
        return moment


def _spectral(rule: dict[str, Any]) -> tuple[SpectralStatistic, ...]:
    """Invented measured statistics inside the spec's limits (or one plain statistic)."""
    needed = statistics_needed(rule)
    if not needed:
        return (SpectralStatistic(band_nm=(400.0, 700.0), quantity="R", statistic="average",
                                  value=0.42, expanded_uncertainty=0.05),)
    stats = []
    for row in needed:
        upper, lower = row["max"], row["min"]
        if upper is not None and lower is not None:
            value = (upper + lower) / 2
        elif upper is not None:
            value = round(upper * 0.6, 3)
        else:
            value = round(lower + (100 - lower) * 0.4, 3)
        stats.append(SpectralStatistic(band_nm=row["band_nm"], quantity=row["quantity"],
                                       statistic=row["statistic"], value=value,
                                       expanded_uncertainty=0.05))
    return tuple(stats)


def _checkable(plan: TestPlan) -> bool:
    """True when the plan has a chamber step whose method states a checkable exposure."""
    steps = plan.steps.filter(kind__in=list(CHAMBERS)).select_related("method_version__method")
    for step in steps:
        try:
            exposure_requirement(step.method_version)
        except ValidationError:
            return False
        return True
    return False


@transaction.atomic
def record_demo_results(lab, *, now: datetime.datetime | None = None) -> DemoResults:
    """Record the demo's bench results for every lot of `lab` with a released plan.

    `lab` is a built `labrecords.demo.build.DemoLab` (its `staff` by Role and its `lots`).
    Returns what was recorded; steps that could not be recorded are listed in `skipped`.
    """
    now = now or timezone.now()
    demo = _Demo(lab, now)
    plans = {p.lot_id: p for p in TestPlan.objects.current_released().filter(
        lot__in=[lot.pk for lot in lab.lots])}
    lots = sorted((lot for lot in lab.lots if lot.pk in plans),
                  key=lambda lot: plans[lot.pk].released_at)
    if not lots:
        demo.out.skipped.append("no lot has a released plan")
        return demo.out
    first = min(plans[lot.pk].released_at for lot in lots)
    demo.authorise(lots, first - datetime.timedelta(hours=2))
    demo.register_consumables(first - datetime.timedelta(hours=1))
    # Leave the newest lots whose chamber exposure can be checked against a log at their
    # chamber step, for the evidence demo (and a real log) to take over.
    newest = {lot.pk for lot in [lot for lot in lots if _checkable(plans[lot.pk])]
              [-STOP_BEFORE_CHAMBER:]}
    for lot in lots:
        demo.run_lot(lot, plans[lot.pk], stop_at_chamber=lot.pk in newest)
    return demo.out
