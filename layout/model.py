"""Turns and wire from the target, resistance and inductance, and the output curve.

The EMF comes from `emf` per turn and per rad/s; everything here scales it by turns and
speed, sizes the copper into the coil window and runs the rectifier model of `circuit`.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

from layout import converter as conv
from layout.circuit import BridgeRating, Load, bridge_rating, simulate_rectifier
from layout.emf import FluxMap, PhaseEmf, rms, thd
from layout.forces import disc_outer_radius_mm
from layout.geometry import Geometry, magnet_family
from layout.losses import bearing_w, conductor_eddy_w, windage_w
from layout.materials import COPPER_DENSITY_G_CM3, MAGNET_GRADES
from layout.rotor import rotor_discs
from layout.source import cable_resistance_ohm
from layout.spec import Spec, unit_slip_hint
from layout.steel import PlateFlux
from layout.thermal import stator_heat_paths
from layout.winding import Layout, electrical_hz
from layout.wire import (
    Wire,
    choose_wire,
    coil_resistance_ohm,
    copper_resistivity,
    wheeler_inductance_h,
)

# Above the highest thermal class of enamelled wire (220 °C, IEC 60085) the insulation, the
# binder and this steady-state estimate have all failed; no temperature is claimed past it.
TEMPERATURE_CAP_C = 250.0
TEMPERATURE_TOL_K = 0.05  # the coil temperature and its resistance agree to this


def settle_temperature(loss_w, ambient_c: float, conductance_w_k, n: int):
    """Coil temperatures (°C) where the copper loss at each point's own resistance is the heat
    that raises it there: T = T_amb + P(T)/G, solved per operating point.

    `loss_w(index, temps_c)` gives the copper loss (W) of the points `index` with the coils at
    `temps_c`. The root is bracketed in [T_amb, TEMPERATURE_CAP_C] and found by regula falsi
    with the Illinois modification (Dowell & Jarratt, BIT 11, 1971), which keeps a bracket and
    so cannot oscillate as plain substitution does when the loss rises steeply with R.
    Returns (temps_c, over_cap): points whose root lies above the cap are held at the cap.
    """
    g = np.broadcast_to(np.asarray(conductance_w_k, dtype=float), (n,))
    f_of = lambda idx, t: ambient_c + loss_w(idx, t) / g[idx] - t  # noqa: E731
    idx = np.arange(n)
    lo = np.full(n, float(ambient_c))
    f_lo = f_of(idx, lo)
    temps = lo.copy()
    over = np.zeros(n, dtype=bool)
    todo = f_lo > TEMPERATURE_TOL_K
    # One substitution step gives a better far end than the cap for most points.
    hi = np.minimum(ambient_c + np.maximum(f_lo, 0.0) + TEMPERATURE_TOL_K, TEMPERATURE_CAP_C)
    f_hi = np.zeros(n)
    if todo.any():
        f_hi[todo] = f_of(idx[todo], hi[todo])
    past = todo & (f_hi > 0)  # the root lies beyond the first step: bracket up to the cap
    if past.any():
        lo[past], f_lo[past] = hi[past], f_hi[past]
        hi[past] = TEMPERATURE_CAP_C
        f_hi[past] = f_of(idx[past], hi[past])
        capped = past & (f_hi > 0)
        over[capped], temps[capped], todo[capped] = True, TEMPERATURE_CAP_C, False
    side = np.zeros(n)
    for _ in range(60):
        active = todo & (np.abs(hi - lo) > TEMPERATURE_TOL_K)
        if not active.any():
            break
        a = idx[active]
        t = hi[a] - f_hi[a] * (hi[a] - lo[a]) / (f_hi[a] - f_lo[a])
        f = f_of(a, t)
        done = np.abs(f) <= TEMPERATURE_TOL_K
        lower = f > 0  # the root is above t
        lo_new, hi_new = np.where(lower, t, lo[a]), np.where(lower, hi[a], t)
        flo_new, fhi_new = np.where(lower, f, f_lo[a]), np.where(lower, f_hi[a], f)
        # Illinois: halve the end that stayed put twice running.
        fhi_new = np.where(lower & (side[a] > 0), fhi_new / 2, fhi_new)
        flo_new = np.where(~lower & (side[a] < 0), flo_new / 2, flo_new)
        side[a] = np.where(lower, 1.0, -1.0)
        lo[a], hi[a], f_lo[a], f_hi[a] = lo_new, hi_new, flo_new, fhi_new
        temps[a] = t
        todo[a[done]] = False
    still = todo & ~over
    temps[still] = (lo[still] + hi[still]) / 2
    return temps, over


def magnet_br_coefficient_per_k(spec: Spec) -> float:
    """Reversible temperature coefficient of Br (1/K): the grade's; for a bare remanence_t,
    NdFeB's above 0.8 T and hard ferrite's below (layout.materials)."""
    return magnet_family(spec).br_temp_coeff_per_k


def magnet_br_span(spec: Spec) -> tuple[float, float]:
    """The grade's published Br range over its typical value; (1, 1) for a bare remanence_t."""
    mg = spec.magnets
    if not mg.grade or mg.remanence_t is not None:
        return (1.0, 1.0)
    g = MAGNET_GRADES[mg.grade]
    return (g.br_range_t[0] / g.remanence_t, g.br_range_t[1] / g.remanence_t)


