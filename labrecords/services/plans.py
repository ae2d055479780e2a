"""Test plans: from a lot's coating spec to released sequences of steps on pieces."""

from __future__ import annotations

from dataclasses import asdict
from decimal import Decimal
from typing import Any

from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import transaction

from durability.callouts import ParseOptions, parse_callouts
from durability.catalogue_data import Catalogue, parse_catalogue
from durability.durations import step_hours
from durability.errors import InputError
from durability.models import MethodVersion
from durability.planning import PlanOptions, plan_sequences
from durability.services import version_as_entry
from labrecords import clock
from labrecords.access import require_role
from labrecords.models import (
    Lot,
    PlanSequence,
    PlanStatus,
    PlanStep,
    SequencePiece,
    TestPlan,
    WitnessPiece,
)
from labrecords.roles import Role
from labrecords.services.audit import audit_record, snapshot


def catalogue_from_database() -> tuple[Catalogue, dict[str, MethodVersion]]:
    """The catalogue as the planner sees it: every method's current version."""
    versions: dict[str, MethodVersion] = {}
    for version in MethodVersion.objects.select_related("method__standard").order_by(
        "method", "-number"
    ):
        versions.setdefault(version.method.code, version)
    standards = [
        {
            "designation": s.designation,
            "edition": s.edition,
            "title": s.title,
            "status": s.status,
            "note": s.note,
        }
        for s in {
            v.method.standard.designation: v.method.standard for v in versions.values()
        }.values()
    ]
    methods = []
    for code, version in versions.items():
        method = version.method
        entry = version_as_entry(version)
        entry["parameters"] = {
            name: {
                key: spec[key]
                for key in ("value", "unit", "status", "placeholder", "note")
                if key in spec
            }
            for name, spec in entry["parameters"].items()
        }
        methods.append(
            {
                "code": code,
                "standard": method.standard.designation,
                "clause": method.clause,
                "name": method.name,
                "kind": method.kind,
                "test_key": method.test_key or None,
                **entry,
            }
        )
    return parse_catalogue(
        {"schema": 1, "standards": standards, "methods": methods},
        source="the catalogue in the database",
    ), versions


def _spectral_limits(lot: Lot) -> list[dict[str, Any]]:
    spec = lot.spec
    if spec.wavelength_min_nm is None or spec.wavelength_max_nm is None or not spec.quantity:
        return []
    statistic = "average" if spec.statistic == "average" else None
    limits = []
    for bound, key in ((spec.limit_max_pct, "max"), (spec.limit_min_pct, "min")):
        if bound is None:
            continue
        stat = statistic or ("maximum" if key == "max" else "minimum")
        row = {
            "band_nm": [float(spec.wavelength_min_nm), float(spec.wavelength_max_nm)],
            "quantity": spec.quantity,
            "statistic": stat,
            "max": None,
            "min": None,
            "unit": "%",
        }
        row[key] = float(bound)
        limits.append(row)
    return limits


def _parse_errors(result) -> None:
    if result.errors:
        raise ValidationError(
            {
                "callout_text": [
                    f"line {e.line}, column {e.column}: {e.message} ({e.text!r})"
                    for e in result.errors
                ]
            }
        )


