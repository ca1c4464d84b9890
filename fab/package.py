"""The build package: every file to make the machine, written atomically with a manifest.

`build_package(design_path, out)` checks every part on its outlines, then writes into a
temporary folder beside the target (`out/.NAME.tmp-XXXX`): the plan, safety notes, DXF
drawings, STEP and STL solids, the assembly (checked for collisions and for the running
clearance) and manifest.json with each file's SHA-256. Only when all of it is written is the
folder renamed into place; a previous package is moved aside first and deleted only after
the new one is in place. Any failure or interruption removes the temporary folder and
leaves the previous package as it was.

Part solids are written by a second process while this one writes the drawings and the
assembly. It is a fresh interpreter (not a fork: OCCT's thread pools do not survive one) that
reads the computed design and the names of its files from its stdin and sends back what it
wrote on its stdout; `jobs=1` does it all here.
"""

from __future__ import annotations

import hashlib
import json
import os
import pickle
import secrets
import shutil
import subprocess
import sys
import tempfile
import threading
import time
from collections.abc import Callable
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from fab import OutputError, outlines
from fab.fit import check_parts
from layout.design import Design, compute_design
from layout.materials import DISC_MATERIALS
from layout.rotor import disc_count, is_steel_disc, pocket_clearance_mm
from layout.spec import load_spec

MANIFEST = "manifest.json"
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


def write_stl(shape, path: Path, tolerance_mm: float, bed_mm: float = float("inf")) -> dict:
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
    if size[0] > bed_mm:
        info["note"] = (
            f"{size[0]:.0f} mm across, more than fab.print_bed_mm = {bed_mm:g}: print it in parts "
            "or make it from the DXF drawings"
        )
    return info


def _step(make: Callable[[Builder], object]):
    return lambda b, path: write_step(make(b), path)


def _stl(make: Callable[[Builder], object]):
    def write(b: Builder, path: Path) -> dict:
        fb = b.design.spec.fab
        return write_stl(make(b), path, fb.stl_tolerance_mm, fb.print_bed_mm)

    return write


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


def _plan_text(design: Design) -> str:
    from fab.report import plan_text

    return plan_text(design)


