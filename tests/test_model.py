"""Turns, wire, resistance and the output curve of the demo designs and variants of them."""

from __future__ import annotations

import dataclasses
import json
import math
import tomllib

import numpy as np
import pytest
from demos import DEMOS, DESIGNS, design, variant

from fab.report import plan_json
from layout import model
from layout.circuit import Load
from layout.design import Design, compute_design
from layout.spec import DesignError, parse_spec

BATTERY_DEMOS = ("hilltop", "millrace")
INCH_MM = 25.4


def hand_copper_mm2(wire) -> float:
    return wire.strands * math.pi * wire.diameter_mm**2 / 4


# --- battery target: cut-in ------------------------------------------------------------


@pytest.mark.parametrize("name", BATTERY_DEMOS)
def test_cut_in_is_where_the_rectified_open_circuit_peak_reaches_the_battery(name):
    d = design(name)
    pr, ta = d.prediction, d.spec.target
    # physics.md "Cut-in": battery voltage plus the two diode drops in the conduction path.
    v_cut = ta.battery_v + 2 * ta.diode_drop_v
    # Open-circuit peak of the bridge output = largest line-to-line voltage; linear in rpm.
    peak_per_rpm = float(np.abs(pr.line_emf_v(1000.0)).max()) / 1000.0
    assert pr.cut_in_rpm == pytest.approx(v_cut / peak_per_rpm, rel=1e-9)
    assert pr.cut_in_voltage_v == pytest.approx(v_cut, rel=1e-12)


def simulate_at(d: Design, turns: int, rpms, load: Load, coil_c=None, magnet_c=20.0):
    """The bridge model for `turns` per coil on the design's window, the copper at `coil_c`
    (ambient if None) and the magnets at `magnet_c` (Br down by the grade's α per K)."""
    cu = model._copper(d.spec, d.geometry, d.layout, turns)
    assert cu is not None
    temps = np.full(len(rpms), d.spec.target.ambient_c if coil_c is None else coil_c)
    warm = 1 + model.magnet_br_coefficient_per_k(d.spec) * (magnet_c - 20.0)
    return model._simulate(
        d.spec, d.layout, d.prediction.emf, turns * warm, cu[3], cu[4], np.asarray(rpms), load, temps
    )


@pytest.mark.parametrize("name", ["millrace", "hilltop"])
def test_the_bridge_starts_conducting_at_the_reported_cut_in(name):
    d = design(name)
    ta, cut = d.spec.target, d.prediction.cut_in_rpm
    load = Load("battery", ta.battery_resistance_ohm, ta.battery_v)
    res = simulate_at(d, d.prediction.turns_per_coil, [0.97 * cut, 1.03 * cut], load)
    assert res.dc_current_a[0] == pytest.approx(0.0, abs=1e-9)
    assert res.dc_current_a[1] > 1e-3


@pytest.mark.parametrize("name", ["millrace", "hilltop"])
def test_curve_is_zero_below_cut_in_and_rises_above(name):
    pr = design(name).prediction
    below = [op for op in pr.curve if op.rpm < pr.cut_in_rpm]
    above = [op for op in pr.curve if op.rpm > pr.cut_in_rpm]
    assert below and above
    for op in below:
        assert op.dc_current_a == pytest.approx(0.0, abs=1e-9)
        assert op.dc_power_w == pytest.approx(0.0, abs=1e-9)
    currents = [below[-1].dc_current_a] + [op.dc_current_a for op in above]
    assert all(b > a for a, b in zip(currents, currents[1:], strict=False)), currents


@pytest.mark.parametrize("name", BATTERY_DEMOS)
def test_whole_turns_put_cut_in_within_half_a_turn_of_the_target(name):
    d = design(name)
    n = d.prediction.turns_per_coil
    assert isinstance(n, int) and n >= 1
    # Cut-in rpm goes as 1/N, so the nearest whole N is within 0.5/N of the target.
    error = abs(d.prediction.cut_in_rpm / d.spec.target.cut_in_rpm - 1)
    assert error <= 0.5 / n + 1e-12


# --- turns, copper and EMF scaling -----------------------------------------------------


