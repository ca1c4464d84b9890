"""Solids of every part, extruded from the outlines in fab/outlines.py (mm).

One builder per part from the design: `rotor_disc`, `magnet_template`, `stator_casting`,
`coil_solid`, `magnet_solid`, `stator_mould`, `winding_jig`, `stator_plate`, and
`assembly` with everything in place. Features are extrusions and cuts of the shared
outlines: one prism for a flat part with all its through holes, then one cut for all its
pockets and engravings together. cadquery is imported inside the functions only.

A part the CAD kernel cannot make (an OCCT exception, or cadquery giving up on a face or a
cut) is a DesignError naming the part and the key that sets its thickness (`modelling`),
not a traceback: the design's figures were allowed, but the part they give is not a solid.
"""

from __future__ import annotations

import contextlib
import math
from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from fab.outlines import (
    ENGRAVE_DEPTH_MM,
    Flat,
    Path,
    arc_midpoint,
    former_flats,
    jig_cheek_flat,
    jig_core_flat,
    lead_channel_radii_mm,
    lead_slots,
    magnet_template_flat,
    mould_flats,
    mould_lid_flat,
    polygon,
    printed_frame_flat,
    rotor_disc_flat,
    stator_flat,
    stator_layout,
    stator_plate_flat,
)
from layout.design import Design
from layout.materials import is_printed_binder
from layout.rotor import disc_material, disc_place, rotor_discs
from layout.spec import DesignError

OVERCUT_MM = 0.5  # cutting tools stand this far past a face, so no face is shared with the part
ROTOR_PARTS = ("rotor_disc", "magnet")  # the assembly's turning parts begin with these names


_KERNEL_MODULES = ("OCP", "cadquery")
_KERNEL_SAID_CHARS = 80  # of the kernel's own words in the one-line error


def _cq():
    import cadquery as cq

    return cq


def is_kernel_error(exc: BaseException) -> bool:
    """Did the CAD kernel raise this? Any OCCT exception (OCP's classes, e.g. StdFail_NotDone,
    Standard_ConstructionError), or a ValueError or RuntimeError raised inside cadquery or OCP."""
    if isinstance(exc, DesignError):
        return False
    if type(exc).__module__.split(".")[0] in _KERNEL_MODULES:
        return True
    if not isinstance(exc, ValueError | RuntimeError):
        return False
    tb = exc.__traceback__
    while tb is not None:
        if str(tb.tb_frame.f_globals.get("__name__", "")).split(".")[0] in _KERNEL_MODULES:
            return True
        tb = tb.tb_next
    return False


@contextlib.contextmanager
def modelling(design: Design, part: str, key: str, value: object) -> Iterator[None]:
    """Make `part` inside this block: a CAD kernel failure becomes a DesignError in one line
    naming the part and `key` (the key that sets its thickness), with its `value`."""
    try:
        yield
    except Exception as exc:
        if not is_kernel_error(exc):
            raise
        said = " ".join(f"{type(exc).__name__}: {exc}".split())
        if len(said) > _KERNEL_SAID_CHARS:
            said = said[: _KERNEL_SAID_CHARS - 1] + "…"
        what = f"could not model the {part} (CAD kernel: {said})"
        if not key:
            raise design.spec.fail(None, None, what) from exc
        raise design.spec.fail(key, value, f"{what}: check {key}") from exc


def wire(path: Path, z: float = 0.0):
    """A closed planar wire at height z from a Path."""
    cq = _cq()
    circ = path.as_circle()
    if circ is not None:
        (cx, cy), r = circ
        return cq.Wire.makeCircle(r, cq.Vector(cx, cy, z), cq.Vector(0, 0, 1))
    n = len(path.xy)
    edges = []
    for i in range(n):
        p0, p1, b = path.xy[i], path.xy[(i + 1) % n], path.bulge[i]
        v0, v1 = cq.Vector(p0[0], p0[1], z), cq.Vector(p1[0], p1[1], z)
        if b == 0:
            edges.append(cq.Edge.makeLine(v0, v1))
        else:
            m = arc_midpoint(p0, p1, b)
            edges.append(cq.Edge.makeThreePointArc(v0, cq.Vector(m[0], m[1], z), v1))
    return cq.Wire.assembleEdges(edges)


def prism(outline: Path, height: float, z0: float = 0.0, holes: tuple[Path, ...] = ()):
    """The outline (less its holes) extruded from z0 up by height."""
    cq = _cq()
    face = cq.Face.makeFromWires(wire(outline, z0), [wire(h, z0) for h in holes])
    return cq.Solid.extrudeLinear(face, cq.Vector(0, 0, height))


