"""The stator: its lugged outline and lead slots, the mould it is cast in, and the steel
plate behind a stator that stands still; machine coordinates seen from above."""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from fab.outlines.discs import (
    _ring_hole,
    jacking,
)
from fab.outlines.shapes import (
    LEAD_SLOT_MIN_MM,
    PLACE_CLEARANCE_MM,
    STUD_CLEARANCE_MM,
    Feature,
    Flat,
    Path,
    _rect,
    circle,
    offset_convex,
    polygon,
)
from layout.design import Design
from layout.winding import terminal_markings
from layout.wire import bundle_diameter_mm


@dataclass(frozen=True)
class StatorLayout:
    inner_radius_mm: float
    outer_radius_mm: float
    lug_radius_mm: float  # centre of the mounting holes
    lug_half_width_mm: float
    lug_angles_deg: tuple[float, ...]
    hole_mm: float
    mould_radius_mm: float
    lead_slot_width_mm: float
    lead_slot_angles_deg: tuple[float, ...]
    lead_names: tuple[str, ...]
    plate_inner_radius_mm: float | None


def exit_angle_deg(design: Design) -> float:
    """Where the leads leave the stator: at the first empty position, whose room the phase
    ends run through, or beside position 1."""
    lay = design.layout
    if lay.empty_positions:
        return 360.0 * (lay.empty_positions[0] - 1) / lay.coil_positions
    return 0.0


def stator_layout(design: Design) -> StatorLayout:
    spec, geo = design.spec, design.geometry
    st = spec.stator
    r_in = geo.coil.r_min_mm - st.resin_rim_mm
    r_out = geo.coil.r_max_mm + st.resin_rim_mm
    hole = st.mounting_hole_diameter_mm
    r_lug = max(r_out, design.forces.disc_outer_radius_mm + STUD_CLEARANCE_MM) + hole / 2
    half = hole  # half a hole's diameter of material each side of it
    n = st.mounting_lugs
    at = exit_angle_deg(design)
    lugs = tuple(at + 360.0 * (k + 0.5) / n for k in range(n))  # symmetric about the exits
    wire = design.prediction.wire
    slot = max(LEAD_SLOT_MIN_MM, bundle_diameter_mm(wire) + 1.5)
    names = terminal_markings(st.phases)
    pitch = 2.5 * slot / r_out  # radians between slot centres on the rim
    slots = tuple(at + math.degrees((i - (len(names) - 1) / 2) * pitch) for i in range(len(names)))
    plate_in = None
    if spec.rotor.topology == "one_disc_steel_stator":
        jack = jacking(design)
        plate_in = r_in
        if jack is not None:
            plate_in = min(r_in, jack.radius_mm - jack.tap_drill_mm / 2 - spec.rotor.min_web_mm)
    return StatorLayout(
        inner_radius_mm=r_in,
        outer_radius_mm=r_out,
        lug_radius_mm=r_lug,
        lug_half_width_mm=half,
        lug_angles_deg=lugs,
        hole_mm=hole,
        mould_radius_mm=r_lug + half + st.mould_wall_mm,
        lead_slot_width_mm=slot,
        lead_slot_angles_deg=slots,
        lead_names=names,
        plate_inner_radius_mm=plate_in,
    )


def lugged_outline(sl: StatorLayout, g: float = 0.0) -> Path:
    """The stator's rim: a circle with a lug round every mounting hole, grown by g."""
    R = sl.outer_radius_mm + g
    w = sl.lug_half_width_mm + g
    rl = sl.lug_radius_mm
    s = math.degrees(math.asin(w / R))
    xy, bulge = [], []
    angles = sl.lug_angles_deg
    for i, phi in enumerate(angles):
        nxt = angles[(i + 1) % len(angles)] + (360.0 if i == len(angles) - 1 else 0.0)
        p = math.radians(phi)
        u = np.array([math.cos(p), math.sin(p)])
        v = np.array([-math.sin(p), math.cos(p)])
        a = math.radians(phi - s)
        xy.append([R * math.cos(a), R * math.sin(a)])
        bulge.append(0.0)  # straight side of the lug
        xy.append(rl * u - w * v)
        bulge.append(1.0)  # half circle round the hole
        xy.append(rl * u + w * v)
        bulge.append(0.0)
        d = math.radians(phi + s)
        xy.append([R * math.cos(d), R * math.sin(d)])
        span = math.radians((nxt - s) - (phi + s))
        bulge.append(math.tan(span / 4))  # rim arc to the next lug
    return Path(np.array(xy), np.array(bulge))


