import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from layout.circuit import Load, RectifierResult, simulate_rectifier

SHIFTS = np.array([0.0, -2.0 * np.pi / 3.0, 2.0 * np.pi / 3.0])


def balanced_emf(rms_v, n_samples=240, third=0.0, fifth=0.0):
    """(n_points, 3, n_samples) balanced phase EMFs, fundamental RMS rms_v per point.

    third and fifth are harmonic amplitudes relative to the fundamental.
    """
    rms = np.atleast_1d(np.asarray(rms_v, dtype=float))
    theta = 2.0 * np.pi * np.arange(n_samples) / n_samples
    angle = theta[None, :] + SHIFTS[:, None]
    shape = np.sin(angle) + third * np.sin(3.0 * angle) + fifth * np.sin(5.0 * angle)
    return math.sqrt(2.0) * rms[:, None, None] * shape[None]


def single_emf(rms_v, n_samples=240):
    rms = np.atleast_1d(np.asarray(rms_v, dtype=float))
    theta = 2.0 * np.pi * np.arange(n_samples) / n_samples
    return math.sqrt(2.0) * rms[:, None, None] * np.sin(theta)[None, None, :]


def balance_error(res: RectifierResult) -> np.ndarray:
    return res.source_power_w - (res.dc_power_w + res.copper_loss_w + res.rectifier_loss_w)


@pytest.mark.parametrize(("connection", "line_over_phase"), [("star", math.sqrt(3.0)), ("delta", 1.0)])
def test_ideal_three_phase_bridge_average(connection, line_over_phase):
    phase_rms = np.array([5.0, 40.0])
    load = Load("resistor", 10.0)
    res = simulate_rectifier(
        balanced_emf(phase_rms), np.array([50.0, 50.0]), 1e-4, 0.0, connection, 0.0, load
    )
    v_ll = line_over_phase * phase_rms
    # Mohan, Undeland & Robbins, Power Electronics, 3rd ed., 2003, ch. 5: V_do = 3*sqrt(2)/pi*V_LL
    expected = 3.0 * math.sqrt(2.0) / math.pi * v_ll
    np.testing.assert_allclose(res.dc_voltage_v, expected, rtol=5e-3)
    np.testing.assert_allclose(res.dc_current_a, res.dc_voltage_v / 10.0, rtol=1e-9)


def test_ideal_single_phase_bridge_average():
    rms = np.array([3.0, 230.0])
    res = simulate_rectifier(
        single_emf(rms), np.array([50.0, 60.0]), 1e-4, 0.0, "single", 0.0, Load("resistor", 25.0)
    )
    # Mohan, Undeland & Robbins, Power Electronics, 3rd ed., 2003, ch. 5: V_do = 2*sqrt(2)/pi*V_s
    np.testing.assert_allclose(res.dc_voltage_v, 2.0 * math.sqrt(2.0) / math.pi * rms, rtol=5e-3)


def test_single_phase_battery_closed_form():
    # L = 0: current (E sin θ − V0)/(R + R_b) while E|sin θ| > V0 = V_b + 2 V_f. Integrating
    # over the two conduction intervals per period gives
    # I = 2/(π (R + R_b)) · (E cos α − V0 (π/2 − α)), α = asin(V0/E).
    r, r_bat, v_bat, v_f = 0.3, 0.1, 12.0, 0.7
    peak = np.array([16.0, 25.0, 60.0])
    res = simulate_rectifier(
        single_emf(peak / math.sqrt(2.0)),
        np.full(3, 40.0),
        r,
        0.0,
        "single",
        v_f,
        Load("battery", r_bat, v_bat),
    )
    v0 = v_bat + 2.0 * v_f
    alpha = np.arcsin(v0 / peak)
    expected = 2.0 / (math.pi * (r + r_bat)) * (peak * np.cos(alpha) - v0 * (math.pi / 2 - alpha))
    np.testing.assert_allclose(res.dc_current_a, expected, rtol=2e-3)
    assert res.periods_simulated == 1


@pytest.mark.parametrize("connection", ["star", "delta", "single"])
def test_battery_blocks_below_cut_in(connection):
    v_bat, v_f = 24.0, 0.8
    threshold = v_bat + 2.0 * v_f
    # peak line (terminal-to-terminal) voltage per unit phase RMS
    peak_per_rms = math.sqrt(6.0) if connection == "star" else math.sqrt(2.0)
    rms = np.array([0.97, 1.03]) * threshold / peak_per_rms
    emf = single_emf(rms) if connection == "single" else balanced_emf(rms)
    res = simulate_rectifier(
        emf, np.array([30.0, 30.0]), 0.5, 2e-3, connection, v_f, Load("battery", 0.05, v_bat)
    )
    below = 0
    assert res.dc_current_a[below] == pytest.approx(0.0, abs=1e-12)
    assert res.dc_power_w[below] == pytest.approx(0.0, abs=1e-9)
    assert res.source_power_w[below] == pytest.approx(0.0, abs=1e-9)
    assert res.copper_loss_w[below] == pytest.approx(0.0, abs=1e-12)
    assert res.phase_current_rms_a[below] == pytest.approx(0.0, abs=1e-9)
    assert res.dc_voltage_v[below] == pytest.approx(v_bat, abs=1e-9)
    assert res.dc_current_a[1] > 1e-3


