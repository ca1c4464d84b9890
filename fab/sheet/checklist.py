"""The winding checklist: how to wind and connect, a row per coil with its expected resistance
and boxes to tick.
"""

from __future__ import annotations

from fab.sheet.document import MM, SANS, SANS_BOLD, _Ctx, _fmt_ohm, _ohm, _p, _plain, _pm, _table, _tick_box
from fab.sheet.words import RESISTANCE_BAND_PCT, _band, _wire_words
from layout.materials import COPPER_TEMP_COEFF_PER_K
from layout.rotor import disc_count
from layout.winding import TERMINAL_LETTERS


def _phase_label(phase: str, phases: int) -> str:
    return f"{phase} ({TERMINAL_LETTERS[phase]})" if phases == 3 else "single"


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
