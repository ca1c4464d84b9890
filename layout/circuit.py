"""Alternator phase windings feeding a full-wave diode bridge, simulated in time.

Each phase winding is its open-circuit EMF e(t) in series with a resistance R and an
inductance L. The windings are connected in star (floating star point), in delta, or as a
single phase, and their terminals feed a full-wave bridge: every terminal reaches the + rail
through a diode (terminal → rail) and the − rail, the 0 V reference, through another
(rail → terminal). A conducting diode drops a constant V_f, has no on-resistance and no
reverse current. The DC side is a battery (open-circuit voltage V_b behind R_b) or a
resistor.

Time discretisation: companion model (Dommel, "Digital computer solution of electromagnetic
transients in single- and multiphase networks", IEEE Trans. PAS-88(4), 1969). With the
second-order backward differentiation formula (Gear, Numerical Initial Value Problems in
Ordinary Differential Equations, Prentice-Hall, 1971),

    L di/dt ≈ L (3 i[n+1] − 4 i[n] + i[n−1]) / (2 Δt),

each winding at step n+1 becomes a Thevenin source E' = e(t[n+1]) + L (4 i[n] − i[n−1]) / (2 Δt)
behind R' = R + 3 L / (2 Δt). R' does not change from step to step, so for every diode state
the network's solution is a fixed affine map of E', computed once per operating point.

Why BDF2 rather than backward Euler or the trapezoidal rule: backward Euler dissipates
L (Δi)²/(2 Δt) per step inside the inductance, which at 240 steps per period removes about
π/240 of the reactive power and spoils the energy balance by one to several per cent; the
trapezoidal rule conserves inductor energy but its inductor voltage alternates sign from step
to step when a diode holds a winding current at zero (Marti & Lin, "Suppression of numerical
oscillations in the EMTP", IEEE Trans. Power Systems 4(2), 1989), which makes the floating
terminal voltages, and so the diode states, chatter. BDF2 is L-stable like backward Euler;
for a current harmonic at angular frequency ω it acts like an extra series resistance
Re{L (3 − 4 e^(−jθ) + e^(−2jθ)) / (2 Δt)} ≈ ω L θ³ / 4, θ = ω Δt, which at 240 steps per
period is 5·10⁻⁶ ω L for the fundamental and 1.2·10⁻⁴ ω L for the 3rd harmonic.

Diode states: every terminal is on the + rail, on the − rail or floating, so there are 3^T
states (T terminals). For each state the discretised network is linear; its solution is
accepted when every conducting diode carries forward current and every floating terminal
lies between −V_f and V_dc + V_f. For the discretised network this is exact, not an
iteration (the time discretisation above is the only approximation): at each step the
network is resistors with positive R', sources and ideal diodes with offsets, i.e. a
monotone network, and its branch currents are unique (Minty, "Monotone networks",
Proc. R. Soc. Lond. A 257, 1960). So any state whose linear solution satisfies the diode
conditions gives those unique currents, and one such state always exists. When rounding
leaves no state exactly consistent, the state violating its conditions least is taken.

The state with every terminal floating (EMF below the battery voltage) leaves the winding
network's potential undefined and its nodal matrix singular; it is represented instead by
the states that put one terminal on the − rail and leave the others floating. Kirchhoff's
current law then forces that terminal's current to zero, and such a state is consistent
exactly when the all-floating one is, with the lowest terminal at −V_f. All currents are
then zero and the DC voltage is V_b across a battery, 0 across a resistor.

Delta: summing the three winding equations round the closed loop cancels every terminal
voltage, 3 (R i0 + L di0/dt) = e_A + e_B + e_C with i0 the mean winding current, so the
circulating current depends on the mean EMF ē (for a balanced set, its triplen harmonics)
and nothing else, and the line-line voltages the bridge sees are those of e_k − ē. The
bridge is therefore stepped with ē removed, and i0, solved harmonic by harmonic with the
impedance R + j k ω L, is added to every winding current: its copper loss is exact and it
needs no settling time.
"""

from __future__ import annotations

import functools
import itertools
import math
from dataclasses import dataclass

import numpy as np

CONNECTIONS = ("star", "delta", "single")
LOAD_KINDS = ("battery", "resistor")

