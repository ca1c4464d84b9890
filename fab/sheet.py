"""The build sheet: one PDF for the person at the bench, printed in black and white.

Sections: summary and cautions; a magnet map of each disc, to scale; the winding checklist,
a row per coil; the wiring, drawn coil by coil to the rectifier and the output; the curves;
balance and materials; the test plan. Every figure is read from the Design (and the
RotorBalance when one is given): nothing here decides what `layout/` has not decided.

reportlab is imported only inside the functions that draw. Text is set in Bitstream Vera,
which ships with reportlab, embedded as a subset so the sheet prints the same anywhere.
"""

from __future__ import annotations

import datetime
import functools
import math
import os
import shutil
import subprocess
import tempfile
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import escape

from layout.bill import RESIN_MARGIN_PCT, WIRE_MARGIN_PCT
from layout.circuit import BRIDGE_CURRENT_FACTOR, line_resistance_ohm
from layout.design import Design
from layout.materials import COPPER_TEMP_COEFF_PER_K, DISC_MATERIALS, STATOR_BINDERS_MAX_C
from layout.rotor import (
    BALANCE_SCREW,
    balance_positions,
    disc_count,
    is_steel_disc,
    pocket_marks,
    pockets_either_side,
)
from layout.safety import INSULATION_MIN_MOHM, insulation_test_v
from layout.winding import TERMINAL_LETTERS, electrical_hz, terminal_pair

MM = 72 / 25.4  # points per millimetre
PAPERS = {"a4": (210 * MM, 297 * MM), "letter": (8.5 * 72, 11 * 72)}
MARGIN = 14 * MM
HEADER = 10 * MM  # band above the frame for the name and date
FOOTER = 9 * MM  # band below it for the page number

# Bands the bench figures are checked against (common practice): a coil's resistance
# varies with the wire's diameter tolerance and the length of its leads; open-circuit
# voltage with the magnets' remanence, the gap as built and the speed reading.
RESISTANCE_BAND_PCT = 10
OPEN_CIRCUIT_BAND_PCT = 10
PHASE_MATCH_PCT = 3  # the three phases of a sound winding agree this closely (common practice)
# Reduction scales of ISO 5455 (technical drawings).
ISO_5455_SCALES = (1, 2, 5, 10, 20, 50, 100)

SANS, SANS_BOLD = "SheetSans", "SheetSans-Bold"
_FONT_FILES = {SANS: "Vera.ttf", SANS_BOLD: "VeraBd.ttf"}
# What to print where the font has no glyph (Vera has °, ±, Ω, µ, ², ≈; not arrows).
_GLYPH_FALLBACK = {"→": "->", "←": "<-", "✓": "ok", "☐": "[ ]", "Ω": "ohm", "µ": "u", "—": "-"}
GREY_N = 0.3  # fill of a magnet with N up: dark enough to tell from S in black and white

Files = Sequence[tuple[str, str, str]]


def write_sheet(
    design: Design,
    path: str | os.PathLike,
    paper: str = "a4",
    balance=None,
    files: Files | None = None,
    *,
    date: datetime.date | None = None,
) -> Path:
    """Write the build sheet of `design` to `path` (PDF) and return the path.

    `paper` is "a4" or "letter"; `balance` a layout.balance.RotorBalance (magnet ids per
    pocket and the balance report) or None; `files` the package's files as (file name,
    what it is, how to make it). `date` (default today) is printed on every page; with the
    same inputs and date the bytes are the same. Written to a temporary file beside `path`,
    then moved into place, so a reader never sees half a sheet.
    """
    if paper not in PAPERS:
        raise ValueError(f"paper = {paper!r}: must be one of {', '.join(PAPERS)}")
    path = Path(path)
    date = date or datetime.date.today()
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    try:
        _build(design, tmp, paper, balance, files, date)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


class RenderUnavailable(RuntimeError):
    """No PDF rasteriser on this machine (pdftoppm from poppler-utils)."""


def render_pages_png(pdf_path: str | os.PathLike, out_dir: str | os.PathLike, dpi: int = 100) -> list[Path]:
    """Every page of `pdf_path` as `out_dir/<stem>-page-NN.png`, by pdftoppm; the paths in order.

    Pages left over from an earlier, longer sheet of the same name are removed.
    Raises RenderUnavailable when pdftoppm is not installed.
    """
    exe = shutil.which("pdftoppm")
    if exe is None:
        raise RenderUnavailable("pdftoppm not found: install poppler-utils to render pages")
    pdf_path, out_dir = Path(pdf_path), Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    stem = pdf_path.stem
    with tempfile.TemporaryDirectory(dir=out_dir) as work:
        subprocess.run(
            [exe, "-png", "-r", str(int(dpi)), str(pdf_path), str(Path(work) / "p")],
            check=True,
            capture_output=True,
        )
        made = sorted(Path(work).glob("p-*.png"), key=lambda p: int(p.stem.split("-")[-1]))
        for old in out_dir.glob(f"{stem}-page-*.png"):
            old.unlink()
        out = []
        for n, png in enumerate(made, start=1):
            dest = out_dir / f"{stem}-page-{n:02d}.png"
            os.replace(png, dest)
            out.append(dest)
    return out


# --------------------------------------------------------------------------- text and fonts


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


def _band(value: float, pct: float) -> tuple[float, float]:
    return value * (1 - pct / 100), value * (1 + pct / 100)


# --------------------------------------------------------------------------- words from the design


def _phase_label(phase: str, phases: int) -> str:
    return f"{phase} ({TERMINAL_LETTERS[phase]})" if phases == 3 else "single"


_terminals = terminal_pair


def _wire_words(design: Design) -> str:
    w = design.prediction.wire
    return f"{w.name} x {w.strands} in hand" if w.strands > 1 else w.name


def _topology_words(design: Design) -> str:
    return {
        "two_discs": "two magnet discs either side of a coreless stator",
        "one_disc_steel_stator": "one magnet disc over a steel-backed stator",
        "one_disc_coreless": "one magnet disc beside a coreless stator",
    }[design.spec.rotor.topology]


def _connection_words(design: Design) -> str:
    k = design.spec.connection.kind
    a = design.layout.parallel_paths
    paths = f", {a} parallel paths per phase" if a > 1 else ""
    return {"star": "star (Y)", "delta": "delta", "single_phase": "single phase"}[k] + paths


def _target_words(design: Design) -> str:
    ta = design.spec.target
    if ta.kind == "battery":
        return f"charge a {ta.battery_v:g} V battery through a diode bridge"
    if ta.kind == "dc":
        return f"{ta.voltage_v:g} V DC at {ta.rated_current_a:g} A through a diode bridge"
    return f"{ta.voltage_v:g} V AC line at {ta.rated_current_a:g} A, no rectifier"


def _cut_in_words(design: Design) -> str:
    pr, ta = design.prediction, design.spec.target
    if ta.kind == "ac_line":
        return f"{pr.cut_in_rpm:.0f} rpm: the open-circuit line voltage reaches {ta.voltage_v:g} V rms"
    why = " (battery plus two diode drops)" if ta.kind == "battery" else " (target plus two diode drops)"
    return (
        f"{pr.cut_in_rpm:.0f} rpm: the rectified open-circuit voltage reaches {pr.cut_in_voltage_v:.1f} V"
        + why
    )


def _magnet_words(design: Design) -> str:
    mg = design.spec.magnets
    size = (
        f"{mg.length_mm:g} x {mg.width_mm:g} x {mg.thickness_mm:g} mm block"
        if mg.shape == "block"
        else f"{mg.diameter_mm:g} mm dia. x {mg.thickness_mm:g} mm disc"
    )
    grade = mg.grade or f"Br {mg.remanence_t:g} T"
    return f"{size}, {grade}, magnetised through the {mg.thickness_mm:g} mm thickness"


def _pocket_word(design: Design) -> str:
    return "place" if is_steel_disc(design.spec) else "pocket"


def _disc_name(design: Design, disc: int) -> str:
    if disc_count(design.spec) == 1:
        return "the magnet disc"
    return "disc 1 (lower)" if disc == 1 else "disc 2 (upper)"


def _caution_group(code: str) -> str:
    if code.startswith("coil.") or code == "magnet.temperature":
        return "Heat"
    if code.startswith("magnet."):
        return "Magnets"
    if code.startswith("voltage."):
        return "Voltage"
    if code.startswith(("rotor.", "disc.", "layout.")):
        return "Rotating parts"
    return "Design"


# Bench rules that hold for every machine; the design's own warnings follow each.
_CAUTIONS = (
    (
        "Magnets",
        "Work on a bench with no steel on it, one magnet at a time; keep magnets in their "
        "spacers until they go in, away from phones, cards and watches.",
    ),
    (
        "Rotating parts",
        "Fit the guard before the rotor turns under power; never reach towards the discs "
        "while anything can turn them.",
    ),
    (
        "Voltage",
        "The terminals are live whenever the rotor turns: stop and secure it before touching "
        "the wiring, and insulate every joint.",
    ),
    (
        "Heat",
        "Coils, rectifier and load get hot: mount the bridge on a heat sink and check the "
        "stator's temperature in the first long runs (see the test plan).",
    ),
)
DEFER = (
    "This sheet is a design aid: check every figure before building. Follow local codes and "
    "licensed practice, and have a licensed electrician check anything connected to a "
    "building's wiring."
)


# --------------------------------------------------------------------------- document


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
            "h2", parent=base, fontName=SANS_BOLD, fontSize=10.5, leading=13, spaceBefore=6, spaceAfter=3
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