@pytest.mark.parametrize("connection", ["star", "delta", "single"])
@pytest.mark.parametrize(
    "load", [Load("battery", 0.08, 24.0), Load("resistor", 4.0)], ids=["battery", "resistor"]
)
def test_energy_balance(connection, load):
    freq = np.array([25.0, 50.0, 80.0])
    rms = 1.0 * freq
    emf = single_emf(rms) if connection == "single" else balanced_emf(rms, fifth=0.05)
    res = simulate_rectifier(emf, freq, 0.6, 4e-3, connection, 0.9, load)
    assert res.converged.all()
    assert np.all(res.source_power_w > 10.0)
    assert np.all(np.abs(balance_error(res)) <= 5e-3 * res.source_power_w)


@pytest.mark.parametrize("connection", ["star", "delta", "single"])
def test_current_rises_with_speed(connection):
    freq = np.linspace(5.0, 120.0, 24)
    rms = 0.35 * freq  # EMF proportional to speed
    emf = single_emf(rms) if connection == "single" else balanced_emf(rms)
    res = simulate_rectifier(emf, freq, 0.5, 2e-3, connection, 0.7, Load("battery", 0.05, 12.0))
    conducting = res.dc_current_a > 1e-9
    assert not conducting[0] and conducting[-1]
    first = int(np.argmax(conducting))
    assert conducting[first:].all()
    assert np.all(np.diff(res.dc_current_a[first:]) > 0.0)
    assert np.all(res.dc_current_a[:first] < 1e-9)


def test_delta_third_harmonic_circulates():
    freq = np.array([30.0, 60.0, 90.0])
    rms = 0.8 * freq
    r, ind, third = 0.4, 3e-3, 0.1
    load = Load("battery", 0.05, 24.0)
    plain = simulate_rectifier(balanced_emf(rms), freq, r, ind, "delta", 0.8, load)
    with_third = simulate_rectifier(balanced_emf(rms, third=third), freq, r, ind, "delta", 0.8, load)
    # KVL round the closed delta: 3(R i0 + L di0/dt) = e_A + e_B + e_C, so the zero-sequence
    # current i0 is set by the triplen EMF alone and the line-line voltages the bridge sees
    # lose it. The third harmonic of RMS E3 in each phase therefore adds 3 R E3²/|Z3|²,
    # |Z3| = |R + j3ωL|, to the copper loss and leaves the DC side unchanged.
    e3 = third * rms
    z3_sq = r**2 + (3.0 * 2.0 * np.pi * freq * ind) ** 2
    extra = with_third.copper_loss_w - plain.copper_loss_w
    assert np.all(extra > 0.0)
    np.testing.assert_allclose(extra, 3.0 * r * e3**2 / z3_sq, rtol=1e-3)
    np.testing.assert_allclose(with_third.dc_current_a, plain.dc_current_a, rtol=1e-6)


def test_star_ignores_third_harmonic():
    freq = np.array([30.0, 60.0, 90.0])
    rms = 0.8 * freq
    load = Load("battery", 0.05, 24.0)
    plain = simulate_rectifier(balanced_emf(rms), freq, 0.4, 3e-3, "star", 0.8, load)
    with_third = simulate_rectifier(balanced_emf(rms, third=0.1), freq, 0.4, 3e-3, "star", 0.8, load)
    # The floating star point takes up the triplen EMF: line-line voltages are unchanged.
    np.testing.assert_allclose(with_third.copper_loss_w, plain.copper_loss_w, rtol=1e-6)
    np.testing.assert_allclose(with_third.dc_current_a, plain.dc_current_a, rtol=1e-6)


