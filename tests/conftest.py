"""Fixtures shared by test modules: the default demo's build package, built once a session."""

from __future__ import annotations

import contextlib
import io
import json
from dataclasses import dataclass
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]


@dataclass
class Result:
    """What a shell sees of one command: its exit code and its two streams."""

    returncode: int
    stdout: str
    stderr: str


@pytest.fixture
def run(capsys):
    """Call fab.cli:main with these arguments; exit code and streams as a shell sees them."""
    from fab.cli import main

    def call(*args: object) -> Result:
        capsys.readouterr()
        try:
            main([str(a) for a in args])
            code = 0
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
        out, err = capsys.readouterr()
        return Result(code, out, err)

    return call


OLD_ONLY = "stator_plate.dxf"  # a file a package can hold, but not millrace's: it must go


@dataclass(frozen=True)
class Built:
    folder: Path
    exit_code: int
    stdout: str
    stderr: str

    @property
    def manifest(self) -> dict:
        return json.loads((self.folder / "manifest.json").read_text(encoding="utf-8"))


@pytest.fixture(scope="session")
def millrace_package(tmp_path_factory) -> Built:
    """`statorsmith build designs/millrace.toml --out DIR` over an older package in DIR."""
    from fab.cli import main

    folder = tmp_path_factory.mktemp("out") / "millrace"
    folder.mkdir()
    (folder / "plan.txt").write_text("an older plan\n", encoding="utf-8")
    (folder / OLD_ONLY).write_text("0\nEOF\n", encoding="utf-8")
    old = {"files": [{"file": "plan.txt"}, {"file": OLD_ONLY}]}
    (folder / "manifest.json").write_text(json.dumps(old), encoding="utf-8")
    out, err = io.StringIO(), io.StringIO()  # not terminals: the build must be quiet
    code = 0
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            main(["build", str(REPO / "designs" / "millrace.toml"), "--out", str(folder)])
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else 1
    return Built(folder, code, out.getvalue(), err.getvalue())