def test_doubling_the_battery_doubles_turns_and_emf_and_quadruples_resistance():
    base = design("millrace")
    high = design("millrace", ("target.battery_v", 96.0))
    # Same machine: the EMF per turn per rad/s does not depend on the target.
    np.testing.assert_array_equal(base.prediction.emf.phase_v, high.prediction.emf.phase_v)
    n1, n2 = base.prediction.turns_per_coil, high.prediction.turns_per_coil
    # (96 + 1.8) / (48 + 1.8) = 1.96 times the turns, to the nearest whole turn.
    assert n2 == pytest.approx(n1 * 97.8 / 49.8, abs=1.0)
    ratio_v = high.prediction.open_circuit_phase_rms_v / base.prediction.open_circuit_phase_rms_v
    assert ratio_v == pytest.approx(n2 / n1, rel=1e-12)
    a1, a2 = hand_copper_mm2(base.prediction.wire), hand_copper_mm2(high.prediction.wire)
    ratio_r = high.prediction.phase_resistance_ohm / base.prediction.phase_resistance_ohm
    assert ratio_r == pytest.approx((n2 / n1) * (a1 / a2), rel=1e-12)
    # Standard sizes step by 92^(2/39) = 1.261 in area (ASTM B258), so about 4x.
    assert 4 / 1.27 < ratio_r < 4 * 1.27


def test_twice_the_turns_in_the_same_window():
    d = design("millrace")
    n = d.prediction.turns_per_coil
    one = model._copper(d.spec, d.geometry, d.layout, n)
    two = model._copper(d.spec, d.geometry, d.layout, 2 * n)
    # R = rho*N*l/A per coil: twice the turns on roughly half the copper each.
    ratio = two[1] / one[1]
    assert ratio == pytest.approx(2 * one[0].copper_mm2 / two[0].copper_mm2, rel=1e-12)
    assert 4 / 1.27 < ratio < 4 * 1.27  # one AWG step is 1.261 in area (ASTM B258)
    # EMF is N times the per-turn EMF.
    doubled = dataclasses.replace(d.prediction, turns_per_coil=2 * n)
    np.testing.assert_allclose(doubled.phase_emf_v(300.0), 2 * d.prediction.phase_emf_v(300.0), rtol=1e-12)


@pytest.mark.parametrize("name", DEMOS)
def test_emf_is_proportional_to_speed(name):
    d = design(name)
    pr, ta = d.prediction, d.spec.target
    np.testing.assert_allclose(pr.phase_emf_v(2 * ta.rated_rpm), 2 * pr.phase_emf_v(ta.rated_rpm))
    assert pr.open_circuit_line_rms_at_max_v / pr.open_circuit_line_rms_v == pytest.approx(
        ta.max_rpm / ta.rated_rpm, rel=1e-12
    )
    per_rpm = [op.open_circuit_line_rms_v / op.rpm for op in pr.curve]
    assert max(per_rpm) == pytest.approx(min(per_rpm), rel=1e-12)


@pytest.mark.parametrize(("name", "hz"), [("hilltop", 26.0), ("millrace", 40.0), ("pedalbox", 40.0)])
def test_electrical_frequency(name, hz):
    # Gieras, Wang & Kamper 2008: f = P * n / 120 (P magnets per disc, n rpm);
    # hand computed: 12 * 260 / 120 = 26, 16 * 300 / 120 = 40, 8 * 600 / 120 = 40 Hz.
    assert design(name).prediction.electrical_hz_at_rated == pytest.approx(hz, rel=1e-12)


# --- dc target -------------------------------------------------------------------------


def test_dc_target_is_met_with_the_fewest_turns():
    d = design("pedalbox")
    ta, n = d.spec.target, d.prediction.turns_per_coil
    assert d.prediction.rated.rpm == ta.rated_rpm
    assert d.prediction.rated.dc_voltage_v >= ta.voltage_v
    load = Load("resistor", ta.voltage_v / ta.rated_current_a)
    # At the rated point's own coil and magnet temperatures, the conditions it was sized at.
    hot = (d.prediction.rated.coil_temperature_c, d.prediction.rated.magnet_temperature_c)
    at_n = simulate_at(d, n, [ta.rated_rpm], load, *hot).dc_voltage_v[0]
    fewer = simulate_at(d, n - 1, [ta.rated_rpm], load, *hot).dc_voltage_v[0]
    assert at_n >= ta.voltage_v
    assert fewer < ta.voltage_v


