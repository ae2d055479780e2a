"""What a report states: bench results with their reasons, chamber exposures, spectra, the
methods with their deviations, and the conformity statement with its decision rule."""

import datetime
import io
from decimal import Decimal

import pytest
from pypdf import PdfReader

from durability.models import Method
from labrecords import clock
from labrecords.models import (
    ChamberRun,
    DecisionRule,
    Evidence,
    ExposureCheck,
    LotStage,
    StepResult,
)
from labrecords.reporting.pdf import render_report
from labrecords.selectors_reports import lot_results
from labrecords.services import authorisations, plans, reports, reviews
from labrecords.services.evidence import store_bytes
from tests.factories import LotFactory, OrderFactory, UserFactory, WitnessPieceFactory
from tests.labrecords.bench_support import NOW, bench_setup, record_through
from tests.labrecords.report_fixtures import PASSWORD, finished_lot

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = str(tmp_path / "media")


def words(data: bytes) -> str:
    return " ".join(
        " ".join(page.extract_text().split()) for page in PdfReader(io.BytesIO(data)).pages
    )


def test_a_lot_recorded_at_the_bench_is_reviewed_and_issued(cast):
    customer = cast.customer_org
    customer.contact_name = "Ivy Invented"
    customer.save()
    lot = LotFactory(order=OrderFactory(customer=customer), received_on=datetime.date(2026, 11, 2))
    bench = bench_setup(cast, lot=lot)
    record_through(bench, max(step.order for step in bench.steps))
    lot.refresh_from_db()
    assert lot.stage == LotStage.RESULTS_COMPLETE
    # Recording needs the authorisation list, so every method here has a list; the pure
    # reviewer is on none of them and may not review.
    with pytest.raises(Exception, match="not on the authorisation list"):
        reviews.review_sign(actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev")
    reviewer = UserFactory(
        username="rev-eng", first_name="Rhea", last_name="Invented", roles=["reviewer", "engineer"]
    )
    with clock.frozen_at(NOW):
        for method in Method.objects.filter(
            pk__in=[s.method_version.method_id for s in bench.steps]
        ):
            authorisations.method_authorisation_grant(
                actor=cast.quality_manager, user=reviewer, method=method
            )
    later = NOW + datetime.timedelta(hours=1)
    with clock.frozen_at(later):
        reviews.review_sign(actor=reviewer, lot=lot, password=PASSWORD, username="rev-eng")
    run = ChamberRun.objects.get(results__piece__lot=lot)
    with pytest.raises(reports.ReportNotReady, match=f"a checked chamber log for run {run.ident}"):
        with clock.frozen_at(later):
            reports.report_issue(actor=reviewer, lot=lot, password=PASSWORD, first_in_session=False)
    log = Evidence(
        kind="chamber_log",
        chamber_run=run,
        file="evidence/00/log",
        sha256="0" * 64,
        original_name="log.csv",
        content_type="text/csv",
        size=1,
        uploaded_by=cast.technician,
        uploaded_at=later,
    )
    log.save()
    ExposureCheck(
        run=run,
        evidence=log,
        counts=True,
        convention="interpolated",
        summary={
            "in_tolerance_hours": 24.3,
            "required_hours": 24.0,
            "convention_text": "linear interpolation between readings",
        },
        checked_by=cast.technician,
        checked_at=later,
    ).save()
    with clock.frozen_at(later + datetime.timedelta(minutes=5)):
        report = reports.report_issue(
            actor=reviewer, lot=lot, password=PASSWORD, first_in_session=False
        )
    with report.pdf.open("rb") as handle:
        text = words(handle.read())
    assert "24.30 h of 24 h required; counts" in text
    assert "linear interpolation between readings" in text
    assert "Reviewed by: Rhea Invented, reviewer" in text
    adhesion = StepResult.objects.get(piece__lot=lot, step__kind="adhesion")
    assert " ".join(adhesion.verdict_reason.split()) in text
    assert run.ident in text
    # Each convention a verdict used is stated once, not in every row.
    assert "Conventions the verdicts used" in text
    conventions = {c for r in StepResult.objects.filter(piece__lot=lot) for c in r.conventions}
    assert conventions
    for convention in conventions:
        assert text.count(" ".join(convention.split())) == 1


def spectrum_csv(offset: float) -> bytes:
    lines = ["Wavelength (nm),R (%)"]
    lines += [f"{w},{0.3 + offset + 0.001 * abs(w - 550):.4f}" for w in range(380, 801, 5)]
    return ("\n".join(lines) + "\n").encode()


def test_spectra_before_and_after_are_drawn_with_the_limit(cast):
    lot = finished_lot(cast)
    spec = lot.spec
    spec.wavelength_min_nm, spec.wavelength_max_nm = Decimal("400"), Decimal("700")
    spec.quantity, spec.statistic, spec.limit_max_pct = "R", "average", Decimal("0.5")
    spec.save()
    piece = lot.pieces.first()
    for stage, offset in (("before", 0.0), ("after", 0.05)):
        data = spectrum_csv(offset)
        name, digest = store_bytes(data)
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
            uploaded_at=NOW,
        ).save()
    content = reports.draft_content(lot)
    (plot,) = content.spectra
    assert plot.quantity == "R" and len(plot.before) == len(plot.after) == 85
    assert plot.before[0] == (380.0, 0.3 + 0.17)
    assert plot.limits[0].value == 0.5 and plot.limits[0].start_nm == 400.0
    data = render_report(content)
    text = words(data)
    assert f"Piece {piece.ident}: R before and after the tests" in text
    assert "R max 0.5 % (average over the band)" in text
    assert all(not page.images for page in PdfReader(io.BytesIO(data)).pages)


