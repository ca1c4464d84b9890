"""Solids: valid, of the volume their outlines give, STEP round trips, watertight STL, and an
assembly whose parts neither collide nor come nearer than the running clearance."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from demos import PLATE, design

from fab import outlines as o
from fab import solids as S
from layout.rotor import pocket_depth_mm

PLA = (("rotor.disc_material", "pla"),)
REL = 1e-3  # ±0.1 %


def read_step(path: Path):
    """A STEP file read back with OCCT's own reader: (shape, valid, volume mm³)."""
    from OCP.BRepCheck import BRepCheck_Analyzer
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.STEPControl import STEPControl_Reader

    reader = STEPControl_Reader()
    assert reader.ReadFile(str(path)) == IFSelect_RetDone, path
    reader.TransferRoots()
    shape = reader.OneShape()
    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(shape, props)
    return shape, BRepCheck_Analyzer(shape).IsValid(), props.Mass()


def read_stl(path: Path) -> np.ndarray:
    """Triangles (n, 3, 3) of a binary STL, read with numpy."""
    raw = path.read_bytes()
    n = int(np.frombuffer(raw, np.uint32, 1, 80)[0])
    rec = np.dtype([("normal", "<f4", 3), ("v", "<f4", (3, 3)), ("attr", "<u2")])
    assert len(raw) == 84 + n * rec.itemsize
    return np.frombuffer(raw, rec, n, 84)["v"].astype(float)


def edge_uses(tris: np.ndarray) -> tuple[dict, dict]:
    """How often each edge (by its two corner points) is used, undirected and directed."""
    undirected, directed = {}, {}
    for t in tris:
        pts = [tuple(p) for p in t]
        for a, b in ((pts[0], pts[1]), (pts[1], pts[2]), (pts[2], pts[0])):
            key = (a, b) if a < b else (b, a)
            undirected[key] = undirected.get(key, 0) + 1
            directed[(a, b)] = directed.get((a, b), 0) + 1
    return undirected, directed


def mesh_volume(tris: np.ndarray) -> float:
    return float(np.einsum("ij,ij->i", tris[:, 0], np.cross(tris[:, 1], tris[:, 2])).sum() / 6)


def flat_volume(flat: o.Flat, engrave: bool, engrave_depth: float = o.ENGRAVE_DEPTH_MM) -> float:
    """Volume from the outlines' exact areas: the prism less its pockets and engravings."""
    area = flat.outline.path.area_mm2() - sum(f.path.area_mm2() for f in flat.holes)
    vol = area * flat.thickness_mm - sum(f.path.area_mm2() * f.depth_mm for f in flat.pockets)
    if engrave:
        vol -= sum(f.path.area_mm2() for f in flat.engraved) * engrave_depth
    return vol


@pytest.mark.parametrize(("changes", "printed"), [((), False), (PLA, True)])
def test_rotor_disc_volume_from_its_outlines(changes, printed):
    d = design("millrace", *changes)
    for disc in (1, 2):
        solid = S.rotor_disc(d, disc)
        assert solid.isValid()
        flat = o.rotor_disc_flat(d, disc)
        assert solid.Volume() == pytest.approx(flat_volume(flat, printed), rel=1e-6)
    if printed:
        assert pocket_depth_mm(d.spec) == pytest.approx(6.0)
        # The plain annulus less 16 pockets of 40.4 × 20.4 × 6 mm is an upper bound.
        annulus = math.pi * (135**2 - 17.5**2) * 8
        assert solid.Volume() < annulus - 16 * 40.4 * 20.4 * 6


