"""Nonconformances: opened on a failed or invalid step or a suspect instrument; disposed by the
quality manager.

Numbers read NC-<yy>-<nnnn> (year of opening in the lab's time zone). The
number column is unique; the next number is the highest of the year plus one,
inserted in a savepoint and retried when another opening took it first.

A retest disposition makes a new plan revision: the plan as it stands plus a
retest sequence that repeats the failed step's sequence on new witness pieces,
each repeated step naming the step it repeats (`retest_of`). The quality
manager releases it with the disposition, so the bench offers the retest steps
at once.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

from django.core.exceptions import ValidationError
from django.db import IntegrityError, transaction
from django.utils import timezone

from labrecords import clock
from labrecords.access import require_role
from labrecords.models import (
    Disposition,
    Lot,
    LotStage,
    Nonconformance,
    NonconformanceKind,
    PieceStatus,
    PlanSequence,
    PlanStatus,
    PlanStep,
    Report,
    SequencePiece,
    StepResult,
    TestPlan,
    WitnessPiece,
)
from labrecords.roles import Role
from labrecords.services.audit import audit_record, snapshot
from labrecords.services.lots import lot_stage_set

NUMBER_ATTEMPTS = 8


@dataclass
class DispositionOutcome:
    """What a disposition did: the nonconformance, and for a retest the released plan
    revision with its retest steps and the pieces they run on."""

    nonconformance: Nonconformance
    retest_plan: TestPlan | None = None
    retest_steps: list[PlanStep] = field(default_factory=list)
    retest_pieces: list[WitnessPiece] = field(default_factory=list)


def _number_prefix() -> str:
    return f"NC-{timezone.localtime(clock.now()):%y}-"


def _next_number(prefix: str) -> str:
    last = (Nonconformance.objects.filter(number__startswith=prefix)
            .order_by("-number").values_list("number", flat=True).first())
    following = int(last.removeprefix(prefix)) + 1 if last else 1
    return f"{prefix}{following:04d}"


def nonconformance_open(*, actor, kind: str, lot: Lot, description: str,
                        result: StepResult | None = None,
                        report: Report | None = None) -> Nonconformance:
    """Open a nonconformance with the next free number (call inside a transaction).

    Opened automatically by the services that find one (a failed or invalid step, an
    instrument found out of tolerance); `actor` is the person whose action opened it.
    """
    if kind not in NonconformanceKind.values:
        raise ValidationError({"kind": f"Unknown nonconformance kind {kind!r}."})
    if not description.strip():
        raise ValidationError({"description": "Describe the nonconformance."})
    prefix = _number_prefix()
    for attempt in range(NUMBER_ATTEMPTS):
        nonconformance = Nonconformance(
            number=_next_number(prefix), kind=kind, lot=lot, result=result, report=report,
            description=description, opened_by=actor if getattr(actor, "pk", None) else None,
            opened_at=clock.now())
        # The number's uniqueness is the database's to decide (see the retry below).
        nonconformance.full_clean(validate_unique=False)
        try:
            with transaction.atomic():
                nonconformance.save()
        except IntegrityError:
            if attempt == NUMBER_ATTEMPTS - 1:
                raise
            continue
        audit_record(actor=actor, action="open", obj=nonconformance,
                     after=snapshot(nonconformance))
        return nonconformance
    raise AssertionError("unreachable")  # pragma: no cover


@transaction.atomic
def nonconformance_dispose(*, actor, nonconformance: Nonconformance, disposition: str,
                           note: str = "", customer_agreement_ref: str = "",
                           retest_pieces: Sequence[WitnessPiece] | None = None
                           ) -> DispositionOutcome:
    """Record the quality manager's decision on an open nonconformance.

    - retest: a released plan revision with a retest sequence on new pieces (the lot's
      unassigned pieces, or `retest_pieces`); the lot moves to the retest stage.
    - concession: needs the customer's agreement reference.
    - reject_lot, no_impact: need a note saying why.
    Refused when the nonconformance already has a disposition.
    """
    require_role(actor, Role.QUALITY_MANAGER)
    locked = Nonconformance.objects.select_for_update().get(pk=nonconformance.pk)
    if locked.disposition:
        raise ValidationError({"disposition": (
            f"{locked.number} already has a disposition "
            f"({locked.get_disposition_display()}).")})
    if disposition not in Disposition.values:
        raise ValidationError({"disposition": f"Unknown disposition {disposition!r}."})
    if disposition == Disposition.CONCESSION and not customer_agreement_ref.strip():
        raise ValidationError({"customer_agreement_ref": (
            "A concession needs the reference of the customer's agreement.")})
    if disposition in (Disposition.REJECT_LOT, Disposition.NO_IMPACT) and not note.strip():
        raise ValidationError({"disposition_note": "Say why."})
    outcome = DispositionOutcome(nonconformance=locked)
    if disposition == Disposition.RETEST:
        outcome.retest_plan, outcome.retest_steps, outcome.retest_pieces = _retest_revision(
            actor=actor, nonconformance=locked, pieces=retest_pieces)
        if not note.strip():
            note = (f"retest on {', '.join(p.ident for p in outcome.retest_pieces)} in plan "
                    f"{outcome.retest_plan.number}")
    before = snapshot(locked)
    locked.disposition = disposition
    locked.disposition_note = note
    locked.customer_agreement_ref = customer_agreement_ref
    locked.disposed_by = actor
    locked.disposed_at = clock.now()
    locked.full_clean()
    locked.save()
    audit_record(actor=actor, action="dispose", obj=locked, before=before,
                 after=snapshot(locked), reason=note)
    # Imported here: the bench services open nonconformances through this module.
    from labrecords.services.bench import lot_stage_follow

    if disposition == Disposition.RETEST:
        lot = Lot.objects.get(pk=locked.lot_id)
        if lot.stage != LotStage.RETEST:
            lot_stage_set(actor=actor, lot=lot, stage=LotStage.RETEST,
                          reason=f"retest decided on {locked.number}")
    else:
        lot_stage_follow(actor=actor, lot=locked.lot)
    return outcome


def _retest_revision(*, actor, nonconformance: Nonconformance,
                     pieces: Sequence[WitnessPiece] | None
                     ) -> tuple[TestPlan, list[PlanStep], list[WitnessPiece]]:
    result = nonconformance.result
    if result is None:
        raise ValidationError({"disposition": (
            "A retest repeats a recorded step; this nonconformance names no step result.")})
    lot = nonconformance.lot
    current_pk = (TestPlan.objects.current_released().filter(lot=lot)
                  .values_list("pk", flat=True).first())
    if current_pk is None:
        raise ValidationError({"disposition": f"Lot {lot.number} has no released test plan."})
    current = TestPlan.objects.select_for_update().get(pk=current_pk)
    if TestPlan.objects.filter(supersedes=current).exists():
        raise ValidationError({"disposition": (
            f"Plan {current.number} of lot {lot.number} has a draft revision in progress; "
            "the engineer releases or withdraws it before a retest is added.")})
    repeated = current.steps.select_related("sequence").filter(step_key=result.step_key).first()
    if repeated is None:
        raise ValidationError({"disposition": (
            f"The step of {nonconformance.number} is no longer in plan {current.number}.")})
    source = repeated.sequence
    assigned = set(SequencePiece.objects.filter(plan=current).values_list("piece_id", flat=True))
    if pieces is None:
        free = [p for p in lot.pieces.exclude(status=PieceStatus.DISPOSED).order_by("ident")
                if p.pk not in assigned]
        chosen = free[:source.pieces_needed]
    else:
        chosen = list(pieces)
        for piece in chosen:
            if piece.lot_id != lot.pk or piece.pk in assigned:
                raise ValidationError({"retest_pieces": (
                    f"{piece.ident} is not a free witness piece of lot {lot.number}.")})
    if len(chosen) < source.pieces_needed:
        raise ValidationError({"disposition": (
            f"The retest needs {source.pieces_needed} new witness piece(s) and lot "
            f"{lot.number} has {len(chosen)} unassigned: allocate more pieces to the lot first.")})

    now = clock.now()
    revision = TestPlan(
        lot=lot, number=current.number + 1, supersedes=current,
        reason=f"retest decided on {nonconformance.number}", status=PlanStatus.DRAFT,
        created_by=actor, created_at=now, requirements=current.requirements,
        review_items=current.review_items, notes=current.notes,
        assumptions=current.assumptions, options=current.options)
    revision.full_clean()
    revision.save()
    # The plan as released, unchanged: steps keep their keys, so their results follow.
    for sequence in current.sequences.order_by("position"):
        copy = PlanSequence.objects.create(
            plan=revision, position=sequence.position, label=sequence.label,
            summary=sequence.summary, pieces_needed=sequence.pieces_needed)
        for step in sequence.steps.order_by("order"):
            _copy_step(step, plan=revision, sequence=copy, step_key=step.step_key,
                       retest_of=step.retest_of)
        for assignment in sequence.assignments.all():
            SequencePiece.objects.create(plan=revision, sequence=copy, piece=assignment.piece)
    # The retest sequence: the source sequence's steps again, each naming the step it repeats.
    position = (current.sequences.order_by("-position").values_list("position", flat=True)
                .first() or 0) + 1
    earlier = PlanSequence.objects.filter(plan=current, label__startswith=f"{source.label}-R")
    label = f"{source.label}-R{earlier.count() + 1}"
    retest_sequence = PlanSequence.objects.create(
        plan=revision, position=position, label=label,
        summary=f"retest of sequence {source.label} ({nonconformance.number})"[:300],
        pieces_needed=source.pieces_needed)
    steps = [
        _copy_step(step, plan=revision, sequence=retest_sequence, step_key=None, retest_of=step)
        for step in source.steps.order_by("order")
    ]
    for piece in chosen:
        SequencePiece.objects.create(plan=revision, sequence=retest_sequence, piece=piece)
    revision.status = PlanStatus.RELEASED
    revision.released_by = actor
    revision.released_at = now
    revision.full_clean()
    revision.save()
    audit_record(actor=actor, action="retest revision", obj=revision, after={
        **snapshot(revision),
        "retest_sequence": label,
        "retest_of": [str(step.retest_of.step_key) for step in steps],
        "pieces": [p.ident for p in chosen],
    }, reason=f"retest decided on {nonconformance.number}")
    return revision, steps, chosen


def _copy_step(step: PlanStep, *, plan: TestPlan, sequence: PlanSequence, step_key,
               retest_of: PlanStep | None) -> PlanStep:
    fields = dict(
        plan=plan, sequence=sequence, order=step.order, role=step.role,
        method_version=step.method_version, kind=step.kind, name=step.name,
        parameters=step.parameters, acceptance=step.acceptance,
        acceptance_text=step.acceptance_text, hazards=step.hazards,
        destructive=step.destructive, wait_hours_before=step.wait_hours_before,
        wait_reason=step.wait_reason, hours=step.hours, severity=step.severity,
        state=step.state, note=step.note, retest_of=retest_of)
    if step_key is not None:
        fields["step_key"] = step_key
    return PlanStep.objects.create(**fields)
