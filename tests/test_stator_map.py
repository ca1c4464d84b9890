"""The stator map (fab.outlines.stator_map, stator_map.dxf, its sheet page): read back from the
DXF as a builder's CAD program would, it joins the same leads as the wiring page draws."""

from __future__ import annotations

import functools
import math
import re

import ezdxf
import numpy as np
import pytest
from demos import design

from fab import sheet
from fab.drawings import write_dxf, write_stator_map
from fab.outlines import map_nets, mould_flats, stator_layout, stator_map
from fab.sheet import wiring
from fab.sheet.stator_map import map_notes
from layout.winding import TERMINAL_LETTERS, terminal_pair

DEMOS = ["millrace", "hilltop", "pedalbox", "fieldkit"]
# Our own variant: three positions left empty, three paths in parallel, star.
EMPTY_PARALLEL = (
    "millrace",
    ("stator.coil_positions", 12),
    ("magnets.count", 16),
    ("stator.empty_positions", (4, 8, 12)),
    ("connection.parallel_paths", 3),
)
CASES = [(n,) for n in DEMOS] + [EMPTY_PARALLEL]
IDS = [*DEMOS, "empty-parallel"]


@functools.cache
def _design(case):
    return design(*case)


def _dxf_nets(path) -> set[frozenset[str]]:
    """The nets drawn in the map's DXF: each join polyline's ends are lead or terminal points,
    each point named by the text written nearest it (and clearly nearer it than any other)."""
    doc = ezdxf.readfile(path)
    msp = doc.modelspace()
    points = [np.array([e.dxf.location.x, e.dxf.location.y]) for e in msp.query("POINT")]
    texts = [
        (e.dxf.text, np.array([e.dxf.align_point.x, e.dxf.align_point.y]))
        for e in msp.query("TEXT")
        if e.dxf.layer in ("LEADS", "TERMINALS")
    ]
    names = []
    for p in points:
        d = sorted((float(np.hypot(*(xy - p))), t) for t, xy in texts)
        assert d[0][0] < 0.6 * d[1][0], f"the name nearest {p} is ambiguous: {d[:2]}"
        names.append(d[0][1])
    assert len(set(names)) == len(names), "a name is written twice"

    def name_at(xy):
        k = int(np.argmin([np.hypot(*(q - xy)) for q in points]))
        assert np.hypot(*(points[k] - xy)) < 1e-6, f"a join ends at {xy}, on no lead"
        return names[k]

    pairs = []
    for e in msp.query("LWPOLYLINE"):
        if e.dxf.layer.startswith("JOIN") or e.dxf.layer == "JOINTS":
            xy = np.array([v[:2] for v in e.get_points()])
            pairs.append((name_at(xy[0]), name_at(xy[-1])))
    return map_nets(pairs)


class _Canvas:
    """Takes every drawing call and does nothing."""

    def __getattr__(self, name):
        return lambda *a, **k: _Path() if name == "beginPath" else None


class _Path:
    def __getattr__(self, name):
        return lambda *a, **k: None


def _wiring_nets(d, monkeypatch) -> set[frozenset[str]]:
    """The nets the wiring page draws: each phase's coils in the order its figure draws them
    (from the terminal on the left to the one on the right, each coil as drawn, reversed or
    not), and the connection's joints as its notes word them."""
    drawn: list = []
    monkeypatch.setattr(wiring, "_draw_coil", lambda c, x, y, w, coil, rev: drawn.append(("coil", coil, rev)))
    monkeypatch.setattr(
        wiring, "_terminal", lambda c, x, y, label, where: drawn.append(("term", label, where))
    )
    ctx = sheet._Ctx(d, 180 * sheet.MM, 250 * sheet.MM, sheet._styles())
    pairs = []
    for phase in d.layout.phase_names:
        drawn.clear()
        fig = wiring._phase_figure(ctx, phase)
        fig._draw(_Canvas(), fig.width, fig.height)
        coils = [(c, rev) for kind, c, rev in drawn if kind == "coil"]
        left = next(label for kind, label, where in drawn if kind == "term" and where == "left")
        right = next(label for kind, label, where in drawn if kind == "term" and where == "right")
        per_path = len(coils) // d.layout.parallel_paths  # the paths are drawn one under another
        for a in range(d.layout.parallel_paths):
            chain = coils[a * per_path : (a + 1) * per_path]
            ends = [
                (f"{c.index}F", f"{c.index}S") if rev else (f"{c.index}S", f"{c.index}F") for c, rev in chain
            ]
            pairs.append((left, ends[0][0]))
            pairs += [(x[1], y[0]) for x, y in zip(ends, ends[1:], strict=False)]
            pairs.append((ends[-1][1], right))
    notes = " ".join(wiring._connection_notes(d))
    star = re.search(r"join (\w\d), (\w\d) and (\w\d) together", notes)
    if star:
        pairs += [(star[1], star[2]), (star[2], star[3])]
    for m in re.finditer(r"(\w\d) to (\w\d)", notes.split("Delta:")[1] if "Delta:" in notes else ""):
        pairs.append((m[1], m[2]))
    return map_nets(pairs)