@transaction.atomic
def plan_draft_create(
    *, actor, lot: Lot, pieces_per_sequence: int = 1, spare_pieces: int = 0
) -> TestPlan:
    """Turn the lot's callouts into a draft plan (plan 1, or the next draft after release)."""
    require_role(actor, Role.ENGINEER)
    lot = Lot.objects.select_for_update().select_related("spec").get(pk=lot.pk)
    if lot.plans.filter(status=PlanStatus.DRAFT).exists():
        raise ValidationError("This lot already has a draft plan: edit or release that one.")
    if lot.plans.exists():
        raise ValidationError("This lot has a released plan: make a new revision of it instead.")
    mil_basic = settings.MIL_48497_TEMPERATURE_SOLVENT_BASIC
    parsed = parse_callouts(
        lot.spec.callout_text or "", ParseOptions(mil_48497_temperature_solvent_basic=mil_basic)
    )
    _parse_errors(parsed)
    catalogue, versions = catalogue_from_database()
    options = PlanOptions(
        pieces_per_sequence=pieces_per_sequence,
        spare_pieces=spare_pieces,
        mil_c_48497a_disputed_basic=mil_basic,
        spectral_limits=tuple(_spectral_limits(lot)),
    )
    try:
        draft = plan_sequences([r.as_json() for r in parsed.requirements], catalogue, options)
    except InputError as exc:
        raise ValidationError(str(exc)) from None
    plan = TestPlan(
        lot=lot,
        number=1,
        status=PlanStatus.DRAFT,
        created_by=actor,
        created_at=clock.now(),
        requirements=[r.as_json() for r in parsed.requirements],
        review_items=[asdict(item) for item in draft.review_items],
        notes=list(draft.notes),
        assumptions=list(draft.assumptions),
        options={
            "pieces_per_sequence": pieces_per_sequence,
            "spare_pieces": spare_pieces,
            "mil_48497_temperature_solvent_basic": mil_basic,
        },
    )
    plan.full_clean()
    plan.save()
    for position, sequence in enumerate(draft.sequences, start=1):
        row = PlanSequence.objects.create(
            plan=plan,
            position=position,
            label=sequence.label,
            summary=sequence.summary[:300],
            pieces_needed=sequence.pieces,
        )
        for step in sequence.steps:
            version = versions.get(step.method_code)
            if version is None:
                raise ValidationError(f"The catalogue has no method {step.method_code}.")
            parameters = {name: dict(spec) for name, spec in step.parameters.items()}
            for name, spec in parameters.items():
                # Who confirmed it, when and against which copy, kept with the value.
                spec.update(version.parameter_status.get(name, {}))
            hours, _source = step_hours(step.kind, parameters)
            PlanStep.objects.create(
                plan=plan,
                sequence=row,
                order=step.order,
                role=step.role,
                method_version=version,
                kind=step.kind,
                name=step.name,
                parameters=parameters,
                acceptance=dict(step.acceptance),
                acceptance_text=version.acceptance_text,
                hazards=list(step.hazards),
                destructive=step.destructive,
                wait_hours_before=Decimal(str(step.wait_hours_before)),
                wait_reason=step.wait_reason[:200],
                hours=Decimal(str(round(hours, 2))),
                severity=step.severity,
                state=step.state,
                note=step.note,
            )
    audit_record(
        actor=actor,
        action="create",
        obj=plan,
        after=snapshot(plan),
        reason="draft plan made from the coating spec's callouts",
    )
    return plan


def _editable(plan: TestPlan) -> TestPlan:
    locked = TestPlan.objects.select_for_update().get(pk=plan.pk)
    if locked.status != PlanStatus.DRAFT:
        raise ValidationError("A released plan does not change: make a new revision with a reason.")
    return locked


@transaction.atomic
def plan_step_update(
    *,
    actor,
    step: PlanStep,
    hours: Decimal | None = None,
    wait_hours_before: Decimal | None = None,
    note: str | None = None,
    parameters: dict[str, Any] | None = None,
) -> PlanStep:
    """Edit a draft plan's step: duration, wait, note, or parameter values the plan uses."""
    require_role(actor, Role.ENGINEER)
    _editable(step.plan)
    before = snapshot(step)
    if hours is not None:
        step.hours = hours
    if wait_hours_before is not None:
        step.wait_hours_before = wait_hours_before
    if note is not None:
        step.note = note
    if parameters:
        merged = {name: dict(spec) for name, spec in step.parameters.items()}
        for name, value in parameters.items():
            if name not in merged:
                raise ValidationError({"parameters": f"The step has no parameter {name!r}."})
            if merged[name].get("value") != value:
                merged[name].update(
                    value=value,
                    status="plan_value",
                    note=f"set in the plan by {actor.get_username()}",
                )
        step.parameters = merged
    step.full_clean()
    step.save()
    audit_record(actor=actor, action="change", obj=step, before=before, after=snapshot(step))
    return step


@transaction.atomic
def plan_step_remove(*, actor, step: PlanStep, reason: str) -> None:
    """Take a step out of a draft plan (audited; the draft was never released)."""
    require_role(actor, Role.ENGINEER)
    _editable(step.plan)
    if not reason.strip():
        raise ValidationError({"reason": "Say why the step is taken out."})
    audit_record(
        actor=actor, action="remove step", obj=step.plan, before=snapshot(step), reason=reason
    )
    step.delete()


