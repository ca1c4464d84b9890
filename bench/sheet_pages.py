"""Write a design's build sheet and a PNG of every page, for looking the sheet over.

    .venv/bin/python bench/sheet_pages.py DESIGN.toml OUTDIR [--paper a4|letter] [--dpi N]

Writes OUTDIR/NAME-sheet.pdf and OUTDIR/NAME-sheet-page-NN.png, and prints how long the
design, the sheet and the rendering took. The PNGs need pdftoppm (poppler-utils); without
it the PDF is still written and the script exits 1 saying so. A bad design file is one line
on stderr and exit 2, as with the statorsmith commands.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from fab.sheet import PAPERS, RenderUnavailable, render_pages_png, write_sheet  # noqa: E402
from layout.design import compute_design  # noqa: E402
from layout.spec import DesignError, load_spec  # noqa: E402


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("design", type=Path)
    ap.add_argument("outdir", type=Path)
    ap.add_argument("--paper", choices=sorted(PAPERS), default="a4")
    ap.add_argument("--dpi", type=int, default=100)
    args = ap.parse_args(argv)
    t0 = time.perf_counter()
    try:
        design = compute_design(load_spec(args.design))
    except DesignError as e:
        print(f"Error: {e}", file=sys.stderr)
        return 2
    t1 = time.perf_counter()
    args.outdir.mkdir(parents=True, exist_ok=True)
    pdf = write_sheet(design, args.outdir / f"{design.spec.name}-sheet.pdf", paper=args.paper)
    t2 = time.perf_counter()
    print(f"{pdf}  (design {t1 - t0:.2f} s, sheet {t2 - t1:.2f} s)")
    try:
        pages = render_pages_png(pdf, args.outdir, dpi=args.dpi)
    except RenderUnavailable as e:
        print(f"Error: {e}", file=sys.stderr)
        return 1
    print(f"{len(pages)} pages at {args.dpi} dpi in {time.perf_counter() - t2:.2f} s:")
    for page in pages:
        print(f"  {page}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
