"""The build package: what it holds, its manifest, its files read back, and atomic writing."""

from __future__ import annotations

import hashlib
import io
import json
import math
import os
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import cadquery as cq
import ezdxf
import numpy as np
import pytest
from conftest import OLD_ONLY, REPO
from demos import design
from test_solids import edge_uses, read_step, read_stl

from fab import OutputError
from fab import outlines as o
from fab import package as pkg
from fab.cli import main
from fab.fit import check_parts
from fab.report import plan_text
from layout.advice import with_suggestions

DESIGN = REPO / "designs" / "millrace.toml"
MAKES = {"print", "cut", "wind", "assemble", "read"}


def test_build_is_quiet_and_says_where(millrace_package):
    b = millrace_package
    assert b.exit_code == 0, b.stderr
    assert b.stderr == ""  # stderr is not a terminal: no progress
    assert b.stdout.startswith(f"written: {b.folder} (") and b.stdout.count("\n") == 1


def test_manifest_lists_every_file_with_its_hash(millrace_package):
    b = millrace_package
    m = b.manifest
    files = {f["file"]: f for f in m["files"]}
    on_disk = {p.name for p in b.folder.iterdir()}
    assert on_disk == set(files) | {"manifest.json"}
    for name, f in files.items():
        data = (b.folder / name).read_bytes()
        assert f["sha256"] == hashlib.sha256(data).hexdigest(), name
        assert f["bytes"] == len(data)
        assert f["make"] in MAKES and f["what"] and f["material"] and f["quantity"] >= 1
    assert m["name"] == "millrace" and m["units"] == "mm" and m["design_file"] == "millrace.toml"
    assert m["checks"]["collisions"] == 0
    assert m["checks"]["running_clearance_mm"] == pytest.approx(2.0, abs=1e-6)
    assert [w["code"] for w in m["warnings"]] == [w.code for w in design("millrace").warnings]


def test_package_holds_every_part(millrace_package):
    names = {f["file"] for f in millrace_package.manifest["files"]}
    for disc in (1, 2):
        assert {f"rotor_disc_{disc}.step", f"rotor_disc_{disc}.dxf"} <= names
        assert {f"magnet_template_{disc}_seg1.stl", f"magnet_template_{disc}.dxf"} <= names  # steel discs
        assert f"rotor_disc_{disc}.stl" not in names  # cut, not printed
    assert {"stator_mould.step", "stator_mould_seg1.stl", "winding_jig.step", "winding_jig_core.stl"} <= names
    assert {"winding_jig_cheek.stl", "coil.step", "assembly.step", "SAFETY.txt", "plan.txt"} <= names
    assert {"stator_mould_base.dxf", "stator_mould_frame.dxf", "stator_mould_island.dxf"} <= names
    assert {"stator_mould_lid.dxf", "stator_mould_lid_seg1.stl", "stator_map.dxf"} <= names
    files = {f["file"]: f for f in millrace_package.manifest["files"]}
    assert files["coil.step"]["quantity"] == 12 and files["coil.step"]["make"] == "wind"
    assert files["winding_jig_cheek.stl"]["quantity"] == 2
    assert files["stator_mould_core.dxf"]["quantity"] == 12
    # The 351 mm mould is larger than a 250 mm printer bed: it comes in segments that fit.
    assert "stator_mould.stl" not in names
    assert "segments that fit the bed" in files["stator_mould_seg1.stl"]["how"]


def _printed_fit(folder, manifest):
    """Every printed STL fits fab.print_bed_mm, measured on the file's own triangles, and each
    segments STEP reads back as that many valid solids."""
    bed = 250.0  # the demos keep fab.print_bed_mm's default
    stls = [f for f in manifest["files"] if f["file"].endswith(".stl")]
    assert stls
    for f in stls:
        pts = read_stl(folder / f["file"]).reshape(-1, 3)
        size = pts.max(axis=0) - pts.min(axis=0)
        assert size[0] <= bed + 1e-6 and size[1] <= bed + 1e-6, (f["file"], size)
        assert "note" not in f, f["file"]
    for f in manifest["files"]:
        if f["file"].endswith("_segments.step"):
            shape = cq.importers.importStep(str(folder / f["file"])).val()
            solids = shape.Solids()
            assert len(solids) == f["segments"] and all(x.isValid() for x in solids), f["file"]
            stem = f["file"].removesuffix("_segments.step")
            assert sum(
                g["file"].startswith(stem + "_seg") and g["file"].endswith(".stl") for g in stls
            ) == len(solids)


