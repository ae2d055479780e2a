"""Reads for evidence files: a coating spec's optical limits, stored spectra and their plots.

`spectrum_plot(evidence)` redraws a stored spectrum (with the piece's "before" spectrum when
the evidence is from after the test) with the spec's limits: PNG for screens, SVG for the
report. The drawing is deterministic, so the same evidence always gives the same bytes.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from django.core.exceptions import ValidationError

from durability.errors import InputError
from durability.spectra import Band, SpectralLimit, Spectrum, parse_spectrum
from labrecords.models import CoatingSpec, Evidence, EvidenceKind, PlanStep, WitnessPiece
from labrecords.selectors_progress import progress_of_pieces

STAGES = ("before", "after")


def spec_band(spec: CoatingSpec) -> Band | None:
    """The coating spec's band, or None when it states none."""
    if spec.wavelength_min_nm is None or spec.wavelength_max_nm is None:
        return None
    if spec.wavelength_min_nm >= spec.wavelength_max_nm:
        return None
    return Band(float(spec.wavelength_min_nm), float(spec.wavelength_max_nm))


def spec_limits(spec: CoatingSpec) -> list[SpectralLimit]:
    """The spec's R or T limits as the spectra code takes them.

    "Average over the band" limits the band average; "at every wavelength" (or a statistic
    not stated) limits the band's maximum against an upper limit and its minimum against a
    lower one.
    """
    band = spec_band(spec)
    if band is None or spec.quantity not in ("R", "T"):
        return []
    average = spec.statistic == "average"
    limits = []
    for bound, comparison in ((spec.limit_max_pct, "<="), (spec.limit_min_pct, ">=")):
        if bound is None:
            continue
        statistic = "average" if average else ("maximum" if comparison == "<=" else "minimum")
        sign = "≤" if comparison == "<=" else "≥"
        limits.append(
            SpectralLimit(
                band=band,
                quantity=spec.quantity,
                statistic=statistic,
                comparison=comparison,
                limit=float(bound),
                unit="%",
                text=f"{spec.quantity} {statistic} {sign} {float(bound):g} % over {band.label}",
            )
        )
    return limits


def spec_extremum(spec: CoatingSpec) -> tuple[str, str]:
    """Which extremum's shift the change after a test reports, and why."""
    if spec.limit_max_pct is not None and spec.limit_min_pct is None:
        return "minimum", (
            "only an upper limit (a low-reflection or blocking coating): the "
            "wavelength of the minimum is followed"
        )
    return "maximum", "a lower limit is set: the wavelength of the maximum is followed"


def parse_stored_spectrum(evidence: Evidence) -> Spectrum:
    """Read a stored spectrum again with the options it was imported with."""
    from labrecords.services.evidence import read_bytes

    options = evidence.summary.get("import", {}).get("options", {})
    try:
        return parse_spectrum(read_bytes(evidence), filename=evidence.original_name, **options)
    except InputError as exc:  # the file was read once; a change means the store is damaged
        raise ValidationError(
            f"Stored spectrum {evidence.pk} cannot be read again: {exc}."
        ) from exc


def before_spectrum_for(piece: WitnessPiece) -> Evidence | None:
    """The piece's latest spectrum from before a test."""
    return (
        Evidence.objects.filter(piece=piece, kind=EvidenceKind.SPECTRUM, stage="before")
        .order_by("-uploaded_at", "-id")
        .first()
    )


@dataclass(frozen=True)
class SpectrumRow:
    evidence: Evidence
    step_name: str
    band: dict[str, Any] | None
    limits: list[dict[str, Any]]
    conforms: bool | None
    change: dict[str, Any] | None
    notes: list[str]


def piece_spectra(piece: WitnessPiece) -> list[SpectrumRow]:
    """Every spectrum of the piece, newest first, with its stored figures."""
    evidence = list(
        Evidence.objects.filter(piece=piece, kind=EvidenceKind.SPECTRUM)
        .select_related("uploaded_by")
        .order_by("-uploaded_at", "-id")
    )
    names = dict(
        PlanStep.objects.filter(step_key__in={e.step_key for e in evidence})
        .order_by("plan__number")
        .values_list("step_key", "name")
    )
    return [
        SpectrumRow(
            evidence=e,
            step_name=names.get(e.step_key, ""),
            band=e.summary.get("band"),
            limits=e.summary.get("limits", []),
            conforms=e.summary.get("conforms"),
            change=e.summary.get("change"),
            notes=list(e.summary.get("notes", []))
            + list(e.summary.get("import", {}).get("notes", [])),
        )
        for e in evidence
    ]


def piece_steps(piece: WitnessPiece) -> list[PlanStep]:
    """The steps of the piece's sequence in its lot's current released plan."""
    progress = progress_of_pieces([piece]).get(piece.pk)
    return list(progress.steps) if progress else []


def spectrum_plot(evidence: Evidence):
    """The stored spectrum drawn with the spec's limits (and its "before" spectrum when the
    evidence is from after the test): a `durability.spectra.plot.SpectrumPlot` (SVG and PNG
    bytes). Raises ValidationError when the evidence is not a spectrum."""
    from durability.spectra.plot import plot_spectra

    if evidence.kind != EvidenceKind.SPECTRUM or evidence.piece_id is None:
        raise ValidationError(f"Evidence {evidence.pk} is not a spectrum of a piece.")
    spec = evidence.piece.lot.spec
    current = parse_stored_spectrum(evidence)
    before_id = evidence.summary.get("before_evidence")
    before = Evidence.objects.filter(pk=before_id).first() if before_id else None
    title = f"{evidence.piece.ident}: {evidence.stage or 'spectrum'}"
    try:
        if before is not None:
            return plot_spectra(
                parse_stored_spectrum(before),
                current,
                limits=spec_limits(spec),
                band=spec_band(spec),
                title=title,
            )
        return plot_spectra(
            current,
            None,
            limits=spec_limits(spec),
            band=spec_band(spec),
            title=title,
            labels=(evidence.stage or "spectrum", "after"),
        )
    except InputError as exc:
        raise ValidationError(f"Evidence {evidence.pk} cannot be drawn: {exc}.") from exc
