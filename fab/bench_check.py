"""`statorsmith check`: bench readings of the finished machine against its design.

Reads the files, hands the sheet's own bands and open-circuit figure to `layout.bench_check`
(so the check and the test plan cannot disagree), and formats what it finds. No physics here.
"""

from __future__ import annotations

import textwrap

from fab.report import _r, table
from fab.sheet.words import OPEN_CIRCUIT_BAND_PCT, PHASE_MATCH_PCT, RESISTANCE_BAND_PCT, open_circuit_rms_v
from layout.bench_check import Bands, BenchCheck, bench_model, check
from layout.design import Design
from layout.readings import WAVEFORM_MAX_BYTES, read_readings, read_waveform
from layout.spec import read_text_input

_WRAP = 100


def bench_check(
    design: Design,
    readings_path: str,
    waveform_path: str | None = None,
    waveform_where: str | None = None,
    waveform_rpm: float | None = None,
) -> BenchCheck:
    """Read the readings (and a waveform) and judge them against `design`."""
    lay = design.layout
    src, text = read_text_input(readings_path, "a CSV of bench readings (what,where,value,rpm)")
    readings = read_readings(text, src, lay.phases, tuple(c.index for c in lay.coils))
    wave = None
    if waveform_path is not None:
        wsrc, wtext = read_text_input(waveform_path, "a CSV waveform (time_s,volts)", WAVEFORM_MAX_BYTES)
        wave = read_waveform(wtext, wsrc, lay.phases, lay.pole_pairs, waveform_rpm, waveform_where)
    model = bench_model(design, lambda rpm: open_circuit_rms_v(design, rpm))
    bands = Bands(RESISTANCE_BAND_PCT, OPEN_CIRCUIT_BAND_PCT, PHASE_MATCH_PCT, design.prediction.br_span)
    return check(model, readings, bands, wave)


def _figure(x: float) -> str:
    return f"{x:.4g}" if abs(x) < 1e5 else f"{x:.3g}"


def check_text(result: BenchCheck, name: str, readings_name: str) -> str:
    """The table of readings beside the design's figures, then the findings in words."""
    rows = [
        [
            c.what,
            c.where or "-",
            f"{c.rpm:g}" if c.rpm is not None else "-",
            _figure(c.measured),
            _figure(c.expected),
            f"{_figure(c.low)} to {_figure(c.high)}",
            f"{c.deviation_pct:+.1f}" if abs(c.deviation_pct) < 1e4 else f"{c.deviation_pct:+.2g}",
        ]
        for c in result.compared
    ]
    out = [
        f"{name}: bench readings ({readings_name}) against the design",
        "",
        table(
            ["what", "where", "rpm", "measured", "expected", "band alone", "deviation_pct"],
            rows,
            "Readings (resistances at 20 °C, voltages open-circuit rms)",
        ),
        "",
        f"verdict: {result.verdict}",
    ]
    for f in result.findings:
        coils = f" coils {', '.join(map(str, f.coils))}" if f.coils else ""
        out += ["", f"[{f.code}]{coils}"]
        out += textwrap.wrap(f.message, _WRAP, initial_indent="  ", subsequent_indent="  ")
        out += textwrap.wrap(
            "What to do: " + f.what_to_do, _WRAP, initial_indent="  ", subsequent_indent="  "
        )
    return "\n".join(out)


def check_json(result: BenchCheck) -> dict:
    """The `check --json` view: verdict, findings, and each reading beside the design's figure."""
    return {
        "verdict": result.verdict,
        "findings": [
            {"code": f.code, "coils": list(f.coils), "message": f.message, "what_to_do": f.what_to_do}
            for f in result.findings
        ],
        "compared": [
            {
                "what": c.what,
                "where": c.where,
                "measured": _r(c.measured, 6),
                "expected": _r(c.expected, 6),
                "deviation_pct": _r(c.deviation_pct, 2),
            }
            for c in result.compared
        ],
    }
