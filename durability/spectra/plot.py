"""Before/after spectra drawn on one axes with the spec's limits, as SVG and PNG bytes.

matplotlib is imported inside the functions and drives its Agg canvas directly
(no pyplot, no global backend switch), so importing `durability.spectra` stays
cheap and a web worker's matplotlib state is never touched. The output is
deterministic: a fixed SVG hash salt, no date in the SVG, no software stamp in
the PNG, text drawn as paths.
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from durability.errors import InputError
from durability.spectra.analysis import Band, SpectralLimit
from durability.spectra.importers import Spectrum, Unit, convert_value

if TYPE_CHECKING:
    from matplotlib.figure import Figure

_HASH_SALT = "durability-spectra"
_QUANTITY_NAMES = {
    "R": "Reflectance R",
    "T": "Transmittance T",
    None: "Reflectance or transmittance",
}
_BEFORE_STYLE: dict[str, Any] = {"color": "#1f4e79", "linewidth": 1.4}
_AFTER_STYLE: dict[str, Any] = {"color": "#c55a11", "linewidth": 1.4, "linestyle": "--"}
_LIMIT_STYLE: dict[str, Any] = {"color": "#a00000", "linewidth": 1.2, "linestyle": ":"}


@dataclass(frozen=True)
class SpectrumPlot:
    """The drawing in two forms: SVG (vector, for the PDF report) and PNG (for screens)."""

    svg: bytes
    png: bytes
    unit: Unit
    notes: tuple[str, ...]


def build_figure(
    before: Spectrum,
    after: Spectrum | None = None,
    *,
    limits: Sequence[SpectralLimit] = (),
    band: Band | None = None,
    title: str = "",
    labels: tuple[str, str] = ("before", "after"),
    unit: Unit | None = None,
    size_in: tuple[float, float] = (6.4, 4.0),
) -> tuple[Figure, tuple[str, ...]]:
    """Lay out the figure (no rendering); returns it and the notes on unit conversions."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    target: Unit = unit or before.unit
    notes: list[str] = []
    curves = [(labels[0], before, _BEFORE_STYLE)]
    if after is not None:
        curves.append((labels[1], after, _AFTER_STYLE))
        if before.quantity and after.quantity and before.quantity != after.quantity:
            raise InputError(
                f"the before spectrum is {before.quantity} and the after spectrum "
                f"{after.quantity}: they are not drawn on one axes"
            )

    figure = Figure(figsize=size_in, dpi=100)
    FigureCanvasAgg(figure)
    axes = figure.add_subplot(1, 1, 1)
    for label, spectrum, style in curves:
        if spectrum.unit != target:
            notes.append(f"{label} converted from {spectrum.unit} to {target} for the plot")
        shown = spectrum.in_unit(target)
        (line,) = axes.plot(shown.wavelength_nm, shown.values, label=label, **style)
        line.set_gid(f"spectrum-{label}")

    if band is not None:
        axes.axvspan(band.start_nm, band.end_nm, color="#d9d9d9", alpha=0.5, linewidth=0)
    for number, limit in enumerate(limits):
        value = convert_value(limit.limit, limit.unit, target)
        if limit.unit != target:
            notes.append(f"limit {limit.label} drawn in {target}")
        (line,) = axes.plot(
            [limit.band.start_nm, limit.band.end_nm],
            [value, value],
            label=limit.text or limit.label,
            **_LIMIT_STYLE,
        )
        line.set_gid(f"limit-{number}")

    quantity = before.quantity or (after.quantity if after else None)
    axes.set_xlabel("Wavelength (nm)")
    axes.set_ylabel(f"{_QUANTITY_NAMES[quantity]} ({'%' if target == '%' else 'fraction'})")
    if title:
        axes.set_title(title)
    axes.grid(True, linewidth=0.4, color="#bfbfbf")
    axes.legend(loc="best", fontsize="small")
    figure.tight_layout()
    return figure, tuple(notes)


def plot_spectra(
    before: Spectrum,
    after: Spectrum | None = None,
    *,
    limits: Sequence[SpectralLimit] = (),
    band: Band | None = None,
    title: str = "",
    labels: tuple[str, str] = ("before", "after"),
    unit: Unit | None = None,
    size_in: tuple[float, float] = (6.4, 4.0),
    png_dpi: int = 120,
) -> SpectrumPlot:
    """Draw before (and after) with the limits; return SVG and PNG bytes.

    Everything is drawn in `unit` (default: the before spectrum's); conversions of
    the other curve or of a limit are listed in `notes`. Same input, same bytes.
    """
    import matplotlib

    figure, notes = build_figure(
        before,
        after,
        limits=limits,
        band=band,
        title=title,
        labels=labels,
        unit=unit,
        size_in=size_in,
    )
    svg_buffer = io.BytesIO()
    png_buffer = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": _HASH_SALT, "svg.fonttype": "path"}):
        figure.savefig(svg_buffer, format="svg", metadata={"Date": None})
        figure.savefig(png_buffer, format="png", dpi=png_dpi, metadata={"Software": None})
    return SpectrumPlot(
        svg=svg_buffer.getvalue(),
        png=png_buffer.getvalue(),
        unit=unit or before.unit,
        notes=notes,
    )