def test_template_mould_jig_coil_casting_volumes():
    d = design("millrace")
    geo = d.geometry
    tpl = S.magnet_template(d, 1)
    assert tpl.isValid()
    assert tpl.Volume() == pytest.approx(flat_volume(o.magnet_template_flat(d, 1), True), rel=1e-6)
    coil = S.coil_solid(d, 1)
    window = o.polygon(geo.coil.outline_mm).area_mm2() - o.polygon(geo.coil.hole_mm).area_mm2()
    assert coil.Volume() == pytest.approx(window * geo.coil.thickness_mm, rel=1e-9)
    casting = S.stator_casting(d)
    stator = o.stator_flat(d)
    assert casting.isValid()
    assert casting.Volume() == pytest.approx(
        flat_volume(stator, False) - len(geo.coil_indices) * coil.Volume(), rel=1e-6
    )
    mould = S.stator_mould(d)
    assert mould.isValid()
    base, frame, _, _ = o.mould_flats(d)
    floor, s = base.thickness_mm, frame.thickness_mm
    sl = o.stator_layout(d)
    # Slots through the wall, half the stator deep: width × wall × s/2 each (the rim's
    # curvature across a 3 mm slot is far below the tolerance).
    slots = len(sl.lead_names) * sl.lead_slot_width_mm * (sl.mould_radius_mm - sl.outer_radius_mm) * s / 2
    expect = base.outline.path.area_mm2() * (floor + s) - flat_volume(stator, False) - slots
    assert mould.Volume() == pytest.approx(expect, rel=REL)
    jig = S.winding_jig(d)
    assert jig["core"].Volume() == pytest.approx(flat_volume(o.jig_core_flat(d), False), rel=1e-6)
    assert jig["cheek"].Volume() == pytest.approx(flat_volume(o.jig_cheek_flat(d), False), rel=1e-6)
    assert jig["stack"].Volume() == pytest.approx(jig["core"].Volume() + 2 * jig["cheek"].Volume(), rel=1e-9)


def test_step_round_trip(tmp_path):
    d = design("hilltop", *PLATE)
    for name, solid in [
        ("disc", S.rotor_disc(d, 1)),
        ("plate", S.stator_plate(d)),
        ("coil", S.coil_solid(d, 2)),
        ("jig", S.winding_jig(d)["stack"]),
    ]:
        path = tmp_path / f"{name}.step"
        solid.exportStep(str(path))
        _, valid, volume = read_step(path)
        assert valid, name
        assert volume == pytest.approx(solid.Volume(), rel=REL), name


def test_plain_steel_disc_solid_and_its_place_above_the_stator(tmp_path):
    d = design("hilltop")
    solid = S.rotor_disc(d, 2)
    flat = o.rotor_disc_flat(d, 2)
    assert solid.isValid() and not flat.pockets
    # Steel is cut and marked from its drawing: its solid is the prism less its holes.
    assert solid.Volume() == pytest.approx(flat_volume(flat, engrave=False), rel=1e-6)
    box = solid.BoundingBox()
    assert box.zlen == pytest.approx(8.0) and box.xlen == pytest.approx(290.0)
    path = tmp_path / "plain.step"
    solid.exportStep(str(path))
    _, valid, volume = read_step(path)
    assert valid and volume == pytest.approx(solid.Volume(), rel=REL)
    # In the assembly it runs the running clearance above the stator's face, as the magnets
    # do below it: the stator (12 mm) between z = ±6 mm, 2.5 mm clearance each side.
    parts = {p.name: p for p in S.assembly(d, {2: solid})}
    top = parts["rotor_disc_2"].shape.BoundingBox()
    assert top.zmin == pytest.approx(6.0 + 2.5, abs=1e-6)
    assert top.zmax == pytest.approx(6.0 + 2.5 + 8.0, abs=1e-6)
    faces = max(p.shape.BoundingBox().zmax for n, p in parts.items() if n.startswith("magnet_"))
    assert faces == pytest.approx(-6.0 - 2.5, abs=1e-6)  # the magnets' faces towards the stator
    assert parts["rotor_disc_2"].turns and "stator_plate" not in parts


@pytest.mark.parametrize("part", ["disc", "template", "cheek"])
def test_stl_is_watertight(tmp_path, part):
    d = design("millrace", *PLA)
    solid = {
        "disc": lambda: S.rotor_disc(d, 2),
        "template": lambda: S.magnet_template(d, 1),
        "cheek": lambda: S.winding_jig(d)["cheek"],
    }[part]()
    path = tmp_path / f"{part}.stl"
    solid.exportStl(str(path), tolerance=0.05, angularTolerance=0.2, relative=False, parallel=False)
    tris = read_stl(path)
    undirected, directed = edge_uses(tris)
    # Closed and manifold: every edge shared by exactly two triangles, once each way.
    assert set(undirected.values()) == {2}
    assert set(directed.values()) == {1}
    # Facets within 0.05 mm of the surface: the mesh's volume is close to the solid's.
    assert mesh_volume(tris) == pytest.approx(solid.Volume(), rel=0.01)


