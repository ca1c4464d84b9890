"""The command line: pairs and plan output, and the user-error contract.

Every user error must end with exit code 2, exactly one line on stderr, nothing on stdout
and no traceback. Most commands call the console entry point fab.cli:main in this process
(its SystemExit and the captured streams are what a shell sees); a few run it in a fresh
interpreter through `python -m fab.cli` to show the same holds for a real process.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
import tomllib
from importlib.metadata import entry_points
from pathlib import Path

import pytest
from conftest import Result
from test_spec import BAD_EDITS, BAD_FILES, BAD_NAME, DEMOS, DESIGNS, demo_text, edited

REPO = Path(__file__).resolve().parents[1]
HEAVY = {"cadquery", "OCP", "reportlab", "ezdxf"}


def run_process(*args: object) -> Result:
    done = subprocess.run(
        [sys.executable, "-m", "fab.cli", *map(str, args)],
        capture_output=True,
        text=True,
        cwd=REPO,
        timeout=60,
    )
    return Result(done.returncode, done.stdout, done.stderr)


@pytest.fixture
def ok(run):
    def call(*args: object) -> str:
        result = run(*args)
        assert result.returncode == 0, result.stderr
        assert result.stderr == ""
        return result.stdout

    return call


@pytest.fixture
def ok_json(ok):
    return lambda *args: json.loads(ok(*args, "--json"))


def assert_user_error(result: Result) -> str:
    assert result.returncode == 2, (result.returncode, result.stderr)
    assert result.stdout == ""
    assert "Traceback" not in result.stderr
    assert result.stderr.endswith("\n") and result.stderr.count("\n") == 1, result.stderr
    assert result.stderr.startswith("Error: "), result.stderr
    return result.stderr.strip()


def test_entry_point_is_main():
    (script,) = [e for e in entry_points(group="console_scripts") if e.name == "statorsmith"]
    assert script.value == "fab.cli:main"


def test_help_and_version(ok):
    assert {"pairs", "plan", "build"} <= set(ok("--help").split())
    assert "statorsmith" in ok("--version")


# --- pairs ---------------------------------------------------------------------------------

PAIR_KEYS = {
    "coils",
    "magnets",
    "phases",
    "balanced",
    "distribution_factor",
    "winding_factor",
    "periodicity",
    "cogging_steps",
}


def test_pairs_table_one_pair(ok):
    out = ok("pairs", "--coils", "12", "--magnets", "14", "--stator", "teeth")
    (row,) = [r for r in (line.split() for line in out.splitlines()) if r[:2] == ["12", "14"]]
    assert row[2] == "yes"
    # EL-Refaie, IEEE Trans. Ind. Electron. 57(1), 2010: 12/14 tooth coils, winding factor 0.933.
    assert "0.933" in row and "tooth coils" in out


def test_pairs_json_one_pair(ok_json):
    (row,) = ok_json("pairs", "--coils", "12", "--magnets", "14", "--stator", "teeth")
    assert set(row) >= PAIR_KEYS and row["stator"] == "teeth"
    assert (row["coils"], row["magnets"], row["phases"]) == (12, 14, 3)
    assert row["balanced"] is True
    # EL-Refaie, IEEE Trans. Ind. Electron. 57(1), 2010.
    assert row["winding_factor"] == pytest.approx(0.933, abs=0.0015)
    assert row["winding_factor"] <= row["distribution_factor"] <= 1
    # t = gcd(Q, p) (Bianchi & Dai Prè, IEE Proc. EPA 153(3), 2006).
    assert row["periodicity"] == math.gcd(12, 7)
    # LCM(Q, P) (Zhu & Howe, IEEE Trans. Energy Conv. 15(4), 2000).
    assert row["cogging_steps"] == 84


def test_pairs_single_number_is_a_range_of_one(ok_json):
    rows = ok_json("pairs", "--coils", "12", "--magnets", "10-20")
    assert [r["coils"] for r in rows] == [12] * 6
    # Only even magnet counts are combinations.
    assert [r["magnets"] for r in rows] == [10, 12, 14, 16, 18, 20]


def test_pairs_single_phase_json(ok_json):
    (cancel,) = ok_json("pairs", "--phases", "1", "--coils", "12", "--magnets", "20")
    assert PAIR_KEYS | {"as_wound_distribution_factor"} <= set(cancel)
    assert cancel["phases"] == 1
    # Common practice: 12 coils under 20 magnets cancel as wound; reversing some helps.
    assert cancel["as_wound_distribution_factor"] == pytest.approx(0, abs=1e-6)
    assert cancel["distribution_factor"] > 0.5
    (in_phase,) = ok_json("pairs", "--phases", "1", "--coils", "13", "--magnets", "26")
    # Common practice: 13 positions under 26 magnets are all in phase as wound.
    assert in_phase["as_wound_distribution_factor"] == pytest.approx(1, abs=1e-6)
    # A coreless coil there spans one pole pitch (π/13 < 2π/13): k_p = sin(13·π/26) = 1, so the
    # classic in-phase machine is no longer shown as k_w 0 (the tooth-coil figure, sin(π) = 0).
    assert in_phase["stator"] == "coreless" and in_phase["winding_factor"] == pytest.approx(1, abs=1e-9)
    (teeth,) = ok_json("pairs", "--phases", "1", "--coils", "13", "--magnets", "26", "--stator", "teeth")
    assert teeth["winding_factor"] == pytest.approx(0, abs=1e-9)


def test_coreless_pitch_factor_hand_values():
    from layout.winding import coreless_pitch_factor

    # β = min(2π/Q, π/p): 12/16 gives β = π/8, one pole pitch, k_p = 1; 12/10 gives β = 2π/12
    # (a position is narrower than a pole), k_p = sin(5·π/12) = (√6 + √2)/4.
    assert coreless_pitch_factor(8, 12) == pytest.approx(1)
    assert coreless_pitch_factor(5, 12) == pytest.approx((math.sqrt(6) + math.sqrt(2)) / 4)


def test_odd_magnet_counts_get_a_clear_message(run):
    message = assert_user_error(run("pairs", "--magnets", "13"))
    assert "even" in message and "13" in message


def test_pairs_single_phase_table_shows_as_wound_factor(ok):
    assert "k_d as wound" in ok("pairs", "--phases", "1", "--coils", "12", "--magnets", "20")


def test_pairs_balanced_only(ok_json):
    rows = ok_json("pairs", "--coils", "6-15", "--magnets", "4-20", "--balanced-only")
    assert rows
    for r in rows:
        assert r["balanced"] and r["distribution_factor"] > 0
        # Bianchi & Dai Prè 2006: Q/(3t) whole.
        assert r["coils"] % (3 * math.gcd(r["coils"], r["magnets"] // 2)) == 0


def test_pairs_sorted_by_winding_factor(ok_json):
    rows = ok_json("pairs", "--coils", "9-12", "--magnets", "8-14", "--sort", "winding_factor")
    factors = [r["winding_factor"] for r in rows]
    assert len(factors) == 4 * 4
    assert factors == sorted(factors, reverse=True)


# --- plan ----------------------------------------------------------------------------------

# Winding factor of each demo, derived by hand:
# hilltop 9/12: 0.866 (EL-Refaie, IEEE Trans. Ind. Electron. 57(1), 2010).
# millrace 12/16: t = 4 copies of 3 coils/4 magnets, the unit machine of 9/12 as well, so
#   0.866 too (every coil of a phase on one angle, k_p = sin(8·180°/12) = sin 120°).
# pedalbox 8/8 single phase: phasors alternate 0°/180°, alternate coils reversed give
#   k_d = 1; each coil spans one pole, k_p = sin 90° = 1.
# fieldkit 9/12: the same unit machine as hilltop, 0.866.
DEMO_KW = {
    "hilltop": math.sqrt(3) / 2,
    "millrace": math.sqrt(3) / 2,
    "pedalbox": 1.0,
    "fieldkit": math.sqrt(3) / 2,
}


@pytest.mark.parametrize("demo", DEMOS)
def test_plan_table(ok, demo):
    raw = tomllib.loads(demo_text(demo))
    out = ok("plan", DESIGNS / f"{demo}.toml").splitlines()
    assert out[0] == f"{raw['name']}: {raw['purpose']}"
    phases = "ABC" if raw["stator"]["phases"] == 3 else "A"
    coil_rows = [r for r in (line.split() for line in out) if len(r) >= 4 and r[2] in phases and r[3] in "+-"]
    assert [int(r[0]) for r in coil_rows] == list(range(1, raw["stator"]["coil_positions"] + 1))


@pytest.mark.parametrize("demo", DEMOS)
def test_plan_json(ok_json, demo):
    raw = tomllib.loads(demo_text(demo))
    q, pm = raw["stator"]["coil_positions"], raw["magnets"]["count"]
    plan = ok_json("plan", DESIGNS / f"{demo}.toml")
    assert plan["name"] == raw["name"]
    lay = plan["layout"]
    coils = lay["coils"]
    for c in coils:
        assert {"index", "angle_deg", "phase", "polarity", "path"} <= set(c)
        assert c["polarity"] in (1, -1)
        assert c["path"] == 1
        assert c["angle_deg"] == pytest.approx(360 * (c["index"] - 1) / q, abs=1e-6)
    assert [c["index"] for c in coils] == list(range(1, q + 1))
    names = ["A", "B", "C"] if raw["stator"]["phases"] == 3 else ["A"]
    counts = [sum(c["phase"] == x for c in coils) for x in names]
    assert counts == [q // len(names)] * len(names)
    assert lay["balanced"] is True
    assert lay["periodicity"] == math.gcd(q, pm // 2)
    assert lay["winding_factor"] == pytest.approx(lay["distribution_factor"] * lay["pitch_factor"], abs=2e-6)
    assert lay["winding_factor"] == pytest.approx(DEMO_KW[demo], abs=1e-5)


def test_plan_loads_no_cad_or_pdf_backend():
    # The heavy backends belong to the build-file writers only (house style).
    script = "\n".join(
        [
            "import sys",
            "from fab.cli import cli",
            f"cli.main(['plan', {str(DESIGNS / 'millrace.toml')!r}, '--json'], standalone_mode=False)",
            f"heavy = sorted({{m.split('.')[0] for m in sys.modules}} & set({sorted(HEAVY)!r}))",
            "assert not heavy, heavy",
        ]
    )
    result = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, cwd=REPO, timeout=60
    )
    assert result.returncode == 0, result.stderr
    assert json.loads(result.stdout)["layout"]["coils"]


# --- user errors ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("demo", "old", "new", "key"),
    [case[1:5] for case in BAD_EDITS],
    ids=[case[0] for case in BAD_EDITS],
)
def test_plan_bad_design_is_one_line(run, tmp_path, demo, old, new, key):
    path = tmp_path / BAD_NAME
    path.write_text(edited(demo, old, new), encoding="utf-8")
    message = assert_user_error(run("plan", path))
    assert message.startswith(f"Error: {BAD_NAME}: {key} = ")


@pytest.mark.parametrize(("contents", "reason"), [c[1:] for c in BAD_FILES], ids=[c[0] for c in BAD_FILES])
def test_plan_bad_file_is_one_line(run, tmp_path, contents, reason):
    path = tmp_path / BAD_NAME
    if contents is not None:
        path.write_bytes(contents)
    message = assert_user_error(run("plan", path, "--json"))
    assert message.startswith(f"Error: {BAD_NAME}: ") and reason in message


@pytest.mark.parametrize(
    ("old", "new", "key"),
    [
        # 12 coils under 12 magnets: t = 6, 12/18 is not whole (Bianchi & Dai Prè 2006).
        ("count = 16", "count = 12", "magnets.count = 12"),
        # 12/16 has 4 coils a phase: 3 paths cannot split them.
        ("parallel_paths = 1", "parallel_paths = 3", "connection.parallel_paths = 3"),
        # Removing one coil leaves 11, which do not make three equal phases.
        (
            "coil_positions = 12",
            "coil_positions = 12\nempty_positions = [5]",
            "stator.empty_positions",
        ),
    ],
)
def test_plan_layout_that_cannot_work_is_one_line(run, tmp_path, old, new, key):
    path = tmp_path / BAD_NAME
    path.write_text(edited("millrace", old, new), encoding="utf-8")
    assert assert_user_error(run("plan", path)).startswith(f"Error: {BAD_NAME}: {key}")


@pytest.mark.parametrize(
    "args",
    [
        ["pairs", "--coils", "abc"],
        ["pairs", "--coils", "40-10"],
        ["pairs", "--coils", "0-200"],
        ["pairs", "--coils", "-5"],
        ["pairs", "--magnets", "4-x"],
        ["pairs", "--phases", "2"],
        ["pairs", "--sort", "size"],
        ["pairs", "--frobnicate"],
        ["plan"],
        ["plan", "millrace.toml", "--bogus"],
        ["frobnicate"],
    ],
    ids=" ".join,
)
def test_bad_options_are_one_line(run, args):
    assert_user_error(run(*args))


def test_real_process_success():
    result = run_process("plan", DESIGNS / "pedalbox.toml", "--json")
    assert result.returncode == 0 and result.stderr == ""
    assert json.loads(result.stdout)["layout"]["phases"] == 1


@pytest.mark.parametrize("args", [["plan", "no-such-design.toml"], ["pairs", "--coils", "abc"]])
def test_real_process_user_error(args):
    assert_user_error(run_process(*args))


def test_no_command_is_help_or_one_line(run):
    result = run()
    if result.returncode == 0:
        assert "plan" in result.stdout and result.stderr == ""
    else:
        assert_user_error(result)


def test_unbalancing_empty_positions_do_not_suggest_the_same_count(run, tmp_path):
    path = tmp_path / BAD_NAME
    path.write_text(
        edited("millrace", "coil_positions = 12", "coil_positions = 12\nempty_positions = [5]"),
        encoding="utf-8",
    )
    message = assert_user_error(run("plan", path))
    # 11 coils cannot make three equal phases under any magnet count.
    assert "16 (winding factor" not in message


def test_balance_json_and_bad_mass_lists(tmp_path):
    import subprocess

    exe = [sys.executable, "-m", "fab.cli"]
    design_path = str(DESIGNS / "pedalbox.toml")
    ok = subprocess.run([*exe, "balance", design_path, "--json"], capture_output=True, text=True)
    assert ok.returncode == 0, ok.stderr
    doc = json.loads(ok.stdout)
    assert {"grade", "max_rpm", "discs"} <= set(doc)
    for disc in doc["discs"]:
        assert {
            "disc",
            "mass_kg",
            "unbalance_before_gmm",
            "unbalance_after_gmm",
            "permissible_gmm",
            "assignment",
            "correction",
        } <= set(disc)
        assert len(disc["assignment"]) == 8
    bad = tmp_path / "weighed.csv"
    bad.write_text("id,mass_g\nA,42\nA,43\n", encoding="utf-8")
    res = subprocess.run([*exe, "balance", design_path, "--masses", str(bad)], capture_output=True, text=True)
    assert res.returncode == 2 and res.stdout == ""
    assert len(res.stderr.strip().splitlines()) == 1 and "weighed.csv" in res.stderr


def test_sheet_writes_a_pdf(tmp_path):
    import subprocess

    out = tmp_path / "sheet.pdf"
    res = subprocess.run(
        [
            sys.executable,
            "-m",
            "fab.cli",
            "sheet",
            str(DESIGNS / "hilltop.toml"),
            "--out",
            str(out),
            "--paper",
            "letter",
        ],
        capture_output=True,
        text=True,
    )
    assert res.returncode == 0, res.stderr
    assert out.read_bytes().startswith(b"%PDF")


# Geometry that only the parts' fit checks catch: plan, balance and sheet refuse it as build does.
UNBUILDABLE = [
    ("disc smaller than its magnet ring", "bore_diameter_mm = 20.0",
     "bore_diameter_mm = 20.0\ndisc_outer_diameter_mm = 100.0", "rotor.disc_outer_diameter_mm"),
]  # fmt: skip


@pytest.mark.parametrize("command", ["plan", "balance", "sheet"])
@pytest.mark.parametrize(("old", "new", "key"), [u[1:] for u in UNBUILDABLE], ids=[u[0] for u in UNBUILDABLE])
def test_every_command_refuses_what_build_refuses(run, tmp_path, command, old, new, key):
    from fab.package import build_package
    from layout.spec import DesignError

    path = tmp_path / BAD_NAME
    path.write_text(edited("pedalbox", old, new), encoding="utf-8")
    with pytest.raises(DesignError, match=key):
        build_package(path, tmp_path / "pkg")
    args = [command, path] + (["--out", tmp_path / "s.pdf"] if command == "sheet" else [])
    assert key in assert_user_error(run(*args))
    assert not (tmp_path / "s.pdf").exists()


def test_plan_json_is_strict(ok):
    # allow_nan=False would raise on a NaN; the parser refuses the tokens in case one slipped by.
    def refuse(token):
        raise ValueError(f"non-standard JSON token {token}")

    for demo in DEMOS:
        json.loads(ok("plan", DESIGNS / f"{demo}.toml", "--json"), parse_constant=refuse)


def test_to_json_refuses_nan():
    from fab.report import _r, to_json

    assert _r(float("nan")) is None and _r(float("inf")) is None
    with pytest.raises(ValueError):
        to_json({"x": float("nan")})


def test_sheet_on_a_full_disk_is_one_line(run, tmp_path, monkeypatch):
    import errno

    import fab.sheet

    def full(*_a, **_k):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(fab.sheet, "write_sheet", full)
    message = assert_user_error(run("sheet", DESIGNS / "pedalbox.toml", "--out", tmp_path / "s.pdf"))
    assert "No space left on device" in message