def _lug_holes(sl: StatorLayout, g: float) -> list[Feature]:
    return [
        Feature(
            "lug",
            _ring_hole(sl.lug_radius_mm, a, sl.hole_mm, g),
            f"mounting hole {k}",
            "stator.mounting_hole_diameter_mm",
            sl.hole_mm,
        )
        for k, a in enumerate(sl.lug_angles_deg, start=1)
    ]


def coil_place(design: Design, index: int) -> Path:
    """Where coil `index` sits over the mould: its hole, less the clearance it slides on with."""
    geo = design.geometry
    hole = offset_convex(geo.coil.hole_mm, -PLACE_CLEARANCE_MM)
    return polygon(hole).moved(360.0 * (index - 1) / geo.positions)


def _bore_and_lugs(
    design: Design, sl: StatorLayout, bore_radius_mm: float, what: str, g: float
) -> list[Feature]:
    """The bore and the mounting holes that the stator and its steel plate share."""
    bore = Feature(
        "bore", circle(0, 0, bore_radius_mm - g), what, "stator.resin_rim_mm", design.spec.stator.resin_rim_mm
    )
    return [bore, *_lug_holes(sl, g)]


def stator_flat(design: Design, kerf_mm: float = 0.0) -> Flat:
    """The cast stator seen from above: rim with lugs, bore, mounting holes and the window
    each coil's place leaves. Also the cavity of the mould and the frame cut round it."""
    spec, geo = design.spec, design.geometry
    sl = stator_layout(design)
    g = kerf_mm / 2
    holes = _bore_and_lugs(design, sl, sl.inner_radius_mm, "stator bore", g)
    for idx in geo.coil_indices:
        holes.append(
            Feature(
                "window",
                polygon(offset_convex(coil_place(design, idx).xy, -g)),
                f"coil place {idx}",
                "stator.hole_margin_mm",
                spec.stator.hole_margin_mm,
            )
        )
    reference = []
    for idx in geo.coil_indices:
        outline, hole = geo.coil_polygons(idx)
        reference.append(
            Feature(
                "coil",
                polygon(outline),
                f"coil {idx}",
                "stator.coil_clearance_mm",
                spec.stator.coil_clearance_mm,
            )
        )
    return Flat(
        part="stator",
        title="cast stator",
        thickness_mm=spec.stator.thickness_mm,
        thickness_key="stator.thickness_mm",
        outline=Feature(
            "outline", lugged_outline(sl, g), "stator rim", "stator.resin_rim_mm", spec.stator.resin_rim_mm
        ),
        holes=tuple(holes),
        reference=tuple(reference),
        web_mm=spec.rotor.min_web_mm,
    )


def lead_slots(design: Design) -> list[Feature]:
    """Slots in the mould's wall at the lead exits (`exit_angle_deg`) that carry the phase ends out."""
    sl = stator_layout(design)
    w = sl.lead_slot_width_mm
    out = []
    for name, a in zip(sl.lead_names, sl.lead_slot_angles_deg, strict=True):
        rect = _rect(sl.outer_radius_mm - 1.0, sl.mould_radius_mm + 1.0, w / 2)
        lugs = float(design.spec.stator.mounting_lugs)
        out.append(Feature("slot", polygon(rect).moved(a), f"lead slot {name}", "stator.mounting_lugs", lugs))
    return out


def _place_labels(design: Design) -> tuple[tuple[str, float, float, float], ...]:
    """Each coil place's number and its phase and polarity, as on the stator map."""
    from fab.outlines.stator_map import stator_map

    out = []
    for p in stator_map(design).positions:
        x, y = p.label_xy
        out += [(str(p.index), x, y + 3.0, 6.0), (p.mark, x, y - 4.5, 3.0)]
    return tuple(out)


