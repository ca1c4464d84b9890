"""Axial field of the rotor magnets: closed forms, images in steel, trimming, magpylib."""

from __future__ import annotations

import functools
import math
from pathlib import Path

import magpylib
import numpy as np
import pytest
from demos import variant
from scipy.spatial.transform import Rotation

from layout import field
from layout.design import winding_layout
from layout.field import Sources, bz, bz_each, image_sources, near_sources
from layout.geometry import Geometry, recoil_factor, resolve_geometry
from layout.materials import MAGNET_GRADES
from layout.spec import load_spec

DESIGNS = Path(__file__).resolve().parents[1] / "designs"
DEMOS = ("pedalbox", "millrace", "hilltop")


def sources(*rows) -> Sources:
    """Sources from (shape, centre mm, dimension mm, rotation rad, polarisation T) rows."""
    dims = [tuple(dim) + (0.0,) * (3 - len(dim)) for _, _, dim, _, _ in rows]
    return Sources(
        block=np.array([shape == "block" for shape, *_ in rows]),
        center_mm=np.array([c for _, c, _, _, _ in rows], dtype=float),
        dimension_mm=np.array(dims, dtype=float),
        rotation_rad=np.array([r for *_, r, _ in rows], dtype=float),
        polarization_t=np.array([p for *_, p in rows], dtype=float),
        image_order=0,
    )


@functools.cache
def demo_geometry(name: str) -> Geometry:
    spec = load_spec(DESIGNS / f"{name}.toml")
    lay = winding_layout(spec)
    return resolve_geometry(spec, tuple(c.index for c in lay.coils))


def coil_region(geo: Geometry, nr: int, nt: int, nz: int) -> np.ndarray:
    """Points (mm) filling the coils' radial band and thickness over one pole pitch about 0°."""
    c = geo.coil
    pole = 2 * math.pi / magnets_per_disc(geo)
    r = np.linspace(c.r_min_mm, c.r_max_mm, nr)
    th = np.linspace(-pole / 2, pole / 2, nt)
    z = np.linspace(c.z_min_mm, c.z_max_mm, nz)
    rr, tt, zz = np.meshgrid(r, th, z, indexing="ij")
    return np.stack([rr * np.cos(tt), rr * np.sin(tt), zz], axis=-1).reshape(-1, 3)


def magnets_per_disc(geo: Geometry) -> int:
    return sum(1 for m in geo.magnets if m.disc == 1)


def magpylib_objects(src: Sources) -> list:
    """The same sources as magpylib's own magnet objects, in SI (metres, tesla)."""
    out = []
    for i in range(len(src)):
        pol = (0.0, 0.0, float(src.polarization_t[i]))
        pos = src.center_mm[i] * 1e-3
        if src.block[i]:
            out.append(
                magpylib.magnet.Cuboid(
                    polarization=pol,
                    dimension=src.dimension_mm[i] * 1e-3,
                    position=pos,
                    orientation=Rotation.from_euler("z", float(src.rotation_rad[i])),
                )
            )
        else:
            out.append(
                magpylib.magnet.Cylinder(
                    polarization=pol, dimension=src.dimension_mm[i, :2] * 1e-3, position=pos
                )
            )
    return out


def rel_err(got: np.ndarray, want: np.ndarray) -> float:
    """Largest deviation relative to the largest |want|."""
    return float(np.abs(np.asarray(got) - want).max() / np.abs(want).max())


# --- closed forms on the axis ------------------------------------------------------------------

FACE_DISTANCES_MM = np.array([0.05, 0.5, 1.0, 2.5, 6.0, 15.0, 40.0])


@pytest.mark.parametrize(("radius", "thick", "br"), [(7.5, 4.0, 1.3), (15.0, 8.0, -1.17), (5.0, 20.0, 0.39)])
def test_disc_on_axis_matches_closed_form(radius, thick, br):
    centre = np.array([3.0, -2.0, 1.0])
    src = sources(("disc", centre, (2 * radius, thick), 0.0, br))
    z = FACE_DISTANCES_MM
    pts = centre + np.stack([0 * z, 0 * z, thick / 2 + z], axis=-1)
    # Furlani, Permanent Magnet and Electromechanical Devices, 2001: on-axis field of an
    # axially magnetised cylinder, distance z from its face.
    want = br / 2 * ((thick + z) / np.hypot(radius, thick + z) - z / np.hypot(radius, z))
    np.testing.assert_allclose(bz(src, pts), want, rtol=1e-9)
    # Below the magnet the field is the mirror image (same sign along the axis).
    below = centre + np.stack([0 * z, 0 * z, -thick / 2 - z], axis=-1)
    np.testing.assert_allclose(bz(src, below), want, rtol=1e-9)


