"""The Unicode TrueType font every report embeds (DejaVu Sans, licence in LICENSE.txt).

reportlab's built-in Type 1 fonts cover Latin-1 only: no ≤, Δ, λ or superscripts. DejaVu
Sans has them; it is registered once, on first use, under FONT and FONT_BOLD.
"""

from __future__ import annotations

from pathlib import Path

FONT = "DejaVuSans"
FONT_BOLD = "DejaVuSans-Bold"
FONT_DIR = Path(__file__).resolve().parent
_registered = False


def register_fonts() -> None:
    """Register DejaVu Sans (regular, bold) and its family with reportlab. Idempotent."""
    global _registered
    if _registered:
        return
    from reportlab.lib.fonts import addMapping
    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    pdfmetrics.registerFont(TTFont(FONT, str(FONT_DIR / "DejaVuSans.ttf")))
    pdfmetrics.registerFont(TTFont(FONT_BOLD, str(FONT_DIR / "DejaVuSans-Bold.ttf")))
    # Paragraph markup <b>/<i> looks fonts up through these mappings.
    addMapping(FONT, 0, 0, FONT)
    addMapping(FONT, 1, 0, FONT_BOLD)
    addMapping(FONT, 0, 1, FONT)
    addMapping(FONT, 1, 1, FONT_BOLD)
    _registered = True
