"""The 2-D outlines every part is made from: exact areas, offsets, kerf, marks, where holes go."""

from __future__ import annotations

import math

import numpy as np
import pytest
from demos import PLATE, design

from fab import outlines as o
from fab.fit import Shape, gap_mm, inside
from layout.materials import METRIC_THREADS
from layout.rotor import pocket_marks


def _radius(path: o.Path) -> float:
    circ = path.as_circle()
    assert circ is not None
    return circ[1]


def _cross(u, v) -> float:
    return float(u[0] * v[1] - u[1] * v[0])


def test_circle_area_is_exact():
    assert o.circle(3, -2, 10).area_mm2() == pytest.approx(math.pi * 100, rel=1e-12)
    # The chords of a circle fall inside it: the polygon's area is a little less.
    pts = o.circle(0, 0, 10).points()
    assert o.polygon(pts).area_mm2() < math.pi * 100


def test_area_with_arcs_matches_a_fine_polygon():
    sl = o.stator_layout(design("millrace"))
    path = o.lugged_outline(sl)
    fine = o.polygon(path.points(0.05)).area_mm2()
    assert path.area_mm2() == pytest.approx(fine, rel=1e-6)
    # Each lug adds area beyond its circle.
    assert path.area_mm2() > math.pi * sl.outer_radius_mm**2


def test_arc_midpoint_lies_on_the_arc():
    p0, p1 = np.array([10.0, 0.0]), np.array([0.0, 10.0])
    bulge = math.tan(math.radians(90) / 4)  # a quarter circle about the origin
    centre, r = o.arc_centre(p0, p1, bulge)
    assert centre == pytest.approx([0, 0], abs=1e-12) and r == pytest.approx(10)
    mid = o.arc_midpoint(p0, p1, bulge)
    assert mid == pytest.approx([10 / math.sqrt(2)] * 2)


def test_offset_convex_moves_every_side():
    square = [(0, 0), (10, 0), (10, 10), (0, 10)]
    grown = o.offset_convex(square, 1.0)
    assert o.polygon(grown).area_mm2() == pytest.approx(144)
    assert o.polygon(o.offset_convex(square, -2.0)).area_mm2() == pytest.approx(36)
    # A trapezoid: each side of the result is 0.5 from the original's line.
    trap = design("millrace").geometry.coil.hole_mm
    inner = o.offset_convex(trap, -0.5)
    q = np.roll(trap, -1, axis=0)
    for a, b, c in zip(trap, q, inner, strict=True):
        n = np.array([b[1] - a[1], a[0] - b[0]]) / np.hypot(*(b - a))
        assert np.dot(c - a, n) == pytest.approx(-0.5)


@pytest.mark.parametrize("ch", ["N", "S", "1", "2", "^"])
def test_glyphs_are_simple_closed_outlines(ch):
    g = o.glyph(ch, 50.0, 30.0, 5.0)
    assert g.area_mm2() > 0
    pts = g.xy
    n = len(pts)
    # No two edges that do not share a corner cross.
    for i in range(n):
        for j in range(i + 2, n):
            if (j + 1) % n == i:
                continue
            a, b, c, d = pts[i], pts[(i + 1) % n], pts[j], pts[(j + 1) % n]
            d1, d2 = _cross(b - a, c - a), _cross(b - a, d - a)
            d3, d4 = _cross(d - c, a - c), _cross(d - c, b - c)
            assert not (d1 * d2 < 0 and d3 * d4 < 0), (ch, i, j)
    # Centred on its place, 5 mm high along the ray.
    assert g.centroid() == pytest.approx(
        [50 * math.cos(math.radians(30)), 50 * math.sin(math.radians(30))], abs=1.0
    )


def test_rotor_disc_features():
    d = design("millrace")
    spec = d.spec
    flat = o.rotor_disc_flat(d, 1)
    assert _radius(flat.outline.path) == pytest.approx(135.0)
    assert flat.count("bore") == 1 and _radius(flat.holes[0].path) == pytest.approx(17.5)
    assert flat.count("hub") == spec.rotor.hub_bolts == 4
    assert flat.count("dowel") == 2
    assert flat.count("balance") == 16
    assert flat.count("jack") == 0  # disc 1 takes the screws' tips
    assert flat.count("landing") == 3
    assert flat.count("mark") == 16 and flat.count("index") == 1 and flat.count("number") == 1
    assert flat.count("magnet") == 16
    assert not flat.pockets  # steel: magnets sit on the face
    # Hub bolt circle by default: bore plus three hole diameters (35 + 27 mm).
    hub = [f for f in flat.holes if f.kind == "hub"]
    centres = [f.path.as_circle()[0] for f in hub]
    assert [np.hypot(*c) for c in centres] == pytest.approx([31.0] * 4)
    assert [_radius(f.path) for f in hub] == pytest.approx([4.5] * 4)
    upper = o.rotor_disc_flat(d, 2)
    jacks = [f for f in upper.holes if f.kind == "jack"]
    # M10 tap drill 8.5 mm (ISO 261 coarse pitch 1.5 mm; tap drill d − P, common practice).
    assert [2 * _radius(f.path) for f in jacks] == pytest.approx([METRIC_THREADS["M10"].tap_drill_mm] * 3)
    assert METRIC_THREADS["M10"].tap_drill_mm == 8.5