def flat_solid(flat: Flat, engrave: bool = True):
    """A flat part lying on z = 0: outline and holes extruded, then pockets and engravings cut.

    Engravings are grooves ENGRAVE_DEPTH_MM deep when `engrave`; a cut metal or wooden part
    is marked from its drawing instead (laser etching, scribing), so its solid leaves them out.
    """
    t = flat.thickness_mm
    body = prism(flat.outline.path, t, 0.0, tuple(f.path for f in flat.holes))
    tools = [prism(f.path, f.depth_mm + OVERCUT_MM, t - f.depth_mm) for f in flat.pockets]
    if engrave:
        tools += [prism(f.path, ENGRAVE_DEPTH_MM + OVERCUT_MM, t - ENGRAVE_DEPTH_MM) for f in flat.engraved]
    if tools:
        body = body.cut(*tools)
    return body


def part_solid(design: Design, flat: Flat, engrave: bool = True):
    """flat_solid of one of the design's parts, a kernel failure named after it (`modelling`).

    The key's value is shown as the design file has it, or as used where the file leaves it
    out (a template's thickness); the jig's core, as thick as the coils, shows the stator's.
    """
    value = None
    if flat.thickness_key:
        section, name = flat.thickness_key.split(".")
        value = getattr(getattr(design.spec, section), name)
    with modelling(design, flat.title, flat.thickness_key, flat.thickness_mm if value is None else value):
        return flat_solid(flat, engrave)


def rotor_disc(design: Design, disc: int):
    """Rotor disc `disc` as made: lying on its back, magnet side up (a plain steel disc with its
    face towards the stator up); printed ones engraved."""
    printed = disc_material(design.spec, disc).printed
    return part_solid(design, rotor_disc_flat(design, disc), engrave=printed)


def magnet_template(design: Design, disc: int):
    return part_solid(design, magnet_template_flat(design, disc))


def stator_plate(design: Design):
    return part_solid(design, stator_plate_flat(design))


def _stator_thickness(design: Design, part: str):
    """Modelling a part whose height is the stator's (the coils, the casting, its mould)."""
    return modelling(design, part, "stator.thickness_mm", design.spec.stator.thickness_mm)


def coil_solid(design: Design, index: int):
    """Coil at position `index` as wound, in machine coordinates."""
    geo = design.geometry
    outline, hole = geo.coil_polygons(index)
    c = geo.coil
    with _stator_thickness(design, "coil"):
        return prism(polygon(outline), c.z_max_mm - c.z_min_mm, c.z_min_mm, (polygon(hole),))


def stator_casting(design: Design):
    """The cast resin round the coils, machine coordinates: the stator less its coils."""
    flat = stator_flat(design)
    z0, z1 = design.geometry.stator_z_mm
    coils = [coil_solid(design, i) for i in design.geometry.coil_indices]
    with _stator_thickness(design, "stator casting"):
        body = prism(flat.outline.path, z1 - z0, z0, tuple(f.path for f in flat.holes))
        return body.cut(*coils)


def magnet_solid(design: Design):
    """One magnet centred on the origin, its length along x: every magnet is this one moved."""
    cq = _cq()
    m = design.geometry.magnets[0]
    with modelling(design, "magnet", "magnets.thickness_mm", design.spec.magnets.thickness_mm):
        if m.shape == "block":
            a, b, h = m.dimension_mm
            return cq.Solid.makeBox(a, b, h, cq.Vector(-a / 2, -b / 2, -h / 2))
        d, h = m.dimension_mm
        return cq.Solid.makeCylinder(d / 2, h, cq.Vector(0, 0, -h / 2))


def magnet_locations(design: Design, disc: int) -> list:
    """Where each magnet of one disc runs (machine coordinates, rotor angle 0)."""
    cq = _cq()
    return [
        cq.Location(cq.Vector(*m.center_mm), cq.Vector(0, 0, 1), m.rotation_deg)
        for m in design.geometry.magnets
        if m.disc == disc
    ]


def stator_mould(design: Design):
    """The printed casting mould: floor, wall, island, coil places and pins in one piece.

    The same cavity as the boards of fab.outlines.mould_flats: the base board's thickness is
    the floor, the frame, island and cores stand as high as the stator.
    """
    base, frame, _island, _core = mould_flats(design)
    floor, s = base.thickness_mm, frame.thickness_mm
    cavity = stator_flat(design)
    with _stator_thickness(design, "stator mould"):
        body = prism(base.outline.path, floor + s)
        tools = [prism(cavity.outline.path, s + OVERCUT_MM, floor, tuple(f.path for f in cavity.holes))]
        # Lead slots from the top down to the stator's mid-plane, where the leads are laid.
        tools += [prism(f.path, s / 2 + OVERCUT_MM, floor + s / 2) for f in lead_slots(design)]
        return body.cut(*tools)


