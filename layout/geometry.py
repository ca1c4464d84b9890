"""The machine as resolved from the spec: magnets in space, iron planes, coil outlines.

Millimetres throughout (the CAD convention): the same numbers feed the field model, the
JSON `geometry` block and, later, the solids and drawings, so they can never disagree.

Axes: z along the shaft. The stator's mid-plane is z = 0; with one magnet disc that disc
is below (z < 0), and a plain steel disc, where there is one, above. Coil position k (from 1) sits at
mechanical angle 2π(k−1)/Q; magnet j (from 1) at 2π(j−1)/P, magnet 1 magnetised +z.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from layout.materials import DISC_MATERIALS, MAGNET_GRADES, MagnetGrade
from layout.spec import Spec, magnet_radial_extent_mm, magnet_tangential_extent_mm

MIN_LEG_WIDTH_MM = 2.0  # narrower legs cannot be wound with a useful number of turns


@dataclass(frozen=True)
class Magnet:
    disc: int  # 1 lower (or only) disc, 2 upper disc
    shape: str  # "block" | "disc"
    center_mm: tuple[float, float, float]
    dimension_mm: tuple[float, ...]  # block (radial, tangential, thickness); disc (diameter, thickness)
    rotation_deg: float  # about z
    polarization_t: float  # signed Br along +z


@dataclass(frozen=True)
class CoilShape:
    """One coil in its own frame: centred on the +x axis (position 1)."""

    hole_mm: np.ndarray  # (4, 2) corners, counter-clockwise
    outline_mm: np.ndarray  # (4, 2) corresponding corners
    leg_width_mm: float
    z_min_mm: float
    z_max_mm: float
    mean_turn_length_mm: float
    span_deg: float  # mechanical angle between the legs' centre lines at the pitch radius

    @property
    def thickness_mm(self) -> float:
        """Axial depth of the coil (mm), face to face."""
        return self.z_max_mm - self.z_min_mm

    @property
    def window_mm2(self) -> float:
        """Cross-section of one leg, the area the turns share."""
        return self.leg_width_mm * self.thickness_mm

    @property
    def r_min_mm(self) -> float:
        """Radius (mm) of the coil's innermost point, on its centre line."""
        return float(self.outline_mm[:, 0].min())

    @property
    def r_max_mm(self) -> float:
        """Radius (mm) of the coil's outermost corner."""
        return float(np.hypot(self.outline_mm[:, 0], self.outline_mm[:, 1]).max())


@dataclass(frozen=True)
class Geometry:
    magnets: tuple[Magnet, ...]
    iron_planes_z_mm: tuple[float, ...]  # steel surfaces facing the magnets
    coil: CoilShape
    coil_angles_deg: tuple[float, ...]  # centre line of every coil wound
    coil_indices: tuple[int, ...]
    remanence_t: float
    stator_z_mm: tuple[float, float]  # faces of the cast stator
    magnet_faces_z_mm: tuple[float, ...]  # magnet faces towards the stator
    positions: int  # coil positions Q, wound or empty

    def coil_polygons(self, index: int) -> tuple[np.ndarray, np.ndarray]:
        """(outline, hole) of coil `index` (position number) in machine coordinates."""
        ang = math.radians(360.0 * (index - 1) / self.positions)
        rot = np.array([[math.cos(ang), -math.sin(ang)], [math.sin(ang), math.cos(ang)]])
        return self.coil.outline_mm @ rot.T, self.coil.hole_mm @ rot.T


def remanence_t(spec: Spec) -> float:
    """Br (T) at 20 °C: the design's own figure, else the grade's typical value (layout.materials)."""
    mg = spec.magnets
    return mg.remanence_t if mg.remanence_t is not None else MAGNET_GRADES[mg.grade].remanence_t


def magnet_family(spec: Spec) -> MagnetGrade:
    """The grade whose properties stand for the magnets: the named grade, else for a bare
    remanence_t NdFeB above 0.8 T and hard ferrite below (layout.materials)."""
    mg = spec.magnets
    if mg.grade:
        return MAGNET_GRADES[mg.grade]
    return MAGNET_GRADES["N35" if (mg.remanence_t or 1.0) >= 0.8 else "Y30"]


def magnet_limit_c(spec: Spec) -> float:
    """The highest temperature the magnets take: the design's, else the grade's, else 80 °C
    (plain NdFeB, layout.materials)."""
    mg = spec.magnets
    if mg.max_temperature_c:
        return mg.max_temperature_c
    return MAGNET_GRADES[mg.grade].max_temperature_c if mg.grade else 80.0


