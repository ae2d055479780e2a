"""The report PDF, laid out with reportlab's platypus from a `ReportContent`.

Every page carries the report's number with "page n of N" (counted in a second pass over
the pages) and the last flowable is the end marker, as ISO/IEC 17025 7.8.2.1 d) asks
(shared/reference/records-and-security.md [pub]). Text is set in the embedded DejaVu Sans,
tables break across pages with their header row repeated, plots are vector drawings and the
QR code is reportlab's own widget. Same content, same bytes (`invariant` output: no
creation time, fixed document ID).
"""

from __future__ import annotations

import io
from collections.abc import Iterable, Sequence
from functools import partial
from xml.sax.saxutils import escape

from reportlab.graphics.barcode.qr import QrCodeWidget
from reportlab.graphics.shapes import Drawing
from reportlab.lib import colors
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.pdfgen.canvas import Canvas
from reportlab.platypus import (
    BaseDocTemplate,
    CondPageBreak,
    Flowable,
    Frame,
    KeepTogether,
    PageTemplate,
    Paragraph,
    Spacer,
    Table,
    TableStyle,
)

from labrecords.models import ReportKind
from labrecords.reporting.content import ReportContent, SignatureBlock
from labrecords.reporting.fonts import FONT, FONT_BOLD, register_fonts
from labrecords.reporting.plots import spectrum_drawing
from labrecords.reporting.text import day_text, moment_text

PAGE = A4
MARGIN_X = 18 * mm
MARGIN_TOP = 24 * mm
MARGIN_BOTTOM = 20 * mm
BODY_WIDTH = PAGE[0] - 2 * MARGIN_X
LINE = colors.HexColor("#888888")
HEAD_FILL = colors.HexColor("#e8e8e8")


def _styles() -> dict[str, ParagraphStyle]:
    base = ParagraphStyle("body", fontName=FONT, fontSize=9, leading=11.5)
    return {
        "body": base,
        "small": ParagraphStyle("small", parent=base, fontSize=7.5, leading=9.2),
        "small_bold": ParagraphStyle(
            "small_bold", parent=base, fontName=FONT_BOLD, fontSize=7.5, leading=9.2
        ),
        "title": ParagraphStyle(
            "title", parent=base, fontName=FONT_BOLD, fontSize=16, leading=20, spaceAfter=4
        ),
        "h2": ParagraphStyle(
            "h2",
            parent=base,
            fontName=FONT_BOLD,
            fontSize=11,
            leading=14,
            spaceBefore=9,
            spaceAfter=4,
            keepWithNext=1,
        ),
        "h3": ParagraphStyle(
            "h3",
            parent=base,
            fontName=FONT_BOLD,
            fontSize=9.5,
            leading=12,
            spaceBefore=6,
            spaceAfter=3,
            keepWithNext=1,
        ),
        "h4": ParagraphStyle(
            "h4",
            parent=base,
            fontName=FONT_BOLD,
            fontSize=8.5,
            leading=11,
            spaceBefore=4,
            spaceAfter=2,
            keepWithNext=1,
        ),
        "box": ParagraphStyle(
            "box",
            parent=base,
            borderColor=LINE,
            borderWidth=0.6,
            borderPadding=5,
            backColor=colors.HexColor("#f6f6f6"),
            spaceBefore=6,
            spaceAfter=8,
        ),
        "end": ParagraphStyle("end", parent=base, fontName=FONT_BOLD, alignment=1, spaceBefore=14),
    }


class _NumberedCanvas(Canvas):
    """Draws the page footer once the page count is known (a second pass over the pages)."""

    def __init__(self, *args, page_label: str = "", right_text: str = "", **kwargs):
        super().__init__(*args, **kwargs)
        self._saved_pages: list[dict] = []
        self._page_label = page_label
        self._right_text = right_text

    def showPage(self) -> None:  # noqa: N802 (reportlab's name)
        self._saved_pages.append(dict(self.__dict__))
        self._startPage()

    def save(self) -> None:
        total = len(self._saved_pages)
        for number, state in enumerate(self._saved_pages, start=1):
            self.__dict__.update(state)
            self._footer(number, total)
            Canvas.showPage(self)
        Canvas.save(self)

    def _footer(self, number: int, total: int) -> None:
        self.saveState()
        self.setStrokeColor(LINE)
        self.setLineWidth(0.5)
        self.line(MARGIN_X, 14 * mm, PAGE[0] - MARGIN_X, 14 * mm)
        self.setFont(FONT, 8)
        self.drawString(MARGIN_X, 10 * mm, f"{self._page_label} · page {number} of {total}")
        if self._right_text:
            self.drawRightString(PAGE[0] - MARGIN_X, 10 * mm, self._right_text)
        self.restoreState()