@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_the_maps_graph_is_the_wirings(case, tmp_path, monkeypatch):
    d = _design(case)
    path = tmp_path / "stator_map.dxf"
    write_stator_map(stator_map(d), path, map_notes(d))
    from_map = _dxf_nets(path)
    assert from_map == _wiring_nets(d, monkeypatch)
    # and every coil lead and every terminal is on the map exactly once
    leads = {f"{c.index}{e}" for c in d.layout.coils for e in "SF"}
    terminals = {t for ph in d.layout.phase_names for t in terminal_pair(ph)}
    assert set().union(*from_map) == leads | terminals


@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_joins_run_in_the_rim_and_never_on_top_of_each_other(case):
    d = _design(case)
    smap = stator_map(d)
    sl = smap.stator
    for j in smap.joins:
        r = np.hypot(*j.path[1:-1].T)
        if j.group in ("star", "delta"):
            assert (r > sl.outer_radius_mm).all()  # made outside, at the terminals
        else:
            assert (r > smap.coil_outer_radius_mm).all(), f"{j.a}-{j.b} crosses a coil"
    # two joins on one lane never cover the same angles
    arcs = []
    for j in smap.joins:
        if j.group in ("star", "delta"):
            continue
        r = np.hypot(*j.path[1:-1].T)
        on_lane = np.isclose(r, np.median(r))
        ang = np.unwrap(np.arctan2(j.path[1:-1][on_lane, 1], j.path[1:-1][on_lane, 0]))
        arcs.append((round(float(np.median(r)), 6), float(ang.min()), float(ang.max())))
    for k, (r1, a1, b1) in enumerate(arcs):
        for r2, a2, b2 in arcs[k + 1 :]:
            if r1 != r2:
                continue
            for turn in (-2 * math.pi, 0.0, 2 * math.pi):
                assert not (a1 < b2 + turn - 1e-3 and a2 + turn < b1 - 1e-3)


def test_the_exits_are_at_an_empty_position_and_the_lugs_clear_them():
    d = _design(EMPTY_PARALLEL)
    sl = stator_layout(d)
    at = 360.0 * (d.layout.empty_positions[0] - 1) / d.layout.coil_positions
    assert np.mean(sl.lead_slot_angles_deg) == pytest.approx(at)
    gaps = sorted(((a - at + 180) % 360 - 180) for a in sl.lug_angles_deg)
    assert min(abs(g) for g in gaps) == pytest.approx(180.0 / d.spec.stator.mounting_lugs)


@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_the_mould_base_carries_the_maps_numbers(case, tmp_path):
    d = _design(case)
    map_path, base_path = tmp_path / "map.dxf", tmp_path / "base.dxf"
    write_stator_map(stator_map(d), map_path, map_notes(d))
    base = next(f for f in mould_flats(d) if f.part == "stator_mould_base")
    write_dxf(base, base_path, "base")

    def texts(path, layer):
        msp = ezdxf.readfile(path).modelspace()
        return {
            (e.dxf.text, round(e.dxf.align_point.x, 3), round(e.dxf.align_point.y, 3))
            for e in msp.query("TEXT")
            if e.dxf.layer == layer
        }

    on_map = texts(map_path, "NUMBERS")
    assert len(on_map) == 2 * d.layout.coil_positions  # a number and a mark at every position
    assert on_map <= texts(base_path, "REFERENCE")
    marks = {t for t, _, _ in on_map}
    for c in d.layout.coils:
        letter = TERMINAL_LETTERS[c.phase]
        assert f"{letter}{'+' if c.polarity > 0 else '-'}" in marks