def magnet_air_gap_mm(spec: Spec) -> float | None:
    """The air each magnet drives its flux across to steel (mm): half the gap between facing
    magnets of two discs, the whole gap to a steel face opposite one disc; None where no
    steel faces the magnets (a one-disc coreless rotor)."""
    st, ro = spec.stator, spec.rotor
    if ro.topology == "two_discs":
        return st.thickness_mm / 2 + ro.running_clearance_mm
    if ro.topology == "one_disc_steel_stator":
        return st.thickness_mm + ro.running_clearance_mm
    if ro.topology == "one_disc_steel_disc":
        return st.thickness_mm + 2 * ro.running_clearance_mm
    return None


def recoil_factor(spec: Spec) -> float:
    """Working polarisation over Br for a magnet of recoil permeability μ_rec (> 1): the field
    opposing it inside lowers its magnetisation. For a magnet of thickness t driving flux
    across an air gap g to ideal steel, the 1-D magnetic circuit gives B = Br·t/(t + μ_rec·g)
    against Br·t/(t + g) at μ_rec = 1 (e.g. Furlani 2001, ch. 3; Hendershot & Miller 1994),
    so the ratio is (t + g)/(t + μ_rec·g). Without steel opposite, the magnet's own
    demagnetising factor is taken as 1: the ratio 1/μ_rec."""
    mg = spec.magnets
    mu = magnet_family(spec).recoil_permeability
    gap = magnet_air_gap_mm(spec)
    if gap is None:
        return 1 / mu
    t = mg.thickness_mm
    return (t + gap) / (t + mu * gap)


def _side_point(x: float, delta: float, beta: float, upper: bool) -> tuple[float, float]:
    """The point at abscissa x whose inward distance from the sector edge at ±beta is delta."""
    y = (x * math.sin(beta) - delta) / math.cos(beta)
    return (x, y if upper else -y)


def _trapezoid(x_in: float, x_out: float, delta: float, beta: float) -> np.ndarray:
    pts = [
        _side_point(x_in, delta, beta, upper=False),
        _side_point(x_out, delta, beta, upper=False),
        _side_point(x_out, delta, beta, upper=True),
        _side_point(x_in, delta, beta, upper=True),
    ]
    return np.array(pts)


def coil_shape(spec: Spec, z_min_mm: float, z_max_mm: float) -> CoilShape:
    """Trapezoidal coil round a hole that holds the magnet's footprint.

    Both the hole's and the outline's long sides run parallel to the edges of the coil's
    sector (2π/Q wide), so the legs have one width all round and neighbours keep the
    design's clearance over their whole length. The hole takes the magnet footprint plus
    `hole_margin_mm`; the legs take what is left of the sector minus half the clearance.
    """
    st, mg = spec.stator, spec.magnets
    q = st.coil_positions
    beta = math.pi / q
    rc = mg.pitch_radius_mm
    a = magnet_radial_extent_mm(mg)
    b = magnet_tangential_extent_mm(mg)
    m = st.hole_margin_mm
    # Inward distance of the magnet footprint from the sector edge, at its worst point.
    if mg.shape == "block":
        foot = (rc - a / 2) * math.sin(beta) - (b / 2) * math.cos(beta)
    else:
        foot = rc * math.sin(beta) - a / 2
    delta_hole = foot - m
    if st.hole_tangential_mm is not None:
        wanted = rc * math.sin(beta) - (st.hole_tangential_mm / 2) * math.cos(beta)
        if wanted > delta_hole + 1e-9:
            raise spec.fail(
                "stator.hole_tangential_mm",
                st.hole_tangential_mm,
                "the hole must hold the magnet; at least "
                f"{2 * (rc * math.sin(beta) - delta_hole) / math.cos(beta):.1f}",
            )
        delta_hole = wanted
    half_radial = a / 2 + m
    if st.hole_radial_mm is not None:
        if st.hole_radial_mm / 2 < a / 2 - 1e-9:
            raise spec.fail(
                "stator.hole_radial_mm",
                st.hole_radial_mm,
                f"the hole must hold the magnet; at least {a:g}",
            )
        half_radial = st.hole_radial_mm / 2
    x_hi, x_ho = rc - half_radial, rc + half_radial
    delta_out = st.coil_clearance_mm / 2
    leg_max = delta_hole - delta_out
    leg = leg_max if st.leg_width_mm is None else st.leg_width_mm
    if st.leg_width_mm is not None and leg > leg_max + 1e-9:
        raise spec.fail(
            "stator.leg_width_mm",
            st.leg_width_mm,
            # rounded down, so the bound quoted is itself allowed
            f"neighbouring coils would touch; at most {math.floor(leg_max * 100) / 100:.2f} "
            f"with stator.coil_clearance_mm = {st.coil_clearance_mm:g}",
        )
    if leg < MIN_LEG_WIDTH_MM:
        raise spec.fail(
            "stator.coil_positions",
            q,
            f"leaves coil legs {max(leg, 0):.1f} mm wide round these magnets (need {MIN_LEG_WIDTH_MM:g}); "
            "use fewer coils, a larger magnets.pitch_radius_mm or narrower magnets",
        )
    delta_out = delta_hole - leg
    hole = _trapezoid(x_hi, x_ho, delta_hole, beta)
    x_in, x_out = x_hi - leg, x_ho + leg
    outline = _trapezoid(x_in, x_out, delta_out, beta)
    if hole[0, 1] >= -1e-6 or outline[0, 1] >= -1e-6 or x_in <= 0:
        raise spec.fail(
            "magnets.pitch_radius_mm",
            rc,
            "coils run together at the inner radius; move the magnets outward or use fewer coils",
        )
    mid = _trapezoid(x_hi - leg / 2, x_ho + leg / 2, delta_hole - leg / 2, beta)
    mlt = float(np.linalg.norm(np.roll(mid, -1, axis=0) - mid, axis=1).sum())
    leg_centre = delta_hole - leg / 2
    y_leg = (rc * math.sin(beta) - leg_centre) / math.cos(beta)
    span = 2 * math.degrees(math.atan2(y_leg, rc))
    return CoilShape(hole, outline, leg, z_min_mm, z_max_mm, mlt, span)