def _page_header(content: ReportContent, canvas: Canvas, doc) -> None:
    canvas.saveState()
    canvas.setFont(FONT_BOLD, 8.5)
    canvas.drawString(MARGIN_X, PAGE[1] - 12 * mm, content.lab.name)
    canvas.setFont(FONT, 8)
    canvas.drawRightString(PAGE[0] - MARGIN_X, PAGE[1] - 12 * mm, content.header.title)
    canvas.setStrokeColor(LINE)
    canvas.setLineWidth(0.5)
    canvas.line(MARGIN_X, PAGE[1] - 14.5 * mm, PAGE[0] - MARGIN_X, PAGE[1] - 14.5 * mm)
    canvas.restoreState()


def _p(text: str, style: ParagraphStyle) -> Paragraph:
    """A paragraph of plain text: markup characters in the text are escaped."""
    return Paragraph(escape(text).replace("\n", "<br/>"), style)


def _lines(lines: Iterable[str], style: ParagraphStyle) -> Paragraph:
    return Paragraph("<br/>".join(escape(line) for line in lines) or "", style)


def _grid(
    rows: Sequence[Sequence[object]],
    widths: Sequence[float],
    *,
    header: bool = True,
    header_rows: int = 1,
) -> Table:
    table = Table(list(rows), colWidths=list(widths), repeatRows=header_rows if header else 0)
    commands = [
        ("FONTNAME", (0, 0), (-1, -1), FONT),
        ("GRID", (0, 0), (-1, -1), 0.4, LINE),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("RIGHTPADDING", (0, 0), (-1, -1), 3),
        ("TOPPADDING", (0, 0), (-1, -1), 2),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
    ]
    if header:
        commands.append(("BACKGROUND", (0, 0), (-1, header_rows - 1), HEAD_FILL))
    table.setStyle(TableStyle(commands))
    return table


def _facts(pairs: Sequence[tuple[str, str]], s: dict[str, ParagraphStyle]) -> Table:
    rows = [[_p(label, s["small_bold"]), _p(value, s["small"])] for label, value in pairs]
    return _grid(rows, [45 * mm, BODY_WIDTH - 45 * mm], header=False)


def _head(rows: Sequence[str], s: dict[str, ParagraphStyle]) -> list[Paragraph]:
    return [_p(text, s["small_bold"]) for text in rows]


def _signature(block: SignatureBlock | None, what: str) -> str:
    if block is None:
        return f"{what}: not signed"
    return (
        f"{what}: {block.printed_name}, {block.role}, signed {moment_text(block.signed_at)}"
        f" ({block.time_zone}). Meaning of the signature: {block.meaning_label}."
    )


def _qr(url: str, size: float = 30 * mm) -> Drawing:
    widget = QrCodeWidget(url, barLevel="M")
    x0, y0, x1, y1 = widget.getBounds()
    drawing = Drawing(
        size, size, transform=[size / (x1 - x0), 0, 0, size / (y1 - y0), 0, 0], initialFontName=FONT
    )
    drawing.add(widget)
    return drawing


def _title_block(c: ReportContent, s) -> list[Flowable]:
    h = c.header
    story: list[Flowable] = [_p(h.title, s["title"])]
    pairs = [
        ("Report number", h.number if not h.draft else "not issued (draft)"),
        ("Date of issue", moment_text(h.issued_at) if h.issued_at else "not issued"),
    ]
    if h.verification_code:
        pairs.append(("Verification code", h.verification_code))
    story.append(_facts(pairs, s))
    if h.kind == ReportKind.REISSUE:
        story.append(
            _p(
                f"This report replaces report {h.replaces_number}"
                + (f", issued {moment_text(h.replaces_issued_at)}" if h.replaces_issued_at else "")
                + f", which is withdrawn. What changed and why: {h.change_description}",
                s["box"],
            )
        )
    if h.draft:
        story.append(
            _p(
                "DRAFT for review: this is not a report. It is not reviewed, "
                "authorised or issued, and carries no number.",
                s["box"],
            )
        )
    return story


