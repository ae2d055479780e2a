"""Spectral evidence: a spectrophotometer export for a piece and step, before or after a test.

The file is read by `durability.spectra` and analysed over the coating spec's band: band
average (trapezoid integral with interpolated band edges), minimum and maximum (refined by
a parabola where possible), conformance to the spec's limits, and, after a test, the change
against the piece's latest "before" spectrum. The figures are stored with the Evidence row;
the file itself is stored by its SHA-256.
"""

from __future__ import annotations

import uuid
from typing import Any

from django.core.exceptions import ValidationError
from django.db import transaction

from durability.errors import InputError
from durability.spectra import Spectrum, analyze_band, check_limits, compare_spectra
from labrecords.access import require_role
from labrecords.models import Evidence, EvidenceKind, WitnessPiece
from labrecords.roles import Role
from labrecords.selectors_evidence import (
    STAGES,
    before_spectrum_for,
    parse_stored_spectrum,
    spec_band,
    spec_extremum,
    spec_limits,
)
from labrecords.selectors_progress import progress_of_pieces
from labrecords.services.evidence import check_size, evidence_create

__all__ = ["spectrum_upload"]

SPECTRUM_ROLES = (Role.TECHNICIAN, Role.ENGINEER)


def _parse(data: bytes, original_name: str, options: dict[str, Any]) -> Spectrum:
    from durability.spectra import parse_spectrum

    try:
        return parse_spectrum(data, filename=original_name, **options)
    except InputError as exc:
        raise ValidationError({"file": f"The spectrum was not imported: {exc}."}) from None


def _summary(
    piece: WitnessPiece, spectrum: Spectrum, stage: str, options: dict[str, Any]
) -> tuple[dict[str, Any], Evidence | None]:
    spec = piece.lot.spec
    summary: dict[str, Any] = {
        "import": {
            "format": spectrum.source_format,
            "points": len(spectrum.values),
            "first_nm": spectrum.first_nm,
            "last_nm": spectrum.last_nm,
            "unit": spectrum.unit,
            "unit_label": "%" if spectrum.unit == "%" else "fraction (0-1)",
            "unit_inferred": spectrum.unit_inferred,
            "quantity": spectrum.quantity,
            "notes": list(spectrum.notes),
            "options": options,
        },
        "spec": {"id": spec.pk, "part_number": spec.part_number},
        "band": None,
        "limits": [],
        "conforms": None,
        "change": None,
        "before_evidence": None,
        "notes": [],
    }
    band = spec_band(spec)
    if band is None:
        summary["notes"].append("the coating spec states no band: no band figures")
        return summary, None
    try:
        summary["band"] = analyze_band(spectrum, band).as_dict()
    except InputError as exc:
        raise ValidationError({"file": f"The spectrum cannot be analysed: {exc}."}) from None
    limits = spec_limits(spec)
    if not limits:
        summary["notes"].append("the coating spec states no limit: conformance not judged")
    elif spectrum.quantity is None:
        summary["notes"].append(
            "neither the file nor the coating spec says R or T: conformance not judged"
        )
    else:
        try:
            checks = check_limits(spectrum, limits)
        except InputError as exc:
            raise ValidationError({"file": f"The spectrum cannot be judged: {exc}."}) from None
        summary["limits"] = [check.as_dict() for check in checks]
        summary["conforms"] = all(check.conforms for check in checks)
    before = None
    if stage == "after":
        before = before_spectrum_for(piece)
        if before is None:
            summary["notes"].append(
                "the piece has no spectrum from before the test: change not computed"
            )
        else:
            extremum, why = spec_extremum(spec)
            try:
                change = compare_spectra(
                    parse_stored_spectrum(before), spectrum, band, extremum=extremum
                )
            except InputError as exc:
                raise ValidationError(
                    {
                        "file": (
                            f"The spectrum cannot be compared with the one from before the test "
                            f"(evidence {before.pk}): {exc}."
                        )
                    }
                ) from None
            summary["change"] = change.as_dict()
            summary["change"]["extremum_choice"] = why
            summary["before_evidence"] = before.pk
    return summary, before


@transaction.atomic
def spectrum_upload(
    *,
    actor,
    piece: WitnessPiece,
    step_key: uuid.UUID,
    stage: str,
    data: bytes,
    original_name: str,
    quantity: str | None = None,
    x_unit: str | None = None,
    y_unit: str | None = None,
    note: str = "",
) -> Evidence:
    """Store a spectrophotometer export (CSV/TXT or JCAMP-DX) for a piece's step.

    `stage` is "before" or "after" the test. `quantity` (R or T), `x_unit` and `y_unit`
    state what the file leaves unsaid; R or T defaults to the coating spec's, and a file
    that says otherwise is refused. A file that cannot be read, or whose data do not cover
    the spec's band, raises ValidationError naming the line or the band, and nothing is
    stored.
    """
    require_role(actor, *SPECTRUM_ROLES)
    if stage not in STAGES:
        raise ValidationError(
            {"stage": "Say whether the spectrum is from before or after the test."}
        )
    check_size(data)
    progress = progress_of_pieces([piece]).get(piece.pk)
    step = next((s for s in progress.steps if s.step_key == step_key), None) if progress else None
    if step is None:
        raise ValidationError(
            {
                "step_key": (
                    f"That step is not in {piece.ident}'s sequence of its lot's "
                    "current released plan."
                )
            }
        )
    options = {
        "quantity": quantity or piece.lot.spec.quantity or None,
        "x_unit": x_unit or None,
        "y_unit": y_unit or None,
    }
    spectrum = _parse(data, original_name, options)
    summary, _before = _summary(piece, spectrum, stage, options)
    summary["step"] = {"order": step.order, "name": step.name}
    content_type = (
        "chemical/x-jcamp-dx"
        if spectrum.source_format.lower().startswith("jcamp")
        else "text/plain"
    )
    return evidence_create(
        actor=actor,
        kind=EvidenceKind.SPECTRUM,
        data=data,
        original_name=original_name,
        content_type=content_type,
        summary=summary,
        lot=piece.lot,
        piece=piece,
        step_key=step_key,
        stage=stage,
        note=note,
    )
