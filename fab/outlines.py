"""2-D outlines of every part, in one place for the solids and the drawings.

fab/solids.py extrudes these outlines and fab/drawings.py writes the same ones to DXF, so a
cut part and its model can never disagree. Plain numpy: no CAD here, and nothing written.

An outline is a closed `Path`: vertices in mm with the bulge of the segment that leaves
each one (0 a straight line, tan(θ/4) an arc of θ, positive counter-clockwise), as in a DXF
LWPOLYLINE. A `Flat` is one flat part: its outline, holes cut through, pockets and
engravings from the top face, and reference lines, each a `Feature` that knows which design
key sizes or places it, so a check that fails can name the key to change.

Frames: rotor discs and templates are drawn as made, magnet side up (see layout.rotor);
stator, mould and plate in machine coordinates seen from above; the winding jig in the
frame of coil 1 moved so the core's centre is the origin.

Kerf: a cutter's path is the part's edge moved out by half the kerf round the outside and in
round holes. Builders take `kerf_mm` and build each outline from its dimensions grown or
shrunk by that half, which is exact for circles, for the convex polygons (mitred, as a
sharp-cornered part needs) and for the lugged stator outline (a union of circles and
strips, each grown). Pockets, engravings and reference lines are never offset.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from layout.design import Design
from layout.materials import METRIC_THREADS
from layout.rotor import (
    BALANCE_SCREW,
    balance_positions,
    disc_count,
    is_steel_disc,
    magnet_footprint_half_mm,
    part_angle_deg,
    pocket_clearance_mm,
    pocket_depth_mm,
    pocket_marks,
)
from layout.spec import Spec
from layout.winding import terminal_markings
from layout.wire import bundle_diameter_mm

ARC_STEP_DEG = 2.0  # arcs become chords this fine for checks (0.02 mm sag at r = 135 mm)
MARK_HEIGHT_MM = 5.0  # polarity letters and disc numbers
MARK_GAP_MM = 1.5  # between a mark and its pocket, and between stacked marks
MARK_CLEARANCE_MM = 1.0  # an engraving keeps this far from any edge or hole
INDEX_SIZE_MM = 4.0  # the index triangle at pocket 1
STUD_CLEARANCE_MM = 5.0  # stator studs stand this far outside the spinning discs (our choice)
JACK_STATOR_CLEARANCE_MM = 3.0  # jacking screws pass inside the stator's bore with this (our choice)
PLACE_CLEARANCE_MM = 0.5  # a coil slides over its place in the mould (common practice)
JIG_MARGIN_MM = 8.0  # the winding jig's cheeks reach this far past the coil
JIG_PIN_DIAMETER_MM = 4.0  # two pins keep the jig's core from turning on the winder shaft
JIG_WEB_MM = 2.0  # least material round the holes in the jig's core
ENGRAVE_DEPTH_MM = 0.6  # a few printed layers; laser marking on metal is shallower
LEAD_SLOT_MIN_MM = 3.0


# --- paths ---------------------------------------------------------------------------------


@dataclass(frozen=True)
class Path:
    """A closed outline: vertices (n, 2) in mm and the bulge of the segment after each."""

    xy: np.ndarray
    bulge: np.ndarray

    def moved(self, angle_deg: float = 0.0, dx: float = 0.0, dy: float = 0.0) -> Path:
        """Rotated about the origin, then shifted."""
        a = math.radians(angle_deg)
        rot = np.array([[math.cos(a), -math.sin(a)], [math.sin(a), math.cos(a)]])
        return Path(self.xy @ rot.T + (dx, dy), self.bulge.copy())

    def area_mm2(self) -> float:
        """Signed area, exact for the arcs (counter-clockwise positive)."""
        p, q = self.xy, np.roll(self.xy, -1, axis=0)
        poly = 0.5 * float(np.sum(p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]))
        chord = np.linalg.norm(q - p, axis=1)
        theta = 4 * np.arctan(np.abs(self.bulge))
        with np.errstate(divide="ignore", invalid="ignore"):
            r = np.where(theta > 0, chord / (2 * np.sin(theta / 2)), 0.0)
        seg = np.sign(self.bulge) * r**2 / 2 * (theta - np.sin(theta))
        return poly + float(seg.sum())

    def points(self, step_deg: float = ARC_STEP_DEG) -> np.ndarray:
        """The outline as a polygon (m, 2), arcs split into chords of at most step_deg."""
        out = []
        n = len(self.xy)
        for i in range(n):
            p0, p1, b = self.xy[i], self.xy[(i + 1) % n], self.bulge[i]
            out.append(p0)
            if b != 0:
                theta = 4 * math.atan(b)
                k = max(2, math.ceil(abs(math.degrees(theta)) / step_deg))
                c, r = arc_centre(p0, p1, b)
                a0 = math.atan2(p0[1] - c[1], p0[0] - c[0])
                for t in np.linspace(0, theta, k + 1)[1:-1]:
                    out.append(c + r * np.array([math.cos(a0 + t), math.sin(a0 + t)]))
        return np.array(out)

    def as_circle(self) -> tuple[np.ndarray, float] | None:
        """(centre, radius) if the path is a full circle of two half arcs, else None."""
        if len(self.xy) == 2 and np.all(np.abs(self.bulge) == 1.0):
            return (self.xy[0] + self.xy[1]) / 2, float(np.linalg.norm(self.xy[1] - self.xy[0]) / 2)
        return None

    def centroid(self) -> np.ndarray:
        pts = self.points(0.5)
        p, q = pts, np.roll(pts, -1, axis=0)
        cross = p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]
        a = cross.sum() / 2
        return np.array([((p[:, 0] + q[:, 0]) * cross).sum(), ((p[:, 1] + q[:, 1]) * cross).sum()]) / (6 * a)


def arc_centre(p0: np.ndarray, p1: np.ndarray, bulge: float) -> tuple[np.ndarray, float]:
    """Centre and radius of the arc from p0 to p1 with this bulge."""
    d = p1 - p0
    chord = math.hypot(*d)
    theta = 4 * math.atan(bulge)
    r = chord / (2 * math.sin(abs(theta) / 2))
    mid = (p0 + p1) / 2
    left = np.array([-d[1], d[0]]) / chord
    h = r * math.cos(abs(theta) / 2)  # from the chord's middle to the centre
    sign = 1.0 if bulge > 0 else -1.0
    # A counter-clockwise arc under 180° has its centre to the left of the chord.
    return mid + left * sign * h * (1 if abs(theta) < math.pi else -1), r


def arc_midpoint(p0: np.ndarray, p1: np.ndarray, bulge: float) -> np.ndarray:
    """The point halfway along the arc (sagitta bulge·chord/2, to the right of travel when +)."""
    d = p1 - p0
    right = np.array([d[1], -d[0]])
    return (p0 + p1) / 2 + right * bulge / 2


def circle(cx: float, cy: float, r: float) -> Path:
    return Path(np.array([[cx + r, cy], [cx - r, cy]]), np.array([1.0, 1.0]))


def polygon(pts) -> Path:
    """Straight-sided outline, turned counter-clockwise."""
    xy = np.asarray(pts, dtype=float)
    if _shoelace(xy) < 0:
        xy = xy[::-1].copy()
    return Path(xy, np.zeros(len(xy)))


def _shoelace(xy: np.ndarray) -> float:
    q = np.roll(xy, -1, axis=0)
    return 0.5 * float(np.sum(xy[:, 0] * q[:, 1] - q[:, 0] * xy[:, 1]))


def offset_convex(pts, d: float) -> np.ndarray:
    """A convex polygon with every side moved out by d (in for d < 0), corners mitred."""
    p = np.asarray(pts, dtype=float)
    if _shoelace(p) < 0:
        p = p[::-1]
    q = np.roll(p, -1, axis=0)
    e = q - p
    n = np.stack([e[:, 1], -e[:, 0]], axis=1) / np.linalg.norm(e, axis=1)[:, None]
    a = p + n * d  # a point on each moved side
    out = []
    for i in range(len(p)):
        j = i - 1  # the side before corner i
        # a[j] + s e[j] = a[i] + u e[i]
        m = np.array([e[j], -e[i]]).T
        s, _ = np.linalg.solve(m, a[i] - a[j])
        out.append(a[j] + s * e[j])
    return np.array(out)


def _rect(x0: float, x1: float, half_w: float) -> np.ndarray:
    return np.array([[x0, -half_w], [x1, -half_w], [x1, half_w], [x0, half_w]])


# Block glyphs for the marks, on a grid 5 high, centred later: our own shapes, one closed
# outline each so they engrave, print and cut alike.
_GLYPHS = {
    "N": ((0, 0), (1, 0), (1, 3), (3, 0), (4, 0), (4, 5), (3, 5), (3, 2), (1, 5), (0, 5)),
    "S": ((0, 0), (3, 0), (3, 3), (1, 3), (1, 4), (3, 4), (3, 5), (0, 5), (0, 2), (2, 2), (2, 1), (0, 1)),
    "1": ((1, 0), (2, 0), (2, 5), (1, 5)),
    "2": ((0, 0), (3, 0), (3, 1), (1.5, 1), (3, 3.4), (3, 5), (0, 5), (0, 4), (2, 4), (0, 1)),  # not an S
    "^": ((-2.5, -2.5), (2.5, -2.5), (0, 2.5)),  # the index triangle, pointing up
}


def glyph(ch: str, r: float, angle_deg: float, height: float) -> Path:
    """Glyph `ch` centred at radius r on a ray at angle_deg, its top towards the rim."""
    g = np.array(_GLYPHS[ch], dtype=float)
    g -= (g.min(axis=0) + g.max(axis=0)) / 2
    g *= height / 5.0
    a = math.radians(angle_deg)
    return polygon(g).moved(angle_deg - 90.0, r * math.cos(a), r * math.sin(a))


# --- features and flat parts --------------------------------------------------------------


@dataclass(frozen=True)
class Feature:
    kind: str  # outline, bore, hub, dowel, jack, balance, pocket, mark, index, lug, window, ...
    path: Path
    label: str  # how the part's drawing and errors name it: "pocket 3"
    key: str  # the design key that places or sizes it
    value: float | None = None  # that key's value as used
    depth_mm: float | None = None  # pockets and engravings


@dataclass(frozen=True)
class Flat:
    """One flat part: extruded thickness_mm, cut through, pocketed and engraved from the top."""

    part: str  # file stem
    title: str
    thickness_mm: float
    outline: Feature
    holes: tuple[Feature, ...] = ()
    pockets: tuple[Feature, ...] = ()
    engraved: tuple[Feature, ...] = ()
    reference: tuple[Feature, ...] = ()
    web_mm: float = 0.0  # least material between cut features, and their edge gap
    web_key: str = "rotor.min_web_mm"

    def count(self, kind: str) -> int:
        feats = self.holes + self.pockets + self.engraved + self.reference
        return sum(f.kind == kind for f in feats)


# --- rotor disc layout ----------------------------------------------------------------------


@dataclass(frozen=True)
class Jacking:
    screw: str
    tap_drill_mm: float
    diameter_mm: float
    radius_mm: float
    angles_deg: tuple[float, ...]  # machine angles
    on: str  # "disc 2" or "stator plate": where the tapped holes are
    load_per_screw_n: float


@dataclass(frozen=True)
class DiscLayout:
    """Features every rotor disc and template shares, at machine angles."""

    outer_radius_mm: float
    bore_radius_mm: float
    hub_radius_mm: float
    hub_hole_mm: float
    hub_angles_deg: tuple[float, ...]
    dowel_mm: float
    dowel_angles_deg: tuple[float, ...]
    place_half_mm: tuple[float, float]  # magnet place (radial, tangential), clearance included
    magnet_half_mm: tuple[float, float]
    pocket_depth_mm: float
    mark_radius_mm: float
    index_radius_mm: float
    number_radius_mm: float
    jacking: Jacking | None
    balance_radius_mm: float | None
    balance_angles_deg: tuple[float, ...]
    balance_hole_mm: float
    balance_screw: str


@dataclass(frozen=True)
class StatorLayout:
    inner_radius_mm: float
    outer_radius_mm: float
    lug_radius_mm: float  # centre of the mounting holes
    lug_half_width_mm: float
    lug_angles_deg: tuple[float, ...]
    hole_mm: float
    mould_radius_mm: float
    lead_slot_width_mm: float
    lead_slot_angles_deg: tuple[float, ...]
    lead_names: tuple[str, ...]
    plate_inner_radius_mm: float | None


def hub_radius_mm(spec: Spec) -> float:
    ro = spec.rotor
    if ro.hub_bolt_circle_mm is not None:
        return ro.hub_bolt_circle_mm / 2
    return (ro.bore_diameter_mm + 3 * ro.hub_hole_diameter_mm) / 2


def stator_layout(design: Design) -> StatorLayout:
    spec, geo = design.spec, design.geometry
    st = spec.stator
    r_in = geo.coil.r_min_mm - st.resin_rim_mm
    r_out = geo.coil.r_max_mm + st.resin_rim_mm
    hole = st.mounting_hole_diameter_mm
    r_lug = max(r_out, design.forces.disc_outer_radius_mm + STUD_CLEARANCE_MM) + hole / 2
    half = hole  # half a hole's diameter of material each side of it
    n = st.mounting_lugs
    lugs = tuple(360.0 * (k + 0.5) / n for k in range(n))
    wire = design.prediction.wire
    slot = max(LEAD_SLOT_MIN_MM, bundle_diameter_mm(wire) + 1.5)
    names = terminal_markings(st.phases)
    pitch = 2.5 * slot / r_out  # radians between slot centres on the rim
    slots = tuple(math.degrees((i - (len(names) - 1) / 2) * pitch) for i in range(len(names)))
    plate_in = None
    if spec.rotor.topology == "one_disc_steel_stator":
        jack = jacking(design)
        plate_in = r_in
        if jack is not None:
            plate_in = min(r_in, jack.radius_mm - jack.tap_drill_mm / 2 - spec.rotor.min_web_mm)
    return StatorLayout(
        inner_radius_mm=r_in,
        outer_radius_mm=r_out,
        lug_radius_mm=r_lug,
        lug_half_width_mm=half,
        lug_angles_deg=lugs,
        hole_mm=hole,
        mould_radius_mm=r_lug + half + st.mould_wall_mm,
        lead_slot_width_mm=slot,
        lead_slot_angles_deg=slots,
        lead_names=names,
        plate_inner_radius_mm=plate_in,
    )


def jacking(design: Design) -> Jacking | None:
    """Tapped holes for screws that lower the attracting parts together, if the force needs them.

    Two discs: in disc 2, bearing on disc 1. Steel stator: in the stator plate, bearing on the
    disc. Inside the stator's bore, clear of the hub bolts and dowels.
    """
    spec, f = design.spec, design.forces
    ro = spec.rotor
    if not f.jacking_screws or ro.topology == "one_disc_coreless":
        return None
    t = METRIC_THREADS[ro.jacking_screw]
    r_in = design.geometry.coil.r_min_mm - spec.stator.resin_rim_mm
    hi = r_in - t.diameter_mm / 2 - JACK_STATOR_CLEARANCE_MM
    hub_r = hub_radius_mm(spec)
    lo = hub_r + max(ro.hub_hole_diameter_mm, ro.dowel_diameter_mm) / 2 + ro.min_web_mm + t.tap_drill_mm / 2
    r = (lo + hi) / 2 if lo <= hi else hi  # midway between hub and stator, or as far out as it goes
    if ro.jacking_circle_mm is not None:
        r = ro.jacking_circle_mm / 2
    n = ro.jacking_screws
    others = [(hub_r, a, ro.hub_hole_diameter_mm) for a in _hub_angles(spec)]
    others += [(hub_r, a, ro.dowel_diameter_mm) for a in _dowel_angles(spec)]
    # Turn the ring of screws to the offset that keeps them farthest from the hub's holes.
    offsets = np.arange(0.0, 360.0 / n, 0.5)
    a = np.radians(offsets[:, None] + 360.0 * np.arange(n)[None, :])[..., None]  # (offsets, screws, 1)
    ro_, ao, d = (np.array(v, dtype=float) for v in zip(*others, strict=True))
    b = np.radians(ao)
    dist = np.hypot(r * np.cos(a) - ro_ * np.cos(b), r * np.sin(a) - ro_ * np.sin(b))
    gap = (dist - d / 2 - t.tap_drill_mm / 2).min(axis=(1, 2))
    best = float(offsets[int(np.argmax(gap > gap.max() - 1e-9))])
    on = "disc 2" if ro.topology == "two_discs" else "stator plate"
    return Jacking(
        screw=t.name,
        tap_drill_mm=t.tap_drill_mm,
        diameter_mm=t.diameter_mm,
        radius_mm=r,
        angles_deg=tuple(best + 360.0 * k / n for k in range(n)),
        on=on,
        load_per_screw_n=f.axial_force_n / n,
    )


def _hub_angles(spec: Spec) -> tuple[float, ...]:
    n = spec.rotor.hub_bolts
    return tuple(360.0 * k / n for k in range(n))


def _dowel_angles(spec: Spec) -> tuple[float, ...]:
    """Two dowels in the gaps after hub bolts 1 and 2: no turn of a disc but the right one
    (and no turning over) puts both back over their holes."""
    n = spec.rotor.hub_bolts
    return (180.0 / n, 540.0 / n)


def disc_layout(design: Design) -> DiscLayout:
    spec = design.spec
    ro, mg = spec.rotor, spec.magnets
    clearance = pocket_clearance_mm(spec)
    place = magnet_footprint_half_mm(spec, clearance)
    magnet = magnet_footprint_half_mm(spec, 0.0)
    r_place_in = mg.pitch_radius_mm - place[0]
    r_mark = r_place_in - MARK_GAP_MM - MARK_HEIGHT_MM / 2
    r_index = r_mark - MARK_HEIGHT_MM / 2 - MARK_GAP_MM - INDEX_SIZE_MM / 2
    r_number = r_index - INDEX_SIZE_MM / 2 - MARK_GAP_MM - MARK_HEIGHT_MM / 2
    bp = balance_positions(spec, design.forces.disc_outer_radius_mm)
    return DiscLayout(
        outer_radius_mm=design.forces.disc_outer_radius_mm,
        bore_radius_mm=ro.bore_diameter_mm / 2,
        hub_radius_mm=hub_radius_mm(spec),
        hub_hole_mm=ro.hub_hole_diameter_mm,
        hub_angles_deg=_hub_angles(spec),
        dowel_mm=ro.dowel_diameter_mm,
        dowel_angles_deg=_dowel_angles(spec),
        place_half_mm=place,
        magnet_half_mm=magnet,
        pocket_depth_mm=pocket_depth_mm(spec),
        mark_radius_mm=r_mark,
        index_radius_mm=r_index,
        number_radius_mm=r_number,
        jacking=jacking(design),
        balance_radius_mm=bp.radius_mm if bp else None,
        balance_angles_deg=bp.angles_deg if bp else (),
        balance_hole_mm=METRIC_THREADS[BALANCE_SCREW].tap_drill_mm,
        balance_screw=BALANCE_SCREW,
    )


def _place_path(spec: Spec, half: tuple[float, float], angle_deg: float, grow: float = 0.0) -> Path:
    rc = spec.magnets.pitch_radius_mm
    a, b = half[0] + grow, half[1] + grow
    if spec.magnets.shape == "disc":
        t = math.radians(angle_deg)
        return circle(rc * math.cos(t), rc * math.sin(t), a)
    return polygon(_rect(rc - a, rc + a, b)).moved(angle_deg)


def _ring_hole(r: float, angle_deg: float, d: float, g: float) -> Path:
    t = math.radians(angle_deg)
    return circle(r * math.cos(t), r * math.sin(t), d / 2 - g)


def _common_holes(design: Design, lay: DiscLayout, disc: int, g: float) -> list[Feature]:
    ro = design.spec.rotor
    hub_value = 2 * lay.hub_radius_mm
    out = [
        Feature(
            "bore",
            circle(0, 0, lay.bore_radius_mm - g),
            "bore",
            "rotor.bore_diameter_mm",
            ro.bore_diameter_mm,
        )
    ]
    for k, a in enumerate(lay.hub_angles_deg, start=1):
        path = _ring_hole(lay.hub_radius_mm, part_angle_deg(disc, a), lay.hub_hole_mm, g)
        out.append(Feature("hub", path, f"hub bolt hole {k}", "rotor.hub_bolt_circle_mm", hub_value))
    for k, a in enumerate(lay.dowel_angles_deg, start=1):
        path = _ring_hole(lay.hub_radius_mm, part_angle_deg(disc, a), lay.dowel_mm, g)
        out.append(Feature("dowel", path, f"dowel hole {k}", "rotor.dowel_diameter_mm", lay.dowel_mm))
    return out


def _marks(design: Design, lay: DiscLayout, disc: int) -> list[Feature]:
    """Polarity letter beside every pocket, the index triangle and the disc number at pocket 1."""
    out = []
    depth = ENGRAVE_DEPTH_MM
    for m in pocket_marks(design.geometry, disc):
        path = glyph(m.face_up, lay.mark_radius_mm, m.angle_deg, MARK_HEIGHT_MM)
        out.append(
            Feature(
                "mark", path, f"mark {m.face_up} at pocket {m.pocket}", "magnets.pitch_radius_mm", None, depth
            )
        )
    out.append(
        Feature(
            "index",
            glyph("^", lay.index_radius_mm, 0.0, INDEX_SIZE_MM),
            "index mark",
            "magnets.pitch_radius_mm",
            None,
            depth,
        )
    )
    out.append(
        Feature(
            "number",
            glyph(str(disc), lay.number_radius_mm, 0.0, MARK_HEIGHT_MM),
            f"disc number {disc}",
            "magnets.pitch_radius_mm",
            None,
            depth,
        )
    )
    return out


def _places(design: Design, lay: DiscLayout, disc: int, half, kind: str, key: str, g: float = 0.0):
    spec = design.spec
    return [
        Feature(
            kind,
            _place_path(spec, half, m.angle_deg, g),
            f"{kind} {m.pocket}",
            key,
            spec.magnets.pitch_radius_mm,
        )
        for m in pocket_marks(design.geometry, disc)
    ]


def rotor_disc_flat(design: Design, disc: int, kerf_mm: float = 0.0) -> Flat:
    """Rotor disc `disc` as made, magnet side up."""
    spec = design.spec
    ro = spec.rotor
    lay = disc_layout(design)
    g = kerf_mm / 2
    outline = Feature(
        "outline",
        circle(0, 0, lay.outer_radius_mm + g),
        "outer edge",
        "rotor.disc_outer_diameter_mm",
        2 * lay.outer_radius_mm,
    )
    holes = _common_holes(design, lay, disc, g)
    reference = _places(design, lay, disc, lay.magnet_half_mm, "magnet", "magnets.pitch_radius_mm")
    jack = lay.jacking
    if jack is not None:
        for k, a in enumerate(jack.angles_deg, start=1):
            angle = part_angle_deg(disc, a)
            if jack.on == "disc 2" and disc == 2:
                path = _ring_hole(jack.radius_mm, angle, jack.tap_drill_mm, g)
                holes.append(
                    Feature(
                        "jack", path, f"jacking screw hole {k}", "rotor.jacking_circle_mm", 2 * jack.radius_mm
                    )
                )
            elif disc == 1:
                # Where the screw's tip bears: keep it clear (a washer or pad goes here).
                path = _ring_hole(jack.radius_mm, angle, jack.diameter_mm + 4.0, 0.0)
                reference.append(
                    Feature(
                        "landing",
                        path,
                        f"jacking screw pad {k}",
                        "rotor.jacking_circle_mm",
                        2 * jack.radius_mm,
                    )
                )
    if lay.balance_radius_mm is not None:
        for k, a in enumerate(lay.balance_angles_deg, start=1):
            path = _ring_hole(lay.balance_radius_mm, part_angle_deg(disc, a), lay.balance_hole_mm, g)
            holes.append(
                Feature(
                    "balance",
                    path,
                    f"balance hole {k}",
                    "rotor.disc_outer_diameter_mm",
                    2 * lay.outer_radius_mm,
                )
            )
    pockets = ()
    if not is_steel_disc(spec):
        pockets = tuple(
            Feature(f.kind, f.path, f.label, f.key, f.value, lay.pocket_depth_mm)
            for f in _places(design, lay, disc, lay.place_half_mm, "pocket", "magnets.pitch_radius_mm")
        )
    where = "lower" if disc == 1 else "upper"
    title = f"rotor disc {disc} ({where})" if disc_count(spec) == 2 else "rotor disc"
    return Flat(
        part=f"rotor_disc_{disc}",
        title=title,
        thickness_mm=ro.disc_thickness_mm,
        outline=outline,
        holes=tuple(holes),
        pockets=pockets,
        engraved=tuple(_marks(design, lay, disc)),
        reference=tuple(reference),
        web_mm=ro.min_web_mm,
    )


def template_thickness_mm(spec: Spec) -> float:
    if spec.fab.template_thickness_mm is not None:
        return spec.fab.template_thickness_mm
    return min(6.0, 0.6 * spec.magnets.thickness_mm)


def magnet_template_flat(design: Design, disc: int, kerf_mm: float = 0.0) -> Flat:
    """A plate over a steel disc with a place cut for every magnet; dowels clock and centre it."""
    spec = design.spec
    lay = disc_layout(design)
    g = kerf_mm / 2
    outline = Feature(
        "outline",
        circle(0, 0, lay.outer_radius_mm + g),
        "outer edge",
        "rotor.disc_outer_diameter_mm",
        2 * lay.outer_radius_mm,
    )
    holes = _common_holes(design, lay, disc, g)
    holes += _places(design, lay, disc, lay.place_half_mm, "pocket", "magnets.pitch_radius_mm", -g)
    title = f"magnet template for rotor disc {disc}" if disc_count(spec) == 2 else "magnet template"
    return Flat(
        part=f"magnet_template_{disc}",
        title=title,
        thickness_mm=template_thickness_mm(spec),
        outline=outline,
        holes=tuple(holes),
        engraved=tuple(_marks(design, lay, disc)),
        reference=tuple(_places(design, lay, disc, lay.magnet_half_mm, "magnet", "magnets.pitch_radius_mm")),
        web_mm=spec.rotor.min_web_mm,
    )


# --- stator, mould, plate ------------------------------------------------------------------


def lugged_outline(sl: StatorLayout, g: float = 0.0) -> Path:
    """The stator's rim: a circle with a lug round every mounting hole, grown by g."""
    R = sl.outer_radius_mm + g
    w = sl.lug_half_width_mm + g
    rl = sl.lug_radius_mm
    s = math.degrees(math.asin(w / R))
    xy, bulge = [], []
    angles = sl.lug_angles_deg
    for i, phi in enumerate(angles):
        nxt = angles[(i + 1) % len(angles)] + (360.0 if i == len(angles) - 1 else 0.0)
        p = math.radians(phi)
        u = np.array([math.cos(p), math.sin(p)])
        v = np.array([-math.sin(p), math.cos(p)])
        a = math.radians(phi - s)
        xy.append([R * math.cos(a), R * math.sin(a)])
        bulge.append(0.0)  # straight side of the lug
        xy.append(rl * u - w * v)
        bulge.append(1.0)  # half circle round the hole
        xy.append(rl * u + w * v)
        bulge.append(0.0)
        d = math.radians(phi + s)
        xy.append([R * math.cos(d), R * math.sin(d)])
        span = math.radians((nxt - s) - (phi + s))
        bulge.append(math.tan(span / 4))  # rim arc to the next lug
    return Path(np.array(xy), np.array(bulge))


