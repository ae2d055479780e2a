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


def record(
    *,
    step,
    piece,
    by,
    verdict: str = Verdict.PASS,
    values: dict | None = None,
    at: datetime.datetime | None = None,
    **extra,
) -> StepResult:
    at = at or clock.now()
    result = StepResult(
        step=step,
        step_key=step.step_key,
        piece=piece,
        values=values or values_for(step),
        verdict=verdict,
        verdict_reason=extra.pop(
            "verdict_reason", f"{step.name}: {verdict} against the acceptance criterion"
        ),
        verdict_clause=extra.pop("verdict_clause", "clause per method"),
        recorded_by=by,
        recorded_at=at,
        observed_at=at - datetime.timedelta(minutes=20),
        **extra,
    )
    result.save()
    return result


def correct(
    result: StepResult,
    *,
    by,
    reason: str,
    verdict: str | None = None,
    values: dict | None = None,
    at: datetime.datetime | None = None,
) -> StepResult:
    at = at or clock.now()
    correction = StepResult(
        record_key=result.record_key,
        number=result.number + 1,
        supersedes=result,
        step=result.step,
        step_key=result.step_key,
        piece=result.piece,
        values=values if values is not None else result.values,
        verdict=verdict or result.verdict,
        verdict_reason=result.verdict_reason,
        verdict_clause=result.verdict_clause,
        recorded_by=by,
        recorded_at=at,
        observed_at=result.observed_at,
        reason=reason,
    )
    correction.save()
    return correction


def finished_lot(
    cast,
    *,
    customer: Customer | None = None,
    callouts: str = "MIL-C-48497A",
    fail_one: bool = False,
    at: datetime.datetime = MOMENT,
) -> Lot:
    """A lot of `customer` (the cast's own by default) with every planned result recorded
    by the technician, and the initial inspection as an observation."""
    customer = customer or cast.customer_org
    if not (customer.contact_name or customer.address):
        Customer.objects.filter(pk=customer.pk).update(
            contact_name="Ivy Invented", address="9 Made-up Lane, Nowhere"
        )
    lot = LotFactory(order=OrderFactory(customer=customer), received_on=datetime.date(2026, 10, 6))
    with clock.frozen_at(at - datetime.timedelta(days=2)):
        plan = released_plan(lot=lot, callouts=callouts, engineer=cast.engineer)
    with clock.frozen_at(at):
        first = True
        for assignment in plan.assignments.select_related("piece", "sequence"):
            Observation(
                piece=assignment.piece,
                point="initial",
                no_defects=True,
                recorded_by=cast.technician,
                recorded_at=at,
                observed_at=at - datetime.timedelta(hours=1),
            ).save()
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
        record_key=result.record_key,
        number=result.number + 1,
        supersedes=result,
        step=result.step,
        step_key=result.step_key,
        piece=result.piece,
        values=result.values,
        verdict=result.verdict,
        verdict_reason=result.verdict_reason,
        recorded_by=by,
        recorded_at=at,
        observed_at=result.observed_at,
        reason="uncertainty added",
        uncertainty=Decimal(value),
        uncertainty_unit=unit,
    )
    correction.save()
    return correction


