"""Plans: from callouts to released sequences; released plans never change."""

import pytest
from django.core.exceptions import ValidationError
from django.db import DatabaseError, IntegrityError, connection, transaction

from labrecords.models import AuditEntry, PlanStatus, PlanStep, TestPlan
from labrecords.services import plans
from tests.factories import LotFactory, WitnessPieceFactory, released_plan

pytestmark = pytest.mark.django_db


def test_a_mil_48497a_callout_becomes_initial_inspection_then_its_basic_tests(cast):
    plan = released_plan(callouts="MIL-C-48497A", engineer=cast.engineer)
    steps = list(plan.steps.order_by("sequence__position", "order"))
    kinds = [s.kind for s in steps]
    # Basic tests of MIL-C-48497A: adhesion, humidity, moderate abrasion (per a public summary,
    # shared/reference/test-methods.md [pub]); temperature and solvent are 'when specified'
    # under the lab's default setting.
    assert {"adhesion", "humidity", "moderate_abrasion"} <= set(kinds)
    assert "temperature" not in kinds and "solvent_solubility" not in kinds
    for sequence in plan.sequences.all():
        first = sequence.steps.order_by("order").first()
        assert first.kind == "inspection"  # an initial inspection before any exposure
    humidity = next(s for s in steps if s.kind == "humidity")
    # 24 h at 49 °C, 95-100 % RH (per a public summary of MIL-C-48497A [pub]).
    assert float(humidity.parameters["duration_h"]["value"]) == 24
    assert float(humidity.hours) == 24
    assert any("MIL-C-48497A" in note or "48497" in note for note in plan.notes + plan.assumptions)


def test_destructive_steps_never_share_a_piece(cast):
    plan = released_plan(callouts="MIL-C-48497A, severe abrasion, salt fog", engineer=cast.engineer)
    for sequence in plan.sequences.all():
        destructive = [s for s in sequence.steps.all() if s.destructive]
        assert len(destructive) <= 1
    pieces = [a.piece_id for a in plan.assignments.all()]
    assert len(pieces) == len(set(pieces))


def test_release_records_who_and_when_and_writes_the_audit_trail(cast):
    plan = released_plan(engineer=cast.engineer)
    assert plan.status == PlanStatus.RELEASED
    assert plan.released_by == cast.engineer and plan.released_at is not None
    assert (
        AuditEntry.objects.filter(
            model="labrecords.TestPlan", object_pk=str(plan.pk), action="release"
        ).count()
        == 1
    )


def test_a_released_plan_refuses_edits_in_the_service_and_in_the_database(cast):
    plan = released_plan(engineer=cast.engineer)
    step = plan.steps.first()
    with pytest.raises(ValidationError, match="new revision"):
        plans.plan_step_update(actor=cast.engineer, step=step, note="changed")
    with (
        pytest.raises((DatabaseError, IntegrityError), match="released test plan"),
        transaction.atomic(),
        connection.cursor() as cursor,
    ):
        cursor.execute("UPDATE labrecords_planstep SET note = 'x' WHERE id = %s", [step.pk])
    with (
        pytest.raises((DatabaseError, IntegrityError), match="released test plan"),
        transaction.atomic(),
        connection.cursor() as cursor,
    ):
        cursor.execute("UPDATE labrecords_testplan SET notes = '[]' WHERE id = %s", [plan.pk])
    assert PlanStep.objects.get(pk=step.pk).note == step.note


def test_a_revision_needs_a_reason_keeps_step_keys_and_supersedes_on_release(cast):
    plan = released_plan(engineer=cast.engineer)
    with pytest.raises(ValidationError, match="why"):
        plans.plan_revise(actor=cast.engineer, plan=plan, reason=" ")
    revision = plans.plan_revise(
        actor=cast.engineer, plan=plan, reason="customer added a water solubility test"
    )
    assert revision.supersedes == plan and revision.status == PlanStatus.DRAFT
    assert set(revision.steps.values_list("step_key", flat=True)) == set(
        plan.steps.values_list("step_key", flat=True)
    )
    plans.plan_release(actor=cast.engineer, plan=revision, review_items_acknowledged=True)
    assert list(TestPlan.objects.current_released().filter(lot=plan.lot)) == [revision]


def test_release_is_refused_while_a_sequence_lacks_pieces_and_says_how_many(cast):
    lot = LotFactory()
    lot.spec.callout_text = "MIL-C-48497A, severe abrasion"
    lot.spec.save()
    released_plan(lot=LotFactory(), engineer=cast.engineer)  # seeds the catalogue
    draft = plans.plan_draft_create(actor=cast.engineer, lot=lot)
    WitnessPieceFactory(lot=lot)
    with pytest.raises(ValidationError, match="more witness piece"):
        plans.plan_pieces_assign(actor=cast.engineer, plan=draft)
    with pytest.raises(ValidationError, match="Cannot release: sequence"):
        plans.plan_release(actor=cast.engineer, plan=draft)


def test_a_callout_error_is_refused_with_line_and_column(cast):
    lot = LotFactory()
    released_plan(lot=LotFactory(), engineer=cast.engineer)
    lot.spec.callout_text = "MIL-C-48497A\nISO 9022-12-6"
    lot.spec.save()
    with pytest.raises(ValidationError, match="line 2, column"):
        plans.plan_draft_create(actor=cast.engineer, lot=lot)


def test_only_an_engineer_plans(cast):
    lot = LotFactory()
    with pytest.raises(Exception, match="role"):
        plans.plan_draft_create(actor=cast.technician, lot=lot)
    assert not TestPlan.objects.filter(lot=lot).exists()
