"""A DC-DC converter or charge controller on the rectified bus (target.kind = "converter").

The bridge charges a bus capacitor; the converter draws from it and delivers `efficiency` of
what it takes at `output_v`, up to `max_output_current_a`. It works only with its input
inside [min_input_v, max_input_v]. Drawing current, it holds the bus at a level, so to the
alternator it is a constant-voltage sink there, as a battery is (layout.circuit's battery
load, behind `BUS_OHM` of wiring):
- tracking = "fixed" holds the bus at `input_v`;
- tracking = "mppt" holds it where its output is highest: at each speed (no source), or at
  each condition of the source, where the whole system settles best (a tracking controller
  finds that point by perturbing and observing its output; here the bus levels in the
  window are each run through the model and the best is taken).
At its current limit a converter draws less, and the bus rises: the limited point is the
highest level that still reaches the limit (its draw is overstated by at most one level's
step, `BUS_LEVELS` across the window).

When the converter stops drawing (output at its limit, a full battery behind it, a fault)
the bus capacitor charges to the rectified open-circuit peak, less two diode drops. Above
`max_input_v` that destroys the converter: the classic way to lose one. `warnings` names the
speed where it starts. Bus ripple with a capacitor C: a bridge of m pulses per electrical
period at f_e, drawing I, ripples by about ΔV_pp = I / (m f_e C) (the capacitor supplies the
load between pulses; Mohan, Undeland & Robbins, Power Electronics, 3rd ed., Wiley, 2003,
ch. 5), m = 6 for three phases and 2 for one.
"""

from __future__ import annotations

import math

import numpy as np

BUS_OHM = 0.01  # wiring from the bridge to the converter, Ω (our choice)
BUS_LEVELS = 8  # bus levels tried across the window
# Turns sized so the open-circuit bus at the highest reachable speed stays at this share of
# max_input_v (our choice: room for cold magnets and a gust past the runaway estimate).
SIZE_SHARE = 0.85
RIPPLE_SHARE = 0.1  # bus ripple worth a warning, share of the bus voltage (our choice)
CAPACITOR_VOLTAGE_FACTOR = 1.25  # a bus capacitor's rating over the highest bus (common practice)


def most_turns(ta, peak_per_turn_at_max_v: float) -> int:
    """The most turns whose idle bus at max_rpm stays within SIZE_SHARE of max_input_v, from
    the rectified open-circuit peak one turn gives at max_rpm (may be 0: none do)."""
    return math.floor((SIZE_SHARE * ta.max_input_v + 2 * ta.diode_drop_v) / peak_per_turn_at_max_v)


def start_v(ta) -> float:
    """The bus voltage the converter starts delivering at, V."""
    return ta.input_v if ta.tracking == "fixed" else ta.min_input_v


def limit_w(ta) -> float:
    """The most the converter delivers, W."""
    return ta.output_v * ta.max_output_current_a


def delivered_w(ta, bus_w):
    """What the converter delivers from `bus_w` drawn off the bus, W."""
    return np.minimum(ta.efficiency * np.asarray(bus_w, dtype=float), limit_w(ta))


def open_bus_v(dc_peak_per_rpm: float, rpm, diode_drop_v: float):
    """The bus an idle converter sees: the rectified open-circuit peak less two diode drops, V."""
    return np.maximum(dc_peak_per_rpm * np.asarray(rpm, dtype=float) - 2 * diode_drop_v, 0.0)


def bus_levels(ta, top_v, from_v: float | None = None) -> np.ndarray:
    """The bus levels to try, (points, BUS_LEVELS), V: from where the converter starts (or
    `from_v`) to the lower of max_input_v and `top_v` (the open bus at each point; above it
    nothing flows). Where the open bus stays below the start every level is the start."""
    top = np.minimum(np.atleast_1d(np.asarray(top_v, dtype=float)), ta.max_input_v)
    lo = np.full_like(top, start_v(ta) if from_v is None else from_v)
    hi = np.maximum(top * (1 - 1e-3), lo)
    share = np.linspace(0.0, 1.0, BUS_LEVELS)[None, :]
    return lo[:, None] + (hi - lo)[:, None] * share


def pick(ta, levels: np.ndarray, bus_w: np.ndarray) -> np.ndarray:
    """The level the converter holds at each point, (points,) indices into `levels`' rows
    (points, levels tried, rising), from the power `bus_w` it would draw at each. At the current limit,
    the highest level still reaching it; else the best output (mppt) or input_v (fixed)."""
    out = delivered_w(ta, bus_w)
    capped = ta.efficiency * bus_w >= limit_w(ta) * (1 - 1e-9)
    highest_capped = capped.shape[1] - 1 - np.argmax(capped[:, ::-1], axis=1)
    free = np.argmax(out, axis=1) if ta.tracking == "mppt" else np.zeros(len(out), dtype=int)
    return np.where(capped.any(axis=1), highest_capped, free)


def ripple_v(current_a: float, electrical_hz: float, phases: int, capacitor_uf: float) -> float:
    """Peak-to-peak bus ripple, V: I / (m f_e C), m = 6 pulses for three phases, 2 for one."""
    pulses = 6 if phases == 3 else 2
    return current_a / (pulses * electrical_hz * capacitor_uf * 1e-6)


def capacitor_for_ripple_uf(current_a: float, electrical_hz: float, phases: int, ripple: float) -> float:
    """The bus capacitance that keeps the ripple to `ripple` V, µF, rounded up to a whole 100."""
    pulses = 6 if phases == 3 else 2
    return 100.0 * math.ceil(current_a / (pulses * electrical_hz * ripple) * 1e6 / 100.0)


def capacitor_rating_v(open_bus_at_max_v: float) -> float:
    """The least a bus capacitor should be rated for, V: common practice's margin over the
    highest bus it can see, rounded up to a whole 5 V."""
    return 5.0 * math.ceil(CAPACITOR_VOLTAGE_FACTOR * open_bus_at_max_v / 5.0)


def converter_words(ta) -> str:
    """The converter for a reader: "converter 15–60 V in, tracking its best input, 13.8 V out
    up to 8 A, 90 % efficient"."""
    held = f"holding its input at {ta.input_v:g} V" if ta.tracking == "fixed" else "tracking its best input"
    return (
        f"converter {ta.min_input_v:g}–{ta.max_input_v:g} V in, {held}, {ta.output_v:g} V out up to "
        f"{ta.max_output_current_a:g} A, {ta.efficiency:.0%} efficient"
    )


def idle_bus_v(pred, ta, rpm: float | None = None) -> float:
    """The bus an idle converter sees at `rpm` (default the highest, target.max_rpm) for the
    machine `pred` predicts, V."""
    per_rpm = pred.open_circuit_dc_peak_at_max_v / ta.max_rpm
    return float(open_bus_v(per_rpm, ta.max_rpm if rpm is None else rpm, ta.diode_drop_v))