def _lug_holes(sl: StatorLayout, g: float) -> list[Feature]:
    return [
        Feature(
            "lug",
            _ring_hole(sl.lug_radius_mm, a, sl.hole_mm, g),
            f"mounting hole {k}",
            "stator.mounting_hole_diameter_mm",
            sl.hole_mm,
        )
        for k, a in enumerate(sl.lug_angles_deg, start=1)
    ]


def coil_place(design: Design, index: int) -> Path:
    """Where coil `index` sits over the mould: its hole, less the clearance it slides on with."""
    geo = design.geometry
    hole = offset_convex(geo.coil.hole_mm, -PLACE_CLEARANCE_MM)
    return polygon(hole).moved(360.0 * (index - 1) / geo.positions)


def stator_flat(design: Design, kerf_mm: float = 0.0) -> Flat:
    """The cast stator seen from above: rim with lugs, bore, mounting holes and the window
    each coil's place leaves. Also the cavity of the mould and the frame cut round it."""
    spec, geo = design.spec, design.geometry
    sl = stator_layout(design)
    g = kerf_mm / 2
    holes = [
        Feature(
            "bore",
            circle(0, 0, sl.inner_radius_mm - g),
            "stator bore",
            "stator.resin_rim_mm",
            spec.stator.resin_rim_mm,
        )
    ]
    holes += _lug_holes(sl, g)
    for idx in geo.coil_indices:
        holes.append(
            Feature(
                "window",
                polygon(offset_convex(coil_place(design, idx).xy, -g)),
                f"coil place {idx}",
                "stator.hole_margin_mm",
                spec.stator.hole_margin_mm,
            )
        )
    reference = []
    for idx in geo.coil_indices:
        outline, hole = geo.coil_polygons(idx)
        reference.append(
            Feature(
                "coil",
                polygon(outline),
                f"coil {idx}",
                "stator.coil_clearance_mm",
                spec.stator.coil_clearance_mm,
            )
        )
    return Flat(
        part="stator",
        title="cast stator",
        thickness_mm=spec.stator.thickness_mm,
        outline=Feature(
            "outline", lugged_outline(sl, g), "stator rim", "stator.resin_rim_mm", spec.stator.resin_rim_mm
        ),
        holes=tuple(holes),
        reference=tuple(reference),
        web_mm=spec.rotor.min_web_mm,
    )