CURVE_POINTS = 24
_CONNECTION = {"star": "star", "delta": "delta", "single_phase": "single"}


@dataclass(frozen=True)
class OperatingPoint:
    rpm: float
    dc_voltage_v: float
    dc_current_a: float
    dc_power_w: float
    copper_loss_w: float
    rectifier_loss_w: float
    efficiency: float
    phase_current_rms_a: float
    current_density_a_mm2: float
    coil_temperature_c: float  # TEMPERATURE_CAP_C where temperature_over_cap
    open_circuit_line_rms_v: float
    temperature_over_cap: bool = False  # the steady state lies above TEMPERATURE_CAP_C
    loop_loss_w: float = 0.0  # part of copper_loss_w: current circulating round a closed delta
    steel_loss_w: float = 0.0  # eddy and hysteresis loss of a stationary steel plate
    shaft_power_w: float = 0.0  # mechanical input: output plus every loss
    magnet_temperature_c: float = 20.0  # the magnets' steady temperature (layout.thermal)
    conductor_eddy_w: float = 0.0  # eddy currents in the wire itself (layout.losses)
    mechanical_w: float = 0.0  # bearings and windage
    delivered_w: float | None = None  # out of the converter (target.kind = "converter"), else None

    @property
    def temperature_words(self) -> str:
        """The coil temperature for a reader, with what it is worth: "about 66 °C (rough
        estimate)", or where the estimate stops."""
        if self.temperature_over_cap:
            return f"over {TEMPERATURE_CAP_C:g} °C (the estimate means nothing there)"
        return f"about {self.coil_temperature_c:.0f} °C (rough estimate)"


@dataclass(frozen=True)
class Prediction:
    turns_per_coil: int
    wire: Wire
    series_coils: int  # coils in series in one path
    parallel_paths: int
    coil_resistance_ohm: float  # 20 °C
    phase_resistance_ohm: float  # 20 °C, one phase winding with its paths
    coil_inductance_mh: float
    phase_inductance_mh: float
    copper_fill: float  # copper area / window actually used
    wire_length_per_phase_m: float
    copper_mass_kg: float  # all coils
    rated_rpm: float
    max_rpm: float
    cut_in_rpm: float
    cut_in_voltage_v: float  # rectified open-circuit voltage that defines cut-in
    open_circuit_phase_rms_v: float  # at rated_rpm
    open_circuit_line_rms_v: float  # at rated_rpm
    open_circuit_line_rms_at_max_v: float
    open_circuit_dc_peak_at_max_v: float  # rectified (peak line) at max_rpm
    phase_thd: float
    line_thd: float
    emf: PhaseEmf  # per turn per rad/s
    rated: OperatingPoint
    curve: tuple[OperatingPoint, ...]
    electrical_hz_at_rated: float
    br_per_k: float = 0.0  # the magnets' reversible Br coefficient, 1/K
    br_span: tuple[float, float] = (1.0, 1.0)  # the grade's Br range over its typical value
    ambient_c: float = 20.0
    saturation_derate: float = 1.0  # EMF left by a saturated steel plate (design.saturation_derate)

    def open_circuit_line_rms_at(self, rpm: float, magnet_c: float = 20.0) -> float:
        """Open-circuit line voltage (V rms) at `rpm` with the magnets at `magnet_c`, typical Br:
        proportional to speed and to Br, which falls by br_per_k per K over 20 °C."""
        return self.open_circuit_line_rms_v * rpm / self.rated_rpm * (1 + self.br_per_k * (magnet_c - 20.0))

    @property
    def magnet_temperature_c(self) -> float:
        """The magnets' temperature at the rated point (layout.thermal)."""
        return self.rated.magnet_temperature_c

    @property
    def open_circuit_line_rms_warm_v(self) -> float:
        """At rated speed with the magnets as warm as the rated load makes them."""
        return self.open_circuit_line_rms_at(self.rated_rpm, self.magnet_temperature_c)

    @property
    def cut_in_warm_rpm(self) -> float:
        """The cut-in with the magnets as warm as the rated load makes them."""
        return self.cut_in_rpm / (1 + self.br_per_k * (self.magnet_temperature_c - 20.0))

    def open_circuit_band_v(self, rpm: float, cold_c: float, warm_c: float) -> tuple[float, float]:
        """Open-circuit line voltage (V rms) at `rpm` over the grade's Br range, from its
        weakest magnets at `warm_c` to its strongest at `cold_c`."""
        lo, hi = self.br_span
        return self.open_circuit_line_rms_at(rpm, warm_c) * lo, self.open_circuit_line_rms_at(
            rpm, cold_c
        ) * hi

    def phase_emf_v(self, rpm: float) -> np.ndarray:
        """Open-circuit EMF of each phase over one electrical period at `rpm`."""
        return self.emf.phase_v * self.turns_per_coil * rpm * 2 * math.pi / 60

    def line_emf_v(self, rpm: float) -> np.ndarray:
        """Open-circuit EMF between line terminals over one electrical period at `rpm` (V)."""
        return self.emf.line_v * self.turns_per_coil * rpm * 2 * math.pi / 60

    @property
    def bridge(self) -> BridgeRating:
        """The least rating (V, A) for a diode bridge on this winding, from its curve."""
        top = max(self.curve, key=lambda op: op.dc_current_a)
        return bridge_rating(self.open_circuit_dc_peak_at_max_v, top.dc_current_a, top.rpm)


