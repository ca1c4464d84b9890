"""Forces and stresses: disc attraction, steel flux density, hoop stress, magnet pull."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from layout.field import Sources, bz
from layout.geometry import Geometry
from layout.materials import DISC_MATERIALS, MAGNET_GRADES, NDFEB_DENSITY_G_CM3
from layout.rotor import PLAIN_DISC, disc_material, disc_thickness_mm, hub_bolt_radius_mm
from layout.spec import Spec, magnet_radial_extent_mm, magnet_tangential_extent_mm

MU0 = 4e-7 * math.pi
G = 9.80665
STEEL_B_LIMIT_T = 1.5  # mild steel stays well below saturation (common practice)
JACKING_FORCE_N = 150.0  # above ~15 kgf the discs cannot be lowered together by hand safely (common practice)
HOOP_SAFETY_FACTOR = 3.0  # against yield or tensile strength for a spinning disc (common practice)
# How the plates' flux density and its warning name the plain disc: with the key that sets it.
STEEL_DISC_NAME = "plain disc (rotor.steel_disc_thickness_mm)"


@dataclass(frozen=True)
class Forces:
    axial_force_n: float  # attraction between the discs, or disc and stator plate
    jacking_screws: bool
    steel_peak_b_t: float | None  # largest mean flux density in a steel plate
    steel_needed_mm: float | None  # plate thickness for STEEL_B_LIMIT_T
    steel_plate: str | None  # which plate that is
    disc_outer_radius_mm: float
    disc_mass_kg: float  # one magnet disc without magnets
    magnet_mass_g: float  # one magnet
    hoop_stress_mpa: float  # at the bore, at max_rpm, disc plus magnet load
    hoop_safety_factor: float
    magnet_pull_n: float  # one magnet pulled onto steel at contact
    airgap_peak_bz_t: float
    # The plain steel disc of one_disc_steel_disc (no magnets on it); None for the others.
    steel_disc_mass_kg: float | None = None
    steel_disc_hoop_stress_mpa: float | None = None  # at the bore, at max_rpm, the disc alone
    steel_disc_hoop_safety_factor: float | None = None
    # A magnet disc bending under the attraction, at the magnets (mm); None if nothing pulls.
    disc_deflection_mm: float | None = None
    # What holds each magnet in its place: pull out of it and outward fling (N), and the bond's
    # safety factor on the one it carries (None where the steel behind holds it axially).
    magnet_pull_out_n: float = 0.0
    magnet_fling_n: float = 0.0
    bond_safety_factor: float | None = None


def disc_outer_radius_mm(spec: Spec) -> float:
    """The design's, or the magnets' outer edge plus a 10 mm rim (our default)."""
    if spec.rotor.disc_outer_diameter_mm is not None:
        return spec.rotor.disc_outer_diameter_mm / 2
    return spec.magnets.pitch_radius_mm + magnet_radial_extent_mm(spec.magnets) / 2 + 10.0


def magnet_mass_g(spec: Spec) -> float:
    """Mass of one magnet (g): its volume (mm³) times the grade's density, NdFeB if none is named."""
    mg = spec.magnets
    if mg.shape == "block":
        vol_mm3 = mg.length_mm * mg.width_mm * mg.thickness_mm
    else:
        vol_mm3 = math.pi * mg.diameter_mm**2 / 4 * mg.thickness_mm
    density = MAGNET_GRADES[mg.grade].density_g_cm3 if mg.grade else NDFEB_DENSITY_G_CM3
    return vol_mm3 * 1e-3 * density


def pole_band_mm(spec: Spec) -> tuple[float, float]:
    """Inner and outer radius (mm) of the band where the magnets' field reaches a steel face:
    their radial extent, plus twice the running clearance and 5 mm of fringe each side."""
    mg = spec.magnets
    half = magnet_radial_extent_mm(mg) / 2 + 2 * spec.rotor.running_clearance_mm + 5.0
    return max(mg.pitch_radius_mm - half, 1e-3), mg.pitch_radius_mm + half