def lead_slots(design: Design) -> list[Feature]:
    """Slots in the mould's wall at the terminal side (0°) that carry the phase ends out."""
    sl = stator_layout(design)
    w = sl.lead_slot_width_mm
    out = []
    for name, a in zip(sl.lead_names, sl.lead_slot_angles_deg, strict=True):
        rect = _rect(sl.outer_radius_mm - 1.0, sl.mould_radius_mm + 1.0, w / 2)
        lugs = float(design.spec.stator.mounting_lugs)
        out.append(Feature("slot", polygon(rect).moved(a), f"lead slot {name}", "stator.mounting_lugs", lugs))
    return out


def mould_flats(design: Design, kerf_mm: float = 0.0) -> list[Flat]:
    """The mould as boards: base, frame round the stator, island for its bore, one core per coil.

    The frame, island and cores are cut from a board as thick as the stator; glued on the
    base they make the same cavity as the printed mould.
    """
    spec, geo = design.spec, design.geometry
    sl = stator_layout(design)
    g = kerf_mm / 2
    st = spec.stator
    cavity = stator_flat(design)
    windows = tuple(Feature("window", f.path, f.label, f.key) for f in cavity.holes if f.kind == "window")
    base = Flat(
        part="stator_mould_base",
        title="stator mould base board",
        thickness_mm=st.mould_wall_mm,
        outline=Feature(
            "outline",
            circle(0, 0, sl.mould_radius_mm + g),
            "mould edge",
            "stator.mould_wall_mm",
            st.mould_wall_mm,
        ),
        holes=tuple(_lug_holes(sl, g)),  # pins stand here for the mounting holes
        reference=(
            Feature("cavity", cavity.outline.path, "inside of the frame", "stator.resin_rim_mm"),
            Feature("island", circle(0, 0, sl.inner_radius_mm), "island", "stator.resin_rim_mm"),
        )
        + windows,
    )
    frame = Flat(
        part="stator_mould_frame",
        title="stator mould frame",
        thickness_mm=st.thickness_mm,
        outline=Feature(
            "outline",
            circle(0, 0, sl.mould_radius_mm + g),
            "mould edge",
            "stator.mould_wall_mm",
            st.mould_wall_mm,
        ),
        holes=(
            Feature(
                "cavity",
                lugged_outline(sl, -g),
                "inside of the frame",
                "stator.resin_rim_mm",
                st.resin_rim_mm,
            ),
        ),
        reference=tuple(lead_slots(design)),
        web_mm=0.0,
    )
    island = Flat(
        part="stator_mould_island",
        title="stator mould island",
        thickness_mm=st.thickness_mm,
        outline=Feature(
            "outline", circle(0, 0, sl.inner_radius_mm + g), "island", "stator.resin_rim_mm", st.resin_rim_mm
        ),
    )
    place = offset_convex(geo.coil.hole_mm, g - PLACE_CLEARANCE_MM)
    core = Flat(
        part="stator_mould_core",
        title="stator mould coil place",
        thickness_mm=st.thickness_mm,
        outline=Feature(
            "outline",
            polygon(place - (polygon(geo.coil.hole_mm).centroid()[0], 0.0)),
            "coil place",
            "stator.hole_margin_mm",
            st.hole_margin_mm,
        ),
    )
    return [base, frame, island, core]


