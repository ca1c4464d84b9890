"""The curves page: voltage, current, power and efficiency against speed, and one period of
the open-circuit EMF.
"""

from __future__ import annotations

from fab.sheet.charts import _DASH_DOT, _DASHED, _DOTTED, _SOLID, _chart, _Mark, _Series
from fab.sheet.document import MM, SANS, _Ctx, _p
from fab.sheet.words import _terminals
from layout import converter as conv
from layout.winding import TERMINAL_LETTERS


def _curves(ctx: _Ctx) -> list:
    d = ctx.design
    pr, ta, lay = d.prediction, d.spec.target, d.layout
    ac = ta.kind == "ac_line"
    pts = pr.curve
    rpm = [op.rpm for op in pts]
    speed = {
        "xlabel": "rpm",
        "xlim": (min(rpm), max(rpm)),
        # Cut-in is defined by a battery only; a resistor or a line draws current from the start.
        "vmarks": (
            [_Mark(pr.cut_in_rpm, f"cut-in {pr.cut_in_rpm:.0f} rpm", _DASH_DOT)]
            if ta.kind == "battery"
            else [_Mark(pr.cut_in_rpm, f"converter starts {pr.cut_in_rpm:.0f} rpm", _DASH_DOT)]
            if ta.kind == "converter"
            else []
        )
        + [_Mark(ta.rated_rpm, f"rated {ta.rated_rpm:g} rpm", _DASHED)],
    }
    line = "line" if lay.phases == 3 else "terminal"
    oc = [_Series(f"open circuit, {line} rms", rpm, [op.open_circuit_line_rms_v for op in pts], _SOLID, "o")]
    if not ac:
        peak = [float(abs(pr.line_emf_v(r)).max()) for r in rpm]
        oc.append(_Series("rectified open circuit (peak)", rpm, peak, _DASHED, "s"))
    if ta.kind == "battery":
        level = _Mark(ta.battery_v, f"battery {ta.battery_v:g} V", _DOTTED)
    elif ta.kind == "converter":
        level = _Mark(ta.max_input_v, f"converter's limit {ta.max_input_v:g} V", _DOTTED)
    else:
        level = _Mark(ta.voltage_v, f"target {ta.voltage_v:g} V", _DOTTED)
    # Below cut-in the model leaves a trace of current; efficiency means nothing there.
    top_power = max(op.dc_power_w for op in pts)
    loaded = [op for op in pts if op.dc_power_w > 1e-3 * top_power]
    half = ctx.frame_w / 2 - 2 * MM
    speed["legend_rows"] = 2
    into = {"battery": "into the battery", "converter": "into the converter"}.get(ta.kind, "into the load")
    current = _Series(
        f"{'line' if ac else 'DC'} current {into}", rpm, [op.dc_current_a for op in pts], _SOLID, "o"
    )
    power = [
        _Series(f"{'output' if ac else 'DC'} power {into}", rpm, [op.dc_power_w for op in pts], _SOLID, "s")
    ]
    if ta.kind == "converter":
        power.append(
            _Series(
                f"out of the converter at {ta.output_v:g} V",
                rpm,
                [op.delivered_w for op in pts],
                _DASHED,
                "o",
            )
        )
    figs = [
        _chart(half, title="Open-circuit voltage", ylabel="V", series=oc, hmarks=[level], **speed),
        _chart(half, title="Line current" if ac else "DC current", ylabel="A", series=[current], **speed),
        _chart(half, title="Output power" if ac else "DC power", ylabel="W", series=power, **speed),
    ]
    if len(loaded) >= 2:
        eff = _Series(
            "output / (output + copper losses)" if ac else "output / (output + copper and rectifier losses)",
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
        else f" Below {pr.cut_in_rpm:.0f} rpm the rectified voltage is under the converter's start "
        f"({conv.start_v(ta):g} V) plus two diode drops and it draws nothing; the bus holds the level the "
        "converter picks."
        if ta.kind == "converter"
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
