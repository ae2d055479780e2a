"""Spectrum plots drawn with reportlab.graphics: vector lines in the PDF, SVG for the preview.

One `Drawing` serves both: the PDF places it as a flowable (vector, no raster), and the HTML
preview turns the same drawing into SVG with reportlab's own renderer. Axes get "nice"
ticks (1, 2 or 5 times a power of ten), a common plotting convention.
"""

from __future__ import annotations

import base64
import math
from collections.abc import Sequence

from reportlab.graphics.shapes import Drawing, Group, Line, PolyLine, Rect, String
from reportlab.lib import colors

from labrecords.reporting.content import SpectrumPlotData
from labrecords.reporting.fonts import FONT, FONT_BOLD, register_fonts

BEFORE = colors.HexColor("#1f4e79")
AFTER = colors.HexColor("#c55a11")
LIMIT = colors.HexColor("#a00000")
GRID = colors.HexColor("#d0d0d0")
BAND = colors.HexColor("#eeeeee")


def nice_ticks(low: float, high: float, count: int = 6) -> list[float]:
    """Round tick values covering [low, high], about `count` of them."""
    if not (math.isfinite(low) and math.isfinite(high)):
        return [0.0, 1.0]
    if high <= low:
        high = low + 1.0
    raw = (high - low) / max(count - 1, 1)
    power = 10 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1, 2, 5, 10) if m * power >= raw)
    start = math.floor(low / step) * step
    ticks = []
    value = start
    while value <= high + step * 1e-9:
        ticks.append(round(value, 10))
        value += step
    if ticks[-1] < high:
        ticks.append(round(ticks[-1] + step, 10))
    return ticks


def _tick_text(value: float) -> str:
    return f"{value:g}"


def spectrum_drawing(plot: SpectrumPlotData, width: float = 480, height: float = 260) -> Drawing:
    """The before/after curves with the limits, as a reportlab Drawing (points)."""
    register_fonts()
    # Without an initial font the renderer would start the drawing in Helvetica.
    drawing = Drawing(width, height, initialFontName=FONT)
    left, right, bottom, top = 48.0, width - 10.0, 34.0, height - 22.0
    drawing.add(String(left, height - 12, plot.title, fontName=FONT_BOLD, fontSize=8.5))
    curves = [c for c in (plot.before, plot.after) if c]
    if not curves:
        drawing.add(
            String(left, height / 2, "No spectrum could be drawn.", fontName=FONT, fontSize=8)
        )
        return drawing
    xs = [x for curve in curves for x, _ in curve]
    ys = [y for curve in curves for _, y in curve] + [limit.value for limit in plot.limits]
    x_ticks = nice_ticks(min(xs), max(xs))
    y_ticks = nice_ticks(min(ys), max(ys), 5)
    x0, x1, y0, y1 = x_ticks[0], x_ticks[-1], y_ticks[0], y_ticks[-1]

    def px(x: float) -> float:
        return left + (x - x0) / (x1 - x0) * (right - left)

    def py(y: float) -> float:
        return bottom + (y - y0) / (y1 - y0) * (top - bottom)

    for limit in plot.limits:
        a, b = max(limit.start_nm, x0), min(limit.end_nm, x1)
        if b > a:
            drawing.add(
                Rect(px(a), bottom, px(b) - px(a), top - bottom, fillColor=BAND, strokeColor=None)
            )
    for x in x_ticks:
        drawing.add(Line(px(x), bottom, px(x), top, strokeColor=GRID, strokeWidth=0.3))
        drawing.add(
            String(
                px(x), bottom - 10, _tick_text(x), fontName=FONT, fontSize=7, textAnchor="middle"
            )
        )
    for y in y_ticks:
        drawing.add(Line(left, py(y), right, py(y), strokeColor=GRID, strokeWidth=0.3))
        drawing.add(
            String(
                left - 4, py(y) - 2.5, _tick_text(y), fontName=FONT, fontSize=7, textAnchor="end"
            )
        )
    drawing.add(
        Rect(
            left,
            bottom,
            right - left,
            top - bottom,
            fillColor=None,
            strokeColor=colors.black,
            strokeWidth=0.6,
        )
    )
    drawing.add(
        String(
            (left + right) / 2,
            6,
            "Wavelength (nm)",
            fontName=FONT,
            fontSize=7.5,
            textAnchor="middle",
        )
    )
    quantity = {"R": "Reflectance R", "T": "Transmittance T"}.get(plot.quantity, "R or T")
    ylabel = String(
        0, 0, f"{quantity} ({plot.unit})", fontName=FONT, fontSize=7.5, textAnchor="middle"
    )
    rotated = Group(ylabel)
    rotated.rotate(90)
    rotated.translate((bottom + top) / 2, -12)
    drawing.add(rotated)

    def polyline(points: Sequence[tuple[float, float]], color, dash=None) -> PolyLine:
        flat = [c for x, y in points for c in (px(x), py(y))]
        return PolyLine(flat, strokeColor=color, strokeWidth=1.0, strokeDashArray=dash)

    legend = []
    if plot.before:
        drawing.add(polyline(plot.before, BEFORE))
        legend.append((plot.before_label or "before", BEFORE, None))
    if plot.after:
        drawing.add(polyline(plot.after, AFTER, [4, 2]))
        legend.append((plot.after_label or "after", AFTER, [4, 2]))
    for limit in plot.limits:
        a, b = max(limit.start_nm, x0), min(limit.end_nm, x1)
        if b > a:
            drawing.add(
                Line(
                    px(a),
                    py(limit.value),
                    px(b),
                    py(limit.value),
                    strokeColor=LIMIT,
                    strokeWidth=1.0,
                    strokeDashArray=[1, 2],
                )
            )
            legend.append((limit.label, LIMIT, [1, 2]))
    x = left + 6
    for text, color, dash in legend:
        drawing.add(
            Line(
                x,
                top - 8,
                x + 14,
                top - 8,
                strokeColor=color,
                strokeWidth=1.2,
                strokeDashArray=dash,
            )
        )
        drawing.add(String(x + 17, top - 10.5, text, fontName=FONT, fontSize=6.5))
        x += 24 + 3.4 * len(text)
    return drawing


def drawing_svg_data_uri(drawing: Drawing) -> str:
    """The drawing as an SVG data URI for an <img> (which runs no script)."""
    from reportlab.graphics import renderSVG

    svg = renderSVG.drawToString(drawing)
    if isinstance(svg, str):
        svg = svg.encode("utf-8")
    return "data:image/svg+xml;base64," + base64.b64encode(svg).decode("ascii")
