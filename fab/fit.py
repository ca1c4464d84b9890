"""Checks that every part can be made and fits, made on the outlines before anything is
written: webs between holes and pockets, magnets inside their disc, coils apart, jacking
screws inside the stator, the lead slots between the lugs, the jig's holes inside its core.

Each failure is a DesignError naming the key to change and, where one number settles it,
the value that would do.
"""

from __future__ import annotations

import math

import numpy as np

from fab.outlines import (
    JACK_STATOR_CLEARANCE_MM,
    MARK_CLEARANCE_MM,
    Feature,
    Flat,
    disc_layout,
    jig_cheek_flat,
    jig_core_flat,
    magnet_template_flat,
    polygon,
    rotor_disc_flat,
    stator_flat,
    stator_layout,
    stator_plate_flat,
)
from layout.advice import with_suggestions
from layout.design import Design, compute_design
from layout.rotor import disc_count, is_steel_disc
from layout.spec import load_spec

_TOL = 0.05  # arcs are checked as chords (ARC_STEP_DEG): this covers their sag
# Which feature of a pair that comes too close is the one to move: the first in this list.
_MOVE_FIRST = (
    "jack",
    "balance",
    "slot",
    "lug",
    "dowel",
    "hub",
    "winder",
    "pin",
    "pocket",
    "magnet",
    "window",
    "bore",
    "mark",
    "index",
    "number",
    "cavity",
    "outline",
)


