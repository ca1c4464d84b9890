"""Page 1, the summary: what the machine is and does, the files of the package, and the
cautions with the design's own warnings.
"""

from __future__ import annotations

import re
from xml.sax.saxutils import escape

from fab.report import energy_words, suggestion_lines
from fab.sheet.document import MM, Files, _Ctx, _figure, _fmt_ohm, _key_value_table, _p, _pm, _table
from fab.sheet.words import DEFER, _magnet_words, _wire_words, cut_in_rpm_stated, open_circuit_rms_v
from layout.converter import converter_words
from layout.design import Design
from layout.rotor import disc_count, is_plain_disc, rotor_discs


def _topology_words(design: Design) -> str:
    return {
        "two_discs": "two magnet discs either side of a coreless stator",
        "one_disc_steel_stator": "one magnet disc over a steel-backed stator",
        "one_disc_steel_disc": "one magnet disc facing a plain steel disc across a coreless stator",
        "one_disc_coreless": "one magnet disc beside a coreless stator",
    }[design.spec.rotor.topology]


def _connection_words(design: Design) -> str:
    k = design.spec.connection.kind
    a = design.layout.parallel_paths
    paths = f", {a} parallel paths per phase" if a > 1 else ""
    return {"star": "star (Y)", "delta": "delta", "single_phase": "single phase"}[k] + paths


def _target_words(design: Design) -> str:
    ta = design.spec.target
    if ta.kind == "battery":
        return f"charge a {ta.battery_v:g} V battery through a diode bridge"
    if ta.kind == "dc":
        return f"{ta.voltage_v:g} V DC at {ta.rated_current_a:g} A through a diode bridge"
    if ta.kind == "converter":
        return f"a diode bridge and bus capacitor feeding a {converter_words(ta)}"
    return f"{ta.voltage_v:g} V AC line at {ta.rated_current_a:g} A, no rectifier"


def summary_voltages(design: Design) -> dict[tuple[str, float], float]:
    """The voltages the summary states, by ("open circuit" or "loaded", rpm): open circuit at
    the rated and the highest speed and at a battery's cut-in, loaded at the rated speed."""
    ta, rated = design.spec.target, design.prediction.rated
    speeds = [ta.rated_rpm, ta.max_rpm]
    cut_in = cut_in_rpm_stated(design)
    if cut_in is not None:
        speeds.append(cut_in)
    out = {("open circuit", rpm): open_circuit_rms_v(design, rpm) for rpm in speeds}
    out["loaded", rated.rpm] = rated.dc_voltage_v
    return out


def _line_word(design: Design) -> str:
    return "line" if design.layout.phases == 3 else "terminal"


def _cut_in_words(design: Design) -> str:
    """A battery's cut-in: the speed, the rectified voltage that defines it, and the AC
    voltage a meter reads there (the one the test plan expects)."""
    pr = design.prediction
    rpm = cut_in_rpm_stated(design)
    v = summary_voltages(design)["open circuit", rpm]
    what = "battery" if design.spec.target.kind == "battery" else "the converter's start"
    return (
        f"{rpm:g} rpm: the rectified open-circuit voltage reaches {pr.cut_in_voltage_v:.1f} V "
        f"({what} plus two diode drops), {v:.1f} V {_line_word(design)} rms"
    )


def _source_words(design: Design) -> str:
    """The source's energy and runaway in a line (the same words as plan's)."""
    op = design.operating
    return f"{energy_words(design)}; with no load it runs away to {op.runaway_rpm:.0f} rpm"


def _caution_group(code: str) -> str:
    if code.startswith("coil.") or code in ("magnet.temperature", "source.coil_heat"):
        return "Heat"
    if code.startswith("magnet."):
        return "Magnets"
    if code.startswith("voltage."):
        return "Voltage"
    if code.startswith(("rotor.", "disc.", "layout.")) or code == "source.runaway":
        return "Rotating parts"
    return "Design"


