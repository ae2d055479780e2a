"""Demo additions for evidence: chamber runs with invented data-logger logs (one with an
excursion that makes its exposure not count) and before/after spectra, made through the
real services on the injected clock.

Call after the demo lab is built and the bench steps before the chamber steps have
results, so some pieces stand at a chamber step::

    from labrecords.demo import build, evidence
    lab = build.build()
    ...                                  # bench results up to the chamber steps
    evidence.record_demo_evidence(lab)

Pieces whose next step is a chamber exposure are loaded, lot by lot, into a few runs; a run
that has ended by now is unloaded and its log uploaded and checked. Every log and spectrum
is generated here from a simple model: invented data, labelled so in the files.
"""

from __future__ import annotations

import cmath
import datetime
import math
import random
from collections import defaultdict
from dataclasses import dataclass, field

from django.core.exceptions import ValidationError
from django.db import transaction
from django.utils import timezone

from durability.durations import CHAMBER_KINDS
from durability.models import Instrument
from labrecords import clock
from labrecords.models import ChamberRun, Evidence, ExposureCheck
from labrecords.roles import Role
from labrecords.selectors_chambers import (
    ExposureRequirement,
    condition_of,
    exposure_requirement,
)
from labrecords.selectors_progress import PieceProgress, current_assignments, progress_for
from labrecords.services import chambers as chamber_services
from labrecords.services import spectra as spectrum_services

MAX_RUNS = 4
# The second run gets a humidity drop and a temperature overshoot: its exposure does not count.
EXCURSION_RUN = 1
RUN_HOURS = 26  # 24 h required, with time for ramping up and a margin
LOG_MINUTES = 10
CHAMBERS = {
    "humidity": ("HC-01", "DL-01"),
    "salt_fog": ("SF-01", "DL-02"),
    "temperature": ("TC-01", None),
}


@dataclass
class DemoEvidence:
    """What the demo made (and what it left out, and why)."""

    runs: list[ChamberRun] = field(default_factory=list)
    checks: list[ExposureCheck] = field(default_factory=list)
    spectra: list[Evidence] = field(default_factory=list)
    skipped: list[str] = field(default_factory=list)


# ---------------------------------------------------------------- invented logs


def _log_csv(
    start: datetime.datetime,
    end: datetime.datetime,
    requirement: ExposureRequirement,
    *,
    excursion: bool,
    rng: random.Random,
) -> bytes:
    """A logger export every 10 min from loading to unloading, in lab local time."""
    condition = requirement.condition
    setpoint = condition.temperature_setpoint_c
    assert setpoint is not None
    with_rh = condition.checks_humidity
    rh_low = condition.rh_min_percent if condition.rh_min_percent is not None else 0.0
    rh_high = condition.rh_max_percent if condition.rh_max_percent is not None else 100.0
    rh_mid = (rh_low + rh_high) / 2
    header = "Timestamp,Temp (°C),RH %" if with_rh else "Timestamp,Temp (°C)"
    lines = [header]
    step = datetime.timedelta(minutes=LOG_MINUTES)
    moment = start
    while moment <= end:
        hours = (moment - start).total_seconds() / 3600
        ramp = min(1.0, hours / 0.5)
        t = 23.0 + (setpoint - 23.0) * ramp + 0.3 * math.sin(hours * 2.1) * ramp
        t += rng.uniform(-0.08, 0.08)
        rh = 45.0 + (rh_mid - 45.0) * ramp + 0.9 * math.sin(hours * 1.3) * ramp
        rh += rng.uniform(-0.1, 0.1)
        if excursion and 9.0 <= hours < 11.5:
            if with_rh:
                rh = rh_low - 13.0  # a door seal leak: humidity far below the limit
            else:
                t = setpoint - 4.5  # a heater fault: colder than the condition allows
        if excursion and 15.0 <= hours < 15.7:
            t = setpoint + 3.6  # a controller overshoot: hotter than the condition allows
        local = timezone.localtime(moment)
        row = f"{local:%Y-%m-%d %H:%M:%S},{t:.2f}"
        if with_rh:
            row += f",{min(rh, 100.0):.1f}"
        lines.append(row)
        moment += step
    return ("\n".join(lines) + "\n").encode()


