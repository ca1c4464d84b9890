"""Disc attraction, steel flux density, hoop stress and magnet pull."""

from __future__ import annotations

import math

import magpylib
import numpy as np
import pytest
from demos import DEMOS, PLATE, design, variant

from layout.design import Design
from layout.forces import STEEL_B_LIMIT_T, STEEL_DISC_NAME, hoop_stress_mpa, magnet_pull_n
from layout.spec import Spec

MU0 = 4e-7 * math.pi  # vacuum permeability, H/m (CODATA, pre-2019 exact value)


def face_area_m2(spec: Spec) -> float:
    mg = spec.magnets
    if mg.shape == "block":
        return mg.length_mm * mg.width_mm * 1e-6
    return math.pi * mg.diameter_mm**2 / 4 * 1e-6


def contact_bound_n(d: Design) -> float:
    """Br^2 A / (2 mu0): Maxwell stress with the face flux density at its largest, Br."""
    return d.geometry.remanence_t**2 * face_area_m2(d.spec) / (2 * MU0)


# --- hoop stress -------------------------------------------------------------------------


def test_hoop_stress_hand_worked_case():
    # Timoshenko & Goodier / Roark, annular disc at the bore:
    # sigma = (3+nu)/4 rho w^2 [Ro^2 + (1-nu)/(3+nu) Ri^2].
    # Steel rho = 7850 kg/m3, nu = 0.29, 3000 rpm (w^2 = 98696 s^-2), Ro = 0.1 m, Ri = 0.01 m:
    # 0.8225 * 7850 * 98696 * (0.01 + 0.2158 * 0.0001) = 6.386 MPa (hand computed).
    omega = 2 * math.pi * 3000 / 60
    assert hoop_stress_mpa(7850.0, 0.29, omega, 0.1, 0.01) == pytest.approx(6.386, abs=0.001)


def test_hoop_stress_limits():
    rho, nu, omega, r = 2700.0, 0.33, 400.0, 0.2
    # Timoshenko & Goodier: a small central hole doubles the centre stress of a solid disc,
    # (3+nu)/8 rho w^2 R^2.
    solid_centre = (3 + nu) / 8 * rho * omega**2 * r**2 / 1e6
    assert hoop_stress_mpa(rho, nu, omega, r, 1e-6) == pytest.approx(2 * solid_centre, rel=1e-6)
    # Thin rotating ring: sigma = rho v^2 = rho w^2 R^2 (Roark, thin ring; from memory).
    ring = rho * omega**2 * r**2 / 1e6
    assert hoop_stress_mpa(rho, nu, omega, r, r * (1 - 1e-9)) == pytest.approx(ring, rel=1e-6)


def test_hoop_stress_scales_with_density_and_speed_squared():
    base = hoop_stress_mpa(1240.0, 0.36, 300.0, 0.15, 0.02)
    assert hoop_stress_mpa(2480.0, 0.36, 300.0, 0.15, 0.02) == pytest.approx(2 * base, rel=1e-12)
    assert hoop_stress_mpa(1240.0, 0.36, 600.0, 0.15, 0.02) == pytest.approx(4 * base, rel=1e-12)


def test_magnet_mass_by_hand():
    # Sintered NdFeB 7.5 g/cm3 (from memory): 40 x 20 x 10 mm = 8 cm3 -> 60 g;
    # disc 30 mm x 8 mm = pi * 1.5^2 * 0.8 cm3 = 5.655 cm3 -> 42.41 g.
    assert design("millrace").forces.magnet_mass_g == pytest.approx(60.0, rel=1e-9)
    assert design("pedalbox").forces.magnet_mass_g == pytest.approx(42.41, abs=0.01)


def test_design_hoop_stress_is_disc_plus_magnet_rim_load_by_hand():
    d = design("millrace")
    # Steel disc (7.85 g/cm3, nu = 0.29, common handbook values), outer radius = magnets'
    # outer edge 105 + 20 mm plus a 10 mm rim = 135 mm, bore 35 mm, 550 rpm.
    omega = 2 * math.pi * 550 / 60
    disc = (3 + 0.29) / 4 * 7850 * omega**2 * (0.135**2 + 0.71 / 3.29 * 0.0175**2) / 1e6
    # Rim load of 16 magnets of 60 g at 105 mm carried as a thin ring's tension
    # T = sum(m w^2 r) / (2 pi) by the 8 mm x (135 - 17.5) mm radial section.
    tension = 16 * 0.060 * omega**2 * 0.105 / (2 * math.pi)
    rim = tension / (0.008 * (0.135 - 0.0175)) / 1e6
    assert d.forces.disc_outer_radius_mm == pytest.approx(135.0)
    assert d.forces.hoop_stress_mpa == pytest.approx(disc + rim, rel=1e-9)
    assert d.forces.hoop_safety_factor == pytest.approx(235.0 / (disc + rim), rel=1e-9)