def test_unreachable_dc_target_names_the_voltage_in_one_line():
    with pytest.raises(DesignError) as caught:
        compute_design(variant("pedalbox", ("target.rated_current_a", 1000.0)))
    err = caught.value
    assert err.key == "target.voltage_v"
    text = str(err)
    assert "\n" not in text
    assert text.startswith("pedalbox.toml: target.voltage_v = 13.5")
    assert "lower the current" in text


# --- energy, resistance, inductance ------------------------------------------------------


@pytest.mark.parametrize("name", DEMOS)
def test_energy_balance_at_every_curve_point(name):
    # Conservation of energy over a steady period: what the EMFs deliver goes to the load,
    # the copper and the diodes (the inductance returns what it stores); the shaft also
    # drives any stationary steel's loss.
    for op in design(name).prediction.curve:
        assert 0.0 <= op.efficiency <= 1.0
        losses = op.dc_power_w + op.copper_loss_w + op.rectifier_loss_w + op.steel_loss_w
        losses += op.conductor_eddy_w + op.mechanical_w
        assert op.shaft_power_w == pytest.approx(losses, rel=0.01, abs=1e-6)
        if op.dc_power_w < 1e-6:  # below cut-in: rounding-level currents only
            assert op.efficiency == pytest.approx(0.0, abs=1e-6)
            continue
        assert op.efficiency == pytest.approx(op.dc_power_w / losses, rel=0.01), op.rpm


RESISTANCE_CASES = [
    ("hilltop", ()),
    ("millrace", ()),
    ("pedalbox", ()),
    ("millrace", (("connection.parallel_paths", 2),)),
]


@pytest.mark.parametrize(("name", "changes"), RESISTANCE_CASES)
def test_phase_resistance_at_20c_by_hand(name, changes):
    d = design(name, *changes)
    pr, coil = d.prediction, d.geometry.coil
    paths = d.spec.connection.parallel_paths
    per_phase = d.layout.coils_per_phase[0]
    assert pr.parallel_paths == paths
    assert pr.series_coils * paths == per_phase
    # IEC 60028: 1/58 ohm mm2/m at 20 C. Coil: N turns of the mean turn length.
    r_coil = (1 / 58) * pr.turns_per_coil * coil.mean_turn_length_mm / 1000 / hand_copper_mm2(pr.wire)
    assert pr.coil_resistance_ohm == pytest.approx(r_coil, rel=1e-9)
    # Coils in series within a path add; equal paths in parallel divide.
    assert pr.phase_resistance_ohm == pytest.approx(pr.series_coils * r_coil / paths, rel=1e-9)
    assert pr.copper_fill <= d.spec.stator.fill_factor + 1e-9


@pytest.mark.parametrize("name", DEMOS)
def test_phase_inductance_by_wheeler(name):
    d = design(name)
    pr, coil = d.prediction, d.geometry.coil
    # Wheeler, Proc. IRE 16(10), 1928, in inches: the coil as the circle of equal mean
    # turn length, axial length the coil thickness, radial depth the leg width.
    a = coil.mean_turn_length_mm / (2 * math.pi) / INCH_MM
    b = coil.thickness_mm / INCH_MM
    c = coil.leg_width_mm / INCH_MM
    l_coil_uh = 0.8 * a**2 * pr.turns_per_coil**2 / (6 * a + 9 * b + 10 * c)
    assert pr.coil_inductance_mh == pytest.approx(l_coil_uh / 1000, rel=1e-9)
    paths = pr.parallel_paths
    assert pr.phase_inductance_mh == pytest.approx(pr.series_coils * l_coil_uh / 1000 / paths, rel=1e-9)


# --- line and phase voltages -------------------------------------------------------------


def test_star_line_voltage_is_root_three_times_phase():
    pr = design("millrace").prediction
    ratio = pr.open_circuit_line_rms_v / pr.open_circuit_phase_rms_v
    # Balanced star: V_line = sqrt(3) V_phase for the fundamental; triplen harmonics cancel
    # between phases, so with harmonics the ratio can only be lower (common practice).
    assert ratio == pytest.approx(math.sqrt(3), rel=0.03)
    assert ratio <= math.sqrt(3) * (1 + 1e-9)


