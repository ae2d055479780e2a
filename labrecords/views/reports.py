"""Reviews, report issue, issued reports, corrections, result exports and verification.

Lab pages (review, issue, corrections, the draft) answer 404 to customers and outsiders;
the actions answer 403 to lab staff without the role. Issued reports and exports are seen
by lab staff and by the customer users of the report's own organisation; anyone else gets
404. The verification page is open without login and rate-limited per client address.
"""

from __future__ import annotations

import hashlib
import io
import logging
import time

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.contrib.auth.mixins import LoginRequiredMixin
from django.core.cache import cache
from django.core.exceptions import ValidationError
from django.http import FileResponse, HttpResponse
from django.shortcuts import redirect, render
from django.views.decorators.http import require_http_methods, require_safe
from django_filters.views import FilterView
from django_tables2 import SingleTableMixin

from labrecords.access import (
    lab_staff_only,
    lot_for_user,
    order_for_user,
    report_for_user,
    require_role,
)
from labrecords.filters_reports import ReportFilter
from labrecords.forms_reports import CorrectionForm, ReviewForm, SigningForm, VerifyForm
from labrecords.models import DecisionRule, Report, ReportKind
from labrecords.reporting.exports import csv_bytes, results_frame, xlsx_bytes
from labrecords.reporting.pdf import render_report
from labrecords.reporting.plots import drawing_svg_data_uri, spectrum_drawing
from labrecords.roles import Role, has_role, is_lab_staff
from labrecords.selectors_reports import (
    in_force_report,
    lot_results,
    lots_awaiting,
    order_result_rows,
    review_void_reasons,
)
from labrecords.services import reports as report_services
from labrecords.services import reviews as review_services
from labrecords.tables_reports import ReportTable, report_status

logger = logging.getLogger("labrecords.reports")

# The session has signed once: later signatures in it ask for the password only.
SIGNED_IN_SESSION = "labrecords_signed_in_session"
# The verification page: at most VERIFY_LIMIT lookups per client address per window.
VERIFY_LIMIT = 20
VERIFY_WINDOW_S = 600


def _first_in_session(request) -> bool:
    return not request.session.get(SIGNED_IN_SESSION, False)


def _signed(request) -> None:
    request.session[SIGNED_IN_SESSION] = True


def _errors_into(form, exc: ValidationError) -> None:
    """A service's refusal shown next to the field it names (or above the form)."""
    if hasattr(exc, "error_dict"):
        for name, errors in exc.error_dict.items():
            for error in errors:
                for message in error.messages:
                    form.add_error(name if name in form.fields else None, message)
    else:
        for message in exc.messages:
            form.add_error(None, message)


def _credentials(request, form) -> dict:
    return {
        "password": form.cleaned_data["password"],
        "username": form.cleaned_data.get("username"),
        "first_in_session": _first_in_session(request),
    }


def _plots(content) -> list[tuple[object, str]]:
    return [(plot, drawing_svg_data_uri(spectrum_drawing(plot))) for plot in content.spectra]


# ---------------------------------------------------------------- issued reports


class ReportListView(LoginRequiredMixin, SingleTableMixin, FilterView):
    """Issued reports the user may see; lab staff also see lots waiting for review or issue."""

    table_class = ReportTable
    filterset_class = ReportFilter
    template_name = "labrecords/reports/list.html"
    paginate_by = 50

    def get_queryset(self):
        return Report.objects.visible_to(self.request.user).select_related(
            "lot__order__customer", "amends__replaced_by", "replaces", "replaced_by"
        )

    def get_context_data(self, **kwargs):
        context = super().get_context_data(**kwargs)
        if is_lab_staff(self.request.user):
            context["awaiting"] = lots_awaiting()
        return context


@require_safe
@login_required
def report_detail(request, number: str):
    report = report_for_user(request.user, number)
    can_correct = (
        is_lab_staff(request.user)
        and has_role(request.user, *report_services.ISSUERS)
        and report.kind != ReportKind.AMENDMENT
        and report_status(report) == "In force"
    )
    return render(
        request,
        "labrecords/reports/detail.html",
        {
            "report": report,
            "status": report_status(report),
            "amendments": list(report.amendments.order_by("issued_at")),
            "signatures": list(report.review.signatures.all()) + list(report.signatures.all()),
            "decision_rule": DecisionRule(report.decision_rule).label,
            "can_correct": can_correct,
            "verify_url": report_services.verify_url(report.verification_code),
        },
    )


