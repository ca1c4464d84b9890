"""Our closed-form block and disc kernels against magpylib, scipy and textbook limits."""

from __future__ import annotations

import math

import magpylib.core as reference
import numpy as np
import pytest
from scipy.special import ellipe, ellipk

from layout.kernels import block_bz, cel, disc_bz

RNG = np.random.default_rng(20261202)


def _block_reference(obs: np.ndarray, dim: np.ndarray) -> np.ndarray:
    pol = np.zeros_like(obs)
    pol[:, 2] = 1.0
    return reference.magnet_cuboid_Bfield(obs, dim, pol)[:, 2]


def test_block_matches_magpylib_everywhere_off_the_surface():
    """magpylib's cuboid (an independent implementation of the same charge-sheet solution)."""
    n = 20_000
    obs = RNG.uniform(-3, 3, (n, 3))
    dim = RNG.uniform(0.2, 3, (n, 3))
    ours = block_bz(obs[:, 0], obs[:, 1], obs[:, 2], dim)
    assert np.max(np.abs(ours - _block_reference(obs, dim))) < 1e-9


@pytest.mark.parametrize("axis", [0, 1, 2])
def test_block_on_the_planes_of_its_faces(axis):
    """atan2's branches at zero: points on the plane of a face, off the face itself (on the
    magnet's surface the field is discontinuous and either side's value is right)."""
    n = 5_000
    obs = RNG.uniform(-3, 3, (n, 3))
    dim = RNG.uniform(0.2, 3, (n, 3))
    obs[:, axis] = dim[:, axis] / 2 * RNG.choice([-1.0, 1.0], n)
    others = [i for i in range(3) if i != axis]
    off_face = np.any(np.abs(obs[:, others]) > dim[:, others] / 2, axis=1)
    ours = block_bz(obs[:, 0], obs[:, 1], obs[:, 2], dim)
    assert off_face.sum() > n / 2
    assert np.max(np.abs(ours - _block_reference(obs, dim))[off_face]) < 1e-9


def test_block_centre_closed_form():
    """At the centre of a uniformly magnetised cube the demagnetising factor is 1/3, so
    Bz = J(1 − 1/3) = 2J/3 (Furlani, Permanent Magnet and Electromechanical Devices, 2001)."""
    centre = block_bz(np.array(0.0), np.array(0.0), np.array(0.0), np.array([1.0, 1.0, 1.0]))
    assert centre == pytest.approx(2 / 3, rel=1e-12)


def test_block_on_axis_closed_form():
    """On the axis of a block a × b × h, each face is a charge sheet ±J/μ0 whose field at
    distance d is J·Ω/4π, with the rectangle's solid angle Ω = 4·atan(ab / (2d·√(a²+b²+4d²)))
    (Furlani 2001). Above the block: Bz = sheet(z − h/2) − sheet(z + h/2)."""
    a, b, h = 20.0, 10.0, 5.0

    def sheet(d):
        return math.atan(a * b / (2 * d * math.sqrt(a * a + b * b + 4 * d * d))) / math.pi

    for z in (3.0, 7.5, 20.0):
        expected = sheet(z - h / 2) - sheet(z + h / 2)
        got = block_bz(np.array(0.0), np.array(0.0), np.array(z), np.array([a, b, h]))
        assert got == pytest.approx(expected, rel=1e-12)


def test_disc_matches_magpylib():
    n = 20_000
    r = np.concatenate([RNG.uniform(0, 3, n), np.zeros(100), np.ones(100)])
    z = RNG.uniform(-3, 3, len(r))
    h = RNG.uniform(0.1, 2, len(r))
    expected = reference.magnet_cylinder_axial_Bfield(h, r, z)[2]
    assert np.max(np.abs(disc_bz(r, z, h) - expected)) < 1e-9


def test_disc_on_axis_closed_form():
    """On the axis of a disc of radius R, thickness 2h: Bz = (J/2)[(z+h)/√((z+h)²+R²) −
    (z−h)/√((z−h)²+R²)] (the solenoid's axial field; any electromagnetism text, e.g.
    Furlani 2001)."""
    for z in (-4.0, 0.0, 0.3, 1.7, 10.0):
        h = 0.4
        expected = 0.5 * ((z + h) / math.hypot(z + h, 1) - (z - h) / math.hypot(z - h, 1))
        assert disc_bz(0.0, z, h) == pytest.approx(expected, rel=1e-12, abs=1e-15)


def test_cel_gives_the_complete_elliptic_integrals():
    """cel(kc, 1, 1, 1) = K(k) and cel(kc, 1, 1, kc²) = E(k), with k² = 1 − kc² (Bulirsch
    1965); scipy's ellipk/ellipe take m = k²."""
    kc = np.linspace(0.01, 1.0, 200)
    m = 1 - kc * kc
    assert np.allclose(cel(kc, 1.0, 1.0, 1.0), ellipk(m), rtol=1e-12)
    assert np.allclose(cel(kc, 1.0, 1.0, kc * kc), ellipe(m), rtol=1e-12)


def test_cel_against_its_defining_integral():
    """cel's p ≤ 0 branch (the disc's rim, r = 1, has p = 0) and its p > 0 branch, against a
    quadrature of its defining integral ∫₀^{π/2} (c cos²φ + s sin²φ) / ((cos²φ + p sin²φ)√(cos²φ + kc²
    sin²φ)) dφ, done here by midpoint sums independently of the algorithm."""
    phi = (np.arange(200_000) + 0.5) * (np.pi / 2) / 200_000
    cos2, sin2 = np.cos(phi) ** 2, np.sin(phi) ** 2
    cases = ((0.5, 0.0, 1.0, 0.0), (0.3, 0.0, 1.0, 0.0), (0.8, 0.25, 1.0, 0.5), (0.2, 0.6, 1.0, 0.7))
    for kc, p, c, s in cases:
        integrand = (c * cos2 + s * sin2) / ((cos2 + p * sin2) * np.sqrt(cos2 + kc * kc * sin2))
        quad = integrand.sum() * (np.pi / 2) / len(phi)
        assert float(cel(kc, p, c, s)) == pytest.approx(quad, rel=1e-6)
