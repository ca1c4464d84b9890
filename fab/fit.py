"""Checks that every part can be made and fits, made on the outlines before anything is
written: webs between holes and pockets, magnets inside their disc, coils apart, jacking
screws inside the stator, the lead slots between the lugs, the jig's holes inside its core.

Each failure is a DesignError naming the key to change and, where one number settles it,
the value that would do. Where a pair of features comes too close and the keys that size or
place them only shape outlines (`_TRIAL_KEYS`), the check tries the values each key allows
on the outlines and names the first key, and the values of it, that leave features of the
pair's kinds clear of everything: the key of the feature to move first, then others that
bear on it.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Iterator
from dataclasses import dataclass

import numpy as np

from fab.outlines import (
    JACK_STATOR_CLEARANCE_MM,
    MARK_CLEARANCE_MM,
    Feature,
    Flat,
    disc_layout,
    exit_angle_deg,
    jig_cheek_flat,
    jig_core_flat,
    magnet_template_flat,
    polygon,
    printed_frame_flat,
    rotor_disc_flat,
    stator_flat,
    stator_layout,
    stator_plate_flat,
)
from layout.advice import with_suggestions
from layout.design import Design, compute_design
from layout.geometry import resolve_geometry
from layout.materials import is_printed_binder
from layout.rotor import is_plain_disc, is_steel_disc, rotor_discs
from layout.spec import DesignError, Spec, load_spec

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
# Keys a failed check tries other values of. Only the outlines (and, for the stator keys, the
# coil's shape) depend on them, so a trial needs no new field, output or force computation.
_TRIAL_KEYS = frozenset(
    {
        "fab.winder_hole_diameter_mm",
        "stator.hole_radial_mm",
        "rotor.jacking_circle_mm",
        "rotor.jacking_screw",
        "rotor.jacking_screws",
        "rotor.hub_bolt_circle_mm",
        "rotor.hub_hole_diameter_mm",
        "rotor.dowel_diameter_mm",
    }
)
# Keys that also size a feature placed by the key on the left, tried after it.
_ALSO = {"rotor.jacking_circle_mm": ("rotor.jacking_screw", "rotor.jacking_screws")}
_TRIAL_POINTS = 160  # values tried across a key's range; each change of outcome is then bisected
_ROUND = 10  # advised bounds are rounded inward to tenths of a millimetre


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


@dataclass(frozen=True)
class Clash:
    """Two features of a flat part closer than they may be (`b` may be the outline)."""

    a: Feature
    b: Feature
    gap_mm: float  # negative if they overlap
    need_mm: float
    web_key: str  # the key that sets need_mm, or "" for a fixed making dimension

    @property
    def kinds(self) -> frozenset[str]:
        return frozenset((self.a.kind, self.b.kind))


def _near_pairs(
    shapes: list[Shape], limit: float, others: list[Shape] | None = None
) -> list[tuple[int, int]]:
    """Index pairs, in row order, of shapes whose bounding boxes lie within `limit`: pairs
    i < j within `shapes`, or (i, j) of `shapes` × `others`."""
    b = shapes if others is None else others
    if not shapes or not b:
        return []
    lo_a, hi_a = np.array([s.lo for s in shapes]), np.array([s.hi for s in shapes])
    lo_b, hi_b = np.array([s.lo for s in b]), np.array([s.hi for s in b])
    sep = np.maximum(lo_a[:, None, :] - hi_b[None, :, :], lo_b[None, :, :] - hi_a[:, None, :])
    near = np.hypot(*np.moveaxis(np.maximum(sep, 0.0), -1, 0)) <= limit
    if others is None:
        near = np.triu(near, k=1)
    i, j = np.nonzero(near)
    return list(zip(i.tolist(), j.tolist(), strict=True))


def clashes(
    flat: Flat, extra: tuple[Feature, ...] = (), kinds: frozenset[str] | None = None
) -> Iterator[Clash]:
    """Every pair too close, in the order check_flat meets them.

    Cut and pocketed features keep flat.web_mm apart and from the edge; engravings keep
    MARK_CLEARANCE_MM from both. `extra` are further places to keep clear (magnets on steel).
    With `kinds`, only pairs with a feature of one of those kinds are measured.
    """
    web = flat.web_mm
    solid = flat.holes + flat.pockets + extra
    outline = Shape(flat.outline.path)
    shapes: dict[int, Shape] = {}

    def shape(f: Feature) -> Shape:
        if id(f) not in shapes:
            shapes[id(f)] = Shape(f.path)
        return shapes[id(f)]

    def wanted(f: Feature, h: Feature) -> bool:
        return kinds is None or f.kind in kinds or h.kind in kinds

    for f in solid:
        if wanted(f, flat.outline):
            g = edge_gap_mm(shape(f), outline)
            if g < web - _TOL:
                yield Clash(f, flat.outline, g, web, flat.web_key)
    # Only pairs whose boxes come within a web of each other can clash: found all at once
    # (a large stator has hundreds of features), then measured in order.
    for i, j in _near_pairs([shape(f) for f in solid], web):
        f, h = solid[i], solid[j]
        if wanted(f, h):
            g = gap_mm(shape(f), shape(h), web)
            if g < web - _TOL:
                yield Clash(f, h, g, web, flat.web_key)
    near: dict[int, list[int]] = {}
    for i, j in _near_pairs([shape(e) for e in flat.engraved], MARK_CLEARANCE_MM, [shape(f) for f in solid]):
        near.setdefault(i, []).append(j)
    for k, e in enumerate(flat.engraved):
        if wanted(e, flat.outline):
            g = edge_gap_mm(shape(e), outline)
            if g < MARK_CLEARANCE_MM - _TOL:
                yield Clash(e, flat.outline, g, MARK_CLEARANCE_MM, "")
        for f in (solid[j] for j in near.get(k, ())):
            if wanted(e, f):
                g = gap_mm(shape(e), shape(f), MARK_CLEARANCE_MM)
                if g < MARK_CLEARANCE_MM - _TOL:
                    yield Clash(e, f, g, MARK_CLEARANCE_MM, "")


def _fail(design: Design, flat: Flat, clash: Clash) -> DesignError:
    spec = design.spec
    a, b, need, web_key = clash.a, clash.b, clash.need_mm, clash.web_key
    kinds = clash.kinds
    what = f"{a.label} and {b.label} on the {flat.title} {_apart(clash.gap_mm)}"
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
    return _blame(design, flat, clash, f"{what}, {rule}")


def _shown(value: object) -> object:
    return round(value, 2) if isinstance(value, float) else value


def _blame(design: Design, flat: Flat, clash: Clash, said: str) -> DesignError:
    """The error for a clash no rule above settles: the first key, of the feature to move and
    then of the others that bear on the pair, with values that clear it (tried on the outlines)."""
    spec = design.spec
    mover = _mover(clash.a, clash.b)
    other = clash.b if mover is clash.a else clash.a
    if mover.key not in _TRIAL_KEYS:
        return spec.fail(mover.key, _shown(mover.value), f"{said}: change {mover.key}")
    keys = dict.fromkeys((mover.key, *_ALSO.get(mover.key, ()), other.key, *_ALSO.get(other.key, ())))
    tried = [k for k in keys if k in _TRIAL_KEYS]
    trial = _Trial(design, flat, clash)
    for key in tried:
        present = _present(spec, key, (mover, other))
        works = trial.values_that_clear(key, present)
        if not works:
            continue
        if key == mover.key:
            return spec.fail(key, _shown(present), f"{said}: change {key} ({works} would do)")
        return spec.fail(
            key, _shown(present), f"{said}, and no {mover.key} clears them: change {key} ({works} would do)"
        )
    return spec.fail(mover.key, _shown(mover.value), f"{said}: no value of {_or(tried)} alone clears them")


def _present(spec: Spec, key: str, features: tuple[Feature, ...]) -> object:
    """The key's value as the design has it: a feature's own figure for a key left to its
    default (None in the spec), else the spec's."""
    for f in features:
        if f.key == key and f.value is not None:
            return f.value
    section, name = key.split(".")
    return getattr(getattr(spec, section), name)


