"""The test plan: bench checks in order, each with the value expected and room for the reading."""

from __future__ import annotations

from xml.sax.saxutils import escape

from fab.sheet.document import MM, _Ctx, _fmt_ohm, _ohm, _p, _pm, _table, _tick_box
from fab.sheet.words import (
    DEFER,
    OPEN_CIRCUIT_BAND_PCT,
    PHASE_MATCH_PCT,
    RESISTANCE_BAND_PCT,
    _band,
    _terminals,
    cut_in_rpm_stated,
    open_circuit_rms_v,
)
from layout import converter as conv
from layout.circuit import line_resistance_ohm
from layout.design import Design
from layout.materials import STATOR_BINDERS_MAX_C
from layout.safety import INSULATION_MIN_MOHM, insulation_test_v
from layout.winding import electrical_hz


def _bench_speeds(design: Design) -> list[float]:
    """Speeds to check the open-circuit voltage at: a slow one, cut-in (a battery's) and rated."""
    ta = design.spec.target
    speeds = {ta.rated_rpm}
    cut_in = cut_in_rpm_stated(design)
    if cut_in is not None:
        speeds.add(cut_in)
    if ta.rated_rpm > 100:
        speeds.add(100.0)
    return sorted(speeds)


PER_RPM = 1000.0  # the plan states the open-circuit voltage's rise per this many rpm


def bench_voltages(design: Design) -> dict[tuple[str, float], float]:
    """The voltages the test plan expects, by ("open circuit" or "loaded", rpm): each bench
    speed, the rise per PER_RPM and the highest speed in the note under the table, and the
    rated load's for a load that is not a battery."""
    ta, rated = design.spec.target, design.prediction.rated
    speeds = [*_bench_speeds(design), PER_RPM, ta.max_rpm]
    out = {("open circuit", rpm): open_circuit_rms_v(design, rpm) for rpm in speeds}
    if ta.kind in ("dc", "ac_line"):
        out["loaded", rated.rpm] = rated.dc_voltage_v
    return out