@pytest.mark.parametrize(
    ("connection", "line_over_phase"),
    [("single", 1.0), ("star", 1.0), ("delta", math.sqrt(3.0))],
)
def test_shorted_bridge_follows_phasor_impedance(connection, line_over_phase):
    # With V_f = 0 and 0 V on the DC side the bridge joins all terminals, so each winding is
    # shorted and carries E/|R + jωL| (steady-state phasor solution of a series RL circuit).
    freq = np.array([20.0, 50.0, 100.0])
    rms = np.array([2.0, 5.0, 10.0])
    r, ind = 0.4, 3e-3
    emf = single_emf(rms) if connection == "single" else balanced_emf(rms)
    res = simulate_rectifier(emf, freq, r, ind, connection, 0.0, Load("battery", 1e-6, 0.0))
    expected = rms / np.hypot(r, 2.0 * np.pi * freq * ind)
    np.testing.assert_allclose(res.phase_current_rms_a, expected, rtol=2e-3)
    # Delta line currents are differences of phase currents 120° apart: √3 larger.
    np.testing.assert_allclose(res.line_current_rms_a, line_over_phase * res.phase_current_rms_a, rtol=1e-3)
    assert res.converged.all() and res.periods_simulated >= 2


# 11 samples are the fewest that carry the 5th harmonic without aliasing.
@pytest.mark.parametrize("n_samples", [11, 24, 25, 480])
def test_result_does_not_depend_on_sampling(n_samples):
    freq = np.array([30.0, 70.0])
    rms = 0.4 * freq
    load = Load("battery", 0.05, 12.0)
    args = (freq, 0.4, 2e-3, "star", 0.7, load)
    reference = simulate_rectifier(balanced_emf(rms, 240, fifth=0.08), *args)
    other = simulate_rectifier(balanced_emf(rms, n_samples, fifth=0.08), *args)
    np.testing.assert_allclose(other.dc_current_a, reference.dc_current_a, rtol=1e-9)
    np.testing.assert_allclose(other.copper_loss_w, reference.copper_loss_w, rtol=1e-9)


@pytest.mark.parametrize("n_samples", [6, 12])
def test_sampled_nyquist_harmonic_keeps_its_amplitude(n_samples):
    # A cosine at half the sampling rate is interpolated as that cosine (trigonometric
    # interpolation splits the Nyquist bin evenly between ±n/2), so the delta's circulating
    # current from a triplen harmonic sampled twice per cycle matches the finely sampled one.
    freq = np.array([40.0])
    rms = np.array([20.0])

    order = n_samples // 2  # 3 or 6: triplen, so it circulates round the delta

    def emf(n):
        theta = 2.0 * np.pi * np.arange(n) / n
        angle = theta[None, :] + SHIFTS[:, None]
        shape = np.sin(angle) + 0.2 * np.cos(order * angle)
        return math.sqrt(2.0) * rms[:, None, None] * shape[None]

    args = (freq, 0.3, 1e-3, "delta", 0.7, Load("battery", 0.05, 12.0))
    reference = simulate_rectifier(emf(240), *args)
    coarse = simulate_rectifier(emf(n_samples), *args)
    np.testing.assert_allclose(coarse.copper_loss_w, reference.copper_loss_w, rtol=1e-9)
    np.testing.assert_allclose(coarse.dc_current_a, reference.dc_current_a, rtol=1e-9)


def terminal_spread(emf, connection):
    """Largest open-circuit voltage between any two bridge terminals, (n_points,), V."""
    if connection == "single":
        return np.abs(emf[:, 0]).max(axis=-1)
    if connection == "star":
        return (emf.max(axis=1) - emf.min(axis=1)).max(axis=-1)
    # Open delta terminals see e_k minus the loop's mean EMF, which the circulating current
    # drops across the windings.
    return np.abs(emf - emf.mean(axis=1, keepdims=True)).max(axis=(1, 2))


@settings(max_examples=60, deadline=None)
@given(
    connection=st.sampled_from(["star", "delta", "single"]),
    r=st.floats(0.05, 3.0),
    time_constant_s=st.floats(0.0, 0.02),
    v_f=st.floats(0.0, 1.5),
    v_bat=st.floats(0.0, 48.0),
    r_bat=st.floats(0.01, 1.0),
    volts_per_hz=st.floats(0.05, 2.0),
    base_hz=st.floats(10.0, 80.0),
)
def test_property_cut_in_and_energy_balance(
    connection, r, time_constant_s, v_f, v_bat, r_bat, volts_per_hz, base_hz
):
    ind = time_constant_s * r
    freq = base_hz * np.array([0.5, 1.0, 2.0])
    rms = volts_per_hz * freq
    emf = single_emf(rms) if connection == "single" else balanced_emf(rms, third=0.05)
    res = simulate_rectifier(emf, freq, r, ind, connection, v_f, Load("battery", r_bat, v_bat))
    assert res.converged.all()
    assert np.all(res.dc_current_a >= 0.0)
    # From rest, the bridge conducts exactly when some terminal pair's EMF exceeds the
    # battery plus two diode drops; the margins keep clear of the threshold itself.
    spread, threshold = terminal_spread(emf, connection), v_bat + 2.0 * v_f
    # Below cut-in a delta still carries its circulating current, whose rounding leaks
    # into the line currents.
    rounding = 1e-12 * (1.0 + res.phase_current_rms_a)
    assert np.all((res.dc_current_a <= rounding)[spread < 0.99 * threshold])
    assert np.all(res.dc_current_a[spread > 1.01 * threshold] > 0.0)
    assert np.all(np.abs(balance_error(res)) <= 5e-3 * res.source_power_w + 1e-9)