def _omega(rpm):
    return np.asarray(rpm, dtype=float) * 2 * math.pi / 60


# Round wire wound by hand fills at most about 0.75 of a window (the fill factor's bound;
# perfect square packing gives π/4): coils given as built must fit within it.
MAX_COPPER_FILL = 0.75


def as_built_wire(spec: Spec) -> Wire | None:
    """The wire of [coils] as the file gives it; None where the model chooses it."""
    c = spec.coils
    if c.wire_diameter_mm is None:
        return None
    return Wire(f"{c.wire_diameter_mm:g} mm", c.wire_diameter_mm, c.strands_in_hand)


def _copper(spec: Spec, geo: Geometry, layout: Layout, turns: int, chosen: Wire | None = None):
    """Wire, R at 20 °C and L of a coil and a phase, for `turns` per coil; None if no wire fits.
    `chosen`: the wire already picked for these turns."""
    st = spec.stator
    area = st.fill_factor * geo.coil.window_mm2 / turns
    wire = chosen or as_built_wire(spec)
    if wire is None:
        wire = choose_wire(area, st.wire_standard, st.max_wire_diameter_mm)
    elif turns * wire.copper_mm2 > MAX_COPPER_FILL * geo.coil.window_mm2:
        return None
    if wire is None:
        return None
    r_coil = coil_resistance_ohm(turns, geo.coil.mean_turn_length_mm, wire)
    l_coil = wheeler_inductance_h(
        turns,
        geo.coil.mean_turn_length_mm / (2 * math.pi),
        geo.coil.thickness_mm,
        geo.coil.leg_width_mm,
    )
    n_ser = layout.series_coils_per_path
    a = layout.parallel_paths
    return wire, r_coil, l_coil, n_ser * r_coil / a, n_ser * l_coil / a


def _rectified_peak_per_turn(emf: PhaseEmf) -> float:
    """Peak of the bridge's open-circuit output per turn per rad/s: the largest line voltage."""
    return float(np.abs(emf.line_v).max())


def _curve_rpms(spec: Spec, cut_in: float) -> np.ndarray:
    ta = spec.target
    lo = 0.5 * cut_in if ta.kind in ("battery", "converter") else 0.2 * ta.rated_rpm
    rpms = np.linspace(lo, ta.max_rpm, CURVE_POINTS)
    return np.unique(np.round(np.concatenate([rpms, [ta.rated_rpm]])))


def _simulate(spec, layout, emf, turns, r20_phase, l_phase, rpms, load: Load, temps_c):
    """Bridge output at each rpm with the phase resistance at each point's temperature."""
    p = layout.pole_pairs
    w = _omega(rpms)
    waves = emf.phase_v[None, :, :] * (turns * w)[:, None, None]
    alpha = copper_resistivity(np.asarray(temps_c)) / copper_resistivity(20.0)
    return simulate_rectifier(
        waves,
        frequency_hz=electrical_hz(p, rpms),
        resistance_ohm=r20_phase * alpha,
        inductance_h=l_phase,
        connection=_CONNECTION[spec.connection.kind],
        diode_drop_v=spec.target.diode_drop_v,
        load=load,
    )


def _harmonic_rms(wave: np.ndarray) -> np.ndarray:
    """RMS of each harmonic k = 0, 1, … of one period sampled evenly, (m//2+1,); the DC and an
    even count's Nyquist bin are dropped (a rotating machine's EMF has neither)."""
    m = wave.shape[-1]
    amp = np.abs(np.fft.rfft(wave)) * math.sqrt(2) / m
    amp[0] = 0.0
    if m % 2 == 0:
        amp[-1] = 0.0
    return amp