# Absolute floors for the period-to-period changes tested for convergence, so that points
# below cut-in (zero current) count as converged.
_CONVERGED_ABS_A = 1e-6
_CONVERGED_ABS_W = 1e-6
# Bound on elements of one batched evaluation when the network has no memory (L = 0).
_CHUNK_ELEMENTS = 1 << 21


# Diode bridge ratings: twice the highest open-circuit voltage, 1.5 times the highest
# current (common practice).
BRIDGE_VOLTAGE_FACTOR = 2.0
BRIDGE_CURRENT_FACTOR = 1.5


@dataclass(frozen=True)
class BridgeRating:
    """The least a diode bridge should be rated for (V, A), and what sets it."""

    voltage_v: float  # BRIDGE_VOLTAGE_FACTOR × the open-circuit rectified peak at max_rpm
    current_a: float  # BRIDGE_CURRENT_FACTOR × the highest DC current on the output curve
    open_circuit_peak_v: float
    max_current_a: float
    max_current_rpm: float


def bridge_rating(open_circuit_peak_v: float, max_current_a: float, max_current_rpm: float) -> BridgeRating:
    """Minimum bridge rating (V, A) with the margins of common practice."""
    return BridgeRating(
        BRIDGE_VOLTAGE_FACTOR * open_circuit_peak_v,
        BRIDGE_CURRENT_FACTOR * max_current_a,
        open_circuit_peak_v,
        max_current_a,
        max_current_rpm,
    )


def line_resistance_ohm(phase_resistance_ohm: float, connection: str) -> float | None:
    """Resistance (Ω) measured between two line terminals of the joined winding.

    Star: two phases in series, 2R. Delta: one phase in parallel with the other two in
    series, R·2R/3R = 2R/3. Single phase has no line pair other than the winding: None.
    """
    if connection == "star":
        return 2 * phase_resistance_ohm
    if connection == "delta":
        return 2 * phase_resistance_ohm / 3
    return None


@dataclass(frozen=True)
class Load:
    """DC-side load of the bridge.

    kind: "battery" or "resistor".
    resistance_ohm: battery internal resistance plus wiring, or the load resistance; Ω, > 0.
    voltage_v: battery open-circuit voltage, V, ≥ 0; ignored for "resistor". A sequence gives
        each operating point its own (a converter holding the bus at a different level at
        each point); `take` picks the points of a subset.
    """

    kind: str
    resistance_ohm: float
    voltage_v: float | tuple[float, ...] = 0.0

    def __post_init__(self) -> None:
        if self.kind not in LOAD_KINDS:
            raise ValueError(f"load kind must be one of {LOAD_KINDS}, got {self.kind!r}")
        r = float(self.resistance_ohm)
        if not (math.isfinite(r) and r > 0.0):
            raise ValueError(f"load resistance must be finite and > 0 Ω, got {r}")
        if self.kind == "battery":
            v = np.asarray(self.voltage_v, dtype=float)
            if not (np.isfinite(v).all() and (v >= 0.0).all()):
                raise ValueError(f"battery voltage must be finite and ≥ 0 V, got {self.voltage_v}")

    @property
    def source_voltage_v(self) -> float | np.ndarray:
        """EMF on the DC side, V: the battery voltage (one per point where given so), or 0 for a
        resistor."""
        if self.kind != "battery":
            return 0.0
        v = np.asarray(self.voltage_v, dtype=float)
        return float(v) if v.ndim == 0 else v

    def take(self, idx) -> Load:
        """The load at the points `idx` of a per-point load; itself when it is the same at all."""
        if np.ndim(self.voltage_v) == 0:
            return self
        return Load(self.kind, self.resistance_ohm, tuple(np.asarray(self.voltage_v, dtype=float)[idx]))