def mould_split_rays(design: Design, lap_deg: float) -> list[float]:
    """Angles a printed mould too large for the bed may be cut along (fab.segments): half
    way between coil places, where only floor, wall and island cross the cut, or through a
    place wide enough; clear by `lap_deg` and 2° of the pins that stand for the mounting
    holes and of the lead slots."""
    sl = stator_layout(design)
    q = design.geometry.positions
    pin = math.degrees(math.asin(min(1.0, sl.hole_mm / 2 / sl.lug_radius_mm)))
    slot = max(abs(a - exit_angle_deg(design)) for a in sl.lead_slot_angles_deg)
    slot += math.degrees(math.asin(min(1.0, sl.lead_slot_width_mm / 2 / sl.outer_radius_mm)))

    def clear(a: float, centre: float, half: float) -> bool:
        return abs((a - centre + 180.0) % 360.0 - 180.0) > half + lap_deg + 2.0

    # through the middle of a coil's place too, where the place is wide enough that each half
    # of it stays joined to its own segment across the lap
    place = offset_convex(design.geometry.coil.hole_mm, -PLACE_CLEARANCE_MM)
    narrowest = float(np.degrees(np.ptp(np.arctan2(place[:, 1], place[:, 0]))))
    through = narrowest > 2 * (lap_deg + 2.0)
    out = []
    for k in range(q):
        for a in [360.0 * (k + 0.5) / q] + ([360.0 * k / q] if through else []):
            if all(clear(a, lug, pin) for lug in sl.lug_angles_deg) and clear(
                a, exit_angle_deg(design), slot
            ):
                out.append(a)
    return sorted(out)


def frame_split_rays(design: Design, lap_deg: float) -> list[float]:
    """Angles a printed stator frame too large for the bed may be cut along (fab.segments):
    any whole degree clear by `lap_deg` and 2° of the lugs and the lead grooves. Its pockets
    go through it, so no cut can strand a piece."""
    sl = stator_layout(design)
    lug = math.degrees(math.asin(min(1.0, 2 * sl.lug_half_width_mm / sl.lug_radius_mm)))
    at = exit_angle_deg(design)
    slot = max(abs(a - at) for a in sl.lead_slot_angles_deg)
    slot += math.degrees(math.asin(min(1.0, sl.lead_slot_width_mm / 2 / sl.outer_radius_mm)))

    def clear(a: float, centre: float, half: float) -> bool:
        return abs((a - centre + 180.0) % 360.0 - 180.0) > half + lap_deg + 2.0

    return [
        float(a)
        for a in range(360)
        if all(clear(a, g, lug) for g in sl.lug_angles_deg) and clear(a, at, slot)
    ]


def mould_split(design: Design) -> tuple[float, float, Callable[[float], list[float]]]:
    """How a printed mould (or its lid's outline) is split when it outgrows the bed, for
    fab.segments.segment_plan: its outer radius, the joint holes' radius (mid-wall) and the
    rays it allows."""
    sl = stator_layout(design)
    joint = sl.mould_radius_mm - design.spec.stator.mould_wall_mm / 2
    return sl.mould_radius_mm, joint, lambda lap: mould_split_rays(design, lap)


def frame_split(design: Design) -> tuple[float, float, Callable[[float], list[float]]]:
    """The same for the printed stator frame: out to its lugs, the joint holes in the solid
    ring round the bore."""
    sl = stator_layout(design)
    joint = sl.inner_radius_mm + design.spec.stator.resin_rim_mm / 2
    return sl.lug_radius_mm + sl.lug_half_width_mm, joint, lambda lap: frame_split_rays(design, lap)


def template_split_rays(design: Design, disc: int) -> list[float]:
    """Angles a printed placing template too large for the bed may be cut along (fab.segments):
    half way between neighbouring magnets, the joint hole on the pitch circle between them."""
    angles = sorted(
        math.degrees(math.atan2(m.center_mm[1], m.center_mm[0])) % 360.0
        for m in design.geometry.magnets
        if m.disc == disc
    )
    pairs = zip(angles, angles[1:] + [angles[0] + 360.0], strict=True)
    return [((a + b) / 2) % 360.0 for a, b in pairs]


def _mould_edge(sl: StatorLayout, st, g: float) -> Feature:
    """The mould's round edge, which its base, frame and lid share."""
    return Feature(
        "outline",
        circle(0, 0, sl.mould_radius_mm + g),
        "mould edge",
        "stator.mould_wall_mm",
        st.mould_wall_mm,
    )


def coil_outer_radius_mm(design: Design) -> float:
    """Radius of the coils' outer corners, where the rim of the stator begins."""
    return float(np.hypot(*design.geometry.coil.outline_mm.T).max())


