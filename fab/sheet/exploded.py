"""An exploded view of the machine for the sheet's first page, drawn from the assembly's solids
(fab.solids.assembly): every part's faces tessellated, moved apart along the shaft, projected
on a view from above and to the side, and painted far to near (the painter's algorithm, with
faces turned away left out), each shaded by the light on it. Hidden faces are painted over,
so a builder sees what they are making before reading.
"""

from __future__ import annotations

import math

import numpy as np

from layout.design import Design

TESSELLATION_MM = 0.8  # chord tolerance: fine enough for a picture a few cm across
AZIMUTH_DEG, ELEVATION_DEG = -55.0, 20.0  # where the eye is, about the shaft and above the stator
LIGHT = np.array([-0.4, -0.5, 0.77])  # from above, over the viewer's left shoulder
RESIN_ALPHA = 0.55  # the cast stator drawn see-through, so the coils in it show


def _view_axes() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(right, up, towards the eye) unit vectors of the view."""
    az, el = math.radians(AZIMUTH_DEG), math.radians(ELEVATION_DEG)
    eye = np.array([math.cos(el) * math.cos(az), math.cos(el) * math.sin(az), math.sin(el)])
    right = np.cross([0.0, 0.0, 1.0], eye)
    right /= np.linalg.norm(right)
    return right, np.cross(eye, right), eye


def _lift(name: str, gap: float) -> float:
    """How far a part moves along the shaft in the exploded view: disc 1 and its magnets
    down, disc 2 (or the stator plate) and its magnets up, the stator and coils stay."""
    if name.startswith(("rotor_disc_1", "magnet_1_")):
        return -gap
    if name.startswith(("rotor_disc_2", "magnet_2_", "stator_plate")):
        return gap
    return 0.0


_CACHE: dict[str, tuple] = {}  # by the design file's values: each sheet of a design draws it once


def _faces(design: Design):
    from fab import solids

    parts = solids.assembly(design)
    gap = max(25.0, 0.45 * 2 * design.forces.disc_outer_radius_mm)
    right, up, eye = _view_axes()
    light = LIGHT / np.linalg.norm(LIGHT)
    meshes: dict[int, tuple[np.ndarray, np.ndarray]] = {}
    polys, depth, colour, alpha = [], [], [], []
    for part in parts:
        k = id(part.solid)
        if k not in meshes:
            verts, tris = part.solid.tessellate(TESSELLATION_MM, 0.3)
            meshes[k] = (np.array([v.toTuple() for v in verts]), np.array(tris, dtype=int))
        v, t = meshes[k]
        m = part.location.wrapped.Transformation()
        rot = np.array([[m.Value(i, j) for j in (1, 2, 3)] for i in (1, 2, 3)])
        move = np.array([m.Value(i, 4) for i in (1, 2, 3)])
        world = v @ rot.T + move + np.array([0.0, 0.0, _lift(part.name, gap)])
        tri = world[t]  # (n, 3, 3)
        normal = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
        length = np.linalg.norm(normal, axis=1)
        keep = (length > 1e-9) & (normal @ eye > 0)
        tri, normal = tri[keep], normal[keep] / length[keep, None]
        shade = 0.45 + 0.55 * np.clip(normal @ light, 0.0, 1.0)
        polys.append(np.stack([tri @ right, tri @ up], axis=-1))
        depth.append(tri.mean(axis=1) @ eye)
        colour.append(np.array(part.colour)[None, :] * shade[:, None])
        alpha.append(np.full(len(tri), RESIN_ALPHA if part.name == "stator" else 1.0))
    order = np.argsort(np.concatenate(depth))
    return (
        np.concatenate(polys)[order],
        np.concatenate(colour)[order],
        np.concatenate(alpha)[order],
    )


def exploded_faces(design: Design):
    """(polygons (n, 3, 2) mm on the view plane, colours (n, 3), alphas (n,)), far to near."""
    key = repr(design.spec)
    if key not in _CACHE:
        if len(_CACHE) >= 8:
            _CACHE.pop(next(iter(_CACHE)))
        _CACHE[key] = _faces(design)
    return _CACHE[key]


def draw_exploded(c, w: float, h: float, design: Design) -> None:
    """The exploded view scaled to fit w × h points, centred."""
    polys, colours, alphas = exploded_faces(design)
    lo, hi = polys.reshape(-1, 2).min(axis=0), polys.reshape(-1, 2).max(axis=0)
    s = min(w / (hi[0] - lo[0]), h / (hi[1] - lo[1]))
    off = np.array([w, h]) / 2 - s * (lo + hi) / 2
    c.setLineWidth(0.15)
    c.setLineJoin(1)
    last_alpha = None
    for tri, rgb, a in zip(polys * s + off, colours, alphas, strict=True):
        if a != last_alpha:
            c.setFillAlpha(a)
            c.setStrokeAlpha(a)
            last_alpha = a
        c.setFillColorRGB(*rgb)
        c.setStrokeColorRGB(*rgb)
        p = c.beginPath()
        p.moveTo(*tri[0])
        p.lineTo(*tri[1])
        p.lineTo(*tri[2])
        p.close()
        c.drawPath(p, stroke=1, fill=1)
    c.setFillAlpha(1)
    c.setStrokeAlpha(1)
    c.setFillGray(0)
    c.setStrokeGray(0)