def test_every_printed_part_fits_the_bed(millrace_package, hilltop_package):
    _printed_fit(millrace_package.folder, millrace_package.manifest)
    _printed_fit(hilltop_package, json.loads((hilltop_package / "manifest.json").read_text(encoding="utf-8")))


def test_the_older_package_was_replaced(millrace_package):
    b = millrace_package
    assert not (b.folder / OLD_ONLY).exists()
    # build writes the plan with the changes the model checked for its warnings.
    planned = with_suggestions(design("millrace"), check_parts)
    assert (b.folder / "plan.txt").read_text(encoding="utf-8") == plan_text(planned) + "\n"
    leftovers = [p.name for p in b.folder.parent.iterdir() if p.name.startswith(".millrace.")]
    assert leftovers == []


def test_every_step_reads_back_valid_with_its_volume(millrace_package):
    b = millrace_package
    steps = [f for f in b.manifest["files"] if f["file"].endswith(".step")]
    assert len(steps) >= 6
    for f in steps:
        _, valid, volume = read_step(b.folder / f["file"])
        assert valid, f["file"]
        assert volume == pytest.approx(f["volume_mm3"], rel=1e-3), f["file"]


def test_every_stl_is_watertight(millrace_package):
    b = millrace_package
    for f in b.manifest["files"]:
        if f["file"].endswith(".stl"):
            tris = read_stl(b.folder / f["file"])
            assert len(tris) == f["triangles"]
            undirected, directed = edge_uses(tris)
            assert set(undirected.values()) == {2}, f["file"]
            assert set(directed.values()) == {1}, f["file"]


def test_every_dxf_is_clean_and_in_mm(millrace_package):
    b = millrace_package
    for f in b.manifest["files"]:
        if f["file"].endswith(".dxf"):
            doc = ezdxf.readfile(b.folder / f["file"])
            auditor = doc.audit()
            assert not auditor.has_errors and not auditor.has_fixes, f["file"]
            assert doc.header["$INSUNITS"] == 4
            if f["make"] == "cut":  # a cutter's paths are closed; the stator map is read
                assert all(e.closed for e in doc.modelspace() if e.dxftype() == "LWPOLYLINE")


def test_assembly_read_back_has_no_collisions_and_the_clearance(millrace_package):
    """Independent of the build's own check: the solids of assembly.step as a CAD program reads them."""
    from OCP.Bnd import Bnd_Box
    from OCP.BRep import BRep_Builder
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Common
    from OCP.BRepBndLib import BRepBndLib
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps
    from OCP.TopAbs import TopAbs_SOLID
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS, TopoDS_Compound

    shape, valid, _ = read_step(millrace_package.folder / "assembly.step")
    assert valid
    solids, boxes = [], []
    exp = TopExp_Explorer(shape, TopAbs_SOLID)
    while exp.More():
        s = TopoDS.Solid_s(exp.Current())
        box = Bnd_Box()
        BRepBndLib.Add_s(s, box)
        solids.append(s)
        boxes.append(np.array(box.Get()))
        exp.Next()
    # Two discs, 2 × 16 magnets, the cast stator and 12 coils.
    assert len(solids) == 2 + 32 + 1 + 12
    for i in range(len(solids)):
        for j in range(i + 1, len(solids)):
            a, c = boxes[i], boxes[j]
            if np.all(a[:3] + 1e-3 < c[3:]) and np.all(c[:3] + 1e-3 < a[3:]):
                props = GProp_GProps()
                BRepGProp.VolumeProperties_s(BRepAlgoAPI_Common(solids[i], solids[j]).Shape(), props)
                assert props.Mass() < 1e-3, (i, j, props.Mass())
    # Turning parts lie wholly beyond the stator's faces (±7.5 mm); the least distance between
    # them and the standing parts is the design's running clearance, 2 mm.
    s = 7.5
    turning = [k for k, b in enumerate(boxes) if b[2] >= s - 1e-6 or b[5] <= -s + 1e-6]
    assert len(turning) == 34
    builder = BRep_Builder()
    groups = []
    for members in (turning, [k for k in range(len(solids)) if k not in turning]):
        comp = TopoDS_Compound()
        builder.MakeCompound(comp)
        for k in members:
            builder.Add(comp, solids[k])
        groups.append(comp)
    # As placed the turning parts come no nearer than 2 mm; swept through a turn they pass the
    # stator's ring (bore to lug tips, ±7.5 mm) at exactly 2 mm.
    assert BRepExtrema_DistShapeShape(*groups).Value() >= 2.0 - 1e-6
    import cadquery as cq

    sl = o.stator_layout(design("millrace"))
    tip = sl.lug_radius_mm + sl.lug_half_width_mm
    ring = cq.Solid.makeCylinder(tip, 2 * s, cq.Vector(0, 0, -s)).cut(
        cq.Solid.makeCylinder(sl.inner_radius_mm, 2 * s, cq.Vector(0, 0, -s))
    )
    assert BRepExtrema_DistShapeShape(groups[0], ring.wrapped).Value() == pytest.approx(2.0, abs=1e-6)