def mould_flats(design: Design, kerf_mm: float = 0.0) -> list[Flat]:
    """The mould as boards: base, frame round the stator, island for its bore, one core per coil.

    The frame, island and cores are cut from a board as thick as the stator; glued on the
    base they make the same cavity as the printed mould.
    """
    spec, geo = design.spec, design.geometry
    sl = stator_layout(design)
    g = kerf_mm / 2
    st = spec.stator
    cavity = stator_flat(design)
    windows = tuple(Feature("window", f.path, f.label, f.key) for f in cavity.holes if f.kind == "window")
    base = Flat(
        part="stator_mould_base",
        title="stator mould base board",
        thickness_mm=st.mould_wall_mm,
        thickness_key="stator.mould_wall_mm",
        outline=_mould_edge(sl, st, g),
        holes=tuple(_lug_holes(sl, g)),  # pins stand here for the mounting holes
        reference=(
            Feature("cavity", cavity.outline.path, "inside of the frame", "stator.resin_rim_mm"),
            Feature("island", circle(0, 0, sl.inner_radius_mm), "island", "stator.resin_rim_mm"),
        )
        + windows,
        labels=_place_labels(design),
    )
    frame = Flat(
        part="stator_mould_frame",
        title="stator mould frame",
        thickness_mm=st.thickness_mm,
        thickness_key="stator.thickness_mm",
        outline=_mould_edge(sl, st, g),
        holes=(
            Feature(
                "cavity",
                lugged_outline(sl, -g),
                "inside of the frame",
                "stator.resin_rim_mm",
                st.resin_rim_mm,
            ),
        ),
        reference=tuple(lead_slots(design)),
        web_mm=0.0,
    )
    island = Flat(
        part="stator_mould_island",
        title="stator mould island",
        thickness_mm=st.thickness_mm,
        thickness_key="stator.thickness_mm",
        outline=Feature(
            "outline", circle(0, 0, sl.inner_radius_mm + g), "island", "stator.resin_rim_mm", st.resin_rim_mm
        ),
    )
    place = offset_convex(geo.coil.hole_mm, g - PLACE_CLEARANCE_MM)
    core = Flat(
        part="stator_mould_core",
        title="stator mould coil place",
        thickness_mm=st.thickness_mm,
        thickness_key="stator.thickness_mm",
        outline=Feature(
            "outline",
            polygon(place - (polygon(geo.coil.hole_mm).centroid()[0], 0.0)),
            "coil place",
            "stator.hole_margin_mm",
            st.hole_margin_mm,
        ),
    )
    return [base, frame, island, core]


PRINT_FIT_MM = 0.3  # a printed pocket this much larger all round than what drops into it (common practice)
MIN_PRINTED_WEB_MM = 0.8  # two perimeters of a 0.4 mm nozzle between the frame's pockets (common practice)
LEAD_CHANNEL_DEPTH_MM = 3.0  # the printed frame's lead channel, from its top face (our choice)
LEAD_CHANNEL_WALL_MM = 2.0  # frame left outside the channel (our choice)


def printed_frame_flat(design: Design) -> Flat:
    """The printed stator frame (a printable binder: pla, petg, abs) seen from above: the
    lugged rim and bore of the cast stator, a pocket through it per coil, each the coil's
    outline and its former's flange with PRINT_FIT_MM all round, and the lead slots at the
    exits as grooves from the top. The lead channel round the rim is cut by fab.solids."""
    spec, geo = design.spec, design.geometry
    sl = stator_layout(design)
    holes = _bore_and_lugs(design, sl, sl.inner_radius_mm, "frame bore", 0.0)
    for idx in geo.coil_indices:
        outline, _ = geo.coil_polygons(idx)
        holes.append(
            Feature("coil_pocket", polygon(offset_convex(outline, PRINT_FIT_MM)), f"coil pocket {idx}",
                    "stator.coil_clearance_mm", spec.stator.coil_clearance_mm)
        )  # fmt: skip
    grooves = tuple(
        dataclasses.replace(f, kind="groove", depth_mm=LEAD_CHANNEL_DEPTH_MM) for f in lead_slots(design)
    )
    return Flat(
        part="stator_frame",
        title="printed stator frame",
        thickness_mm=spec.stator.thickness_mm,
        thickness_key="stator.thickness_mm",
        outline=Feature(
            "outline", lugged_outline(sl), "stator rim", "stator.resin_rim_mm", spec.stator.resin_rim_mm
        ),
        holes=tuple(holes),
        pockets=grooves,
        web_mm=MIN_PRINTED_WEB_MM,
        web_key="",  # a printer's limit, not a key's: the pockets' key is named
    )