def _build(design, filename, paper, balance, files, date) -> None:
    from reportlab.platypus import BaseDocTemplate, Frame, PageBreak, PageTemplate

    _register_fonts()
    width, height = PAPERS[paper]
    frame_w = width - 2 * MARGIN
    frame_h = height - 2 * MARGIN - HEADER - FOOTER
    ctx = _Ctx(design, frame_w, frame_h, _styles())
    name = design.spec.name
    doc = BaseDocTemplate(
        filename,
        pagesize=(width, height),
        leftMargin=MARGIN,
        rightMargin=MARGIN,
        topMargin=MARGIN + HEADER,
        bottomMargin=MARGIN + FOOTER,
        title=f"{name} build sheet",
        author="statorsmith",
        subject=design.spec.purpose,
        creator="statorsmith",
        invariant=1,
        initialFontName=SANS,
    )
    frame = Frame(MARGIN, MARGIN + FOOTER, frame_w, frame_h, 0, 0, 0, 0, id="body")
    doc.addPageTemplates([PageTemplate(id="page", frames=[frame])])
    sections = [
        _summary(ctx, files),
        *(_magnet_map(ctx, disc, balance) for disc in range(1, disc_count(design.spec) + 1)),
        _checklist(ctx),
        _wiring(ctx),
        _curves(ctx),
        _balance_and_materials(ctx, balance),
        _test_plan(ctx),
    ]
    story = []
    for k, section in enumerate(sections):
        if k:
            story.append(PageBreak())
        story.extend(section)
    header = (f"{name}: build sheet", date.isoformat())
    doc.build(story, canvasmaker=_numbered_canvas(header, width, height))


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


# --------------------------------------------------------------------------- 1 summary


def _summary(ctx: _Ctx, files: Files | None) -> list:
    d = ctx.design
    spec, lay, pr = d.spec, d.layout, d.prediction
    ta = spec.target
    rated = pr.rated
    out = [_p(ctx, f"{spec.name}: build sheet", "h1"), _p(ctx, spec.purpose)]
    phase_v = "" if lay.phases == 1 else f" ({pr.open_circuit_phase_rms_v:.1f} V per phase)"
    line = "line" if lay.phases == 3 else "terminal"
    output_kind = "AC line" if ta.kind == "ac_line" else "DC"
    rows = [
        (
            "machine",
            f"{_topology_words(d)}; {lay.coil_positions} coil positions, {len(lay.coils)} coils wound",
        ),
        ("magnets", f"{lay.magnets} per disc: {_magnet_words(d)}"),
        (
            "winding",
            f"{lay.phases}-phase, {_connection_words(d)}; winding factor {lay.winding_factor:.3f}; "
            f"{pr.turns_per_coil} turns of {_wire_words(d)} per coil",
        ),
        ("target", _target_words(d)),
        (
            f"open-circuit voltage at {ta.rated_rpm:g} rpm",
            f"{pr.open_circuit_line_rms_v:.1f} V {line} rms{phase_v}; "
            f"{pr.open_circuit_line_rms_at_max_v:.0f} V at {ta.max_rpm:g} rpm (the highest speed)",
        ),
        ("cut-in", _cut_in_words(d)),
        (
            f"rated output at {rated.rpm:g} rpm",
            f"{rated.dc_voltage_v:.1f} V, {rated.dc_current_a:.2f} A, {rated.dc_power_w:.0f} W {output_kind}",
        ),
        ("efficiency at rated speed", f"{rated.efficiency:.0%} (copper and rectifier losses)"),
        (
            "phase resistance at 20 °C",
            f"{_fmt_ohm(pr.phase_resistance_ohm)} per phase; {_fmt_ohm(pr.coil_resistance_ohm)} per coil",
        ),
        ("electrical frequency", f"{pr.electrical_hz_at_rated:.1f} Hz at {ta.rated_rpm:g} rpm"),
    ]
    out.append(_key_value_table(ctx, rows, 52 * MM))
    out.append(_p(ctx, "Files in the package", "h2"))
    if files:
        head = [_p(ctx, h, "cell") for h in ("file", "what it is", "how to make it")]
        body = [[_p(ctx, f, "cell"), _p(ctx, w, "cell"), _p(ctx, h, "cell")] for f, w, h in files]
        w0 = 48 * MM
        w1 = (ctx.frame_w - w0) * 0.45
        out.append(_table(ctx, [head, *body], [w0, w1, ctx.frame_w - w0 - w1]))
    else:
        out.append(
            _p(
                ctx,
                "This sheet was written on its own. statorsmith build writes it together with the "
                "part files (STEP, STL, DXF), the balance plan and a manifest.",
            )
        )
    out.append(_p(ctx, "Cautions", "h2"))
    by_group: dict[str, list[str]] = {}
    order = {"danger": 0, "warning": 1, "info": 2}
    for w in sorted(d.warnings, key=lambda w: order[w.severity]):
        by_group.setdefault(_caution_group(w.code), []).append(f"{w.severity.upper()}: {w.message}")
    for group, rule in _CAUTIONS:
        out.append(_pm(ctx, f"<b>{escape(group)}.</b> {escape(rule)}", "caution"))
        out.extend(_p(ctx, m, "caution") for m in by_group.get(group, ()))
    if by_group.get("Design"):
        out.append(_pm(ctx, "<b>Design.</b> What to change before building:", "caution"))
        out.extend(_p(ctx, m, "caution") for m in by_group["Design"])
    out.append(_pm(ctx, f"<b>{escape(DEFER)}</b>", "body"))
    return out


# --------------------------------------------------------------------------- 2 magnet maps


_MAP_ROOM = 24 * MM  # pocket numbers and the index mark outside the rim, both sides together


def _map_scale(diameter_mm: float, avail_w: float, avail_h: float) -> int:
    """The largest ISO 5455 scale (1:n) at which the disc and its labels fit."""
    for n in ISO_5455_SCALES:
        size = diameter_mm * MM / n + _MAP_ROOM
        if size <= avail_w and size <= avail_h:
            return n
    return ISO_5455_SCALES[-1]


def _scale_bar_mm(diameter_mm: float) -> float:
    """A round length for the scale bar, no longer than about half the disc."""
    for length in (500, 200, 100, 50, 20, 10):
        if length <= 0.6 * diameter_mm:
            return float(length)
    return 10.0


def _clocking_words(design: Design) -> str:
    w = _pocket_word(design)
    lower = " Lower it on the jacking screws, never by hand." if design.forces.jacking_screws else ""
    return (
        "Clocking the second disc: disc 2 is made magnet side up like disc 1, then turned over onto the "
        f"shaft, magnets facing the stator. Turned over, its {w}s run counter-clockwise like disc 1's and "
        f"{w} k lies over {w} k. Line up the index marks ({w} 1 over {w} 1) and fit the dowels through "
        "both discs: every magnet then faces one of the other pole across the stator (N faces S)." + lower
    )


def _magnet_map(ctx: _Ctx, disc: int, balance) -> list:
    from reportlab.platypus import KeepTogether

    d = ctx.design
    marks = pocket_marks(d.geometry, disc)
    word = _pocket_word(d)
    ids = _assigned_ids(balance, disc, marks)
    corr = _correction(balance, disc)
    r_out = d.forces.disc_outer_radius_mm
    # Heading, the words round the map and the scale bar take about this much of the page;
    # the pocket table (with a balance plan) may run on to the next page.
    reserve = (47 + (20 if disc == 2 else 0) + (9 if corr is not None and corr.needed else 0)) * MM
    n_scale = _map_scale(2 * r_out, ctx.frame_w, ctx.frame_h - reserve)
    s = MM / n_scale  # points on paper per mm on the part
    out = [_p(ctx, f"Magnet map: {_disc_name(d, disc)}", "h1")]
    lie = "Seen from above, the disc lying on its back with its magnet side up, as it is made"
    if is_steel_disc(d.spec):
        lie += " (the magnets sit on the steel face, set out with the placing template)"
    count_dir = "counter-clockwise" if disc == 1 else "clockwise"
    faces = ", ".join(f"{m.pocket} {m.face_up}" for m in marks[:2])
    out.append(
        _p(
            ctx,
            f"{lie}. {word.capitalize()}s are numbered {count_dir} from the index mark at {word} 1. "
            f"Dark magnets go N face up, white ones S face up, alternating round the disc ({faces}, ...). "
            "Check each face with a compass or a marked test magnet before it goes in."
            + (
                " Each magnet's id from the balance plan is written inside the ring."
                if any(ident != "any" for ident, _ in ids.values())
                else f" No weighed magnets in the plan: any magnet may go in any {word} (magnet: any)."
            ),
        )
    )
    out.append(
        _figure(
            ctx.frame_w,
            2 * r_out * s + _MAP_ROOM,
            lambda c, w, h: _draw_disc(c, d, disc, marks, ids, w / 2, h / 2, s, corr),
        )
    )
    bar = _scale_bar_mm(2 * r_out)
    out.append(_figure(ctx.frame_w, 9 * MM, functools.partial(_draw_scale_bar, bar=bar, s=s, n=n_scale)))
    out.append(
        _p(
            ctx,
            f"The bar stands for {bar:g} mm and measures {bar / n_scale:g} mm on paper: check it before "
            "using this map as a template (print at 100 %, no fit to page). For marking out, the DXF "
            "files of the package are full size.",
            "small",
        )
    )
    if disc == 2:
        out.append(_p(ctx, _clocking_words(d)))
    if corr is not None and corr.needed:
        out.append(_p(ctx, _correction_words(d, disc, corr)))
    if balance is not None:
        title = _p(ctx, f"Magnet list: {_disc_name(d, disc)}", "h2")
        out.append(KeepTogether([title, _pocket_table(ctx, d, marks, ids, balance)]))
    return out


def _draw_scale_bar(c, w: float, h: float, bar: float, s: float, n: int) -> None:
    length = bar * s
    x0, y0 = 0, h - 3.5 * MM
    c.setLineWidth(0.8)
    for k in range(10):
        c.setFillGray(0 if k % 2 == 0 else 1)
        c.rect(x0 + k * length / 10, y0, length / 10, 2 * MM, fill=1, stroke=1)
    c.setFillGray(0)
    c.setFont(SANS, 7.5)
    c.drawString(x0, y0 - 3.4 * MM, "0")
    c.drawRightString(x0 + length, y0 - 3.4 * MM, f"{bar:g} mm")
    c.setFont(SANS_BOLD, 10)
    c.drawString(x0 + length + 4 * MM, y0 - 0.2 * MM, f"scale 1:{n}")