def stator_plate_flat(design: Design, kerf_mm: float = 0.0) -> Flat:
    """The steel plate behind a one-disc stator; tapped for the jacking screws if needed."""
    spec = design.spec
    sl = stator_layout(design)
    g = kerf_mm / 2
    holes = [
        Feature(
            "bore",
            circle(0, 0, sl.plate_inner_radius_mm - g),
            "plate bore",
            "stator.resin_rim_mm",
            spec.stator.resin_rim_mm,
        )
    ]
    holes += _lug_holes(sl, g)
    jack = jacking(design)
    if jack is not None and jack.on == "stator plate":
        for k, a in enumerate(jack.angles_deg, start=1):
            holes.append(
                Feature(
                    "jack",
                    _ring_hole(jack.radius_mm, a, jack.tap_drill_mm, g),
                    f"jacking screw hole {k}",
                    "rotor.jacking_circle_mm",
                    2 * jack.radius_mm,
                )
            )
    return Flat(
        part="stator_plate",
        title="steel stator plate",
        thickness_mm=spec.rotor.stator_plate_thickness_mm,
        outline=Feature(
            "outline", lugged_outline(sl, g), "plate rim", "stator.resin_rim_mm", spec.stator.resin_rim_mm
        ),
        holes=tuple(holes),
        web_mm=spec.rotor.min_web_mm,
    )


