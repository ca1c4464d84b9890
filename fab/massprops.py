"""Mass properties of the rotor discs as built, from their solids (OCCT)."""

from __future__ import annotations

from layout.balance import DiscBody, disc_plane_z_mm
from layout.design import Design
from layout.rotor import disc_material, rotor_discs


def disc_bodies(design: Design) -> tuple[DiscBody, ...]:
    """Every rotor disc's mass and centre of mass from its solid, pockets and holes cut.

    OCCT integrates the solid (BRepGProp volume properties); the mass is that volume times
    the disc material's density (common handbook values, layout.materials). Disc 2 is
    made magnet side up, mirrored against the machine's angles, so its centre of mass is
    mirrored back (y → −y) into machine coordinates. A plain steel disc counts as disc 2.
    """
    from fab.solids import rotor_disc

    props = {}
    for disc in rotor_discs(design.spec):
        solid = rotor_disc(design, disc)
        c = solid.Center()  # centre of mass of a solid in cadquery
        props[disc] = (solid.Volume(), (c.x, c.y))
    return bodies_from_props(design, props)


def bodies_from_props(
    design: Design, props: dict[int, tuple[float, tuple[float, float]]]
) -> tuple[DiscBody, ...]:
    """DiscBody per disc from (volume mm³, centre of mass (x, y) mm on the part as made)."""
    out = []
    for disc in rotor_discs(design.spec):
        volume_mm3, (x, y) = props[disc]
        density = disc_material(design.spec, disc).density_g_cm3
        z = disc_plane_z_mm(design, disc)
        out.append(DiscBody(disc, volume_mm3 * density * 1e-6, (x, y if disc == 1 else -y), z))
    return tuple(out)