# ---------------------------------------------------------------- invented spectra


def _single_layer_r(wavelength: float, n_film: float, n_glass: float, design_nm: float) -> float:
    """Normal-incidence reflectance of one quarter-wave film (Airy formula), in %."""
    r01 = (1.0 - n_film) / (1.0 + n_film)
    r12 = (n_film - n_glass) / (n_film + n_glass)
    delta = 2 * math.pi * n_film * (design_nm / (4 * 1.38)) / wavelength
    phase = cmath.exp(-2j * delta)
    r = (r01 + r12 * phase) / (1 + r01 * r12 * phase)
    return abs(r) ** 2 * 100


def _curve(lot, wavelength: float, after: bool) -> float:
    design, spec = lot.design, lot.spec
    kind = design.coating_type
    centre = float(design.design_wavelength_nm or 550)
    if kind == "single_layer_ar":
        glass = float(spec.glass.n_d) if spec.glass else 1.52
        return _single_layer_r(wavelength, 1.39 if after else 1.38, glass, centre)
    if kind == "multilayer_ar":
        x = (wavelength - centre) / 180
        return 0.22 + 0.3 * x * x + 0.04 * math.sin(wavelength / 23) + (0.05 if after else 0.0)
    if kind in ("metal_mirror", "protected_metal_mirror"):
        x = (wavelength - 550) / 250
        return 90.5 - 2.5 * x * x - (0.7 if after else 0.0)
    if kind == "dielectric_mirror":
        edge = 1 / (1 + math.exp((abs(wavelength - centre) - 60) / 4))
        return 4 + 95.85 * edge - (0.05 if after else 0.0)
    if kind == "beamsplitter":
        return 50 + 1.6 * math.sin(wavelength / 31) + (0.4 if after else 0.0)
    edge = float(design.design_wavelength_nm or 650)
    return 93.0 / (1 + math.exp(-(wavelength - edge) / 7)) - (0.3 if after else 0.0)


def _spectrum_csv(lot, piece_ident: str, *, after: bool) -> bytes:
    spec = lot.spec
    start = max(300.0, float(spec.wavelength_min_nm) - 60)
    end = float(spec.wavelength_max_nm) + 60
    quantity = spec.quantity or "R"
    lines = [
        f"Sample,{piece_ident} (invented demo curve)",
        f"State,{'after' if after else 'before'} the exposure",
        f"Wavelength (nm),{quantity} (%)",
    ]
    wavelength = start
    while wavelength <= end + 1e-9:
        lines.append(f"{wavelength:.1f},{_curve(lot, wavelength, after):.4f}")
        wavelength += 2.0
    return ("\n".join(lines) + "\n").encode()


# ---------------------------------------------------------------- the demo


def _ceil_hour(moment: datetime.datetime) -> datetime.datetime:
    local = timezone.localtime(moment)
    rounded = local.replace(minute=0, second=0, microsecond=0)
    if rounded < local:
        rounded += datetime.timedelta(hours=1)
    return rounded


def _spectral_steps(progress: PieceProgress, chamber_step) -> tuple:
    steps = [s for s in progress.steps if s.kind == "spectral_measurement"]
    before = next((s for s in steps if s.order < chamber_step.order), None)
    after = next((s for s in reversed(steps) if s.order > chamber_step.order), None)
    return before, after


