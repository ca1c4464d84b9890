"""The rotor discs as made: pockets, where each disc sits, which face of each magnet is up,
and where balance corrections go.

Millimetres throughout. A disc is made (printed, cut, glued up) lying on its back with its
magnet side up; that is the frame of its part files. Disc 1 (the lower, or only, magnet
disc) lies as it runs. Disc 2 (the upper disc) runs magnet side down: its part is the running
disc turned over about the x axis, so a feature at machine angle θ sits at −θ on the part.
With `one_disc_steel_disc` disc 2 is a plain steel disc with no magnets; its "magnet side" is
the face towards the stator, and it is made and turned over as a second magnet disc would be.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from layout.geometry import Geometry
from layout.materials import DISC_MATERIALS, METRIC_THREADS, DiscMaterial
from layout.spec import MIN_POCKET_FLOOR_MM, Spec, magnet_radial_extent_mm, magnet_tangential_extent_mm

PRINTED_POCKET_CLEARANCE_MM = 0.2  # a side, for FDM-printed pockets (common practice)
CUT_POCKET_CLEARANCE_MM = 0.3  # a side, for milled pockets and cut templates (common practice)
BALANCE_SCREW = "M5"  # correction weights: washers under M5 screws in tapped holes (our choice)


def is_steel_disc(spec: Spec) -> bool:
    """Magnets sit on the face of a steel disc; other discs hold them in pockets."""
    return DISC_MATERIALS[spec.rotor.disc_material].magnetic


def pocket_clearance_mm(spec: Spec) -> float:
    """Gap a side between a magnet and its pocket (or its place in a template)."""
    if spec.rotor.pocket_clearance_mm is not None:
        return spec.rotor.pocket_clearance_mm
    printed = DISC_MATERIALS[spec.rotor.disc_material].printed
    return PRINTED_POCKET_CLEARANCE_MM if printed else CUT_POCKET_CLEARANCE_MM


def pocket_depth_mm(spec: Spec) -> float:
    """Depth of the magnet pockets; 0 for a steel disc (magnets on its face).

    By default as deep as the magnet, leaving a floor of a quarter of the disc (at least
    MIN_POCKET_FLOOR_MM); a thinner disc leaves the magnets standing proud.
    """
    ro = spec.rotor
    if is_steel_disc(spec):
        return 0.0
    if ro.pocket_depth_mm is not None:
        return ro.pocket_depth_mm
    floor = max(MIN_POCKET_FLOOR_MM, ro.disc_thickness_mm / 4)
    return min(spec.magnets.thickness_mm, ro.disc_thickness_mm - floor)


def hub_bolt_radius_mm(spec: Spec) -> float:
    """Radius (mm) of the hub bolt circle: the design's, or the bore plus three bolt holes
    across (our default), where the hub clamps the disc."""
    ro = spec.rotor
    if ro.hub_bolt_circle_mm is not None:
        return ro.hub_bolt_circle_mm / 2
    return (ro.bore_diameter_mm + 3 * ro.hub_hole_diameter_mm) / 2


def disc_count(spec: Spec) -> int:
    """Magnet discs on the rotor: 2 for `two_discs`, else 1."""
    return 2 if spec.rotor.topology == "two_discs" else 1


PLAIN_DISC = 2  # the number of the plain steel disc of `one_disc_steel_disc`


def rotor_discs(spec: Spec) -> tuple[int, ...]:
    """Every disc that turns, by number: the magnet discs, then a plain steel disc."""
    if spec.rotor.topology == "one_disc_steel_disc":
        return (1, PLAIN_DISC)
    return tuple(range(1, disc_count(spec) + 1))


def is_plain_disc(spec: Spec, disc: int) -> bool:
    """Disc `disc` carries no magnets: the steel disc facing the magnet disc across the stator."""
    return spec.rotor.topology == "one_disc_steel_disc" and disc == PLAIN_DISC


def disc_material(spec: Spec, disc: int) -> DiscMaterial:
    """What disc `disc` is made of: rotor.disc_material, or for the plain disc
    rotor.steel_disc_material (steel unless the design names another magnetic material)."""
    ro = spec.rotor
    if is_plain_disc(spec, disc):
        return DISC_MATERIALS[ro.steel_disc_material or "steel"]
    return DISC_MATERIALS[ro.disc_material]


def disc_thickness_mm(spec: Spec, disc: int) -> float:
    """Thickness of disc `disc`: rotor.disc_thickness_mm, or for the plain disc
    rotor.steel_disc_thickness_mm where the design gives it."""
    ro = spec.rotor
    if is_plain_disc(spec, disc) and ro.steel_disc_thickness_mm is not None:
        return ro.steel_disc_thickness_mm
    return ro.disc_thickness_mm


@dataclass(frozen=True)
class DiscPlace:
    """Where a disc runs, machine coordinates (z along the shaft)."""

    disc: int
    front_z_mm: float  # the magnet side
    back_z_mm: float
    faces_up: bool  # magnet side towards +z (disc 1) or −z (disc 2)


def disc_place(spec: Spec, geo: Geometry, disc: int) -> DiscPlace:
    """The magnets' backs sit on the pocket floors (or on the steel face); a plain disc's face
    runs the running clearance above the stator."""
    h, t = spec.magnets.thickness_mm, disc_thickness_mm(spec, disc)
    if is_plain_disc(spec, disc):
        front = geo.stator_z_mm[1] + spec.rotor.running_clearance_mm
        return DiscPlace(disc, front, front + t, False)
    d = pocket_depth_mm(spec)
    zc = next(m.center_mm[2] for m in geo.magnets if m.disc == disc)
    if disc == 1:
        front = zc - h / 2 + d
        return DiscPlace(1, front, front - t, True)
    front = zc + h / 2 - d
    return DiscPlace(2, front, front + t, False)


def disc_spacing_mm(spec: Spec, geo: Geometry) -> float | None:
    """Distance between the two discs' front faces (the magnets' backs or a plain disc's face),
    which a spacer at the hub sets; None with one disc (the stator's mounting sets the gap)."""
    if len(rotor_discs(spec)) < 2:
        return None
    return disc_place(spec, geo, 2).front_z_mm - disc_place(spec, geo, 1).front_z_mm


def part_angle_deg(disc: int, machine_angle_deg: float) -> float:
    """Angle on the part as made (magnet side up) of a feature at a machine angle."""
    a = machine_angle_deg if disc == 1 else -machine_angle_deg
    return a % 360.0


@dataclass(frozen=True)
class PocketMark:
    pocket: int  # magnet number j, from 1 (magnet j runs at machine angle 360(j−1)/P)
    angle_deg: float  # on the part as made, counter-clockwise seen from above
    face_up: str  # "N" or "S": the pole that faces up when the magnet is placed


def pockets_either_side(magnet_count: int, disc: int, part_angle: float) -> tuple[int, int]:
    """The two pocket numbers (from 1) either side of an angle (degrees) as marked on the part.

    Pocket k sits at machine angle 360°·(k−1)/P; disc 2's part angles are mirrored, and the
    mirror is its own inverse, so `part_angle_deg` also maps a part angle back to the machine.
    """
    machine = part_angle_deg(disc, part_angle)
    k = int(math.floor(machine / (360.0 / magnet_count) + 1e-9)) % magnet_count
    return tuple(sorted((k + 1, (k + 1) % magnet_count + 1)))


def pocket_marks(geo: Geometry, disc: int) -> tuple[PocketMark, ...]:
    """Pocket → (angle on the part, face up) for one disc as made, magnet side up.

    The magnet side of disc 1 faces +z, so a magnet magnetised +z shows N up; disc 2 is
    turned over, so its magnets magnetised +z show S up and N faces S across the stator.
    """
    out = []
    mags = [m for m in geo.magnets if m.disc == disc]
    for j, m in enumerate(mags, start=1):
        north_up = m.polarization_t > 0 if disc == 1 else m.polarization_t < 0
        out.append(PocketMark(j, part_angle_deg(disc, m.rotation_deg), "N" if north_up else "S"))
    return tuple(out)


def magnet_footprint_half_mm(spec: Spec, clearance_mm: float) -> tuple[float, float]:
    """Half sizes (radial, tangential) of a magnet's place, clearance included."""
    mg = spec.magnets
    return (
        magnet_radial_extent_mm(mg) / 2 + clearance_mm,
        magnet_tangential_extent_mm(mg) / 2 + clearance_mm,
    )


def _distance_to_place_mm(spec: Spec, clearance_mm: float, x: float, y: float) -> float:
    """Distance from (x, y) to the place of magnet 1 (centred on +x at the pitch radius)."""
    a, b = magnet_footprint_half_mm(spec, clearance_mm)
    rc = spec.magnets.pitch_radius_mm
    if spec.magnets.shape == "disc":
        return max(math.hypot(x - rc, y) - a, 0.0)
    dx = max(abs(x - rc) - a, 0.0)
    dy = max(abs(y) - b, 0.0)
    return math.hypot(dx, dy)


@dataclass(frozen=True)
class BalancePositions:
    """Tapped holes for correction weights, one between every two magnets."""

    radius_mm: float
    angles_deg: tuple[float, ...]  # machine angles
    screw: str
    hole_diameter_mm: float  # tap drill


def balance_positions(spec: Spec, disc_outer_radius_mm: float) -> BalancePositions | None:
    """As far out as the rim allows, midway between magnets; None if nowhere fits.

    Each hole keeps rotor.min_web_mm to the disc's edge and to the magnets' places. The
    radius steps inward from the rim in 0.5 mm steps to the magnets' inner edge.
    """
    thread = METRIC_THREADS[BALANCE_SCREW]
    d = thread.tap_drill_mm
    web = spec.rotor.min_web_mm
    p = spec.magnets.count
    half = math.pi / p
    clearance = pocket_clearance_mm(spec)
    r_hi = disc_outer_radius_mm - d / 2 - web
    r_lo = spec.magnets.pitch_radius_mm - magnet_radial_extent_mm(spec.magnets) / 2
    for r in np.arange(r_hi, r_lo, -0.5):
        x, y = r * math.cos(half), r * math.sin(half)
        if _distance_to_place_mm(spec, clearance, x, y) >= d / 2 + web:
            angles = tuple(360.0 * (j + 0.5) / p for j in range(p))
            return BalancePositions(float(r), angles, BALANCE_SCREW, d)
    return None