@pytest.mark.parametrize(
    ("a", "b", "thick", "br", "rot"),
    [(20.0, 10.0, 4.0, 1.3, 0.0), (50.0, 25.0, 12.0, 1.35, 0.7), (10.0, 10.0, 2.0, -1.2, 2.0)],
)
def test_block_on_axis_matches_closed_form(a, b, thick, br, rot):
    centre = np.array([-4.0, 6.0, -3.0])
    src = sources(("block", centre, (a, b, thick), rot, br))
    z = FACE_DISTANCES_MM
    pts = centre + np.stack([0 * z, 0 * z, thick / 2 + z], axis=-1)
    zh = z + thick
    # Furlani, Permanent Magnet and Electromechanical Devices, 2001: on-axis field of a
    # rectangular block magnetised along its thickness.
    want = (
        br
        / math.pi
        * (
            np.arctan(a * b / (2 * z * np.sqrt(4 * z**2 + a**2 + b**2)))
            - np.arctan(a * b / (2 * zh * np.sqrt(4 * zh**2 + a**2 + b**2)))
        )
    )
    np.testing.assert_allclose(bz(src, pts), want, rtol=1e-9)


def test_rotated_block_is_the_block_seen_from_a_rotated_point():
    rng = np.random.default_rng(3)
    centre = np.array([60.0, 20.0, -8.0])
    dim = (40.0, 20.0, 10.0)
    pts = centre + rng.uniform(-35.0, 35.0, (200, 3))
    pts[:, 2] = centre[2] + np.sign(pts[:, 2] - centre[2]) * (6.0 + np.abs(pts[:, 2] - centre[2]))
    for rot in (0.4, -1.1, 2.5):
        turned = bz(sources(("block", centre, dim, rot, 1.3)), pts)
        # Turning the magnet by +rot about its own axis is turning the observer by −rot.
        c, s = math.cos(rot), math.sin(rot)
        rel = pts - centre
        back = centre + np.stack(
            [c * rel[:, 0] + s * rel[:, 1], -s * rel[:, 0] + c * rel[:, 1], rel[:, 2]], -1
        )
        straight = bz(sources(("block", centre, dim, 0.0, 1.3)), back)
        np.testing.assert_allclose(turned, straight, rtol=1e-12, atol=1e-14)
        # and it is a different field from the unrotated block's at the same points
        assert rel_err(bz(sources(("block", centre, dim, 0.0, 1.3)), pts), turned) > 1e-2


# --- steel planes by the method of images ------------------------------------------------------


@pytest.mark.parametrize(
    ("shape", "dim"), [("block", (30.0, 15.0, 6.0)), ("disc", (20.0, 6.0)), ("block", (10.0, 40.0, 3.0))]
)
def test_magnet_on_a_steel_plane_acts_as_one_twice_as_thick(shape, dim):
    # Method of images (Furlani 2001; Jackson, Classical Electrodynamics, 3rd ed., 1999, §5.13):
    # a μ→∞ half space is replaced by the mirror magnet with its normal magnetisation kept,
    # so a magnet lying on the plane and its image make one magnet of twice the thickness.
    plane = -7.0
    thick = dim[-1]
    centre = (12.0, -5.0, plane + thick / 2)
    one = sources((shape, centre, dim, 0.3, 1.25))
    with_image = field._with_images(one, (plane,), 0)
    doubled = dim[:-1] + (2 * thick,)
    twice = sources((shape, (12.0, -5.0, plane), doubled, 0.3, 1.25))
    rng = np.random.default_rng(7)
    pts = rng.uniform(-40.0, 40.0, (300, 3))
    pts[:, 2] = plane + thick + rng.uniform(0.2, 30.0, 300)  # above the magnet
    assert len(with_image) == 2
    np.testing.assert_allclose(bz(with_image, pts), bz(twice, pts), rtol=1e-9, atol=1e-12)


