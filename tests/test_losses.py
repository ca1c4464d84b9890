"""Losses besides copper: the wire's eddy loss against the textbook formula, drag and friction."""

from __future__ import annotations

import math

import numpy as np
import pytest
from demos import design

from layout import losses
from layout.emf import FluxMap
from layout.wire import Wire, copper_resistivity


def _sine_map(b_peak: float, pole_pairs: int, n: int = 64) -> FluxMap:
    theta = np.arange(n) * (2 * math.pi / pole_pairs) / n  # one electrical period
    bz = np.tile(b_peak * np.sin(pole_pairs * theta), (5, 1))
    return FluxMap(np.linspace(80, 120, 5), 10.0, theta, bz, b_peak, None)


def test_wire_eddy_loss_is_the_textbook_formula_for_a_sinusoid():
    # P per metre = π d⁴ ω² B̂² / (128 ρ) for a round wire in a sinusoidal transverse field
    # (Hanselman 2003; from memory), ω the electrical angular frequency.
    p, b, rpm, d = 8, 0.5, 600.0, 1.0
    fmap = _sine_map(b, p)
    wire = Wire("1 mm", d, 1)
    got = losses.conductor_eddy_w(fmap, 80, 120, wire, turns=10, coils=1, rpm=rpm, temp_c=20.0)
    w_e = p * rpm * 2 * math.pi / 60
    length = 2 * 0.040 * 10
    rho = copper_resistivity(20.0) * 1e-6
    expected = math.pi * (d * 1e-3) ** 4 * w_e**2 * b**2 / (128 * rho) * length
    assert float(got) == pytest.approx(expected, rel=1e-9)
    # Limiting cases: nothing at rest; ω²; d⁴.
    assert float(losses.conductor_eddy_w(fmap, 80, 120, wire, 10, 1, 0.0, 20.0)) == 0.0
    thin = Wire("0.5 mm", 0.5, 1)
    assert float(losses.conductor_eddy_w(fmap, 80, 120, thin, 10, 1, rpm, 20.0)) == pytest.approx(
        expected / 16
    )


def test_windage_of_a_free_disc_is_von_karmans():
    # Laminar free disc: M = ½ρω²r⁵·3.87/√Re (both faces; Owen & Rogers 1989, from memory).
    rpm, r = 300.0, 0.15
    w = rpm * 2 * math.pi / 60
    re = w * r**2 / 1.6e-5
    m = 0.5 * 1.2 * w**2 * r**5 * 3.87 / math.sqrt(re)
    assert float(losses.windage_w(rpm, 150.0, 1)) == pytest.approx(m * w, rel=1e-9)
    assert float(losses.bearing_w(0.0, 10.0, 30.0)) == 0.0


def test_every_loss_is_in_the_shaft_input_and_the_small_ones_stay_small():
    for name in ("millrace", "pedalbox", "hilltop"):
        for op in design(name).prediction.curve:
            if op.dc_power_w > 0:
                parts = op.dc_power_w + op.copper_loss_w + op.rectifier_loss_w + op.steel_loss_w
                parts += op.conductor_eddy_w + op.mechanical_w
                assert op.shaft_power_w == pytest.approx(parts, rel=0.01)
                assert op.efficiency == pytest.approx(op.dc_power_w / op.shaft_power_w)
    rated = design("pedalbox").prediction.rated
    assert 0.02 < rated.conductor_eddy_w / rated.copper_loss_w < 0.3  # thick wire at 80 Hz


def test_strands_in_hand_are_offered_when_the_wire_eddy_loss_matters():
    # Eddy loss ∝ d⁴ per strand and ∝ d² in strand count for the same copper: thinner strands
    # cut it about as (d_new/d)² (closed form); the model re-runs and offers them.
    from fab.fit import check_parts
    from layout.advice import suggest

    d = design("pedalbox", ("target.rated_rpm", 900.0), ("target.max_rpm", 1200.0))
    assert "coil.wire_eddy" in {w.code for w in d.warnings}
    offered = [s for s in suggest(d, check_parts) if s.code == "coil.wire_eddy"]
    assert offered and all(s.key == "stator.max_wire_diameter_mm" for s in offered)
    for s in offered:
        ratio = (s.to / d.prediction.wire.diameter_mm) ** 2
        assert s.value < s.now * ratio * 1.6  # gauges come in steps