def _assigned_ids(balance, disc: int, marks) -> dict[int, tuple[str, float | None]]:
    """pocket → (magnet id, mass in g) from the balance plan; 'any' without one."""
    if balance is None:
        return {m.pocket: ("any", None) for m in marks}
    found = [db for db in balance.discs if db.disc == disc]
    if not found:
        raise ValueError(f"the balance plan has no disc {disc}")
    out = {}
    faces = {m.pocket: m.face_up for m in marks}
    for a in found[0].assignment:
        if a.pocket not in faces:
            raise ValueError(f"the balance plan names pocket {a.pocket}, which disc {disc} does not have")
        if a.face != faces[a.pocket]:
            raise ValueError(
                f"the balance plan puts {a.face} up in pocket {a.pocket} of disc {disc}; "
                f"the design has {faces[a.pocket]} up there"
            )
        out[a.pocket] = (a.magnet, a.mass_g if balance.weighed else None)
    missing = sorted(set(faces) - set(out))
    if missing:
        raise ValueError(f"the balance plan leaves pockets {missing} of disc {disc} empty")
    return out


def _correction(balance, disc: int):
    if balance is None:
        return None
    for db in balance.discs:
        if db.disc == disc:
            return db.correction
    return None


def _between_pockets(design: Design, disc: int, part_angle: float) -> tuple[int, int]:
    """The two pockets either side of an angle as marked on the part (the balance plan's)."""
    return pockets_either_side(design.spec.magnets.count, disc, part_angle)


def _correction_words(design: Design, disc: int, corr) -> str:
    a, b = _between_pockets(design, disc, corr.angle_deg)
    word = _pocket_word(design)
    holes = balance_positions(design.spec, design.forces.disc_outer_radius_mm)
    where = f"in the {BALANCE_SCREW} hole" if holes is not None else "glued on the face"
    return (
        f"Balance correction for this disc: add {corr.add_g:.1f} g at {corr.radius_mm:.0f} mm radius "
        f"{where} between {word}s {a} and {b} ({corr.angle_deg:.0f}° on the part, marked + on the map); "
        f"it leaves about {corr.residual_after_gmm:.0f} g·mm."
    )


def _draw_disc(c, design: Design, disc: int, marks, ids, cx: float, cy: float, s: float, corr) -> None:
    spec = design.spec
    mg = spec.magnets
    r_out = design.forces.disc_outer_radius_mm
    r_bore = spec.rotor.bore_diameter_mm / 2
    rc = mg.pitch_radius_mm
    c.setStrokeGray(0)
    c.setLineWidth(1.2)
    c.circle(cx, cy, r_out * s)
    c.setLineWidth(0.8)
    c.circle(cx, cy, r_bore * s)
    # Centre cross and the pitch circle the magnets are set out on.
    c.setLineWidth(0.3)
    c.setDash(4, 2)
    c.circle(cx, cy, rc * s)
    c.line(cx - (r_bore + 4) * s, cy, cx + (r_bore + 4) * s, cy)
    c.line(cx, cy - (r_bore + 4) * s, cx, cy + (r_bore + 4) * s)
    c.setDash()
    radial = mg.length_mm if mg.shape == "block" else mg.diameter_mm
    tangential = mg.width_mm if mg.shape == "block" else mg.diameter_mm
    arc_pt = 2 * math.pi * rc * s / mg.count  # paper between magnet centres
    face_font = max(5.0, min(12.0, 0.55 * tangential * s, 0.45 * arc_pt))
    num_font = max(5.5, min(9.0, 0.45 * arc_pt))
    r_num = r_out * s + 3.2 * MM
    for m in marks:
        a = math.radians(m.angle_deg)
        x, y = cx + rc * s * math.cos(a), cy + rc * s * math.sin(a)
        c.saveState()
        c.translate(x, y)
        c.rotate(m.angle_deg)
        c.setLineWidth(0.8)
        c.setFillGray(GREY_N if m.face_up == "N" else 1)
        if mg.shape == "block":
            c.rect(-radial * s / 2, -tangential * s / 2, radial * s, tangential * s, fill=1, stroke=1)
        else:
            c.circle(0, 0, radial * s / 2, fill=1, stroke=1)
        c.restoreState()
        c.setFillGray(1 if m.face_up == "N" else 0)
        c.setFont(SANS_BOLD, face_font)
        c.drawCentredString(x, y - face_font * 0.35, m.face_up)
        c.setFillGray(0)
        c.setFont(SANS_BOLD if m.pocket == 1 else SANS, num_font)
        nx, ny = cx + r_num * math.cos(a), cy + r_num * math.sin(a)
        c.drawCentredString(nx, ny - num_font * 0.35, str(m.pocket))
        ident = ids[m.pocket][0]
        if ident != "any":
            r_id = (rc - radial / 2) * s - 3.5 * MM
            ix, iy = cx + r_id * math.cos(a), cy + r_id * math.sin(a)
            c.setFont(SANS, max(5.0, min(7.5, 0.3 * arc_pt)))
            c.drawCentredString(ix, iy - 2, _plain(ident))
    # Index mark: a solid triangle outside the rim at pocket 1, pointing at the disc.
    a1 = math.radians(marks[0].angle_deg)
    tip = r_out * s + 6.5 * MM
    base = tip + 4.5 * MM
    ux, uy = math.cos(a1), math.sin(a1)
    vx, vy = -uy, ux
    path = c.beginPath()
    path.moveTo(cx + tip * ux, cy + tip * uy)
    path.lineTo(cx + base * ux + 2.2 * MM * vx, cy + base * uy + 2.2 * MM * vy)
    path.lineTo(cx + base * ux - 2.2 * MM * vx, cy + base * uy - 2.2 * MM * vy)
    path.close()
    c.setFillGray(0)
    c.drawPath(path, fill=1, stroke=0)
    c.setFont(SANS_BOLD, 7.5)
    mid = (tip + base) / 2
    c.drawCentredString(cx + mid * ux + 4.8 * MM * uy, cy + mid * uy - 4.8 * MM * ux - 2.5, "INDEX")
    # Which way the pockets are counted: an arrow along an arc inside the ring.
    r_arrow = max((rc - radial / 2) * s - 7 * MM, r_bore * s + 4 * MM)
    step = 360.0 / mg.count
    start = marks[0].angle_deg
    sweep = (1 if disc == 1 else -1) * min(1.6 * step, 40.0)
    c.setLineWidth(0.8)
    arc = c.beginPath()
    arc.arc(cx - r_arrow, cy - r_arrow, cx + r_arrow, cy + r_arrow, start + sweep * 0.15, sweep * 0.85)
    c.drawPath(arc, stroke=1, fill=0)
    end = math.radians(start + sweep)
    ex, ey = cx + r_arrow * math.cos(end), cy + r_arrow * math.sin(end)
    tx, ty = -math.sin(end) * math.copysign(1, sweep), math.cos(end) * math.copysign(1, sweep)
    head = c.beginPath()
    head.moveTo(ex, ey)
    head.lineTo(ex - 2.6 * MM * tx + 1.2 * MM * ty, ey - 2.6 * MM * ty - 1.2 * MM * tx)
    head.lineTo(ex - 2.6 * MM * tx - 1.2 * MM * ty, ey - 2.6 * MM * ty + 1.2 * MM * tx)
    head.close()
    c.drawPath(head, fill=1, stroke=0)
    if corr is not None and corr.needed:
        ang = math.radians(corr.angle_deg)  # the plan gives it as marked on the part
        px, py = cx + corr.radius_mm * s * math.cos(ang), cy + corr.radius_mm * s * math.sin(ang)
        c.setLineWidth(1.4)
        k = 2.2 * MM
        c.line(px - k, py, px + k, py)
        c.line(px, py - k, px, py + k)


def _pocket_table(ctx: _Ctx, design: Design, marks, ids, balance):
    """Pocket, face up, magnet id (and mass) from the balance plan, in up to four column groups."""
    words = [_pocket_word(design), "face up", "magnet id"] + (["mass g"] if balance.weighed else [])
    head = [_p(ctx, w, "head") for w in words]
    rows = []
    for m in marks:
        ident, mass = ids[m.pocket]
        extra = [f"{mass:.2f}" if mass is not None else ""] if balance.weighed else []
        rows.append([str(m.pocket), m.face_up, _plain(ident), *extra])
    n_cols = len(head)
    groups = max(1, min(4 if len(words) == 3 else 3, math.ceil(len(rows) / 4)))
    per = math.ceil(len(rows) / groups)
    table_rows = [head * groups]
    for i in range(per):
        line = []
        for g in range(groups):
            k = g * per + i
            line.extend(rows[k] if k < len(rows) else [""] * n_cols)
        table_rows.append(line)
    widths = [ctx.frame_w / (n_cols * groups)] * (n_cols * groups)
    rules = [
        ("LINEAFTER", (n_cols * g - 1, 0), (n_cols * g - 1, -1), 1.4, (0, 0, 0)) for g in range(1, groups)
    ]
    return _table(ctx, table_rows, widths, style_extra=[*rules, ("ALIGN", (0, 0), (-1, -1), "CENTER")])


# --------------------------------------------------------------------------- 3 winding checklist