@pytest.mark.parametrize("name", ["hilltop", "pedalbox"])
def test_delta_and_single_phase_line_voltage_is_the_phase_voltage(name):
    d = design(name)
    pr = d.prediction
    if d.spec.connection.kind == "delta":
        # Kirchhoff's voltage law round the delta: the circulating current drops the mean
        # EMF inside the windings, so each terminal pair sees e_k - mean(e) at no load.
        e = pr.phase_emf_v(pr.rated_rpm)
        expected = float(np.sqrt(np.mean((e[0] - e.mean(axis=0)) ** 2)))
        assert pr.open_circuit_line_rms_v == pytest.approx(expected, rel=1e-9)
        assert pr.open_circuit_line_rms_v <= pr.open_circuit_phase_rms_v
    else:
        assert pr.open_circuit_line_rms_v == pytest.approx(pr.open_circuit_phase_rms_v, rel=1e-12)


# --- plan --json contract ----------------------------------------------------------------


def is_number(x) -> bool:
    return isinstance(x, int | float) and not isinstance(x, bool) and math.isfinite(x)


def is_point(p, n: int) -> bool:
    return isinstance(p, list) and len(p) == n and all(is_number(v) for v in p)


@pytest.mark.parametrize("name", DEMOS)
def test_plan_json_contract(name):
    d = design(name)
    doc = json.loads(json.dumps(plan_json(d), allow_nan=False))
    el = doc["electrical"]
    assert isinstance(el["turns_per_coil"], int)
    assert isinstance(el["strands_in_hand"], int)
    for key in (
        "wire_diameter_mm",
        "phase_resistance_ohm",
        "phase_inductance_mh",
        "rated_rpm",
        "max_rpm",
        "cut_in_rpm",
        "open_circuit_phase_rms_v",
        "open_circuit_line_rms_v",
        "rated_dc_current_a",
        "rated_dc_power_w",
        "efficiency",
    ):
        assert is_number(el[key]), key
    assert el["turns_per_coil"] == d.prediction.turns_per_coil
    assert el["rated_rpm"] == d.spec.target.rated_rpm
    assert len(el["curve"]) == len(d.prediction.curve) >= 10
    for point in el["curve"]:
        for key in ("rpm", "dc_voltage_v", "dc_current_a", "dc_power_w", "efficiency"):
            assert is_number(point[key]), key
    rpms = [p["rpm"] for p in el["curve"]]
    assert rpms == sorted(rpms) and rpms[-1] == d.spec.target.max_rpm

    mag = doc["magnetics"]
    for key in ("airgap_peak_bz_t", "axial_force_n", "steel_peak_b_t"):
        assert is_number(mag[key]), key

    geo = doc["geometry"]
    discs = 2 if d.spec.rotor.topology == "two_discs" else 1
    assert len(geo["magnets"]) == discs * d.spec.magnets.count
    for m in geo["magnets"]:
        assert m["shape"] == d.spec.magnets.shape
        assert is_point(m["center_mm"], 3)
        assert is_point(m["dimension_mm"], 3 if m["shape"] == "block" else 2)
        assert is_number(m["rotation_deg"])
        assert is_number(m["polarization_t"])
    assert all(is_number(z) for z in geo["iron_planes_z_mm"])
    assert [c["index"] for c in geo["coils"]] == [c.index for c in d.layout.coils]
    for c in geo["coils"]:
        assert len(c["outline_mm"]) == len(c["hole_mm"]) >= 3
        assert all(is_point(p, 2) for p in c["outline_mm"] + c["hole_mm"])
        assert c["z_min_mm"] < c["z_max_mm"]

    assert doc["warnings"]
    for w in doc["warnings"]:
        assert set(w) == {"code", "severity", "message", "suggestions"}
        assert all(isinstance(w[k], str) and w[k] for k in ("code", "severity", "message"))
        assert w["suggestions"] is None  # computed only on request (plan --suggest, build)