@require_safe
@login_required
def report_pdf(request, number: str):
    """The stored PDF exactly as issued, as an attachment."""
    report = report_for_user(request.user, number)
    try:
        data = report_services.report_pdf_bytes(report)
    except ValidationError as exc:
        logger.error("report %s: %s", report.number, exc.messages[0])
        return HttpResponse(exc.messages[0], status=500, content_type="text/plain")
    return FileResponse(
        io.BytesIO(data),
        as_attachment=True,
        filename=f"{report.number}.pdf",
        content_type="application/pdf",
    )


# ---------------------------------------------------------------- review and issue


@require_http_methods(["GET", "HEAD", "POST"])
@login_required
def lot_review(request, pk: int):
    """The lot's results for review; a reviewer signs the review here."""
    lab_staff_only(request.user)
    lot = lot_for_user(request.user, pk)
    form = ReviewForm(request.POST or None, first_in_session=_first_in_session(request))
    if request.method == "POST":
        require_role(request.user, Role.REVIEWER)
        if form.is_valid():
            try:
                review_services.review_sign(
                    actor=request.user,
                    lot=lot,
                    comment=form.cleaned_data["comment"],
                    **_credentials(request, form),
                )
            except ValidationError as exc:
                _errors_into(form, exc)
            else:
                _signed(request)
                messages.success(request, f"Review of lot {lot.number} signed.")
                return redirect("labrecords:lot-report", pk=lot.pk)
    state = lot_results(lot)
    is_reviewer = has_role(request.user, Role.REVIEWER)
    reviews = [
        (review, review_void_reasons(review))
        for review in lot.reviews.select_related("reviewer").order_by("-reviewed_at")
    ]
    return render(
        request,
        "labrecords/reports/lot_review.html",
        {
            "lot": lot,
            "rows": [row for row in state.planned],
            "missing": state.problems(),
            "eligibility": review_services.reviewer_problems(request.user, state)
            if is_reviewer
            else [],
            "reviews": reviews,
            "form": form if is_reviewer else None,
        },
    )


@require_http_methods(["GET", "HEAD", "POST"])
@login_required
def lot_report(request, pk: int):
    """The report as it would read now, what is still missing, and the issue form."""
    lab_staff_only(request.user)
    lot = lot_for_user(request.user, pk)
    form = SigningForm(request.POST or None, first_in_session=_first_in_session(request))
    if request.method == "POST":
        require_role(request.user, *report_services.ISSUERS)
        if form.is_valid():
            try:
                report = report_services.report_issue(
                    actor=request.user, lot=lot, **_credentials(request, form)
                )
            except ValidationError as exc:
                _errors_into(form, exc)
            else:
                _signed(request)
                messages.success(request, f"Report {report.number} issued.")
                return redirect("labrecords:report-detail", number=report.number)
    content = report_services.draft_content(lot)
    _review, missing = report_services.report_missing_items(lot)
    existing = in_force_report(lot)
    may_issue = has_role(request.user, *report_services.ISSUERS) and existing is None
    return render(
        request,
        "labrecords/reports/lot_report.html",
        {
            "lot": lot,
            "content": content,
            "plots": _plots(content),
            "missing": missing,
            "existing": existing,
            "form": form if may_issue else None,
        },
    )


@require_safe
@login_required
def lot_report_draft_pdf(request, pk: int):
    """The draft as a PDF (marked DRAFT on every page), for checking the layout."""
    lab_staff_only(request.user)
    lot = lot_for_user(request.user, pk)
    pdf = render_report(report_services.draft_content(lot))
    return FileResponse(
        io.BytesIO(pdf),
        as_attachment=True,
        filename=f"draft-{lot.number}.pdf",
        content_type="application/pdf",
    )


