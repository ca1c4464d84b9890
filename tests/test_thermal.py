"""The stator's heat network against a nodal solution written out here, and its limits."""

from __future__ import annotations

import math

import numpy as np
import pytest
from demos import design

from layout import thermal as th


def test_rotating_disc_film_follows_the_correlation_and_its_floor():
    # Cobb & Saunders 1956 (from memory): Nu = 0.36 Re^0.5 laminar; at rest, still air.
    r = 0.15
    rpm = 300.0
    re = rpm * 2 * math.pi / 60 * r**2 / th.NU_AIR_M2_S
    assert re < th.RE_TRANSITION
    assert float(th.rotating_disc_h_w_m2k(rpm, r)) == pytest.approx(0.36 * math.sqrt(re) * th.K_AIR_W_MK / r)
    assert float(th.rotating_disc_h_w_m2k(0.0, r)) == th.H_STILL_AIR_W_M2K
    # Laminar: h ∝ √ω; the pumped air ∝ √ω too (von Kármán's free disc).
    h1, h4 = th.rotating_disc_h_w_m2k([300.0, 1200.0], r)
    q1, q4 = th.disc_pumped_m3_s([300.0, 1200.0], r)
    assert h4 / h1 == pytest.approx(2.0) and q4 / q1 == pytest.approx(2.0)


def _nodal(spec, geo, rpm):
    """The same network as nodal equations, solved with numpy: nodes copper, face A, face B,
    gap air A, gap air B, disc A, disc B (two discs), room at 0; 1 W into the copper."""
    st = spec.stator
    r_in = max(geo.coil.r_min_mm - st.resin_rim_mm, 1.0) * 1e-3
    r_out = (geo.coil.r_max_mm + st.resin_rim_mm) * 1e-3
    t = st.thickness_mm * 1e-3
    face = math.pi * (r_out**2 - r_in**2)
    k = th.K_BINDER_W_MK * (1 + st.fill_factor) / (1 - st.fill_factor)
    from layout.forces import disc_outer_radius_mm

    rd = disc_outer_radius_mm(spec) * 1e-3
    out = math.pi * (rd**2 - (spec.rotor.bore_diameter_mm / 2000) ** 2)
    h = float(th.rotating_disc_h_w_m2k(rpm, rd))
    flow = th.AIR_HEAT_CAPACITY_J_M3K * float(th.disc_pumped_m3_s(rpm, rd))
    g_cond = 12 * k * face / t  # copper (mean) to the faces, both together
    edges = [  # (node, node, conductance); node 7 is the room
        (0, 1, g_cond / 2), (0, 2, g_cond / 2),
        (1, 3, h * face), (2, 4, h * face),
        (3, 5, h * face), (4, 6, h * face),
        (3, 7, flow), (4, 7, flow),
        (5, 7, h * out), (6, 7, h * out),
        (1, 7, th.H_STILL_AIR_W_M2K * math.pi * r_out * t),
        (2, 7, th.H_STILL_AIR_W_M2K * math.pi * r_out * t),
    ]  # fmt: skip
    n = 7
    a = np.zeros((n, n))
    for i, j, g in edges:
        for p, q in ((i, j), (j, i)):
            if p < n:
                a[p, p] += g
                if q < n:
                    a[p, q] -= g
    rhs = np.zeros(n)
    rhs[0] = 1.0
    temps = np.linalg.solve(a, rhs)
    return temps[0], temps[5]


def test_network_agrees_with_a_nodal_solution():
    # The faces are taken as one node each with the rim split between them; the nodal
    # solution keeps the same elements, solved as a matrix rather than in closed form.
    d = design("millrace")  # two discs
    for rpm in (100.0, 300.0, 550.0):
        paths = th.stator_heat_paths(d.spec, d.geometry, [rpm])
        coil_k_per_w, magnet_k_per_w = _nodal(d.spec, d.geometry, rpm)
        assert 1 / float(paths.conductance_w_k[0]) == pytest.approx(coil_k_per_w, rel=0.02)
        assert float(paths.magnet_k_per_w[0]) == pytest.approx(magnet_k_per_w, rel=0.02)


def test_faster_cools_and_magnets_stay_below_the_coils():
    d = design("millrace")
    paths = th.stator_heat_paths(d.spec, d.geometry, [0.0, 100.0, 300.0, 600.0])
    assert np.all(np.diff(paths.conductance_w_k) > 0)
    rise = paths.magnet_rise_k(np.full(4, 50.0))
    assert np.all((rise > 0) & (rise < 50.0))
    for op in d.prediction.curve:
        assert d.spec.target.ambient_c <= op.magnet_temperature_c <= op.coil_temperature_c + 1e-9