def _plan_json(design: Design) -> str:
    from fab.report import plan_json

    return json.dumps(plan_json(design), indent=2)


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
    from fab import solids

    spec, geo, pred = design.spec, design.geometry, design.prediction
    ro = spec.rotor
    mat = DISC_MATERIALS[ro.disc_material]
    steel = is_steel_disc(spec)
    items: list[Item] = []

    def add(file, what, material, make, how, write, quantity=1, worker=False):
        items.append(Item(file, what, material, make, how, write, quantity, worker))

    add(
        "SAFETY.txt",
        "cautions for building and running this machine",
        "-",
        "read",
        "read it first",
        _text(safety_text),
    )
    add(
        "plan.txt",
        "winding layout, predicted output, forces and warnings",
        "-",
        "read",
        "the design's figures as tables",
        _text(_plan_text),
    )
    add("plan.json", "the same as plan.txt, for scripts", "-", "read", "", _text(_plan_json))

    lay = outlines.disc_layout(design)
    jack = lay.jacking
    tapped = f"tap the {lay.balance_screw} balance holes"
    for disc in range(1, disc_count(spec) + 1):
        name, role = f"rotor_disc_{disc}", outlines.rotor_disc_flat(design, disc).title
        if steel:
            make = "cut"
            how = (
                f"cut from {ro.disc_thickness_mm:g} mm {mat.name} plate (laser or waterjet) along CUT; "
                f"etch or scribe ENGRAVE; {tapped}"
            )
        elif mat.printed:
            make = "print"
            how = "print magnet side up, solid infill; put each magnet in its pocket with the marked face up"
        else:
            make = "cut"
            how = f"cut along CUT, mill the POCKET outlines {lay.pocket_depth_mm:g} mm deep; {tapped}"
        if jack is not None and jack.on == "disc 2" and disc == 2:
            how += f"; tap the {jack.screw} jacking screw holes"
        disc_solid = _step(lambda b, d=disc: b.disc(d))
        add(f"{name}.step", f"{role}, solid as made (magnet side up)", mat.name, make, how, disc_solid)
        if mat.printed:
            add(
                f"{name}.stl",
                f"{role} for the printer",
                mat.name,
                "print",
                how,
                _stl(lambda b, d=disc: b.disc(d)),
                worker=True,  # the other process has no templates to make for a printed disc
            )
        add(
            f"{name}.dxf",
            f"{role}, flat drawing",
            mat.name,
            make,
            how,
            _dxf(lambda d_, k, d=disc: outlines.rotor_disc_flat(d_, d, k), mat.name),
        )
        if steel:
            how = (
                "print, or cut from plywood or acrylic; pin it to the disc with two dowels, set each magnet "
                "in its place with the marked face up, glue, lift the template off when cured"
            )
            tpl = f"magnet_template_{disc}"
            what = f"magnet placing template for {role}, {pocket_clearance_mm(spec):g} mm a side"

            def template(b, d=disc):
                return b.get(f"template{d}", lambda: solids.magnet_template(b.design, d))

            add(f"{tpl}.stl", what, "printed PETG or PLA", "print", how, _stl(template), worker=True)
            add(
                f"{tpl}.dxf",
                what + ", flat drawing",
                "plywood or acrylic",
                "cut",
                how,
                _dxf(lambda d_, k, d=disc: outlines.magnet_template_flat(d_, d, k), "plywood or acrylic"),
            )

    def mould(b):
        return b.get("mould", lambda: solids.stator_mould(b.design))

    n_coils = len(geo.coil_indices)
    how = (
        f"wax it; pour a first layer {spec.stator.resin_cover_mm:g} mm thick and let it gel, lay the coils "
        "over their places, bring the phase ends out through the lead slots (sealed with clay), fill it"
    )
    add(
        "stator_mould.step",
        "casting mould for the stator, one piece",
        "printed PETG, or boards",
        "print",
        how,
        _step(mould),
        worker=True,
    )
    add("stator_mould.stl", "casting mould for the printer", "PETG", "print", how, _stl(mould), worker=True)
    for flat in outlines.mould_flats(design):
        qty = n_coils if flat.part == "stator_mould_core" else 1
        add(
            f"{flat.part}.dxf",
            f"{flat.title}: the mould from boards",
            "plywood or MDF",
            "cut",
            f"cut from {flat.thickness_mm:g} mm board; glue the frame, island and places on the base "
            "where drawn",
            _dxf(lambda d_, k, p=flat.part: _mould_flat(d_, k, p), "plywood or MDF"),
            qty,
        )

    wire = pred.wire.name + (f" x {pred.wire.strands} in hand" if pred.wire.strands > 1 else "")
    how = (
        f"bolt the core between the cheeks on a winder shaft, pins through; wind {pred.turns_per_coil} "
        f"turns of {wire}, start lead out through the slot; tie the coil before taking the jig apart"
    )
    add(
        "winding_jig.step",
        "coil winding jig, stacked as used",
        "printed, or plywood",
        "print",
        how,
        _step(lambda b: b.jig()["stack"]),
    )
    add(
        "winding_jig_core.stl",
        "winding jig core: the coil's hole",
        "printed PETG or PLA",
        "print",
        how,
        _stl(lambda b: b.jig()["core"]),
    )
    add(
        "winding_jig_cheek.stl",
        "winding jig cheek",
        "printed PETG or PLA",
        "print",
        how,
        _stl(lambda b: b.jig()["cheek"]),
        2,
    )
    add(
        "winding_jig_core.dxf",
        "winding jig core, flat drawing",
        "board as thick as the coil",
        "cut",
        how,
        _dxf(outlines.jig_core_flat, "board"),
    )
    add(
        "winding_jig_cheek.dxf",
        "winding jig cheek, flat drawing",
        "plywood",
        "cut",
        how,
        _dxf(outlines.jig_cheek_flat, "plywood"),
        2,
    )
    add(
        "coil.step",
        f"one coil as wound: {pred.turns_per_coil} turns of {wire}",
        "enamelled copper",
        "wind",
        "wind them all alike on the jig",
        _step(_coil),
        n_coils,
        worker=True,
    )

    if ro.topology == "one_disc_steel_stator":
        how = f"cut from {ro.stator_plate_thickness_mm:g} mm steel plate"
        if jack is not None and jack.on == "stator plate":
            how += f"; tap the {jack.screw} jacking screw holes"
        add(
            "stator_plate.step",
            "steel plate behind the stator",
            "steel",
            "cut",
            how,
            _step(lambda b: solids.stator_plate(b.design)),
            worker=True,
        )
        add(
            "stator_plate.dxf",
            "steel plate behind the stator, flat drawing",
            "steel",
            "cut",
            how,
            _dxf(outlines.stator_plate_flat, "steel"),
        )
    add(
        "assembly.step",
        "the machine assembled: discs, magnets, stator and coils in place",
        "-",
        "assemble",
        "for checking fits and designing the frame; magnets N up red, S up blue",
        _write_assembly,
    )
    return items