def _checklist(ctx: _Ctx) -> list:
    d = ctx.design
    lay, pr, geo = d.layout, d.prediction, d.geometry
    ohm = _ohm()
    lo, hi = _band(pr.coil_resistance_ohm, RESISTANCE_BAND_PCT)
    side = "disc 1 (the lower disc)" if disc_count(d.spec) == 2 else "the magnet disc"
    out = [_p(ctx, "Winding checklist", "h1")]
    out.append(
        _p(
            ctx,
            f"Wind every coil the same way: {pr.turns_per_coil} turns of {_wire_words(d)}, clockwise "
            f"seen from the coil's magnet side, the face that goes towards {side}. The start lead (S) is "
            "the inner end, at the hole; the finish lead (F) the outer end. Before a coil leaves the jig, "
            "put a dot of paint on its magnet side and tag its leads S and F. Every coil goes into the "
            f"stator magnet side towards {side}, at its position (angle counter-clockwise from "
            "position 1, seen from that side).",
        )
    )
    n_rev = sum(1 for c in lay.coils if c.polarity < 0)
    if n_rev:
        out.append(
            _pm(
                ctx,
                f"<b>{n_rev} coils are connected reversed</b>: they are wound exactly like the others, and "
                "only their leads swap in the chain (the current goes in at F and out at S). The connect "
                "column says which.",
            )
        )
    else:
        out.append(_p(ctx, "Every coil is connected as wound: in at S, out at F."))
    out.append(
        _p(
            ctx,
            f"Expected resistance of each coil at 20 °C: {_fmt_ohm(pr.coil_resistance_ohm)} "
            f"±{RESISTANCE_BAND_PCT} % ({lo:.3f} to {hi:.3f} {ohm}), measured between S and F with the "
            "enamel scraped off. Copper reads higher when warm: R at 20 °C = R measured / "
            f"(1 + {COPPER_TEMP_COEFF_PER_K:g} x (room °C - 20)). Under 1 {ohm}, a plain meter's leads add "
            "a good part of the reading: touch the probes together first and subtract, or pass a known "
            "current (1 A from a bench supply) and read the voltage across the coil.",
            "small",
        )
    )
    paths = lay.parallel_paths > 1
    # (heading, nominal width in mm); scaled together to the frame.
    cols = [("coil", 8), ("at", 10), ("phase", 12)] + ([("path", 10)] if paths else [])
    cols += [("wind", 10), ("connect", 18), ("lead in / out", 11), ("turns", 10), ("wire", 18)]
    cols += [(f"R at 20 °C, {ohm} ±{RESISTANCE_BAND_PCT} %", 21), ("wound", 13), ("turns counted", 15)]
    cols += [(f"R measured, {ohm}", 17), ("leads S, F marked", 14)]
    k = ctx.frame_w / (MM * sum(w for _, w in cols))
    widths = [w * MM * k for _, w in cols]
    head = [h for h, _ in cols]
    wire = pr.wire.name + (f" x{pr.wire.strands}" if pr.wire.strands > 1 else "")
    rows = [[_p(ctx, h, "cell") for h in head]]
    for coil in lay.coils:
        rev = coil.polarity < 0
        row = [str(coil.index), f"{coil.angle_deg:.0f}°", _phase_label(coil.phase, lay.phases)]
        row += [str(coil.path)] if paths else []
        row += ["CW", "REVERSED" if rev else "as wound", "F / S" if rev else "S / F", str(pr.turns_per_coil)]
        row += [wire, _plain(f"{pr.coil_resistance_ohm:.3f}\n{lo:.3f}–{hi:.3f}")]
        row += [_tick_box(), _tick_box(), "", _tick_box()]
        rows.append(row)
    c_connect, c_io, c_box = head.index("connect"), head.index("lead in / out"), head.index("wound")
    c_r = c_box - 1
    extra = [("ROWBACKGROUNDS", (0, 1), (-1, -1), [(1, 1, 1), (0.94, 0.94, 0.94)])]
    extra += [
        ("FONT", (col, n), (col, n), SANS_BOLD, 8)
        for n, coil in enumerate(lay.coils, start=1)
        if coil.polarity < 0
        for col in (c_connect, c_io)
    ]
    extra += [("ALIGN", (c_box, 1), (-1, -1), "CENTER"), ("ALIGN", (c_io, 1), (c_io, -1), "CENTER")]
    extra += [("FONT", (c_r, 1), (c_r, -1), SANS, 7.5), ("LEADING", (c_r, 1), (c_r, -1), 8.5)]
    # Rows tall enough to write the measured resistance in.
    out.append(_table(ctx, rows, widths, style_extra=extra, row_heights=[None] + [7 * MM] * len(lay.coils)))
    out.append(
        _p(
            ctx,
            "CW: clockwise seen from the magnet side. Coil position k sits at "
            f"{360 / lay.coil_positions:g}° x (k - 1)"
            + (
                f"; positions {', '.join(map(str, lay.empty_positions))} stay empty."
                if lay.empty_positions
                else "."
            )
            + f" Coil window: legs {geo.coil.leg_width_mm:.1f} mm wide, "
            f"{geo.coil.thickness_mm:.1f} mm thick; mean turn {geo.coil.mean_turn_length_mm:.0f} mm.",
            "small",
        )
    )
    return out


# --------------------------------------------------------------------------- 4 wiring


def _chains(design: Design, phase: str) -> list[list]:
    """The coils of one phase, path by path, in the order they are joined."""
    coils = design.layout.phase_coils(phase)
    return [[c for c in coils if c.path == a] for a in range(1, design.layout.parallel_paths + 1)]


_SLOT_MAX = 34 * MM  # room for one coil in a chain, wire included
_SLOT_MIN = 17 * MM
_ROW_H = 18 * MM


def _draw_coil(c, x: float, y: float, w: float, coil, reversed_: bool) -> None:
    """A coil symbol from (x, y) to (x + w, y): its number above, its leads' names below."""
    humps = 4
    lead = 2.2 * MM
    hw = (w - 2 * lead) / humps
    c.setLineWidth(0.9)
    c.line(x, y, x + lead, y)
    c.line(x + w - lead, y, x + w, y)
    for k in range(humps):
        x0 = x + lead + k * hw
        arc = c.beginPath()
        arc.arc(x0, y - hw / 2, x0 + hw, y + hw / 2, 180, -180)
        c.drawPath(arc, stroke=1, fill=0)
    c.setFont(SANS_BOLD, 9)
    c.drawCentredString(x + w / 2, y + hw / 2 + 2.5, str(coil.index))
    c.setFont(SANS_BOLD if reversed_ else SANS, 7.5)
    left, right = ("F", "S") if reversed_ else ("S", "F")
    c.drawCentredString(x + lead / 2, y - 9, left)
    c.drawCentredString(x + w - lead / 2, y - 9, right)
    if reversed_:
        c.setLineWidth(0.6)
        _dash(c, (2, 1.5))
        c.rect(x - 1, y - 11.5, w + 2, hw / 2 + 24)
        c.setDash()
        c.setFont(SANS_BOLD, 6.5)
        c.drawCentredString(x + w / 2, y - 19, "REVERSED")


def _terminal(c, x: float, y: float, label: str, where: str) -> None:
    """A terminal (open circle) named to its left, right or above."""
    c.setLineWidth(0.9)
    c.setFillGray(1)
    c.circle(x, y, 2.4, fill=1, stroke=1)
    c.setFillGray(0)
    c.setFont(SANS_BOLD, 9)
    if where == "left":
        c.drawRightString(x - 4.5, y - 3, label)
    elif where == "right":
        c.drawString(x + 4.5, y - 3, label)
    else:
        c.drawCentredString(x, y + 5, label)


