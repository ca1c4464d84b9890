"""Axial flux density of the rotor magnets, with steel plates by the method of images.

Closed-form kernels (`layout.kernels`) give the exact field of uniformly magnetised blocks
and discs (charge-sheet solutions: Akoun & Yonnet 1984, Yang 1990 for blocks; Derby &
Olbert 2010 for axially magnetised cylinders), checked against magpylib in the tests. A
steel plate of very high permeability is replaced by the mirror image of every magnet in
its surface with the magnetisation normal to the plate kept (method of images); two
parallel plates give an image series of period twice their spacing, truncated where the
field has converged (see `image_sources`). This assumes unsaturated steel; `forces.py`
checks the plates' flux density.

Lengths in mm (the kernels depend only on ratios), flux density in T.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from layout import kernels
from layout.geometry import Geometry

CONVERGENCE_REL = 1e-4  # image series stops when another order changes Bz by less
TRIM_REL = 1e-4  # far magnets are left out while together they change Bz by less
MAX_IMAGE_ORDER = 40
_CHUNK = 20_000  # source-observer pairs per kernel call: small blocks stay in cache


@dataclass(frozen=True)
class Sources:
    """Magnets and their images as flat arrays, one row per source."""

    block: np.ndarray  # (n,) bool: block (True) or disc
    center_mm: np.ndarray  # (n, 3)
    dimension_mm: np.ndarray  # (n, 3): block (a, b, h); disc (d, h, 0)
    rotation_rad: np.ndarray  # (n,)
    polarization_t: np.ndarray  # (n,) along +z
    image_order: int  # reflections kept each way (0 with fewer than two plates)

    def __len__(self) -> int:
        return len(self.polarization_t)


def _real_sources(geo: Geometry) -> Sources:
    mags = geo.magnets
    block = np.array([m.shape == "block" for m in mags])
    dims = np.array([(m.dimension_mm + (0.0,))[:3] for m in mags], dtype=float)
    return Sources(
        block=block,
        center_mm=np.array([m.center_mm for m in mags], dtype=float),
        dimension_mm=dims,
        rotation_rad=np.radians([m.rotation_deg for m in mags]),
        polarization_t=np.array([m.polarization_t for m in mags], dtype=float),
        image_order=0,
    )


def _with_images(real: Sources, planes: tuple[float, ...], order: int) -> Sources:
    """Real magnets plus their images in the steel planes.

    One plane at a: each magnet's mirror at z' = 2a − z (exact). Two planes a < b,
    spacing D: z' = z + 2nD and z' = 2a − z + 2nD for n = −order..order (all images with
    at most `order` periods of reflection each way; n = 0 of the first family is the magnet).
    """
    z = real.center_mm[:, 2]
    if not planes:
        shifts = [(1, 0.0)]
    elif len(planes) == 1:
        shifts = [(1, 0.0), (-1, 2 * planes[0])]
    else:
        a, b = planes
        d = b - a
        shifts = []
        for n in range(-order, order + 1):
            shifts.append((1, 2 * n * d))
            shifts.append((-1, 2 * a + 2 * n * d))
    parts = []
    for sign, offset in shifts:
        c = real.center_mm.copy()
        c[:, 2] = sign * z + offset
        parts.append(c)
    k = len(shifts)
    return Sources(
        block=np.tile(real.block, k),
        center_mm=np.concatenate(parts),
        dimension_mm=np.tile(real.dimension_mm, (k, 1)),
        rotation_rad=np.tile(real.rotation_rad, k),
        polarization_t=np.tile(real.polarization_t, k),
        image_order=order if len(planes) == 2 else 0,
    )


def _bz_block(sources: Sources, idx: np.ndarray, pts: np.ndarray, is_block: bool) -> np.ndarray:
    """Bz (T) of sources `idx` (all of one shape) at points: (len(idx), len(pts))."""
    rel = pts[None, :, :] - sources.center_mm[idx, None, :]
    c = np.cos(sources.rotation_rad[idx])[:, None]
    s = np.sin(sources.rotation_rad[idx])[:, None]
    x = c * rel[..., 0] + s * rel[..., 1]
    y = -s * rel[..., 0] + c * rel[..., 1]
    zz = rel[..., 2]
    if is_block:
        b = kernels.block_bz(x, y, zz, sources.dimension_mm[idx, None, :])
    else:
        radius = sources.dimension_mm[idx, 0][:, None] / 2
        half_h = sources.dimension_mm[idx, 1][:, None] / 2
        b = kernels.disc_bz(np.hypot(x, y) / radius, zz / radius, half_h / radius)
    return b * sources.polarization_t[idx][:, None]


def _chunks(sources: Sources, n_pts: int):
    per = max(1, _CHUNK // max(n_pts, 1))
    for is_block in (True, False):
        sel = np.flatnonzero(sources.block == is_block)
        for start in range(0, len(sel), per):
            yield is_block, sel[start : start + per]


def bz(sources: Sources, points_mm: np.ndarray) -> np.ndarray:
    """Bz (T) of all sources at points (m, 3) in mm, summed over sources."""
    pts = np.asarray(points_mm, dtype=float).reshape(-1, 3)
    out = np.zeros(len(pts))
    for is_block, idx in _chunks(sources, len(pts)):
        out += _bz_block(sources, idx, pts, is_block).sum(axis=0)
    return out


def bz_each(sources: Sources, points_mm: np.ndarray) -> np.ndarray:
    """Bz (T) of every source separately: (n_sources, m). For few points only."""
    pts = np.asarray(points_mm, dtype=float).reshape(-1, 3)
    out = np.zeros((len(sources), len(pts)))
    for is_block, idx in _chunks(sources, len(pts)):
        out[idx] = _bz_block(sources, idx, pts, is_block)
    return out


def subset(sources: Sources, keep: np.ndarray) -> Sources:
    """The sources selected by `keep` (boolean mask or indices), unchanged (mm, rad, T)."""
    return Sources(
        block=sources.block[keep],
        center_mm=sources.center_mm[keep],
        dimension_mm=sources.dimension_mm[keep],
        rotation_rad=sources.rotation_rad[keep],
        polarization_t=sources.polarization_t[keep],
        image_order=sources.image_order,
    )


def near_sources(sources: Sources, probe_mm: np.ndarray, rel: float = TRIM_REL) -> Sources:
    """Drop the sources farthest round the ring from the probes while, together, they change
    Bz at every probe by less than `rel` of the largest |Bz| there.

    The probes span the angular window where the field is wanted; the dropped part is
    computed exactly at the probes, so the error there is known, not assumed.
    """
    each = bz_each(sources, probe_mm)
    total = np.abs(each.sum(axis=0)).max()
    probe_angle = np.arctan2(probe_mm[:, 1], probe_mm[:, 0]).mean()
    ang = np.arctan2(sources.center_mm[:, 1], sources.center_mm[:, 0]) - probe_angle
    dist = np.abs((ang + np.pi) % (2 * np.pi) - np.pi)
    order = np.argsort(-dist, kind="stable")
    tail = np.abs(np.cumsum(each[order], axis=0)).max(axis=1)
    n_drop = int(np.searchsorted(tail >= rel * total, True))
    keep = np.sort(order[n_drop:])
    return subset(sources, keep)


def image_sources(geo: Geometry, probe_mm: np.ndarray) -> Sources:
    """Magnets with enough images that one more order changes Bz at the probes < 1e-4.

    The field of an alternating magnet row decays about as exp(−πz/τ) away from it
    (τ the pole pitch), so far images matter little and the series converges in a few
    orders; the probe points sit in the coil region where the EMF is computed.
    """
    real = _real_sources(geo)
    planes = geo.iron_planes_z_mm
    if len(planes) < 2:
        return _with_images(real, planes, 0)
    order = 1
    prev = bz(_with_images(real, planes, order), probe_mm)
    while order < MAX_IMAGE_ORDER:
        nxt = bz(_with_images(real, planes, order + 1), probe_mm)
        scale = max(float(np.abs(nxt).max()), 1e-12)
        order += 1
        if float(np.abs(nxt - prev).max()) < CONVERGENCE_REL * scale:
            break
        prev = nxt
    return _with_images(real, planes, order)
