"""Losses of a stationary steel plate: the limiting theory against a finite-difference
solution of the non-linear diffusion through the plate, and its limiting cases."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.linalg import solve_banded

from layout.steel import limiting_loss_from_flux_w_m2, limiting_loss_from_surface_field_w_m2

MU0 = 4e-7 * math.pi


def _diffusion_reference(
    h0, omega, sigma, b_sat, mu_r=20000.0, depth_m=0.012, nodes=240, steps=1500, periods=3
):
    """1-D eddy-current diffusion into a thick plate with a smooth, steep B–H curve
    B = B_s·tanh(μH/B_s) + μ0·H, surface field H0 sin ωt, H = 0 at the far side. Backward
    Euler in time, Newton on each step (σ ∂B/∂t = ∂²H/∂z², Ampère and Faraday), written
    apart from the theory. Returns (mean loss W/m² over the last period, flux swing Wb/m)."""
    dz = depth_m / (nodes - 1)
    dt = 2 * math.pi / omega / steps
    mu = mu_r * MU0

    def b_of(h):
        return b_sat * np.tanh(mu * h / b_sat) + MU0 * h

    def db_of(h):
        return mu / np.cosh(mu * h / b_sat) ** 2 + MU0

    h = np.zeros(nodes)
    loss, flux = [], []
    n_in = nodes - 2
    for n in range(steps * periods):
        t = (n + 1) * dt
        b_old = b_of(h)
        hn = h.copy()
        hn[0], hn[-1] = h0 * math.sin(omega * t), 0.0
        for _ in range(30):
            lap = (hn[:-2] - 2 * hn[1:-1] + hn[2:]) / dz**2
            f = sigma * (b_of(hn[1:-1]) - b_old[1:-1]) - dt * lap
            ab = np.zeros((3, n_in))
            ab[1] = sigma * db_of(hn[1:-1]) + 2 * dt / dz**2
            ab[0, 1:] = -dt / dz**2
            ab[2, :-1] = -dt / dz**2
            step = solve_banded((1, 1), ab, -f)
            hn[1:-1] += step
            if np.abs(step).max() < 1e-9 * h0:
                break
        h = hn
        if n >= steps * (periods - 1):
            j = np.diff(h) / dz
            loss.append((j**2).sum() * dz / sigma)
            flux.append(b_of(h).sum() * dz)
    return float(np.mean(loss)), (max(flux) - min(flux)) / 2


@pytest.mark.parametrize("h0", [5e3, 2e4])
def test_limiting_theory_agrees_with_a_finite_difference_solution(h0):
    omega, sigma, b_sat = 2 * math.pi * 26, 6e6, 1.6
    fd_loss, fd_swing = _diffusion_reference(h0, omega, sigma, b_sat)
    # A steep but finite B-H curve loses a little less than the step (the limiting theory
    # is an upper estimate, Agarwal 1959): about 1 % less here.
    theory = limiting_loss_from_surface_field_w_m2(h0, omega, sigma, b_sat)
    assert fd_loss == pytest.approx(theory, rel=0.03)
    assert fd_loss <= theory
    # The form the tool uses, from the flux swing the magnets impose: within 8 % (the smooth
    # curve carries part of the swing below B_s, so its front runs a little deeper).
    assert limiting_loss_from_flux_w_m2(fd_swing, omega, sigma, b_sat) == pytest.approx(fd_loss, rel=0.08)


def test_limiting_cases():
    # No loss standing still; at a fixed flux swing the loss rises as ω² (the front depth is
    # set by the flux alone); at a fixed surface field, as √ω (the classical result).
    assert limiting_loss_from_flux_w_m2(0.005, 0.0, 6e6, 1.6) == 0.0
    p1 = limiting_loss_from_flux_w_m2(0.005, 100.0, 6e6, 1.6)
    assert limiting_loss_from_flux_w_m2(0.005, 200.0, 6e6, 1.6) == pytest.approx(4 * p1)
    q1 = limiting_loss_from_surface_field_w_m2(1e4, 100.0, 6e6, 1.6)
    assert limiting_loss_from_surface_field_w_m2(1e4, 400.0, 6e6, 1.6) == pytest.approx(2 * q1)


def test_only_a_stationary_plate_loses_and_its_loss_follows_the_theory():
    from demos import PLATE, design

    for name in ("millrace", "pedalbox", "hilltop"):  # steel that turns with the magnets
        assert all(op.steel_loss_w == 0.0 for op in design(name).prediction.curve)
    d = design("hilltop", *PLATE)  # one magnet disc over a steel-backed stator
    curve = d.prediction.curve
    assert all(op.steel_loss_w > 0 for op in curve)
    # Eddy part ∝ ω² and hysteresis ∝ ω at a fixed flux swing: loss/ω rises linearly in ω.
    per = [(op.rpm, op.steel_loss_w / op.rpm) for op in curve]
    (r0, y0), (r1, y1), (r2, y2) = per[0], per[len(per) // 2], per[-1]
    assert (y2 - y1) / (r2 - r1) == pytest.approx((y1 - y0) / (r1 - r0), rel=1e-6)
    rated = d.prediction.rated
    assert rated.efficiency == pytest.approx(rated.dc_power_w / rated.shaft_power_w)
    assert "steel.stationary_loss" in {w.code for w in d.warnings}


def test_advice_for_the_plate_is_steel_that_turns_or_none():
    from demos import PLATE, design

    from layout.advice import suggest

    offered = [s for s in suggest(design("hilltop", *PLATE)) if s.code == "steel.stationary_loss"]
    turning = {s.to: s for s in offered if s.key == "rotor.topology"}
    # A plain steel disc turning with the magnets keeps the same magnets and has no such loss.
    plain = turning["one_disc_steel_disc"]
    assert plain.value == 0.0 and plain.clears
    assert "without rotor.stator_plate_thickness_mm" in plain.words
    assert plain.rated_power_w == pytest.approx(plain.rated_power_now_w, rel=0.1)  # same magnets


def test_a_plain_steel_disc_turning_with_the_magnets_loses_nothing():
    # The plain disc turns with the magnet disc, so the field it sees does not change in time:
    # no eddy current and no hysteresis (Faraday's law; a rotor's back iron is loss-free for
    # the same reason). The same magnets with the plate standing still lose tens of watts.
    from demos import PLATE, design

    from layout.steel import plate_flux

    d = design("hilltop")
    assert d.spec.rotor.topology == "one_disc_steel_disc"
    assert plate_flux(d.spec, d.geometry, d.flux.sources) is None
    assert all(op.steel_loss_w == 0.0 for op in d.prediction.curve)
    rated = d.prediction.rated
    assert "steel.stationary_loss" not in {w.code for w in d.warnings}
    standing = design("hilltop", *PLATE)
    assert standing.prediction.rated.steel_loss_w > 10.0
    assert rated.efficiency > standing.prediction.rated.efficiency