GOOD = dict(
    phase_emf_v=balanced_emf([10.0]),
    frequency_hz=np.array([50.0]),
    resistance_ohm=0.5,
    inductance_h=1e-3,
    connection="star",
    diode_drop_v=0.7,
    load=Load("battery", 0.05, 12.0),
)


@pytest.mark.parametrize(
    "change",
    [
        {"phase_emf_v": balanced_emf([10.0])[0]},
        {"phase_emf_v": single_emf([10.0])},
        {"connection": "single"},
        {"connection": "zigzag"},
        {"phase_emf_v": balanced_emf([10.0], n_samples=2)},
        {"phase_emf_v": np.full((1, 3, 24), np.nan)},
        {"frequency_hz": np.array([50.0, 60.0])},
        {"frequency_hz": np.array([-50.0])},
        {"frequency_hz": 50.0},
        {"resistance_ohm": -0.1},
        {"resistance_ohm": np.array([0.5, 0.5])},
        {"inductance_h": -1e-3},
        {"inductance_h": np.array([1e-3])},
        {"resistance_ohm": 0.0, "inductance_h": 0.0},
        {"diode_drop_v": -0.1},
        {"load": "battery"},
        {"steps_per_period": 4},
        {"steps_per_period": 240.0},
        {"max_periods": 0},
        {"tol": 0.0},
    ],
)
def test_bad_inputs_raise(change):
    with pytest.raises(ValueError):
        simulate_rectifier(**{**GOOD, **change})


@pytest.mark.parametrize(
    "kwargs",
    [
        {"kind": "capacitor", "resistance_ohm": 1.0},
        {"kind": "resistor", "resistance_ohm": 0.0},
        {"kind": "battery", "resistance_ohm": -1.0, "voltage_v": 12.0},
        {"kind": "battery", "resistance_ohm": 0.1, "voltage_v": -12.0},
        {"kind": "battery", "resistance_ohm": math.inf, "voltage_v": 12.0},
    ],
)
def test_bad_load_raises(kwargs):
    with pytest.raises(ValueError):
        Load(**kwargs)


def test_good_inputs_run():
    # The baseline of test_bad_inputs_raise must itself be valid, or every case passes.
    res = simulate_rectifier(**GOOD)
    assert res.dc_current_a.shape == (1,) and res.converged.all()


def _resistance_between(edges, a, b, n_nodes):
    """Two-terminal resistance of a resistor network by nodal analysis (Kirchhoff), solved
    directly: 1 A into node a, node b grounded."""
    g = np.zeros((n_nodes, n_nodes))
    for i, j, r in edges:
        g[i, i] += 1 / r
        g[j, j] += 1 / r
        g[i, j] -= 1 / r
        g[j, i] -= 1 / r
    keep = [k for k in range(n_nodes) if k != b]
    rhs = np.zeros(n_nodes)
    rhs[a] = 1.0
    v = np.linalg.solve(g[np.ix_(keep, keep)], rhs[keep])
    return v[keep.index(a)]


@pytest.mark.parametrize("r", [0.1, 1.7, 25.0])
def test_line_resistance_matches_nodal_analysis(r):
    from layout.circuit import line_resistance_ohm

    # Star: lines 0, 1, 2 to the star point 3. Delta: one phase between each pair of lines.
    star = [(0, 3, r), (1, 3, r), (2, 3, r)]
    delta = [(0, 1, r), (1, 2, r), (2, 0, r)]
    assert line_resistance_ohm(r, "star") == pytest.approx(_resistance_between(star, 0, 1, 4))
    assert line_resistance_ohm(r, "delta") == pytest.approx(_resistance_between(delta, 0, 1, 3))
    assert line_resistance_ohm(r, "single") is None


def test_bridge_rating_keeps_the_margins_of_common_practice():
    from layout.circuit import bridge_rating

    # Twice the open-circuit peak, 1.5 times the highest current (common practice).
    br = bridge_rating(61.0, 12.0, 400.0)
    assert (br.voltage_v, br.current_a) == pytest.approx((122.0, 18.0))
    assert (br.open_circuit_peak_v, br.max_current_a, br.max_current_rpm) == (61.0, 12.0, 400.0)