def _with_value(design: Design, key: str, value: object) -> Design:
    """The design with one trial key changed; the coil's shape re-resolved for a stator key."""
    section, name = key.split(".")
    spec = design.spec
    spec = dataclasses.replace(
        spec, **{section: dataclasses.replace(getattr(spec, section), **{name: value})}
    )
    geometry = design.geometry
    if section == "stator":
        geometry = resolve_geometry(spec, geometry.coil_indices)
    return dataclasses.replace(design, spec=spec, geometry=geometry)


class _Trial:
    """Tries values of keys on one failed part: do the features of the clash's two kinds then
    keep clear of everything on the part, and do the coil and stator checks still pass?

    Every clash of those kinds must go, not only the one reported, so that one change
    settles them all (a longer coil hole that clears the jig's pins from the core's ends
    must clear them from the winder shaft's hole too).
    """

    def __init__(self, design: Design, flat: Flat, clash: Clash):
        self.design, self.part, self.kinds = design, flat.part, clash.kinds
        outline = Shape(flat.outline.path)
        self.part_size_mm = float((outline.hi - outline.lo).max())

    def clears(self, key: str, value: object) -> bool:
        try:
            d = _with_value(self.design, key, value)
            check_coils(d)
            check_stator(d)
            flat, extra = _part_flats(d.spec)[self.part](d)
        except DesignError:
            return False
        return next(clashes(flat, extra, kinds=self.kinds), None) is None

    def values_that_clear(self, key: str, present: object) -> str:
        """The values of `key` that clear the clash, in words ("at most 7.6"), or ""."""
        section, name = key.split(".")
        f = {f.name: f for f in dataclasses.fields(getattr(self.design.spec, section))}[name]
        m = f.metadata
        if m["choices"] is not None:
            return _or([f'"{v}"' for v in m["choices"] if self.clears(key, v)])
        lo = m["ge"] if m["ge"] is not None else m["gt"]
        hi = m["le"] if m["le"] is not None else m["lt"]
        if f.type == "int":
            return _or([str(v) for v in range(math.ceil(lo), math.floor(hi) + 1) if self.clears(key, v)])
        # Past twice the present value, or the part's size, a dimension is no longer this part's.
        top = min(hi, max(2 * float(present or 0), self.part_size_mm))
        return _ranges(lambda x: self.clears(key, x), lo, top)