def _pole_grid(spec: Spec, z: float, nr: int = 16, nt: int = 10):
    """Cell centres and areas (mm²) over one pole pitch, across the magnets' radial band."""
    mg = spec.magnets
    r0, r1 = pole_band_mm(spec)
    dr = (r1 - r0) / nr
    r = r0 + dr * (np.arange(nr) + 0.5)
    pole = 2 * math.pi / mg.count
    dt = pole / nt
    t = -pole / 2 + dt * (np.arange(nt) + 0.5)
    rr, tt = np.meshgrid(r, t, indexing="ij")
    pts = np.stack([rr * np.cos(tt), rr * np.sin(tt), np.full(rr.shape, z)], axis=-1).reshape(-1, 3)
    return pts, (rr * dr * dt).ravel()


def hoop_stress_mpa(density_kg_m3, poisson, omega, r_out_m, r_in_m) -> float:
    """Largest hoop stress of a spinning annular disc, at the bore.

    σ = (3+ν)/4·ρω²·[R_o² + (1−ν)/(3+ν)·R_i²] (Timoshenko & Goodier, Theory of Elasticity;
    Roark's Formulas for Stress and Strain).
    """
    nu = poisson
    s = (3 + nu) / 4 * density_kg_m3 * omega**2 * (r_out_m**2 + (1 - nu) / (3 + nu) * r_in_m**2)
    return s / 1e6


def compute_forces(spec: Spec, geo: Geometry, sources: Sources, airgap_peak_bz_t: float) -> Forces:
    """Disc attraction (N), steel flux density (T), hoop stress (MPa) and magnet pull (N).

    Attraction: Maxwell stress B²/(2μ0) integrated over one pole pitch on a plane where the
    tangential field vanishes (the mid-plane of two equal discs, a steel face), times the
    magnet count (e.g. Furlani, Permanent Magnet and Electromechanical Devices, 2001). Steel
    plates: the flux of one pole, from Bz at the plate face, splits both ways through the
    plate's section (common practice), against `STEEL_B_LIMIT_T`. Hoop stress of the
    spinning disc at max_rpm: Timoshenko & Goodier, Theory of Elasticity, with the magnets as
    a rim load; a plain steel disc (`one_disc_steel_disc`) carries no rim load. Coordinates in
    mm; `sources` as built by `layout.field`.
    """
    ro, mg = spec.rotor, spec.magnets
    plain = ro.topology == "one_disc_steel_disc"
    # Maxwell stress on a plane where the tangential field vanishes gives the whole
    # attraction: the mid-plane of two equal discs, or the face of the steel plate or of the
    # plain steel disc across the stator.
    if ro.topology == "two_discs":
        plane = 0.0
    elif ro.topology == "one_disc_steel_stator" or plain:
        plane = geo.iron_planes_z_mm[-1] - 1e-3
    else:
        plane = None
    force = 0.0
    if plane is not None:
        pts, area = _pole_grid(spec, plane)
        b = bz(sources, pts)
        force = float((b**2 * area).sum() * 1e-6 / (2 * MU0) * mg.count)
    # Flux per pole splits both ways into the plate behind it.
    plates = []
    if DISC_MATERIALS[ro.disc_material].magnetic:
        back = geo.iron_planes_z_mm[0] + 1e-3
        plates.append(("rotor disc", back, ro.disc_thickness_mm))
    if ro.topology == "one_disc_steel_stator":
        plates.append(("stator plate", geo.iron_planes_z_mm[-1] - 1e-3, ro.stator_plate_thickness_mm))
    if plain:
        plates.append((STEEL_DISC_NAME, geo.iron_planes_z_mm[-1] - 1e-3, disc_thickness_mm(spec, PLAIN_DISC)))
    steel_b = steel_need = None
    steel_name = None
    width = magnet_radial_extent_mm(mg)
    for name, z, thick in plates:
        pts, area = _pole_grid(spec, z)
        b = bz(sources, pts)
        flux = float(np.abs((b * area).sum())) * 1e-6  # Wb per pole
        b_plate = flux / (2 * thick * 1e-3 * width * 1e-3)
        if steel_b is None or b_plate > steel_b:
            steel_b, steel_name = b_plate, name
            steel_need = math.ceil(flux / (2 * STEEL_B_LIMIT_T * width * 1e-3) * 1e4) / 10  # up to 0.1 mm
    mat = DISC_MATERIALS[ro.disc_material]
    r_out = disc_outer_radius_mm(spec)
    r_in = ro.bore_diameter_mm / 2
    omega = spec.target.max_rpm * 2 * math.pi / 60

    def bare(m, thick_mm):
        """(mass kg, hoop stress MPa at the bore) of a plain annulus of this disc's size."""
        mass = math.pi * (r_out**2 - r_in**2) * thick_mm * 1e-9 * m.density_g_cm3 * 1000
        return mass, hoop_stress_mpa(m.density_g_cm3 * 1000, m.poisson, omega, r_out * 1e-3, r_in * 1e-3)

    disc_mass, sigma = bare(mat, ro.disc_thickness_mm)
    m_mag = magnet_mass_g(spec)
    # Magnets as a rim load: their total outward pull carried as hoop force by the disc's
    # radial section (thin-ring approximation, conservative for a solid disc).
    ring_force = mg.count * m_mag * 1e-3 * omega**2 * mg.pitch_radius_mm * 1e-3 / (2 * math.pi)
    sigma += ring_force / (ro.disc_thickness_mm * (r_out - r_in) * 1e-6) / 1e6
    safety = mat.strength_mpa / sigma if sigma > 0 else math.inf
    steel_disc = {}
    if plain:
        steel = disc_material(spec, PLAIN_DISC)
        mass2, sigma2 = bare(steel, disc_thickness_mm(spec, PLAIN_DISC))
        steel_disc = {
            "steel_disc_mass_kg": mass2,
            "steel_disc_hoop_stress_mpa": sigma2,
            "steel_disc_hoop_safety_factor": steel.strength_mpa / sigma2 if sigma2 > 0 else math.inf,
        }
    holding = _magnet_holding(spec, force, m_mag, omega)
    # The magnet disc bends under the attraction, clamped at the hub, free at its rim.
    deflection = None
    if force > 0:
        deflection = 1e3 * ring_loaded_disc_deflection_m(
            force,
            mg.pitch_radius_mm * 1e-3,
            hub_bolt_radius_mm(spec) * 1e-3,
            r_out * 1e-3,
            mat.modulus_gpa * 1e9,
            mat.poisson,
            ro.disc_thickness_mm * 1e-3,
        )
    return Forces(
        disc_deflection_mm=deflection,
        **holding,
        axial_force_n=force,
        jacking_screws=force > JACKING_FORCE_N,
        steel_peak_b_t=steel_b,
        steel_needed_mm=steel_need,
        steel_plate=steel_name,
        disc_outer_radius_mm=r_out,
        disc_mass_kg=disc_mass,
        magnet_mass_g=m_mag,
        hoop_stress_mpa=sigma,
        hoop_safety_factor=safety,
        magnet_pull_n=magnet_pull_n(spec),
        airgap_peak_bz_t=airgap_peak_bz_t,
        **steel_disc,
    )