def _spectrum(
    result: DemoEvidence,
    technician,
    progress: PieceProgress,
    step,
    *,
    stage: str,
    at: datetime.datetime,
) -> None:
    lot = progress.piece.lot
    if step is None or lot.spec.wavelength_min_nm is None or lot.spec.wavelength_max_nm is None:
        return
    with clock.frozen_at(at):
        try:
            result.spectra.append(
                spectrum_services.spectrum_upload(
                    actor=technician,
                    piece=progress.piece,
                    step_key=step.step_key,
                    stage=stage,
                    data=_spectrum_csv(lot, progress.piece.ident, after=stage == "after"),
                    original_name=f"{progress.piece.ident}-{stage}.csv",
                    note="invented demo curve",
                )
            )
        except ValidationError as exc:
            result.skipped.append(f"spectrum of {progress.piece.ident}: {' '.join(exc.messages)}")


def _record_run(
    result: DemoEvidence, plan: dict, *, technician, now: datetime.datetime, rng: random.Random
) -> None:
    step, condition, members = plan["step"], plan["condition"], plan["members"]
    loaded_at = plan["loaded_at"]
    try:
        requirement = exposure_requirement(step.method_version)
    except ValidationError as exc:
        result.skipped.append(f"{step.method_version}: {' '.join(exc.messages)}")
        return
    chamber = Instrument.objects.filter(ident=plan["chamber"]).first()
    logger = Instrument.objects.filter(ident=plan["logger"]).first() if plan["logger"] else None
    if chamber is None:
        result.skipped.append(f"no instrument {plan['chamber']} for {plan['kind']} runs")
        return
    for progress in members:
        before_step, _ = _spectral_steps(progress, step)
        if before_step is not None and before_step.step_key in progress.done:
            done_at = progress.done[before_step.step_key].observed_at
            _spectrum(
                result,
                technician,
                progress,
                before_step,
                stage="before",
                at=min(done_at + datetime.timedelta(minutes=10), loaded_at),
            )
    try:
        with clock.frozen_at(loaded_at):
            run = chamber_services.chamber_run_create(
                actor=technician,
                chamber=chamber,
                logger=logger,
                method_version=step.method_version,
                condition=condition,
                loaded_at=loaded_at,
                pieces=[p.piece for p in members],
            )
    except ValidationError as exc:
        result.skipped.append(f"run for {condition}: {' '.join(exc.messages)}")
        return
    result.runs.append(run)
    unloaded_at = loaded_at + datetime.timedelta(hours=RUN_HOURS)
    if unloaded_at + datetime.timedelta(hours=4) > now:
        return  # still in the chamber today
    excursion = len(result.runs) - 1 == EXCURSION_RUN
    log = _log_csv(loaded_at, unloaded_at, requirement, excursion=excursion, rng=rng)
    with clock.frozen_at(unloaded_at + datetime.timedelta(minutes=30)):
        run = result.runs[-1] = chamber_services.chamber_run_unload(
            actor=technician, run=run, unloaded_at=unloaded_at
        )
        result.checks.append(
            chamber_services.chamber_log_upload(
                actor=technician,
                run=run,
                data=log,
                original_name=f"{chamber.ident}-{timezone.localtime(loaded_at):%Y%m%d}.csv",
                note="invented demo log",
            )
        )
    for progress in members:
        _, after_step = _spectral_steps(progress, step)
        _spectrum(
            result,
            technician,
            progress,
            after_step,
            stage="after",
            at=unloaded_at + datetime.timedelta(hours=3),
        )


