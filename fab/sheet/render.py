"""Pages of a written sheet as PNG images, for looking it over on screen."""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path


class RenderUnavailable(RuntimeError):
    """No PDF rasteriser on this machine (pdftoppm from poppler-utils)."""


def render_pages_png(pdf_path: str | os.PathLike, out_dir: str | os.PathLike, dpi: int = 100) -> list[Path]:
    """Every page of `pdf_path` as `out_dir/<stem>-page-NN.png`, by pdftoppm; the paths in order.

    Pages left over from an earlier, longer sheet of the same name are removed.
    Raises RenderUnavailable when pdftoppm is not installed.
    """
    exe = shutil.which("pdftoppm")
    if exe is None:
        raise RenderUnavailable("pdftoppm not found: install poppler-utils to render pages")
    pdf_path, out_dir = Path(pdf_path), Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    stem = pdf_path.stem
    with tempfile.TemporaryDirectory(dir=out_dir) as work:
        subprocess.run(
            [exe, "-png", "-r", str(int(dpi)), str(pdf_path), str(Path(work) / "p")],
            check=True,
            capture_output=True,
        )
        made = sorted(Path(work).glob("p-*.png"), key=lambda p: int(p.stem.split("-")[-1]))
        for old in out_dir.glob(f"{stem}-page-*.png"):
            old.unlink()
        out = []
        for n, png in enumerate(made, start=1):
            dest = out_dir / f"{stem}-page-{n:02d}.png"
            os.replace(png, dest)
            out.append(dest)
    return out
