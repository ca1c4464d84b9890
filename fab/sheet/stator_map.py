"""The stator map page: the ring to an ISO 5455 scale, seen from the disc-1 side, from the
same points as the package's stator_map.dxf (fab.outlines.stator_map)."""

from __future__ import annotations

import functools

from fab.drawings import label_xy
from fab.outlines import StatorMap, lugged_outline, stator_map
from fab.sheet.document import MM, SANS, SANS_BOLD, _Ctx, _figure, _p, _plain
from fab.sheet.magnet_maps import _draw_scale_bar, _scale_bar_mm
from layout.design import Design
from layout.materials import is_printed_binder
from layout.winding import TERMINAL_LETTERS, joins, terminal_pair

# Each phase's line on paper: a colour and a dash, so a black-and-white print keeps them apart.
PHASE_INK = {
    "A": ((0.8, 0.1, 0.1), ()),
    "B": ((0.0, 0.5, 0.15), (4, 1.5)),
    "C": ((0.1, 0.25, 0.85), (1.2, 1.2)),
}
JOINT_INK = ((0.0, 0.0, 0.0), (6, 2, 1, 2))


def _fit_scale(size_mm: float, avail_w: float, avail_h: float) -> float:
    """1:n with n the first of 1, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10 ... at which the map fits:
    large enough to read every lead's name (the DXF is full size for measuring)."""
    for decade in (1, 10, 100):
        for step in (1, 1.5, 2, 2.5, 3, 4, 5, 6, 8):
            n = step * decade
            if size_mm * MM / n <= min(avail_w, avail_h):
                return n
    return 1000.0


def _up_face(design: Design) -> str:
    """The face the map looks at, as the builder sees it while joining the leads."""
    if is_printed_binder(design.spec.stator.binder):
        return "the printed frame's top face"
    return "the face that lies up in the mould"


def map_notes(design: Design) -> list[str]:
    """What the map shows and how to use it, for the page and the DXF alike."""
    lay = design.layout
    kind = design.spec.connection.kind
    printed = is_printed_binder(design.spec.stator.binder)
    out = [
        f"{design.spec.name}: stator map, seen from the disc-1 side ({_up_face(design)}, where the leads "
        "are joined); units mm.",
        "Positions are numbered counter-clockwise from 1" + ("" if printed else ", as on the mould base")
        + "; U+ is phase U connected as wound (in at S, out at F), U- reversed (in at F, out at S).",
        "S: a coil's start lead, brought out from the hole across the coil's face; F: its finish "
        "lead at the outer edge. Each join runs in the " + ("lead channel" if printed else "resin rim")
        + " beyond the coils.",
    ]  # fmt: skip
    if lay.empty_positions:
        out.append(f"The phase ends leave through the room of empty position {lay.empty_positions[0]}.")
    if kind == "star":
        out.append(
            "Star point: join U2, V2 and W2 at the terminals, only after each phase has passed its tests."
        )
    elif kind == "delta":
        out.append("Delta: join U1 to W2, V1 to U2 and W1 to V2 at the terminals, after each phase's tests.")
    return out


