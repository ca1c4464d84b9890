"""Paths, features and flat parts: the 2-D vocabulary every part is drawn in, with the
making dimensions (marks, clearances, webs) that several parts share."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

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
    labels: tuple[tuple[str, float, float, float], ...] = ()  # (text, x, y, height mm), centred
    web_mm: float = 0.0  # least material between cut features, and their edge gap
    web_key: str = "rotor.min_web_mm"
    thickness_key: str = ""  # the design key that sets thickness_mm

    def count(self, kind: str) -> int:
        feats = self.holes + self.pockets + self.engraved + self.reference
        return sum(f.kind == kind for f in feats)