# --- a magnet disc facing a plain steel disc ----------------------------------------------------


@pytest.fixture(scope="module")
def hilltop_package(tmp_path_factory) -> Path:
    """The package of hilltop: one magnet disc, a plain steel disc across the stator."""
    folder = tmp_path_factory.mktemp("out") / "hilltop"
    pkg.build_package(REPO / "designs" / "hilltop.toml", folder)
    return folder


def test_plain_disc_package_holds_both_discs_and_one_template(hilltop_package):
    manifest = json.loads((hilltop_package / "manifest.json").read_text(encoding="utf-8"))
    files = {f["file"]: f for f in manifest["files"]}
    assert {"rotor_disc_1.step", "rotor_disc_1.dxf", "rotor_disc_2.step", "rotor_disc_2.dxf"} <= set(files)
    assert {"magnet_template_1_seg1.stl", "magnet_template_1.dxf"} <= set(files)  # magnets on steel
    for name in (
        "magnet_template_2_seg1.stl",
        "magnet_template_2.stl",
        "magnet_template_2.dxf",
        "stator_plate.step",
        "stator_plate.dxf",
    ):
        assert name not in files, name
    plain = files["rotor_disc_2.dxf"]
    assert plain["material"] == "steel" and plain["make"] == "cut" and plain["thickness_mm"] == 8.0
    assert "jacking screw" in plain["how"] and "pocket" not in plain["how"].lower()
    # The running clearance on both sides of the stator, checked on the assembly.
    assert manifest["checks"]["collisions"] == 0
    assert manifest["checks"]["running_clearance_mm"] == pytest.approx(2.5, abs=1e-6)


def _shoelace(xy) -> float:
    """Area of a polygon (Gauss's shoelace formula), written here apart from fab.outlines."""
    return 0.5 * abs(float(np.dot(xy[:, 0], np.roll(xy[:, 1], 1)) - np.dot(xy[:, 1], np.roll(xy[:, 0], 1))))


def test_a_printed_binder_gets_a_frame_and_formers_not_a_mould(hilltop_package):
    manifest = json.loads((hilltop_package / "manifest.json").read_text(encoding="utf-8"))
    files = {f["file"]: f for f in manifest["files"]}
    assert not [n for n in files if n.startswith("stator_mould")]
    assert files["coil_former.stl"]["quantity"] == 9 and files["coil_former.step"]["quantity"] == 9
    assert "stator_frame.step" in files and "stator_frame_seg1.stl" in files  # 390 mm: in segments
    # the former as printed, against the closed form: flange (the coil's outline less the fit)
    # times the cover, and core (the coil's hole) times the coil's height
    d = design("hilltop")
    c = d.geometry.coil
    flange_t = c.z_min_mm - d.geometry.stator_z_mm[0]
    _, valid, volume = read_step(hilltop_package / "coil_former.step")
    expected = _shoelace(o.offset_convex(c.outline_mm, -o.PRINT_FIT_MM)) * flange_t + _shoelace(c.hole_mm) * (
        c.z_max_mm - c.z_min_mm
    )
    assert valid and volume == pytest.approx(expected, rel=1e-6)