# --- winding jig -----------------------------------------------------------------------------


@dataclass(frozen=True)
class JigLayout:
    shift_x_mm: float  # coil frame x of the core's centre (the jig's origin)
    lead_slot_mm: float
    pin_offset_mm: float


def jig_layout(design: Design) -> JigLayout:
    hole = design.geometry.coil.hole_mm
    cx = float(polygon(hole).centroid()[0])
    wire = design.prediction.wire
    slot = max(2.0, bundle_diameter_mm(wire) + 0.5)
    radial = float(hole[:, 0].max() - hole[:, 0].min())
    return JigLayout(cx, slot, 0.3 * radial)


def _jig_holes(design: Design, g: float) -> list[Feature]:
    jl = jig_layout(design)
    d = design.spec.fab.winder_hole_diameter_mm
    out = [Feature("winder", circle(0, 0, d / 2 - g), "winder shaft hole", "fab.winder_hole_diameter_mm", d)]
    for k, x in enumerate((-jl.pin_offset_mm, jl.pin_offset_mm), start=1):
        out.append(
            Feature(
                "pin",
                circle(x, 0, JIG_PIN_DIAMETER_MM / 2 - g),
                f"pin hole {k}",
                "fab.winder_hole_diameter_mm",
                d,
            )
        )
    return out