def test_disc_two_holes_meet_disc_one_when_turned_over():
    d = design("millrace")
    low, high = o.rotor_disc_flat(d, 1), o.rotor_disc_flat(d, 2)
    for kind in ("hub", "dowel", "balance"):
        a = sorted(tuple(np.round(f.path.as_circle()[0], 6)) for f in low.holes if f.kind == kind)
        # Turning disc 2 over about x maps (x, y) on the part to (x, −y) where it runs.
        b = sorted(
            tuple(np.round(f.path.as_circle()[0] * (1, -1), 6) + 0.0) for f in high.holes if f.kind == kind
        )
        assert a == b, kind
    # The jacking screws of disc 2 bear on the pads marked on disc 1.
    pads = sorted(tuple(np.round(f.path.as_circle()[0], 6)) for f in low.reference if f.kind == "landing")
    tips = sorted(
        tuple(np.round(f.path.as_circle()[0] * (1, -1), 6) + 0.0) for f in high.holes if f.kind == "jack"
    )
    assert pads == tips


def test_dowels_clock_the_disc_one_way_only():
    d = design("millrace")
    flat = o.rotor_disc_flat(d, 1)
    dowels = [f.path.as_circle()[0] for f in flat.holes if f.kind == "dowel"]
    angles = sorted(math.degrees(math.atan2(y, x)) % 360 for x, y in dowels)
    # No turn but a whole one maps the pair of dowel holes onto itself.
    for turn in range(1, 360):
        moved = sorted((a + turn) % 360 for a in angles)
        assert not np.allclose(moved, angles, atol=1e-6), turn


def test_marks_say_the_face_up_beside_every_pocket():
    d = design("millrace")
    for disc in (1, 2):
        flat = o.rotor_disc_flat(d, disc)
        marks = [f for f in flat.engraved if f.kind == "mark"]
        for m, pm in zip(marks, pocket_marks(d.geometry, disc), strict=True):
            assert m.label == f"mark {pm.face_up} at pocket {pm.pocket}"
            c = m.path.centroid()
            off = (math.degrees(math.atan2(c[1], c[0])) - pm.angle_deg + 180) % 360 - 180
            assert off == pytest.approx(0, abs=0.5)
            # Inside the pocket's inner edge.
            assert np.hypot(*c) < d.spec.magnets.pitch_radius_mm - 20


def test_kerf_moves_cut_paths_only():
    d = design("millrace")
    kerf = 0.4
    plain, cut = o.rotor_disc_flat(d, 1), o.rotor_disc_flat(d, 1, kerf)
    assert _radius(cut.outline.path) == pytest.approx(_radius(plain.outline.path) + kerf / 2)
    for a, b in zip(plain.holes, cut.holes, strict=True):
        assert _radius(b.path) == pytest.approx(_radius(a.path) - kerf / 2)
    for a, b in zip(plain.engraved + plain.reference, cut.engraved + cut.reference, strict=True):
        assert np.array_equal(a.path.xy, b.path.xy)
    # Template pockets are cut through: they shrink by half the kerf a side.
    tp, tc = o.magnet_template_flat(d, 1), o.magnet_template_flat(d, 1, kerf)
    pa = [f for f in tp.holes if f.kind == "pocket"][0].path.area_mm2()
    pc = [f for f in tc.holes if f.kind == "pocket"][0].path.area_mm2()
    assert pc == pytest.approx((40.6 - kerf) * (20.6 - kerf)) and pa == pytest.approx(40.6 * 20.6)
    # The lugged rim grows by half the kerf everywhere: its area by about perimeter × kerf/2.
    sl = o.stator_layout(d)
    grown = o.lugged_outline(sl, kerf / 2).area_mm2() - o.lugged_outline(sl).area_mm2()
    perimeter = np.sum(np.hypot(*np.diff(np.vstack([o.lugged_outline(sl).points(0.1)] * 2)[:-1], axis=0).T))
    assert grown == pytest.approx(perimeter / 2 * kerf / 2, rel=0.01)


def test_template_places_are_the_magnets_with_clearance():
    d = design("millrace")
    tpl = o.magnet_template_flat(d, 1)
    places = [f for f in tpl.holes if f.kind == "pocket"]
    magnets = [f for f in tpl.reference if f.kind == "magnet"]
    assert len(places) == len(magnets) == 16
    for p, m in zip(places, magnets, strict=True):
        assert p.path.centroid() == pytest.approx(m.path.centroid(), abs=1e-9)
        # 0.3 mm a side (common practice for a cut template).
        assert p.path.area_mm2() == pytest.approx(40.6 * 20.6)
        assert gap_mm(Shape(o.polygon(m.path.points())), Shape(p.path)) < 0  # the place holds the magnet
        assert all(inside(x, p.path.points()) for x in m.path.xy)