def test_design_hoop_stress_scales_with_max_rpm_squared():
    base = design("millrace").forces.hoop_stress_mpa
    fast = design("millrace", ("target.max_rpm", 1100.0)).forces.hoop_stress_mpa
    assert fast == pytest.approx(4 * base, rel=1e-12)


# --- axial attraction --------------------------------------------------------------------


@pytest.mark.parametrize("name", DEMOS)
def test_discs_and_steel_stator_attract(name):
    assert design(name).forces.axial_force_n > 0


def test_one_disc_coreless_has_no_axial_pull():
    d = design("millrace", ("rotor.topology", "one_disc_coreless"))
    assert d.forces.axial_force_n == 0.0
    assert not d.forces.jacking_screws
    codes = {w.code for w in d.warnings}
    assert not codes & {"rotor.attraction", "rotor.jacking_screws"}


@pytest.mark.parametrize(("name", "near"), [("millrace", 1.0), ("hilltop", 1.5)])
def test_attraction_grows_as_the_running_clearance_shrinks(name, near):
    far = design(name).forces.axial_force_n
    close = design(name, ("rotor.running_clearance_mm", near)).forces.axial_force_n
    assert close > far > 0


@pytest.mark.parametrize("name", DEMOS)
def test_attraction_per_pole_below_the_contact_bound(name):
    # Maxwell stress B^2/(2 mu0): the normal flux density cannot exceed Br at the magnet
    # face, so one pole's attraction across a gap stays below Br^2 A_magnet / (2 mu0).
    # A sanity bound (common practice), far from tight with a gap of several mm.
    d = design(name)
    per_pole = d.forces.axial_force_n / d.spec.magnets.count
    assert 0 < per_pole < contact_bound_n(d)


# --- one magnet onto steel ---------------------------------------------------------------


def centre_flux_density_in_contact(spec: Spec, br: float) -> float:
    """Bz at the centre of the contact face of a magnet flat on thick steel.

    Magnet plus its image is one magnet 2h thick in free space; the contact face is its
    mid-plane. Each pole face, a sheet of charge Br/mu0 at distance h, subtends a solid
    angle Omega and lowers Bz by Br Omega / (4 pi) (Furlani 2001, the single-face terms of
    his on-axis block and disc formulas), so Bz = Br (1 - Omega / (2 pi)).
    """
    mg, h = spec.magnets, spec.magnets.thickness_mm
    if mg.shape == "block":
        a, b = mg.length_mm, mg.width_mm
        return br * (1 - 2 / math.pi * math.atan(a * b / (2 * h * math.sqrt(4 * h * h + a * a + b * b))))
    r = mg.diameter_mm / 2
    return br * h / math.sqrt(r * r + h * h)


@pytest.mark.parametrize("name", DEMOS)
def test_magnet_pull_between_bounds(name):
    d = design(name)
    pull = magnet_pull_n(d.spec)
    assert pull == d.forces.magnet_pull_n
    bound = contact_bound_n(d)
    # Upper: B at the face never exceeds Br. Lower (from memory): a magnet of these
    # proportions on thick steel pulls a sizeable fraction of that bound, well over a quarter.
    assert 0.25 * bound < pull < bound
    # Sharper lower bound: the face solid angle is largest seen from the centre (symmetric
    # convex face), so Bz >= its centre value everywhere on the contact face.
    bc = centre_flux_density_in_contact(d.spec, d.geometry.remanence_t)
    assert pull > bc**2 * face_area_m2(d.spec) / (2 * MU0)


