"""Sources and where they drive the machine: Betz, Weibull, annual energy, turbine speed
ratios, the torque balance, runaway, and the one-line errors of bad [source] keys."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import quad

from layout.design import compute_design
from layout.source import (
    HEIER_PEAK_CP,
    HEIER_PEAK_TSR,
    NOZZLE_CV,
    SPEED_RATIO,
    G,
    annual_energy_kwh,
    resolve,
    runaway_tsr,
    weibull_scale,
)
from layout.spec import BETZ_LIMIT, DesignError, SourceSpec, load_spec, with_values

DESIGNS = Path(__file__).resolve().parent.parent / "designs"


def _wind(**kw) -> SourceSpec:
    base = dict(kind="wind", rotor_diameter_m=2.0, design_tsr=6.0, peak_cp=0.4, mean_wind_m_s=5.0)
    return SourceSpec(**(base | kw))


def test_heier_curve_peak():
    """Heier's generic curve at zero pitch peaks at λ ≈ 8.1, Cp ≈ 0.48 (Slootweg et al., IEEE
    Trans. Power Systems 18(1), 2003, with the coefficients used there)."""
    assert pytest.approx(8.1, abs=0.1) == HEIER_PEAK_TSR
    assert pytest.approx(0.48, abs=0.01) == HEIER_PEAK_CP


def test_rotor_power_never_exceeds_betz():
    """No rotor takes more than 16/27 of the wind's power (Betz 1920), at any speed and wind."""
    src = resolve(_wind(peak_cp=BETZ_LIMIT))
    rpm = np.linspace(1, 3000, 400)
    for v in (2.0, 7.0, 15.0):
        assert np.all(src.power_w(rpm, v) <= BETZ_LIMIT * src.available_w(v) * (1 + 1e-12))
    curve = resolve(_wind(design_tsr=None, peak_cp=None, cp_curve=((0, 0), (5, 0.5), (9, 0.1))))
    assert np.max(curve.cp(np.linspace(0, 20, 500))) <= BETZ_LIMIT


def test_scaled_curve_peaks_where_asked():
    src = resolve(_wind(design_tsr=5.0, peak_cp=0.35))
    lam = np.linspace(0.5, 15, 20001)
    cp = src.cp(lam)
    assert lam[np.argmax(cp)] == pytest.approx(5.0, abs=0.01)
    assert cp.max() == pytest.approx(0.35, rel=1e-6)
    assert runaway_tsr(src) > 5.0 and src.cp(runaway_tsr(src)) == pytest.approx(0.0, abs=1e-3)


@pytest.mark.parametrize("k", [1.5, 2.0, 3.0])
def test_weibull_mean(k):
    """The Weibull mean equals c·Γ(1 + 1/k) (Manwell, McGowan & Rogers, Wind Energy Explained,
    2009, §2.4.3): integrate v·f(v) numerically against the mean we scaled c from."""
    c = weibull_scale(6.0, k)

    def pdf(v):
        return k / c * (v / c) ** (k - 1) * math.exp(-((v / c) ** k))

    assert quad(lambda v: v * pdf(v), 0, np.inf)[0] == pytest.approx(6.0, rel=1e-8)


def test_annual_energy_against_the_cube_closed_form():
    """A power curve P = a·v³ with no cut-out: AEP = 8760·a·⟨v³⟩ and ⟨v³⟩ = c³Γ(1 + 3/k)
    (Manwell et al. 2009, §2.4.3). The method of bins on fine bins converges to it; on the
    table's 1 m/s bins to 25 m/s the trapezoids stay within 3 %."""
    a, mean, k = 0.5, 5.0, 2.0
    c = weibull_scale(mean, k)
    exact = 8760 * a * c**3 * math.gamma(1 + 3 / k) / 1000
    fine = np.linspace(0.01, 60, 6000)
    assert annual_energy_kwh(fine, a * fine**3, mean, k) == pytest.approx(exact, rel=1e-3)
    table = np.arange(1.0, 26.0)
    assert annual_energy_kwh(table, a * table**3, mean, k) == pytest.approx(exact, rel=0.03)


def test_rayleigh_worked_example():
    """Rayleigh winds (k = 2) at a 6 m/s mean blow above 10 m/s for exp(−(π/4)(10/6)²) of the
    time (Manwell et al. 2009, eq. 2.54): a machine giving 1 kW from 10 m/s on and nothing
    below makes 8760 h × that share, in kWh."""
    share = math.exp(-math.pi / 4 * (10 / 6) ** 2)
    v = np.linspace(0.0, 60.0, 60001)[1:]
    p = np.where(v >= 10.0, 1000.0, 0.0)
    assert annual_energy_kwh(v, p, 6.0, 2.0) == pytest.approx(8760 * share, rel=1e-3)