def mould_lid(design: Design):
    return part_solid(design, mould_lid_flat(design))


def stator_frame(design: Design):
    """The printed stator frame as printed, on z = 0: rim, bore, lugs, a pocket through it per
    coil, the lead channel round the rim and the grooves out through it at the exits."""
    cq = _cq()
    flat = printed_frame_flat(design)
    t = flat.thickness_mm
    depth = next(f.depth_mm for f in flat.pockets)
    r_in, r_out = lead_channel_radii_mm(design)
    with _stator_thickness(design, "printed stator frame"):
        body = flat_solid(flat)
        ring = cq.Solid.makeCylinder(r_out, depth + OVERCUT_MM, cq.Vector(0, 0, t - depth)).cut(
            cq.Solid.makeCylinder(r_in, depth + 2 * OVERCUT_MM, cq.Vector(0, 0, t - depth - OVERCUT_MM))
        )
        return body.cut(ring)


def coil_former(design: Design):
    """One coil former (bobbin) as printed, flange down on z = 0, in coil 1's frame moved so
    its core's centre is the origin."""
    cq = _cq()
    flange, core = former_flats(design)
    with modelling(design, "coil former", "stator.resin_cover_mm", design.spec.stator.resin_cover_mm):
        return (
            flat_solid(flange).fuse(flat_solid(core).translate(cq.Vector(0, 0, flange.thickness_mm))).clean()
        )


def winding_jig(design: Design) -> dict:
    """The jig's pieces as made ("core", "cheek": make two) and, stacked as used, "stack"."""
    cq = _cq()
    core_flat, cheek_flat = jig_core_flat(design), jig_cheek_flat(design)
    core, cheek = part_solid(design, core_flat), part_solid(design, cheek_flat)
    tc, h = cheek_flat.thickness_mm, core_flat.thickness_mm
    stack = cq.Compound.makeCompound(
        [cheek, core.translate(cq.Vector(0, 0, tc)), cheek.translate(cq.Vector(0, 0, tc + h))]
    )
    return {"core": core, "cheek": cheek, "stack": stack}


@dataclass(frozen=True)
class Placed:
    """A part of the assembly: its solid as made and where it goes."""

    name: str
    solid: object  # cadquery Shape
    location: object  # cadquery Location
    colour: tuple[float, float, float]

    @property
    def turns(self) -> bool:
        return self.name.startswith(ROTOR_PARTS)

    @property
    def shape(self):
        """The solid where it runs (shares its geometry with `solid`)."""
        return self.solid.moved(self.location)


STEEL = (0.55, 0.57, 0.6)
NORTH, SOUTH = (0.8, 0.2, 0.2), (0.2, 0.3, 0.8)
RESIN, COPPER = (0.85, 0.8, 0.55), (0.72, 0.45, 0.2)
PRINTED = (0.3, 0.6, 0.4)


def assembly(design: Design, discs: dict | None = None) -> list[Placed]:
    """Discs, magnets, stator, coils (and the steel stator plate) where they run; a plain steel
    disc above the stator, the running clearance from it as the magnet disc is below.

    `discs` may hold rotor disc solids already built ({disc: solid as made}). Magnets and
    coils are one solid each, placed many times.
    """
    cq = _cq()
    spec, geo = design.spec, design.geometry
    out = []
    magnet = magnet_solid(design)
    origin, z_axis = cq.Vector(0, 0, 0), cq.Vector(0, 0, 1)
    for disc in rotor_discs(spec):
        place = disc_place(spec, geo, disc)
        solid = (discs or {}).get(disc) or rotor_disc(design, disc)
        if disc == 2:  # turned over about x: magnet side down
            loc = cq.Location(cq.Vector(0, 0, place.back_z_mm), cq.Vector(1, 0, 0), 180.0)
        else:
            loc = cq.Location(cq.Vector(0, 0, place.back_z_mm))
        colour = STEEL if disc_material(spec, disc).magnetic else PRINTED
        out.append(Placed(f"rotor_disc_{disc}", solid, loc, colour))
        mags = [m for m in geo.magnets if m.disc == disc]
        for j, (m, loc) in enumerate(zip(mags, magnet_locations(design, disc), strict=True), start=1):
            out.append(Placed(f"magnet_{disc}_{j}", magnet, loc, NORTH if m.polarization_t > 0 else SOUTH))
    if is_printed_binder(spec.stator.binder):
        z0 = geo.stator_z_mm[0]
        out.append(Placed("stator", stator_frame(design), cq.Location(cq.Vector(0, 0, z0)), PRINTED))
        former = coil_former(design)
        cx, cy = polygon(geo.coil.hole_mm).centroid()
        for idx in geo.coil_indices:
            turn = cq.Location(origin, z_axis, 360.0 * (idx - 1) / geo.positions)
            out.append(Placed(f"former_{idx}", former, turn * cq.Location(cq.Vector(cx, cy, z0)), PRINTED))
    else:
        out.append(Placed("stator", stator_casting(design), cq.Location(), RESIN))
    first = geo.coil_indices[0]
    coil = coil_solid(design, first)
    for idx in geo.coil_indices:
        turn = 360.0 * (idx - first) / geo.positions
        out.append(Placed(f"coil_{idx}", coil, cq.Location(origin, z_axis, turn), COPPER))
    if spec.rotor.topology == "one_disc_steel_stator":
        loc = cq.Location(cq.Vector(0, 0, geo.stator_z_mm[1]))
        out.append(Placed("stator_plate", stator_plate(design), loc, STEEL))
    return out


