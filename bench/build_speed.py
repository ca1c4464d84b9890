"""Benchmark: `statorsmith build DESIGN` end to end, the whole package of a design.

Target on a 2-core machine: at most 6.0 s wall (median) for the default demo. Each run
builds into a fresh temporary folder. Usage:

    .venv/bin/python bench/build_speed.py [DESIGN.toml ...] [--runs N]

Prints one line per design and exits 1 if a median misses the target.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
TARGET_S = 6.0


def end_to_end(design: Path, runs: int) -> tuple[float, int]:
    exe = Path(sys.executable).parent / "statorsmith"
    times = []
    files = 0
    for _ in range(runs):
        with tempfile.TemporaryDirectory() as tmp:
            out = Path(tmp) / design.stem
            cmd = [str(exe), "build", str(design), "--out", str(out)]
            t = time.perf_counter()
            subprocess.run(cmd, check=True, capture_output=True)
            times.append(time.perf_counter() - t)
            files = len(os.listdir(out))
    return statistics.median(times), files


def main() -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("designs", nargs="*", type=Path)
    parser.add_argument("--runs", type=int, default=5)
    args = parser.parse_args()
    designs = args.designs or [ROOT / "designs" / "millrace.toml"]
    ok = True
    print(f"{os.cpu_count()} cores")
    for design in designs:
        wall, files = end_to_end(design, args.runs)
        good = wall <= TARGET_S
        ok &= good
        print(
            f"{design.name:16s} build end to end {wall:.2f} s for {files} files "
            f"(target {TARGET_S} s)  {'ok' if good else 'SLOW'}"
        )
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