def _lab_and_customer(c: ReportContent, s) -> list[Flowable]:
    cu = c.customer
    contact = ", ".join(x for x in (cu.contact_name, cu.contact_email) if x) or "not recorded"
    return [
        _p("Laboratory", s["h2"]),
        _facts(
            [
                ("Name", c.lab.name),
                ("Address", c.lab.address or "not recorded"),
                *([("Accreditation", c.lab.accreditation)] if c.lab.accreditation else []),
                ("Times", f"shown in the lab's time zone, {c.lab.time_zone}"),
            ],
            s,
        ),
        _p("Customer", s["h2"]),
        _facts(
            [
                ("Customer", cu.name),
                ("Contact", contact),
                ("Address", cu.address or "not recorded"),
                ("Order", f"{cu.order_number} (customer order {cu.customer_order_number})"),
            ],
            s,
        ),
    ]


def _items(c: ReportContent, s) -> list[Flowable]:
    it = c.items
    story: list[Flowable] = [
        _p("Items tested", s["h2"]),
        _facts(
            [
                ("Lot (coating run)", f"{it.lot_number}, coated in {it.coater}"),
                ("Coating design", f"{it.design} ({it.design_detail})"),
                ("Glass", it.glass),
                ("Parts represented", f"{it.parts}, {it.quantity} part(s)"),
                ("Coating spec", it.spec),
                ("Callouts", it.callouts or "none"),
            ],
            s,
        ),
        Spacer(1, 4),
    ]
    rows = [
        _head(
            [
                "Witness piece",
                "Glass",
                "Position in the coater",
                "Represents",
                "Condition on receipt",
            ],
            s,
        )
    ]
    rows += [
        [
            _p(p.ident, s["small"]),
            _p(p.glass, s["small"]),
            _p(p.position, s["small"]),
            _p(p.represents, s["small"]),
            _p(p.condition_on_receipt, s["small"]),
        ]
        for p in it.pieces
    ]
    story.append(_grid(rows, [26 * mm, 30 * mm, 28 * mm, 50 * mm, BODY_WIDTH - 134 * mm]))
    return story


def _dates(c: ReportContent, s) -> list[Flowable]:
    d = c.dates
    tested = (
        "not yet tested"
        if d.tested_from is None
        else (
            d.tested_from.isoformat()
            if d.tested_from == d.tested_to
            else f"{d.tested_from.isoformat()} to {day_text(d.tested_to)}"
        )
    )
    return [
        _p("Dates", s["h2"]),
        _facts(
            [
                ("Coating run", day_text(d.coating_run)),
                ("Witness pieces received", day_text(d.received)),
                ("Tested", tested),
                ("Issued", moment_text(d.issued) if d.issued else "not issued"),
            ],
            s,
        ),
    ]


def _methods(c: ReportContent, s) -> list[Flowable]:
    rows = [
        _head(["Method", "Standard, edition", "Clause", "Ver.", "Parameters used", "Deviations"], s)
    ]
    for m in c.methods:
        rows.append(
            [
                _p(f"{m.code}\n{m.name}", s["small"]),
                _p(f"{m.standard}, {m.edition}", s["small"]),
                _p(m.clause, s["small"]),
                _p(str(m.version), s["small"]),
                _lines(m.parameters, s["small"]),
                _lines(m.deviations, s["small"]),
            ]
        )
    widths = [40 * mm, 32 * mm, 17 * mm, 10 * mm, 47 * mm, BODY_WIDTH - 146 * mm]
    return [
        _p("Methods", s["h2"]),
        _grid(rows, widths)
        if c.methods
        else _p("No methods: the lot has no released test plan.", s["body"]),
    ]