def test_magnet_pull_scales_with_remanence_squared():
    # B is proportional to Br everywhere for a linear (rigid) magnet, so F goes as Br^2.
    weak = variant("millrace", ("magnets.grade", None), ("magnets.remanence_t", 0.65))
    strong = variant("millrace", ("magnets.grade", None), ("magnets.remanence_t", 1.30))
    assert magnet_pull_n(strong) == pytest.approx(4 * magnet_pull_n(weak), rel=1e-9)


# --- steel flux density ------------------------------------------------------------------


def test_steel_flux_density_falls_as_one_over_thickness():
    # The field does not depend on the plate's thickness (images in its surface), so the
    # per-pole flux is fixed and B = flux / (2 t w) exactly.
    base = design("millrace").forces
    for t in (4.0, 16.0):
        f = design("millrace", ("rotor.disc_thickness_mm", t)).forces
        assert f.steel_peak_b_t * t == pytest.approx(base.steel_peak_b_t * 8.0, rel=1e-9)
        assert f.steel_needed_mm == pytest.approx(base.steel_needed_mm, rel=1e-9)
    # The advice is rounded up to the next 0.1 mm, so it always cures the saturation.
    exact = base.steel_peak_b_t * 8.0 / STEEL_B_LIMIT_T
    assert exact <= base.steel_needed_mm < exact + 0.1 + 1e-9


def test_thin_plate_warns_of_saturation_and_the_needed_thickness_cures_it():
    thin = design("millrace", ("rotor.disc_thickness_mm", 3.0))
    # Common practice: keep mild steel under about 1.5 T.
    assert thin.forces.steel_peak_b_t > 1.5
    warn = [w for w in thin.warnings if w.code == "steel.saturation"]
    assert len(warn) == 1 and warn[0].severity == "warning"
    assert "rotor disc" in warn[0].message
    need = thin.forces.steel_needed_mm
    cured = design("millrace", ("rotor.disc_thickness_mm", need))
    assert cured.forces.steel_peak_b_t <= 1.5 + 1e-9
    assert "steel.saturation" not in {w.code for w in cured.warnings}


def test_thickness_the_advice_names_for_saturation_cures_it():
    from layout.advice import suggest

    thin = design("millrace", ("rotor.disc_thickness_mm", 3.0))
    offered = [s for s in suggest(thin) if s.code == "steel.saturation"]
    assert offered and all(s.key == "rotor.disc_thickness_mm" for s in offered)
    for s in offered:
        cured = design("millrace", ("rotor.disc_thickness_mm", s.to))
        assert "steel.saturation" not in {w.code for w in cured.warnings}


def test_thin_stator_plate_is_the_plate_that_saturates():
    d = design("hilltop", *PLATE, ("rotor.stator_plate_thickness_mm", 2.0))
    assert d.forces.steel_plate == "stator plate"
    assert d.forces.steel_peak_b_t > 1.5
    assert any(w.code == "steel.saturation" and "stator plate" in w.message for w in d.warnings)


# --- a magnet disc facing a plain steel disc (hilltop) ------------------------------------------


def test_attraction_of_the_plain_disc_is_the_maxwell_stress_on_its_face():
    # With a non-magnetic magnet disc the plain disc's face is the only steel, its image exact
    # and the field there purely normal: the pull is ∫ Bz²/(2μ0) over the whole face (Maxwell
    # stress; Furlani 2001). Brute force here with magpylib's magnet objects, magnets and
    # their mirror images placed from the design's figures, over a band reaching 100 mm past
    # the magnets on a 0.5 mm grid (one pole pitch, times the magnet count by symmetry).
    from test_field import mirrored_rotor

    d = design("hilltop", ("rotor.disc_material", "aluminium"))
    spec = d.spec
    face = spec.stator.thickness_mm / 2 + spec.rotor.running_clearance_mm
    r0, r1, nr, nt = 20.0, 250.0, 460, 120
    dr, pole = (r1 - r0) / nr, 2 * math.pi / spec.magnets.count
    dt = pole / nt
    rr, tt = np.meshgrid(
        r0 + dr * (np.arange(nr) + 0.5), -pole / 2 + dt * (np.arange(nt) + 0.5), indexing="ij"
    )
    pts = np.stack([rr * np.cos(tt), rr * np.sin(tt), np.full(rr.shape, face)], axis=-1).reshape(-1, 3)
    b = magpylib.getB(mirrored_rotor(spec), pts * 1e-3, sumup=True)
    assert np.abs(b[:, :2]).max() < 1e-9 * np.abs(b[:, 2]).max()  # normal to the steel
    brute = float((b[:, 2] ** 2 * (rr * dr * dt).ravel()).sum() * 1e-6 / (2 * MU0) * spec.magnets.count)
    # The model integrates over the magnets' band only: the fringe beyond it is under 1 %.
    assert d.forces.axial_force_n == pytest.approx(brute, rel=0.01)
    assert d.forces.axial_force_n < brute


