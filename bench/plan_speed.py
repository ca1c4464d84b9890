"""Benchmark: `statorsmith plan DESIGN` end to end, and the computation after imports.

Targets on a 2-core machine: end to end at most 1.0 s wall (median), of which the
computation after imports at most 0.25 s, or 0.5 s for a design with a [source] (its
steady points need the machine solved again at each found speed). Usage:

    .venv/bin/python bench/plan_speed.py [DESIGN.toml ...] [--runs N]

Prints one line per design and exits 1 if a median misses its target.
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
END_TO_END_S = 1.0
COMPUTE_S = 0.25
COMPUTE_WITH_SOURCE_S = 0.5


def end_to_end(design: Path, runs: int) -> float:
    exe = Path(sys.executable).parent / "statorsmith"
    times = []
    for _ in range(runs):
        t = time.perf_counter()
        subprocess.run([str(exe), "plan", str(design)], check=True, capture_output=True)
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def compute_only(design: Path, runs: int) -> float:
    """Load, compute and render in a process that has already imported everything."""
    code = f"""
import statistics, time, json
import layout.field  # imports are not part of this figure
from fab.report import plan_json, plan_text
from layout.design import compute_design
from layout.spec import load_spec
times = []
for _ in range({runs}):
    t = time.perf_counter()
    d = compute_design(load_spec({str(design)!r}))
    plan_text(d); json.dumps(plan_json(d))
    times.append(time.perf_counter() - t)
print(statistics.median(times[1:] if len(times) > 1 else times))
"""
    out = subprocess.run([sys.executable, "-c", code], check=True, capture_output=True, text=True)
    return float(out.stdout.strip())


def _largest(folder: Path) -> Path:
    """millrace grown to the most coil positions a design may have (96, with 128 magnets on a
    700 mm pitch radius): large counts must stay within the same targets."""
    text = (ROOT / "designs" / "millrace.toml").read_text(encoding="utf-8")
    for old, new in (
        ('name = "millrace"', 'name = "largest"'),
        ("coil_positions = 12", "coil_positions = 96"),
        ("count = 16", "count = 128"),
        ("pitch_radius_mm = 105.0", "pitch_radius_mm = 700.0"),
    ):
        assert old in text, old
        text = text.replace(old, new)
    path = folder / "largest.toml"
    path.write_text(text, encoding="utf-8")
    return path


def main() -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("designs", nargs="*", type=Path)
    parser.add_argument("--runs", type=int, default=7)
    args = parser.parse_args()
    tmp = tempfile.TemporaryDirectory()
    designs = args.designs or [*sorted((ROOT / "designs").glob("*.toml")), _largest(Path(tmp.name))]
    ok = True
    for design in designs:
        e2e = end_to_end(design, args.runs)
        comp = compute_only(design, args.runs + 1)
        limit = COMPUTE_WITH_SOURCE_S if "\n[source]" in design.read_text(encoding="utf-8") else COMPUTE_S
        good = e2e <= END_TO_END_S and comp <= limit
        ok &= good
        print(
            f"{design.name:16s} plan end to end {e2e:.3f} s (target {END_TO_END_S} s), "
            f"computation {comp:.3f} s (target {limit} s)  {'ok' if good else 'SLOW'}"
        )
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
