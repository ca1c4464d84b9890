"""Printed parts too large for the bed, split into sector segments that fit, each joined to the
next by a half lap with a bolt hole through it.

A round part (a mould, a placing template) is cut along rays from its centre into n equal
sectors. The cut steps half way up: below the mid-plane it lies `lap` degrees one way of the
ray, above it the same the other way, so neighbours overlap by a lap as long as LAP_MM at the
rim. The lap locates the two pieces along the arc and in height, the bolt through
it (or a pin, glued) across; glue the lap faces, or bolt them, or both (common practice for
printed parts that outgrow the bed).

The rays are chosen among angles the part allows (the caller's: for a mould, between the coil
places, clear of the pins and the lead slots, where only the wall, floor and island cross the
lap; a flat template allows any), as few as leave every sector narrow enough to fit the bed
with its bisector along one side: its chord 2·R·sin(φ/2 + lap) across and R along, R the
part's outer radius. That is known from the outline alone, so the package can name the files
before it models anything. Modelling then checks that each joint hole lies in solid
material for its whole height (the hole's volume all inside the part), moving a ray by up to
RAY_SHIFT_DEG if not, and that every segment comes out one piece.

cadquery is imported by fab.solids, which this module is loaded after.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

LAP_MM = 20.0  # length of the half lap along the arc at the part's rim (our choice)
JOINT_HOLE_MM = 3.4  # clearance for an M3 bolt (ISO 273 medium series, from memory), or a 3 mm pin glued in
# How a segmented part is joined, for the package's manifest and the sheet alike.
JOIN_WORDS = (
    "glue each half lap (two-part epoxy) and bolt it with an M3 bolt, or a 3 mm pin glued in, "
    "through its joint hole"
)
RAY_SHIFT_DEG = 2.0  # how far modelling may move a ray to find solid material for its hole


@dataclass(frozen=True)
class SegmentPlan:
    """How a round part is split: along `rays_deg` (none: whole), with half laps of `lap_deg`
    either side of each ray and the joint holes at `joint_radius_mm`."""

    rays_deg: tuple[float, ...]
    lap_deg: float
    joint_radius_mm: float
    outer_radius_mm: float

    @property
    def count(self) -> int:
        return max(1, len(self.rays_deg))


def _footprint_mm(outer_radius_mm: float, sector_deg: float, lap_deg: float) -> tuple[float, float]:
    """(along, across) of a segment lying with its bisector along the bed's x."""
    half = math.radians(sector_deg / 2 + lap_deg)
    return outer_radius_mm, 2 * outer_radius_mm * (math.sin(half) if half < math.pi / 2 else 1.0)


def lap_deg(outer_radius_mm: float, joint_radius_mm: float) -> float:
    """The half lap's angle either side of a ray: LAP_MM along the arc at the part's rim,
    and never less than holds the joint hole with a millimetre to spare at its radius."""
    rim = math.degrees(LAP_MM / 2 / outer_radius_mm)
    hole = math.degrees(math.asin(min(1.0, (JOINT_HOLE_MM / 2 + 1.0) / joint_radius_mm)))
    return max(rim, hole)


def segment_plan(
    outer_radius_mm: float, joint_radius_mm: float, bed_mm: float, allowed=None
) -> SegmentPlan | None:
    """The fewest rays, among those `allowed(lap_deg)` gives (default: every degree), that
    split a round part of `outer_radius_mm` into segments that fit a `bed_mm` square bed. No
    rays when it fits whole; None when no split can (more than a bed's length from its centre,
    or the allowed rays too far apart: make it from boards)."""
    lap = lap_deg(outer_radius_mm, joint_radius_mm)
    allowed_deg = allowed(lap) if allowed is not None else None
    if 2 * outer_radius_mm <= bed_mm:
        return SegmentPlan((), 0.0, joint_radius_mm, outer_radius_mm)
    if outer_radius_mm > bed_mm:
        return None
    # the widest sector that fits, less what modelling may move each ray
    widest = 0.0
    for tenth in range(1, 1800):
        along, across = _footprint_mm(outer_radius_mm, tenth / 10, lap)
        if across > bed_mm:
            break
        widest = tenth / 10
    widest -= 2 * RAY_SHIFT_DEG
    allowed = sorted({round(a % 360.0, 3) for a in (allowed_deg if allowed_deg is not None else range(360))})
    best = None
    for start in allowed:
        rays, at = [start], start
        while True:
            reach = [a + 360.0 * t for t in (0, 1) for a in allowed if at < a + 360.0 * t <= at + widest]
            if start + 360.0 <= at + widest:
                break
            if not reach:
                rays = None
                break
            at = max(reach)
            rays.append(at % 360.0)
        if rays is not None and len(rays) >= 2 and (best is None or len(rays) < len(best)):
            best = rays
    if best is None:
        return None
    return SegmentPlan(_evened(best, allowed, widest), lap, joint_radius_mm, outer_radius_mm)