def jig_core_flat(design: Design, kerf_mm: float = 0.0) -> Flat:
    """The core the coil is wound on: the coil's hole, as thick as the coil."""
    geo = design.geometry
    jl = jig_layout(design)
    g = kerf_mm / 2
    core = offset_convex(geo.coil.hole_mm - (jl.shift_x_mm, 0), g)
    return Flat(
        part="winding_jig_core",
        title="winding jig core",
        thickness_mm=geo.coil.thickness_mm,
        outline=Feature("outline", polygon(core), "core", "stator.hole_radial_mm", None),
        holes=tuple(_jig_holes(design, g)),
        web_mm=JIG_WEB_MM,
        web_key="",
    )


def jig_cheek_flat(design: Design, kerf_mm: float = 0.0) -> Flat:
    """A cheek (make two): the coil's outline and a margin, with a slot for the start lead."""
    geo = design.geometry
    jl = jig_layout(design)
    g = kerf_mm / 2
    outer = offset_convex(geo.coil.outline_mm - (jl.shift_x_mm, 0), JIG_MARGIN_MM + g)
    # The start lead leaves the core's outer end straight out to the cheek's edge.
    x_core = float(geo.coil.hole_mm[:, 0].max()) - jl.shift_x_mm + g
    w = jl.lead_slot_mm / 2 - g
    # outer is counter-clockwise from the inner-lower corner: the outer side runs from corner 1 to 2.
    x_edge = float(outer[1, 0])
    notch = [[x_edge, -w], [x_core, -w], [x_core, w], [x_edge, w]]
    pts = np.vstack([outer[:2], notch, outer[2:]])
    core = geo.coil.hole_mm - (jl.shift_x_mm, 0)
    coil = geo.coil.outline_mm - (jl.shift_x_mm, 0)
    return Flat(
        part="winding_jig_cheek",
        title="winding jig cheek",
        thickness_mm=design.spec.fab.jig_cheek_thickness_mm,
        outline=Feature("outline", polygon(pts), "cheek", "fab.jig_cheek_thickness_mm", None),
        holes=tuple(_jig_holes(design, g)),
        reference=(
            Feature("core", polygon(core), "core outline", "stator.hole_radial_mm"),
            Feature("coil", polygon(coil), "coil outline", "stator.leg_width_mm"),
        ),
        web_mm=JIG_WEB_MM,
        web_key="",
    )