@transaction.atomic
def record_demo_evidence(
    lab, *, now: datetime.datetime | None = None, seed: int = 2026
) -> DemoEvidence:
    """Load, unload and check a few chamber runs and add before/after spectra.

    `lab` is a built `labrecords.demo.build.DemoLab`; only its lots are used. Returns what
    was made; pieces and groups that could not be used are listed in `skipped`.
    """
    rng = random.Random(seed)
    now = now or timezone.now()
    technician = lab.staff[Role.TECHNICIAN]
    result = DemoEvidence()
    lot_ids = [lot.pk for lot in lab.lots]
    loaded = set(
        ChamberRun.objects.filter(unloaded_at__isnull=True).values_list(
            "pieces__piece_id", flat=True
        )
    )
    groups: dict[tuple[int, str, str], list[PieceProgress]] = defaultdict(list)
    for progress in progress_for(
        current_assignments().filter(piece__lot_id__in=lot_ids).order_by("piece__ident")
    ):
        step = progress.open_step
        if step is None or step.kind not in CHAMBER_KINDS or progress.piece.pk in loaded:
            continue
        if step.kind not in CHAMBERS or progress.previous_done_at is None:
            continue
        groups[(progress.piece.lot_id, step.kind, condition_of(step.parameters))].append(progress)
    ordered = sorted(groups.items(), key=lambda item: max(p.previous_done_at for p in item[1]))
    # Plan the runs first: a chamber holds one run at a time, and pieces of one condition
    # that are ready before a run is loaded go into it together.
    planned: list[dict] = []
    busy_until: dict[str, datetime.datetime] = {}
    for (_lot_id, kind, condition), members in ordered:
        step = members[0].open_step
        try:
            exposure_requirement(step.method_version)
        except ValidationError as exc:
            note = f"{step.method_version}: {' '.join(exc.messages)}"
            if note not in result.skipped:
                result.skipped.append(note)
            continue
        chamber_ident, logger_ident = CHAMBERS[kind]
        ready = _ceil_hour(
            max(p.previous_done_at for p in members) + datetime.timedelta(minutes=50)
        )
        last = next((r for r in reversed(planned) if r["chamber"] == chamber_ident), None)
        if last is not None and last["condition"] == condition and ready <= last["loaded_at"]:
            last["members"].extend(members)
            continue
        if len(planned) >= MAX_RUNS:
            continue
        loaded_at = ready
        if chamber_ident in busy_until:
            loaded_at = max(
                loaded_at, _ceil_hour(busy_until[chamber_ident] + datetime.timedelta(hours=1))
            )
        if loaded_at > now:
            continue
        planned.append(
            {
                "chamber": chamber_ident,
                "logger": logger_ident,
                "kind": kind,
                "condition": condition,
                "step": step,
                "loaded_at": loaded_at,
                "members": list(members),
            }
        )
        busy_until[chamber_ident] = loaded_at + datetime.timedelta(hours=RUN_HOURS)
    for plan in planned:
        _record_run(result, plan, technician=technician, now=now, rng=rng)
    if not result.runs:
        result.skipped.append(
            "no piece of the demo lots stands at a chamber step: record the bench steps "
            "before the chamber steps first"
        )
    return result


@transaction.atomic
def check_bench_runs(lab, *, seed: int = 2027) -> DemoEvidence:
    """Upload and check an invented log for every finished run the bench demo made.

    The bench demo records chamber steps with their runs; a report is issued only once each
    run's log has been checked, as in the lab. Each log is uploaded half an hour after the
    run was unloaded. A method whose exposure cannot be checked (a parameter the catalogue
    still lacks) is listed in `skipped`, and its lots wait for the lab to enter it.
    """
    rng = random.Random(seed)
    technician = lab.staff[Role.TECHNICIAN]
    result = DemoEvidence()
    runs = (
        ChamberRun.objects.filter(unloaded_at__isnull=False, exposure_checks__isnull=True)
        .select_related("chamber", "method_version__method")
        .order_by("loaded_at")
    )
    for run in runs:
        try:
            requirement = exposure_requirement(run.method_version)
        except ValidationError as exc:
            result.skipped.append(f"{run.ident}: {' '.join(exc.messages)}")
            continue
        log = _log_csv(run.loaded_at, run.unloaded_at, requirement, excursion=False, rng=rng)
        with clock.frozen_at(run.unloaded_at + datetime.timedelta(minutes=30)):
            result.checks.append(
                chamber_services.chamber_log_upload(
                    actor=technician,
                    run=run,
                    data=log,
                    original_name=f"{run.ident}.csv",
                    note="invented demo log",
                )
            )
        result.runs.append(run)
    return result