def _widest_gap(rays: list[float]) -> float:
    r = sorted(rays)
    return max(b - a for a, b in zip(r, r[1:] + [r[0] + 360.0], strict=True))


def _evened(rays: list[float], allowed: list[float], widest: float) -> tuple[float, ...]:
    """As many rays as `rays`, as near equal spacing as the allowed angles let them be: the
    greedy walk leaves a short last segment, so each start's evenly spaced targets are
    snapped to the nearest allowed angle and the set with the narrowest widest sector kept."""
    n = len(rays)
    best, best_gap = sorted(rays), _widest_gap(rays)
    for start in allowed:
        snapped = []
        for k in range(n):
            target = (start + 360.0 * k / n) % 360.0
            snapped.append(min(allowed, key=lambda a, t=target: abs((a - t + 180.0) % 360.0 - 180.0)))
        if len(set(snapped)) < n:
            continue
        gap = _widest_gap(snapped)
        if gap <= widest and gap < best_gap - 1e-9:
            best, best_gap = sorted(snapped), gap
    return tuple(best)


def _wedge(cq, a_deg: float, b_deg: float, r: float, z0: float, z1: float):
    """The solid sector from angle a to b (counter-clockwise), radius r, z0 to z1."""
    steps = max(2, int((b_deg - a_deg) / 5) + 2)
    pts = [(0.0, 0.0)] + [
        (r * math.cos(math.radians(t)), r * math.sin(math.radians(t)))
        for t in np.linspace(a_deg, b_deg, steps)
    ]
    w = cq.Wire.makePolygon([cq.Vector(x, y, z0) for x, y in pts], close=True)
    return cq.Solid.extrudeLinear(cq.Face.makeFromWires(w), cq.Vector(0, 0, z1 - z0))


def _cylinder(cq, radius: float, r: float, ray_deg: float, z0: float, z1: float):
    a = math.radians(ray_deg)
    return cq.Solid.makeCylinder(radius, z1 - z0, cq.Vector(r * math.cos(a), r * math.sin(a), z0))


def _in_solid(cq, solid, plan: SegmentPlan, ray_deg: float, z0: float, z1: float) -> bool:
    """Whether the joint hole at this ray lies in material for the part's whole height, with
    a wall of half its diameter round it."""
    probe = _cylinder(cq, JOINT_HOLE_MM, plan.joint_radius_mm, ray_deg, z0, z1)
    return abs(solid.intersect(probe).Volume() - probe.Volume()) < 1e-3 * probe.Volume()


def split(solid, plan: SegmentPlan) -> list:
    """The segments of `solid` (lying on its back, centred on z's axis), each turned so its
    bisector lies along +x, as printed. One segment, the solid itself, without rays."""
    from fab.solids import _cq

    if plan.count == 1:
        return [solid]
    cq = _cq()
    box = solid.BoundingBox()
    z0, z1 = box.zmin, box.zmax
    zm = (z0 + z1) / 2
    reach = plan.outer_radius_mm * 1.5 + 10.0
    rays = []
    for ray in sorted(plan.rays_deg):
        shifts = sorted(np.arange(-RAY_SHIFT_DEG, RAY_SHIFT_DEG + 1e-9, 0.5), key=abs)
        found = next((ray + d for d in shifts if _in_solid(cq, solid, plan, ray + d, z0, z1)), None)
        if found is None:
            raise ValueError(f"no solid material for the joint hole near {ray:g}°")
        rays.append(float(found))
    lap = plan.lap_deg
    out = []
    for k, a in enumerate(rays):
        b = rays[(k + 1) % len(rays)] + (360.0 if k == len(rays) - 1 else 0.0)
        lower = solid.intersect(_wedge(cq, a - lap, b - lap, reach, z0 - 1.0, zm))
        upper = solid.intersect(_wedge(cq, a + lap, b + lap, reach, zm, z1 + 1.0))
        seg = lower.fuse(upper).clean()
        hole = JOINT_HOLE_MM / 2
        seg = seg.cut(
            _cylinder(cq, hole, plan.joint_radius_mm, a, z0 - 1, z1 + 1),
            _cylinder(cq, hole, plan.joint_radius_mm, b, z0 - 1, z1 + 1),
        )
        if len(seg.Solids()) != 1:
            raise ValueError(f"the segment from {a:g}° to {b:g}° comes out in {len(seg.Solids())} pieces")
        out.append(seg.rotate(cq.Vector(0, 0, 0), cq.Vector(0, 0, 1), -(a + b) / 2))
    return out
