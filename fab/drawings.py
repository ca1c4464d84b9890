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
    from ezdxf.enums import TextEntityAlignment

    for text, x, y, height in flat.labels:
        label = msp.add_text(text, height=height, dxfattribs={"layer": "REFERENCE"})
        label.set_placement((x, y), align=TextEntityAlignment.MIDDLE_CENTER)
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


# The stator map's layers: a drawing to read and to lay beside the mould, nothing to cut.
MAP_LAYERS = {
    # name: (ACI colour, linetype, description)
    "STATOR": (8, "Continuous", "the cast stator's rim and bore, each coil's outline and hole"),
    "EMPTY": (8, "DASHED", "an empty position: resin only"),
    "NUMBERS": (7, "Continuous", "position numbers, phase and polarity"),
    "LEADS": (7, "Continuous", "each coil's start (S) and finish (F) lead"),
    "JOIN-U": (1, "Continuous", "joins of phase U"),
    "JOIN-V": (3, "Continuous", "joins of phase V"),
    "JOIN-W": (5, "Continuous", "joins of phase W"),
    "JOINTS": (6, "Continuous", "the star point or the delta's joints, made at the terminals"),
    "TERMINALS": (7, "Continuous", "lead exits and their IEC 60034-8 markings"),
    "NOTE": (7, "Continuous", "title and notes"),
}
MAP_TEXT_MM = 3.0


def join_layer(group: str) -> str:
    """The map layer of a join: its phase's by terminal letter, or the connection's."""
    from layout.winding import TERMINAL_LETTERS

    return f"JOIN-{TERMINAL_LETTERS[group]}" if group in TERMINAL_LETTERS else "JOINTS"


def stator_map_document(smap, notes: list[str]):
    """An ezdxf document of the stator map (fab.outlines.stator_map), to scale, in mm."""
    import ezdxf
    from ezdxf import units
    from ezdxf.enums import TextEntityAlignment

    from fab.outlines import lugged_outline

    doc = ezdxf.new("R2010", setup=["linetypes"])
    doc.units = units.MM
    doc.header["$INSUNITS"] = units.MM
    doc.header["$MEASUREMENT"] = 1
    doc.header["$PDMODE"] = 34  # points drawn as a circle with a cross, visible in any viewer
    doc.header["$PDSIZE"] = 1.5
    for name, (colour, linetype, description) in MAP_LAYERS.items():
        doc.layers.add(name, color=colour, linetype=linetype).description = description
    msp = doc.modelspace()

    def text(s, xy, layer, height=MAP_TEXT_MM):
        t = msp.add_text(s, height=height, dxfattribs={"layer": layer})
        t.set_placement((float(xy[0]), float(xy[1])), align=TextEntityAlignment.MIDDLE_CENTER)

    def poly(xy, layer, closed=False):
        msp.add_lwpolyline([(float(x), float(y)) for x, y in xy], close=closed, dxfattribs={"layer": layer})

    sl = smap.stator
    rim = lugged_outline(sl)
    msp.add_lwpolyline(
        [(float(x), float(y), float(b)) for (x, y), b in zip(rim.xy, rim.bulge, strict=True)],
        format="xyb",
        close=True,
        dxfattribs={"layer": "STATOR"},
    )
    msp.add_circle((0, 0), sl.inner_radius_mm, dxfattribs={"layer": "STATOR"})
    for p in smap.positions:
        if p.outline is not None:
            poly(p.outline, "STATOR", closed=True)
            poly(p.hole, "STATOR", closed=True)
        else:
            poly(p.hole, "EMPTY", closed=True)
        x, y = p.label_xy
        text(str(p.index), (x, y + MAP_TEXT_MM), "NUMBERS", 2 * MAP_TEXT_MM)
        text(p.mark, (x, y - 1.5 * MAP_TEXT_MM), "NUMBERS")
    for node in smap.nodes.values():
        layer = "LEADS" if node.stub is not None else "TERMINALS"
        if node.stub is not None:
            poly(node.stub, "LEADS")
        msp.add_point(node.xy, dxfattribs={"layer": layer})
        text(node.name, label_xy(smap, node), layer, MAP_TEXT_MM * (0.8 if layer == "LEADS" else 1.2))
    for j in smap.joins:
        poly(j.path, join_layer(j.group))
    top = smap.extent_mm
    for k, line in enumerate(notes):
        text(line, (0.0, -top - (k + 1) * 2 * MAP_TEXT_MM), "NOTE")
    return doc


def label_xy(smap, node) -> tuple[float, float]:
    """Where a lead's or terminal's name is written: inward of a lead's point (over the
    coil's outer end), outward of a terminal's."""
    import math

    from fab.outlines.stator_map import EXIT_REACH_MM, LABEL_REACH_MM

    r = math.hypot(*node.xy)
    step = -2.2 * MAP_TEXT_MM if node.stub is not None else LABEL_REACH_MM - EXIT_REACH_MM
    return node.xy[0] * (r + step) / r, node.xy[1] * (r + step) / r


def write_stator_map(smap, path: FilePath, notes: list[str]) -> None:
    """Write the stator map's drawing; raises if ezdxf's audit finds anything to fix."""
    doc = stator_map_document(smap, notes)
    auditor = doc.audit()
    if auditor.has_errors or auditor.has_fixes:
        raise RuntimeError(
            f"{path.name}: DXF audit found {len(auditor.errors)} errors, {len(auditor.fixes)} fixes"
        )
    doc.saveas(path)