@dataclass(frozen=True)
class RectifierResult:
    """Averages over the last simulated electrical period, one entry per operating point.

    dc_voltage_v: mean DC-side voltage across the battery terminals / resistor, V.
    dc_current_a: mean DC current into the battery / resistor, A.
    dc_power_w: mean of v_dc · i_dc, W (includes the battery's internal resistance loss).
    copper_loss_w: mean of Σ R i² over the phase windings, W (includes delta circulating
        current).
    rectifier_loss_w: mean of V_f times the sum of conducting diode currents, W.
    source_power_w: mean of Σ e i over the phase windings, W: the power the EMFs deliver.
    phase_current_rms_a: RMS winding current, largest over the phases, A.
    line_current_rms_a: RMS current in the lines to the bridge, largest over the lines, A.
    periods_simulated: electrical periods run (1 when L = 0: the network has no memory).
    converged: whether the point met the tolerance before max_periods ran out.
    """

    dc_voltage_v: np.ndarray
    dc_current_a: np.ndarray
    dc_power_w: np.ndarray
    copper_loss_w: np.ndarray
    rectifier_loss_w: np.ndarray
    source_power_w: np.ndarray
    phase_current_rms_a: np.ndarray
    line_current_rms_a: np.ndarray
    periods_simulated: int
    converged: np.ndarray


@dataclass(frozen=True)
class _Topology:
    n_terminals: int
    # (windings, nodes): +1 at the node a winding's current leaves by, −1 where it enters.
    # Nodes are the terminals, then the star point if any, then the + rail (last).
    incidence: np.ndarray
    # (states, terminals): +1 on the + rail, −1 on the − rail, 0 floating.
    states: np.ndarray

    @property
    def n_windings(self) -> int:
        return self.incidence.shape[0]

    @property
    def n_nodes(self) -> int:
        return self.incidence.shape[1]


@functools.cache
def _topology(connection: str) -> _Topology:
    if connection == "star":
        n_terminals, ends = 3, ((0, 3), (1, 3), (2, 3))  # (leaves by, enters by); star = 3
    elif connection == "delta":
        # Winding A from V to U, B from W to V, C from U to W: v_U − v_V = e_A on no load.
        n_terminals, ends = 3, ((0, 1), (1, 2), (2, 0))
    else:
        n_terminals, ends = 2, ((0, 1),)
    n_nodes = 1 + max(max(pair) for pair in ends) + 1
    incidence = np.zeros((len(ends), n_nodes))
    for k, (out, into) in enumerate(ends):
        incidence[k, out] = 1.0
        incidence[k, into] = -1.0
    states = np.array([s for s in itertools.product((1, -1, 0), repeat=n_terminals) if any(s)], dtype=float)
    return _Topology(n_terminals, incidence, states)


