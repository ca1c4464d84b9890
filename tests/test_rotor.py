"""The rotor discs as made: pocket sizes, where the discs sit, faces up, balance positions."""

from __future__ import annotations

import math

import pytest
from demos import DESIGNS, variant

from layout.design import compute_design
from layout.geometry import resolve_geometry
from layout.rotor import (
    CUT_POCKET_CLEARANCE_MM,
    PRINTED_POCKET_CLEARANCE_MM,
    balance_positions,
    disc_place,
    part_angle_deg,
    pocket_clearance_mm,
    pocket_depth_mm,
    pocket_marks,
)
from layout.spec import load_spec


def spec_with(demo: str, **changes):
    """A demo spec with section__key=value changes."""
    return variant(demo, *((k.replace("__", "."), v) for k, v in changes.items()))


def test_pocket_clearance_defaults_by_material():
    # Common practice: 0.2 mm a side for printed pockets.
    assert pocket_clearance_mm(spec_with("millrace", rotor__disc_material="pla")) == 0.2
    assert PRINTED_POCKET_CLEARANCE_MM == 0.2
    plywood = spec_with("millrace", rotor__disc_material="plywood")
    assert pocket_clearance_mm(plywood) == CUT_POCKET_CLEARANCE_MM
    assert pocket_clearance_mm(spec_with("millrace", rotor__pocket_clearance_mm=0.05)) == 0.05


def test_pocket_depth():
    assert pocket_depth_mm(spec_with("millrace")) == 0.0  # steel: magnets on the face
    # 8 mm printed disc, 10 mm magnets: a 2 mm floor (a quarter of the disc) leaves 6 mm.
    assert pocket_depth_mm(spec_with("millrace", rotor__disc_material="pla")) == pytest.approx(6.0)
    # A 20 mm disc takes the whole 10 mm magnet.
    thick = spec_with("millrace", rotor__disc_material="pla", rotor__disc_thickness_mm=20.0)
    assert pocket_depth_mm(thick) == pytest.approx(10.0)
    given = spec_with("millrace", rotor__disc_material="pla", rotor__pocket_depth_mm=3.0)
    assert pocket_depth_mm(given) == 3.0


@pytest.mark.parametrize("material", ["steel", "pla"])
def test_discs_sit_behind_the_magnets_and_keep_the_gap(material):
    spec = spec_with("millrace", rotor__disc_material=material)
    geo = resolve_geometry(spec, tuple(range(1, 13)))
    s, g, h, t = 15.0, 2.0, 10.0, 8.0
    low, high = disc_place(spec, geo, 1), disc_place(spec, geo, 2)
    d = pocket_depth_mm(spec)
    # Pocket floor (or steel face) under the magnet's back.
    assert low.front_z_mm - d == pytest.approx(-s / 2 - g - h)
    assert high.front_z_mm + d == pytest.approx(s / 2 + g + h)
    assert low.front_z_mm - low.back_z_mm == pytest.approx(t)
    assert high.back_z_mm - high.front_z_mm == pytest.approx(t)
    # No part of a disc comes nearer the stator than the running clearance.
    assert -s / 2 - low.front_z_mm >= g - 1e-9
    assert high.front_z_mm - s / 2 >= g - 1e-9
    if material == "steel":
        assert (low.front_z_mm, high.front_z_mm) == pytest.approx(geo.iron_planes_z_mm)


def test_faces_up_alternate_and_facing_magnets_pull():
    design = compute_design(load_spec(DESIGNS / "millrace.toml"))
    geo = design.geometry
    low, high = pocket_marks(geo, 1), pocket_marks(geo, 2)
    assert [m.pocket for m in low] == list(range(1, 17))
    # Magnet 1 at 0° is magnetised +z: N up on the lower disc.
    assert low[0].face_up == "N" and low[0].angle_deg == 0.0
    assert [m.face_up for m in low] == ["N", "S"] * 8
    # The upper disc is made magnet side up and turned over: the same magnets show the other
    # face, at the mirrored angle, so N on the lower disc faces S on the upper one.
    for a, b in zip(low, high, strict=True):
        assert {a.face_up, b.face_up} == {"N", "S"}
        assert b.angle_deg == pytest.approx((360 - a.angle_deg) % 360)
        assert a.angle_deg == pytest.approx(360 * (a.pocket - 1) / 16)


def test_part_angle_mirrors_only_the_upper_disc():
    assert part_angle_deg(1, 30.0) == 30.0
    assert part_angle_deg(2, 30.0) == 330.0
    assert part_angle_deg(2, 0.0) == 0.0


def test_one_disc_has_one_set_of_marks():
    design = compute_design(load_spec(DESIGNS / "hilltop.toml"))
    assert len(pocket_marks(design.geometry, 1)) == 12
    assert pocket_marks(design.geometry, 2) == ()


def test_balance_positions_keep_the_web():
    spec = spec_with("millrace")
    bp = balance_positions(spec, 135.0)
    assert bp is not None
    assert len(bp.angles_deg) == 16
    assert bp.angles_deg[0] == pytest.approx(360 / 32)
    # M5 tap drill 4.2 mm (ISO 261 coarse pitch 0.8 mm, tap drill d − P: common practice).
    assert bp.hole_diameter_mm == 4.2
    # Out at the rim: 135 − 2.1 − 3 mm of web.
    assert bp.radius_mm == pytest.approx(135 - 2.1 - 3.0)
    # Between the magnets: the hole's edge is at least one web from both neighbours' places.
    x, y = bp.radius_mm * math.cos(math.pi / 16), bp.radius_mm * math.sin(math.pi / 16)
    assert abs(y) - 10.3 > 2.1 + 3.0 or x - (125.3) > 2.1 + 3.0


def test_balance_positions_go_between_the_magnets_when_the_rim_is_narrow():
    spec = spec_with("millrace", rotor__disc_outer_diameter_mm=252.0)  # rim 1 mm past the magnets
    bp = balance_positions(spec, 126.0)
    assert bp is not None
    assert bp.radius_mm < 125.0  # inside the magnets' outer edge, between their outer ends
    # Midway between magnets 1 and 2, clear of magnet 1's place (checked in its frame).
    x, y = bp.radius_mm * math.cos(math.pi / 16), bp.radius_mm * math.sin(math.pi / 16)
    dx = max(abs(x - 105) - 20.3, 0)
    dy = max(abs(y) - 10.3, 0)
    assert math.hypot(dx, dy) >= 2.1 + 3.0 - 1e-9


def test_balance_positions_none_when_nothing_fits():
    # 30 magnets 20 mm wide at 105 mm leave 2 mm between them and no rim.
    spec = spec_with("millrace", magnets__count=30, rotor__disc_outer_diameter_mm=250.0)
    assert balance_positions(spec, 125.0) is None


@pytest.mark.parametrize("count", [8, 12, 16, 20])
@pytest.mark.parametrize("disc", [1, 2])
def test_pockets_either_side_are_the_two_nearest(count, disc):
    from layout.rotor import part_angle_deg, pockets_either_side

    # Brute force: the two pockets whose part angles lie just below and just above the angle.
    for angle in (0.3, 33.75, 100.0, 359.0):
        parts = {k: part_angle_deg(disc, 360.0 * (k - 1) / count) for k in range(1, count + 1)}
        below = min(parts, key=lambda k: (angle - parts[k]) % 360)
        above = min(parts, key=lambda k: (parts[k] - angle) % 360)
        assert pockets_either_side(count, disc, angle) == tuple(sorted((below, above)))