def magnet_bond_mpa(spec: Spec) -> float:
    """The bond holding a magnet: the design's, or about 3 MPa for a two-part epoxy on printed
    plastic and 10 MPa on metal, plywood or acrylic (lap-shear figures of common epoxies
    with a margin for a builder's joint; from memory)."""
    if spec.rotor.magnet_bond_mpa is not None:
        return spec.rotor.magnet_bond_mpa
    return 3.0 if DISC_MATERIALS[spec.rotor.disc_material].printed else 10.0


def _magnet_holding(spec: Spec, force_n: float, magnet_g: float, omega: float) -> dict:
    """Each magnet's pull out of its place (the attraction shared among a disc's magnets) and
    its outward fling m·ω²·r at max_rpm. On a steel disc the magnet's own pull onto the steel
    holds it axially and the bond carries the fling; in the pocket of any other disc the
    pocket's wall takes the fling and the bond over the magnet's face carries the pull."""
    mg = spec.magnets
    pull = force_n / mg.count
    fling = magnet_g * 1e-3 * omega**2 * mg.pitch_radius_mm * 1e-3
    area = magnet_radial_extent_mm(mg) * magnet_tangential_extent_mm(mg)
    if mg.shape == "disc":
        area *= math.pi / 4
    carried = fling if DISC_MATERIALS[spec.rotor.disc_material].magnetic else pull
    safety = magnet_bond_mpa(spec) * area / carried if carried > 0 else math.inf
    return {"magnet_pull_out_n": pull, "magnet_fling_n": fling, "bond_safety_factor": safety}