def _mould_flat(design: Design, kerf: float, part: str) -> outlines.Flat:
    return next(f for f in outlines.mould_flats(design, kerf) if f.part == part)


def _coil(b: Builder):
    from fab.solids import coil_solid

    return coil_solid(b.design, b.design.geometry.coil_indices[0])


def _write_assembly(b: Builder, path: Path) -> dict:
    from fab.solids import assembly, check_assembly, standing_envelope, write_assembly_step

    design = b.design
    parts = assembly(design, {d: b.disc(d) for d in range(1, disc_count(design.spec) + 1)})
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


def _sha256(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for chunk in iter(lambda: f.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def _run(items: list[Item], builder: Builder, tmp: Path, progress) -> dict[str, dict]:
    out = {}
    for item in items:
        if progress:
            progress(f"writing {item.file}")
        out[item.file] = item.write(builder, tmp / item.file)
    return out


def worker_main() -> None:
    """Second process: write the files it is given of the design's catalogue, report on stdout.

    Loads the CAD kernel first, while the first process is still computing the design, then
    reads a pickle of (design, folder, file names, whether to show progress) from stdin, or
    None to stop; writes a pickle of ("ok", {file: info}) or (kind, message) to what was
    stdout. Anything the CAD kernel prints goes to stderr, so it cannot spoil the report.
    """
    report = os.fdopen(os.dup(1), "wb")
    os.dup2(2, 1)
    try:
        import cadquery  # noqa: F401 - the slow import, done while the design is computed

        job = pickle.load(sys.stdin.buffer)
        if job is None:
            return
        design, tmp, files, verbose = job
        items = [i for i in catalogue(design) if i.file in files]

        def say(step: str) -> None:
            print(f"  {step} (second process)", file=sys.stderr, flush=True)

        result = ("ok", _run(items, Builder(design), Path(tmp), say if verbose else None))
    except OSError as exc:
        result = ("oserror", f"cannot write {exc.filename or 'the package'}: {exc.strerror or exc}")
    except BaseException as exc:  # noqa: BLE001 - reported to the parent, which raises it
        result = ("error", f"{type(exc).__name__}: {exc}")
    report.write(pickle.dumps(result))
    report.close()


def _start_worker() -> subprocess.Popen:
    code = "from fab.package import worker_main; worker_main()"
    return subprocess.Popen([sys.executable, "-c", code], stdin=subprocess.PIPE, stdout=subprocess.PIPE)


def _send(proc: subprocess.Popen, job) -> None:
    """Hand the job over without waiting: the pipe may be fuller than its buffer while the
    other process is still loading the CAD kernel."""
    data = pickle.dumps(job)

    def write() -> None:
        try:
            proc.stdin.write(data)
            proc.stdin.close()
        except (BrokenPipeError, ValueError, OSError):
            pass  # it has stopped; its result (or its absence) says why

    threading.Thread(target=write, daemon=True).start()


def _worker_result(proc: subprocess.Popen) -> dict:
    raw = proc.stdout.read()
    proc.stdout.close()
    proc.wait()
    try:
        status, payload = pickle.loads(raw)
    except Exception:  # noqa: BLE001 - a crashed worker leaves nothing readable
        status, payload = "error", f"the second process stopped (exit code {proc.returncode})"
    if status == "oserror":
        raise OutputError(payload)
    if status != "ok":
        raise RuntimeError(f"writing part solids: {payload}")
    return payload


def _check_target(target: Path, names: set[str]) -> None:
    """Refuse to replace anything but a folder of files a package holds."""
    if target.exists() and not target.is_dir():
        raise OutputError(f"{target}: is a file, not a package folder; choose another --out")
    if not target.is_dir():
        return
    known = set(names) | {MANIFEST}
    try:
        old = json.loads((target / MANIFEST).read_text(encoding="utf-8"))
        known |= {f["file"] for f in old.get("files", [])}
    except (OSError, ValueError, TypeError, KeyError, AttributeError):
        pass
    foreign = sorted(p.name for p in target.iterdir() if p.name not in known or not p.is_file())
    if foreign:
        shown = ", ".join(foreign[:3]) + (" ..." if len(foreign) > 3 else "")
        raise OutputError(
            f"{target}: holds {shown}, which a build package does not; move it or choose another --out"
        )


def install(tmp: Path, target: Path) -> None:
    """Put the finished folder in place; the old package goes only once the new one is there."""
    old = None
    if target.exists():
        old = target.parent / f".{target.name}.old-{secrets.token_hex(4)}"
        os.rename(target, old)
    try:
        os.rename(tmp, target)
    except BaseException:
        if old is not None:
            os.rename(old, target)
        raise
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


@dataclass(frozen=True)
class BuildResult:
    target: Path
    files: tuple[str, ...]
    seconds: float


def build_package(
    design_path: str | Path,
    out: str | Path | None = None,
    progress: Callable[[str], None] | None = None,
    jobs: int = 2,
) -> BuildResult:
    """Check, write and install the whole package of a design; see the module's docstring."""
    t0 = time.perf_counter()
    say = progress or (lambda _msg: None)
    parallel = jobs > 1 and (os.cpu_count() or 1) > 1
    proc = _start_worker() if parallel else None
    tmp = None
    try:
        say("computing the design")
        design = compute_design(load_spec(design_path))
        say("checking the parts")
        check_parts(design)
        target = Path(out) if out is not None else Path("out") / design.spec.name
        items = catalogue(design)
        _check_target(target, {i.file for i in items} | set(_late_names(design)))
        tmp = _make_tmp(target)
        # Text and drawings first: they need no CAD, so they run while the other process loads it.
        mine = [i for i in items if not (parallel and i.worker)]
        mine.sort(key=lambda i: not i.file.endswith((".txt", ".json", ".dxf")))
        theirs = [i for i in items if parallel and i.worker]
        if theirs:
            _send(proc, (design, str(tmp), [i.file for i in theirs], progress is not None))
            say(f"writing {len(theirs)} part solids in a second process")
        elif proc is not None:
            _discard(None, proc)  # nothing for it to do
            proc = None
        infos = _run(mine, Builder(design), tmp, say)
        if theirs:
            say("waiting for the part solids")
            infos.update(_worker_result(proc))
            proc = None
        say("writing the balance plan and the build sheet")
        late = _write_balance_and_sheet(design, items, infos, tmp)
        items = items + late
        say("writing manifest.json")
        _write_manifest(design, items, infos, tmp, design_path)
        say(f"installing {target}")
        install(tmp, target)
    except OSError as exc:
        _discard(tmp, proc)
        raise OutputError(f"cannot write {exc.filename or 'the package'}: {exc.strerror or exc}") from None
    except BaseException:
        _discard(tmp, proc)
        raise
    return BuildResult(target, tuple(i.file for i in items) + (MANIFEST,), time.perf_counter() - t0)


def _late_names(design: Design) -> tuple[str, str, str]:
    return ("balance.txt", "balance.json", f"{design.spec.name}-sheet.pdf")


def _disc_bodies_from(design: Design, infos: dict):
    """The discs' mass properties from the solids just written (volume, centre of mass)."""
    from fab.massprops import bodies_from_props

    props = {}
    for disc in sorted({m.disc for m in design.geometry.magnets}):
        info = infos[f"rotor_disc_{disc}.step"]
        props[disc] = (info["volume_mm3"], tuple(info["center_of_mass_mm"][:2]))
    return bodies_from_props(design, props)


def _write_balance_and_sheet(design: Design, items: list[Item], infos: dict, tmp: Path) -> list[Item]:
    """Balance plan (nominal magnets; weighed ones via `statorsmith balance --masses`) and
    the build sheet, which need the discs' solids and the list of files."""
    from fab.report import balance_json, balance_text
    from fab.sheet import write_sheet
    from layout.balance import balance_rotor

    rb = balance_rotor(design, _disc_bodies_from(design, infos), None)
    txt, js, pdf = _late_names(design)
    (tmp / txt).write_text(balance_text(rb, design.spec.name) + "\n", encoding="utf-8")
    (tmp / js).write_text(json.dumps(balance_json(rb), indent=2) + "\n", encoding="utf-8")
    files = [(i.file, i.what, i.how) for i in items]
    files += [
        (txt, "rotor balance: ISO 21940-11 check, placement, bench procedure", "read"),
        (js, "the same as balance.txt, for scripts", "read"),
        (pdf, "build sheet for the bench: print it in black and white", "print on paper"),
    ]
    write_sheet(design, tmp / pdf, balance=rb, files=files)

    def done(_b, _p):
        return {}

    return [
        Item(
            txt,
            "rotor balance: ISO 21940-11 check, nominal placement, bench procedure",
            "-",
            "read",
            "weigh the magnets and run statorsmith balance --masses for a placement",
            done,
        ),
        Item(js, "the same as balance.txt, for scripts", "-", "read", "", done),
        Item(
            pdf,
            "build sheet: summary, magnet maps, winding checklist, wiring, curves, tests",
            "paper",
            "print",
            "A4, black and white",
            done,
        ),
    ]


def _make_tmp(target: Path) -> Path:
    """The folder to build in, beside the target, with ordinary permissions."""
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        tmp = Path(tempfile.mkdtemp(prefix=f".{target.name}.tmp-", dir=target.parent))
    except OSError as exc:
        raise OutputError(f"{target.parent}: cannot write here ({exc.strerror or exc})") from None
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp, 0o777 & ~umask)  # an ordinary folder once installed, not mkdtemp's private one
    return tmp


def _discard(tmp: Path | None, proc: subprocess.Popen | None) -> None:
    if proc is not None:
        if proc.poll() is None:
            proc.kill()
        proc.wait()
        for stream in (proc.stdin, proc.stdout):
            if stream and not stream.closed:
                stream.close()
    if tmp is not None:
        shutil.rmtree(tmp, ignore_errors=True)


def _write_manifest(design: Design, items: list[Item], infos: dict, tmp: Path, design_path) -> None:
    from importlib.metadata import version

    spec = design.spec
    files = []
    for item in items:
        path = tmp / item.file
        entry = {
            "file": item.file,
            "what": item.what,
            "material": item.material,
            "make": item.make,
            "quantity": item.quantity,
            "how": item.how,
            "bytes": path.stat().st_size,
            "sha256": _sha256(path),
        }
        entry.update(infos.get(item.file, {}))
        files.append(entry)
    assembly = infos.get("assembly.step", {})
    manifest = {
        "name": spec.name,
        "purpose": spec.purpose,
        "design_file": Path(design_path).name,
        "generator": f"statorsmith {version('statorsmith')}",
        "created_utc": datetime.now(UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "units": "mm",
        "checks": {
            "parts_fit": True,
            "collisions": assembly.get("collisions"),
            "collision_pairs_checked": assembly.get("collision_pairs_checked"),
            "running_clearance_mm": assembly.get("running_clearance_mm"),
            "design_running_clearance_mm": spec.rotor.running_clearance_mm,
        },
        "warnings": [{"code": w.code, "severity": w.severity} for w in design.warnings],
        "files": files,
    }
    (tmp / MANIFEST).write_text(json.dumps(manifest, indent=2) + "\n", encoding="utf-8")