def test_pelton_best_speed_ratio():
    """At best efficiency a Pelton bucket moves at about 0.46 of the jet speed (Dixon & Hall,
    Fluid Mechanics and Thermodynamics of Turbomachinery, 2014): the source's best speed is
    u = 0.46·Cv·√(2gH) on the runner's pitch circle, and its power peaks there."""
    so = SourceSpec(kind="water", head_m=20.0, flow_l_s=5.0, turbine="pelton", runner_diameter_mm=200.0)
    src = resolve(so)
    u = SPEED_RATIO["pelton"] * NOZZLE_CV * math.sqrt(2 * G * 20.0)
    assert SPEED_RATIO["pelton"] == 0.46
    assert src.best_rpm == pytest.approx(u / (math.pi * 0.2) * 60, rel=1e-12)
    rpm = np.linspace(1, src.runaway_rpm, 2001)
    p = src.power_w(rpm, 5.0)
    assert rpm[np.argmax(p)] == pytest.approx(src.best_rpm, rel=1e-3)
    # the peak is η·ρ·g·Q·H, and the runaway (no torque) is twice the best speed
    assert p.max() == pytest.approx(src.turbine_efficiency * 1000 * G * 0.005 * 20.0, rel=1e-4)
    assert float(src.power_w(src.runaway_rpm, 5.0)) == pytest.approx(0.0, abs=1e-9)


@pytest.mark.parametrize("demo", ["hilltop", "millrace", "pedalbox"])
def test_operating_points_balance_torque(demo):
    """At each steady point the source's shaft power equals what the alternator takes (its
    output plus every loss), within 1 % or 0.2 W, and the point is stable: just above it the
    alternator takes more than the source gives."""
    d = compute_design(load_spec(DESIGNS / f"{demo}.toml"))
    op = d.operating
    assert op is not None and op.rows
    for r in op.rows:
        if r.point is None:
            continue
        give = float(op.source.power_w(r.rpm, r.condition))
        assert abs(give - r.source_power_w) <= max(0.01 * give, 0.2), (r.condition, give, r.source_power_w)
        assert r.output_power_w <= r.source_power_w + 1e-9
        assert math.isfinite(r.efficiency) and 0 <= r.efficiency <= 1


@pytest.mark.parametrize("demo", ["hilltop", "millrace", "pedalbox"])
def test_the_bridge_is_rated_for_what_the_source_can_drive(demo):
    """Energy conservation: the DC current the bridge is sized by, times the DC voltage it is
    delivered at, is no more than the most the source gives at any condition the design
    lists; the output curve's top (at runaway speed, loaded) is beyond any source."""
    d = compute_design(load_spec(DESIGNS / f"{demo}.toml"))
    op = d.operating
    most_w = max(r.available_w for r in op.rows)
    br = d.bridge
    volts = next(r.point.dc_voltage_v for r in op.rows if r.point is not None and r.rpm == br.max_current_rpm)
    assert br.max_current_a * volts <= most_w
    assert br.max_current_a <= max(p.dc_current_a for p in d.prediction.curve)


def test_wind_demo_has_energy_and_cut_in():
    d = compute_design(load_spec(DESIGNS / "hilltop.toml"))
    op = d.operating
    assert op.energy["annual_kwh"] > 0 and 0 < op.energy["capacity_factor"] < 1
    assert op.cut_in_condition is not None and 1 <= op.cut_in_condition <= 5
    # every row's rotor power stays under Betz
    for r in op.rows:
        assert r.source_power_w <= BETZ_LIMIT * r.available_w + 1e-9


def test_runaway_raises_the_checks_speed():
    """A rotor that runs away above target.max_rpm has every check made at the runaway."""
    spec = load_spec(DESIGNS / "hilltop.toml")
    storm = with_values(spec, (("source.furl_wind_m_s", None),))
    d = compute_design(storm)
    assert d.given_max_rpm == spec.target.max_rpm
    assert d.spec.target.max_rpm >= d.operating.runaway_rpm
    assert any(w.code == "source.runaway" for w in d.warnings)
    # the open-circuit voltage checked is the runaway's
    assert d.prediction.max_rpm == d.spec.target.max_rpm