@transaction.atomic
def plan_pieces_assign(
    *, actor, plan: TestPlan, pieces: list[WitnessPiece] | None = None
) -> list[SequencePiece]:
    """Assign the lot's unassigned pieces to the draft's sequences in order.

    Refused with the number still needed when the lot holds too few pieces.
    """
    require_role(actor, Role.ENGINEER)
    plan = _editable(plan)
    assigned = set(plan.assignments.values_list("piece_id", flat=True))
    free = [p for p in (pieces or plan.lot.pieces.order_by("ident")) if p.pk not in assigned]
    if any(p.lot_id != plan.lot_id for p in free):
        raise ValidationError({"pieces": "A piece from another lot cannot join this plan."})
    made = []
    for sequence in plan.sequences.order_by("position"):
        have = sequence.assignments.count()
        for _ in range(sequence.pieces_needed - have):
            if not free:
                missing = sum(
                    max(0, s.pieces_needed - s.assignments.count()) for s in plan.sequences.all()
                )
                raise ValidationError(
                    {
                        "pieces": (
                            f"The plan needs {missing} more witness piece(s) than the lot has: "
                            "allocate them from stock first."
                        )
                    }
                )
            piece = free.pop(0)
            made.append(SequencePiece.objects.create(plan=plan, sequence=sequence, piece=piece))
    audit_record(
        actor=actor,
        action="assign pieces",
        obj=plan,
        after={"assignments": [[a.sequence.label, a.piece.ident] for a in made]},
    )
    return made


@transaction.atomic
def plan_release(*, actor, plan: TestPlan, review_items_acknowledged: bool = False) -> TestPlan:
    """Release a draft: who and when are recorded; from now on it never changes."""
    require_role(actor, Role.ENGINEER)
    plan = _editable(plan)
    problems = []
    for sequence in plan.sequences.order_by("position"):
        if sequence.assignments.count() < sequence.pieces_needed:
            problems.append(
                f"sequence {sequence.label} has "
                f"{sequence.assignments.count()} of {sequence.pieces_needed} pieces"
            )
        if not sequence.steps.exists():
            problems.append(f"sequence {sequence.label} has no steps")
    if not plan.sequences.exists():
        problems.append("the plan has no sequences")
    if plan.review_items and not review_items_acknowledged:
        problems.append(
            f"{len(plan.review_items)} item(s) need engineering review: acknowledge them to release"
        )
    if problems:
        raise ValidationError({"plan": [f"Cannot release: {p}." for p in problems]})
    before = snapshot(plan)
    plan.status = PlanStatus.RELEASED
    plan.released_by = actor
    plan.released_at = clock.now()
    plan.full_clean()
    plan.save()
    audit_record(actor=actor, action="release", obj=plan, before=before, after=snapshot(plan))
    return plan


@transaction.atomic
def plan_revise(*, actor, plan: TestPlan, reason: str) -> TestPlan:
    """Start a new revision of a released plan: a draft copy that supersedes it once released.

    Steps keep their step keys, so results already recorded follow them.
    """
    require_role(actor, Role.ENGINEER)
    if not reason.strip():
        raise ValidationError({"reason": "Say why the released plan changes."})
    plan = TestPlan.objects.select_for_update().get(pk=plan.pk)
    if plan.status != PlanStatus.RELEASED:
        raise ValidationError("Only a released plan gets a new revision; edit the draft instead.")
    if hasattr(plan, "superseded_by"):
        raise ValidationError("This plan already has a newer revision.")
    revision = TestPlan(
        lot=plan.lot,
        number=plan.number + 1,
        supersedes=plan,
        reason=reason,
        status=PlanStatus.DRAFT,
        created_by=actor,
        created_at=clock.now(),
        requirements=plan.requirements,
        review_items=plan.review_items,
        notes=plan.notes,
        assumptions=plan.assumptions,
        options=plan.options,
    )
    revision.full_clean()
    revision.save()
    for sequence in plan.sequences.order_by("position"):
        copy = PlanSequence.objects.create(
            plan=revision,
            position=sequence.position,
            label=sequence.label,
            summary=sequence.summary,
            pieces_needed=sequence.pieces_needed,
        )
        for step in sequence.steps.order_by("order"):
            PlanStep.objects.create(
                plan=revision,
                sequence=copy,
                step_key=step.step_key,
                order=step.order,
                role=step.role,
                method_version=step.method_version,
                kind=step.kind,
                name=step.name,
                parameters=step.parameters,
                acceptance=step.acceptance,
                acceptance_text=step.acceptance_text,
                hazards=step.hazards,
                destructive=step.destructive,
                wait_hours_before=step.wait_hours_before,
                wait_reason=step.wait_reason,
                hours=step.hours,
                severity=step.severity,
                state=step.state,
                note=step.note,
                retest_of=step.retest_of,
            )
        for assignment in sequence.assignments.all():
            SequencePiece.objects.create(plan=revision, sequence=copy, piece=assignment.piece)
    audit_record(
        actor=actor, action="revise", obj=revision, after=snapshot(revision), reason=reason
    )
    return revision