def _phase_figure(ctx: _Ctx, phase: str):
    """Every coil of one phase from its terminal 1 to its terminal 2, parallel paths one under another."""
    d = ctx.design
    chains = _chains(d, phase)
    t1, t2 = _terminals(phase)
    x_left, x_right = 12 * MM, ctx.frame_w - 12 * MM
    usable = x_right - x_left - 8 * MM
    longest = max(len(ch) for ch in chains)
    slot = min(_SLOT_MAX, usable / longest)
    per_row = longest
    if slot < _SLOT_MIN:
        per_row = max(1, int(usable // _SLOT_MIN))
        slot = usable / per_row
    sym = min(20 * MM, slot - 5 * MM)
    rows_per_path = [math.ceil(len(ch) / per_row) for ch in chains]
    height = sum(rows_per_path) * _ROW_H + 8 * MM
    reverse = {c.index for c in d.layout.coils if c.polarity < 0}

    def draw(c, w, h):
        c.setFont(SANS_BOLD, 9)
        title = f"Phase {phase}: {t1} to {t2}" if d.layout.phases == 3 else f"Winding: {t1} to {t2}"
        if len(chains) > 1:
            title += f", {len(chains)} paths in parallel"
        c.drawString(0, h - 9, _plain(title))
        y = h - 8 * MM - 7 * MM
        ends = []
        for chain, n_rows in zip(chains, rows_per_path, strict=True):
            first_y = y
            for r in range(n_rows):
                part = chain[r * per_row : (r + 1) * per_row]
                x = x_left + 4 * MM
                c.setLineWidth(0.9)
                c.line(x_left, y, x, y)
                for coil in part:
                    gap = (slot - sym) / 2
                    c.line(x, y, x + gap, y)
                    _draw_coil(c, x + gap, y, sym, coil, coil.index in reverse)
                    c.line(x + gap + sym, y, x + slot, y)
                    x += slot
                if r < n_rows - 1:  # carry the chain down to the start of the next row
                    y_next = y - _ROW_H
                    mid = y - _ROW_H + 7 * MM
                    c.line(x, y, x + 2 * MM, y)
                    c.line(x + 2 * MM, y, x + 2 * MM, mid)
                    c.line(x + 2 * MM, mid, x_left, mid)
                    c.line(x_left, mid, x_left, y_next)
                    y = y_next
                else:
                    c.line(x, y, x_right, y)
            ends.append((first_y, y))
            y -= _ROW_H
        if len(ends) > 1:  # the paths' common ends
            c.setLineWidth(0.9)
            c.line(x_left - 3 * MM, ends[0][0], x_left - 3 * MM, ends[-1][0])
            c.line(x_right, ends[0][1], x_right, ends[-1][1])
            for first, last in ends:
                c.line(x_left - 3 * MM, first, x_left, first)
                _dot(c, x_left - 3 * MM, first)
                _dot(c, x_right, last)
            _terminal(c, x_left - 3 * MM, ends[0][0], t1, "left")
        else:
            _terminal(c, x_left, ends[0][0], t1, "left")
        _terminal(c, x_right, ends[0][1], t2, "right")

    return _figure(ctx.frame_w, height, draw)


def _wiring(ctx: _Ctx) -> list:
    d = ctx.design
    lay = d.layout
    out = [_p(ctx, "Wiring diagram", "h1")]
    out.append(
        _p(
            ctx,
            "Each coil is drawn with its start lead S and finish lead F, in the order they are joined. "
            "Join F of one coil to S of the next, except at a coil marked REVERSED, which is joined the "
            "other way round (in at F, out at S). Terminal markings follow IEC 60034-8"
            + (
                ": phase A is U1-U2, B is V1-V2, C is W1-W2."
                if lay.phases == 3
                else ": the winding is U1-U2."
            ),
        )
    )
    for phase in lay.phase_names:
        out.append(_phase_figure(ctx, phase))
    out.append(_p(ctx, _connection_heading(d), "h2"))
    out.append(_figure(ctx.frame_w, _CONNECTION_H, functools.partial(_draw_connection, d)))
    out.extend(_p(ctx, t, "small") for t in _connection_notes(d))
    return out


def _connection_heading(d: Design) -> str:
    kind = d.spec.connection.kind
    rect = d.spec.target.kind != "ac_line"
    what = {"star": "Star connection", "delta": "Delta connection", "single_phase": "Single phase"}[kind]
    return what + (", rectifier and output" if rect else " and output")


def _connection_notes(d: Design) -> list[str]:
    kind = d.spec.connection.kind
    ta = d.spec.target
    pr = d.prediction
    notes = []
    if kind == "star":
        notes.append(
            "Star: join U2, V2 and W2 together (the star point) and insulate the joint; it connects to "
            "nothing else. U1, V1 and W1 go to the " + ("load." if ta.kind == "ac_line" else "rectifier.")
        )
    elif kind == "delta":
        notes.append(
            "Delta: join U1 to W2, V1 to U2 and W1 to V2; the three joints are the lines L1, L2, L3 to the "
            + ("load" if ta.kind == "ac_line" else "rectifier")
            + ". Close the delta only after each phase has passed its tests: a coil the wrong way "
            "round drives a current round the delta that heats the stator with nothing connected."
        )
    else:
        notes.append(
            "Single phase: U1 and U2 go to the "
            + ("load." if ta.kind == "ac_line" else "two AC inputs (~) of the bridge.")
        )
    if ta.kind != "ac_line":
        br = pr.bridge
        legs = "three-phase (six diodes)" if d.layout.phases == 3 else "single-phase (four diodes)"
        notes.append(
            f"Rectifier: a {legs} bridge rated at least {br.voltage_v:.0f} V and {br.current_a:.0f} A "
            f"(twice the {br.open_circuit_peak_v:.0f} V open-circuit peak at {ta.max_rpm:g} rpm, "
            f"{BRIDGE_CURRENT_FACTOR:g} times the {br.max_current_a:.1f} A at {br.max_current_rpm:g} rpm; "
            "common practice), on a heat sink."
        )
    if ta.kind == "battery":
        notes.append(
            "Put a fuse in the positive lead near the battery, sized for the cable. A charge controller "
            "with a dump load keeps the battery from overcharging and the machine from running away "
            "unloaded."
        )
    elif ta.kind == "dc":
        notes.append("Put a fuse in the positive lead, sized for the cable and the load.")
    else:
        notes.append("The lines go straight to the AC load, through a fused isolator.")
    return notes


def _dot(c, x: float, y: float) -> None:
    c.circle(x, y, 1.2, fill=1, stroke=0)


def _draw_bridge(c, x: float, inputs: Sequence[tuple[str, float]]) -> tuple[float, float, float]:
    """The rectifier as a block with its AC inputs (label, y) on the left, + and − on the right.

    Returns (x of the output side, y of DC+, y of DC−).
    """
    ys = [y for _, y in inputs]
    y_top, y_bot = max(ys) + 7 * MM, min(ys) - 7 * MM
    w = 24 * MM
    c.setLineWidth(1.0)
    c.rect(x, y_bot, w, y_top - y_bot)
    c.setLineWidth(0.5)
    c.line(x, y_bot, x + w, y_top)
    c.setFont(SANS_BOLD, 11)
    c.drawString(x + 2.5 * MM, y_top - 6 * MM, "~")
    c.drawRightString(x + w - 2.5 * MM, y_bot + 2.5 * MM, "=")
    c.setFont(SANS, 7)
    c.drawCentredString(x + w / 2, y_bot - 3.5 * MM, "diode bridge")
    y_p, y_n = y_top - 4 * MM, y_bot + 4 * MM
    c.setLineWidth(0.9)
    right = x + w + 4 * MM
    c.line(x + w, y_p, right, y_p)
    c.line(x + w, y_n, right, y_n)
    c.setFont(SANS_BOLD, 7.5)
    c.drawString(x + w + 1 * MM, y_p + 2.5, "DC+")
    c.drawString(x + w + 1 * MM, y_n - 8.5, "DC\u2212")
    return right, y_p, y_n


def _draw_output(c, d: Design, x: float, y_p: float, y_n: float) -> None:
    """Fuse in the positive lead, then the battery or the load."""
    ta = d.spec.target
    c.setLineWidth(0.9)
    fx = x + 8 * MM
    c.line(x, y_p, fx, y_p)
    c.rect(fx, y_p - 1.3 * MM, 8 * MM, 2.6 * MM)
    c.line(fx, y_p, fx + 8 * MM, y_p)
    c.setFont(SANS, 7)
    c.drawCentredString(fx + 4 * MM, y_p + 2.2 * MM, "fuse")
    bx = fx + 24 * MM
    c.line(fx + 8 * MM, y_p, bx, y_p)
    c.line(x, y_n, bx, y_n)
    mid = (y_p + y_n) / 2
    if ta.kind == "battery":
        c.line(bx, y_p, bx, mid + 2 * MM)
        c.line(bx, y_n, bx, mid - 2 * MM)
        c.setLineWidth(1.6)
        c.line(bx - 5 * MM, mid + 2 * MM, bx + 5 * MM, mid + 2 * MM)
        c.setLineWidth(3)
        c.line(bx - 2.5 * MM, mid - 2 * MM, bx + 2.5 * MM, mid - 2 * MM)
        c.setFont(SANS_BOLD, 9)
        c.drawString(bx + 6 * MM, mid + 1.2 * MM, "+")
        c.drawString(bx + 6 * MM, mid - 4.2 * MM, "\u2212")
        c.setFont(SANS, 8)
        c.drawString(bx + 10 * MM, mid - 1, _plain(f"battery {ta.battery_v:g} V"))
    else:
        c.line(bx, y_p, bx, mid + 5 * MM)
        c.line(bx, y_n, bx, mid - 5 * MM)
        c.rect(bx - 2 * MM, mid - 5 * MM, 4 * MM, 10 * MM)
        c.setFont(SANS, 8)
        c.drawString(bx + 4 * MM, mid - 1, _plain(f"load {ta.voltage_v:g} V DC, {ta.rated_current_a:g} A"))


def _draw_winding(c, x: float, y: float, w: float) -> None:
    """One phase winding, all its coils (drawn above) as one coil symbol in a box."""
    c.setLineWidth(0.9)
    c.rect(x, y - 3 * MM, w, 6 * MM)
    humps = 5
    hw = (w - 4 * MM) / humps
    c.line(x, y, x + 2 * MM, y)
    c.line(x + w - 2 * MM, y, x + w, y)
    for k in range(humps):
        x0 = x + 2 * MM + k * hw
        arc = c.beginPath()
        arc.arc(x0, y - hw / 2, x0 + hw, y + hw / 2, 180, -180)
        c.drawPath(arc, stroke=1, fill=0)


_CONNECTION_H = 62 * MM


def _star_or_single(c, d: Design, h: float) -> tuple[list[tuple[str, float]], float]:
    """Windings in rows, X2 on the left, X1 on the right; the AC lines (label, y) and their x."""
    phases = d.layout.phase_names
    star = d.spec.connection.kind == "star"
    top, gap = h - 12 * MM, 15 * MM
    bus, x_t2, sym_w = 6 * MM, 18 * MM, 26 * MM
    x_w = x_t2 + 8 * MM
    x_t1 = x_w + sym_w + 8 * MM
    x_in = x_t1 + 20 * MM
    lines = []
    for k, ph in enumerate(phases):
        y = top - k * gap
        t1, t2 = _terminals(ph)
        c.setLineWidth(0.9)
        c.line(x_t2, y, x_w, y)
        _draw_winding(c, x_w, y, sym_w)
        c.setFont(SANS, 7)
        c.drawCentredString(
            x_w + sym_w / 2, y + 3 * MM + 2, f"phase {TERMINAL_LETTERS[ph]}" if star else "winding"
        )
        c.line(x_w + sym_w, y, x_in, y)
        _terminal(c, x_t2, y, t2, "above")
        _terminal(c, x_t1, y, t1, "above")
        lines.append((t1, y))
    c.setLineWidth(1.2 if star else 0.9)
    if star:
        bottom = top - (len(phases) - 1) * gap
        for k in range(len(phases)):
            c.line(bus, top - k * gap, x_t2 - 2.4, top - k * gap)
            if 0 < k < len(phases) - 1:
                _dot(c, bus, top - k * gap)
        c.line(bus, top, bus, bottom)
        c.setFont(SANS_BOLD, 7)
        c.drawString(bus - 4 * MM, bottom - 5 * MM, "star point")
    else:  # U2 comes round under the winding to the bridge's second input
        y2 = top - gap
        c.line(x_t2 - 2.4, top, bus, top)
        c.line(bus, top, bus, y2)
        c.line(bus, y2, x_in, y2)
        lines.append(("U2", y2))
    return lines, x_in


def _delta(c, d: Design, h: float) -> tuple[list[tuple[str, float]], float]:
    """Windings on the sides of a triangle; its corners are the lines L1, L2, L3."""
    cx, cy, r = 36 * MM, h / 2 + 3 * MM, 22 * MM
    corners = [
        (cx + r * math.cos(math.radians(a)), cy + r * math.sin(math.radians(a))) for a in (90, -30, 210)
    ]
    sym_w = 16 * MM
    for k, ph in enumerate(d.layout.phase_names):
        (x0, y0), (x1, y1) = corners[k], corners[(k + 1) % 3]
        length = math.hypot(x1 - x0, y1 - y0)
        ux, uy = (x1 - x0) / length, (y1 - y0) / length
        c.saveState()
        c.translate(x0, y0)
        c.rotate(math.degrees(math.atan2(uy, ux)))
        c.setLineWidth(0.9)
        c.line(0, 0, (length - sym_w) / 2, 0)
        c.line((length + sym_w) / 2, 0, length, 0)
        _draw_winding(c, (length - sym_w) / 2, 0, sym_w)
        c.restoreState()
        # Labels upright, outside the triangle: along the normal pointing away from the centre.
        nx, ny = uy, -ux
        mx, my = (x0 + x1) / 2, (y0 + y1) / 2
        if (mx - cx) * nx + (my - cy) * ny < 0:
            nx, ny = -nx, -ny
        t1, t2 = _terminals(ph)
        c.setFont(SANS, 7)
        lx, ly, label = mx + 6 * MM * nx, my + 6 * MM * ny - 2, f"phase {TERMINAL_LETTERS[ph]}"
        if nx > 0.3:
            c.drawString(lx, ly, label)
        elif nx < -0.3:
            c.drawRightString(lx, ly, label)
        else:
            c.drawCentredString(lx, ly - 2 * MM * (ny < 0), label)
        c.setFont(SANS_BOLD, 7.5)
        for t, (px, py), sgn in ((t1, (x0, y0), 1), (t2, (x1, y1), -1)):
            c.drawCentredString(
                px + sgn * 5 * MM * ux + 3 * MM * nx, py + sgn * 5 * MM * uy + 3 * MM * ny - 2.5, t
            )
    x_in = cx + r + 30 * MM
    (x1, y1), (x2, y2), (x3, y3) = corners
    y_low = y3 - 10 * MM
    c.setLineWidth(0.9)
    c.line(x1, y1, x_in, y1)
    c.line(x2, y2, x_in, y2)
    c.line(x3, y3, x3, y_low)
    c.line(x3, y_low, x_in, y_low)
    lines = []
    c.setFont(SANS_BOLD, 7.5)
    for (px, py), label, y in zip(corners, ("L1", "L2", "L3"), (y1, y2, y_low), strict=True):
        _dot(c, px, py)
        c.drawRightString(x_in - 1.5 * MM, y + 2.5, label)
        lines.append((label, y))
    return lines, x_in


def _draw_connection(d: Design, c, w: float, h: float) -> None:
    """The phase windings as one symbol each, joined star, delta or single, then the output."""
    c.setStrokeGray(0)
    c.setFillGray(0)
    if d.spec.connection.kind == "delta":
        lines, x_in = _delta(c, d, h)
    else:
        lines, x_in = _star_or_single(c, d, h)
    if d.spec.target.kind == "ac_line":
        c.setFont(SANS, 8)
        for label, y in lines:
            c.drawString(x_in + 2 * MM, y - 3, _plain(f"{label} to the AC load"))
        return
    right, y_p, y_n = _draw_bridge(c, x_in, lines)
    _draw_output(c, d, right, y_p, y_n)


# --------------------------------------------------------------------------- 5 curves


@dataclass(frozen=True)
class _Series:
    label: str
    xs: Sequence[float]
    ys: Sequence[float]
    dash: tuple[float, ...] = ()
    marker: str = ""  # "o" open circle, "s" filled square, "^" open triangle, "" none
    every: int = 1  # a marker on every n-th point


@dataclass(frozen=True)
class _Mark:
    value: float
    label: str
    dash: tuple[float, ...]


def _nice_ticks(lo: float, hi: float, n: int = 5) -> list[float]:
    """Round tick values covering [lo, hi], about n of them."""
    if hi <= lo:
        hi = lo + 1.0
    raw = (hi - lo) / n
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw * 0.999)
    first = math.floor(lo / step + 1e-9) * step
    ticks = []
    t = first
    while t <= hi + step * 1e-6:
        ticks.append(round(t, 10))
        t += step
    if ticks[-1] < hi - 1e-9:
        ticks.append(round(t, 10))
    return ticks


def _tick_label(v: float, ticks: Sequence[float]) -> str:
    step = ticks[1] - ticks[0] if len(ticks) > 1 else 1.0
    digits = max(0, -math.floor(math.log10(step) + 1e-9)) if step < 1 else 0
    return f"{v:.{digits}f}".replace("-", "\u2212") if v < 0 else f"{v:.{digits}f}"


def _dash(c, pattern: Sequence[float]) -> None:
    c.setDash(list(pattern), 0) if pattern else c.setDash()


def _marker(c, kind: str, x: float, y: float) -> None:
    k = 1.9
    if kind == "o":
        c.setFillGray(1)
        c.circle(x, y, k, fill=1, stroke=1)
    elif kind == "s":
        c.setFillGray(0)
        c.rect(x - k, y - k, 2 * k, 2 * k, fill=1, stroke=0)
    elif kind == "^":
        c.setFillGray(1)
        p = c.beginPath()
        p.moveTo(x, y + 1.3 * k)
        p.lineTo(x - 1.2 * k, y - k)
        p.lineTo(x + 1.2 * k, y - k)
        p.close()
        c.drawPath(p, fill=1, stroke=1)
    c.setFillGray(0)


def _draw_chart(
    c,
    w: float,
    h: float,
    title: str,
    xlabel: str,
    ylabel: str,
    series: Sequence[_Series],
    xlim: tuple[float, float] | None = None,
    vmarks: Sequence[_Mark] = (),
    hmarks: Sequence[_Mark] = (),
    y_from_zero: bool = True,
    xticks: Sequence[float] | None = None,
    ylim: tuple[float, float] | None = None,
    legend_rows: int = 1,
) -> None:
    """A line chart for black-and-white print: series told apart by dash and marker.

    The legend sits under the axis, `legend_rows` rows reserved for it (charts side by side
    reserve the same so their plots line up).
    """
    legend = _legend_layout(series, w)
    rows = max(legend_rows, max((r for r, _ in legend), default=-1) + 1)
    left, bottom, top, right = 13 * MM, 9 * MM + rows * _LEGEND_ROW, 7 * MM, 3 * MM
    pw, ph = w - left - right, h - bottom - top
    xs = [x for s in series for x in s.xs]
    ys = [y for s in series for y in s.ys] + [m.value for m in hmarks]
    x0, x1 = xlim if xlim else (min(xs), max(xs))
    y0, y1 = ylim if ylim else ((min(0.0, min(ys)) if y_from_zero else min(ys)), max(ys))
    xt, yt = list(xticks) if xticks else _nice_ticks(x0, x1, 6), _nice_ticks(y0, y1, 5)
    x0, x1 = (x0, x1) if xlim else (xt[0], xt[-1])
    y0, y1 = yt[0], yt[-1]

    def px(v):
        return left + (v - x0) / (x1 - x0) * pw

    def py(v):
        return bottom + (v - y0) / (y1 - y0) * ph

    c.setFont(SANS_BOLD, 8.5)
    c.drawString(0, h - 8, _plain(title))
    c.setLineWidth(0.25)
    c.setStrokeGray(0.7)
    for t in xt:
        if x0 - 1e-9 <= t <= x1 + 1e-9:
            c.line(px(t), bottom, px(t), bottom + ph)
    for t in yt:
        c.line(left, py(t), left + pw, py(t))
    c.setStrokeGray(0)
    c.setLineWidth(0.7)
    c.rect(left, bottom, pw, ph)
    c.setFont(SANS, 7)
    for t in xt:
        if x0 - 1e-9 <= t <= x1 + 1e-9:
            c.drawCentredString(px(t), bottom - 8, _tick_label(t, xt))
    for t in yt:
        c.drawRightString(left - 2, py(t) - 2.5, _tick_label(t, yt))
    c.drawCentredString(left + pw / 2, bottom - 16, _plain(xlabel))
    c.saveState()
    c.translate(7, bottom + ph / 2)
    c.rotate(90)
    c.drawCentredString(0, 0, _plain(ylabel))
    c.restoreState()
    for m in hmarks:
        c.setLineWidth(0.8)
        _dash(c, m.dash)
        c.line(left, py(m.value), left + pw, py(m.value))
        c.setDash()
        c.setFont(SANS, 6.5)
        c.drawRightString(left + pw - 2, py(m.value) + 2, _plain(m.label))
    for m in vmarks:
        if not x0 <= m.value <= x1:
            continue
        c.setLineWidth(0.8)
        _dash(c, m.dash)
        c.line(px(m.value), bottom, px(m.value), bottom + ph)
        c.setDash()
        c.setFont(SANS, 6.5)
        c.saveState()
        c.translate(px(m.value) - 1.5, bottom + ph - 2)
        c.rotate(90)
        c.drawRightString(0, 0, _plain(m.label))
        c.restoreState()
    c.saveState()
    p = c.beginPath()
    p.rect(left, bottom, pw, ph)
    c.clipPath(p, stroke=0, fill=0)
    for s in series:
        if len(s.xs) < 2:
            continue
        c.setLineWidth(1.1)
        _dash(c, s.dash)
        line = c.beginPath()
        line.moveTo(px(s.xs[0]), py(s.ys[0]))
        for x, y in zip(s.xs[1:], s.ys[1:], strict=True):
            line.lineTo(px(x), py(y))
        c.drawPath(line, stroke=1, fill=0)
        c.setDash()
        c.setLineWidth(0.7)
        for i in range(0, len(s.xs), s.every):
            _marker(c, s.marker, px(s.xs[i]), py(s.ys[i]))
    c.restoreState()
    # Legend under the axis label, entries left to right.
    c.setFont(SANS, 6.8)
    for (row, x), ser in zip(legend, series, strict=True):
        yy = bottom - 9 * MM - (row + 1) * _LEGEND_ROW + 2.5
        c.setLineWidth(1.1)
        _dash(c, ser.dash)
        c.line(left + x, yy + 2.3, left + x + 9 * MM, yy + 2.3)
        c.setDash()
        c.setLineWidth(0.7)
        _marker(c, ser.marker, left + x + 4.5 * MM, yy + 2.3)
        c.drawString(left + x + 10.5 * MM, yy, _plain(ser.label))


_LEGEND_ROW = 3.8 * MM


def _legend_layout(series: Sequence[_Series], width: float) -> list[tuple[int, float]]:
    """(row, x offset) of each series' legend entry, wrapping at the chart's width."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    out, row, x = [], 0, 0.0
    avail = width - 16 * MM
    for ser in series:
        size = 10.5 * MM + stringWidth(_plain(ser.label), SANS, 6.8) + 5 * MM
        if x > 0 and x + size > avail:
            row, x = row + 1, 0.0
        out.append((row, x))
        x += size
    return out


_SOLID, _DASHED, _DOTTED, _DASH_DOT = (), (5, 2.5), (1, 2), (6, 2, 1, 2)
_CHART_H = 62 * MM


def _chart(width: float, **kwargs):
    return _figure(width, _CHART_H, lambda c, w, h: _draw_chart(c, w, h, **kwargs))


def _curves(ctx: _Ctx) -> list:
    d = ctx.design
    pr, ta, lay = d.prediction, d.spec.target, d.layout
    ac = ta.kind == "ac_line"
    pts = pr.curve
    rpm = [op.rpm for op in pts]
    speed = {
        "xlabel": "rpm",
        "xlim": (min(rpm), max(rpm)),
        "vmarks": [
            _Mark(pr.cut_in_rpm, f"cut-in {pr.cut_in_rpm:.0f} rpm", _DASH_DOT),
            _Mark(ta.rated_rpm, f"rated {ta.rated_rpm:g} rpm", _DASHED),
        ],
    }
    line = "line" if lay.phases == 3 else "terminal"
    oc = [_Series(f"open circuit, {line} rms", rpm, [op.open_circuit_line_rms_v for op in pts], _SOLID, "o")]
    if not ac:
        peak = [float(abs(pr.line_emf_v(r)).max()) for r in rpm]
        oc.append(_Series("rectified open circuit (peak)", rpm, peak, _DASHED, "s"))
    if ta.kind == "battery":
        level = _Mark(ta.battery_v, f"battery {ta.battery_v:g} V", _DOTTED)
    else:
        level = _Mark(ta.voltage_v, f"target {ta.voltage_v:g} V", _DOTTED)
    # Below cut-in the model leaves a trace of current; efficiency means nothing there.
    top_power = max(op.dc_power_w for op in pts)
    loaded = [op for op in pts if op.dc_power_w > 1e-3 * top_power]
    half = ctx.frame_w / 2 - 2 * MM
    speed["legend_rows"] = 2
    into = "into the load" if ta.kind != "battery" else "into the battery"
    current = _Series(
        f"{'line' if ac else 'DC'} current {into}", rpm, [op.dc_current_a for op in pts], _SOLID, "o"
    )
    power = _Series(
        f"{'output' if ac else 'DC'} power {into}", rpm, [op.dc_power_w for op in pts], _SOLID, "s"
    )
    figs = [
        _chart(half, title="Open-circuit voltage", ylabel="V", series=oc, hmarks=[level], **speed),
        _chart(half, title="Line current" if ac else "DC current", ylabel="A", series=[current], **speed),
        _chart(half, title="Output power" if ac else "DC power", ylabel="W", series=[power], **speed),
    ]
    if len(loaded) >= 2:
        eff = _Series(
            "output / (output + copper and rectifier losses)",
            [op.rpm for op in loaded],
            [100 * op.efficiency for op in loaded],
            _SOLID,
            "^",
        )
        figs.append(_chart(half, title="Efficiency", ylabel="%", series=[eff], ylim=(0.0, 100.0), **speed))
    out = [_p(ctx, "Curves", "h1")]
    below = (
        f" Below cut-in ({pr.cut_in_rpm:.0f} rpm) the rectified voltage is under the battery's plus two "
        "diode drops and no current flows."
        if ta.kind == "battery"
        else ""
    )
    out.append(
        _p(
            ctx,
            "Predicted against rotor speed, with the coils at the temperature they would reach there "
            "(a rough estimate). Markers are the computed points; lines join them." + below,
            "small",
        )
    )
    out.append(_grid(ctx, figs, 2))
    # One electrical period of the open-circuit EMF at rated speed.
    waves = pr.phase_emf_v(ta.rated_rpm)
    m = waves.shape[1]
    deg = [360.0 * k / m for k in range(m + 1)]
    styles = ((_SOLID, "o"), (_DASHED, "s"), (_DOTTED, "^"))
    series = []
    for k, ph in enumerate(lay.phase_names):
        t1, t2 = _terminals(ph)
        name = (
            f"phase {TERMINAL_LETTERS[ph]} ({t1} to {t2})" if lay.phases == 3 else f"winding ({t1} to {t2})"
        )
        ys = [float(v) for v in waves[k]] + [float(waves[k][0])]
        series.append(_Series(name, deg, ys, styles[k][0], styles[k][1], every=max(1, m // 12)))
    period_ms = 1000.0 / pr.electrical_hz_at_rated
    peak = float(abs(waves).max())
    out.append(
        _chart(
            ctx.frame_w,
            title=f"Open-circuit EMF over one period at {ta.rated_rpm:g} rpm "
            f"({pr.electrical_hz_at_rated:.1f} Hz, {period_ms:.1f} ms): peak {peak:.1f} V, "
            f"{pr.open_circuit_phase_rms_v:.1f} V rms per phase",
            xlabel="electrical degrees (360° while a pair of magnets passes a coil)",
            ylabel="V",
            series=series,
            xlim=(0.0, 360.0),
            xticks=list(range(0, 361, 60)),
            y_from_zero=False,
        )
    )
    return out


def _grid(ctx: _Ctx, flowables: list, columns: int):
    from reportlab.platypus import Table, TableStyle

    rows = [flowables[i : i + columns] for i in range(0, len(flowables), columns)]
    if rows and len(rows[-1]) < columns:
        rows[-1] = rows[-1] + [""] * (columns - len(rows[-1]))
    t = Table(rows, colWidths=[ctx.frame_w / columns] * columns, hAlign="LEFT")
    t.setStyle(
        TableStyle(
            [
                ("FONT", (0, 0), (-1, -1), SANS, 8),
                ("LEFTPADDING", (0, 0), (-1, -1), 0),
                ("RIGHTPADDING", (0, 0), (-1, -1), 0),
                ("TOPPADDING", (0, 0), (-1, -1), 2),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 4),
            ]
        )
    )
    return t


# --------------------------------------------------------------------------- 6 balance and materials


def _materials_rows(design: Design) -> list[tuple[str, str, str]]:
    spec, pr, f = design.spec, design.prediction, design.forces
    lay, ro, st = design.layout, spec.rotor, spec.stator
    phases = lay.phases
    length = design.bill.wire_length_per_phase_m
    mass = design.bill.wire_mass_per_phase_kg
    strands = f"; {pr.wire.strands} strands in hand, every strand counted" if pr.wire.strands > 1 else ""
    discs = disc_count(spec)
    n_mag = lay.magnets * discs
    rows = [
        (
            f"magnet wire, {pr.wire.name} enamelled copper",
            f"{length:.0f} m and {mass:.2f} kg per phase; "
            f"{length * phases:.0f} m, {mass * phases:.2f} kg in all",
            f"with {WIRE_MARGIN_PCT} % for leads and waste{strands}",
        ),
        (
            "magnets",
            f"{n_mag} ({lay.magnets} per disc)" if discs > 1 else f"{n_mag}",
            f"{_magnet_words(design)}; {f.magnet_mass_g:.0f} g each, "
            f"{n_mag * f.magnet_mass_g / 1000:.2f} kg in all; a spare covers a chipped one",
        ),
    ]
    vol, grams = design.bill.binder_volume_cm3, design.bill.binder_mass_g
    binder = {"epoxy": "casting epoxy", "polyester": "casting polyester"}.get(
        st.binder, f"{st.binder} (printed)"
    )
    rows.append(
        (
            f"stator binder: {binder}",
            f"about {vol:.0f} cm³" + (f" ({grams / 1000:.2f} kg)" if grams else ""),
            f"ring {st.thickness_mm:g} mm thick with {st.resin_rim_mm:g} mm rims, less the copper, "
            f"with {RESIN_MARGIN_PCT} % for lugs and waste",
        )
    )
    mat = DISC_MATERIALS[ro.disc_material]
    rows.append(
        (
            f"rotor disc{'s' if discs > 1 else ''}, {mat.name}",
            f"{discs} x {2 * f.disc_outer_radius_mm:.0f} mm dia. x {ro.disc_thickness_mm:g} mm",
            f"{f.disc_mass_kg:.2f} kg each before the magnets; bore {ro.bore_diameter_mm:g} mm",
        )
    )
    if ro.topology == "one_disc_steel_stator":
        rows.append(
            ("stator back plate, steel", f"{ro.stator_plate_thickness_mm:g} mm thick", "behind the coils")
        )
    rows.append(
        (
            "hub bolts",
            f"{ro.hub_bolts} per disc" if discs > 1 else f"{ro.hub_bolts}",
            f"through {ro.hub_hole_diameter_mm:g} mm holes, length to suit the hub",
        )
    )
    rows.append(
        (
            "dowel pins",
            "2",
            f"{ro.dowel_diameter_mm:g} mm dia.; they clock "
            + ("the two discs" if discs > 1 else "the disc to the hub"),
        )
    )
    if f.jacking_screws:
        rows.append(
            (
                "jacking screws",
                f"{ro.jacking_screws} x {ro.jacking_screw}, fully threaded",
                f"to lower the {'discs together' if discs > 1 else 'disc onto the stator'} "
                f"against {f.axial_force_n:.0f} N of pull; with nuts",
            )
        )
    rows.append(
        (
            "stator mounting",
            f"{st.mounting_lugs} studs with nuts",
            f"through the lugs' {st.mounting_hole_diameter_mm:g} mm holes; they set the running clearance",
        )
    )
    rows.append(
        (
            "balance weights",
            f"{BALANCE_SCREW} screws and washers",
            "as the balance correction asks; threadlocked",
        )
    )
    if spec.target.kind != "ac_line":
        br = pr.bridge
        rows.append(
            (
                "diode bridge",
                "1",
                f"at least {br.voltage_v:.0f} V, {br.current_a:.0f} A; on a heat sink",
            )
        )
    return rows


def _balance_and_materials(ctx: _Ctx, balance) -> list:
    d = ctx.design
    out = [_p(ctx, "Balance report and materials", "h1"), _p(ctx, "Balance", "h2")]
    if balance is None:
        out.append(
            _p(
                ctx,
                "No balance plan came with this sheet, so the magnet map says 'any' in every pocket. "
                "Weigh every magnet (to 0.1 g), run statorsmith balance on the design with the list of "
                "masses, and write the sheet again with its plan: each pocket then names its magnet, and "
                "this page gives the unbalance against ISO 21940-11 and any correction.",
            )
        )
    else:
        out.extend(_balance_report(ctx, balance))
    out.append(_p(ctx, "Materials", "h2"))
    head = [_p(ctx, h, "cell") for h in ("item", "quantity", "note")]
    body = [[_p(ctx, a, "cell"), _p(ctx, b, "cell"), _p(ctx, c, "cell")] for a, b, c in _materials_rows(d)]
    w0, w1 = 48 * MM, 56 * MM
    out.append(_table(ctx, [head, *body], [w0, w1, ctx.frame_w - w0 - w1]))
    return out


def _balance_report(ctx: _Ctx, b) -> list:
    d = ctx.design
    rows = [
        ("balance grade (ISO 21940-11)", f"{b.grade} ({b.grade_mm_s:g} mm/s) at {b.max_rpm:g} rpm"),
        ("rotor mass", f"{b.rotor_mass_kg:.2f} kg"),
        ("permissible residual unbalance", f"{b.permissible_gmm:.0f} g·mm for the whole rotor"),
        (
            "magnets",
            "weighed: placed by mass as the map shows" if b.weighed else "not weighed: nominal masses",
        ),
    ]
    if disc_count(d.spec) > 1:
        rows.append(("static unbalance, both discs", f"{b.static_unbalance_gmm:.0f} g·mm"))
        rows.append(("couple unbalance", f"{b.couple_unbalance_gmm_mm:.0f} g·mm²"))
    if not b.weighed:
        rows.append(
            (
                "magnets as they come",
                f"about {b.expected_unweighed_p95_gmm:.0f} g·mm per disc (95th percentile)",
            )
        )
    out = [_key_value_table(ctx, rows, 60 * MM)]
    head = ["disc", "mass kg", "before g·mm", "after g·mm", "allowed g·mm", "result", "correction"]
    body = []
    for db in b.discs:
        ok = db.unbalance_after_gmm <= db.permissible_gmm
        corr = db.correction
        if corr.needed:
            a, c2 = _between_pockets(d, db.disc, corr.angle_deg)
            what = (
                f"add {corr.add_g:.1f} g at {corr.radius_mm:.0f} mm between {_pocket_word(d)}s {a} and {c2}"
            )
        else:
            what = "none needed"
        body.append(
            [
                _p(ctx, _disc_name(d, db.disc), "cell"),
                f"{db.mass_kg:.2f}",
                f"{db.unbalance_before_gmm:.0f}",
                f"{db.unbalance_after_gmm:.0f}",
                f"{db.permissible_gmm:.0f}",
                "within" if ok else "OVER",
                _p(ctx, what, "cell"),
            ]
        )
    widths = [26 * MM, 15 * MM, 18 * MM, 18 * MM, 20 * MM, 14 * MM]
    widths.append(ctx.frame_w - sum(widths))
    out.append(_table(ctx, [[_p(ctx, h, "cell") for h in head], *body], widths))
    if b.weighing_advice:
        out.append(_p(ctx, b.weighing_advice, "small"))
    if b.procedure:
        out.append(_p(ctx, "Procedure", "h2"))
        out.extend(_p(ctx, f"{k}. {step}", "caution") for k, step in enumerate(b.procedure, start=1))
    for caution in b.cautions:
        out.append(_p(ctx, caution, "caution"))
    return out


# --------------------------------------------------------------------------- 7 test plan


def _bench_speeds(design: Design) -> list[float]:
    """Speeds to check the open-circuit voltage at: a slow one, cut-in and rated."""
    ta, pr = design.spec.target, design.prediction
    speeds = {round(pr.cut_in_rpm), ta.rated_rpm}
    if ta.rated_rpm > 100:
        speeds.add(100.0)
    return sorted(speeds)


def _test_plan(ctx: _Ctx) -> list:
    d = ctx.design
    pr, lay, ta, spec = d.prediction, d.layout, d.spec.target, d.spec
    ohm = _ohm()
    out = [_p(ctx, "Test plan", "h1")]
    out.append(
        _p(
            ctx,
            "Measure at room temperature, the rotor still unless the step says otherwise. Expected values "
            f"are predictions: resistances ±{RESISTANCE_BAND_PCT} %, open-circuit voltages "
            f"±{OPEN_CIRCUIT_BAND_PCT} %. "
            "Outside the band, stop and find out why before going on.",
        )
    )
    head = ["step", "check", "expected", "measured", "ok"]
    rows = [[_p(ctx, h, "cell") for h in head]]

    def add(step: str, check: str, expected: str, measured: str = ""):
        step = f"{len(rows)}. {step}"
        rows.append(
            [_p(ctx, step, "cell"), _p(ctx, check, "cell"), _p(ctx, expected, "cell"), measured, _tick_box()]
        )

    r_lo, r_hi = _band(pr.phase_resistance_ohm, RESISTANCE_BAND_PCT)
    for ph in lay.phase_names:
        t1, t2 = _terminals(ph)
        add(
            "phase resistance",
            f"{t1} to {t2}, before the "
            + (
                "star point is made"
                if spec.connection.kind == "star"
                else "delta is closed"
                if lay.phases == 3
                else "bridge is connected"
            ),
            f"{_fmt_ohm(pr.phase_resistance_ohm)} ({r_lo:.3f} to {r_hi:.3f} {ohm}) at 20 °C",
            f"______ {ohm}",
        )
    if lay.phases == 3:
        add("phases match", "the three phase resistances", f"within {PHASE_MATCH_PCT} % of each other")
    test_v = insulation_test_v(pr)
    add(
        "insulation",
        "windings (all terminals joined) to the frame, discs and mounting studs"
        + ("; and phase to phase before they are joined" if lay.phases == 3 else ""),
        f"at least {INSULATION_MIN_MOHM:g} M{ohm} with an insulation tester at {test_v} V DC",
        f"______ M{ohm}",
    )
    ll = line_resistance_ohm(pr.phase_resistance_ohm, spec.connection.kind)
    words = {
        "star": "U1-V1, V1-W1, W1-U1 (two phases in series)",
        "delta": "L1-L2, L2-L3, L3-L1 (one phase across the other two)",
    }.get(spec.connection.kind, "")
    if spec.connection.kind == "delta":
        pairs = ("L1-L2", "L2-L3", "L3-L1")
    elif lay.phases == 3:
        pairs = ("U1-V1", "V1-W1", "W1-U1")
    else:
        pairs = ("U1-U2",)

    def blanks(unit: str) -> str:
        """One line to write on for each pair of terminals."""
        return "\n".join(f"{pair} ______ {unit}" for pair in pairs)

    if ll is not None:
        lo, hi = _band(ll, RESISTANCE_BAND_PCT)
        add(
            "joined",
            f"line to line, {words}",
            f"{_fmt_ohm(ll)} ({lo:.3f} to {hi:.3f} {ohm}) each",
            blanks(ohm),
        )
    joined = {"star": "star point made, ", "delta": "delta closed, "}.get(spec.connection.kind, "")
    per_rpm = pr.open_circuit_line_rms_v / ta.rated_rpm
    for rpm in _bench_speeds(d):
        v = per_rpm * rpm
        lo, hi = _band(v, OPEN_CIRCUIT_BAND_PCT)
        hz = electrical_hz(lay.pole_pairs, rpm)
        add(
            f"open circuit at {rpm:g} rpm",
            f"AC volts across the terminals, {joined}nothing else connected; the speed reads as "
            f"{hz:.1f} Hz on the meter's frequency range",
            f"{v:.1f} V rms ({lo:.1f} to {hi:.1f} V)",
            blanks("V"),
        )
    if lay.phases == 3:
        add(
            "voltages match",
            "the three line voltages at one speed",
            f"within {PHASE_MATCH_PCT} %; one low pair points to a coil connected the wrong way round",
        )
    if ta.kind == "battery":
        add(
            "cut-in",
            "battery connected through the bridge and fuse; raise the speed slowly",
            f"charging current starts near {pr.cut_in_rpm:.0f} rpm",
            "______ rpm",
        )
    else:
        rated = pr.rated
        add(
            "rated load",
            f"the rated load connected, at {ta.rated_rpm:g} rpm",
            f"{rated.dc_voltage_v:.1f} V, {rated.dc_current_a:.2f} A",
            "______ V",
        )
    binder_max = STATOR_BINDERS_MAX_C[spec.stator.binder]
    add(
        "heat",
        "stator surface after 30 minutes at rated speed and load",
        f"about {pr.rated.coil_temperature_c:.0f} °C (rough estimate); stop above {binder_max:g} °C "
        f"({spec.stator.binder})",
        "______ °C",
    )
    add(
        "rotor",
        "first spins by hand, then slowly under power: rub, wobble, noise",
        f"the running clearance ({spec.rotor.running_clearance_mm:g} mm) all the way round; no rubbing",
    )
    widths = [29 * MM, 52 * MM, 51 * MM, 38 * MM]
    widths.append(ctx.frame_w - sum(widths))
    out.append(_table(ctx, rows, widths))
    out.append(
        _p(
            ctx,
            f"Open-circuit voltage rises in proportion to speed: {1000 * per_rpm:.1f} V per 1000 rpm here, "
            f"{pr.open_circuit_line_rms_at_max_v:.0f} V at {ta.max_rpm:g} rpm.",
            "small",
        )
    )
    out.append(_pm(ctx, f"<b>{escape(DEFER)}</b>", "body"))
    return out
