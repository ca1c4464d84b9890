"""The stator map: the ring seen from the disc-1 side, every position numbered with its phase
and polarity, each coil's start and finish leads, every join drawn as it is made, and the
phase ends routed to the lead exits, where the terminals sit.

The stator is cast with its disc-1 face up, so this is also the mould seen from above while
the coils are placed and joined: machine coordinates, positions counter-clockwise from
position 1 on the +x axis, as on the mould base. The joins are `layout.winding.joins`; each
runs out from its lead to a lane in the resin rim beyond the coils, along the lane and back
in. Lanes are shared only by joins whose arcs do not overlap, so no two joins are ever drawn
on top of each other. The connection's joints (star point, delta) are drawn outside the rim
at the exits: they are made there, after each phase has passed its tests.

Plain numpy, like the other outlines: fab/drawings.py writes it to DXF and fab/sheet draws
it on a page, from the same points.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from fab.outlines.stator import StatorLayout, coil_outer_radius_mm, exit_angle_deg, stator_layout
from layout.design import Design
from layout.winding import TERMINAL_LETTERS, joins

LEAD_INSET_DEG_SHARE = 0.35  # each lead this share of the coil's half angle off its centre line
ARC_STEP_DEG = 2.0  # the lanes' arcs drawn as polylines this fine
EXIT_REACH_MM = 10.0  # the terminal points this far outside the cast rim
TERMINAL_PITCH_MM = 12.0  # and this far apart, fanned out from the lead slots
LABEL_REACH_MM = 15.0  # the terminals' names this far outside the rim
JOINT_REACH_MM = 22.0  # and the star or delta joints this far, beyond the names


@dataclass(frozen=True)
class MapPosition:
    index: int
    angle_deg: float
    phase: str | None  # None: an empty position
    polarity: int  # +1 connected as wound, -1 reversed, 0 empty
    outline: np.ndarray | None  # (4, 2) the coil's outline, mm
    hole: np.ndarray  # (4, 2) its hole (an empty position's place), mm
    label_xy: tuple[float, float]  # the number's centre, in the hole

    @property
    def mark(self) -> str:
        """ "U+", "V-": the phase by its terminal letter, and + as wound or - reversed."""
        if self.phase is None:
            return "empty"
        return TERMINAL_LETTERS.get(self.phase, "U") + ("+" if self.polarity > 0 else "-")


@dataclass(frozen=True)
class MapNode:
    name: str  # "4S", "4F" or a terminal "U1"
    xy: tuple[float, float]
    stub: np.ndarray | None  # a lead's run from the coil to its point, (n, 2) mm
    across_coil: bool  # the start lead, brought out from the hole across the coil's face


@dataclass(frozen=True)
class MapJoin:
    group: str  # the phase ("A", "B", "C") or the connection ("star", "delta")
    a: str
    b: str
    path: np.ndarray  # (n, 2) mm, from node a to node b


@dataclass(frozen=True)
class StatorMap:
    positions: tuple[MapPosition, ...]
    nodes: dict[str, MapNode]
    joins: tuple[MapJoin, ...]
    stator: StatorLayout
    coil_outer_radius_mm: float
    exit_angle_deg: float
    lanes: int

    @property
    def extent_mm(self) -> float:
        """Radius that holds everything drawn, labels included."""
        return self.stator.outer_radius_mm + JOINT_REACH_MM + 8.0


def _polar(r: float, deg: float) -> np.ndarray:
    a = math.radians(deg)
    return np.array([r * math.cos(a), r * math.sin(a)])


def _arc(r: float, a_deg: float, b_deg: float) -> np.ndarray:
    """Points on radius r from angle a to b (b may be below a: clockwise)."""
    n = max(2, int(abs(b_deg - a_deg) / ARC_STEP_DEG) + 2)
    return np.array([_polar(r, t) for t in np.linspace(a_deg, b_deg, n)])


def _short_way(a_deg: float, b_deg: float) -> float:
    """b's angle unwrapped next to a, so a to b is the short way round."""
    d = (b_deg - a_deg + 180.0) % 360.0 - 180.0
    return a_deg + d


def _lanes(intervals: list[tuple[float, float]]) -> list[int]:
    """A lane per interval (degrees, unwrapped), the lowest whose arcs it does not overlap."""
    taken: list[list[tuple[float, float]]] = []
    out = []
    for lo, hi in intervals:
        lo, hi = min(lo, hi), max(lo, hi)
        for k, lane in enumerate(taken):
            clear = True
            for a, b in lane:
                for turn in (-360.0, 0.0, 360.0):
                    if lo < b + turn + 1.0 and a + turn - 1.0 < hi:
                        clear = False
            if clear:
                lane.append((lo, hi))
                out.append(k)
                break
        else:
            taken.append([(lo, hi)])
            out.append(len(taken) - 1)
    return out


