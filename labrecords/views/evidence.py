"""Evidence files: a piece's spectra (with upload), downloads and spectrum plots.

Every file is served only through these access-checked views, as an attachment with
`X-Content-Type-Options: nosniff` (the PNG plot, drawn by us, is shown inline).
"""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.core.exceptions import ValidationError
from django.core.files.storage import default_storage
from django.http import FileResponse, Http404, HttpResponse
from django.shortcuts import redirect, render
from django.views.decorators.http import require_http_methods, require_safe

from labrecords.access import evidence_for_user, piece_for_user, require_role
from labrecords.forms_evidence import SpectrumForm
from labrecords.models import EvidenceKind
from labrecords.roles import has_role
from labrecords.selectors_evidence import piece_spectra, piece_steps, spectrum_plot
from labrecords.services import spectra as services
from labrecords.views.chambers import form_errors_from


@require_http_methods(["GET", "HEAD", "POST"])
@login_required
def piece_spectra_page(request, ident: str):
    """A piece's spectra with their band figures; technicians and engineers upload here."""
    piece = piece_for_user(request.user, ident)
    can_upload = has_role(request.user, *services.SPECTRUM_ROLES)
    steps = piece_steps(piece) if can_upload else []
    form = SpectrumForm(request.POST or None, request.FILES or None, steps=steps)
    if request.method == "POST":
        require_role(request.user, *services.SPECTRUM_ROLES)
        if form.is_valid():
            data = form.cleaned_data
            step_key = next(s.step_key for s in steps if str(s.step_key) == data["step"])
            upload = data["file"]
            try:
                evidence = services.spectrum_upload(
                    actor=request.user,
                    piece=piece,
                    step_key=step_key,
                    stage=data["stage"],
                    data=upload.read(),
                    original_name=upload.name,
                    quantity=data["quantity"] or None,
                    x_unit=data["x_unit"] or None,
                    y_unit=data["y_unit"] or None,
                    note=data["note"],
                )
            except ValidationError as exc:
                form_errors_from(form, exc)
            else:
                messages.success(request, f"Spectrum {evidence.original_name} stored.")
                return redirect("labrecords:piece-spectra", ident=piece.ident)
    return render(
        request,
        "labrecords/evidence/piece_spectra.html",
        {
            "piece": piece,
            "spectra": piece_spectra(piece),
            "form": form if can_upload and steps else None,
            "spec": piece.lot.spec,
        },
    )


@require_safe
@login_required
def evidence_download(request, pk: int):
    """The stored file as an attachment under the name it was uploaded with."""
    evidence = evidence_for_user(request.user, pk)
    if not default_storage.exists(evidence.file.name):
        raise Http404
    response = FileResponse(
        default_storage.open(evidence.file.name, "rb"),
        as_attachment=True,
        filename=evidence.original_name,
        content_type=evidence.content_type or "application/octet-stream",
    )
    response["X-Content-Type-Options"] = "nosniff"
    return response


def _plot(request, pk: int):
    evidence = evidence_for_user(request.user, pk)
    if evidence.kind != EvidenceKind.SPECTRUM or evidence.piece_id is None:
        raise Http404
    try:
        return evidence, spectrum_plot(evidence)
    except ValidationError:
        raise Http404 from None


@require_safe
@login_required
def spectrum_plot_png(request, pk: int):
    """The spectrum (before/after) with the spec's limits, as PNG for the screen."""
    _evidence, plot = _plot(request, pk)
    response = HttpResponse(plot.png, content_type="image/png")
    response["X-Content-Type-Options"] = "nosniff"
    response["Cache-Control"] = "private, max-age=3600"
    return response


@require_safe
@login_required
def spectrum_plot_svg(request, pk: int):
    """The same drawing as SVG, downloaded (never shown inline)."""
    evidence, plot = _plot(request, pk)
    response = HttpResponse(plot.svg, content_type="image/svg+xml")
    response["Content-Disposition"] = f'attachment; filename="spectrum-{evidence.pk}.svg"'
    response["X-Content-Type-Options"] = "nosniff"
    return response
