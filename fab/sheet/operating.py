"""The source page: what the blades, the turbine or the rider give against what the machine
takes, where the two meet, and the energy that makes. Only for a design with a [source]."""

from __future__ import annotations

import numpy as np

from fab.report import condition_words, source_sentences
from fab.sheet.charts import _DASH_DOT, _DASHED, _DOTTED, _SOLID, _chart, _Mark, _Series
from fab.sheet.document import _Ctx, _p, _table

_STYLES = ((_DOTTED, ""), (_DASH_DOT, ""), (_DASHED, ""), (_DOTTED, "^"), (_DASH_DOT, "s"), (_DASHED, "o"))


def _drawn_conditions(op) -> list[float]:
    """The source curves worth drawing: a few winds up to the furl, or every flow or effort."""
    src = op.source
    if src.kind != "wind":
        return list(src.conditions())
    furl = src.spec.furl_wind_m_s or 25.0
    winds = [v for v in (4.0, 6.0, 8.0, 10.0, 12.0) if v < furl]
    return winds + [furl] if furl <= 25 else winds


def _label(src, value: float) -> str:
    return f"{condition_words(src.kind, value)} {src.condition_unit}"


def _source_page(ctx: _Ctx) -> list:
    d = ctx.design
    op = d.operating
    if op is None:
        return []
    src = op.source
    kind = src.kind
    out = [_p(ctx, "Where it runs", "h1")]
    what = {"wind": "blades", "water": "turbine", "pedal": "rider", "crank": "person at the crank"}[kind]
    out.append(
        _p(
            ctx,
            f"The {what} and the alternator meet where the power the {what} gives equals what the "
            "alternator takes: its output plus every loss. Below that speed the shaft speeds up, above "
            "it slows down. Thin lines: what the source gives at each condition; heavy line: what the "
            "alternator takes; squares: where they meet.",
            "small",
        )
    )
    top = op.runaway_rpm * 1.05
    xs = list(np.linspace(0.0, top, 60))
    series = []
    for k, c in enumerate(_drawn_conditions(op)):
        dash, marker = _STYLES[k % len(_STYLES)]
        ys = [max(float(v), 0.0) for v in src.power_w(np.array(xs), c)]
        series.append(_Series(_label(src, c), xs, ys, dash, marker, every=10))
    pts = sorted((r.point for r in op.rows if r.point is not None), key=lambda p: p.rpm)
    if pts:
        series.append(
            _Series("alternator takes", [p.rpm for p in pts], [p.shaft_power_w for p in pts], _SOLID)
        )
        series.append(
            _Series("where they meet", [p.rpm for p in pts], [p.shaft_power_w for p in pts], (0.1, 99), "s")
        )
    peak = max([p.shaft_power_w for p in pts] + [1.0])
    out.append(
        _chart(
            ctx.frame_w,
            title="Source power and alternator demand against alternator speed",
            xlabel="alternator rpm",
            ylabel="W",
            series=series,
            xlim=(0.0, top),
            ylim=(0.0, peak * 1.6),
            vmarks=[_Mark(op.runaway_rpm, f"runaway {op.runaway_rpm:.0f} rpm", _DASHED)],
            legend_rows=2,
        )
    )
    wind = kind == "wind"
    cable = src.spec.cable_length_m > 0
    bus = d.spec.target.kind == "converter"
    head = [
        src.condition_unit,
        "rpm",
        *(["tip-speed ratio", "Cp"] if wind else []),
        "source W",
        *(["bus V"] if bus else []),
        "output W",
        *(["at battery W"] if cable else []),
        *(["delivered W"] if bus else []),
        "efficiency",
        "coils °C",
        "",
    ]
    rows = [[_p(ctx, h, "cell") for h in head]]
    furl = src.spec.furl_wind_m_s if wind else None
    shown = [r for r in op.rows if furl is None or r.condition <= furl]
    for r in shown:
        p = r.point
        coils = (
            ""
            if p is None
            else (
                f"over {p.coil_temperature_c:.0f}"
                if p.temperature_over_cap
                else f"{p.coil_temperature_c:.0f}"
            )
        )
        cells = [
            _label(src, r.condition).split(" ")[0],
            f"{r.rpm:.0f}",
            *([f"{r.tsr:.1f}", f"{r.cp:.2f}"] if wind else []),
            f"{r.source_power_w:.0f}",
            *([f"{p.dc_voltage_v:.1f}" if p is not None else ""] if bus else []),
            f"{r.output_power_w:.0f}",
            *([f"{r.load_power_w:.0f}"] if cable or bus else []),
            f"{r.efficiency:.0%}" if p is not None else "",
            coils,
            "stalls" if r.stalled else "",
        ]
        rows.append([_p(ctx, c, "cell") for c in cells])
    if len(shown) < len(op.rows):
        rest = f"{op.rows[len(shown)].condition:g}–{op.rows[-1].condition:g}"
        rows.append(
            [
                _p(ctx, c, "cell")
                for c in [rest, f"furled: as at {shown[-1].condition:g}"] + [""] * (len(head) - 2)
            ]
        )
    width = ctx.frame_w / len(head)
    out.append(_table(ctx, rows, [width] * len(head)))
    lines = source_sentences(d)
    out.append(_p(ctx, " ".join(lines), "small"))
    return out