def _ac_line_output(spec, layout, emf, turns, r_phase, l_phase, rpm, load_ohm):
    """Balanced resistive load per phase, solved harmonic by harmonic (exact: linear circuit).

    Each harmonic k of the phase EMF E_k drives I_k = E_k / (R + R_L + j k ω_e L) through a
    winding and its share of the load, for the harmonics the terminals see (for three
    phases, those that are not multiples of 3). The triplen harmonics are the mean EMF ē of
    the three phases: with a floating star they drive nothing; round a closed delta KVL gives
    3 (R i0 + L di0/dt) = 3 ē, so i0_k = ē_k / (R + j k ω_e L) circulates inside the windings,
    heats them and never reaches the load (the same loop current the rectifier path adds,
    circuit._loop_current). Arrays over the points of `rpm`; `r_phase` may be per point.
    Returns (e_ph, i_load, v_ph, i_loop): rms phase EMF, winding current reaching the load,
    phase voltage across the load and the delta's circulating current, all rms over the
    harmonics.
    """
    w = np.atleast_1d(_omega(rpm))
    we = w * layout.pole_pairs
    k = np.arange(emf.samples // 2 + 1)[None, :]
    mean = emf.phase_v.mean(axis=0)
    seen = _harmonic_rms(emf.phase_v[0] - mean if layout.phases == 3 else emf.phase_v[0])
    e_k = seen[None, :] * (turns * w)[:, None]
    r = np.broadcast_to(np.asarray(r_phase, dtype=float), np.shape(w))[:, None]
    x_k = k * we[:, None] * l_phase
    i_k = e_k / np.hypot(r + load_ohm, x_k)
    i_load = np.sqrt((i_k**2).sum(axis=1))
    i_loop = _loop_current_rms(spec, layout, emf, turns, r_phase, l_phase, rpm)
    e_ph = float(rms(emf.phase_v[0])) * turns * w
    return e_ph, i_load, i_load * load_ohm, i_loop


def _loop_current_rms(spec, layout, emf, turns, r_phase, l_phase, rpm) -> np.ndarray:
    """RMS current circulating round a closed delta at each point of `rpm`, A; zeros for star
    and single phase. i0_k = ē_k / (R + j k ω_e L) for each harmonic of the mean EMF ē of the
    three phases (KVL round the loop; circuit._loop_current solves the same in the time
    domain). It flows whatever the load, so its copper loss is the delta's own cost."""
    w = np.atleast_1d(_omega(rpm))
    if layout.phases != 3 or spec.connection.kind != "delta":
        return np.zeros(np.shape(w))
    k = np.arange(emf.samples // 2 + 1)[None, :]
    r = np.broadcast_to(np.asarray(r_phase, dtype=float), np.shape(w))[:, None]
    x_k = k * (w * layout.pole_pairs)[:, None] * l_phase
    e0_k = _harmonic_rms(emf.phase_v.mean(axis=0))[None, :] * (turns * w)[:, None]
    return np.sqrt(((e0_k / np.hypot(r, x_k)) ** 2).sum(axis=1))


def predict(
    spec: Spec,
    geo: Geometry,
    layout: Layout,
    emf: PhaseEmf,
    plate: PlateFlux | None = None,
    rated_only: bool = False,
    fmap: FluxMap | None = None,
    rotor_mass_kg: float = 0.0,
) -> Prediction:
    """Size the winding for the target and predict its output over the speed range.

    `plate`: the flux a stationary steel plate carries (layout.steel), whose eddy and
    hysteresis loss drags on the rotor and heats the stator; None where no steel stands still.
    `rated_only`: the curve holds the rated point alone (a quick comparison).
    `fmap` gives the wire's own eddy loss (layout.losses) and `rotor_mass_kg` the bearings';
    without them those losses are left out.
    """
    extra = (fmap, rotor_mass_kg)
    ta = spec.target
    vf = ta.diode_drop_v
    per_turn_peak = _rectified_peak_per_turn(emf)
    given = spec.coils.turns_per_coil  # coils as built: predicted, not sized
    if ta.kind == "battery":
        v_cut = ta.battery_v + 2 * vf
        turns = given or max(1, round(v_cut / (per_turn_peak * _omega(ta.cut_in_rpm))))
        load = Load("battery", ta.battery_resistance_ohm + cable_resistance_ohm(spec.source), ta.battery_v)
        return _evaluate(spec, geo, layout, emf, turns, v_cut, load, per_turn_peak, plate, rated_only, extra)
    if ta.kind == "converter":
        turns = given or _turns_for_converter(spec, per_turn_peak)
        return _converter_evaluate(spec, geo, layout, emf, turns, per_turn_peak, plate, rated_only, extra)
    # A loaded target must hold with the coils warm: size at ambient, then again at the
    # coil temperature the rated point reaches, until the rated point meets the target.
    size_c = ta.ambient_c
    alpha = magnet_br_coefficient_per_k(spec)
    size_k = 1 + alpha * (ta.ambient_c - 20.0)  # the magnets' Br ratio to size with
    for _ in range(4):
        if ta.kind == "dc":
            v_cut = ta.voltage_v + 2 * vf
            turns = given or _turns_for_dc(spec, geo, layout, emf, per_turn_peak, size_c, size_k)
            load = Load("resistor", ta.voltage_v / ta.rated_current_a)
        else:
            v_cut = ta.voltage_v * math.sqrt(2)
            turns = given or _turns_for_ac(spec, geo, layout, emf, size_c, size_k)
            load = None
        pred = _evaluate(spec, geo, layout, emf, turns, v_cut, load, per_turn_peak, plate, rated_only, extra)
        if given or pred.rated.dc_voltage_v >= ta.voltage_v * (1 - 1e-9):
            break
        size_c = pred.rated.coil_temperature_c
        size_k = 1 + alpha * (pred.rated.magnet_temperature_c - 20.0)
    return pred


def curve_at(
    spec: Spec,
    geo,
    layout,
    emf,
    pred: Prediction,
    rpms,
    plate=None,
    fmap=None,
    rotor_mass_kg=0.0,
    temps_c=None,
    bus_v=None,
):
    """The machine `pred` sized (its turns and wire) evaluated at each of `rpms` (> 0), with
    the coils at each point's steady temperature, or at `temps_c` where given (a quick
    evaluation between steady ones): the points a source drives it at. A converter holds
    the bus at `bus_v` where given, else at its best level at each speed."""
    ta = spec.target
    vf = ta.diode_drop_v
    extra = (fmap, rotor_mass_kg)
    at = np.asarray(rpms, dtype=float)
    if ta.kind == "converter":
        return _converter_evaluate(
            spec, geo, layout, emf, pred.turns_per_coil, _rectified_peak_per_turn(emf), plate,
            extra=extra, at_rpm=at, wire=pred.wire, temps_c=temps_c, bus_v=bus_v,
        ).curve  # fmt: skip
    if ta.kind == "battery":
        v_cut = ta.battery_v + 2 * vf
        load = Load("battery", ta.battery_resistance_ohm + cable_resistance_ohm(spec.source), ta.battery_v)
    elif ta.kind == "dc":
        v_cut = ta.voltage_v + 2 * vf
        load = Load("resistor", ta.voltage_v / ta.rated_current_a)
    else:
        v_cut, load = ta.voltage_v * math.sqrt(2), None
    return _evaluate(
        spec,
        geo,
        layout,
        emf,
        pred.turns_per_coil,
        v_cut,
        load,
        _rectified_peak_per_turn(emf),
        plate,
        extra=extra,
        at_rpm=at,
        wire=pred.wire,
        temps_c=temps_c,
    ).curve


def _settled(loss, ambient, conductance, n, temps_c):
    """settle_temperature, or the temperatures given (held there, not solved)."""
    if temps_c is None:
        return settle_temperature(loss, ambient, conductance, n)
    t = np.minimum(np.asarray(temps_c, dtype=float), TEMPERATURE_CAP_C)
    return t, t >= TEMPERATURE_CAP_C


def _evaluate(
    spec,
    geo,
    layout,
    emf,
    turns,
    v_cut,
    load,
    per_turn_peak,
    plate,
    rated_only=False,
    extra=(None, 0.0),
    at_rpm=None,
    wire=None,
    temps_c=None,
) -> Prediction:
    """Wire, R, L and the output curve for a given number of turns (at `at_rpm` when given,
    with `wire` when given: the machine already sized)."""
    ta = spec.target
    star = spec.connection.kind == "star"
    cu = _copper(spec, geo, layout, turns, wire)
    if cu is None and as_built_wire(spec) is not None:
        wire = as_built_wire(spec)
        raise spec.fail(
            "coils.wire_diameter_mm",
            spec.coils.wire_diameter_mm,
            f"{turns} turns of {wire.strands} × {wire.diameter_mm:g} mm fill "
            f"{turns * wire.copper_mm2 / geo.coil.window_mm2:.2f} of the coil window "
            f"({geo.coil.window_mm2:.0f} mm²); at most {MAX_COPPER_FILL:g} fits",
        )
    if cu is None:
        raise spec.fail(
            "stator.wire_standard",
            spec.stator.wire_standard,
            f"no standard wire fits {turns} turns in the coil window; "
            "raise stator.thickness_mm or magnets.pitch_radius_mm" + unit_slip_hint(spec),
        )
    wire, r_coil, l_coil, r_phase, l_phase = cu
    cut_in = v_cut / (per_turn_peak * turns) * 60 / (2 * math.pi)
    if at_rpm is not None:
        rpms = np.asarray(at_rpm, dtype=float)
    else:
        rpms = np.array([float(ta.rated_rpm)]) if rated_only else _curve_rpms(spec, cut_in)
    ambient = ta.ambient_c
    n_coils = len(layout.coils)
    phases = layout.phases
    line_rms_per = float(rms(emf.line_v[0])) * turns
    paths = stator_heat_paths(spec, geo, rpms)
    conductance = paths.conductance_w_k
    alpha = magnet_br_coefficient_per_k(spec)

    def warm(idx, t):
        """Turns × the magnets' Br ratio at the temperature the coils at `t` give them: the
        EMF per turn is proportional to Br (a linear field), falling by α per K."""
        t_mag = ambient + paths.magnet_rise_k(np.asarray(t) - ambient, idx)
        return turns * (1 + alpha * (t_mag - 20.0))

    # The plate is cast against the stator: its loss is taken as the stator's heat too
    # (pessimistic, as some leaves from the plate's back).
    steel_w = plate.loss_w(_omega(rpms) * layout.pole_pairs) if plate is not None else np.zeros(len(rpms))
    fmap, rotor_kg = extra
    coil = geo.coil
    r_disc = disc_outer_radius_mm(spec)
    mech_w = windage_w(rpms, r_disc, len(rotor_discs(spec))) + bearing_w(
        rpms, rotor_kg, spec.rotor.bore_diameter_mm
    )

    def eddy(idx, t):
        """The wire's own eddy loss at the coil temperature, ∝ B², so ∝ the warm Br ratio²."""
        if fmap is None:
            return np.zeros(len(np.atleast_1d(idx)))
        cold = conductor_eddy_w(fmap, coil.r_min_mm, coil.r_max_mm, wire, turns, n_coils, rpms[idx], t)
        return cold * (warm(idx, t) / turns) ** 2

    if load is not None:

        def loss(idx, t):
            sim = _simulate(spec, layout, emf, warm(idx, t), r_phase, l_phase, rpms[idx], load.take(idx), t)
            return sim.copper_loss_w + steel_w[idx] + eddy(idx, t)

        temps, over = _settled(loss, ambient, conductance, len(rpms), temps_c)
        everywhere = np.arange(len(rpms))
        res = _simulate(spec, layout, emf, warm(everywhere, temps), r_phase, l_phase, rpms, load, temps)
        dc_v, dc_i, dc_p = res.dc_voltage_v, res.dc_current_a, res.dc_power_w
        cu_w, rect_w = res.copper_loss_w, res.rectifier_loss_w
        i_ph = res.phase_current_rms_a
        src = res.source_power_w
    else:
        load_ohm = (ta.voltage_v / math.sqrt(3) if star else ta.voltage_v) / (
            ta.rated_current_a if star else ta.rated_current_a / math.sqrt(3)
        )

        def ac_line(idx, t):
            r_hot = r_phase * copper_resistivity(np.asarray(t)) / copper_resistivity(20.0)
            n_warm = warm(idx, t)
            _e, i, v, i0 = _ac_line_output(spec, layout, emf, n_warm, r_hot, l_phase, rpms[idx], load_ohm)
            return i, v, phases * (i**2 + i0**2) * r_hot, i0

        def heat(idx, t):
            return ac_line(idx, t)[2] + steel_w[idx] + eddy(idx, t)

        temps, over = _settled(heat, ambient, conductance, len(rpms), temps_c)
        i_load, v_ph, cu_w, i_loop = ac_line(np.arange(len(rpms)), temps)
        i_ph = np.hypot(i_load, i_loop)
        dc_p = phases * i_load**2 * load_ohm
        dc_v = v_ph * (math.sqrt(3) if star else 1.0)  # line voltage
        dc_i = i_load * (1.0 if star else math.sqrt(3))  # line current: the loop current stays inside
        rect_w = np.zeros(len(rpms))
        src = dc_p + cu_w
    r_hot = r_phase * copper_resistivity(temps) / copper_resistivity(20.0)
    i_loop_rms = _loop_current_rms(spec, layout, emf, warm(np.arange(len(rpms)), temps), r_hot, l_phase, rpms)
    loop_w = phases * i_loop_rms**2 * r_hot
    magnet_c = ambient + paths.magnet_rise_k(temps - ambient)
    eddy_w = eddy(np.arange(len(rpms)), temps)
    shaft = src + steel_w + eddy_w + mech_w
    eff = np.where(shaft > 1e-9, dc_p / np.maximum(shaft, 1e-12), 0.0)
    density = i_ph / layout.parallel_paths / wire.copper_mm2
    columns = {
        "rpm": rpms,
        "dc_voltage_v": dc_v,
        "dc_current_a": dc_i,
        "dc_power_w": dc_p,
        "copper_loss_w": cu_w,
        "rectifier_loss_w": rect_w,
        "efficiency": eff,
        "phase_current_rms_a": i_ph,
        "current_density_a_mm2": density,
        "coil_temperature_c": temps,
        "open_circuit_line_rms_v": line_rms_per * _omega(rpms),
        "loop_loss_w": loop_w,
        "steel_loss_w": steel_w,
        "shaft_power_w": shaft,
        "magnet_temperature_c": magnet_c,
        "conductor_eddy_w": eddy_w,
        "mechanical_w": mech_w,
    }
    curve = tuple(
        OperatingPoint(
            **{name: float(col[k]) for name, col in columns.items()}, temperature_over_cap=bool(over[k])
        )
        for k in range(len(rpms))
    )
    rated = _nearest(curve, ta.rated_rpm)
    w_rated, w_max = _omega(ta.rated_rpm), _omega(ta.max_rpm)
    mlt_m = geo.coil.mean_turn_length_mm / 1000
    n_phase_coils = layout.coils_per_phase[0]
    copper_m3 = n_coils * turns * mlt_m * wire.copper_mm2 * 1e-6
    return Prediction(
        turns_per_coil=turns,
        wire=wire,
        series_coils=layout.series_coils_per_path,
        parallel_paths=layout.parallel_paths,
        coil_resistance_ohm=r_coil,
        phase_resistance_ohm=r_phase,
        coil_inductance_mh=l_coil * 1e3,
        phase_inductance_mh=l_phase * 1e3,
        copper_fill=turns * wire.copper_mm2 / geo.coil.window_mm2,
        wire_length_per_phase_m=n_phase_coils * turns * mlt_m * wire.strands,
        copper_mass_kg=copper_m3 * COPPER_DENSITY_G_CM3 * 1000,
        rated_rpm=ta.rated_rpm,
        max_rpm=ta.max_rpm,
        cut_in_rpm=cut_in,
        cut_in_voltage_v=v_cut,
        open_circuit_phase_rms_v=float(rms(emf.phase_v[0])) * turns * float(w_rated),
        open_circuit_line_rms_v=line_rms_per * float(w_rated),
        open_circuit_line_rms_at_max_v=line_rms_per * float(w_max),
        open_circuit_dc_peak_at_max_v=per_turn_peak * turns * float(w_max),
        phase_thd=thd(emf.phase_v[0]),
        line_thd=thd(emf.line_v[0]),
        emf=emf,
        rated=rated,
        curve=curve,
        electrical_hz_at_rated=float(electrical_hz(layout.pole_pairs, ta.rated_rpm)),
        br_per_k=alpha,
        br_span=magnet_br_span(spec),
        ambient_c=ambient,
    )


def _turns_for_converter(spec, per_turn_peak: float) -> int:
    """Most turns whose open-circuit bus at max_rpm (the runaway speed, with a source) stays
    within `converter.SIZE_SHARE` of the converter's max_input_v: the most voltage, and so
    the earliest start, the converter survives unloaded."""
    ta = spec.target
    turns = conv.most_turns(ta, per_turn_peak * _omega(ta.max_rpm))
    if turns < 1:
        one = per_turn_peak * _omega(ta.max_rpm) - 2 * ta.diode_drop_v
        raise spec.fail(
            "target.max_input_v",
            ta.max_input_v,
            f"one turn per coil already gives {one:.1f} V open-circuit at {ta.max_rpm:g} rpm; "
            "choose a converter with a higher input limit, or fewer magnets or coils in series",
        )
    return turns


def _converter_evaluate(
    spec, geo, layout, emf, turns, per_turn_peak, plate, rated_only=False, extra=(None, 0.0),
    at_rpm=None, wire=None, temps_c=None, bus_v=None,
) -> Prediction:  # fmt: skip
    """The output with a converter on the bus (layout.converter): at the level `bus_v` where
    given (a source's run at one level; one per point of `at_rpm` if a sequence), else at
    each speed the level the converter picks from `converter.BUS_LEVELS` across its window,
    evaluated in one batch (fixed tracking: input_v, and the levels above only at the
    speeds where the current limit pushes the bus up)."""
    ta = spec.target
    vf = ta.diode_drop_v
    v_cut = conv.start_v(ta) + 2 * vf
    per_rpm = per_turn_peak * turns * 2 * math.pi / 60

    def held(rpm, v, temps):
        """The machine into the bus held at `v` (one per point of `rpm`)."""
        load = Load(
            "battery", conv.BUS_OHM, float(v) if np.ndim(v) == 0 else tuple(np.asarray(v, dtype=float))
        )
        return _evaluate(
            spec, geo, layout, emf, turns, v_cut, load, per_turn_peak, plate,
            extra=extra, at_rpm=rpm, wire=wire, temps_c=temps,
        )  # fmt: skip

    if bus_v is not None:
        pred = held(at_rpm, bus_v, temps_c)
        points = tuple(_converter_point(ta, op, conv.open_bus_v(per_rpm, op.rpm, vf)) for op in pred.curve)
        return dataclasses.replace(pred, curve=points, rated=_nearest(points, ta.rated_rpm))
    if at_rpm is not None:
        rpms = np.asarray(at_rpm, dtype=float)
    elif rated_only:
        rpms = np.array([float(ta.rated_rpm)])
    else:
        rpms = _curve_rpms(spec, v_cut / per_rpm)
    temps = None if temps_c is None else np.asarray(temps_c, dtype=float)
    open_v = conv.open_bus_v(per_rpm, rpms, vf)
    levels = conv.bus_levels(ta, open_v)
    n, g = levels.shape
    want = conv.limit_w(ta) / ta.efficiency
    ops: dict[tuple[int, int], OperatingPoint] = {}
    bus_w = np.full((n, g), -1.0)  # -1: a level not tried there

    def fill(rows, first):
        """Evaluate the levels from `first` at the points `rows`, in one batch."""
        cols = g - first
        pred = held(
            np.repeat(rpms[rows], cols), levels[rows, first:].ravel(),
            None if temps is None else np.repeat(temps[rows], cols),
        )  # fmt: skip
        for j, op in enumerate(pred.curve):
            i, k = rows[j // cols], first + j % cols
            ops[i, k], bus_w[i, k] = op, op.dc_power_w
        return pred

    everywhere = np.arange(n)
    if ta.tracking == "fixed":
        pred = held(rpms, levels[:, 0], temps)
        for i, op in enumerate(pred.curve):
            ops[i, 0], bus_w[i, 0] = op, op.dc_power_w
        over = everywhere[bus_w[:, 0] >= want * (1 - 1e-9)]
        if len(over) and g > 1:
            fill(over, 1)
    else:
        pred = fill(everywhere, 0)
    best = conv.pick(ta, levels, bus_w)
    points = [ops[i, k] for i, k in enumerate(best)]
    # At its limit the converter holds the bus between the last level that reaches the limit
    # and the next: found there by interpolating the draw, and evaluated once more.
    limited = [
        i for i, k in enumerate(best) if bus_w[i, k] > want and k + 1 < g and 0 <= bus_w[i, k + 1] < want
    ]
    if limited:
        at = np.array(limited)
        k = best[at]
        p0, p1 = bus_w[at, k], bus_w[at, k + 1]
        v = levels[at, k] + (levels[at, k + 1] - levels[at, k]) * (p0 - want) / (p0 - p1)
        again = held(rpms[at], v, None if temps is None else temps[at])
        for i, op in zip(limited, again.curve, strict=True):
            points[i] = op
    points = tuple(_converter_point(ta, op, open_v[i]) for i, op in enumerate(points))
    return dataclasses.replace(pred, curve=points, rated=_nearest(points, ta.rated_rpm))


def _nearest(points, rpm: float) -> OperatingPoint:
    return min(points, key=lambda op: abs(op.rpm - rpm))


def _converter_point(ta, op: OperatingPoint, open_v: float) -> OperatingPoint:
    """The bus point with what the converter delivers; an idle bus sits at the open-circuit
    peak, not at the level the converter would hold."""
    idle = op.dc_power_w <= 1e-6
    return dataclasses.replace(
        op,
        delivered_w=float(conv.delivered_w(ta, op.dc_power_w)),
        dc_voltage_v=float(open_v) if idle else op.dc_voltage_v,
    )


def _turns_for_dc(spec, geo, layout, emf, per_turn_peak, temp_c: float, warm: float = 1.0) -> int:
    """Fewest turns that deliver target.voltage_v at rated_current_a and rated_rpm."""
    ta = spec.target
    load = Load("resistor", ta.voltage_v / ta.rated_current_a)

    def volts(n: int) -> float | None:
        cu = _copper(spec, geo, layout, n)
        if cu is None:
            return None
        res = _simulate(spec, layout, emf, n * warm, cu[3], cu[4], np.array([ta.rated_rpm]), load, [temp_c])
        return float(res.dc_voltage_v[0])

    return _fewest_turns(
        spec, volts, (ta.voltage_v + 2 * ta.diode_drop_v) / (per_turn_peak * _omega(ta.rated_rpm))
    )


def _turns_for_ac(spec, geo, layout, emf, temp_c: float, warm: float = 1.0) -> int:
    ta = spec.target
    star = spec.connection.kind == "star"
    v_ph = ta.voltage_v / math.sqrt(3) if star else ta.voltage_v
    i_ph = ta.rated_current_a if star else ta.rated_current_a / math.sqrt(3)

    def volts(n: int) -> float | None:
        cu = _copper(spec, geo, layout, n)
        if cu is None:
            return None
        r_hot = cu[3] * copper_resistivity(temp_c) / copper_resistivity(20.0)
        _, _, v, _ = _ac_line_output(spec, layout, emf, n * warm, r_hot, cu[4], ta.rated_rpm, v_ph / i_ph)
        return float(v[0]) * (ta.voltage_v / v_ph)

    e_turn = float(rms(emf.phase_v[0])) * float(_omega(ta.rated_rpm))
    return _fewest_turns(spec, volts, v_ph / e_turn)


def _fewest_turns(spec, volts, start: float) -> int:
    """Smallest N with volts(N) ≥ target.

    The loaded voltage rises with N, peaks when the winding's resistance grows (as N²)
    towards the load's, then falls; `start` (the open-circuit estimate) lies on the rising
    side, so grow geometrically until the target is met, then bisect.
    """
    target = spec.target.voltage_v
    lo, hi = 0, max(1, math.ceil(start))
    v_prev = -1.0
    while True:
        v = volts(hi)
        if v is not None and v >= target:
            break
        if v is None or v <= v_prev:
            best = max(v_prev, v or 0.0)
            raise spec.fail(
                "target.voltage_v",
                target,
                f"this machine gives at most about {best:.1f} V at {spec.target.rated_current_a:g} A "
                f"and {spec.target.rated_rpm:g} rpm; lower the current, raise the speed or use "
                "larger magnets" + unit_slip_hint(spec),
            )
        lo, v_prev, hi = hi, v, max(hi + 1, math.ceil(hi * 1.3))
    while hi - lo > 1:
        mid = (lo + hi) // 2
        v = volts(mid)
        if v is not None and v >= target:
            hi = mid
        else:
            lo = mid
    return hi
