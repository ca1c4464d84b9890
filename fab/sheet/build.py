"""Every page in order, as one PDF."""

from __future__ import annotations

from fab.sheet.balance_materials import _balance_and_materials
from fab.sheet.bench_tests import _test_plan
from fab.sheet.checklist import _checklist
from fab.sheet.curves import _curves
from fab.sheet.document import (
    FOOTER,
    HEADER,
    MARGIN,
    PAPERS,
    SANS,
    _Ctx,
    _numbered_canvas,
    _register_fonts,
    _styles,
)
from fab.sheet.magnet_maps import _magnet_map
from fab.sheet.operating import _source_page
from fab.sheet.stator_build import _stator_build
from fab.sheet.stator_map import _stator_map_page
from fab.sheet.summary import _summary
from fab.sheet.wiring import _wiring
from layout.rotor import disc_count


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
        _stator_map_page(ctx) + _stator_build(ctx),
        _curves(ctx),
        *([_source_page(ctx)] if design.operating is not None else []),
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