def _test_plan(ctx: _Ctx) -> list:
    d = ctx.design
    pr, lay, ta, spec = d.prediction, d.layout, d.spec.target, d.spec
    ohm = _ohm()
    out = [_p(ctx, "Test plan", "h1")]
    out.append(
        _p(
            ctx,
            "Measure at room temperature, the rotor still unless the step says otherwise. Expected values "
            f"are predictions: resistances ±{RESISTANCE_BAND_PCT} %, open-circuit voltages over the "
            f"magnet grade's spread of strength and ±{OPEN_CIRCUIT_BAND_PCT} % beyond it. "
            "Outside the band, stop and find out why before going on.",
        )
    )
    head = ["step", "check", "expected", "measured", "ok"]
    rows = [[_p(ctx, h, "cell") for h in head]]

    def add(step: str, check: str, expected: str, measured: str = ""):
        step = f"{len(rows)}. {step}"
        rows.append(
            [_p(ctx, step, "cell"), _p(ctx, check, "cell"), _p(ctx, expected, "cell"), measured, _tick_box()]
        )

    r_lo, r_hi = _band(pr.phase_resistance_ohm, RESISTANCE_BAND_PCT)
    for ph in lay.phase_names:
        t1, t2 = _terminals(ph)
        add(
            "phase resistance",
            f"{t1} to {t2}, before the "
            + (
                "star point is made"
                if spec.connection.kind == "star"
                else "delta is closed"
                if lay.phases == 3
                else "bridge is connected"
            ),
            f"{_fmt_ohm(pr.phase_resistance_ohm)} ({r_lo:.3f} to {r_hi:.3f} {ohm}) at 20 °C",
            f"______ {ohm}",
        )
    if lay.phases == 3:
        add("phases match", "the three phase resistances", f"within {PHASE_MATCH_PCT} % of each other")
    test_v = insulation_test_v(pr)
    add(
        "insulation",
        "windings (all terminals joined) to the frame, discs and mounting studs"
        + ("; and phase to phase before they are joined" if lay.phases == 3 else ""),
        f"at least {INSULATION_MIN_MOHM:g} M{ohm} with an insulation tester at {test_v} V DC",
        f"______ M{ohm}",
    )
    ll = line_resistance_ohm(pr.phase_resistance_ohm, spec.connection.kind)
    words = {
        "star": "U1-V1, V1-W1, W1-U1 (two phases in series)",
        "delta": "L1-L2, L2-L3, L3-L1 (one phase across the other two)",
    }.get(spec.connection.kind, "")
    if spec.connection.kind == "delta":
        pairs = ("L1-L2", "L2-L3", "L3-L1")
    elif lay.phases == 3:
        pairs = ("U1-V1", "V1-W1", "W1-U1")
    else:
        pairs = ("U1-U2",)

    def blanks(unit: str) -> str:
        """One line to write on for each pair of terminals."""
        return "\n".join(f"{pair} ______ {unit}" for pair in pairs)

    if ll is not None:
        lo, hi = _band(ll, RESISTANCE_BAND_PCT)
        add(
            "joined",
            f"line to line, {words}",
            f"{_fmt_ohm(ll)} ({lo:.3f} to {hi:.3f} {ohm}) each",
            blanks(ohm),
        )
    joined = {"star": "star point made, ", "delta": "delta closed, "}.get(spec.connection.kind, "")
    volts = bench_voltages(d)
    for rpm in _bench_speeds(d):
        v = volts["open circuit", rpm]
        # The grade's Br span at room temperature, widened by the model's tolerance.
        room = d.prediction.ambient_c
        span_lo, span_hi = d.prediction.open_circuit_band_v(rpm, room, room)
        lo, hi = _band(span_lo, OPEN_CIRCUIT_BAND_PCT)[0], _band(span_hi, OPEN_CIRCUIT_BAND_PCT)[1]
        hz = electrical_hz(lay.pole_pairs, rpm)
        add(
            f"open circuit at {rpm:g} rpm",
            f"AC volts across the terminals, {joined}nothing else connected; the speed reads as "
            f"{hz:.1f} Hz on the meter's frequency range",
            f"{v:.1f} V rms ({lo:.1f} to {hi:.1f} V)",
            blanks("V"),
        )
    if lay.phases == 3:
        add(
            "voltages match",
            "the three line voltages at one speed",
            f"within {PHASE_MATCH_PCT} %; one low pair points to a coil connected the wrong way round",
        )
    if ta.kind == "battery":
        add(
            "cut-in",
            "battery connected through the bridge and fuse; raise the speed slowly",
            f"charging current starts near {pr.cut_in_rpm:.0f} rpm",
            "______ rpm",
        )
    elif ta.kind == "converter":
        top = conv.idle_bus_v(pr, ta)
        add(
            "open bus",
            "DC volts across the bus capacitor, bridge connected and the converter NOT yet connected, "
            f"at {ta.rated_rpm:g} rpm",
            f"{conv.idle_bus_v(pr, ta, ta.rated_rpm):.1f} V; "
            f"it must stay under the converter's {ta.max_input_v:g} V limit at every speed the machine "
            f"can reach ({top:.0f} V at {ta.max_rpm:g} rpm)",
            "______ V",
        )
        add(
            "converter starts",
            "the converter connected, output to its load; raise the speed slowly",
            f"output starts near {pr.cut_in_rpm:.0f} rpm; at {pr.rated.rpm:g} rpm about "
            f"{pr.rated.delivered_w:.0f} W at {ta.output_v:g} V",
            "______ rpm",
        )
    else:
        rated = pr.rated
        add(
            "rated load",
            f"the rated load connected, at {rated.rpm:g} rpm",
            f"{volts['loaded', rated.rpm]:.1f} V, {rated.dc_current_a:.2f} A",
            "______ V",
        )
    binder_max = STATOR_BINDERS_MAX_C[spec.stator.binder]
    add(
        "heat",
        "stator surface after 30 minutes at rated speed and load",
        f"{pr.rated.temperature_words}; stop above {binder_max:g} °C ({spec.stator.binder})",
        "______ °C",
    )
    add(
        "rotor",
        "first spins by hand, then slowly under power: rub, wobble, noise",
        f"the running clearance ({spec.rotor.running_clearance_mm:g} mm) all the way round; no rubbing",
    )
    widths = [29 * MM, 52 * MM, 51 * MM, 38 * MM]
    widths.append(ctx.frame_w - sum(widths))
    out.append(_table(ctx, rows, widths))
    out.append(
        _p(
            ctx,
            "Open-circuit voltage rises in proportion to speed: "
            f"{volts['open circuit', PER_RPM]:.1f} V per {PER_RPM:g} rpm here, "
            f"{volts['open circuit', ta.max_rpm]:.0f} V at {ta.max_rpm:g} rpm.",
            "small",
        )
    )
    out.append(
        _p(
            ctx,
            "Type the readings into a CSV, one a row under the header what,where,value,rpm (the README's "
            f"statorsmith check section), and run: statorsmith check {spec.file} --readings "
            f"{spec.name}-readings.csv. It sets them beside these figures and names the fault they fit.",
            "small",
        )
    )
    out.append(_pm(ctx, f"<b>{escape(DEFER)}</b>", "body"))
    return out