def test_ac_line_target_is_met_with_the_fewest_turns():
    # A variant of millrace sized for 40 V AC line at 3 A (balanced resistive load, no
    # bridge): the fundamental phasor solution E² = (V + IR)² + (IX)² per phase.
    text = (DESIGNS / "millrace.toml").read_text(encoding="utf-8")
    text = text.replace('kind = "battery"', 'kind = "ac_line"\nvoltage_v = 40.0\nrated_current_a = 3.0')
    text = text.replace("battery_v = 48.0\n", "").replace("cut_in_rpm = 210.0\n", "")
    spec = parse_spec(tomllib.loads(text), "ac.toml")
    d = compute_design(spec)
    pr = d.prediction
    assert pr.rated.dc_voltage_v >= 40.0  # line voltage for an ac_line target
    # One turn fewer: the loaded line voltage falls short.
    cu = model._copper(spec, d.geometry, d.layout, pr.turns_per_coil - 1)
    v_ph_target = 40.0 / math.sqrt(3)
    warm = 1 + model.magnet_br_coefficient_per_k(spec) * (pr.rated.magnet_temperature_c - 20)
    _, _, v_ph, _ = model._ac_line_output(
        spec,
        d.layout,
        pr.emf,
        (pr.turns_per_coil - 1) * warm,  # the magnets as warm as at the rated point
        cu[3] * model.copper_resistivity(pr.rated.coil_temperature_c) / model.copper_resistivity(20.0),
        cu[4],
        300.0,
        v_ph_target / 3.0,
    )
    assert float(v_ph[0]) * math.sqrt(3) < 40.0


def cable_ohm(spec) -> float:
    so = spec.source
    return 0.0 if so is None else 2 * so.cable_length_m / (58 * so.cable_area_mm2)


@pytest.mark.parametrize("demo", DEMOS)
def test_coil_temperature_is_a_converged_fixed_point(demo):
    from layout.circuit import Load, simulate_rectifier
    from layout.converter import BUS_OHM
    from layout.model import _CONNECTION, TEMPERATURE_CAP_C, magnet_br_coefficient_per_k
    from layout.thermal import stator_heat_paths
    from layout.wire import copper_resistivity

    d = design(demo)
    spec, pr = d.spec, d.prediction
    ta = spec.target
    alpha = magnet_br_coefficient_per_k(spec)
    for op in pr.curve:
        g = float(stator_heat_paths(spec, d.geometry, [op.rpm]).conductance_w_k[0])
        if op.temperature_over_cap:
            assert op.coil_temperature_c == TEMPERATURE_CAP_C
            assert (
                ta.ambient_c + (op.copper_loss_w + op.steel_loss_w + op.conductor_eddy_w) / g
                > TEMPERATURE_CAP_C
            )
            assert "means nothing" in op.temperature_words
            continue
        # The heat balance holds at the reported temperature ...
        # the wire's eddy loss and a stationary plate's (cast against the stator) heat it too
        heat = op.copper_loss_w + op.steel_loss_w + op.conductor_eddy_w
        assert op.coil_temperature_c == pytest.approx(ta.ambient_c + heat / g, abs=0.1)
        if ta.kind == "ac_line":
            continue
        # ... and the currents are those of the circuit with the copper at that temperature,
        # simulated afresh here (one point, its own call).
        load = (
            # the battery's own resistance and the cable's loop (2·L/(58·A), IEC 60028 copper)
            Load("battery", ta.battery_resistance_ohm + cable_ohm(spec), ta.battery_v)
            if ta.kind == "battery"
            # a converter holds the bus at the level the point reports (idle: nothing flows)
            else Load("battery", BUS_OHM, op.dc_voltage_v)
            if ta.kind == "converter"
            else Load("resistor", ta.voltage_v / ta.rated_current_a)
        )
        w = op.rpm * 2 * np.pi / 60
        # The magnets at their own temperature: Br, and so the EMF, down by α per K over 20 °C.
        warm = 1 + alpha * (op.magnet_temperature_c - 20)
        res = simulate_rectifier(
            pr.emf.phase_v[None] * pr.turns_per_coil * w * warm,
            frequency_hz=np.array([d.layout.pole_pairs * op.rpm / 60]),
            resistance_ohm=np.array([pr.phase_resistance_ohm * copper_resistivity(op.coil_temperature_c)])
            / copper_resistivity(20),
            inductance_h=pr.phase_inductance_mh / 1000,
            connection=_CONNECTION[spec.connection.kind],
            diode_drop_v=ta.diode_drop_v,
            load=load,
        )
        assert op.dc_current_a == pytest.approx(float(res.dc_current_a[0]), rel=5e-3, abs=1e-4)