def test_stall_advice_is_computed_and_helps():
    """The stall warning's changes are re-run: each offered change raises the stall wind."""
    from layout.advice import with_suggestions

    d = with_suggestions(compute_design(load_spec(DESIGNS / "hilltop.toml")))
    assert any(w.code == "source.stall" for w in d.warnings)
    offered = d.suggestions_for("source.stall")
    assert offered
    for s in offered:
        assert s.value > s.now


def test_cable_takes_its_loss():
    """The cable's loop resistance 2·L·ρ/A (IEC 60028 copper, 1/58 Ω·mm²/m) costs I²R."""
    spec = load_spec(DESIGNS / "hilltop.toml")
    d = compute_design(spec)
    r_cable = 2 * spec.source.cable_length_m / 58 / spec.source.cable_area_mm2
    for r in d.operating.rows:
        if r.point is not None and r.output_power_w > 1:
            lost = r.output_power_w - r.load_power_w
            assert lost == pytest.approx(r.point.dc_current_a**2 * r_cable, rel=1e-9)


@pytest.mark.parametrize(
    "key, value, words",
    [
        ("head_m", -3.0, "at least"),
        ("drive_ratio", 0.0, "at least"),
        ("peak_cp", 0.7, "Betz"),
        ("turbine", "waterwheel", "one of"),
        ("cp_curve", [[0, 0], [5, 0.65]], "Betz"),
        ("cp_curve", [[5, 0.3], [2, 0.1]], "rise"),
    ],
)
def test_bad_source_keys_are_one_line_errors(tmp_path, key, value, words):
    water = 'kind = "water"\nhead_m = 3.0\nflow_l_s = 20.0\nturbine = "crossflow"\nrunner_diameter_mm = 300.0'
    wind = 'kind = "wind"\nrotor_diameter_m = 2.0\nmean_wind_m_s = 5.0'
    base = {
        "head_m": water,
        "turbine": water,
        "drive_ratio": 'kind = "pedal"\ncadence_rpm = 70.0\nsustained_power_w = 75.0',
        "peak_cp": wind + "\ndesign_tsr = 6.0\npeak_cp = 0.4",
        "cp_curve": wind,
    }[key]
    lines = [ln for ln in base.splitlines() if not ln.startswith(f"{key} =")]
    toml_value = f'"{value}"' if isinstance(value, str) else str(value)
    text = (DESIGNS / "millrace.toml").read_text().split("[source]")[0]
    path = tmp_path / "bad.toml"
    path.write_text(text + "[source]\n" + "\n".join(lines) + f"\n{key} = {toml_value}\n")
    with pytest.raises(DesignError) as err:
        load_spec(path)
    message = str(err.value)
    assert "\n" not in message and f"source.{key}" in message and words in message


@pytest.mark.parametrize("demo", ["hilltop", "millrace", "pedalbox"])
def test_plan_shows_the_operating_table_and_json(run, demo):
    """plan prints the table and energy; --json carries source, operating, energy, runaway."""
    import json

    text = run("plan", DESIGNS / f"{demo}.toml")
    assert text.returncode == 0
    assert "Where it runs" in text.stdout and "Energy: about" in text.stdout and "Runaway:" in text.stdout
    out = run("plan", "--json", DESIGNS / f"{demo}.toml")
    data = json.loads(out.stdout, parse_constant=lambda c: pytest.fail(f"{c} in JSON"))
    key = {"hilltop": "wind_m_s", "millrace": "flow_l_s", "pedalbox": "effort_w"}[demo]
    assert data["source"]["kind"] == {"hilltop": "wind", "millrace": "water", "pedalbox": "pedal"}[demo]
    rows = data["operating"]
    assert rows and all(key in r for r in rows)
    assert {"rpm", "tsr", "cp", "source_power_w", "output_power_w", "efficiency"} <= set(rows[0])
    assert data["runaway_rpm"] > 0
    energy = {"hilltop": "annual_kwh", "millrace": "kwh_per_day", "pedalbox": "wh_per_hour"}[demo]
    assert data["energy"][energy] > 0
    if demo == "hilltop":
        assert 0 < data["energy"]["capacity_factor"] < 1 and len(rows) == 25


def test_a_design_without_source_has_no_operating_keys(run, tmp_path):
    import json

    path = tmp_path / "plain.toml"
    path.write_text((DESIGNS / "millrace.toml").read_text().split("# The turbine")[0])
    data = json.loads(run("plan", "--json", path).stdout)
    assert "operating" not in data and "source" not in data