@pytest.mark.parametrize(
    ("demo", "changes"), [("millrace", PLA), ("hilltop", ()), ("hilltop", PLATE), ("pedalbox", ())]
)
def test_assembly_has_no_collisions_and_the_design_clearance(demo, changes):
    d = design(demo, *changes)
    parts = S.assembly(d)
    names = [p.name for p in parts]
    magnets = d.spec.magnets.count * (2 if d.spec.rotor.topology == "two_discs" else 1)
    assert sum(n.startswith("magnet_") for n in names) == magnets
    assert ("stator_plate" in names) == (d.spec.rotor.topology == "one_disc_steel_stator")
    assert sum(n.startswith("coil_") for n in names) == len(d.geometry.coil_indices)
    check = S.check_assembly(parts, S.standing_envelope(d))
    assert check.collisions == ()
    assert check.pairs_checked > 0
    g = d.spec.rotor.running_clearance_mm
    assert check.running_clearance_mm == pytest.approx(g, abs=1e-6)
    # As placed (rotor angle 0) nothing comes nearer; over a coil's window it may be farther.
    assert check.placed_gap_mm >= g - 1e-6


def test_the_assembly_check_finds_a_collision():
    import cadquery as cq

    d = design("millrace")
    parts = S.assembly(d)
    # Push magnet 2 of the lower disc (22.5°) 3 mm up, 1 mm into the stator: through the
    # 0.5 mm resin cover into coil 2's leg (magnet 1 would rise into coil 1's window).
    i = next(k for k, p in enumerate(parts) if p.name == "magnet_1_2")
    p = parts[i]
    parts[i] = S.Placed(p.name, p.solid, cq.Location(cq.Vector(0, 0, 3)) * p.location, p.colour)
    check = S.check_assembly(parts, S.standing_envelope(d))
    hit = {b if a == "magnet_1_2" else a for a, b, _ in check.collisions if "magnet_1_2" in (a, b)}
    assert {"stator", "coil_2"} <= hit
    assert check.running_clearance_mm == pytest.approx(0.0, abs=1e-6)


# --- what the CAD kernel cannot make ----------------------------------------------------------


@pytest.mark.parametrize(
    ("part", "flat", "key", "shown"),
    [
        ("rotor disc 1 (lower)", lambda d: o.rotor_disc_flat(d, 1), "rotor.disc_thickness_mm", "8.0"),
        ("winding jig cheek", o.jig_cheek_flat, "fab.jig_cheek_thickness_mm", "6.0"),
        # The template's thickness is left to its default, so the error shows the one used.
        ("magnet template for rotor disc 1", lambda d: o.magnet_template_flat(d, 1),
         "fab.template_thickness_mm", "1e-07"),
        # The core is as thick as the coils; the stator's thickness is the key that sets it.
        ("winding jig core", o.jig_core_flat, "stator.thickness_mm", "15.0"),
    ],
)  # fmt: skip
def test_a_part_the_kernel_cannot_make_is_one_line_naming_it(part, flat, key, shown):
    import dataclasses

    from layout.spec import DesignError

    d = design("millrace")
    # Far below what the design file allows: OCCT refuses to extrude a face this little.
    thin = dataclasses.replace(flat(d), thickness_mm=1e-7)
    with pytest.raises(DesignError) as info:
        S.part_solid(d, thin)
    message = str(info.value)
    assert "\n" not in message, message
    assert message.startswith(f"millrace.toml: {key} = {shown}: could not model the {part} (CAD kernel: "), (
        message
    )
    assert message.endswith(f"): check {key}"), message
    assert S.is_kernel_error(info.value.__cause__)


def test_only_the_kernel_s_errors_become_design_errors():
    from OCP.StdFail import StdFail_NotDone

    d = design("millrace")
    assert S.is_kernel_error(StdFail_NotDone("BRep_API: command not done"))
    # Our own mistakes stay bugs, with their traceback.
    with pytest.raises(ZeroDivisionError), S.modelling(d, "rotor disc", "rotor.disc_thickness_mm", 8.0):
        _ = 1 / 0
    with (
        pytest.raises(ValueError, match="ours"),
        S.modelling(d, "rotor disc", "rotor.disc_thickness_mm", 8.0),
    ):
        raise ValueError("ours")