def test_stator_rim_lugs_and_places():
    d = design("millrace")
    sl = o.stator_layout(d)
    flat = o.stator_flat(d)
    geo = d.geometry
    assert sl.inner_radius_mm == pytest.approx(geo.coil.r_min_mm - 8.0)
    assert sl.outer_radius_mm == pytest.approx(geo.coil.r_max_mm + 8.0)
    # The studs stand outside the spinning discs.
    assert sl.lug_radius_mm - sl.hole_mm / 2 >= d.forces.disc_outer_radius_mm + o.STUD_CLEARANCE_MM - 1e-9
    assert flat.count("lug") == 4 and flat.count("window") == 12
    # Each coil place is its hole less the clearance it slides on with.
    hole_area = o.polygon(geo.coil.hole_mm).area_mm2()
    for f in flat.holes:
        if f.kind == "window":
            assert f.path.area_mm2() < hole_area
    assert [f.label for f in o.lead_slots(d)] == [
        f"lead slot {n}" for n in ("U1", "U2", "V1", "V2", "W1", "W2")
    ]


def test_jig_core_is_the_coil_hole_and_the_cheek_has_the_lead_slot():
    d = design("millrace")
    geo = d.geometry
    core = o.jig_core_flat(d)
    assert core.outline.path.area_mm2() == pytest.approx(o.polygon(geo.coil.hole_mm).area_mm2())
    assert core.thickness_mm == pytest.approx(geo.coil.thickness_mm)
    assert core.outline.path.centroid() == pytest.approx([0, 0], abs=1e-9)
    cheek = o.jig_cheek_flat(d)
    assert len(cheek.outline.path.xy) == 8  # a trapezoid with the slot's four corners
    slot = o.jig_layout(d).lead_slot_mm
    assert slot >= d.prediction.wire.diameter_mm
    assert cheek.count("winder") == 1 and cheek.count("pin") == 2


def test_pedalbox_jacking_screws_pass_inside_the_stator():
    d = design("pedalbox")
    lay = o.disc_layout(d)
    sl = o.stator_layout(d)
    assert lay.jacking is not None and lay.jacking.screw == "M8"
    assert lay.jacking.radius_mm + 4.0 + o.JACK_STATOR_CLEARANCE_MM <= sl.inner_radius_mm + 1e-9


def test_steel_stator_plate_carries_the_jacking_screws():
    d = design("hilltop", *PLATE)
    lay = o.disc_layout(d)
    assert lay.jacking is not None and lay.jacking.on == "stator plate"
    plate = o.stator_plate_flat(d)
    assert plate.count("jack") == d.spec.rotor.jacking_screws
    assert o.rotor_disc_flat(d, 1).count("landing") == d.spec.rotor.jacking_screws


def test_plain_steel_disc_has_the_hub_and_the_tapped_jacking_holes_and_no_magnets():
    d = design("hilltop")
    magnets, plain = o.rotor_disc_flat(d, 1), o.rotor_disc_flat(d, 2)
    assert plain.part == "rotor_disc_2" and "plain steel" in plain.title
    assert plain.thickness_mm == 8.0 and plain.thickness_key == "rotor.steel_disc_thickness_mm"
    assert _radius(plain.outline.path) == pytest.approx(_radius(magnets.outline.path))
    # No magnets to place: no pockets, no places, no polarity marks; index and number stay.
    assert not plain.pockets
    for kind in ("magnet", "mark", "landing", "pocket"):
        assert plain.count(kind) == 0, kind
    assert plain.count("index") == 1 and plain.count("number") == 1
    # The same hub, bore, dowels and balance holes as the magnet disc once it is turned over
    # (x, y) → (x, −y) to run; its tapped holes over the pads marked on the magnet disc.
    for kind in ("bore", "hub", "dowel", "balance"):
        a = sorted(tuple(np.round(f.path.as_circle()[0], 6)) for f in magnets.holes if f.kind == kind)
        b = sorted(
            tuple(np.round(f.path.as_circle()[0] * (1, -1), 6) + 0.0) for f in plain.holes if f.kind == kind
        )
        assert a == b and a, kind
    lay = o.disc_layout(d)
    assert d.forces.jacking_screws and lay.jacking.on == "disc 2"
    pads = sorted(tuple(np.round(f.path.as_circle()[0], 6)) for f in magnets.reference if f.kind == "landing")
    tips = sorted(
        tuple(np.round(f.path.as_circle()[0] * (1, -1), 6) + 0.0) for f in plain.holes if f.kind == "jack"
    )
    assert len(tips) == d.spec.rotor.jacking_screws and pads == tips
    assert o.stator_layout(d).plate_inner_radius_mm is None  # no stationary plate