def test_plain_disc_files_read_back(hilltop_package):
    manifest = json.loads((hilltop_package / "manifest.json").read_text(encoding="utf-8"))
    files = {f["file"]: f for f in manifest["files"]}
    _, valid, volume = read_step(hilltop_package / "rotor_disc_2.step")
    assert valid and volume == pytest.approx(files["rotor_disc_2.step"]["volume_mm3"], rel=1e-3)
    # An 8 mm steel annulus 290 mm across with a 40 mm bore, less its holes (a few per cent).
    annulus = math.pi * (145.0**2 - 20.0**2) * 8.0
    assert 0.95 * annulus < volume < annulus
    doc = ezdxf.readfile(hilltop_package / "rotor_disc_2.dxf")
    auditor = doc.audit()
    assert not auditor.has_errors and not auditor.has_fixes
    layers = {e.dxf.layer for e in doc.modelspace()}
    assert "CUT" in layers and "POCKET" not in layers
    # Two discs, 12 magnets, the printed frame (petg) and 9 coils on 9 formers: nothing else.
    shape, valid, _ = read_step(hilltop_package / "assembly.step")
    from OCP.TopAbs import TopAbs_SOLID
    from OCP.TopExp import TopExp_Explorer

    exp, n = TopExp_Explorer(shape, TopAbs_SOLID), 0
    while exp.More():
        n += 1
        exp.Next()
    assert valid and n == 2 + 12 + 1 + 9 + 9


def test_plain_disc_balance_plan_and_sheet(hilltop_package):
    plan = json.loads((hilltop_package / "balance.json").read_text(encoding="utf-8"))
    assert [d["disc"] for d in plan["discs"]] == [1, 2]
    assert len(plan["discs"][0]["assignment"]) == 12 and plan["discs"][1]["assignment"] == []
    from pypdf import PdfReader

    text = " ".join(
        " ".join(p.extract_text().split()) for p in PdfReader(hilltop_package / "hilltop-sheet.pdf").pages
    )
    assert "one magnet disc facing a plain steel disc" in text
    assert text.count("Magnet map:") == 1  # the plain disc has no magnets to map
    assert "the plain steel disc" in text and "plain disc, steel" in text
    assert "rotor_disc_2.dxf" in text


def test_safety_notes_carry_the_design_warnings(millrace_package):
    text = (millrace_package.folder / "SAFETY.txt").read_text(encoding="utf-8")
    for w in design("millrace").warnings:
        assert w.message in text
    for words in ("pacemaker", "crush", "shock can kill", "licensed", "resin"):
        assert words in text


# --- atomic writing --------------------------------------------------------------------------


def old_package(folder: Path) -> dict[str, bytes]:
    folder.mkdir(parents=True)
    (folder / "plan.txt").write_text("the old plan\n", encoding="utf-8")
    (folder / "manifest.json").write_text(json.dumps({"files": [{"file": "plan.txt"}]}), encoding="utf-8")
    return {p.name: p.read_bytes() for p in folder.iterdir()}


def unchanged(folder: Path, before: dict[str, bytes]) -> None:
    assert {p.name: p.read_bytes() for p in folder.iterdir()} == before
    assert [p.name for p in folder.parent.iterdir() if p.name != folder.name] == []


@pytest.mark.parametrize("failure", [RuntimeError("disk on fire"), KeyboardInterrupt()])
def test_a_failed_build_leaves_the_old_package(tmp_path, monkeypatch, failure):
    folder = tmp_path / "out" / "millrace"
    before = old_package(folder)
    calls = []

    def broken(flat, path, note):
        calls.append(path.name)
        if len(calls) == 3:  # a few drawings in, mid-build
            raise failure

    monkeypatch.setattr("fab.drawings.write_dxf", broken)
    with pytest.raises(type(failure)):
        pkg.build_package(DESIGN, folder)
    assert len(calls) == 3
    unchanged(folder, before)