def stator_map(design: Design) -> StatorMap:
    """The map of `design`'s stator (see the module's docstring)."""
    geo, lay = design.geometry, design.layout
    sl = stator_layout(design)
    r_coil = coil_outer_radius_mm(design)
    r_hole = float(np.hypot(*geo.coil.hole_mm.T).max())
    outer = geo.coil.outline_mm[np.argsort(-np.hypot(*geo.coil.outline_mm.T))[:2]]
    half_deg = float(np.degrees(np.abs(np.arctan2(outer[:, 1], outer[:, 0]))).min())
    inset = LEAD_INSET_DEG_SHARE * half_deg
    rim = sl.outer_radius_mm - r_coil
    r_lead = r_coil + 0.15 * rim

    by_index = {c.index: c for c in lay.coils}
    positions = []
    for k in range(1, lay.coil_positions + 1):
        angle = 360.0 * (k - 1) / lay.coil_positions
        outline, hole = geo.coil_polygons(k)
        c = by_index.get(k)
        centre = hole.mean(axis=0)
        positions.append(
            MapPosition(
                k,
                angle,
                c.phase if c else None,
                c.polarity if c else 0,
                outline if c else None,
                hole,
                (float(centre[0]), float(centre[1])),
            )
        )

    nodes: dict[str, MapNode] = {}
    for c in lay.coils:
        angle = 360.0 * (c.index - 1) / lay.coil_positions
        s_deg, f_deg = angle - inset, angle + inset
        s_pt, f_pt = _polar(r_lead, s_deg), _polar(r_lead, f_deg)
        nodes[f"{c.index}S"] = MapNode(
            f"{c.index}S", tuple(s_pt), np.array([_polar(r_hole, s_deg), s_pt]), True
        )
        nodes[f"{c.index}F"] = MapNode(
            f"{c.index}F", tuple(f_pt), np.array([_polar(r_coil, f_deg), f_pt]), False
        )
    r_exit = sl.outer_radius_mm + EXIT_REACH_MM
    slot_of = dict(zip(sl.lead_names, sl.lead_slot_angles_deg, strict=True))
    # the terminals fanned out round the exits, in the slots' order, far enough apart to read
    pitch = math.degrees(TERMINAL_PITCH_MM / r_exit)
    exit_at = exit_angle_deg(design)
    fan = {n: exit_at + (k - (len(slot_of) - 1) / 2) * pitch for k, n in enumerate(slot_of)}
    for name, deg in fan.items():
        nodes[name] = MapNode(name, tuple(_polar(r_exit, deg)), None, False)

    made = joins(lay, design.spec.connection.kind)
    inside = [j for j in made if j[0] not in ("star", "delta")]

    def along(name: str) -> float:  # where a node's run meets its lane: a terminal's at its slot
        if name in slot_of:
            return slot_of[name]
        return math.degrees(math.atan2(nodes[name].xy[1], nodes[name].xy[0]))

    spans = []
    for _, a, b in inside:
        da = along(a)
        spans.append((da, _short_way(da, along(b))))
    lane_of = _lanes(spans)
    n_lanes = max(lane_of, default=0) + 1
    # lanes evenly across the rim between the lead points and the cast edge
    radii = [r_lead + (sl.outer_radius_mm - 1.0 - r_lead) * (k + 1) / (n_lanes + 1) for k in range(n_lanes)]
    out = []
    for (group, a, b), (da, db), lane in zip(inside, spans, lane_of, strict=True):
        r = radii[lane]
        pa, pb = np.array(nodes[a].xy), np.array(nodes[b].xy)
        # a phase end runs out through its lead slot, then to its terminal
        head = [pa] + ([_polar(sl.outer_radius_mm + 2.0, slot_of[a])] if a in slot_of else [])
        tail = ([_polar(sl.outer_radius_mm + 2.0, slot_of[b])] if b in slot_of else []) + [pb]
        path = np.vstack([*head, _arc(r, da, db), *tail])
        out.append(MapJoin(group, a, b, path))
    r_joint = sl.outer_radius_mm + JOINT_REACH_MM
    for k, (group, a, b) in enumerate(j for j in made if j[0] in ("star", "delta")):
        r = r_joint + (3.0 * k if group == "delta" else 0.0)
        # out from each terminal half a pitch aside, between the names, to the joint's arc
        da = fan[a] + pitch / 2
        db = _short_way(da, fan[b] + pitch / 2)
        path = np.vstack([nodes[a].xy, _polar(r_exit, da), _arc(r, da, db), _polar(r_exit, db), nodes[b].xy])
        out.append(MapJoin(group, a, b, path))
    return StatorMap(tuple(positions), nodes, tuple(out), sl, r_coil, exit_angle_deg(design), n_lanes)


def map_nets(pairs) -> set[frozenset[str]]:
    """The nets (sets of leads and terminals joined together) that join pairs make."""
    parent: dict[str, str] = {}

    def root(x: str) -> str:
        parent.setdefault(x, x)
        while parent[x] != x:
            parent[x] = parent[parent[x]]
            x = parent[x]
        return x

    for a, b in pairs:
        parent[root(a)] = root(b)
    groups: dict[str, set[str]] = {}
    for x in list(parent):
        groups.setdefault(root(x), set()).add(x)
    return {frozenset(g) for g in groups.values()}
