"""Report benchmark: a lot with 40 witness pieces, 7 steps each (280 results) and two
spectrum plots. Prints the time to gather the content, to lay out the PDF and to issue it
(gather, lay out, store, sign), and the file size. Target: at most 1.5 s to generate.

Run with `pytest -m benchmark tests/benchmarks/test_bench_report.py -s`. Figures are
printed; nothing about time is asserted (the report's content is).
"""

from __future__ import annotations

import datetime
import io
import time

import pytest
from pypdf import PdfReader

from durability.models import MethodVersion
from labrecords import clock
from labrecords.models import (
    Evidence,
    PlanSequence,
    PlanStep,
    SequencePiece,
    StepResult,
    TestPlan,
)
from labrecords.reporting.pdf import render_report
from labrecords.selectors_reports import report_content
from labrecords.services import plans, reports, reviews
from labrecords.services.evidence import store_bytes
from tests.factories import LotFactory, OrderFactory, WitnessPieceFactory, released_plan
from tests.labrecords.report_fixtures import MOMENT, PASSWORD

pytestmark = [pytest.mark.benchmark, pytest.mark.django_db]

PIECES = 40
STEPS = 7
TARGET_S = 1.5


def big_lot(cast):
    """A released plan of one sequence with 7 steps on 40 pieces, every result recorded."""
    released_plan(engineer=cast.engineer)  # seeds the catalogue
    customer = cast.customer_org
    customer.contact_name = "Ivy Invented"
    customer.save()
    lot = LotFactory(order=OrderFactory(customer=customer), received_on=datetime.date(2026, 10, 6))
    spec = lot.spec
    spec.wavelength_min_nm, spec.wavelength_max_nm, spec.quantity = 400, 700, "R"
    spec.statistic, spec.limit_max_pct = "average", 0.5
    spec.save()
    versions = list(
        MethodVersion.objects.filter(
            method__code__in=[
                "LAB:inspection",
                "LAB:spectral",
                "MIL-C-48497A:adhesion",
                "MIL-C-48497A:moderate_abrasion",
            ]
        ).select_related("method")
    )
    with clock.frozen_at(MOMENT - datetime.timedelta(days=3)):
        plan = TestPlan(lot=lot, number=1, created_by=cast.engineer, created_at=clock.now())
        plan.save()
        sequence = PlanSequence.objects.create(
            plan=plan, position=1, label="A", pieces_needed=PIECES
        )
        steps = [
            PlanStep.objects.create(
                plan=plan,
                sequence=sequence,
                order=order + 1,
                method_version=version,
                kind=version.method.kind,
                name=version.method.name,
            )
            for order, version in enumerate((versions * 2)[:STEPS])
        ]
        pieces = [WitnessPieceFactory(lot=lot, glass=spec.glass) for _ in range(PIECES)]
        for piece in pieces:
            SequencePiece.objects.create(plan=plan, sequence=sequence, piece=piece)
        plans.plan_release(actor=cast.engineer, plan=plan)
    with clock.frozen_at(MOMENT):
        StepResult.objects.bulk_create(
            [
                StepResult(
                    step=step,
                    step_key=step.step_key,
                    piece=piece,
                    values={
                        "inspection": {"no_defects": True, "lighting": "dark field"},
                        "strokes": 50,
                        "force_n": 4.5,
                    },
                    verdict="pass",
                    verdict_reason=f"{step.name}: pass against the acceptance criterion",
                    recorded_by=cast.technician,
                    recorded_at=MOMENT,
                    observed_at=MOMENT - datetime.timedelta(hours=1),
                )
                for piece in pieces
                for step in steps
            ]
        )
    for piece in pieces[:2]:
        for stage, offset in (("before", 0.0), ("after", 0.04)):
            data = "Wavelength (nm),R (%)\n" + "".join(
                f"{w / 2:.1f},{0.3 + offset + 0.0004 * abs(w / 2 - 550):.4f}\n"
                for w in range(700, 1601)
            )
            name, digest = store_bytes(data.encode())
            Evidence(
                kind="spectrum",
                lot=lot,
                piece=piece,
                stage=stage,
                file=name,
                sha256=digest,
                original_name=f"{stage}.csv",
                content_type="text/plain",
                size=len(data),
                summary={"import": {"options": {"quantity": "R"}}},
                uploaded_by=cast.technician,
                uploaded_at=MOMENT,
            ).save()
    return lot


def test_a_report_of_40_pieces_with_7_steps_and_two_plots(cast, settings, tmp_path):
    settings.MEDIA_ROOT = str(tmp_path)
    lot = big_lot(cast)
    with clock.frozen_at(MOMENT + datetime.timedelta(hours=2)):
        review = reviews.review_sign(
            actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev"
        )
    header = reports.draft_content(lot).header

    started = time.perf_counter()
    content = report_content(lot, header=header, review=review, authorisation=None)
    gathered = time.perf_counter()
    pdf = render_report(content)
    rendered = time.perf_counter()
    with clock.frozen_at(MOMENT + datetime.timedelta(hours=3)):
        report = reports.report_issue(
            actor=cast.reviewer, lot=lot, password=PASSWORD, first_in_session=False
        )
    issued = time.perf_counter()

    assert len(content.results) == PIECES * STEPS and len(content.spectra) == 2
    pages = len(PdfReader(io.BytesIO(pdf)).pages)
    generate = rendered - started
    print(
        f"\nreport of {PIECES} pieces x {STEPS} steps, 2 plots:"
        f"\n  gather the content  {gathered - started:6.3f} s"
        f"\n  lay out the PDF     {rendered - gathered:6.3f} s"
        f"\n  generate (both)     {generate:6.3f} s  (target <= {TARGET_S} s: "
        f"{'met' if generate <= TARGET_S else 'NOT met'})"
        f"\n  issue (all of it)   {issued - rendered:6.3f} s"
        f"\n  file size           {len(pdf) / 1024:6.1f} KiB, {pages} pages"
        f"\n  issued report       {report.number}, {report.pdf.size / 1024:.1f} KiB"
    )