def lead_channel_radii_mm(design: Design) -> tuple[float, float]:
    """(inner, outer) radius of the printed frame's lead channel: from the pockets' outer
    ends to LEAD_CHANNEL_WALL_MM inside the rim."""
    r_coil = coil_outer_radius_mm(design) + PRINT_FIT_MM
    return r_coil, stator_layout(design).outer_radius_mm - LEAD_CHANNEL_WALL_MM


def former_flats(design: Design) -> tuple[Flat, Flat]:
    """A coil former (bobbin) in coil 1's frame moved to the origin: its flange, the coil's
    outline less PRINT_FIT_MM, as thick as the stator's cover under the coil; and its core,
    the coil's hole, as high as the coil. The coil is wound on the core against the flange
    and stays on it in its pocket."""
    geo, st = design.geometry, design.spec.stator
    c = geo.coil
    centre = polygon(c.hole_mm).centroid()
    flange = Flat(
        part="coil_former_flange",
        title="coil former flange",
        thickness_mm=c.z_min_mm - geo.stator_z_mm[0],
        thickness_key="stator.resin_cover_mm",
        outline=Feature("outline", polygon(offset_convex(c.outline_mm, -PRINT_FIT_MM) - centre), "flange",
                        "stator.coil_clearance_mm", st.coil_clearance_mm),
    )  # fmt: skip
    core = Flat(
        part="coil_former_core",
        title="coil former core",
        thickness_mm=c.z_max_mm - c.z_min_mm,
        thickness_key="stator.thickness_mm",
        outline=Feature(
            "outline", polygon(c.hole_mm - centre), "core", "stator.hole_margin_mm", st.hole_margin_mm
        ),
    )
    return flange, core


LID_VENT_MM = 6.0  # vent holes in the mould's lid, over the rim of resin beyond the coils
LID_VENTS = 8  # our choice: one each 45°, so no part of the rim is far from a vent


def mould_lid_flat(design: Design, kerf_mm: float = 0.0) -> Flat:
    """The mould's lid: a board as wide as the mould, clamped on the frame's top once the
    mould is filled, so the casting sets flat and exactly as thick as the stator (the running
    clearance depends on it). Vent holes over the outer rim of resin let the excess and the
    air out; the bore is left open over the island."""
    st = design.spec.stator
    sl = stator_layout(design)
    g = kerf_mm / 2
    r_coil = coil_outer_radius_mm(design)
    r_vent = (r_coil + sl.outer_radius_mm) / 2
    d_vent = min(LID_VENT_MM, sl.outer_radius_mm - r_coil - 2.0)
    vents = [
        Feature("vent", _ring_hole(r_vent, 360.0 * (k + 0.5) / LID_VENTS, d_vent, g), f"vent {k + 1}",
                "stator.resin_rim_mm", st.resin_rim_mm)
        for k in range(LID_VENTS)
    ]  # fmt: skip
    return Flat(
        part="stator_mould_lid",
        title="stator mould lid",
        thickness_mm=st.mould_wall_mm,
        thickness_key="stator.mould_wall_mm",
        outline=_mould_edge(sl, st, g),
        holes=(
            Feature(
                "bore", circle(0, 0, sl.inner_radius_mm - 2.0 - g), "over the island", "stator.resin_rim_mm"
            ),
            *vents,
        ),
        web_mm=design.spec.rotor.min_web_mm,
    )


def stator_plate_flat(design: Design, kerf_mm: float = 0.0) -> Flat:
    """The steel plate behind a one-disc stator; tapped for the jacking screws if needed."""
    spec = design.spec
    sl = stator_layout(design)
    g = kerf_mm / 2
    holes = _bore_and_lugs(design, sl, sl.plate_inner_radius_mm, "plate bore", g)
    jack = jacking(design)
    if jack is not None and jack.on == "stator plate":
        for k, a in enumerate(jack.angles_deg, start=1):
            holes.append(
                Feature(
                    "jack",
                    _ring_hole(jack.radius_mm, a, jack.tap_drill_mm, g),
                    f"jacking screw hole {k}",
                    "rotor.jacking_circle_mm",
                    2 * jack.radius_mm,
                )
            )
    return Flat(
        part="stator_plate",
        title="steel stator plate",
        thickness_mm=spec.rotor.stator_plate_thickness_mm,
        thickness_key="rotor.stator_plate_thickness_mm",
        outline=Feature(
            "outline", lugged_outline(sl, g), "plate rim", "stator.resin_rim_mm", spec.stator.resin_rim_mm
        ),
        holes=tuple(holes),
        web_mm=spec.rotor.min_web_mm,
    )