def ring_loaded_disc_deflection_m(
    force_n: float,
    r_load_m: float,
    r_clamp_m: float,
    r_out_m: float,
    modulus_pa: float,
    poisson: float,
    t_m: float,
) -> float:
    """Deflection (m) at the load circle of an annular plate clamped at its inner radius, free
    at its outer edge, under a ring load `force_n` at `r_load_m`.

    Kirchhoff plate theory, axisymmetric: w = A + B r² + C ln r + E r² ln r in each region
    (Timoshenko & Woinowsky-Krieger, Theory of Plates and Shells, 2nd ed., 1959, §§15–18;
    the same solutions behind Roark's Formulas for Stress and Strain, table of annular
    plates, case "outer edge free, inner edge fixed, annular line load"). The shear
    Q = −4DE/r vanishes outside the load (free edge) and jumps by F/(2πr₀) across it; w,
    w′ and the moment are continuous there; w = w′ = 0 at the clamp, M_r = 0 at the edge.
    """
    d = modulus_pa * t_m**3 / (12 * (1 - poisson**2))
    b, r0, a = r_clamp_m, r_load_m, r_out_m
    e1 = force_n / (8 * math.pi * d)  # inside the load circle; E = 0 outside it

    def basis(r):  # w, w', w'' of A, B, C (the E term is added separately)
        return (
            np.array([1.0, r * r, math.log(r)]),
            np.array([0.0, 2 * r, 1 / r]),
            np.array([0.0, 2.0, -1 / r**2]),
        )

    def e_term(r):
        return r * r * math.log(r), 2 * r * math.log(r) + r, 2 * math.log(r) + 3

    rows, rhs = [], []
    w, w1, _ = basis(b)
    ew, ew1, _ = e_term(b)
    rows += [np.r_[w, 0, 0, 0], np.r_[w1, 0, 0, 0]]
    rhs += [-e1 * ew, -e1 * ew1]
    for k in range(3):  # w, w', w'' continuous at r0
        f = basis(r0)[k]
        rows.append(np.r_[f, -f])
        rhs.append(-e1 * e_term(r0)[k])
    _, w1a, w2a = basis(a)
    rows.append(np.r_[0, 0, 0, w2a + poisson * w1a / a])  # M_r = 0 at the free edge
    rhs.append(0.0)
    coef = np.linalg.solve(np.array(rows), np.array(rhs))
    w0 = basis(r0)[0]
    return abs(float(coef[3:] @ w0))


def magnet_pull_n(spec: Spec) -> float:
    """One magnet pulled flat onto steel: Maxwell stress B²/(2μ0) over its face at contact.

    In contact, the magnet and its image in the steel act as one magnet twice as thick;
    the contact face is its mid-plane, where the normal flux density crosses into the steel.
    """
    from layout.geometry import remanence_t

    mg = spec.magnets
    a, b, h = magnet_radial_extent_mm(mg), magnet_tangential_extent_mm(mg), mg.thickness_mm
    n = 10
    xs = (np.arange(n) + 0.5) / n - 0.5
    xx, yy = np.meshgrid(xs * a, xs * b, indexing="ij")
    inside = np.ones(xx.shape, bool) if mg.shape == "block" else (xx / a) ** 2 + (yy / b) ** 2 <= 0.25
    pts = np.stack([xx[inside], yy[inside], np.zeros(inside.sum())], axis=-1)
    src = Sources(
        block=np.array([mg.shape == "block"]),
        center_mm=np.array([[0.0, 0.0, 0.0]]),
        dimension_mm=np.array([[a, b, 2 * h] if mg.shape == "block" else [a, 2 * h, 0.0]]),
        rotation_rad=np.zeros(1),
        polarization_t=np.array([remanence_t(spec)]),
        image_order=0,
    )
    field = bz(src, pts)
    cell = (a / n) * (b / n) * 1e-6
    return float((field**2).sum() * cell / (2 * MU0))
