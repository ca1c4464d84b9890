"""DXF drawings of the flat parts, for laser, waterjet, router or a printed template.

Units mm ($INSUNITS = 4). Every outline is a closed LWPOLYLINE, arcs as bulges, on a layer
that says what the cutter does with it:

  CUT        through cuts: the part's outline and its holes (kerf compensated if asked)
  POCKET     blind pockets from the top face, depth in the part's note
  ENGRAVE    marks to engrave, etch or scribe: polarity letters, index, disc number
  REFERENCE  lines not to cut: magnet outlines, where pads and cores go, the part's note

ezdxf is imported inside the functions, so the commands that write no drawings stay light.
"""

from __future__ import annotations

from pathlib import Path as FilePath

from fab.outlines import Feature, Flat

LAYERS = {
    # name: (ACI colour, linetype, description)
    "CUT": (1, "Continuous", "cut through"),
    "POCKET": (6, "Continuous", "blind pocket from the top face"),
    "ENGRAVE": (5, "Continuous", "engrave, etch or scribe"),
    "REFERENCE": (3, "DASHED", "reference only, do not cut"),
}
NOTE_HEIGHT_MM = 4.0


def _polyline(msp, feature: Feature, layer: str) -> None:
    p = feature.path
    pts = [(float(x), float(y), float(b)) for (x, y), b in zip(p.xy, p.bulge, strict=True)]
    msp.add_lwpolyline(pts, format="xyb", close=True, dxfattribs={"layer": layer})


def flat_document(flat: Flat, note: str):
    """An ezdxf document of one flat part with its note on the reference layer."""
    import ezdxf
    from ezdxf import units

    doc = ezdxf.new("R2010", setup=["linetypes"])
    doc.units = units.MM
    doc.header["$INSUNITS"] = units.MM
    doc.header["$MEASUREMENT"] = 1  # metric
    for name, (colour, linetype, description) in LAYERS.items():
        layer = doc.layers.add(name, color=colour, linetype=linetype)
        layer.description = description
    msp = doc.modelspace()
    _polyline(msp, flat.outline, "CUT")
    for f in flat.holes:
        _polyline(msp, f, "CUT")
    for f in flat.pockets:
        _polyline(msp, f, "POCKET")
    for f in flat.engraved:
        _polyline(msp, f, "ENGRAVE")
    for f in flat.reference:
        _polyline(msp, f, "REFERENCE")
    pts = flat.outline.path.points()
    x0, y0 = float(pts[:, 0].min()), float(pts[:, 1].min())
    for i, line in enumerate(note.splitlines()):
        y = y0 - 2 * NOTE_HEIGHT_MM * (i + 1)
        text = msp.add_text(line, height=NOTE_HEIGHT_MM, dxfattribs={"layer": "REFERENCE"})
        text.set_placement((x0, y))
    return doc


def part_note(flat: Flat, material: str, kerf_mm: float, design_name: str) -> str:
    lines = [f"{design_name}: {flat.title}", f"{material}, {flat.thickness_mm:g} mm thick; units mm"]
    if flat.pockets:
        depth = flat.pockets[0].depth_mm
        lines.append(f"POCKET layer: {len(flat.pockets)} pockets {depth:g} mm deep from the top face")
    if kerf_mm > 0:
        lines.append(f"CUT paths offset for a {kerf_mm:g} mm kerf")
    else:
        lines.append("CUT paths on the part's edge (no kerf)")
    return "\n".join(lines)


def write_dxf(flat: Flat, path: FilePath, note: str) -> None:
    """Write the part's drawing; raises if ezdxf's audit finds anything to fix."""
    doc = flat_document(flat, note)
    auditor = doc.audit()
    if auditor.has_errors or auditor.has_fixes:
        found = f"{len(auditor.errors)} errors, {len(auditor.fixes)} fixes"
        raise RuntimeError(f"{path.name}: DXF audit found {found}")
    doc.saveas(path)
