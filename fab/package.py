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

from fab import OutputError, ordinary_permissions
from fab.catalogue import Builder, Item, catalogue, safety_text, write_step, write_stl  # noqa: F401
from fab.fit import check_parts
from layout.advice import advised_codes, with_suggestions
from layout.design import Design, compute_design
from layout.rotor import rotor_discs
from layout.spec import DesignError, load_spec

MANIFEST = "manifest.json"


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
    None to stop; writes a pickle of ("ok", {file: info}), ("design", DesignError's fields)
    or (kind, message) to what was stdout. Anything the CAD kernel prints goes to stderr, so
    it cannot spoil the report.
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
    except DesignError as exc:  # a part the CAD kernel could not make (fab.solids.modelling)
        result = ("design", (exc.source, exc.key, exc.value, exc.allowed))
    except OSError as exc:
        result = ("oserror", f"cannot write {exc.filename or 'the package'}: {exc.strerror or exc}")
    except BaseException as exc:  # noqa: BLE001 - reported to the parent, which raises it
        result = ("error", f"{type(exc).__name__}: {exc}")
    try:
        report.write(pickle.dumps(result))
        report.close()
    except OSError:
        pass  # the first process has gone (interrupted or killed): nobody is left to tell


def _worker_code() -> str:
    # Ctrl-C is the first process's to handle: it stops this one and removes the folder.
    return (
        "import signal; signal.signal(signal.SIGINT, signal.SIG_IGN); "
        "from fab.package import worker_main; worker_main()"
    )


def _start_worker() -> subprocess.Popen:
    return subprocess.Popen(
        [sys.executable, "-c", _worker_code()],
        stdin=subprocess.PIPE,
        stdout=subprocess.PIPE,
        start_new_session=True,  # out of the terminal's process group: Ctrl-C reaches only us
    )


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
    if status == "design":
        raise DesignError(*payload)
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


def _tmp_prefix(target: Path) -> str:
    return f".{target.name}.tmp-"


def _old_prefix(target: Path) -> str:
    return f".{target.name}.old-"


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True  # someone else's process: leave its folder alone
    return True


def recover(target: Path) -> list[str]:
    """Finish or undo what an interrupted build left beside `target`; what was done, in words.

    A build folder (`.NAME.tmp-PID-…`) whose process is gone is removed. A previous package
    moved aside (`.NAME.old-…`) goes back in place if nothing is at the target (the build
    stopped between its two renames), and is removed once a newer package is there.
    """
    done = []
    parent = target.parent
    if not parent.is_dir():
        return done
    for p in sorted(parent.iterdir()):
        if p.name.startswith(_tmp_prefix(target)) and p.is_dir():
            pid = p.name[len(_tmp_prefix(target)) :].split("-", 1)[0]
            if not (pid.isdigit() and _alive(int(pid))):
                shutil.rmtree(p, ignore_errors=True)
                done.append(f"removed {p.name}, left by an interrupted build")
    olds = sorted(
        (p for p in parent.iterdir() if p.name.startswith(_old_prefix(target)) and p.is_dir()),
        key=lambda p: p.stat().st_mtime,
    )
    for p in olds:
        if not target.exists():
            os.rename(p, target)
            done.append(f"put back the previous package from {p.name}")
        else:
            shutil.rmtree(p, ignore_errors=True)
            done.append(f"removed {p.name}, a package already replaced")
    return done


def install(tmp: Path, target: Path) -> None:
    """Put the finished folder in place; the old package goes only once the new one is there."""
    old = None
    if target.exists():
        old = target.parent / f"{_old_prefix(target)}{secrets.token_hex(4)}"
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
        check_parts(design)  # the checks plan, balance and sheet make too (fit.checked_design)
        if advised_codes(design):
            say("trying changes for the warnings")
            design = with_suggestions(design, check_parts, lambda change: say(f"  trying {change}"))
        target = Path(out) if out is not None else Path("out") / design.spec.name
        for step in recover(target):
            say(step)
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
    for disc in rotor_discs(design.spec):
        info = infos[f"rotor_disc_{disc}.step"]
        props[disc] = (info["volume_mm3"], tuple(info["center_of_mass_mm"][:2]))
    return bodies_from_props(design, props)


def _write_balance_and_sheet(design: Design, items: list[Item], infos: dict, tmp: Path) -> list[Item]:
    """Balance plan (nominal magnets; weighed ones via `statorsmith balance --masses`) and
    the build sheet, which need the discs' solids and the list of files."""
    from fab.report import balance_json, balance_text, to_json
    from fab.sheet import write_sheet
    from layout.balance import balance_rotor

    rb = balance_rotor(design, _disc_bodies_from(design, infos), None)
    txt, js, pdf = _late_names(design)
    (tmp / txt).write_text(balance_text(rb, design.spec.name) + "\n", encoding="utf-8")
    (tmp / js).write_text(to_json(balance_json(rb)) + "\n", encoding="utf-8")
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
        tmp = Path(tempfile.mkdtemp(prefix=f"{_tmp_prefix(target)}{os.getpid()}-", dir=target.parent))
    except OSError as exc:
        raise OutputError(f"{target.parent}: cannot write here ({exc.strerror or exc})") from None
    ordinary_permissions(tmp, folder=True)  # an ordinary folder once installed, not mkdtemp's private one
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
        "warnings": [{"code": w.code, "severity": w.severity, "message": w.message} for w in design.warnings],
        "files": files,
    }
    from fab.report import to_json

    (tmp / MANIFEST).write_text(to_json(manifest) + "\n", encoding="utf-8")
