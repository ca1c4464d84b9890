"""Benchmark: `statorsmith size` on the demo requirement.

Targets on a 2-core machine: the screen at least 5,000 candidates a second (field layouts
and every candidate's estimate, after imports; its calibration, a fixed number of full-model
field runs whatever the candidates, is timed apart); a whole run at most 60 s; the
screen's rectified open-circuit voltage per turn within 5 % of the full model's over the
candidates re-checked in full (worst and median error reported). Usage:

    .venv/bin/python bench/size_speed.py [REQUIREMENT.toml]

Prints the figures and exits 1 if one misses its target.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from fab.fit import check_parts  # noqa: E402
from layout import sizing  # noqa: E402
from layout.requirement import load_requirement  # noqa: E402

SCREEN_PER_S = 5000
WHOLE_S = 60.0
SCREEN_ERROR = 0.05


def main() -> int:
    path = Path(sys.argv[1]) if len(sys.argv) > 1 else ROOT / "designs" / "requirements" / "orchard.toml"
    req = load_requirement(path)
    calibration = []
    calibrate = sizing._calibration

    def timed(*args):
        t0 = time.perf_counter()
        out = calibrate(*args)
        calibration.append(time.perf_counter() - t0)
        return out

    sizing._calibration = timed
    t = time.perf_counter()
    screened = sizing.screen(req)
    screen_s = time.perf_counter() - t - calibration[0]
    sizing._calibration = calibrate
    t = time.perf_counter()
    result = sizing.size(req, top=5, accept=check_parts)
    whole_s = time.perf_counter() - t
    errors = [abs(r.screen_peak / r.full_peak - 1) for r in result.results]
    rate = len(screened) / screen_s
    worst = max(errors) if errors else float("nan")
    median = statistics.median(errors) if errors else float("nan")
    ok = rate >= SCREEN_PER_S and whole_s <= WHOLE_S and worst <= SCREEN_ERROR
    print(
        f"{path.name}: screen {len(screened)} candidates in {screen_s:.2f} s ({rate:.0f}/s, target "
        f"{SCREEN_PER_S}), after a {calibration[0]:.1f} s calibration"
    )
    print(
        f"  whole size run {whole_s:.1f} s (target {WHOLE_S:.0f} s), {len(result.results)} re-checked in full"
    )
    print(
        f"  screen EMF against the full model: median {median:.1%}, worst {worst:.1%} "
        f"(target {SCREEN_ERROR:.0%})" + ("" if ok else "  MISSED")
    )
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