def test_attraction_of_the_plain_disc_is_that_of_the_mirror_two_disc_machine():
    # The mid-plane of two equal discs carries no tangential field, so a plain steel disc
    # there pulls exactly as the second magnet disc would (method of images): the two-disc
    # machine with stator thickness 2(s + g) and the same running clearance (limiting case).
    s, g = 12.0, 2.5  # hilltop's stator and running clearance
    d = design("hilltop")
    mirror = design(
        "hilltop",
        ("rotor.topology", "two_discs"),
        ("rotor.steel_disc_thickness_mm", None),
        ("stator.thickness_mm", 2 * (s + g)),
    )
    assert d.forces.axial_force_n == pytest.approx(mirror.forces.axial_force_n, rel=1e-3)
    # Closer steel pulls harder than the same discs farther apart, and a stationary plate on
    # the stator's face (nearer the magnets by the running clearance) harder still.
    plate = design("hilltop", *PLATE)
    assert plate.forces.axial_force_n > d.forces.axial_force_n > 0


def test_the_plain_disc_carries_less_flux_than_the_disc_behind_the_magnets():
    # The disc behind the magnets carries every line of their flux, the leakage between
    # neighbours included; the plain disc only what crosses the stator. Both thicknesses
    # enter as 1/t (the field does not depend on them: images in their surfaces).
    d = design("hilltop")
    f = d.forces
    assert f.steel_plate == "rotor disc" and f.steel_peak_b_t < STEEL_B_LIMIT_T
    thin = design("hilltop", ("rotor.steel_disc_thickness_mm", 2.0))
    assert thin.forces.steel_plate == STEEL_DISC_NAME
    half = design("hilltop", ("rotor.steel_disc_thickness_mm", 1.0)).forces.steel_peak_b_t
    assert half == pytest.approx(2 * thin.forces.steel_peak_b_t, rel=1e-9)
    # hilltop's own 8 mm plain disc (the same flux per pole over four times the section) runs
    # well below the 10 mm disc behind the magnets.
    assert thin.forces.steel_peak_b_t * 2.0 / 8.0 < 0.8 * f.steel_peak_b_t


def test_a_thin_plain_disc_saturates_and_the_warning_names_it_and_its_key():
    d = design("hilltop", ("rotor.steel_disc_thickness_mm", 2.0))
    # Common practice: keep mild steel under about 1.5 T.
    assert d.forces.steel_peak_b_t > 1.5
    warn = next(w for w in d.warnings if w.code == "steel.saturation")
    assert "plain disc" in warn.message and "rotor.steel_disc_thickness_mm" in warn.message
    cured = design("hilltop", ("rotor.steel_disc_thickness_mm", d.forces.steel_needed_mm))
    assert "steel.saturation" not in {w.code for w in cured.warnings}


def test_plain_disc_hoop_stress_mass_by_hand():
    d = design("hilltop")
    f = d.forces
    # Steel (7.85 g/cm³, ν = 0.29, yield 235 MPa; common handbook values), outer radius the
    # magnets' edge 135 mm plus the 10 mm rim, bore 20 mm, 660 rpm, no magnets: Timoshenko &
    # Goodier, σ = (3+ν)/4·ρω²·[R_o² + (1−ν)/(3+ν)·R_i²].
    omega = 2 * math.pi * 660 / 60
    sigma = (3 + 0.29) / 4 * 7850 * omega**2 * (0.145**2 + 0.71 / 3.29 * 0.02**2) / 1e6
    assert f.steel_disc_hoop_stress_mpa == pytest.approx(sigma, rel=1e-9)
    assert f.steel_disc_hoop_safety_factor == pytest.approx(235.0 / sigma, rel=1e-9)
    # The magnet disc, of the same steel, carries the magnets' rim load on top.
    assert f.hoop_stress_mpa > sigma
    assert f.steel_disc_mass_kg == pytest.approx(math.pi * (145**2 - 20**2) * 8 * 7.85e-6, rel=1e-9)
    # Left out, the plain disc is as thick as the magnet disc.
    same = design("hilltop", ("rotor.steel_disc_thickness_mm", None)).forces
    assert same.steel_disc_mass_kg == pytest.approx(f.disc_mass_kg, rel=1e-9)
    for other in ("millrace", "pedalbox"):
        assert design(other).forces.steel_disc_mass_kg is None