def test_a_failure_in_the_second_process_leaves_the_old_package(tmp_path, monkeypatch):
    folder = tmp_path / "millrace"
    before = old_package(folder)
    made = []
    real = tempfile.mkdtemp

    def blocked(**kwargs):
        # A folder where the second process must write a file: its STL writer fails there.
        tmp = real(**kwargs)
        Path(tmp, "winding_jig_cheek.stl").mkdir()
        made.append(tmp)
        return tmp

    monkeypatch.setattr(tempfile, "mkdtemp", blocked)
    with pytest.raises(OutputError, match=r"cannot write .*winding_jig_cheek\.stl"):
        pkg.build_package(DESIGN, folder)
    assert made and not Path(made[0]).exists()
    unchanged(folder, before)


def test_a_folder_with_other_files_is_not_replaced(tmp_path):
    folder = tmp_path / "millrace"
    before = old_package(folder)
    (folder / "notes.txt").write_text("mine", encoding="utf-8")
    before["notes.txt"] = b"mine"
    with pytest.raises(OutputError, match=r"holds notes\.txt, which a build package does not"):
        pkg.build_package(DESIGN, folder)
    unchanged(folder, before)


def test_out_is_a_file(tmp_path):
    path = tmp_path / "millrace"
    path.write_text("x", encoding="utf-8")
    with pytest.raises(OutputError, match="is a file"):
        pkg.build_package(DESIGN, path)


def run_cli(capsys, *args) -> tuple[int, str, str]:
    capsys.readouterr()
    try:
        main([str(a) for a in args])
        code = 0
    except SystemExit as exc:
        code = exc.code
    out, err = capsys.readouterr()
    return code, out, err


def test_build_errors_are_one_line(tmp_path, capsys):
    bad = tmp_path / "creek.toml"
    bad.write_text(
        DESIGN.read_text(encoding="utf-8").replace(
            "bore_diameter_mm = 35.0", "bore_diameter_mm = 35.0\nhub_bolt_circle_mm = 40"
        ),
        encoding="utf-8",
    )
    code, out, err = run_cli(capsys, "build", bad, "--out", tmp_path / "pkg")
    assert code == 2 and out == "" and err.count("\n") == 1 and "Traceback" not in err
    assert err.startswith("Error: creek.toml: rotor.hub_bolt_circle_mm = 40.0: ")
    assert not (tmp_path / "pkg").exists()
    (tmp_path / "file").write_text("x", encoding="utf-8")
    code, out, err = run_cli(capsys, "build", DESIGN, "--out", tmp_path / "file")
    assert code == 2 and err.startswith("Error: ") and err.count("\n") == 1


def test_a_part_the_cad_kernel_cannot_make_is_one_line(tmp_path, monkeypatch, capsys):
    from OCP.StdFail import StdFail_NotDone

    import fab.solids

    folder = tmp_path / "millrace"
    before = old_package(folder)
    real = fab.solids.flat_solid

    def refuses_discs(flat, engrave=True):
        if flat.part.startswith("rotor_disc"):
            raise StdFail_NotDone("BRep_API: command not done")
        return real(flat, engrave)

    monkeypatch.setattr(fab.solids, "flat_solid", refuses_discs)
    code, out, err = run_cli(capsys, "build", DESIGN, "--out", folder)
    assert code == 2 and out == "" and err.count("\n") == 1 and "Traceback" not in err, err
    assert err == (
        "Error: millrace.toml: rotor.disc_thickness_mm = 8.0: could not model the rotor disc 1 (lower) "
        "(CAD kernel: StdFail_NotDone: BRep_API: command not done): check rotor.disc_thickness_mm\n"
    )
    unchanged(folder, before)