def _results(c: ReportContent, s) -> list[Flowable]:
    story: list[Flowable] = [_p("Results", s["h2"])]
    if not c.results:
        return [*story, _p("No results are recorded.", s["body"])]
    # One table per piece: readable, and a table split over pages re-measures only its own
    # rows (one long table would be re-measured at every page break).
    widths = [36 * mm, 38 * mm, 16 * mm, 56 * mm, BODY_WIDTH - 146 * mm]
    by_piece: dict[str, list] = {}
    for r in c.results:
        by_piece.setdefault(r.piece, []).append(r)
    for piece, results in by_piece.items():
        # The piece's name is the table's first row (spanned), repeated with the column
        # headings on every page the table runs over.
        rows = [
            [_p(f"Witness piece {piece}", s["small_bold"]), "", "", "", ""],
            _head(["Step", "Result", "Verdict", "Reason", "Uncertainty"], s),
        ]
        for r in results:
            verdict = r.verdict_label + (f" [{r.external_marker}]" if r.external_marker else "")
            reason = r.reason + (f" ({r.clause})" if r.clause and r.clause not in r.reason else "")
            if r.note:
                reason += f" Note: {r.note}."
            rows.append(
                [
                    _p(f"{r.step}\n{r.method}", s["small"]),
                    _lines(r.values or ("recorded",), s["small"]),
                    _p(verdict, s["small"]),
                    _p(reason, s["small"]),
                    _p(r.uncertainty or "not stated", s["small"]),
                ]
            )
        table = _grid(rows, widths, header_rows=2)
        table.setStyle(TableStyle([("SPAN", (0, 0), (-1, 0))]))
        story.append(Spacer(1, 3))
        story.append(table)
    story.append(
        _p(
            "Uncertainty is the expanded uncertainty as recorded with the result; 'not stated' "
            "means none was recorded (a visual grade has none).",
            s["small"],
        )
    )
    if c.conventions:
        story.append(_p("Conventions the verdicts used", s["h3"]))
        story += [
            _p(f"{number}. {text}", s["small"])
            for number, text in enumerate(c.conventions, start=1)
        ]
    if c.externals:
        story.append(_p("Results from outside providers", s["h3"]))
        rows = [
            _head(
                [
                    "Mark",
                    "Provider",
                    "Their report",
                    "Accreditation",
                    "Covers",
                    "Provider report attached",
                ],
                s,
            )
        ]
        for e in c.externals:
            rows.append(
                [
                    _p(e.marker, s["small"]),
                    _p(e.provider, s["small"]),
                    _p(e.report_ref, s["small"]),
                    _p(e.accreditation, s["small"]),
                    _lines(e.covers, s["small"]),
                    _lines(e.evidence, s["small"]),
                ]
            )
        story.append(
            _grid(rows, [12 * mm, 30 * mm, 28 * mm, 30 * mm, 45 * mm, BODY_WIDTH - 145 * mm])
        )
    if c.exposures:
        story.append(_p("Chamber exposures", s["h3"]))
        rows = [
            _head(
                [
                    "Run",
                    "Chamber, condition",
                    "Loaded to unloaded",
                    "Pieces",
                    "Time in tolerance",
                    "Convention",
                ],
                s,
            )
        ]
        for x in c.exposures:
            if x.checked and x.in_tolerance_hours is not None:
                needed = (
                    f" of {x.required_hours:g} h required" if x.required_hours is not None else ""
                )
                tolerance = f"{x.in_tolerance_hours:.2f} h{needed}; " + (
                    "counts" if x.counts else "does NOT count"
                )
            else:
                tolerance = "the chamber log is not checked"
            span = (
                moment_text(x.loaded)
                + " to "
                + (moment_text(x.unloaded) if x.unloaded else "still loaded")
            )
            rows.append(
                [
                    _p(x.run, s["small"]),
                    _p(f"{x.chamber}\n{x.condition}", s["small"]),
                    _p(span, s["small"]),
                    _p(", ".join(x.pieces), s["small"]),
                    _p(tolerance, s["small"]),
                    _p(x.convention or "", s["small"]),
                ]
            )
        story.append(
            _grid(rows, [18 * mm, 34 * mm, 34 * mm, 26 * mm, 28 * mm, BODY_WIDTH - 140 * mm])
        )
    if c.spectra:
        story.append(_p("Spectra before and after", s["h3"]))
        for plot in c.spectra:
            parts: list[Flowable] = [spectrum_drawing(plot, BODY_WIDTH, 70 * mm)]
            if plot.notes:
                parts.append(_lines(plot.notes, s["small"]))
            story.append(KeepTogether(parts))
            story.append(Spacer(1, 4))
    return story


def _conformity(c: ReportContent, s) -> list[Flowable]:
    k = c.conformity
    story = [
        _p("Statement of conformity", s["h2"]),
        _p(k.statement, s["body"]),
        _facts(
            [
                ("Results covered", k.covers),
                ("Specification", k.specification),
                (
                    "Decision rule",
                    f"{k.decision_rule_text} The lab set this rule for the order; it "
                    "applies to numeric limits (a visual grade is compared as graded).",
                ),
            ],
            s,
        ),
    ]
    if k.failing:
        story.append(_lines([f"Failed: {line}" for line in k.failing], s["small"]))
    return story