def write_assembly_step(parts: list[Placed], path: str, name: str) -> None:
    """One STEP file with every part named and coloured; repeated parts are instances."""
    cq = _cq()
    assy = cq.Assembly(name=name)
    for p in parts:
        assy.add(p.solid, name=p.name, loc=p.location, color=cq.Color(*p.colour))
    assy.export(path, "STEP")


@dataclass(frozen=True)
class AssemblyCheck:
    collisions: tuple[tuple[str, str, float], ...]  # (part, part, common volume mm³)
    running_clearance_mm: float  # least distance the turning parts pass the standing ones
    placed_gap_mm: float  # least distance between them as placed, rotor angle 0
    pairs_checked: int


COLLISION_MM3 = 1e-3  # touching faces give a common volume of rounding size only


def standing_envelope(design: Design) -> list:
    """What the turning parts pass over in a turn: each standing part swept about the shaft.

    The cast stator (with its coils) sweeps the ring from its bore to its lugs' tips, the steel
    plate likewise. The least distance from the turning parts, as placed, to these rings is the
    running clearance at every rotor angle.
    """
    cq = _cq()
    sl = stator_layout(design)
    tip = sl.lug_radius_mm + sl.lug_half_width_mm
    z0, z1 = design.geometry.stator_z_mm
    rings = [(sl.inner_radius_mm, z0, z1)]
    if design.spec.rotor.topology == "one_disc_steel_stator":
        rings.append((sl.plate_inner_radius_mm, z1, z1 + design.spec.rotor.stator_plate_thickness_mm))
    out = []
    for r_in, lo, hi in rings:
        ring = cq.Solid.makeCylinder(tip, hi - lo, cq.Vector(0, 0, lo))
        out.append(ring.cut(cq.Solid.makeCylinder(r_in, hi - lo, cq.Vector(0, 0, lo))))
    return out


def check_assembly(parts: list[Placed], envelope: list | None = None) -> AssemblyCheck:
    """Common volume of every two parts whose boxes overlap, and the running clearance: the
    least distance from the turning parts to `envelope` (standing_envelope), or to the
    standing parts as placed if none is given."""
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Common
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    cq = _cq()
    boxes = [p.shape.BoundingBox() for p in parts]
    lo = np.array([[b.xmin, b.ymin, b.zmin] for b in boxes])
    hi = np.array([[b.xmax, b.ymax, b.zmax] for b in boxes])
    shrink = 1e-4
    collisions = []
    checked = 0
    for i in range(len(parts)):
        overlap = np.all((lo[i] + shrink < hi) & (lo + shrink < hi[i]), axis=1)
        for j in np.nonzero(overlap)[0]:
            if j <= i:
                continue
            checked += 1
            common = BRepAlgoAPI_Common(parts[i].shape.wrapped, parts[int(j)].shape.wrapped).Shape()
            props = GProp_GProps()
            BRepGProp.VolumeProperties_s(common, props)
            if props.Mass() > COLLISION_MM3:
                collisions.append((parts[i].name, parts[int(j)].name, float(props.Mass())))

    def least(a, b) -> float:
        dist = BRepExtrema_DistShapeShape(a.wrapped, b.wrapped)
        return float(dist.Value()) if dist.IsDone() else math.nan

    turning = cq.Compound.makeCompound([p.shape for p in parts if p.turns])
    standing = cq.Compound.makeCompound([p.shape for p in parts if not p.turns])
    placed = least(turning, standing)
    running = least(turning, cq.Compound.makeCompound(envelope)) if envelope else placed
    return AssemblyCheck(tuple(collisions), running, placed, checked)
