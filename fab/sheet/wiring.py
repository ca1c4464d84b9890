"""The wiring page: every phase drawn coil by coil from terminal to terminal, then the
connection to the rectifier and the output, with notes.
"""

from __future__ import annotations

import functools
import math

from fab.sheet.document import MM, SANS_BOLD, _Ctx, _figure, _p, _plain
from fab.sheet.schematic import _dot, _draw_coil, _draw_connection, _terminal
from fab.sheet.words import _terminals
from layout import converter as conv
from layout.circuit import BRIDGE_CURRENT_FACTOR
from layout.design import Design


def _chains(design: Design, phase: str) -> list[list]:
    """The coils of one phase, path by path, in the order they are joined."""
    coils = design.layout.phase_coils(phase)
    return [[c for c in coils if c.path == a] for a in range(1, design.layout.parallel_paths + 1)]


_SLOT_MAX = 34 * MM  # room for one coil in a chain, wire included
_SLOT_MIN = 17 * MM
_ROW_H = 18 * MM


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
        br = d.bridge
        legs = "three-phase (six diodes)" if d.layout.phases == 3 else "single-phase (four diodes)"
        notes.append(
            f"Rectifier: a {legs} bridge rated at least {br.voltage_v:.0f} V and {br.current_a:.0f} A "
            f"(twice the {br.open_circuit_peak_v:.0f} V open-circuit peak at {ta.max_rpm:g} rpm, "
            f"{BRIDGE_CURRENT_FACTOR:g} times the {br.max_current_a:.1f} A at {br.max_current_rpm:.0f} rpm; "
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
    elif ta.kind == "converter":
        top = conv.idle_bus_v(pr, ta)
        cap = (
            f"the {ta.bus_capacitor_uf:g} µF bus capacitor"
            if ta.bus_capacitor_uf is not None
            else "a bus capacitor (its size is not in the design file: see the converter's manual)"
        )
        notes.append(
            f"Bus: the bridge's + and − go to {cap}, rated at least {conv.capacitor_rating_v(top):.0f} V "
            f"with a bleed resistor across it, then through a fuse to the converter's input "
            f"({ta.min_input_v:g}–{ta.max_input_v:g} V). Idle, the bus rises to {top:.0f} V at "
            f"{ta.max_rpm:g} rpm"
            + (
                f": above the converter's {ta.max_input_v:g} V. Fit a clamp or dump load before connecting."
                if top > ta.max_input_v
                else f", under its {ta.max_input_v:g} V limit; measure it before connecting the converter."
            )
        )
    else:
        notes.append("The lines go straight to the AC load, through a fused isolator.")
    return notes


_CONNECTION_H = 62 * MM