def _resample_periodic(x: np.ndarray, n_new: int) -> np.ndarray:
    """Trigonometric interpolation of one period sampled uniformly along the last axis."""
    n = x.shape[-1]
    if n == n_new:
        return np.array(x, dtype=float)
    spectrum = np.fft.rfft(x, axis=-1)
    out = np.zeros(x.shape[:-1] + (n_new // 2 + 1,), dtype=complex)
    m = min(spectrum.shape[-1], out.shape[-1])
    out[..., :m] = spectrum[..., :m]
    if n % 2 == 0 and n < n_new:
        # The old Nyquist bin stands for a cosine shared between +n/2 and −n/2; on a finer
        # grid those are distinct bins, each with half of it.
        out[..., n // 2] *= 0.5
    if n_new % 2 == 0 and n_new < n:
        # On the coarser grid this bin would act as a Nyquist term and alias; drop it
        # along with everything above.
        out[..., n_new // 2] = 0.0
    return np.fft.irfft(out * (n_new / n), n=n_new, axis=-1)


def _state_maps(
    topo: _Topology,
    r_comp: np.ndarray,
    diode_drop_v: float,
    load: Load,
) -> tuple[np.ndarray, np.ndarray]:
    """Affine maps E' → (winding currents, diode-condition slacks) for every diode state.

    Returns gain (P, K·S, W) and offset (P, K·S), rows ordered quantity-major: the first W
    quantities are the winding currents (A), the next 2T the slacks of the diode conditions
    (A; voltage margins divided by R'), ≥ 0 when the state is consistent.
    """
    d = topo.incidence
    states = topo.states
    n_states, n_nodes, n_w, n_t = len(states), topo.n_nodes, topo.n_windings, topo.n_terminals
    rail = n_nodes - 1
    vf = diode_drop_v
    on_plus = states == 1
    on_minus = states == -1
    floating = states == 0

    # Node potentials v = Q u + q0 (unknowns u: one slot per node, unused slots padded).
    q = np.zeros((n_states, n_nodes, n_nodes))
    q0 = np.zeros((n_states, n_nodes))
    for s in range(n_states):
        for t in range(n_t):
            if floating[s, t]:
                q[s, t, t] = 1.0
            elif on_plus[s, t]:
                q[s, t, rail] = 1.0
                q0[s, t] = vf
            else:
                q0[s, t] = -vf
        for j in range(n_t, n_nodes):
            q[s, j, j] = 1.0
    unused = q.sum(axis=1) == 0.0
    qt = q.transpose(0, 2, 1)
    lap = d.T @ d
    # Nodal equations scaled by R': Qᵀ DᵀD Q u + (R'/R_b) u_rail = Qᵀ Dᵀ(E' − D q0) + R'/R_b V_b
    a_state = qt @ lap @ q + unused[:, :, None] * np.eye(n_nodes)
    rho = r_comp / load.resistance_ohm
    rail_unit = np.zeros((n_nodes, n_nodes))
    rail_unit[rail, rail] = 1.0
    a = a_state[None] + rho[:, None, None, None] * rail_unit
    a_inv = np.linalg.inv(a)
    b_e = qt @ d.T
    b_0 = -(qt @ lap @ q0[..., None])[..., 0][None] + np.zeros((len(rho), 1, 1))
    b_0[:, :, rail] += (rho * load.source_voltage_v)[:, None]

    u_gain = a_inv @ b_e
    u_off = (a_inv @ b_0[..., None])[..., 0]
    v_gain = q @ u_gain
    v_off = (q @ u_off[..., None])[..., 0] + q0
    rc4 = r_comp[:, None, None, None]
    rc3 = r_comp[:, None, None]
    i_gain = (np.eye(n_w) - d @ v_gain) / rc4
    i_off = -(d @ v_off[..., None])[..., 0] / rc3
    to_lines = d.T[:n_t]
    inj_gain = to_lines @ i_gain
    inj_off = (to_lines @ i_off[..., None])[..., 0]

    sign = (on_plus.astype(float) - on_minus.astype(float))[None]
    fl = floating.astype(float)[None]
    vt_gain, vt_off = v_gain[:, :, :n_t], v_off[:, :, :n_t]
    vr_gain, vr_off = v_gain[:, :, rail : rail + 1], v_off[:, :, rail : rail + 1]
    low_gain = sign[..., None] * inj_gain + fl[..., None] * vt_gain / rc4
    low_off = sign * inj_off + fl * (vt_off + vf) / rc3
    high_gain = sign[..., None] * inj_gain + fl[..., None] * (vr_gain - vt_gain) / rc4
    high_off = sign * inj_off + fl * (vr_off + vf - vt_off) / rc3

    gain = np.concatenate([i_gain, low_gain, high_gain], axis=2)  # (P, S, K, W)
    offset = np.concatenate([i_off, low_off, high_off], axis=2)  # (P, S, K)
    n_p, n_k = gain.shape[0], gain.shape[2]
    gain = np.ascontiguousarray(gain.transpose(0, 2, 1, 3)).reshape(n_p, n_k * n_states, n_w)
    offset = np.ascontiguousarray(offset.transpose(0, 2, 1)).reshape(n_p, n_k * n_states)
    return gain, offset


def _loop_current(e_next: np.ndarray, r: np.ndarray, ind: float, freq: np.ndarray) -> np.ndarray:
    """Periodic circulating current of a closed delta, (N, P), A, at the instants of e_next.

    Summing the three winding equations round the loop cancels every terminal voltage:
    3 (R i0 + L di0/dt) = e_A + e_B + e_C. Solved harmonic by harmonic with the impedance
    R + j k ω L, which is exact for the trigonometric interpolant of the EMF. A DC EMF round
    a loop with no resistance has no periodic current; a rotating machine's EMF has no DC
    part, so that bin, and the unresolved Nyquist bin, are left out.
    """
    n_steps = e_next.shape[0]
    mean_emf = np.fft.rfft(e_next.mean(axis=2), axis=0)  # (N//2+1, P)
    harmonic = np.arange(mean_emf.shape[0])[:, None]
    impedance = r + 1j * harmonic * (2.0 * np.pi * freq) * ind
    solvable = np.abs(impedance) > 0.0
    if n_steps % 2 == 0:
        solvable[-1] = False
    current = np.where(solvable, mean_emf / np.where(solvable, impedance, 1.0), 0.0)
    return np.fft.irfft(current, n=n_steps, axis=0)


def _memoryless_currents(
    gain: np.ndarray, offset: np.ndarray, e_next: np.ndarray, n_states: int
) -> np.ndarray:
    """Winding currents (N, P, W) when L = 0: every step is independent of the last."""
    n_steps, n_p, n_w = e_next.shape
    n_k = gain.shape[1] // n_states
    out = np.empty((n_steps, n_p, n_w))
    chunk = max(1, _CHUNK_ELEMENTS // max(1, gain.shape[0] * gain.shape[1]))
    for start in range(0, n_steps, chunk):
        e = e_next[start : start + chunk].transpose(1, 2, 0)  # (P, W, n)
        y = (gain @ e + offset[:, :, None]).reshape(n_p, n_k, n_states, -1)
        best = y[:, n_w:].min(axis=1).argmax(axis=1)  # (P, n)
        picked = np.take_along_axis(y[:, :n_w], best[:, None, None, :], axis=2)[:, :, 0]
        out[start : start + chunk] = picked.transpose(2, 0, 1)
    return out


def _validate(
    phase_emf_v,
    frequency_hz,
    resistance_ohm,
    inductance_h,
    connection,
    diode_drop_v,
    load,
    steps_per_period,
    max_periods,
    tol,
):
    if connection not in CONNECTIONS:
        raise ValueError(f"connection must be one of {CONNECTIONS}, got {connection!r}")
    if not isinstance(load, Load):
        raise ValueError(f"load must be a Load, got {type(load).__name__}")
    emf = np.asarray(phase_emf_v, dtype=float)
    if emf.ndim != 3:
        raise ValueError(f"phase_emf_v must have shape (n_points, n_phases, n_samples), got {emf.shape}")
    n_points, n_phases, n_samples = emf.shape
    want_phases = 1 if connection == "single" else 3
    if n_phases != want_phases:
        raise ValueError(
            f"connection {connection!r} needs {want_phases} phase(s), phase_emf_v has {n_phases}"
        )
    if n_points < 1:
        raise ValueError("phase_emf_v holds no operating points")
    if n_samples < 3:
        raise ValueError(f"need at least 3 EMF samples per period, got {n_samples}")
    if not np.all(np.isfinite(emf)):
        raise ValueError("phase_emf_v must be finite")

    freq = np.asarray(frequency_hz, dtype=float)
    if freq.shape != (n_points,):
        raise ValueError(f"frequency_hz must have shape ({n_points},), got {freq.shape}")
    if not np.all(np.isfinite(freq) & (freq > 0.0)):
        raise ValueError("frequency_hz must be finite and > 0 Hz")
    held = np.asarray(load.source_voltage_v)
    if held.ndim != 0 and held.shape != (n_points,):
        raise ValueError(f"a per-point load voltage must have shape ({n_points},), got {held.shape}")

    r = np.asarray(resistance_ohm, dtype=float)
    if r.ndim == 0:
        r = np.full(n_points, float(r))
    if r.shape != (n_points,):
        raise ValueError(f"resistance_ohm must be a scalar or shape ({n_points},), got {r.shape}")
    if not np.all(np.isfinite(r) & (r >= 0.0)):
        raise ValueError("resistance_ohm must be finite and ≥ 0 Ω")

    ind = np.asarray(inductance_h, dtype=float)
    if ind.ndim != 0:
        raise ValueError(f"inductance_h must be a scalar, got shape {ind.shape}")
    ind = float(ind)
    if not (math.isfinite(ind) and ind >= 0.0):
        raise ValueError(f"inductance_h must be finite and ≥ 0 H, got {ind}")
    if ind == 0.0 and np.any(r == 0.0):
        raise ValueError("a winding with R = 0 and L = 0 short-circuits the bridge inputs")

    vf = np.asarray(diode_drop_v, dtype=float)
    if vf.ndim != 0 or not (math.isfinite(float(vf)) and float(vf) >= 0.0):
        raise ValueError(f"diode_drop_v must be a finite scalar ≥ 0 V, got {diode_drop_v!r}")

    if isinstance(steps_per_period, bool) or not isinstance(steps_per_period, int | np.integer):
        raise ValueError(f"steps_per_period must be an integer, got {steps_per_period!r}")
    if steps_per_period < 12:
        raise ValueError(f"steps_per_period must be ≥ 12, got {steps_per_period}")
    if isinstance(max_periods, bool) or not isinstance(max_periods, int | np.integer):
        raise ValueError(f"max_periods must be an integer, got {max_periods!r}")
    if max_periods < 1:
        raise ValueError(f"max_periods must be ≥ 1, got {max_periods}")
    tol = float(tol)
    if not (math.isfinite(tol) and tol > 0.0):
        raise ValueError(f"tol must be finite and > 0, got {tol}")
    return emf, freq, r, ind, float(vf), int(steps_per_period), int(max_periods), tol


def simulate_rectifier(
    phase_emf_v,
    frequency_hz,
    resistance_ohm,
    inductance_h,
    connection,
    diode_drop_v,
    load,
    steps_per_period=240,
    max_periods=60,
    tol=1e-4,
) -> RectifierResult:
    """Periodic steady state of phase windings rectified by a full-wave diode bridge.

    phase_emf_v: (n_points, n_phases, n_samples) open-circuit EMF of each phase winding, V,
        over one electrical period; sample j at t = j / (n_samples · f). Resampled to
        steps_per_period by trigonometric interpolation, so any n_samples ≥ 3 works.
        n_phases is 3 for "star" or "delta", 1 for "single".
    frequency_hz: (n_points,) electrical frequency, Hz.
    resistance_ohm: per phase winding, Ω; scalar or (n_points,).
    inductance_h: per phase winding, H; scalar, may be 0.
    connection: "star" (windings from a floating star point to U, V, W), "delta" (A between
        U and V, B between V and W, C between W and U; triplen EMF harmonics drive a
        circulating current), or "single" (one winding between two terminals).
    diode_drop_v: constant forward drop of each conducting diode, V, ≥ 0.
    load: battery or resistor on the DC side.

    Runs whole periods from zero current until, for every point, the period-mean DC current
    changes from the previous period by at most max(tol · I, 1e-6 A) and the period-mean
    EMF power by at most max(tol · |P|, 1e-6 W), or until max_periods. With L = 0 the
    network has no memory and one period is the steady state. A delta's circulating
    current is solved exactly from KVL round the loop and added to the stepped currents
    (see the module docstring).
    Method and sources: see the module docstring. The ideal-bridge averages the tests check
    against are 2√2/π·V and 3√2/π·V_LL (Mohan, Undeland & Robbins, Power Electronics:
    Converters, Applications, and Design, 3rd ed., Wiley, 2003, ch. 5).
    """
    emf, freq, r, ind, vf, n_steps, max_periods, tol = _validate(
        phase_emf_v,
        frequency_hz,
        resistance_ohm,
        inductance_h,
        connection,
        diode_drop_v,
        load,
        steps_per_period,
        max_periods,
        tol,
    )
    topo = _topology(connection)
    n_p, n_s = emf.shape[0], len(topo.states)

    dt = 1.0 / (freq * n_steps)
    r_comp = r + 1.5 * ind / dt
    history_gain = (0.5 * ind / dt)[:, None]
    gain, offset = _state_maps(topo, r_comp, vf, load)
    # e_next[n] is the EMF at t[n+1], the instant step n solves for.
    e_next = np.ascontiguousarray(np.roll(_resample_periodic(emf, n_steps), -1, axis=-1).transpose(2, 0, 1))
    if connection == "delta":
        # KVL round the closed delta fixes its circulating current from the mean EMF alone,
        # and the line-line voltages the bridge sees lack that mean. So the bridge is
        # stepped with the mean removed and the circulating current, solved exactly, is
        # added back: no L/R transient to wait for, no time-step error in its loss.
        loop = _loop_current(e_next, r, ind, freq)
        e_bridge = e_next - e_next.mean(axis=2, keepdims=True)
    else:
        loop = None
        e_bridge = e_next

    if ind == 0.0:
        currents = _memoryless_currents(gain, offset, e_bridge, n_s)
        periods = 1
        converged = np.ones(n_p, dtype=bool)
    else:
        currents, periods, converged = _stepped_currents(
            gain, offset, e_bridge, history_gain, topo, max_periods, tol
        )
    if loop is not None:
        currents = currents + loop[:, :, None]

    return _averages(currents, e_next, r, vf, load, topo, periods, converged)


def _stepped_currents(gain, offset, e_next, history_gain, topo, max_periods, tol):
    """BDF2 stepping by whole periods from zero current.

    Returns the last period's winding currents (N, P, W) in A, the number of periods run
    and the per-point convergence flags.
    """
    n_steps, n_p, n_w = e_next.shape
    n_s = len(topo.states)
    n_k = gain.shape[1] // n_s
    points = np.arange(n_p)
    i_now = np.zeros((n_p, n_w))
    i_before = np.zeros((n_p, n_w))
    currents = np.empty((n_steps, n_p, n_w))
    converged = np.zeros(n_p, dtype=bool)
    last = None
    periods = 0
    while periods < max_periods:
        periods += 1
        for n in range(n_steps):
            e_comp = e_next[n] + history_gain * (4.0 * i_now - i_before)
            y = (np.matmul(gain, e_comp[:, :, None])[..., 0] + offset).reshape(n_p, n_k, n_s)
            # The consistent state has every slack ≥ 0; under rounding, the least violated.
            best = y[:, n_w:].min(axis=1).argmax(axis=1)
            i_before = i_now
            i_now = y[points, :n_w, best]
            currents[n] = i_now
        mean_dc = _dc_current(currents, topo).mean(axis=0)
        # The DC current can look settled while a slowly decaying offset in the winding
        # currents still returns stored energy; the EMF power sees that energy.
        mean_emf_power = (e_next * currents).sum(axis=-1).mean(axis=0)
        if last is not None:
            dc_change = np.abs(mean_dc - last[0])
            power_change = np.abs(mean_emf_power - last[1])
            converged = (dc_change <= np.maximum(tol * mean_dc, _CONVERGED_ABS_A)) & (
                power_change <= np.maximum(tol * np.abs(mean_emf_power), _CONVERGED_ABS_W)
            )
            if converged.all():
                break
        last = (mean_dc, mean_emf_power)
    return currents, periods, converged


def _line_currents(currents: np.ndarray, topo: _Topology) -> np.ndarray:
    """Currents out of each terminal into the bridge, (N, P, T), A."""
    return currents @ topo.incidence[:, : topo.n_terminals]


def _dc_current(currents: np.ndarray, topo: _Topology) -> np.ndarray:
    # Every terminal current passes one conducting diode; the positive ones reach the + rail.
    return np.clip(_line_currents(currents, topo), 0.0, None).sum(axis=-1)


def _averages(currents, e_next, r, vf, load, topo, periods, converged) -> RectifierResult:
    lines = _line_currents(currents, topo)
    i_dc = np.clip(lines, 0.0, None).sum(axis=-1)
    v_dc = load.source_voltage_v + load.resistance_ohm * i_dc
    return RectifierResult(
        dc_voltage_v=v_dc.mean(axis=0),
        dc_current_a=i_dc.mean(axis=0),
        dc_power_w=(v_dc * i_dc).mean(axis=0),
        copper_loss_w=r * (currents**2).sum(axis=-1).mean(axis=0),
        rectifier_loss_w=vf * np.abs(lines).sum(axis=-1).mean(axis=0),
        source_power_w=(e_next * currents).sum(axis=-1).mean(axis=0),
        phase_current_rms_a=np.sqrt((currents**2).mean(axis=0)).max(axis=-1),
        line_current_rms_a=np.sqrt((lines**2).mean(axis=0)).max(axis=-1),
        periods_simulated=int(periods),
        converged=converged,
    )