# Bench rules that hold for every machine; the design's own warnings follow each.
_CAUTIONS = (
    (
        "Magnets",
        "Work on a bench with no steel on it, one magnet at a time; keep magnets in their "
        "spacers until they go in, away from phones, cards and watches.",
    ),
    (
        "Rotating parts",
        "Fit the guard before the rotor turns under power; never reach towards the discs "
        "while anything can turn them.",
    ),
    (
        "Voltage",
        "The terminals are live whenever the rotor turns: stop and secure it before touching "
        "the wiring, and insulate every joint.",
    ),
    (
        "Heat",
        "Coils, rectifier and load get hot: mount the bridge on a heat sink and check the "
        "stator's temperature in the first long runs (see the test plan).",
    ),
)
# An AC-line load has no rectifier: its heat rule names what it does have.
_LINE_HEAT = (
    "Coils and load get hot: check the stator's temperature in the first long runs (see the test plan)."
)


def _cautions(design: Design) -> tuple[tuple[str, str], ...]:
    if design.spec.target.kind != "ac_line":
        return _CAUTIONS
    return tuple((g, _LINE_HEAT if g == "Heat" else rule) for g, rule in _CAUTIONS)


def _summary(ctx: _Ctx, files: Files | None) -> list:
    d = ctx.design
    spec, lay, pr = d.spec, d.layout, d.prediction
    ta = spec.target
    rated = pr.rated
    volts = summary_voltages(d)
    out = [_p(ctx, f"{spec.name}: build sheet", "h1"), _p(ctx, spec.purpose)]
    phase_v = "" if lay.phases == 1 else f" ({pr.open_circuit_phase_rms_v:.1f} V per phase)"
    line = _line_word(d)
    output_kind = "AC line" if ta.kind == "ac_line" else "DC"
    losses = "copper losses" if ta.kind == "ac_line" else "copper and rectifier losses"
    rows = [
        (
            "machine",
            f"{_topology_words(d)}; {lay.coil_positions} coil positions, {len(lay.coils)} coils wound",
        ),
        ("magnets", f"{lay.magnets} per disc: {_magnet_words(d)}"),
        (
            "winding",
            f"{lay.phases}-phase, {_connection_words(d)}; winding factor {d.winding_factor_as_built:.3f}; "
            f"{pr.turns_per_coil} turns of {_wire_words(d)} per coil",
        ),
        ("target", _target_words(d)),
        (
            f"open-circuit voltage at {ta.rated_rpm:g} rpm",
            f"{volts['open circuit', ta.rated_rpm]:.1f} V {line} rms{phase_v}; "
            f"{volts['open circuit', ta.max_rpm]:.0f} V at {ta.max_rpm:g} rpm (the highest speed)",
        ),
        *([("cut-in", _cut_in_words(d))] if ta.kind == "battery" else []),
        *([("converter starts", _cut_in_words(d))] if ta.kind == "converter" else []),
        (
            f"rated output at {rated.rpm:g} rpm",
            f"{volts['loaded', rated.rpm]:.1f} V, {rated.dc_current_a:.2f} A, {rated.dc_power_w:.0f} W "
            + output_kind
            + (
                f" into the converter; {rated.delivered_w:.0f} W out at {ta.output_v:g} V"
                if rated.delivered_w is not None
                else ""
            ),
        ),
        ("efficiency at rated speed", f"{rated.efficiency:.0%} ({losses})"),
        (
            "phase resistance at 20 °C",
            f"{_fmt_ohm(pr.phase_resistance_ohm)} per phase; {_fmt_ohm(pr.coil_resistance_ohm)} per coil",
        ),
        ("electrical frequency", f"{pr.electrical_hz_at_rated:.1f} Hz at {ta.rated_rpm:g} rpm"),
        *([("with its source", _source_words(d))] if d.operating is not None else []),
    ]
    out.append(_key_value_table(ctx, rows, 52 * MM))
    out += _exploded(ctx)
    out.append(_p(ctx, "Files in the package", "h2"))
    if files:
        head = [_p(ctx, h, "cell") for h in ("file", "what it is", "how to make it")]
        body = [[_p(ctx, f, "cell"), _p(ctx, w, "cell"), _p(ctx, h, "cell")] for f, w, h in _grouped(files)]
        w0 = 48 * MM
        w1 = (ctx.frame_w - w0) * 0.45
        out.append(_table(ctx, [head, *body], [w0, w1, ctx.frame_w - w0 - w1]))
    else:
        out.append(
            _p(
                ctx,
                "This sheet was written on its own. statorsmith build writes it together with the "
                "part files (STEP, STL, DXF), the balance plan and a manifest.",
            )
        )
    out.append(_p(ctx, "Cautions", "h2"))
    by_group: dict[str, list[str]] = {}
    order = {"danger": 0, "warning": 1, "info": 2}
    for w in sorted(d.warnings, key=lambda w: order[w.severity]):
        group = by_group.setdefault(_caution_group(w.code), [])
        group.append(f"{w.severity.upper()}: {w.message}")
        group.extend(f"– {line}" for line in suggestion_lines(d, w.code))
    for group, rule in _cautions(d):
        out.append(_pm(ctx, f"<b>{escape(group)}.</b> {escape(rule)}", "caution"))
        out.extend(_p(ctx, m, "caution") for m in by_group.get(group, ()))
    if by_group.get("Design"):
        out.append(_pm(ctx, "<b>Design.</b> What to change before building:", "caution"))
        out.extend(_p(ctx, m, "caution") for m in by_group["Design"])
    out.append(_pm(ctx, f"<b>{escape(DEFER)}</b>", "body"))
    return out


