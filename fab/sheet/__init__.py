"""The build sheet: one PDF for the person at the bench, printed in black and white.

Sections: summary and cautions; a magnet map of each disc, to scale; the winding checklist,
a row per coil; the wiring, drawn coil by coil to the rectifier and the output; the curves;
balance and materials; the test plan. Every figure is read from the Design (and the
RotorBalance when one is given): nothing here decides what `layout/` has not decided.

reportlab is imported only inside the functions that draw. Text is set in Bitstream Vera,
which ships with reportlab, embedded as a subset so the sheet prints the same anywhere.
"""

# Every page's helpers, public or private, and the standard and layout names they use are
# imported here, so that any of them can be reached as fab.sheet.NAME.
# ruff: noqa: F401

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

from fab import ordinary_permissions
from fab.sheet.balance_materials import _balance_and_materials, _balance_report, _materials_rows
from fab.sheet.bench_tests import PER_RPM, _bench_speeds, _test_plan, bench_voltages
from fab.sheet.build import _build
from fab.sheet.charts import (
    _CHART_H,
    _DASH_DOT,
    _DASHED,
    _DOTTED,
    _LEGEND_ROW,
    _SOLID,
    _chart,
    _dash,
    _draw_chart,
    _legend_layout,
    _Mark,
    _marker,
    _nice_ticks,
    _Series,
    _tick_label,
)
from fab.sheet.checklist import _checklist, _phase_label
from fab.sheet.curves import _curves, _grid
from fab.sheet.document import (
    _FONT_FILES,
    _GLYPH_FALLBACK,
    FOOTER,
    HEADER,
    MARGIN,
    MM,
    PAPERS,
    SANS,
    SANS_BOLD,
    Files,
    _Ctx,
    _figure,
    _figure_class,
    _fmt_ohm,
    _glyphs,
    _key_value_table,
    _numbered_canvas,
    _ohm,
    _p,
    _plain,
    _pm,
    _register_fonts,
    _styles,
    _table,
    _tick_box,
)
from fab.sheet.magnet_maps import (
    _MAP_ROOM,
    GREY_N,
    ISO_5455_SCALES,
    _assigned_ids,
    _between_pockets,
    _clocking_words,
    _correction,
    _correction_words,
    _draw_disc,
    _draw_scale_bar,
    _magnet_map,
    _map_scale,
    _plain_disc_words,
    _pocket_table,
    _scale_bar_mm,
)
from fab.sheet.operating import _drawn_conditions, _source_page
from fab.sheet.render import RenderUnavailable, render_pages_png
from fab.sheet.schematic import (
    _delta,
    _dot,
    _draw_bridge,
    _draw_coil,
    _draw_connection,
    _draw_output,
    _draw_winding,
    _star_or_single,
    _terminal,
)
from fab.sheet.summary import (
    _CAUTIONS,
    _caution_group,
    _connection_words,
    _cut_in_words,
    _line_word,
    _summary,
    _target_words,
    _topology_words,
    summary_voltages,
)
from fab.sheet.wiring import (
    _CONNECTION_H,
    _ROW_H,
    _SLOT_MAX,
    _SLOT_MIN,
    _chains,
    _connection_heading,
    _connection_notes,
    _phase_figure,
    _wiring,
)
from fab.sheet.words import (
    DEFER,
    OPEN_CIRCUIT_BAND_PCT,
    PHASE_MATCH_PCT,
    RESISTANCE_BAND_PCT,
    _band,
    _disc_name,
    _magnet_words,
    _pocket_word,
    _terminals,
    _wire_words,
    cut_in_rpm_stated,
    open_circuit_rms_v,
)
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


# Here rather than in a submodule so that `_build` is looked up on the package: replacing
# fab.sheet._build takes effect.
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
        ordinary_permissions(tmp)  # mkstemp's 0600 would make the sheet the one unreadable file
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path
