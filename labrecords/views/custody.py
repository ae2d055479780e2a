"""Labels and custody: label sheets for a lot's pieces, and where each piece is."""

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.core.exceptions import ValidationError
from django.http import HttpResponse
from django.shortcuts import redirect
from django.views.decorators.http import require_POST, require_safe

from labrecords.access import lab_staff_only, lot_for_user, piece_for_user, require_role
from labrecords.forms_schedule import (
    CustodyDisposeForm,
    CustodyMoveForm,
    CustodyRetainForm,
    LabelsForm,
)
from labrecords.labels import labels_pdf
from labrecords.selectors_custody import base_url, lot_labels
from labrecords.services import custody as custody_services
from labrecords.services.custody import CUSTODY_ROLES


@require_safe
@login_required
def lot_labels_pdf(request, pk: int):
    """A4 label sheet for every witness piece of the lot (?skip=N leaves used places empty)."""
    lot = lot_for_user(request.user, pk)
    lab_staff_only(request.user)
    form = LabelsForm(request.GET or None)
    skip = 0
    if form.is_valid():
        skip = form.cleaned_data["skip"] or 0
    pdf = labels_pdf(
        lot_labels(lot, base_url(request)), title=f"Labels for lot {lot.number}", skip=skip
    )
    response = HttpResponse(pdf, content_type="application/pdf")
    response["Content-Disposition"] = f'inline; filename="labels-{lot.number}.pdf"'
    return response


def _custody_action(request, ident: str, form_class, action) -> HttpResponse:
    piece = piece_for_user(request.user, ident)
    lab_staff_only(request.user)
    require_role(request.user, *CUSTODY_ROLES)
    form = form_class(request.POST)
    if not form.is_valid():
        for field, errors in form.errors.items():
            label = form.fields[field].label if field in form.fields else field
            messages.error(request, f"{label}: {' '.join(errors)}")
        return redirect(piece.get_absolute_url())
    try:
        action(piece, form.cleaned_data)
    except ValidationError as exc:
        if hasattr(exc, "message_dict"):
            for field, errors in exc.message_dict.items():
                label = form.fields[field].label if field in form.fields else field
                messages.error(request, f"{label}: {' '.join(errors)}")
        else:
            for error in exc.messages:
                messages.error(request, error)
    else:
        messages.success(request, f"Custody of {piece.ident} recorded.")
    return redirect(piece.get_absolute_url())


@require_POST
@login_required
def custody_move(request, ident: str):
    return _custody_action(
        request,
        ident,
        CustodyMoveForm,
        lambda piece, data: custody_services.custody_move(actor=request.user, piece=piece, **data),
    )


@require_POST
@login_required
def custody_retain(request, ident: str):
    return _custody_action(
        request,
        ident,
        CustodyRetainForm,
        lambda piece, data: custody_services.custody_retain(
            actor=request.user, piece=piece, **data
        ),
    )


@require_POST
@login_required
def custody_dispose(request, ident: str):
    return _custody_action(
        request,
        ident,
        CustodyDisposeForm,
        lambda piece, data: custody_services.custody_dispose(
            actor=request.user, piece=piece, **data
        ),
    )