def test_disc_bending_agrees_with_a_separate_plate_solution():
    # The annular plate clamped at the hub and free at the rim under a ring load, solved
    # here as the axisymmetric Kirchhoff plate equation D∇⁴w = q with scipy's solve_bvp (a
    # narrow Gaussian band of pressure for the ring), apart from the closed-form solution.
    from scipy.integrate import solve_bvp

    from layout.forces import ring_loaded_disc_deflection_m

    f, r0, b, a, e, nu, t = 500.0, 0.10, 0.03, 0.13, 3.5e9, 0.36, 0.006
    d = e * t**3 / (12 * (1 - nu**2))
    sig = 0.002
    norm = f / (2 * math.pi * r0 * sig * math.sqrt(2 * math.pi))

    def rhs(r, y):
        w, th, lap, s = y
        q = norm * np.exp(-0.5 * ((r - r0) / sig) ** 2)
        return np.vstack([th, lap - th / r, s, q / d - s / r])

    def bc(ya, yb):
        return np.array([ya[0], ya[1], yb[2] - yb[1] / a + nu * yb[1] / a, yb[3]])

    r = np.linspace(b, a, 2001)
    sol = solve_bvp(rhs, bc, r, np.zeros((4, r.size)), tol=1e-8, max_nodes=200000)
    assert sol.status == 0
    assert ring_loaded_disc_deflection_m(f, r0, b, a, e, nu, t) == pytest.approx(
        abs(sol.sol(r0)[0]), rel=2e-3
    )
    # Thin-plate scaling: w ∝ 1/(E t³).
    thick = ring_loaded_disc_deflection_m(f, r0, b, a, e, nu, 2 * t)
    assert thick == pytest.approx(ring_loaded_disc_deflection_m(f, r0, b, a, e, nu, t) / 8, rel=1e-9)


def test_what_holds_a_magnet_by_hand():
    # Pull out: the attraction shared among a disc's magnets; fling: m ω² r at max_rpm; the
    # bond over the magnet's face carries the pull on a non-steel disc.
    d = design("millrace", ("rotor.disc_material", "aluminium"), ("rotor.magnet_bond_mpa", 2.0))
    f, mg = d.forces, d.spec.magnets
    assert f.magnet_pull_out_n == pytest.approx(f.axial_force_n / mg.count)
    w = d.spec.target.max_rpm * 2 * math.pi / 60
    assert f.magnet_fling_n == pytest.approx(f.magnet_mass_g / 1000 * w**2 * mg.pitch_radius_mm / 1000)
    assert f.bond_safety_factor == pytest.approx(2.0 * mg.length_mm * mg.width_mm / f.magnet_pull_out_n)


def test_a_saturated_disc_limits_the_emf_to_what_its_section_carries():
    # Flux-limited: past B_s the plate carries B_s over its section, so the EMF per turn is
    # B_s/B of the ideal-steel figure; an unsaturated plate changes nothing.
    from layout.materials import STEEL_SATURATION_T

    full, thin = design("millrace"), design("millrace", ("rotor.disc_thickness_mm", 3.0))
    assert full.prediction.saturation_derate == 1.0
    ratio = STEEL_SATURATION_T / thin.forces.steel_peak_b_t
    assert thin.prediction.saturation_derate == pytest.approx(ratio)
    per_turn = lambda d: d.prediction.open_circuit_line_rms_v / d.prediction.turns_per_coil  # noqa: E731
    ideal = design("millrace", ("rotor.disc_thickness_mm", 8.0))  # same field where unsaturated
    assert per_turn(thin) == pytest.approx(per_turn(ideal) * ratio, rel=0.05)
    assert "limits the flux" in next(w.message for w in thin.warnings if w.code == "steel.saturation")