def _statements_and_signatures(c: ReportContent, s) -> list[Flowable]:
    story: list[Flowable] = [_p("Statements", s["h2"])]
    story += [_p(text, s["body"]) for text in c.statements]
    story.append(_p("Review and authorisation", s["h2"]))
    story.append(_p(_signature(c.review_signature, "Reviewed by"), s["body"]))
    story.append(_p(_signature(c.authorisation, "Authorised for issue by"), s["body"]))
    if c.header.verify_url:
        text = _p(
            f"Verification: scan the code or open {c.header.verify_url} to confirm this "
            f"report's number ({c.header.number}), its date of issue and the SHA-256 digest of "
            "the PDF file as issued. The page shows nothing else.",
            s["body"],
        )
        table = Table([[_qr(c.header.verify_url), text]], colWidths=[34 * mm, BODY_WIDTH - 34 * mm])
        table.setStyle(
            TableStyle(
                [("VALIGN", (0, 0), (-1, -1), "MIDDLE"), ("FONTNAME", (0, 0), (-1, -1), FONT)]
            )
        )
        story += [Spacer(1, 6), KeepTogether([table])]
    return story


def _amendment(c: ReportContent, s) -> list[Flowable]:
    h = c.header
    story: list[Flowable] = [
        _p("Report amended", s["h2"]),
        _facts(
            [
                ("Amends report", h.amends_number),
                (
                    "That report was issued",
                    moment_text(h.amends_issued_at) if h.amends_issued_at else "",
                ),
                ("Lot", c.items.lot_number),
            ],
            s,
        ),
        _p("What changed and why", s["h2"]),
        _p(h.change_description, s["body"]),
    ]
    if c.changes:
        rows = [_head(["Piece", "Step", "As reported", "Now", "Why"], s)]
        rows += [
            [
                _p(x.piece, s["small"]),
                _p(x.step, s["small"]),
                _p(x.before, s["small"]),
                _p(x.after, s["small"]),
                _p(x.why, s["small"]),
            ]
            for x in c.changes
        ]
        story.append(Spacer(1, 4))
        story.append(_grid(rows, [22 * mm, 34 * mm, 40 * mm, 40 * mm, BODY_WIDTH - 136 * mm]))
    else:
        story.append(
            _p("No result changed; the amendment corrects the text stated above.", s["small"])
        )
    story.append(
        _p(
            f"Everything else in report {h.amends_number} stands as issued. This "
            "amendment is read together with it.",
            s["small"],
        )
    )
    return story


def render_report(content: ReportContent) -> bytes:
    """The report (or amendment, or draft preview) as PDF bytes."""
    register_fonts()
    s = _styles()
    buffer = io.BytesIO()
    h = content.header
    doc = BaseDocTemplate(
        buffer,
        pagesize=PAGE,
        leftMargin=MARGIN_X,
        rightMargin=MARGIN_X,
        topMargin=MARGIN_TOP,
        bottomMargin=MARGIN_BOTTOM,
        title=h.title,
        author=content.lab.name,
        subject=h.number or "draft",
        creator="Records",
        producer="Records (reportlab)",
        invariant=1,
        initialFontName=FONT,
        initialFontSize=9,
    )
    frame = Frame(
        MARGIN_X,
        MARGIN_BOTTOM,
        BODY_WIDTH,
        PAGE[1] - MARGIN_TOP - MARGIN_BOTTOM,
        id="body",
        leftPadding=0,
        rightPadding=0,
        topPadding=0,
        bottomPadding=0,
    )
    doc.addPageTemplates(
        [PageTemplate(id="page", frames=[frame], onPage=partial(_page_header, content))]
    )
    story = _title_block(content, s) + _lab_and_customer(content, s)
    if h.kind == ReportKind.AMENDMENT:
        story += _amendment(content, s) + _conformity(content, s)
    else:
        story += (
            _items(content, s)
            + _dates(content, s)
            + _methods(content, s)
            + _results(content, s)
            + _conformity(content, s)
        )
    story += _statements_and_signatures(content, s)
    story += [CondPageBreak(12 * mm), _p(h.end_marker, s["end"])]
    right = f"Verification code {h.verification_code}" if h.verification_code else ""
    doc.build(
        story, canvasmaker=partial(_NumberedCanvas, page_label=h.page_label, right_text=right)
    )
    return buffer.getvalue()
