"""The coil winding jig: core and cheeks, in the frame of coil 1 moved so the core's centre
is the origin."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fab.outlines.shapes import (
    JIG_MARGIN_MM,
    JIG_PIN_DIAMETER_MM,
    JIG_WEB_MM,
    Feature,
    Flat,
    circle,
    offset_convex,
    polygon,
)
from layout.design import Design
from layout.wire import bundle_diameter_mm


@dataclass(frozen=True)
class JigLayout:
    shift_x_mm: float  # coil frame x of the core's centre (the jig's origin)
    lead_slot_mm: float
    pin_offset_mm: float  # each pin this far either side of the centre, along the radius
    hole_radial_mm: float  # the coil hole's radial size, which places the pins


def jig_layout(design: Design) -> JigLayout:
    hole = design.geometry.coil.hole_mm
    cx = float(polygon(hole).centroid()[0])
    wire = design.prediction.wire
    slot = max(2.0, bundle_diameter_mm(wire) + 0.5)
    radial = float(hole[:, 0].max() - hole[:, 0].min())
    # A wedge's centroid lies towards its wide, outer end: the outer pin keeps its web there.
    room = float(hole[:, 0].max()) - cx - JIG_PIN_DIAMETER_MM / 2 - JIG_WEB_MM
    return JigLayout(cx, slot, min(0.3 * radial, room), radial)


def _jig_holes(design: Design, g: float) -> list[Feature]:
    jl = jig_layout(design)
    d = design.spec.fab.winder_hole_diameter_mm
    out = [Feature("winder", circle(0, 0, d / 2 - g), "winder shaft hole", "fab.winder_hole_diameter_mm", d)]
    # The pins stand a fixed share of the hole's radial size from the centre: the hole's
    # size moves them, and the winder shaft's size does not.
    for k, x in enumerate((-jl.pin_offset_mm, jl.pin_offset_mm), start=1):
        out.append(
            Feature(
                "pin",
                circle(x, 0, JIG_PIN_DIAMETER_MM / 2 - g),
                f"pin hole {k}",
                "stator.hole_radial_mm",
                jl.hole_radial_mm,
            )
        )
    return out


def jig_core_flat(design: Design, kerf_mm: float = 0.0) -> Flat:
    """The core the coil is wound on: the coil's hole, as thick as the coil."""
    geo = design.geometry
    jl = jig_layout(design)
    g = kerf_mm / 2
    core = offset_convex(geo.coil.hole_mm - (jl.shift_x_mm, 0), g)
    return Flat(
        part="winding_jig_core",
        title="winding jig core",
        thickness_mm=geo.coil.thickness_mm,
        thickness_key="stator.thickness_mm",
        outline=Feature("outline", polygon(core), "core", "stator.hole_radial_mm", None),
        holes=tuple(_jig_holes(design, g)),
        web_mm=JIG_WEB_MM,
        web_key="",
    )


def jig_cheek_flat(design: Design, kerf_mm: float = 0.0) -> Flat:
    """A cheek (make two): the coil's outline and a margin, with a slot for the start lead."""
    geo = design.geometry
    jl = jig_layout(design)
    g = kerf_mm / 2
    outer = offset_convex(geo.coil.outline_mm - (jl.shift_x_mm, 0), JIG_MARGIN_MM + g)
    # The start lead leaves the core's outer end straight out to the cheek's edge.
    x_core = float(geo.coil.hole_mm[:, 0].max()) - jl.shift_x_mm + g
    w = jl.lead_slot_mm / 2 - g
    # outer is counter-clockwise from the inner-lower corner: the outer side runs from corner 1 to 2.
    x_edge = float(outer[1, 0])
    notch = [[x_edge, -w], [x_core, -w], [x_core, w], [x_edge, w]]
    pts = np.vstack([outer[:2], notch, outer[2:]])
    core = geo.coil.hole_mm - (jl.shift_x_mm, 0)
    coil = geo.coil.outline_mm - (jl.shift_x_mm, 0)
    return Flat(
        part="winding_jig_cheek",
        title="winding jig cheek",
        thickness_mm=design.spec.fab.jig_cheek_thickness_mm,
        thickness_key="fab.jig_cheek_thickness_mm",
        outline=Feature("outline", polygon(pts), "cheek", "fab.jig_cheek_thickness_mm", None),
        holes=tuple(_jig_holes(design, g)),
        reference=(
            Feature("core", polygon(core), "core outline", "stator.hole_radial_mm"),
            Feature("coil", polygon(coil), "coil outline", "stator.leg_width_mm"),
        ),
        web_mm=JIG_WEB_MM,
        web_key="",
    )
