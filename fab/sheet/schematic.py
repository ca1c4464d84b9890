"""Drawing symbols of the wiring page (coils, terminals, junction dots, windings, the bridge
and the output) and the star, delta or single-phase connection drawn with them.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from fab.sheet.charts import _dash
from fab.sheet.document import MM, SANS, SANS_BOLD, _plain
from fab.sheet.words import _terminals
from layout.design import Design
from layout.winding import TERMINAL_LETTERS


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
    """Fuse in the positive lead, then the battery or the load; a converter's bus capacitor
    across the rails before the fuse."""
    ta = d.spec.target
    c.setLineWidth(0.9)
    if ta.kind == "converter":
        cx, mid = x + 4 * MM, (y_p + y_n) / 2
        c.line(cx, y_p, cx, mid + 1 * MM)
        c.line(cx, y_n, cx, mid - 1 * MM)
        c.setLineWidth(1.4)
        c.line(cx - 3 * MM, mid + 1 * MM, cx + 3 * MM, mid + 1 * MM)
        c.line(cx - 3 * MM, mid - 1 * MM, cx + 3 * MM, mid - 1 * MM)
        c.setLineWidth(0.9)
        c.setFont(SANS, 7)
        c.drawString(cx + 4 * MM, mid - 1, "bus C")
        x += 8 * MM
        c.line(x - 8 * MM, y_p, x, y_p)
        c.line(x - 8 * MM, y_n, x, y_n)
    fx = x + 8 * MM
    c.line(x, y_p, fx, y_p)
    c.rect(fx, y_p - 1.3 * MM, 8 * MM, 2.6 * MM)
    c.line(fx, y_p, fx + 8 * MM, y_p)
    c.setFont(SANS, 7)
    c.drawCentredString(fx + 4 * MM, y_p + 2.2 * MM, "fuse")
    bx = fx + (16 if ta.kind == "converter" else 24) * MM  # the capacitor took the difference
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
        what = (
            f"converter {ta.min_input_v:g}\u2013{ta.max_input_v:g} V in, {ta.output_v:g} V out"
            if ta.kind == "converter"
            else f"load {ta.voltage_v:g} V DC, {ta.rated_current_a:g} A"
        )
        c.drawString(bx + 4 * MM, mid - 1, _plain(what))


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