EXPLODED_H_MM = 72.0


def _exploded(ctx: _Ctx) -> list:
    """The machine drawn apart along its shaft, from the package's solids."""
    from fab.sheet.exploded import draw_exploded

    d = ctx.design
    spec = d.spec
    if spec.rotor.topology == "one_disc_steel_stator":
        parts = "the magnet disc below, the stator with its coils and its steel plate above"
    elif 2 in rotor_discs(spec) and is_plain_disc(spec, 2):
        parts = "the magnet disc below, the stator with its coils, the plain steel disc above"
    elif disc_count(spec) == 2:
        parts = "disc 1 with its magnets below, the stator with its coils, disc 2 above"
    else:
        parts = "the magnet disc below, the stator with its coils above it"
    words = (
        f"The machine drawn apart along its shaft: {parts} (magnets red with north up, blue with "
        "south up). Drawn from the package's solids."
    )
    return [
        _figure(ctx.frame_w, EXPLODED_H_MM * MM, lambda c, w, h: draw_exploded(c, w, h, d)),
        _p(ctx, words, "small"),
    ]


_SEGMENT = re.compile(r"^(?P<stem>.+)_seg(?P<k>\d+)\.stl$")


def _grouped(files: Files) -> list[tuple[str, str, str]]:
    """The files list with a part's segment STLs in one row: "stator_mould_seg1.stl to
    _seg7.stl", what it is and how to make it said once."""
    out: list[tuple[str, str, str]] = []
    runs: dict[str, int] = {}
    for f, w, h in files:
        m = _SEGMENT.match(f)
        if m is None:
            out.append((f, w, h))
            continue
        stem = m["stem"]
        if stem in runs:
            first, _, _ = out[runs[stem]]
            out[runs[stem]] = (f"{first.split(' to ')[0]} to _seg{m['k']}.stl", w.split(": segment")[0], h)
        else:
            runs[stem] = len(out)
            out.append((f, w.split(": segment")[0], h))
    return [
        (f, f"{w}, in {f.rsplit('_seg', 1)[1].removesuffix('.stl')} segments" if " to " in f else w, h)
        for f, w, h in out
    ]