def test_image_in_one_plane_leaves_only_normal_field_at_the_steel():
    # The boundary condition of a μ→∞ surface is zero tangential H (Jackson, Classical
    # Electrodynamics, §5.9): field lines meet the steel at right angles.
    plane = 2.0
    real = sources(
        ("block", (40.0, 0.0, plane - 9.0), (20.0, 10.0, 6.0), 0.0, 1.3),
        ("disc", (0.0, 40.0, plane - 4.0), (15.0, 5.0), 0.0, -1.3),
    )
    objs = magpylib_objects(field._with_images(real, (plane,), 0))
    rng = np.random.default_rng(11)
    pts = np.column_stack([rng.uniform(-60, 80, 400), rng.uniform(-60, 80, 400), np.full(400, plane)])
    b = magpylib.getB(objs, pts * 1e-3, sumup=True)
    tangential = np.hypot(b[:, 0], b[:, 1])
    assert tangential.max() < 1e-12 * np.abs(b[:, 2]).max()
    # Without the image the tangential field there is large: the check has teeth.
    b0 = magpylib.getB(magpylib_objects(real), pts * 1e-3, sumup=True)
    assert np.hypot(b0[:, 0], b0[:, 1]).max() > 0.3 * np.abs(b0[:, 2]).max()


@pytest.mark.parametrize("name", DEMOS)
def test_image_series_converges_in_the_coil_region(name):
    geo = demo_geometry(name)
    assert len(geo.iron_planes_z_mm) == 2  # every demo has two steel surfaces
    pts = coil_region(geo, 9, 13, 5)
    probe = pts[:: len(pts) // 16]
    src = image_sources(geo, probe)
    assert 1 <= src.image_order < 10
    real = field._real_sources(geo)
    now = bz(src, pts)
    more = bz(field._with_images(real, geo.iron_planes_z_mm, src.image_order + 1), pts)
    # One more order of images each way changes Bz over the whole coil region (not only at
    # the probes the series was stopped on) by less than the series' own criterion.
    assert rel_err(more, now) < field.CONVERGENCE_REL
    # The images matter: the plain magnets alone give a clearly different field.
    assert rel_err(bz(real, pts), now) > 0.05


@pytest.mark.parametrize("name", DEMOS)
def test_image_series_meets_the_steel_at_right_angles(name):
    # Zero tangential field at μ→∞ surfaces (Jackson, Classical Electrodynamics, §5.9); the
    # two-plane series is truncated, so only to about its convergence tolerance.
    geo = demo_geometry(name)
    pts = coil_region(geo, 7, 9, 1)
    src = image_sources(geo, pts[:: len(pts) // 16])
    objs = magpylib_objects(src)
    for plane in geo.iron_planes_z_mm:
        at = pts.copy()
        at[:, 2] = plane
        b = magpylib.getB(objs, at * 1e-3, sumup=True)
        assert np.hypot(b[:, 0], b[:, 1]).max() < 1e-4 * np.abs(b[:, 2]).max()


# --- a plain steel disc across the stator ------------------------------------------------------


ALUMINIUM = (("rotor.disc_material", "aluminium"),)  # a magnet disc that is not steel


def gap_points(geo: Geometry, z_mm) -> np.ndarray:
    """Points (mm) over the coils' radial band and one pole pitch about 0°, at each height."""
    c = geo.coil
    pole = 2 * math.pi / magnets_per_disc(geo)
    rr, tt, zz = np.meshgrid(
        np.linspace(c.r_min_mm, c.r_max_mm, 7), np.linspace(-pole / 2, pole / 2, 9), z_mm, indexing="ij"
    )
    return np.stack([rr * np.cos(tt), rr * np.sin(tt), zz], axis=-1).reshape(-1, 3)


def mirrored_rotor(spec) -> list:
    """The magnet disc of a one-disc design and its mirror image in the plane the running
    clearance above the stator (the plain disc's face) as magpylib objects (SI), from the
    spec alone: block magnets, magnet j at 2πj/P, alternating, magnet 1 magnetised +z, both
    copies magnetised alike along z."""
    s, g = spec.stator.thickness_mm, spec.rotor.running_clearance_mm
    mg = spec.magnets
    br = mg.remanence_t or MAGNET_GRADES[mg.grade].remanence_t * recoil_factor(
        spec
    )  # working polarisation (closed form in geometry)
    face = s / 2 + g
    z_magnet = -(s / 2 + g + mg.thickness_mm / 2)
    objs = []
    for j in range(mg.count):
        ang = 2 * math.pi * j / mg.count
        xy = mg.pitch_radius_mm * np.array([math.cos(ang), math.sin(ang)])
        for z in (z_magnet, 2 * face - z_magnet):
            objs.append(
                magpylib.magnet.Cuboid(
                    polarization=(0.0, 0.0, br if j % 2 == 0 else -br),
                    dimension=np.array([mg.length_mm, mg.width_mm, mg.thickness_mm]) * 1e-3,
                    position=np.array([xy[0], xy[1], z]) * 1e-3,
                    orientation=Rotation.from_euler("z", ang),
                )
            )
    return objs


def test_a_plain_steel_disc_mirrors_the_magnet_disc():
    # Method of images (Furlani 2001; Jackson, Classical Electrodynamics, 3rd ed., §5.13): a
    # μ→∞ half space is the mirror image of every magnet in its face, normal magnetisation
    # kept. With a non-magnetic magnet disc the plain disc's face is the only steel, and the
    # image is exact: the field between the discs is that of a two-disc rotor whose mid-plane
    # is that face. Brute force: magpylib's own magnet objects, real and mirrored, placed
    # here from the design's figures alone.
    spec = variant("hilltop", *ALUMINIUM)
    s, g = spec.stator.thickness_mm, spec.rotor.running_clearance_mm
    face = s / 2 + g
    geo = resolve_geometry(spec, (1,))
    assert geo.iron_planes_z_mm == (face,)
    objs = mirrored_rotor(spec)
    # The stator's mid-plane, its faces and just short of the steel.
    pts = gap_points(geo, [0.0, -s / 2, s / 2, face - 0.2])
    want = magpylib.getB(objs, pts * 1e-3, sumup=True)[:, 2]
    got = bz(image_sources(geo, pts[::13]), pts)
    np.testing.assert_allclose(got, want, rtol=1e-9, atol=1e-9 * np.abs(want).max())
    # Without the plain disc (one_disc_coreless) the field in the coils is clearly weaker.
    bare = resolve_geometry(variant("hilltop", *ALUMINIUM, ("rotor.topology", "one_disc_coreless")), (1,))
    assert bare.iron_planes_z_mm == ()
    mid = gap_points(geo, [0.0])
    without, with_disc = (np.abs(bz(image_sources(g_, mid), mid)).max() for g_ in (bare, geo))
    assert without < 0.8 * with_disc


def test_a_plain_steel_disc_gives_half_of_a_two_disc_machine():
    # The same symmetry with steel behind the magnets too: the field between a steel magnet
    # disc and a plain steel disc at spacing D (magnet back to plain face) is the lower half
    # of a two-disc machine with steel discs 2D apart, mirrored about its mid-plane, where the
    # tangential field vanishes by symmetry. That machine has stator thickness 2(s + g) and the
    # same running clearance; each series is cut where it has converged (CONVERGENCE_REL).
    d = variant("hilltop")
    s, g = d.stator.thickness_mm, d.rotor.running_clearance_mm
    face = s / 2 + g
    geo = resolve_geometry(d, (1,))
    assert geo.iron_planes_z_mm[-1] == pytest.approx(face)
    two = variant(
        "hilltop",
        ("rotor.topology", "two_discs"),
        ("rotor.steel_disc_thickness_mm", None),
        ("stator.thickness_mm", 2 * (s + g)),
    )
    geo2 = resolve_geometry(two, (1,))
    heights = np.array([0.0, -s / 2, s / 2, face - 0.2])
    pts = gap_points(geo, heights)
    shifted = pts - np.array([0.0, 0.0, face])
    ours = bz(image_sources(geo, pts[::13]), pts)
    theirs = bz(image_sources(geo2, shifted[::13]), shifted)
    assert rel_err(ours, theirs) < 5 * field.CONVERGENCE_REL
    # and the two-disc machine is symmetric: its upper half gives the same field mirrored.
    above = shifted * np.array([1.0, 1.0, -1.0])
    assert rel_err(bz(image_sources(geo2, above[::13]), above), theirs) < 5 * field.CONVERGENCE_REL


# --- trimming far magnets ------------------------------------------------------------------------


@pytest.mark.parametrize("name", DEMOS)
def test_near_sources_keeps_the_field_of_the_window(name):
    geo = demo_geometry(name)
    window = coil_region(geo, 15, 21, 5)
    probe = coil_region(geo, 4, 4, 1)  # 16 probes spanning the window's radii and angles
    full = image_sources(geo, probe)
    near = near_sources(full, probe)
    kept = {tuple(row) for row in np.column_stack([near.center_mm, near.polarization_t])}
    assert kept <= {tuple(row) for row in np.column_stack([full.center_mm, full.polarization_t])}
    # At the probes the dropped part is computed exactly: the stated bound holds there.
    assert rel_err(bz(near, probe), bz(full, probe)) < field.TRIM_REL
    # Elsewhere in the window it is not computed. The dropped sources are the ones farthest
    # round the ring, so their summed field varies slowly over one pole pitch and is about as
    # small between the probes as at them; their contributions partly cancel at the probes,
    # which need not happen everywhere, hence a bound ten times looser.
    assert rel_err(bz(near, window), bz(full, window)) < 10 * field.TRIM_REL


def test_near_sources_drops_the_far_side_of_a_ring():
    geo = demo_geometry("millrace")
    probe = coil_region(geo, 4, 4, 1)
    full = image_sources(geo, probe)
    near = near_sources(full, probe)
    assert len(near) < 0.8 * len(full)
    # What is left is the near side of the ring: no kept source farther round than a dropped one.

    def ang(s: Sources) -> np.ndarray:
        return np.round(np.abs(np.arctan2(s.center_mm[:, 1], s.center_mm[:, 0])), 9)

    far_kept = ang(near).max()
    dropped = np.setdiff1d(ang(full), ang(near))
    assert dropped.size and dropped.min() >= far_kept - 1e-9


# --- consistency and a second implementation ---------------------------------------------------


def mixed_sources() -> Sources:
    rng = np.random.default_rng(5)
    rows = []
    for i in range(70):
        c = (rng.uniform(-90, 90), rng.uniform(-90, 90), rng.uniform(-30, 30))
        pol = rng.choice([-1.3, 1.2, 0.4])
        if i % 3:
            rows.append(("block", c, tuple(rng.uniform(4, 40, 3)), rng.uniform(-3, 3), pol))
        else:
            rows.append(("disc", c, tuple(rng.uniform(4, 30, 2)), 0.0, pol))
    return sources(*rows)


def test_bz_is_the_sum_of_bz_each():
    src = mixed_sources()
    rng = np.random.default_rng(9)
    pts = rng.uniform(-120, 120, (600, 3))  # enough points that the kernels run in chunks
    each = bz_each(src, pts)
    assert each.shape == (len(src), len(pts))
    np.testing.assert_allclose(each.sum(axis=0), bz(src, pts), rtol=1e-12, atol=1e-15)
    geo = demo_geometry("pedalbox")
    demo = image_sources(geo, coil_region(geo, 4, 4, 1))
    few = coil_region(geo, 5, 5, 3)
    np.testing.assert_allclose(bz_each(demo, few).sum(axis=0), bz(demo, few), rtol=1e-12, atol=1e-15)


def test_matches_magpylib_magnet_objects():
    src = mixed_sources()
    rng = np.random.default_rng(13)
    pts = rng.uniform(-120, 120, (300, 3))
    # magpylib's object layer: positions in m, polarisation in T, orientation as a rotation.
    want = magpylib.getB(magpylib_objects(src), pts * 1e-3, sumup=True)[:, 2]
    np.testing.assert_allclose(bz(src, pts), want, rtol=1e-9, atol=1e-9 * np.abs(want).max())


@pytest.mark.parametrize("name", DEMOS)
def test_demo_sources_match_magpylib_in_the_coil_region(name):
    geo = demo_geometry(name)
    pts = coil_region(geo, 6, 7, 3)
    src = near_sources(image_sources(geo, pts[::8]), pts[::8])
    want = magpylib.getB(magpylib_objects(src), pts * 1e-3, sumup=True)[:, 2]
    np.testing.assert_allclose(bz(src, pts), want, rtol=1e-9, atol=1e-9 * np.abs(want).max())


def test_recoil_factor_is_the_magnetic_circuit_closed_form():
    # A magnet of thickness t driving flux across an air gap g to ideal steel: the 1-D
    # magnetic circuit gives B = Br·t/(t + μ_rec·g) (Furlani 2001, ch. 3), so with μ_rec > 1
    # the working field is (t + g)/(t + μ_rec·g) of the μ_rec = 1 field.
    from demos import variant

    from layout.geometry import magnet_air_gap_mm
    from layout.materials import MAGNET_GRADES

    spec = variant("millrace")  # two discs: each magnet drives half the gap
    t, mu = spec.magnets.thickness_mm, MAGNET_GRADES[spec.magnets.grade].recoil_permeability
    g = spec.stator.thickness_mm / 2 + spec.rotor.running_clearance_mm
    assert magnet_air_gap_mm(spec) == g
    assert recoil_factor(spec) == pytest.approx((t + g) / (t + mu * g))
    assert 0.9 < recoil_factor(spec) < 1.0
    # The magnets as resolved carry that polarisation: what the JSON gives another solver.
    geo = resolve_geometry(spec, (1,))
    assert abs(geo.magnets[0].polarization_t) == pytest.approx(geo.remanence_t * recoil_factor(spec))
