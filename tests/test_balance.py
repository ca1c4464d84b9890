"""Balance: ISO 21940-11 limits, placement of weighed magnets, mass lists."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from demos import PLATE, design

from layout.balance import (
    DiscBody,
    MassListError,
    WeighedMagnet,
    balance_rotor,
    best_placement,
    correction_for,
    monte_carlo_unbalance,
    nominal_disc_bodies,
    permissible_unbalance_gmm,
    plane_allowances,
    read_masses,
    split_between_discs,
    unbalance_vector,
)


def test_iso_worked_value():
    # ISO 21940-11:2016 (and ISO 1940-1): G6.3, 5 kg rotor at 3000 rpm -> about 100 g·mm.
    assert permissible_unbalance_gmm(6.3, 5.0, 3000) == pytest.approx(100.0, rel=0.005)


def test_limit_scales_with_mass_and_inverse_speed():
    base = permissible_unbalance_gmm(2.5, 3.0, 600)
    assert permissible_unbalance_gmm(2.5, 6.0, 600) == pytest.approx(2 * base)
    assert permissible_unbalance_gmm(2.5, 3.0, 1200) == pytest.approx(base / 2)


def test_plane_allowances_split_inversely_to_distance():
    # ISO 21940-11 allocation to two planes: U_A = U·b/(a+b), U_B = U·a/(a+b).
    a, b = plane_allowances(100.0, 10.0, 30.0)
    assert (a, b) == pytest.approx((75.0, 25.0))
    assert plane_allowances(100.0, 20.0, 20.0) == pytest.approx((50.0, 50.0))


def test_symmetric_disc_has_no_unbalance():
    n = 12
    ang = 2 * np.pi * np.arange(n) / n
    assert abs(unbalance_vector(np.full(n, 42.0), ang, 90.0)) < 1e-9


def test_known_off_centre_mass_gives_m_times_r():
    n = 8
    ang = 2 * np.pi * np.arange(n) / n
    masses = np.full(n, 30.0)
    masses[3] += 2.5  # 2.5 g extra at pocket 4, radius 100 mm -> 250 g·mm at 135°
    u = unbalance_vector(masses, ang, 100.0)
    assert abs(u) == pytest.approx(250.0)
    assert math.degrees(math.atan2(u.imag, u.real)) == pytest.approx(135.0)


def _brute_optimum(m, ang, r, base=0j):
    return min(
        abs(base + unbalance_vector(m[list(p)], ang, r)) for p in itertools.permutations(range(len(m)))
    )


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_placement_reaches_the_optimum_on_small_rings(seed):
    rng = np.random.default_rng(seed)
    n = 7
    m = 50 * (1 + rng.uniform(-0.03, 0.03, n))
    ang = 2 * np.pi * np.arange(n) / n
    perm = best_placement(m, ang, 80.0, base_gmm=5 + 3j)
    got = abs(5 + 3j + unbalance_vector(m[perm], ang, 80.0))
    assert got == pytest.approx(_brute_optimum(m, ang, 80.0, 5 + 3j), abs=1e-9)
    assert sorted(perm) == list(range(n))


@pytest.mark.parametrize("n", [10, 16, 24, 36])
def test_placement_never_worse_than_listed_order(n):
    rng = np.random.default_rng(n)
    m = 60 * (1 + rng.uniform(-0.02, 0.02, n))
    ang = 2 * np.pi * np.arange(n) / n
    perm = best_placement(m, ang, 100.0)
    assert sorted(perm) == list(range(n))
    assert abs(unbalance_vector(m[perm], ang, 100.0)) <= abs(unbalance_vector(m, ang, 100.0)) + 1e-12


def test_split_between_discs_is_a_partition_with_close_totals():
    rng = np.random.default_rng(5)
    m = 60 * (1 + rng.uniform(-0.02, 0.02, 32))
    a, b = split_between_discs(m, 16)
    assert len(a) == len(b) == 16
    assert sorted(np.concatenate([a, b])) == list(range(32))
    assert abs(m[a].sum() - m[b].sum()) < 0.02 * 60


def test_correction_opposite_the_unbalance():
    u = complex(0, 200.0)  # 200 g·mm towards +y
    c = correction_for(u, 50.0, 100.0, tuple(float(k * 30) for k in range(12)))
    assert c.needed
    assert c.ideal_angle_deg == pytest.approx(270.0)
    assert c.angle_deg == pytest.approx(270.0)
    assert c.add_g == pytest.approx(2.0)
    assert c.residual_after_gmm == pytest.approx(0.0, abs=1e-9)
    # Between two positions: the nearest one takes the cancelling component only.
    c2 = correction_for(
        complex(200.0 * math.cos(math.radians(100)), 200 * math.sin(math.radians(100))),
        50.0,
        100.0,
        (0.0, 90.0, 180.0, 270.0),
    )
    assert c2.angle_deg == pytest.approx(270.0)
    assert c2.residual_after_gmm == pytest.approx(200 * math.sin(math.radians(10)), rel=1e-6)


def test_monte_carlo_grows_with_tolerance():
    ang = 2 * np.pi * np.arange(16) / 16
    lo = np.percentile(monte_carlo_unbalance(60.0, 0.5, ang, 100.0), 95)
    hi = np.percentile(monte_carlo_unbalance(60.0, 2.0, ang, 100.0), 95)
    assert hi == pytest.approx(4 * lo, rel=0.15)
    # Uniform ±t on n independent masses: E|U|² = n·(m·r)²·t²/3 (variance of a uniform).
    u = monte_carlo_unbalance(60.0, 1.0, ang, 100.0)
    assert np.mean(u**2) == pytest.approx(16 * (60 * 100 * 0.01) ** 2 / 3, rel=0.1)


GOOD = "id,mass_g\nA1,60.1\nA2,59.8\nA3,60.0\n"


def test_read_masses_good():
    got = read_masses(GOOD, "m.csv", 3)
    assert [m.id for m in got] == ["A1", "A2", "A3"]
    assert got[1].mass_g == pytest.approx(59.8)


@pytest.mark.parametrize(
    ("text", "expected", "words"),
    [
        ("", 3, "empty"),
        ("name,grams\nA1,60\n", 1, "header"),
        ("id,mass_g\nA1,60\nA1,61\nA3,60\n", 3, "twice"),
        ("id,mass_g\nA1,60\nA2,60\n", 3, "rotor takes 3"),
        ("id,mass_g\nA1,60\nA2,-4\nA3,60\n", 3, "positive"),
        ("id,mass_g\nA1,60\nA2,heavy\nA3,60\n", 3, "number"),
        ("id,mass_g\nA1,60\n,60\nA3,60\n", 3, "id is missing"),
        ("id,mass_g\nA1,60,7\nA2,60\nA3,60\n", 3, "two fields"),
        ("id,mass_g\nA1,nan\nA2,60\nA3,60\n", 3, "positive"),
    ],
)
def test_bad_mass_lists_are_one_line(text, expected, words):
    with pytest.raises(MassListError) as err:
        read_masses(text, "m.csv", expected)
    msg = str(err.value)
    assert msg.startswith("m.csv: ") and "\n" not in msg and words in msg


# --- the rotor of a demo ---------------------------------------------------------------------


def test_nominal_rotor_of_perfect_parts_is_balanced():
    d = design("millrace")
    rb = balance_rotor(d, nominal_disc_bodies(d), None)
    assert len(rb.discs) == 2
    for disc in rb.discs:
        assert disc.unbalance_after_gmm < 1e-6
        assert not disc.correction.needed
        assert disc.permissible_gmm == pytest.approx(rb.permissible_gmm / 2)
    # U_per at max_rpm for the whole rotor (ISO 21940-11).
    assert rb.permissible_gmm == pytest.approx(1000 * 6.3 * rb.rotor_mass_kg / (550 * 2 * math.pi / 60))


def test_faces_alternate_and_facing_pockets_are_opposite_faces_up():
    d = design("millrace")
    rb = balance_rotor(d, nominal_disc_bodies(d), None)
    one, two = rb.discs
    faces1 = [a.face for a in one.assignment]
    assert faces1[:4] == ["N", "S", "N", "S"]
    # Facing magnets attract across the gap (N faces S): with both discs lying magnet side
    # up on the bench, the same pocket shows opposite faces.
    assert all(a.face != b.face for a, b in zip(one.assignment, two.assignment, strict=True))


def test_weighed_magnets_are_placed_better_than_listed_and_all_used_once():
    d = design("millrace")
    rng = np.random.default_rng(7)
    masses = [WeighedMagnet(f"M{i + 1}", 60 * (1 + rng.uniform(-0.015, 0.015))) for i in range(32)]
    rb = balance_rotor(d, nominal_disc_bodies(d), masses)
    used = [a.magnet for disc in rb.discs for a in disc.assignment]
    assert sorted(used) == sorted(m.id for m in masses)
    for disc in rb.discs:
        assert disc.unbalance_after_gmm <= disc.unbalance_before_gmm
    # A heavy disc body off centre is compensated by the placement where it can be.
    assert rb.weighed


def test_off_centre_disc_body_shows_as_unbalance_and_gets_a_correction():
    d = design("hilltop", *PLATE)  # one disc
    (body,) = nominal_disc_bodies(d)
    heavy = DiscBody(body.disc, body.mass_kg, (2.0, 0.0), body.z_mm)  # 2 mm off centre
    rb = balance_rotor(d, (heavy,), None, grade="G2.5")
    (disc,) = rb.discs
    assert disc.unbalance_after_gmm == pytest.approx(body.mass_kg * 1000 * 2.0, rel=1e-9)
    assert disc.correction.needed
    # Correction goes opposite the heavy side (the +x axis): near 180°.
    assert abs(disc.correction.ideal_angle_deg - 180.0) < 1e-9


def test_disc_bodies_from_the_solids():
    # OCCT volume of the disc as made (pockets and holes cut) times the material density:
    # a little lighter than the plain annulus of the model, and nearly centred.
    from fab.massprops import disc_bodies

    d = design("pedalbox")
    bodies = disc_bodies(d)
    assert [b.disc for b in bodies] == [1, 2]
    for b in bodies:
        assert 0.85 * d.forces.disc_mass_kg < b.mass_kg < d.forces.disc_mass_kg
        assert abs(complex(*b.com_offset_mm)) < 0.5
    rb = balance_rotor(d, bodies, None)
    # Index marks and dowel holes leave each disc slightly heavy on one side; the report
    # carries that as the unbalance before and after placing identical magnets.
    for disc, body in zip(rb.discs, bodies, strict=True):
        assert disc.unbalance_after_gmm == pytest.approx(
            abs(complex(*body.com_offset_mm)) * body.mass_kg * 1000
        )


# --- a magnet disc and a plain steel disc (hilltop) ------------------------------------------


def test_the_plain_steel_disc_is_checked_with_no_magnets_to_place():
    d = design("hilltop")  # 12 magnets on disc 1, a plain 8 mm steel disc 2
    rb = balance_rotor(d, nominal_disc_bodies(d), None)
    one, two = rb.discs
    assert (one.disc, two.disc) == (1, 2)
    assert len(one.assignment) == 12 and two.assignment == ()
    assert two.clearance_floor_gmm == 0.0 and one.clearance_floor_gmm > 0.0
    # By hand: steel annuli (7.85 g/cm³, common handbook value) 290 mm across (magnets' outer
    # edge 135 mm plus the 10 mm rim) with a 40 mm bore, 10 mm and 8 mm thick, and 12 NdFeB
    # blocks of 50 × 25 × 12 mm at 7.5 g/cm³ (from memory).
    annulus_mm2 = math.pi * (145.0**2 - 20.0**2)
    disc1, disc2 = annulus_mm2 * 10 * 7.85e-6, annulus_mm2 * 8 * 7.85e-6
    magnets = 12 * 50 * 25 * 12 * 7.5e-6
    assert one.mass_kg == pytest.approx(disc1 + magnets, rel=1e-9)
    assert two.mass_kg == pytest.approx(disc2, rel=1e-9)
    assert rb.rotor_mass_kg == pytest.approx(disc1 + disc2 + magnets, rel=1e-9)
    # ISO 21940-11: U_per for the whole rotor at 660 rpm (the demo's max_rpm), split between
    # the two correction planes in inverse proportion to their distance from the discs'
    # centre of mass: disc 1's magnets' mid-plane 6 + 2.5 + 6 mm below the stator's
    # mid-plane, disc 2's mid-plane 6 + 2.5 + 4 mm above it.
    u_per = 1000 * 6.3 * rb.rotor_mass_kg / (660 * 2 * math.pi / 60)
    zc = (disc1 * -14.5 + disc2 * 12.5) / (disc1 + disc2)
    a, b = abs(-14.5 - zc), abs(12.5 - zc)
    assert one.permissible_gmm == pytest.approx(u_per * b / (a + b), rel=1e-9)
    assert two.permissible_gmm == pytest.approx(u_per * a / (a + b), rel=1e-9)
    assert one.unbalance_after_gmm < 1e-6 and two.unbalance_after_gmm < 1e-6


def test_weighed_magnets_all_go_on_the_magnet_disc():
    d = design("hilltop")
    rng = np.random.default_rng(3)
    masses = [WeighedMagnet(f"H{i + 1}", 112.5 * (1 + rng.uniform(-0.01, 0.01))) for i in range(12)]
    rb = balance_rotor(d, nominal_disc_bodies(d), masses)
    one, two = rb.discs
    assert sorted(a.magnet for a in one.assignment) == sorted(m.id for m in masses)
    assert two.assignment == () and two.mass_kg == pytest.approx(d.forces.steel_disc_mass_kg)
    assert one.unbalance_after_gmm <= one.unbalance_before_gmm


def test_an_off_centre_plain_disc_is_corrected_on_its_own_face():
    d = design("hilltop")
    one, two = nominal_disc_bodies(d)
    heavy = DiscBody(2, two.mass_kg, (0.0, 1.0), two.z_mm)  # 1 mm off towards +y (machine)
    rb = balance_rotor(d, (one, heavy), None)
    plain = rb.discs[1]
    assert plain.unbalance_after_gmm == pytest.approx(two.mass_kg * 1000 * 1.0, rel=1e-9)
    assert plain.correction.needed
    # Opposite the heavy side is 270° on the machine; disc 2 is made turned over (mirrored),
    # so on the part as made the correction is marked at 90°.
    assert plain.correction.ideal_angle_deg == pytest.approx(90.0, abs=1e-9)
    # The unbalance is the plain disc's: the magnet disc stays as it was.
    assert rb.discs[0].unbalance_after_gmm < 1e-6


def test_disc_bodies_of_a_magnet_disc_and_a_plain_disc_from_the_solids():
    from fab.massprops import disc_bodies

    d = design("hilltop")
    bodies = disc_bodies(d)
    assert [b.disc for b in bodies] == [1, 2]
    # Holes only (no pockets in steel): a few per cent lighter than the plain annuli.
    assert 0.95 * d.forces.disc_mass_kg < bodies[0].mass_kg < d.forces.disc_mass_kg
    assert 0.95 * d.forces.steel_disc_mass_kg < bodies[1].mass_kg < d.forces.steel_disc_mass_kg
    assert all(abs(complex(*b.com_offset_mm)) < 0.5 for b in bodies)
    rb = balance_rotor(d, bodies, None)
    assert len(rb.discs) == 2 and rb.couple_unbalance_gmm_mm > 0


def _masses_csv(masses) -> str:
    return "id,mass_g\n" + "".join(f"m{k},{m}\n" for k, m in enumerate(masses, 1))


@pytest.mark.parametrize(
    ("scale", "unit"),
    [(1e-3, "kilograms"), (1 / 28.349523125, "ounces"), (1e3, "milligrams"), (10.0, "check the unit")],
)
def test_mass_list_in_another_unit_is_named(scale, unit):
    from layout.balance import MassListError

    masses = [round(94.0 * (1 + 0.002 * k) * scale, 6) for k in range(8)]
    with pytest.raises(MassListError, match=unit):
        read_masses(_masses_csv(masses), "m.csv", 8, nominal_g=94.0)
    assert len(read_masses(_masses_csv([94.0 + 0.1 * k for k in range(8)]), "m.csv", 8, nominal_g=94.0)) == 8


def test_a_magnet_far_off_the_median_is_named():
    from layout.balance import MassListError

    masses = [94.0] * 7 + [89.0]  # 5.3 % light: a chipped magnet
    with pytest.raises(MassListError, match=r"magnet 'm8': 89 g is -5\.3 % off the median 94 g"):
        read_masses(_masses_csv(masses), "m.csv", 8, nominal_g=94.0)


def test_clearance_floor_against_monte_carlo():
    from layout.balance import clearance_floor_gmm

    # Brute force: every magnet displaced uniformly over a disc of radius c (area-uniform).
    rng = np.random.default_rng(7)
    m, c, n, trials = 90.0, 0.3, 16, 40_000
    r = c * np.sqrt(rng.uniform(0, 1, (trials, n)))
    phi = rng.uniform(0, 2 * np.pi, (trials, n))
    u = np.abs((m * r * np.exp(1j * phi)).sum(axis=1))
    assert clearance_floor_gmm(m, c, n) == pytest.approx(np.sqrt(np.mean(u**2)), rel=0.02)


def test_balance_never_promises_less_than_the_clearance_floor():
    d = design("millrace")
    n = d.spec.magnets.count * 2
    nominal = d.forces.magnet_mass_g
    masses = [WeighedMagnet(f"m{k}", nominal * (1 + 0.001 * ((k * 7) % 5 - 2))) for k in range(n)]
    rb = balance_rotor(d, nominal_disc_bodies(d), masses)
    for db in rb.discs:
        assert db.clearance_floor_gmm > 1.0
        assert db.below_floor == (db.unbalance_after_gmm < db.clearance_floor_gmm)
    from fab.report import balance_text

    text = balance_text(rb, "millrace")
    assert "no placement promises less" in text
    if any(db.below_floor for db in rb.discs):
        assert f"<{rb.discs[0].clearance_floor_gmm:.0f}" in text
