"""The page, its fonts and paragraph styles, and the flowables every page uses:
paragraphs, fixed-size figures, tick boxes and ruled tables.
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import escape

from layout.design import Design

MM = 72 / 25.4  # points per millimetre
PAPERS = {"a4": (210 * MM, 297 * MM), "letter": (8.5 * 72, 11 * 72)}
MARGIN = 14 * MM
HEADER = 10 * MM  # band above the frame for the name and date
FOOTER = 9 * MM  # band below it for the page number

SANS, SANS_BOLD = "SheetSans", "SheetSans-Bold"
_FONT_FILES = {SANS: "Vera.ttf", SANS_BOLD: "VeraBd.ttf"}
# What to print where the font has no glyph (Vera has °, ±, Ω, µ, ², ≈; not arrows).
_GLYPH_FALLBACK = {"→": "->", "←": "<-", "✓": "ok", "☐": "[ ]", "Ω": "ohm", "µ": "u", "—": "-"}

Files = Sequence[tuple[str, str, str]]


def _register_fonts() -> None:
    import reportlab
    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    if SANS in pdfmetrics.getRegisteredFontNames():
        return
    folder = Path(reportlab.__file__).parent / "fonts"
    for name, file in _FONT_FILES.items():
        pdfmetrics.registerFont(TTFont(name, str(folder / file)))
    pdfmetrics.registerFontFamily(SANS, normal=SANS, bold=SANS_BOLD, italic=SANS, boldItalic=SANS_BOLD)


@functools.lru_cache(maxsize=1)
def _glyphs() -> frozenset[int]:
    from reportlab.pdfbase import pdfmetrics

    _register_fonts()
    both = [set(pdfmetrics.getFont(n).face.charToGlyph) for n in (SANS, SANS_BOLD)]
    return frozenset(both[0] & both[1])


def _plain(text: str) -> str:
    """`text` with every character the font lacks replaced by a spelt-out stand-in."""
    have = _glyphs()
    return "".join(c if ord(c) in have or c == "\n" else _GLYPH_FALLBACK.get(c, "?") for c in text)


def _ohm() -> str:
    return _plain("Ω")


def _fmt_ohm(r: float) -> str:
    digits = 3 if r < 10 else 2 if r < 100 else 1
    return f"{r:.{digits}f} {_ohm()}"


@dataclass(frozen=True)
class _Ctx:
    design: Design
    frame_w: float
    frame_h: float
    styles: dict


def _styles() -> dict:
    from reportlab.lib.styles import ParagraphStyle

    # bulletFontName too: left at reportlab's default it puts an unembedded Helvetica in the PDF.
    base = ParagraphStyle("body", fontName=SANS, bulletFontName=SANS, fontSize=9, leading=11.5, spaceAfter=3)
    return {
        "body": base,
        "small": ParagraphStyle("small", parent=base, fontSize=7.5, leading=9.2, spaceAfter=2),
        "cell": ParagraphStyle("cell", parent=base, fontSize=8, leading=9.6, spaceAfter=0),
        "head": ParagraphStyle("head", parent=base, fontName=SANS_BOLD, fontSize=8, leading=9.6, alignment=1),
        "h1": ParagraphStyle("h1", parent=base, fontName=SANS_BOLD, fontSize=14, leading=17, spaceAfter=4),
        "h2": ParagraphStyle(
            "h2",
            parent=base,
            fontName=SANS_BOLD,
            fontSize=10.5,
            leading=13,
            spaceBefore=6,
            spaceAfter=3,
            keepWithNext=1,
        ),
        "caution": ParagraphStyle("caution", parent=base, fontSize=8.5, leading=10.5, leftIndent=10),
    }


def _p(ctx: _Ctx, text: str, style: str = "body"):
    from reportlab.platypus import Paragraph

    return Paragraph(escape(_plain(text)), ctx.styles[style])


def _pm(ctx: _Ctx, markup: str, style: str = "body"):
    """A paragraph whose text is already markup (escape the parts that come from data)."""
    from reportlab.platypus import Paragraph

    return Paragraph(_plain(markup), ctx.styles[style])


def _numbered_canvas(header: tuple[str, str], width: float, height: float):
    """A canvas that holds its pages until the end, then stamps 'page N of M' on each."""
    from reportlab.pdfgen.canvas import Canvas

    class NumberedCanvas(Canvas):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._pages: list[dict] = []

        def showPage(self):  # noqa: N802 (reportlab's name)
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self):
            total = len(self._pages)
            for n, state in enumerate(self._pages, start=1):
                self.__dict__.update(state)
                self._furniture(n, total)
                super().showPage()
            super().save()

        def _furniture(self, n: int, total: int):
            self.saveState()
            self.setFillGray(0)
            self.setStrokeGray(0)
            top = height - MARGIN - 4 * MM
            self.setFont(SANS_BOLD, 9)
            self.drawString(MARGIN, top, _plain(header[0]))
            self.setFont(SANS, 9)
            self.drawRightString(width - MARGIN, top, _plain(header[1]))
            self.setLineWidth(0.6)
            self.line(MARGIN, top - 2.5 * MM, width - MARGIN, top - 2.5 * MM)
            bottom = MARGIN + 2 * MM
            self.line(MARGIN, bottom + 4 * MM, width - MARGIN, bottom + 4 * MM)
            self.setFont(SANS, 8)
            self.drawString(MARGIN, bottom, _plain(f"{header[0]}, {header[1]}"))
            self.drawRightString(width - MARGIN, bottom, f"page {n} of {total}")
            self.restoreState()

    return NumberedCanvas


@functools.lru_cache(maxsize=1)
def _figure_class():
    from reportlab.platypus import Flowable

    class Figure(Flowable):
        """A drawing of a fixed size; `draw(canvas, width, height)` draws it from its lower left."""

        def __init__(self, width: float, height: float, draw: Callable):
            super().__init__()
            self.width, self.height, self._draw = width, height, draw

        def wrap(self, avail_w, avail_h):
            return self.width, self.height

        def draw(self):
            self.canv.saveState()
            self._draw(self.canv, self.width, self.height)
            self.canv.restoreState()

    return Figure


def _figure(width: float, height: float, draw: Callable):
    return _figure_class()(width, height, draw)


def _tick_box(size: float = 8.5):
    def draw(c, w, h):
        c.setLineWidth(0.7)
        c.rect(0, (h - size) / 2, size, size)

    return _figure(size, size + 1, draw)


def _table(ctx: _Ctx, rows, widths, header_rows: int = 1, style_extra=(), row_heights=None):
    """A ruled table in the sheet's font; header rows bold on light grey, repeated on new pages."""
    from reportlab.platypus import Table, TableStyle

    t = Table(rows, colWidths=widths, rowHeights=row_heights, repeatRows=header_rows, hAlign="LEFT")
    style = [
        ("FONT", (0, 0), (-1, -1), SANS, 8),
        ("VALIGN", (0, 0), (-1, -1), "MIDDLE"),
        ("GRID", (0, 0), (-1, -1), 0.4, (0, 0, 0)),
        ("TOPPADDING", (0, 0), (-1, -1), 2),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("RIGHTPADDING", (0, 0), (-1, -1), 3),
    ]
    if header_rows:
        style += [
            ("FONT", (0, 0), (-1, header_rows - 1), SANS_BOLD, 8),
            ("BACKGROUND", (0, 0), (-1, header_rows - 1), (0.88, 0.88, 0.88)),
        ]
    t.setStyle(TableStyle(style + list(style_extra)))
    return t


def _key_value_table(ctx: _Ctx, rows: Sequence[tuple[str, str]], key_w: float):
    cells = [[_p(ctx, k, "cell"), _p(ctx, v, "cell")] for k, v in rows]
    return _table(
        ctx,
        cells,
        [key_w, ctx.frame_w - key_w],
        header_rows=0,
        style_extra=[("BACKGROUND", (0, 0), (0, -1), (0.94, 0.94, 0.94))],
    )