def test_a_part_the_second_process_cannot_make_is_the_same_error():
    import pickle

    from layout.spec import DesignError

    class Stopped:  # what the first process sees of a second one that has reported and ended
        stdout = io.BytesIO(pickle.dumps(("design", ("millrace.toml", "stator.thickness_mm", 15.0, "no"))))
        returncode = 0

        def wait(self):
            return 0

    with pytest.raises(DesignError, match=r"^millrace\.toml: stator\.thickness_mm = 15\.0: no$"):
        pkg._worker_result(Stopped())


def test_progress_on_a_terminal(tmp_path, monkeypatch, capsys):
    class Terminal(io.StringIO):
        def isatty(self):
            return True

    term = Terminal()
    monkeypatch.setattr("sys.stderr", term)
    bad = tmp_path / "creek.toml"
    bad.write_text(
        DESIGN.read_text(encoding="utf-8").replace("[stator]", "[stator]\nresin_rim_mm = 40"), "utf-8"
    )
    with pytest.raises(SystemExit):
        main(["build", str(bad), "--out", str(tmp_path / "pkg")])
    lines = term.getvalue().splitlines()
    # Each step named on its own line, then the one-line error.
    assert lines[:2] == ["  computing the design", "  checking the parts"]
    assert lines[-1].startswith("Error: creek.toml: stator.resin_rim_mm = 40.0: ")


PEDALBOX = REPO / "designs" / "pedalbox.toml"


@pytest.mark.parametrize(
    ("signum", "code", "words"), [(signal.SIGINT, 130, "Interrupted"), (signal.SIGTERM, 143, "Terminated")]
)
def test_an_interrupted_build_leaves_the_old_package_and_one_line(tmp_path, signum, code, words):
    folder = tmp_path / "pedalbox"
    before = old_package(folder)
    proc = subprocess.Popen(
        [sys.executable, "-m", "fab.cli", "build", PEDALBOX, "--out", folder],
        cwd=REPO,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    deadline = time.monotonic() + 60
    while not any(p.name.startswith(".pedalbox.tmp-") for p in tmp_path.iterdir()):
        assert proc.poll() is None and time.monotonic() < deadline, "the build never started writing"
        time.sleep(0.05)
    time.sleep(0.5)  # mid-build: the drawings are being written, the CAD kernel loading
    proc.send_signal(signum)
    out, err = proc.communicate(timeout=60)
    assert proc.returncode == code, err
    assert err == f"{words}; nothing was changed.\n" and out == ""
    time.sleep(0.5)  # the second process, told to stop, is gone too
    unchanged(folder, before)


def test_the_next_build_cleans_up_after_a_killed_one(tmp_path):
    folder = tmp_path / "pkg"
    before = old_package(folder)
    dead = subprocess.run(
        [sys.executable, "-c", "import os; print(os.getpid())"], capture_output=True, text=True
    )
    stale = tmp_path / f".pkg.tmp-{int(dead.stdout)}-abcd1234"  # its process has ended
    stale.mkdir()
    (stale / "plan.txt").write_text("half a build\n", encoding="utf-8")
    mine = tmp_path / f".pkg.tmp-{os.getpid()}-live0000"  # a build still running: left alone
    mine.mkdir()
    assert pkg.recover(folder) == [f"removed {stale.name}, left by an interrupted build"]
    assert not stale.exists() and mine.exists()
    mine.rmdir()
    # Killed between the two renames: the old package aside, nothing at the target.
    aside = tmp_path / ".pkg.old-0badf00d"
    os.rename(folder, aside)
    assert pkg.recover(folder) == [f"put back the previous package from {aside.name}"]
    unchanged(folder, before)
    # Killed after the second rename: the new package in place, the old one still aside.
    aside.mkdir()
    assert pkg.recover(folder) == [f"removed {aside.name}, a package already replaced"]
    unchanged(folder, before)


def test_every_file_of_the_package_reads_like_the_others(millrace_package):
    # mkstemp makes 0600 files; the sheet must not be the one file another user cannot read.
    umask = os.umask(0)
    os.umask(umask)
    modes = {p.name: p.stat().st_mode & 0o777 for p in millrace_package.folder.iterdir()}
    assert set(modes.values()) == {0o666 & ~umask}, modes