def _draw_map(c, smap: StatorMap, cx: float, cy: float, s: float) -> None:
    """The map with its centre at (cx, cy), s points per mm."""

    def pt(xy):
        return cx + float(xy[0]) * s, cy + float(xy[1]) * s

    def path(points, closed=False):
        p = c.beginPath()
        x, y = pt(points[0])
        p.moveTo(x, y)
        for q in points[1:]:
            p.lineTo(*pt(q))
        if closed:
            p.close()
        c.drawPath(p, stroke=1, fill=0)

    sl = smap.stator
    rim = lugged_outline(sl).points()
    c.setStrokeGray(0.55)
    c.setLineWidth(0.6)
    path(rim, closed=True)
    c.circle(cx, cy, sl.inner_radius_mm * s, stroke=1, fill=0)
    for p in smap.positions:
        c.setStrokeGray(0.55)
        if p.outline is not None:
            c.setDash()
            path(p.outline, closed=True)
            path(p.hole, closed=True)
        else:
            c.setDash(2, 2)
            path(p.hole, closed=True)
            c.setDash()
        x, y = pt(p.label_xy)
        c.setFillGray(0)
        c.setFont(SANS_BOLD, 11)
        c.drawCentredString(x, y, str(p.index))
        c.setFont(SANS, 7)
        c.drawCentredString(x, y - 8, p.mark)
    for node in smap.nodes.values():
        lead = node.stub is not None
        c.setStrokeGray(0)
        c.setLineWidth(0.6)
        if lead:
            c.setDash(1.5, 1.2) if node.across_coil else c.setDash()
            path(node.stub)
            c.setDash()
        x, y = pt(node.xy)
        c.circle(x, y, 1.1 if lead else 2.2, stroke=1, fill=1 if lead else 0)
        lx, ly = pt(label_xy(smap, node))
        c.setFont(SANS if lead else SANS_BOLD, 5.5 if lead else 8)
        c.drawCentredString(lx, ly - 2, node.name)
    for j in smap.joins:
        ink, dash = PHASE_INK.get(j.group, JOINT_INK)
        c.setStrokeColorRGB(*ink)
        c.setLineWidth(1.0 if j.group in PHASE_INK else 1.3)
        c.setDash(list(dash), 0) if dash else c.setDash()
        path(j.path)
    c.setDash()
    c.setStrokeGray(0)


def _legend(c, w: float, h: float, design: Design) -> None:
    c.setFont(SANS, 7.5)
    x = 0.0
    for phase in design.layout.phase_names:
        ink, dash = PHASE_INK[phase]
        c.setStrokeColorRGB(*ink)
        c.setLineWidth(0.9)
        c.setDash(list(dash), 0) if dash else c.setDash()
        c.line(x, h / 2, x + 10 * MM, h / 2)
        c.setDash()
        c.setFillGray(0)
        t1, t2 = terminal_pair(phase)
        c.drawString(x + 11.5 * MM, h / 2 - 2.5, f"phase {TERMINAL_LETTERS[phase]}: {t1} to {t2}")
        x += 42 * MM
    if design.spec.connection.kind in ("star", "delta"):
        ink, dash = JOINT_INK
        c.setStrokeColorRGB(*ink)
        c.setLineWidth(1.3)
        c.setDash(list(dash), 0)
        c.line(x, h / 2, x + 10 * MM, h / 2)
        c.setDash()
        c.drawString(x + 11.5 * MM, h / 2 - 2.5, f"{design.spec.connection.kind} joints, at the terminals")


def _stator_map_page(ctx: _Ctx) -> list:
    d = ctx.design
    smap = stator_map(d)
    reserve = 62 * MM
    size_mm = 2 * smap.extent_mm
    n = _fit_scale(size_mm, ctx.frame_w, ctx.frame_h - reserve)
    s = MM / n
    notes = map_notes(d)
    out = [_p(ctx, "Stator map", "h1")]
    out.append(
        _p(
            ctx,
            f"Seen from the disc-1 side: {_up_face(d)}, where the coils are placed and the leads "
            "joined. Turned over into the machine, the order runs clockwise.",
        )
    )
    out += [_p(ctx, line, "small") for line in notes[1:]]
    out.append(_figure(ctx.frame_w, size_mm * s, lambda c, w, h: _draw_map(c, smap, w / 2, h / 2, s)))
    out.append(_figure(ctx.frame_w, 6 * MM, lambda c, w, h: _legend(c, w, h, d)))
    bar = _scale_bar_mm(2 * smap.stator.outer_radius_mm)
    out.append(_figure(ctx.frame_w, 9 * MM, functools.partial(_draw_scale_bar, bar=bar, s=s, n=n)))
    order = "; ".join(
        f"{_plain(a)}-{_plain(b)}" for g, a, b in joins(d.layout, d.spec.connection.kind) if g in PHASE_INK
    )
    out.append(_p(ctx, f"Joins in the order they are made: {order}.", "small"))
    out.append(
        _p(
            ctx,
            "The same map, full size, is stator_map.dxf in the package"
            + (
                "."
                if is_printed_binder(d.spec.stator.binder)
                else "; the mould base drawing carries the same numbers and marks."
            ),
            "small",
        )
    )
    return out