def test_a_failed_result_makes_the_statement_say_it_does_not_conform(cast):
    lot = finished_lot(cast, fail_one=True)
    conformity = reports.draft_content(lot).conformity
    assert not conformity.conforms
    assert (
        f"Lot {lot.number} does NOT conform to coating spec {lot.spec.part_number}"
        in conformity.statement
    )
    (failing,) = conformity.failing
    assert failing.startswith("piece ")
    # The rule's words come from the verdict code (ILAC-G8 simple acceptance, [mem] there).
    assert conformity.decision_rule_text.startswith("Simple acceptance (the measured value")


def test_a_guard_band_order_says_so_and_needs_the_uncertainty(cast):
    lot = finished_lot(cast)
    order = lot.order
    order.decision_rule = DecisionRule.GUARD_BAND
    order.save()
    conformity = reports.draft_content(lot).conformity
    assert conformity.decision_rule == "Guarded acceptance (guard band = expanded uncertainty)"
    assert "guarded acceptance" in conformity.decision_rule_text.lower()
    _review, missing = reports.report_missing_items(lot)
    spectral = [row for row in lot_results(lot).planned if row.step.kind == "spectral_measurement"]
    assert spectral
    for row in spectral:
        assert (
            f"the measurement uncertainty for {row.where} (the order's decision rule is a "
            "guard band)" in missing
        )


def test_methods_state_standard_edition_clause_version_and_deviations(cast):
    lot = LotFactory(order=OrderFactory(customer=cast.customer_org))
    finished_lot(cast)  # seeds the catalogue
    lot.spec.callout_text = "MIL-C-48497A"
    lot.spec.save()
    draft = plans.plan_draft_create(actor=cast.engineer, lot=lot)
    humidity = draft.steps.get(kind="humidity")
    plans.plan_step_update(actor=cast.engineer, step=humidity, parameters={"duration_h": 48})
    for _ in range(sum(s.pieces_needed for s in draft.sequences.all())):
        WitnessPieceFactory(lot=lot, glass=lot.spec.glass)
    plans.plan_pieces_assign(actor=cast.engineer, plan=draft)
    plans.plan_release(actor=cast.engineer, plan=draft, review_items_acknowledged=True)
    methods = {m.code: m for m in reports.draft_content(lot).methods}
    line = methods["MIL-C-48497A:humidity"]
    version = humidity.method_version
    assert line.standard == "MIL-C-48497A"
    assert line.edition == version.method.standard.edition
    assert line.version == version.number
    assert "duration 48 h, set in the test plan instead of the method's value" in line.deviations
    assert methods["MIL-C-48497A:adhesion"].deviations == ("none",)


def test_the_lab_profile_names_the_lab_and_its_accreditation(cast, settings):
    from durability.services import lab_profile_set

    settings.LAB_ADDRESS = ""
    lot = finished_lot(cast)
    _review, missing = reports.report_missing_items(lot)
    assert "the lab's address (record the lab profile, or set LAB_ADDRESS)" in missing
    with clock.frozen_at(NOW):
        lab_profile_set(
            actor=cast.administrator,
            name="Invented Film Test Lab",
            address="3 Imaginary Quay, Nowhere",
            accreditation="invented no. 0001",
        )
    _review, missing = reports.report_missing_items(lot)
    assert not any("lab's" in item for item in missing)
    text = words(render_report(reports.draft_content(lot)))
    assert "Invented Film Test Lab" in text and "3 Imaginary Quay, Nowhere" in text
    assert "Accreditation invented no. 0001" in text