def test_settle_temperature_against_a_closed_form():
    from layout.model import TEMPERATURE_CAP_C, settle_temperature

    # A resistor R(T) = R20(1 + α(T−20)) across a fixed current: P = I²R(T), so
    # T = Ta + I²R20(1 + α(T−20))/G has the closed form T = (Ta + k(1 − 20α)) / (1 − kα), k = I²R20/G.
    alpha, r20, g, ta = 0.00393, 0.5, 0.2, 25.0
    currents = np.array([0.0, 1.0, 3.0, 6.0, 9.0])

    def loss(idx, t):
        return currents[idx] ** 2 * r20 * (1 + alpha * (np.asarray(t) - 20))

    temps, over = settle_temperature(loss, ta, g, len(currents))
    k = currents**2 * r20 / g
    exact = (ta + k * (1 - 20 * alpha)) / (1 - k * alpha)
    ok = exact < TEMPERATURE_CAP_C
    assert np.allclose(temps[ok], exact[ok], atol=0.1)
    assert (over == ~ok).all() and (temps[over] == TEMPERATURE_CAP_C).all()
    assert over.any() and ok.sum() >= 3  # both kinds of point were tried


# --- AC line round a closed delta ------------------------------------------------------------

# A 15-coil, 20-magnet machine of our own with narrow magnets far out: its coils' EMF carries
# a strong third harmonic, which circulates round a closed delta.
DELTA_AC = (
    "millrace",
    ("stator.coil_positions", 15),
    ("magnets.count", 20),
    ("connection.kind", "delta"),
    ("magnets.width_mm", 20.0),
    ("magnets.pitch_radius_mm", 140.0),
    ("stator.thickness_mm", 8.0),
    ("target.kind", "ac_line"),
    ("target.voltage_v", 40.0),
    ("target.rated_current_a", 3.0),
    ("target.battery_v", None),
    ("target.cut_in_rpm", None),
)


def _delta_time_domain(d: Design, periods: int):
    """Brute-force reference, written apart from the model's harmonic solution: the three
    windings of a closed delta, each with a load resistor R_L across its own terminals,
    integrated in time (scipy's RK45) from rest until the start-up transient has died.

    KCL at the three terminals with v_A + v_B + v_C = 0 gives each winding's terminal voltage
    v_k = R_L (i_k − ī), ī the mean winding current, so L di_k/dt = e_k − R i_k − R_L (i_k − ī).
    Returns (load power W, copper loss W, line voltage rms V) over the last period.
    """
    from scipy.integrate import solve_ivp

    from layout.wire import copper_resistivity

    pr, rated, ta = d.prediction, d.prediction.rated, d.spec.target
    r = pr.phase_resistance_ohm * copper_resistivity(rated.coil_temperature_c) / copper_resistivity(20.0)
    ind = pr.phase_inductance_mh / 1000
    r_load = ta.voltage_v / (ta.rated_current_a / math.sqrt(3))
    f = d.layout.pole_pairs * rated.rpm / 60
    from layout.model import magnet_br_coefficient_per_k

    # The magnets at their working temperature: Br down by α per K over 20 °C.
    warm = 1 + magnet_br_coefficient_per_k(d.spec) * (rated.magnet_temperature_c - 20)
    waves = pr.phase_emf_v(rated.rpm) * warm  # (3, m) over one electrical period
    m = waves.shape[1]
    grid = np.arange(m + 1) / (m * f)
    closed = np.concatenate([waves, waves[:, :1]], axis=1)

    def rhs(t, i):
        tt = t % (1 / f)
        e = np.array([np.interp(tt, grid, closed[k]) for k in range(3)])
        return (e - r * i - r_load * (i - i.mean())) / ind

    t_end = periods / f
    last = np.linspace(t_end - 1 / f, t_end, 2001)
    sol = solve_ivp(rhs, (0, t_end), np.zeros(3), t_eval=last, rtol=1e-7, atol=1e-8, max_step=1 / (40 * f))
    i = sol.y
    v = r_load * (i - i.mean(axis=0))
    mean = lambda x: np.trapezoid(x, last) * f  # noqa: E731
    return mean((v**2).sum(axis=0)) / r_load, mean((i**2).sum(axis=0)) * r, math.sqrt(mean(v[0] ** 2))


