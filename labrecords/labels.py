"""Witness piece labels as a PDF sheet: A4, 3 columns × 8 rows of 70 × 37 mm labels.

Plain reportlab, no Django: takes `Label`-like rows (piece, lot, glass, sequence,
url) and returns the PDF bytes. Each label carries a QR code of the piece page's
URL (reportlab's QR widget) and the same URL as a link over the code.
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from typing import Any

from reportlab.graphics import renderPDF
from reportlab.graphics.barcode.qr import QrCodeWidget
from reportlab.graphics.shapes import Drawing
from reportlab.lib.pagesizes import A4
from reportlab.lib.units import mm
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.pdfgen.canvas import Canvas

# A common A4 label grid (common practice): 3 × 8 labels of 70 × 37 mm, no gaps.
COLUMNS = 3
ROWS = 8
LABEL_W = 70 * mm
LABEL_H = 37 * mm
PER_SHEET = COLUMNS * ROWS
QR_SIZE = 31 * mm
TEXT_FONT = "Helvetica"
BOLD_FONT = "Helvetica-Bold"


def _plain(text: str) -> str:
    # The built-in fonts carry the Windows-1252 set; anything else prints as "?".
    return text.encode("cp1252", "replace").decode("cp1252")


def _fit(text: str, font: str, size: float, width: float) -> str:
    text = _plain(text)
    if stringWidth(text, font, size) <= width:
        return text
    while text and stringWidth(text + "...", font, size) > width:
        text = text[:-1]
    return text + "..."


def _qr(canvas: Canvas, url: str, x: float, y: float, size: float) -> None:
    widget = QrCodeWidget(url, barLevel="M")
    left, bottom, right, top = widget.getBounds()
    drawing = Drawing(
        size, size, transform=[size / (right - left), 0, 0, size / (top - bottom), 0, 0]
    )
    drawing.add(widget)
    renderPDF.draw(drawing, canvas, x, y)
    canvas.linkURL(url, (x, y, x + size, y + size), relative=0)


def label_origin(index: int) -> tuple[float, float]:
    """Lower-left corner of label `index` on its sheet (row by row from the top left)."""
    _, page_h = A4
    margin_x = (A4[0] - COLUMNS * LABEL_W) / 2
    margin_y = (page_h - ROWS * LABEL_H) / 2
    column, row = index % COLUMNS, (index // COLUMNS) % ROWS
    return margin_x + column * LABEL_W, page_h - margin_y - (row + 1) * LABEL_H


def labels_pdf(labels: Sequence[Any], *, title: str, skip: int = 0) -> bytes:
    """The PDF: one label per row of `labels`, leaving the first `skip` places of the first
    sheet empty (a sheet already partly used)."""
    buffer = io.BytesIO()
    canvas = Canvas(buffer, pagesize=A4, pageCompression=1)
    canvas.setTitle(title)
    canvas.setCreator("Durability records")
    text_w = LABEL_W - QR_SIZE - 7 * mm
    for number, label in enumerate(labels):
        place = number + skip
        if place and place % PER_SHEET == 0:
            canvas.showPage()
        x, y = label_origin(place)
        pad = 3 * mm
        _qr(canvas, label.url, x + LABEL_W - QR_SIZE - pad, y + (LABEL_H - QR_SIZE) / 2, QR_SIZE)
        line_y = y + LABEL_H - pad - 10
        canvas.setFont(BOLD_FONT, 11)
        canvas.drawString(x + pad, line_y, _fit(label.piece, BOLD_FONT, 11, text_w))
        canvas.setFont(TEXT_FONT, 8)
        for text in (f"Lot {label.lot}", label.glass, f"Seq. {label.sequence}"):
            line_y -= 11
            canvas.drawString(x + pad, line_y, _fit(text, TEXT_FONT, 8, text_w))
    canvas.showPage()
    canvas.save()
    return buffer.getvalue()
