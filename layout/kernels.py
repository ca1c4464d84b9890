"""Closed-form axial field of a uniformly, axially magnetised block and disc.

Both are charge-sheet solutions: a magnet polarised along +z with polarisation J (T) is two
sheets of magnetic charge, +J/μ0 on its top face and −J/μ0 on its bottom face.

- Block (rectangular sheet): Bz is a signed sum of eight arctangents over the corners,
  Bz = −(J/4π) Σ (−1)^(i+j+k) atan2(x_i·y_j, z_k·R_ijk) (Akoun & Yonnet, IEEE Trans. Magn.
  20, 1984; Yang et al., Supercond. Sci. Technol. 3, 1990).
- Disc (circular sheet): Bz from Bulirsch's general complete elliptic integral cel
  (Derby & Olbert, "Cylindrical magnets and ideal solenoids", Am. J. Phys. 78, 2010;
  Bulirsch, Numer. Math. 7, 1965).

Both give B everywhere, inside the magnet too: for the block, atan2's branches carry the
jump of J across the faces; the disc's formula is that of the equivalent current sheet.
They are written here rather than imported so that `plan` does not load scipy;
`tests/test_kernels.py` compares them with magpylib, an independent implementation, to
1e-9 T per tesla of polarisation.

Lengths in any one unit (only ratios matter); J = 1 T, the caller scales.
"""

from __future__ import annotations

import numpy as np

_CEL_TOL = 1e-12
_CEL_MAX_STEPS = 60  # quadratic convergence: a dozen steps except within 1e-300 of the rim


def block_bz(x: np.ndarray, y: np.ndarray, z: np.ndarray, dim: np.ndarray) -> np.ndarray:
    """Bz (T per T of polarisation) of blocks of full sides dim (..., 3) centred at the origin,
    polarised along +z, at points (x, y, z) in the block's frame (same shape as dim[..., 0])."""
    a, b, c = dim[..., 0] / 2, dim[..., 1] / 2, dim[..., 2] / 2
    total = np.zeros(np.broadcast(x, a).shape)
    for xi, sx in ((x + a, 1.0), (x - a, -1.0)):
        for yj, sy in ((y + b, 1.0), (y - b, -1.0)):
            xy = xi * yj
            for zk, sz in ((z + c, 1.0), (z - c, -1.0)):
                r = np.sqrt(xi * xi + yj * yj + zk * zk)
                total += (sx * sy * sz) * np.arctan2(xy, zk * r)
    return -total / (4 * np.pi)


def cel(kc: np.ndarray, p: np.ndarray, c: np.ndarray, s: np.ndarray) -> np.ndarray:
    """Bulirsch's general complete elliptic integral, vectorised (Bulirsch 1965, algorithm
    cel, both of its branches for p > 0 and p ≤ 0; kc ≠ 0)."""
    kc, p, c, s = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (kc, p, c, s)))
    k = np.abs(kc)
    em = np.ones_like(k)
    positive = p > 0
    with np.errstate(divide="ignore", invalid="ignore"):
        root = np.sqrt(np.where(positive, p, 1.0))
        g0 = 1 - p
        f0 = k * k - p
        q0 = (1 - k * k) * (s - c * p)
        pn = np.sqrt(np.where(positive, 1.0, f0 / g0))
        cn = (c - s) / g0
        pp = np.where(positive, root, pn)
        ss = np.where(positive, s / root, -q0 / (g0 * g0 * pn) + cn * pn)
        cc = np.where(positive, c, cn)
    kk = k  # k·em, with em = 1 at the start
    for _ in range(_CEL_MAX_STEPS):
        f = cc
        cc = cc + ss / pp
        g = kk / pp
        ss = 2 * (ss + f * g)
        pp = g + pp
        g = em
        em = k + em
        if not np.any(np.abs(g - k) > g * _CEL_TOL):
            break
        k = 2 * np.sqrt(kk)
        kk = k * em
    return (np.pi / 2) * (ss + cc * em) / (em * (em + pp))


def disc_bz(r: np.ndarray, z: np.ndarray, half_height: np.ndarray) -> np.ndarray:
    """Bz (T per T of polarisation) of a disc of radius 1 and half-height h, centred at the
    origin and polarised along +z, at radius r ≥ 0 and height z (both in radii)."""
    r, z, h = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (r, z, half_height)))
    gamma = (1 - r) / (1 + r)
    total = np.zeros_like(r)
    for zz, sign in ((z + h, 1.0), (z - h, -1.0)):
        outer = np.sqrt(zz * zz + (1 + r) ** 2)
        kc = np.sqrt(zz * zz + (1 - r) ** 2) / outer
        total += sign * zz / outer * cel(kc, gamma * gamma, 1.0, gamma)
    return total / (np.pi * (1 + r))