def test_ac_line_delta_agrees_with_a_time_domain_simulation():
    d = design(*DELTA_AC)
    rated = d.prediction.rated
    tau = d.prediction.phase_inductance_mh / 1000 / (d.prediction.phase_resistance_ohm)
    periods = max(10, math.ceil(10 * tau * d.layout.pole_pairs * rated.rpm / 60) + 2)
    p_load, p_cu, v_line = _delta_time_domain(d, periods)
    assert rated.dc_power_w == pytest.approx(p_load, rel=0.005)
    assert rated.copper_loss_w == pytest.approx(p_cu, rel=0.005)
    assert rated.dc_voltage_v == pytest.approx(v_line, rel=0.005)
    # The circulating part is a real share of the heat here, and the model warns of it.
    assert rated.loop_loss_w > 0.3 * rated.copper_loss_w
    assert "delta.circulating" in {w.code for w in d.warnings}


def test_delta_circulating_warning_gives_the_star_figures_the_model_computes():
    d = design(*DELTA_AC)
    star = design(*DELTA_AC[:3], ("connection.kind", "star"), *DELTA_AC[4:])
    text = next(w.message for w in d.warnings if w.code == "delta.circulating")
    assert f"{star.prediction.rated.dc_power_w:.0f} W at {star.prediction.rated.efficiency:.0%}" in text
    assert f"{star.prediction.turns_per_coil} turns" in text
    assert star.prediction.rated.efficiency > d.prediction.rated.efficiency + 0.1
    # A floating star carries no circulating current at all (limiting case).
    assert all(op.loop_loss_w == 0.0 for op in star.prediction.curve)


# --- coils as built -------------------------------------------------------------------------


def test_coils_as_built_reproduce_the_sized_coils():
    # Given exactly the turns and wire the model chose, the prediction is the same machine.
    base = design("millrace")
    pr = base.prediction
    d = design(
        "millrace",
        ("coils.turns_per_coil", pr.turns_per_coil),
        ("coils.wire_diameter_mm", pr.wire.diameter_mm),
        ("coils.strands_in_hand", pr.wire.strands),
    )
    assert d.prediction.cut_in_rpm == pytest.approx(pr.cut_in_rpm, rel=1e-9)
    assert d.prediction.rated.dc_power_w == pytest.approx(pr.rated.dc_power_w, rel=1e-6)


def test_coils_as_built_cut_in_and_resistance_follow_the_turns():
    # The open-circuit EMF is proportional to the turns, so the cut-in falls as 1/N; the
    # resistance is ρ N l / A (IEC 60028: 1/58 Ω·mm²/m at 20 °C) for the wire given.
    one = design("millrace", ("coils.turns_per_coil", 60), ("coils.wire_diameter_mm", 1.0))
    two = design("millrace", ("coils.turns_per_coil", 120), ("coils.wire_diameter_mm", 0.71))
    assert two.prediction.cut_in_rpm == pytest.approx(one.prediction.cut_in_rpm / 2, rel=1e-9)
    mlt_m = one.geometry.coil.mean_turn_length_mm / 1000
    assert one.prediction.coil_resistance_ohm == pytest.approx(
        60 * mlt_m / 58 / (math.pi * 1.0**2 / 4), rel=1e-9
    )
    assert "turns.cut_in" in {w.code for w in one.warnings}  # 60 turns cannot cut in at 210 rpm


def test_coils_as_built_that_cannot_fit_or_lack_a_wire_are_refused():
    with pytest.raises(DesignError, match=r"coils\.wire_diameter_mm = 1\.6: 200 turns"):
        design("millrace", ("coils.turns_per_coil", 200), ("coils.wire_diameter_mm", 1.6))
    text = (DESIGNS / "millrace.toml").read_text(encoding="utf-8") + "\n[coils]\nstrands_in_hand = 2\n"
    with pytest.raises(DesignError, match=r"coils\.strands_in_hand = 2: needs coils\.wire_diameter_mm"):
        parse_spec(tomllib.loads(text), "m.toml")


def test_plan_says_which_coil_keys_were_given():
    text = (DESIGNS / "millrace.toml").read_text(encoding="utf-8") + "\n[coils]\nturns_per_coil = 80\n"
    d = compute_design(parse_spec(tomllib.loads(text), "m.toml"))
    doc = plan_json(d)
    assert doc["electrical"]["as_built"] == ["turns_per_coil"]
    assert doc["electrical"]["turns_per_coil"] == 80
    assert plan_json(design("millrace"))["electrical"]["as_built"] == []