def synthetic_content(
    *,
    pieces: int = 40,
    steps: int = 7,
    plots: int = 2,
    kind: str = "report",
    number: str = "R26-0042",
):
    """A ReportContent built in memory (no database): for layout tests and the benchmark.

    Values carry the symbols reportlab's built-in fonts lack (≤, Δ, λ, µ, °).
    """
    import math
    import zoneinfo

    from labrecords.reporting.content import (
        ConformityBlock,
        CustomerBlock,
        DatesBlock,
        ExposureLine,
        ItemsBlock,
        LabBlock,
        LimitLine,
        MethodLine,
        PieceLine,
        ReportContent,
        ReportHeader,
        ResultLine,
        SignatureBlock,
        SpectrumPlotData,
    )

    zone = zoneinfo.ZoneInfo("Europe/Berlin")
    issued = datetime.datetime(2026, 10, 20, 15, 30, tzinfo=zone)
    idents = [f"SYN-W{i + 1:02d}" for i in range(pieces)]
    results = tuple(
        ResultLine(
            piece=ident,
            step=f"A.{s + 1} Step {s + 1}",
            method="LAB:synthetic",
            values=(
                f"Δλ: {0.1 * s:.1f} nm",
                "R average ≤ 0.5 %",
                "temperature: 49 °C",
                "film: 1.2 µm",
            ),
            verdict="pass",
            verdict_label="Pass",
            reason="within the limit (R average ≤ 0.5 %, clause 4.1)",
            clause="4.1",
            uncertainty="± 0.05 %" if s % 2 else "",
            observed=issued,
            revision=1,
        )
        for ident in idents
        for s in range(steps)
    )

    def curve(shift: float) -> tuple[tuple[float, float], ...]:
        return tuple(
            (float(w), 0.3 + 0.25 * math.cos((w - 550 - shift) / 60.0)) for w in range(380, 781, 2)
        )

    spectra = tuple(
        SpectrumPlotData(
            title=f"Piece {idents[i]}: R before and after the tests",
            quantity="R",
            unit="%",
            before=curve(0),
            after=curve(8),
            before_label="before",
            after_label="after",
            limits=(LimitLine(400, 700, 0.5, "R max 0.5 % (average)"),),
            notes=(),
        )
        for i in range(plots)
    )
    signer = SignatureBlock(
        printed_name="Ivo Invented",
        role="reviewer",
        meaning="approval",
        meaning_label="Approved: the report is authorised for issue",
        signed_at=issued,
        time_zone="Europe/Berlin",
    )
    return ReportContent(
        header=ReportHeader(
            number=number,
            kind=kind,
            title=f"Test report {number}",
            issued_at=issued,
            verification_code="ABCD-EFGH-IJKL-MNOP",
            verify_url="http://testserver/verify/ABCD-EFGH-IJKL-MNOP/",
            amends_number="R26-0041" if kind == "amendment" else "",
            change_description="A value was corrected." if kind != "report" else "",
        ),
        lab=LabBlock(
            name="Invented Coating Test Lab", address="1 Nowhere Way", time_zone="Europe/Berlin"
        ),
        customer=CustomerBlock(
            name="Invented Lens Works",
            contact_name="Ivy Invented",
            contact_email="",
            address="9 Made-up Lane",
            order_number="O-1",
            customer_order_number="PO-9",
        ),
        items=ItemsBlock(
            lot_number="L26-0001",
            coater="Box coater A",
            design="BBAR-4070",
            design_detail="Multilayer AR",
            glass="Crown",
            parts="eyepiece lenses",
            quantity=40,
            spec="E-2000",
            callouts="MIL-C-48497A",
            pieces=tuple(
                PieceLine(
                    ident=i,
                    glass="Crown",
                    position="ring 1",
                    represents="eyepiece lenses",
                    condition_on_receipt="no defects observed",
                )
                for i in idents
            ),
        ),
        dates=DatesBlock(
            coating_run=datetime.date(2026, 10, 1),
            received=datetime.date(2026, 10, 2),
            tested_from=datetime.date(2026, 10, 5),
            tested_to=datetime.date(2026, 10, 15),
            issued=issued,
        ),
        methods=tuple(
            MethodLine(
                code=f"LAB:synthetic-{s}",
                name=f"Step {s + 1}",
                standard="LAB",
                edition="2026",
                clause="4.1",
                version=1,
                parameters=("temperature 49 °C",),
                deviations=("none",),
            )
            for s in range(steps)
        ),
        results=results,
        externals=(),
        exposures=(
            ExposureLine(
                run="HC-26-001",
                chamber="HC-01 Humidity chamber",
                condition="49 °C, 95-100 % RH, 24 h",
                loaded=issued,
                unloaded=issued,
                pieces=tuple(idents[:5]),
                in_tolerance_hours=24.3,
                required_hours=24.0,
                counts=True,
                convention="linear interpolation between readings",
                checked=True,
            ),
        ),
        spectra=spectra,
        conformity=ConformityBlock(
            conforms=True,
            statement="Lot L26-0001 conforms.",
            covers="all results",
            specification="coating spec E-2000",
            decision_rule="Simple acceptance",
            decision_rule_text="Simple acceptance.",
            failing=(),
        ),
        statements=("The results relate only to the items tested.",),
        review_signature=signer,
        authorisation=signer,
    )