def _correct(request, number: str, kind: str):
    lab_staff_only(request.user)
    report = report_for_user(request.user, number)
    form = CorrectionForm(request.POST or None, first_in_session=_first_in_session(request))
    service = (
        report_services.report_amend
        if kind == ReportKind.AMENDMENT
        else report_services.report_reissue
    )
    if request.method == "POST":
        require_role(request.user, *report_services.ISSUERS)
        if form.is_valid():
            try:
                issued = service(
                    actor=request.user,
                    report=report,
                    change_description=form.cleaned_data["change_description"],
                    **_credentials(request, form),
                )
            except ValidationError as exc:
                _errors_into(form, exc)
            else:
                _signed(request)
                messages.success(request, f"{ReportKind(kind).label} {issued.number} issued.")
                return redirect("labrecords:report-detail", number=issued.number)
    _review, missing = report_services.report_missing_items(report.lot)
    return render(
        request,
        "labrecords/reports/correct.html",
        {
            "report": report,
            "kind": kind,
            "kind_label": ReportKind(kind).label,
            "missing": missing,
            "form": form,
        },
    )


@require_http_methods(["GET", "HEAD", "POST"])
@login_required
def report_amend(request, number: str):
    return _correct(request, number, ReportKind.AMENDMENT)


@require_http_methods(["GET", "HEAD", "POST"])
@login_required
def report_reissue(request, number: str):
    return _correct(request, number, ReportKind.REISSUE)


# ---------------------------------------------------------------- exports


@require_safe
@login_required
def order_results_csv(request, pk: int):
    order = order_for_user(request.user, pk)
    data = csv_bytes(results_frame(order_result_rows(order, request.user)))
    response = HttpResponse(data, content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="{order.number}-results.csv"'
    return response


@require_safe
@login_required
def order_results_xlsx(request, pk: int):
    order = order_for_user(request.user, pk)
    data = xlsx_bytes(results_frame(order_result_rows(order, request.user)))
    response = HttpResponse(
        data, content_type="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"
    )
    response["Content-Disposition"] = f'attachment; filename="{order.number}-results.xlsx"'
    return response


# ---------------------------------------------------------------- verification (public)


def _over_limit(request) -> int:
    """Count this lookup; seconds to wait when the client is over the limit, else 0.

    Fixed windows of VERIFY_WINDOW_S seconds per client address (REMOTE_ADDR), counted in
    Django's cache. The address is hashed so the cache holds no client addresses.
    """
    address = request.META.get("REMOTE_ADDR") or "unknown"
    window = int(time.time() // VERIFY_WINDOW_S)
    key = f"labrecords:verify:{hashlib.sha256(address.encode()).hexdigest()[:24]}:{window}"
    if cache.add(key, 1, VERIFY_WINDOW_S + 5):
        count = 1
    else:
        try:
            count = cache.incr(key)
        except ValueError:  # expired between add and incr
            cache.set(key, 1, VERIFY_WINDOW_S + 5)
            count = 1
    if count <= VERIFY_LIMIT:
        return 0
    return max(1, int((window + 1) * VERIFY_WINDOW_S - time.time()))


def _verify(request, code: str | None):
    wait = _over_limit(request)
    if wait:
        response = render(
            request,
            "labrecords/reports/verify.html",
            {
                "form": VerifyForm(),
                "limited": True,
                "wait_minutes": -(-wait // 60),
                "limit": VERIFY_LIMIT,
                "window_minutes": VERIFY_WINDOW_S // 60,
            },
            status=429,
        )
        response["Retry-After"] = str(wait)
        return response
    form = VerifyForm({"code": code} if code is not None else None)
    found = None
    status = 200
    if code is not None:
        if form.is_valid():
            normal = report_services.normalise_code(form.cleaned_data["code"])
            found = (
                Report.objects.filter(verification_code=normal)
                .values("number", "issued_at", "sha256")
                .first()
            )
        if found is None:
            status = 404
    return render(
        request,
        "labrecords/reports/verify.html",
        {"form": form, "found": found, "looked_up": code is not None},
        status=status,
    )


@require_safe
def verify_lookup(request):
    """The verification form (open without login); ?code= looks a code up."""
    return _verify(request, request.GET.get("code"))


@require_safe
def verify_code(request, code: str):
    """The page a report's QR code opens: number, date of issue and digest, nothing else."""
    return _verify(request, code)
