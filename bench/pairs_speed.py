"""Benchmark: `statorsmith pairs` over wide ranges, the computation alone.

Target on a 2-core machine: the 2145 combinations of --coils 6-60 --magnets 4-80 in at most
0.5 s (median of a few runs, the per-machine cache cleared each run). Usage:

    .venv/bin/python bench/pairs_speed.py [--runs N]

Prints one line per phase count and exits 1 if a median misses its target.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time

from layout import pairs

TARGET_S = 0.5


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--runs", type=int, default=5)
    args = ap.parse_args()
    failed = False
    for phases in (3, 1):
        times = []
        for _ in range(args.runs):
            pairs._reduced.cache_clear()
            t = time.perf_counter()
            rows = pairs.combinations(range(6, 61), range(4, 81), phases)
            times.append(time.perf_counter() - t)
        med = statistics.median(times)
        ok = med <= TARGET_S
        failed |= not ok
        print(
            f"pairs {phases}-phase: {len(rows)} combinations, median {med:.3f} s "
            f"(target {TARGET_S} s) {'ok' if ok else 'SLOW'}"
        )
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