def resolve_geometry(spec: Spec, coil_indices: tuple[int, ...]) -> Geometry:
    """Every magnet of every disc at rotor angle 0, the steel surfaces and coil 1's shape (mm).

    z = 0 is the stator's mid-plane. Discs sit the running clearance from the stator's
    faces; a steel disc's surface behind its magnets, for `one_disc_steel_stator` the
    stationary plate's face behind the stator, and for `one_disc_steel_disc` the face of the
    plain steel disc the running clearance above it, become image planes (method of images
    for a highly permeable half-space, magnetisation normal to the plate kept; e.g. Furlani
    2001).
    The coils lie inside the resin cover on both faces. Magnet j of disc 1 is at 360(j−1)/P
    degrees, polarity alternating, magnetised +z for j = 1; the magnet of disc 2 facing it is
    magnetised the same way along z, so N faces S across the stator and the flux crosses it.
    """
    st, mg, ro = spec.stator, spec.magnets, spec.rotor
    s, g, h = st.thickness_mm, ro.running_clearance_mm, mg.thickness_mm
    br = remanence_t(spec)
    j_work = br * recoil_factor(spec)  # the magnets' polarisation as they work (recoil)
    steel_disc = DISC_MATERIALS[ro.disc_material].magnetic
    if ro.topology == "two_discs":
        stator = (-s / 2, s / 2)
        faces = (-s / 2 - g, s / 2 + g)
        disc_centres = {1: -s / 2 - g - h / 2, 2: s / 2 + g + h / 2}
        iron = (-s / 2 - g - h, s / 2 + g + h) if steel_disc else ()
    else:
        stator = (-s / 2, s / 2)
        faces = (-s / 2 - g,)
        disc_centres = {1: -s / 2 - g - h / 2}
        iron = (-s / 2 - g - h,) if steel_disc else ()
        if ro.topology == "one_disc_steel_stator":
            iron = iron + (s / 2,)
        elif ro.topology == "one_disc_steel_disc":
            iron = iron + (s / 2 + g,)
    z0, z1 = stator[0] + st.resin_cover_mm, stator[1] - st.resin_cover_mm
    coil = coil_shape(spec, z0, z1)
    dim = (mg.length_mm, mg.width_mm, h) if mg.shape == "block" else (mg.diameter_mm, h)
    magnets = []
    for disc, zc in disc_centres.items():
        for j in range(mg.count):
            ang = 360.0 * j / mg.count
            x = mg.pitch_radius_mm * math.cos(math.radians(ang))
            y = mg.pitch_radius_mm * math.sin(math.radians(ang))
            # Facing magnets are magnetised the same way along z: N faces S across the gap.
            pol = j_work if j % 2 == 0 else -j_work
            magnets.append(Magnet(disc, mg.shape, (x, y, zc), dim, ang, pol))
    q = st.coil_positions
    geo = Geometry(
        magnets=tuple(magnets),
        iron_planes_z_mm=tuple(sorted(iron)),
        coil=coil,
        coil_angles_deg=tuple(360.0 * (k - 1) / q for k in coil_indices),
        coil_indices=tuple(coil_indices),
        remanence_t=br,
        stator_z_mm=stator,
        magnet_faces_z_mm=faces,
        positions=q,
    )
    return geo
