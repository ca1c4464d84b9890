"""What the build package holds: every file, what it is, how to make it, and its writer.

`catalogue(design)` lists the package's files in manifest order, family by family: the
documents, the rotor discs and their templates, the stator mould, the winding jig and coil,
the stationary steel plate, the assembly. Each `Item` carries the function that writes it;
`Builder` builds each solid once for every file that needs it.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from fab import outlines
from layout.design import Design
from layout.materials import is_printed_binder
from layout.rotor import disc_material, disc_thickness_mm, is_plain_disc, pocket_clearance_mm, rotor_discs

ANGULAR_TOLERANCE_RAD = 0.2  # STL facets: with the linear tolerance, fine enough to print
CLEARANCE_TOL_MM = 1e-3  # the assembly's running clearance must equal the design's to this


@dataclass
class Item:
    """One file of the package and how to make what it describes."""

    file: str
    what: str
    material: str
    make: str  # print | cut | wind | cast | assemble | read
    how: str
    write: Callable[[Builder, Path], dict]
    quantity: int = 1
    worker: bool = False  # written by the second process


class Builder:
    """The design and, per process, each solid built once for all the files that need it."""

    def __init__(self, design: Design):
        self.design = design
        self._cache: dict = {}

    def get(self, key: str, make: Callable):
        if key not in self._cache:
            self._cache[key] = make()
        return self._cache[key]

    def disc(self, disc: int):
        from fab.solids import rotor_disc

        return self.get(f"disc{disc}", lambda: rotor_disc(self.design, disc))

    def jig(self):
        from fab.solids import winding_jig

        return self.get("jig", lambda: winding_jig(self.design))


# --- writers --------------------------------------------------------------------------------


def _solid_info(shape) -> dict:
    c = shape.Center()  # centre of mass of the solid (OCCT volume properties)
    return {
        "volume_mm3": round(float(shape.Volume()), 3),
        "center_of_mass_mm": [round(float(c.x), 6), round(float(c.y), 6), round(float(c.z), 6)],
    }


def write_step(shape, path: Path) -> dict:
    from OCP.IFSelect import IFSelect_RetDone

    if shape.exportStep(str(path)) != IFSelect_RetDone:
        raise OSError(0, "the STEP writer failed", str(path))
    return _solid_info(shape)


def write_stl(
    shape, path: Path, tolerance_mm: float, bed_mm: float = float("inf"), spins: bool = False
) -> dict:
    shape.exportStl(
        str(path),
        tolerance=tolerance_mm,
        angularTolerance=ANGULAR_TOLERANCE_RAD,
        relative=False,
        parallel=False,
    )
    info = _solid_info(shape)
    info["triangles"] = (path.stat().st_size - 84) // 50  # binary STL: 80 + 4 header bytes, 50 a facet
    box = shape.BoundingBox()
    size = sorted((box.xlen, box.ylen), reverse=True)
    info["size_mm"] = [round(box.xlen, 2), round(box.ylen, 2), round(box.zlen, 2)]
    if size[0] > bed_mm and spins:
        info["note"] = (
            f"{size[0]:.0f} mm across, more than fab.print_bed_mm = {bed_mm:g}: a disc that spins is "
            "not printed in glued segments; cut it from sheet with the DXF drawing, or use a larger printer"
        )
    elif size[0] > bed_mm:
        info["note"] = (
            f"{size[0]:.0f} mm across, more than fab.print_bed_mm = {bed_mm:g}, and no split of it fits: "
            "print it on a larger bed, or make it from boards where the package has their drawings"
        )
    return info


def _step(make: Callable[[Builder], object]):
    return lambda b, path: write_step(make(b), path)


def _stl(make: Callable[[Builder], object], spins: bool = False):
    def write(b: Builder, path: Path) -> dict:
        fb = b.design.spec.fab
        return write_stl(make(b), path, fb.stl_tolerance_mm, fb.print_bed_mm, spins)

    return write


def printed_items(
    design: Design,
    name: str,
    what: str,
    material: str,
    how: str,
    make: Callable[[Builder], object],
    outer_radius_mm: float,
    joint_radius_mm: float,
    allowed_rays=None,
    worker: bool = True,
) -> list[Item]:
    """A round printed part as one STL when it fits fab.print_bed_mm; otherwise an STL per
    segment (fab.segments) and one STEP of them all, as printed side by side."""
    from fab.segments import JOIN_WORDS, segment_plan

    fb = design.spec.fab
    plan = segment_plan(outer_radius_mm, joint_radius_mm, fb.print_bed_mm, allowed_rays)
    if plan is None or plan.count == 1:
        return [Item(f"{name}.stl", what, material, "print", how, _stl(make), worker=worker)]

    def segments(b: Builder) -> list:
        from fab.segments import split

        return b.get(f"{name}-segments", lambda: split(make(b), plan))

    joined = how + f"; it is printed in {plan.count} segments that fit the bed: {JOIN_WORDS}"
    items = [
        Item(
            f"{name}_seg{k}.stl",
            f"{what}: segment {k} of {plan.count}",
            material,
            "print",
            joined,
            _stl(lambda b, k=k: segments(b)[k - 1]),
            worker=worker,
        )
        for k in range(1, plan.count + 1)
    ]

    def all_segments(b: Builder, path: Path) -> dict:
        from fab.solids import _cq

        cq = _cq()
        laid = [
            seg.translate(cq.Vector(0, (k - 1) * (fb.print_bed_mm + 10), 0))
            for k, seg in enumerate(segments(b), 1)
        ]
        info = write_step(cq.Compound.makeCompound(laid), path)
        info["segments"] = plan.count
        return info

    items.append(
        Item(
            f"{name}_segments.step",
            f"{what}: its {plan.count} segments as solids",
            material,
            "print",
            joined,
            all_segments,
            worker=worker,
        )  # fmt: skip
    )
    return items


def _dxf(flat_of: Callable[[Design, float], outlines.Flat], material: str):
    from fab.drawings import part_note, write_dxf

    def write(b: Builder, path: Path) -> dict:
        kerf = b.design.spec.fab.kerf_mm
        flat = flat_of(b.design, kerf)
        write_dxf(flat, path, part_note(flat, material, kerf, b.design.spec.name))
        return {"thickness_mm": flat.thickness_mm, "kerf_mm": kerf}

    return write


def _text(render: Callable[[Design], str]):
    def write(b: Builder, path: Path) -> dict:
        path.write_text(render(b.design) + "\n", encoding="utf-8")
        return {}

    return write


def _write_stator_map(b: Builder, path: Path) -> dict:
    from fab.drawings import write_stator_map
    from fab.sheet.stator_map import map_notes

    smap = outlines.stator_map(b.design)
    write_stator_map(smap, path, map_notes(b.design))
    return {"joins": len(smap.joins), "lanes": smap.lanes, "exit_angle_deg": smap.exit_angle_deg}


def _plan_text(design: Design) -> str:
    from fab.report import plan_text

    return plan_text(design)


def _plan_json(design: Design) -> str:
    from fab.report import plan_json, to_json

    return to_json(plan_json(design))


# Cautions every package carries, unless one of the design's warnings (codes) says it already.
_GENERAL_CAUTIONS = (
    (
        {"magnet.pinch"},
        "Magnets crush fingers and snap together: handle one at a time, slide them, keep spacers "
        "between them, wear eye protection.",
    ),
    ({"magnet.pacemaker"}, "Strong magnets upset pacemakers and other implants: keep them away."),
    (
        {"rotor.spinning", "disc.hoop_stress"},
        "Spinning discs burst and throw fragments: balance the rotor, guard it, make the first spins "
        "slow and stand out of the discs' plane.",
    ),
    (
        {"voltage.above_elv", "voltage.open_circuit"},
        "The open-circuit voltage rises with speed and at runaway can be lethal: never let the machine "
        "run unloaded, enclose the terminals and the rectifier.",
    ),
    (
        {"coil.temperature", "coil.overspeed_heat", "coil.current_density"},
        "Coils get hot under load: let them cool before touching the stator.",
    ),
    (
        set(),
        "Casting resin and its hardener burn skin and eyes and their fumes harm the lungs: gloves, "
        "goggles, ventilation, and the resin maker's data sheet.",
    ),
)


def safety_text(design: Design) -> str:
    """The cautions of this design, with its figures, and the ones every build carries."""
    spec = design.spec
    out = [
        f"SAFETY: {spec.name} ({spec.purpose})",
        "",
        "Read this before making anything. The figures come from this design's model: check them.",
    ]
    for severity, heading in (("danger", "DANGER"), ("warning", "WARNING"), ("info", "GOOD PRACTICE")):
        ws = [w for w in design.warnings if w.severity == severity]
        if ws:
            out += ["", heading]
            out += [f"- {w.message} [{w.code}]" for w in ws]
    codes = {w.code for w in design.warnings}
    general = [line for covered, line in _GENERAL_CAUTIONS if not codes & covered]
    if general:
        out += ["", "ALWAYS"] + [f"- {line}" for line in general]
    out += [
        "",
        "This package is a design aid, not a certified design. Follow local codes and licensed "
        "practice, and have a licensed electrician check anything connected to a building's wiring.",
    ]
    return "\n".join(out)


# --- the catalogue of files -------------------------------------------------------------------


def catalogue(design: Design) -> list[Item]:
    """Every file of the package, in the order of the manifest."""
    return [
        *document_items(design),
        *rotor_items(design),
        *mould_items(design),
        *winding_items(design),
        *plate_items(design),
        *assembly_items(design),
    ]


def document_items(design: Design) -> list[Item]:
    """The cautions and the plan, as text and as JSON."""
    return [
        Item(
            "SAFETY.txt",
            "cautions for building and running this machine",
            "-",
            "read",
            "read it first",
            _text(safety_text),
        ),
        Item(
            "plan.txt",
            "winding layout, predicted output, forces and warnings",
            "-",
            "read",
            "the design's figures as tables",
            _text(_plan_text),
        ),
        Item("plan.json", "the same as plan.txt, for scripts", "-", "read", "", _text(_plan_json)),
        Item(
            "stator_map.dxf",
            "stator map, full size: every position's number, phase and polarity, each coil's leads, "
            "every join and the terminals at the lead exits",
            "-",
            "read",
            "print it full size or lay it beside the mould; join the leads as drawn",
            _write_stator_map,
        ),
    ]


def rotor_items(design: Design) -> list[Item]:
    """Each rotor disc as a solid, for the printer and flat; a placing template for each steel
    disc that carries magnets (a plain steel disc has none to place)."""
    from fab import solids

    spec = design.spec
    lay = outlines.disc_layout(design)
    jack = lay.jacking
    tapped = f"tap the {lay.balance_screw} balance holes"
    items: list[Item] = []
    for disc in rotor_discs(spec):
        name, role = f"rotor_disc_{disc}", outlines.rotor_disc_flat(design, disc).title
        mat = disc_material(spec, disc)
        steel, plain = mat.magnetic, is_plain_disc(spec, disc)
        up = "face towards the stator up" if plain else "magnet side up"
        if steel:
            make = "cut"
            thick = disc_thickness_mm(spec, disc)
            how = (
                f"cut from {thick:g} mm {mat.name} plate (laser or waterjet) along CUT; "
                f"etch or scribe ENGRAVE; {tapped}"
            )
        elif mat.printed:
            make = "print"
            how = (
                "print magnet side up, solid infill; glue each magnet into its pocket with two-part "
                "epoxy, the marked face up, and let it cure fully before the first spin"
            )
        else:
            make = "cut"
            how = (
                f"cut along CUT, mill the POCKET outlines {lay.pocket_depth_mm:g} mm deep; {tapped}; "
                "glue each magnet into its pocket, the marked face up, and let it cure"
            )
        if jack is not None and jack.on == "disc 2" and disc == 2:
            how += f"; tap the {jack.screw} jacking screw holes"
        disc_solid = _step(lambda b, d=disc: b.disc(d))
        items.append(Item(f"{name}.step", f"{role}, solid as made ({up})", mat.name, make, how, disc_solid))
        if mat.printed:
            items.append(
                Item(
                    f"{name}.stl",
                    f"{role} for the printer",
                    mat.name,
                    "print",
                    how,
                    _stl(lambda b, d=disc: b.disc(d), spins=True),
                    worker=True,  # the other process has no templates to make for a printed disc
                )
            )
        items.append(
            Item(
                f"{name}.dxf",
                f"{role}, flat drawing",
                mat.name,
                make,
                how,
                _dxf(lambda d_, k, d=disc: outlines.rotor_disc_flat(d_, d, k), mat.name),
            )
        )
        if steel and not plain:
            how = (
                "print, or cut from plywood or acrylic; pin it to the disc with two dowels, set each magnet "
                "in its place with the marked face up, glue, lift the template off when cured"
            )
            tpl = f"magnet_template_{disc}"
            what = f"magnet placing template for {role}, {pocket_clearance_mm(spec):g} mm a side"

            def template(b, d=disc):
                return b.get(f"template{d}", lambda: solids.magnet_template(b.design, d))

            items.extend(
                printed_items(
                    design,
                    tpl,
                    what,
                    "printed PETG or PLA",
                    how,
                    template,
                    lay.outer_radius_mm,
                    design.spec.magnets.pitch_radius_mm,
                    lambda _lap, d=disc: outlines.template_split_rays(design, d),
                )
            )
            items.append(
                Item(
                    f"{tpl}.dxf",
                    what + ", flat drawing",
                    "plywood or acrylic",
                    "cut",
                    how,
                    _dxf(lambda d_, k, d=disc: outlines.magnet_template_flat(d_, d, k), "plywood or acrylic"),
                )
            )
    return items


def mould_items(design: Design) -> list[Item]:
    """The stator's casting mould (one printed piece, or boards cut from the drawings) and its
    lid; or, for a printable binder, the printed frame and coil formers in its place."""
    from fab import solids

    if is_printed_binder(design.spec.stator.binder):
        return printed_stator_items(design)

    def mould(b):
        return b.get("mould", lambda: solids.stator_mould(b.design))

    n_coils = len(design.geometry.coil_indices)
    sl = outlines.stator_layout(design)
    how = (
        f"wax it; pour a first layer {design.spec.stator.resin_cover_mm:g} mm thick and let it gel, lay the "
        "coils over their places as the stator map numbers them, bring the phase ends out through the "
        "lead slots (sealed with clay), fill it"
    )
    items = [
        Item(
            "stator_mould.step",
            "casting mould for the stator, one piece",
            "printed PETG, or boards",
            "print",
            how,
            _step(mould),
            worker=True,
        ),
        *printed_items(
            design,
            "stator_mould",
            "casting mould for the printer",
            "PETG",
            how,
            mould,
            *outlines.mould_split(design),
        ),
    ]
    for flat in outlines.mould_flats(design):
        qty = n_coils if flat.part == "stator_mould_core" else 1
        items.append(
            Item(
                f"{flat.part}.dxf",
                f"{flat.title}: the mould from boards",
                "plywood or MDF",
                "cut",
                f"cut from {flat.thickness_mm:g} mm board; glue the frame, island and places on the base "
                "where drawn",
                _dxf(lambda d_, k, p=flat.part: _mould_flat(d_, k, p), "plywood or MDF"),
                qty,
            )
        )
    lid_how = (
        "wax it or cover it with packing tape; once the mould is filled, lay it on from one side so "
        "no air is trapped, clamp it down on the frame (or weigh it) until resin comes out of every "
        "vent, and leave it clamped until the resin has cured"
    )

    def lid(b):
        return b.get("lid", lambda: solids.mould_lid(b.design))

    items.append(
        Item(
            "stator_mould_lid.dxf",
            "lid of the mould: keeps the casting flat and as thick as designed",
            "plywood, MDF or acrylic",
            "cut",
            f"cut from {design.spec.stator.mould_wall_mm:g} mm board; " + lid_how,
            _dxf(lambda d_, k: outlines.mould_lid_flat(d_, k), "plywood, MDF or acrylic"),
        )  # fmt: skip
    )
    items += printed_items(
        design, "stator_mould_lid", "lid of the mould, for the printer", "PETG", "print it flat; " + lid_how,
        lid, sl.mould_radius_mm, (sl.inner_radius_mm + sl.mould_radius_mm) / 2,
    )  # fmt: skip
    return items


def printed_stator_items(design: Design) -> list[Item]:
    """The printed stator: its frame (in segments where it outgrows the bed) and a coil former
    per coil, which the coil is wound on and stays on in its pocket."""
    from fab import solids

    n_coils = len(design.geometry.coil_indices)
    binder = design.spec.stator.binder.upper()

    def frame(b):
        return b.get("frame", lambda: solids.stator_frame(b.design))

    def former(b):
        return b.get("former", lambda: solids.coil_former(b.design))

    frame_how = (
        "print flat, top face up, 100 % infill round the lugs; glue each former with its coil into its "
        "pocket (two-part epoxy), flange down and flush with the bottom face, at the position the stator "
        "map numbers; lay the leads in the channel and out through the grooves at the exits"
    )
    former_how = (
        "print flange down; wind the coil on the core against the flange (clamp the jig's other cheek on "
        "top), tag its leads S and F and leave it on the former"
    )
    return [
        Item("stator_frame.step", "printed stator frame, solid as made", binder, "print", frame_how,
             _step(frame), worker=True),
        *printed_items(design, "stator_frame", "printed stator frame", binder, frame_how, frame,
                       *outlines.frame_split(design)),
        Item("coil_former.step", "coil former (bobbin), solid as made", binder, "print", former_how,
             _step(former), n_coils, worker=True),
        Item("coil_former.stl", "coil former (bobbin) for the printer", binder, "print", former_how,
             _stl(former), n_coils, worker=True),
    ]  # fmt: skip


def winding_items(design: Design) -> list[Item]:
    """The winding jig (stacked, core, cheeks; printed or cut) and one coil as wound."""
    pred = design.prediction
    wire = pred.wire.name + (f" x {pred.wire.strands} in hand" if pred.wire.strands > 1 else "")
    how = (
        f"bolt the core between the cheeks on a winder shaft, pins through; wind {pred.turns_per_coil} "
        f"turns of {wire}, start lead out through the slot; tie the coil before taking the jig apart"
    )
    return [
        Item(
            "winding_jig.step",
            "coil winding jig, stacked as used",
            "printed, or plywood",
            "print",
            how,
            _step(lambda b: b.jig()["stack"]),
        ),
        Item(
            "winding_jig_core.stl",
            "winding jig core: the coil's hole",
            "printed PETG or PLA",
            "print",
            how,
            _stl(lambda b: b.jig()["core"]),
        ),
        Item(
            "winding_jig_cheek.stl",
            "winding jig cheek",
            "printed PETG or PLA",
            "print",
            how,
            _stl(lambda b: b.jig()["cheek"]),
            2,
        ),
        Item(
            "winding_jig_core.dxf",
            "winding jig core, flat drawing",
            "board as thick as the coil",
            "cut",
            how,
            _dxf(outlines.jig_core_flat, "board"),
        ),
        Item(
            "winding_jig_cheek.dxf",
            "winding jig cheek, flat drawing",
            "plywood",
            "cut",
            how,
            _dxf(outlines.jig_cheek_flat, "plywood"),
            2,
        ),
        Item(
            "coil.step",
            f"one coil as wound: {pred.turns_per_coil} turns of {wire}",
            "enamelled copper",
            "wind",
            "wind them all alike on the jig",
            _step(_coil),
            len(design.geometry.coil_indices),
            worker=True,
        ),
    ]


def plate_items(design: Design) -> list[Item]:
    """The steel plate behind a stator that stands still (one-disc steel-stator machines)."""
    from fab import solids

    ro = design.spec.rotor
    if ro.topology != "one_disc_steel_stator":
        return []
    jack = outlines.disc_layout(design).jacking
    how = f"cut from {ro.stator_plate_thickness_mm:g} mm steel plate"
    if jack is not None and jack.on == "stator plate":
        how += f"; tap the {jack.screw} jacking screw holes"
    return [
        Item(
            "stator_plate.step",
            "steel plate behind the stator",
            "steel",
            "cut",
            how,
            _step(lambda b: solids.stator_plate(b.design)),
            worker=True,
        ),
        Item(
            "stator_plate.dxf",
            "steel plate behind the stator, flat drawing",
            "steel",
            "cut",
            how,
            _dxf(outlines.stator_plate_flat, "steel"),
        ),
    ]


def assembly_items(design: Design) -> list[Item]:
    """The machine assembled, checked for collisions and for the running clearance."""
    return [
        Item(
            "assembly.step",
            "the machine assembled: discs, magnets, stator and coils in place",
            "-",
            "assemble",
            "for checking fits and designing the frame; magnets N up red, S up blue",
            _write_assembly,
        ),
    ]


def _mould_flat(design: Design, kerf: float, part: str) -> outlines.Flat:
    return next(f for f in outlines.mould_flats(design, kerf) if f.part == part)


def _coil(b: Builder):
    from fab.solids import coil_solid

    return coil_solid(b.design, b.design.geometry.coil_indices[0])


def _write_assembly(b: Builder, path: Path) -> dict:
    from fab.solids import assembly, check_assembly, standing_envelope, write_assembly_step

    design = b.design
    parts = assembly(design, {d: b.disc(d) for d in rotor_discs(design.spec)})
    check = check_assembly(parts, standing_envelope(design))
    want = design.spec.rotor.running_clearance_mm
    if check.collisions:
        a, c, v = check.collisions[0]
        raise RuntimeError(f"assembly: {a} and {c} share {v:.3f} mm³ (parts must not collide)")
    if abs(check.running_clearance_mm - want) > CLEARANCE_TOL_MM:
        raise RuntimeError(
            f"assembly: running clearance {check.running_clearance_mm:.4f} mm, the design asks {want:g}"
        )
    write_assembly_step(parts, str(path), design.spec.name)
    return {
        "volume_mm3": round(sum(float(p.solid.Volume()) for p in parts), 3),
        "parts": len(parts),
        "collision_pairs_checked": check.pairs_checked,
        "collisions": len(check.collisions),
        "running_clearance_mm": round(check.running_clearance_mm, 6),
        "gap_as_placed_mm": round(check.placed_gap_mm, 6),
    }


# --- writing ---------------------------------------------------------------------------------