def _segments(pts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    return pts, np.roll(pts, -1, axis=0)


def _point_segment_mm(p: np.ndarray, a: np.ndarray, b: np.ndarray) -> float:
    """Least distance from points p (n, 2) to segments a→b (m, 2)."""
    ab = b - a
    ap = p[:, None, :] - a[None, :, :]
    t = np.clip((ap * ab).sum(-1) / np.maximum((ab * ab).sum(-1), 1e-30), 0, 1)
    d = ap - t[..., None] * ab
    return float(np.sqrt((d * d).sum(-1)).min())


def _cross(o, a, b):
    return (a[..., 0] - o[..., 0]) * (b[..., 1] - o[..., 1]) - (a[..., 1] - o[..., 1]) * (
        b[..., 0] - o[..., 0]
    )


def _crossing(p: np.ndarray, q: np.ndarray) -> bool:
    """Do the outlines p and q cross (any edge of one through an edge of the other)?"""
    a1, b1 = (x[:, None, :] for x in _segments(p))
    a2, b2 = (x[None, :, :] for x in _segments(q))
    d1, d2 = _cross(a2, b2, a1), _cross(a2, b2, b1)
    d3, d4 = _cross(a1, b1, a2), _cross(a1, b1, b2)
    return bool(np.any((d1 * d2 < 0) & (d3 * d4 < 0)))


def inside(point: np.ndarray, poly: np.ndarray) -> bool:
    """Ray casting: is the point inside the polygon?"""
    x, y = point
    a, b = _segments(poly)
    cond = (a[:, 1] > y) != (b[:, 1] > y)
    with np.errstate(divide="ignore", invalid="ignore"):
        xs = a[:, 0] + (y - a[:, 1]) * (b[:, 0] - a[:, 0]) / (b[:, 1] - a[:, 1])
    return bool(np.count_nonzero(cond & (x < xs)) % 2)


class Shape:
    """A feature's outline ready for distance checks: a circle exactly, anything else as chords."""

    def __init__(self, path):
        circ = path.as_circle()
        self.circle = circ
        self.pts = path.points() if circ is None else None
        if circ is None:
            self.lo, self.hi = self.pts.min(0), self.pts.max(0)
        else:
            self.lo, self.hi = circ[0] - circ[1], circ[0] + circ[1]


def gap_mm(p: Shape, q: Shape, limit: float = math.inf) -> float:
    """Clear distance between two separate outlines; negative if they overlap or one holds the other.

    Returns early with a lower bound when their boxes are farther apart than `limit`.
    """
    lo = np.maximum(p.lo - q.hi, q.lo - p.hi)
    box = float(np.hypot(*np.maximum(lo, 0)))
    if box > limit:
        return box
    if p.circle and q.circle:
        return float(np.linalg.norm(p.circle[0] - q.circle[0])) - p.circle[1] - q.circle[1]
    if p.circle or q.circle:
        c, poly = (p, q) if p.circle else (q, p)
        centre, r = c.circle
        if inside(centre, poly.pts):
            return -1.0
        return _point_segment_mm(centre[None, :], *_segments(poly.pts)) - r
    if _crossing(p.pts, q.pts) or inside(p.pts[0], q.pts) or inside(q.pts[0], p.pts):
        return -1.0
    return min(_point_segment_mm(p.pts, *_segments(q.pts)), _point_segment_mm(q.pts, *_segments(p.pts)))


def edge_gap_mm(f: Shape, outline: Shape) -> float:
    """Clear distance from a feature to the inside of an outline; negative if it crosses or lies outside."""
    if outline.circle is not None:
        centre, r_out = outline.circle
        if f.circle is not None:
            return r_out - float(np.linalg.norm(f.circle[0] - centre)) - f.circle[1]
        return r_out - float(np.linalg.norm(f.pts - centre, axis=1).max())
    if f.circle is not None:
        centre, r = f.circle
        if not inside(centre, outline.pts):
            return -1.0
        return _point_segment_mm(centre[None, :], *_segments(outline.pts)) - r
    if _crossing(f.pts, outline.pts) or not inside(f.pts[0], outline.pts):
        return -1.0
    return _point_segment_mm(f.pts, *_segments(outline.pts))


def _mover(a: Feature, b: Feature) -> Feature:
    ia = _MOVE_FIRST.index(a.kind) if a.kind in _MOVE_FIRST else len(_MOVE_FIRST)
    ib = _MOVE_FIRST.index(b.kind) if b.kind in _MOVE_FIRST else len(_MOVE_FIRST)
    return a if ia <= ib else b


def _apart(gap: float) -> str:
    return "overlap" if gap < 0 else f"are {gap:.1f} mm apart"


def _fail(design: Design, flat: Flat, a: Feature, b: Feature, gap: float, need: float, web_key: str):
    spec = design.spec
    kinds = {a.kind, b.kind}
    what = f"{a.label} and {b.label} on the {flat.title} {_apart(gap)}"
    rule = f"less than {web_key} = {need:g}" if web_key else f"want at least {need:g} mm"
    mg = spec.magnets
    if kinds <= {"pocket", "magnet"} and a.kind == b.kind:
        half_r, half_t = disc_layout(design).place_half_mm
        s, c = math.sin(math.pi / mg.count), math.cos(math.pi / mg.count)
        # Blocks come nearest at their inner corners, round magnets across the chord.
        rc = half_r + (need / 2 + half_t * c) / s if mg.shape == "block" else (need / 2 + half_r) / s
        return spec.fail(
            "magnets.pitch_radius_mm",
            mg.pitch_radius_mm,
            f"{what}, {rule}: move the magnets out to at least {math.ceil(rc * 10) / 10:g}, "
            "or use fewer or narrower magnets",
        )
    if kinds & {"pocket", "magnet"} and "outline" in kinds and flat.part.startswith(("rotor", "magnet")):
        f = a if a.kind != "outline" else b
        r = float(np.hypot(*f.path.points().T).max())
        d = 2 * (r + need)
        return spec.fail(
            "rotor.disc_outer_diameter_mm",
            2 * design.forces.disc_outer_radius_mm,
            f"{what}, {rule}: make the disc at least {math.ceil(d):g} across",
        )
    if kinds == {"hub", "bore"}:
        ro = spec.rotor
        d = ro.bore_diameter_mm + ro.hub_hole_diameter_mm + 2 * need
        return spec.fail(
            "rotor.hub_bolt_circle_mm",
            2 * disc_layout(design).hub_radius_mm,
            f"{what}, {rule}: use a bolt circle of at least {math.ceil(d * 10) / 10:g}",
        )
    if kinds == {"hub"}:
        ro = spec.rotor
        d = (ro.hub_hole_diameter_mm + need) / math.sin(math.pi / ro.hub_bolts)
        return spec.fail(
            "rotor.hub_bolt_circle_mm",
            2 * disc_layout(design).hub_radius_mm,
            f"{what}, {rule}: use a bolt circle of at least {math.ceil(d * 10) / 10:g} or fewer bolts",
        )
    m = _mover(a, b)
    value = round(m.value, 2) if isinstance(m.value, float) else m.value
    return spec.fail(m.key, value, f"{what}, {rule}: change {m.key}")


def check_flat(design: Design, flat: Flat, extra: tuple[Feature, ...] = ()) -> None:
    """Cut and pocketed features keep flat.web_mm apart and from the edge; engravings keep
    MARK_CLEARANCE_MM from both. `extra` are further places to keep clear (magnets on steel)."""
    web = flat.web_mm
    solid = flat.holes + flat.pockets + extra
    outline = Shape(flat.outline.path)
    pts = {id(f): Shape(f.path) for f in solid + flat.engraved}
    for f in solid:
        g = edge_gap_mm(pts[id(f)], outline)
        if g < web - _TOL:
            raise _fail(design, flat, f, flat.outline, g, web, flat.web_key)
    for i, f in enumerate(solid):
        for h in solid[i + 1 :]:
            g = gap_mm(pts[id(f)], pts[id(h)], web)
            if g < web - _TOL:
                raise _fail(design, flat, f, h, g, web, flat.web_key)
    for e in flat.engraved:
        g = edge_gap_mm(pts[id(e)], outline)
        if g < MARK_CLEARANCE_MM - _TOL:
            raise _fail(design, flat, e, flat.outline, g, MARK_CLEARANCE_MM, "")
        for f in solid:
            g = gap_mm(pts[id(e)], pts[id(f)], MARK_CLEARANCE_MM)
            if g < MARK_CLEARANCE_MM - _TOL:
                raise _fail(design, flat, e, f, g, MARK_CLEARANCE_MM, "")


def check_coils(design: Design) -> None:
    """Neighbouring coil places keep stator.coil_clearance_mm, all round and at the inner radius."""
    spec, geo = design.spec, design.geometry
    need = spec.stator.coil_clearance_mm
    q = geo.positions
    first, _ = geo.coil_polygons(1)
    second, _ = geo.coil_polygons(2 if q > 1 else 1)
    g = gap_mm(Shape(polygon(first)), Shape(polygon(second)))
    if g < need - 1e-6:
        raise spec.fail(
            "stator.coil_clearance_mm",
            need,
            f"neighbouring coils {_apart(g)}; use narrower legs (stator.leg_width_mm) or fewer coils",
        )


def check_stator(design: Design) -> None:
    spec = design.spec
    sl = stator_layout(design)
    lay = disc_layout(design)
    ro = spec.rotor
    # The hub, its bolts and the jacking screws turn inside the stator's bore.
    need_hub = lay.hub_radius_mm + lay.hub_hole_mm / 2 + JACK_STATOR_CLEARANCE_MM
    if sl.inner_radius_mm < need_hub - _TOL:
        raise spec.fail(
            "stator.resin_rim_mm",
            spec.stator.resin_rim_mm,
            f"leaves the stator's bore {2 * sl.inner_radius_mm:.1f} mm across, too small for the hub bolts "
            f"on rotor.hub_bolt_circle_mm = {2 * lay.hub_radius_mm:g}: use a smaller rim or bolt circle",
        )
    jack = lay.jacking
    if jack is not None:
        hi = sl.inner_radius_mm - jack.diameter_mm / 2 - JACK_STATOR_CLEARANCE_MM
        if jack.radius_mm > hi + _TOL:
            raise spec.fail(
                "rotor.jacking_circle_mm",
                2 * jack.radius_mm,
                f"the {jack.screw} jacking screws must pass inside the stator's bore "
                f"({2 * sl.inner_radius_mm:.1f} mm across): at most {math.floor(2 * hi * 10) / 10:g}",
            )
    # The lead slots sit between the two lugs either side of 0°, with a web to each.
    r = sl.outer_radius_mm
    lug_edge = 180.0 / spec.stator.mounting_lugs - math.degrees(math.asin(sl.lug_half_width_mm / r))
    reach = max(abs(a) for a in sl.lead_slot_angles_deg)
    reach += math.degrees(math.asin((sl.lead_slot_width_mm / 2 + ro.min_web_mm) / r))
    if reach > lug_edge + _TOL:
        raise spec.fail(
            "stator.mounting_lugs",
            spec.stator.mounting_lugs,
            f"the {len(sl.lead_names)} lead slots at the terminal side (0°) run into the mounting lugs "
            "either side: use fewer lugs",
        )


def check_parts(design: Design) -> None:
    """Every check, on every part the package will hold; the first failure is raised."""
    spec = design.spec
    check_coils(design)
    check_stator(design)
    lay = disc_layout(design)
    if lay.balance_radius_mm is None:
        raise spec.fail(
            "rotor.disc_outer_diameter_mm",
            2 * lay.outer_radius_mm,
            f"leaves no room for {lay.balance_screw} balance holes between the magnets or on the rim: "
            "make the disc larger",
        )
    steel = is_steel_disc(spec)
    for disc in range(1, disc_count(spec) + 1):
        flat = rotor_disc_flat(design, disc)
        # Magnets on a steel disc must not cover a hole either.
        pockets = [f for f in magnet_template_flat(design, disc).holes if f.kind == "pocket"]
        places = tuple(
            Feature("magnet", f.path, f"magnet place {j}", f.key, f.value)
            for j, f in enumerate(pockets, start=1)
        )
        check_flat(design, flat, places if steel else ())
        if steel:
            check_flat(design, magnet_template_flat(design, disc))
    check_flat(design, stator_flat(design))
    if spec.rotor.topology == "one_disc_steel_stator":
        check_flat(design, stator_plate_flat(design))
    check_flat(design, jig_core_flat(design))
    check_flat(design, jig_cheek_flat(design))


def checked_design(design_path, suggest: bool = False, progress=None) -> Design:
    """Load, compute and check a design the way `build` does, for every command alike.

    The fit checks work on the numpy outlines (no CAD kernel), so `plan` refuses what `build`
    would refuse, at the cost of about 0.1 s. With `suggest`, the design carries the changes
    that help its warnings, each re-run through the model and fit-checked (layout.advice;
    a second or two per warning).
    """
    design = compute_design(load_spec(design_path))
    check_parts(design)
    if suggest:
        design = with_suggestions(design, check_parts, progress)
    return design