def _ranges(clear: Callable[[float], bool], lo: float, hi: float) -> str:
    """The stretches of [lo, hi] where clear(x), found on a grid and bisected at each change,
    each bound rounded inward to 1/_ROUND, so that it is itself clear; in words."""
    xs = np.linspace(lo, hi, _TRIAL_POINTS)
    ok = [clear(float(x)) for x in xs]

    def edge(good: float, bad: float) -> float:
        for _ in range(12):
            mid = (good + bad) / 2
            good, bad = (mid, bad) if clear(mid) else (good, mid)
        return good

    words = []
    i = 0
    while i < len(xs):
        if not ok[i]:
            i += 1
            continue
        j = i
        while j + 1 < len(xs) and ok[j + 1]:
            j += 1
        a = float(xs[i]) if i == 0 else edge(float(xs[i]), float(xs[i - 1]))
        b = float(xs[j]) if j == len(xs) - 1 else edge(float(xs[j]), float(xs[j + 1]))
        a = a if i == 0 else math.ceil(a * _ROUND) / _ROUND
        b = b if j == len(xs) - 1 else math.floor(b * _ROUND) / _ROUND
        if a <= b:
            if i == 0:
                words.append(f"at most {b:g}")
            elif j == len(xs) - 1:
                words.append(f"at least {a:g}")
            else:
                words.append(f"{a:g} to {b:g}")
        i = j + 1
    return _or(words)


def _or(words: list[str]) -> str:
    if len(words) < 2:
        return "".join(words)
    return ", ".join(words[:-1]) + " or " + words[-1]


def check_flat(design: Design, flat: Flat, extra: tuple[Feature, ...] = ()) -> None:
    """The first clash of the part (see `clashes`), as a DesignError naming the key to change."""
    for clash in clashes(flat, extra):
        raise _fail(design, flat, clash)


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
    # The lead slots sit between the two lugs either side of the exits, with a web to each.
    r = sl.outer_radius_mm
    lug_edge = 180.0 / spec.stator.mounting_lugs - math.degrees(math.asin(sl.lug_half_width_mm / r))
    at = exit_angle_deg(design)
    reach = max(abs(a - at) for a in sl.lead_slot_angles_deg)
    reach += math.degrees(math.asin((sl.lead_slot_width_mm / 2 + ro.min_web_mm) / r))
    if reach > lug_edge + _TOL:
        raise spec.fail(
            "stator.mounting_lugs",
            spec.stator.mounting_lugs,
            f"the {len(sl.lead_names)} lead slots at the exits ({at:g}°) run into the mounting lugs "
            "either side: use fewer lugs",
        )


def _rotor_disc(design: Design, disc: int) -> tuple[Flat, tuple[Feature, ...]]:
    flat = rotor_disc_flat(design, disc)
    if not is_steel_disc(design.spec):
        return flat, ()
    # Magnets on a steel disc must not cover a hole either.
    pockets = [f for f in magnet_template_flat(design, disc).holes if f.kind == "pocket"]
    places = tuple(
        Feature("magnet", f.path, f"magnet place {j}", f.key, f.value) for j, f in enumerate(pockets, start=1)
    )
    return flat, places


def _part_flats(spec: Spec) -> dict[str, Callable[[Design], tuple[Flat, tuple[Feature, ...]]]]:
    """Every flat part the package holds, by part name, in the order they are checked: a
    builder of the part and the further places its check keeps clear."""
    out = {}
    for disc in rotor_discs(spec):
        out[f"rotor_disc_{disc}"] = lambda d, k=disc: _rotor_disc(d, k)
        if is_steel_disc(spec) and not is_plain_disc(spec, disc):
            out[f"magnet_template_{disc}"] = lambda d, k=disc: (magnet_template_flat(d, k), ())
    out["stator"] = lambda d: (stator_flat(d), ())
    if is_printed_binder(spec.stator.binder):
        # its lead grooves run out through the rim on purpose: the webs between pockets are checked
        out["stator_frame"] = lambda d: (dataclasses.replace(printed_frame_flat(d), pockets=()), ())
    if spec.rotor.topology == "one_disc_steel_stator":
        out["stator_plate"] = lambda d: (stator_plate_flat(d), ())
    out["winding_jig_core"] = lambda d: (jig_core_flat(d), ())
    out["winding_jig_cheek"] = lambda d: (jig_cheek_flat(d), ())
    return out


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
    for build in _part_flats(spec).values():
        check_flat(design, *build(design))


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
