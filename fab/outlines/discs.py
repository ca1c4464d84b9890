"""Rotor discs and their magnet placing templates: the hub, dowels, jacking screws, pockets
and marks, as made (magnet side up; a plain steel disc with the face towards the stator up)."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from fab.outlines.shapes import (
    ENGRAVE_DEPTH_MM,
    INDEX_SIZE_MM,
    JACK_STATOR_CLEARANCE_MM,
    MARK_GAP_MM,
    MARK_HEIGHT_MM,
    Feature,
    Flat,
    Path,
    _rect,
    circle,
    glyph,
    polygon,
)
from layout.design import Design
from layout.materials import METRIC_THREADS
from layout.rotor import (
    BALANCE_SCREW,
    balance_positions,
    disc_count,
    disc_thickness_mm,
    hub_bolt_radius_mm,
    is_plain_disc,
    is_steel_disc,
    magnet_footprint_half_mm,
    part_angle_deg,
    pocket_clearance_mm,
    pocket_depth_mm,
    pocket_marks,
)
from layout.spec import Spec


@dataclass(frozen=True)
class Jacking:
    screw: str
    tap_drill_mm: float
    diameter_mm: float
    radius_mm: float
    angles_deg: tuple[float, ...]  # machine angles
    on: str  # "disc 2" or "stator plate": where the tapped holes are
    load_per_screw_n: float


@dataclass(frozen=True)
class DiscLayout:
    """Features every rotor disc and template shares, at machine angles."""

    outer_radius_mm: float
    bore_radius_mm: float
    hub_radius_mm: float
    hub_hole_mm: float
    hub_angles_deg: tuple[float, ...]
    dowel_mm: float
    dowel_angles_deg: tuple[float, ...]
    place_half_mm: tuple[float, float]  # magnet place (radial, tangential), clearance included
    magnet_half_mm: tuple[float, float]
    pocket_depth_mm: float
    mark_radius_mm: float
    index_radius_mm: float
    number_radius_mm: float
    jacking: Jacking | None
    balance_radius_mm: float | None
    balance_angles_deg: tuple[float, ...]
    balance_hole_mm: float
    balance_screw: str


hub_radius_mm = hub_bolt_radius_mm  # the rule lives with the rotor (layout.rotor)


def jacking(design: Design) -> Jacking | None:
    """Tapped holes for screws that lower the attracting parts together, if the force needs them.

    Two discs, or a magnet disc and a plain steel disc: in disc 2, bearing on disc 1. Steel
    stator: in the stator plate, bearing on the disc. Inside the stator's bore, clear of the
    hub bolts and dowels.
    """
    spec, f = design.spec, design.forces
    ro = spec.rotor
    if not f.jacking_screws or ro.topology == "one_disc_coreless":
        return None
    t = METRIC_THREADS[ro.jacking_screw]
    r_in = design.geometry.coil.r_min_mm - spec.stator.resin_rim_mm
    hi = r_in - t.diameter_mm / 2 - JACK_STATOR_CLEARANCE_MM
    hub_r = hub_radius_mm(spec)
    lo = hub_r + max(ro.hub_hole_diameter_mm, ro.dowel_diameter_mm) / 2 + ro.min_web_mm + t.tap_drill_mm / 2
    r = (lo + hi) / 2 if lo <= hi else hi  # midway between hub and stator, or as far out as it goes
    if ro.jacking_circle_mm is not None:
        r = ro.jacking_circle_mm / 2
    n = ro.jacking_screws
    others = [(hub_r, a, ro.hub_hole_diameter_mm) for a in _hub_angles(spec)]
    others += [(hub_r, a, ro.dowel_diameter_mm) for a in _dowel_angles(spec)]
    # Turn the ring of screws to the offset that keeps them farthest from the hub's holes.
    offsets = np.arange(0.0, 360.0 / n, 0.5)
    a = np.radians(offsets[:, None] + 360.0 * np.arange(n)[None, :])[..., None]  # (offsets, screws, 1)
    ro_, ao, d = (np.array(v, dtype=float) for v in zip(*others, strict=True))
    b = np.radians(ao)
    dist = np.hypot(r * np.cos(a) - ro_ * np.cos(b), r * np.sin(a) - ro_ * np.sin(b))
    gap = (dist - d / 2 - t.tap_drill_mm / 2).min(axis=(1, 2))
    best = float(offsets[int(np.argmax(gap > gap.max() - 1e-9))])
    on = "stator plate" if ro.topology == "one_disc_steel_stator" else "disc 2"
    return Jacking(
        screw=t.name,
        tap_drill_mm=t.tap_drill_mm,
        diameter_mm=t.diameter_mm,
        radius_mm=r,
        angles_deg=tuple(best + 360.0 * k / n for k in range(n)),
        on=on,
        load_per_screw_n=f.axial_force_n / n,
    )


def _hub_angles(spec: Spec) -> tuple[float, ...]:
    n = spec.rotor.hub_bolts
    return tuple(360.0 * k / n for k in range(n))


def _dowel_angles(spec: Spec) -> tuple[float, ...]:
    """Two dowels in the gaps after hub bolts 1 and 2: no turn of a disc but the right one
    (and no turning over) puts both back over their holes."""
    n = spec.rotor.hub_bolts
    return (180.0 / n, 540.0 / n)


def disc_layout(design: Design) -> DiscLayout:
    spec = design.spec
    ro, mg = spec.rotor, spec.magnets
    clearance = pocket_clearance_mm(spec)
    place = magnet_footprint_half_mm(spec, clearance)
    magnet = magnet_footprint_half_mm(spec, 0.0)
    r_place_in = mg.pitch_radius_mm - place[0]
    r_mark = r_place_in - MARK_GAP_MM - MARK_HEIGHT_MM / 2
    r_index = r_mark - MARK_HEIGHT_MM / 2 - MARK_GAP_MM - INDEX_SIZE_MM / 2
    r_number = r_index - INDEX_SIZE_MM / 2 - MARK_GAP_MM - MARK_HEIGHT_MM / 2
    bp = balance_positions(spec, design.forces.disc_outer_radius_mm)
    return DiscLayout(
        outer_radius_mm=design.forces.disc_outer_radius_mm,
        bore_radius_mm=ro.bore_diameter_mm / 2,
        hub_radius_mm=hub_radius_mm(spec),
        hub_hole_mm=ro.hub_hole_diameter_mm,
        hub_angles_deg=_hub_angles(spec),
        dowel_mm=ro.dowel_diameter_mm,
        dowel_angles_deg=_dowel_angles(spec),
        place_half_mm=place,
        magnet_half_mm=magnet,
        pocket_depth_mm=pocket_depth_mm(spec),
        mark_radius_mm=r_mark,
        index_radius_mm=r_index,
        number_radius_mm=r_number,
        jacking=jacking(design),
        balance_radius_mm=bp.radius_mm if bp else None,
        balance_angles_deg=bp.angles_deg if bp else (),
        balance_hole_mm=METRIC_THREADS[BALANCE_SCREW].tap_drill_mm,
        balance_screw=BALANCE_SCREW,
    )


def _place_path(spec: Spec, half: tuple[float, float], angle_deg: float, grow: float = 0.0) -> Path:
    rc = spec.magnets.pitch_radius_mm
    a, b = half[0] + grow, half[1] + grow
    if spec.magnets.shape == "disc":
        t = math.radians(angle_deg)
        return circle(rc * math.cos(t), rc * math.sin(t), a)
    return polygon(_rect(rc - a, rc + a, b)).moved(angle_deg)


def _ring_hole(r: float, angle_deg: float, d: float, g: float) -> Path:
    t = math.radians(angle_deg)
    return circle(r * math.cos(t), r * math.sin(t), d / 2 - g)


def _common_holes(design: Design, lay: DiscLayout, disc: int, g: float) -> list[Feature]:
    ro = design.spec.rotor
    hub_value = 2 * lay.hub_radius_mm
    out = [
        Feature(
            "bore",
            circle(0, 0, lay.bore_radius_mm - g),
            "bore",
            "rotor.bore_diameter_mm",
            ro.bore_diameter_mm,
        )
    ]
    for k, a in enumerate(lay.hub_angles_deg, start=1):
        path = _ring_hole(lay.hub_radius_mm, part_angle_deg(disc, a), lay.hub_hole_mm, g)
        out.append(Feature("hub", path, f"hub bolt hole {k}", "rotor.hub_bolt_circle_mm", hub_value))
    for k, a in enumerate(lay.dowel_angles_deg, start=1):
        path = _ring_hole(lay.hub_radius_mm, part_angle_deg(disc, a), lay.dowel_mm, g)
        out.append(Feature("dowel", path, f"dowel hole {k}", "rotor.dowel_diameter_mm", lay.dowel_mm))
    return out


def _marks(design: Design, lay: DiscLayout, disc: int) -> list[Feature]:
    """Polarity letter beside every pocket, the index triangle and the disc number at pocket 1."""
    out = []
    depth = ENGRAVE_DEPTH_MM
    for m in pocket_marks(design.geometry, disc):
        path = glyph(m.face_up, lay.mark_radius_mm, m.angle_deg, MARK_HEIGHT_MM)
        out.append(
            Feature(
                "mark", path, f"mark {m.face_up} at pocket {m.pocket}", "magnets.pitch_radius_mm", None, depth
            )
        )
    out.append(
        Feature(
            "index",
            glyph("^", lay.index_radius_mm, 0.0, INDEX_SIZE_MM),
            "index mark",
            "magnets.pitch_radius_mm",
            None,
            depth,
        )
    )
    out.append(
        Feature(
            "number",
            glyph(str(disc), lay.number_radius_mm, 0.0, MARK_HEIGHT_MM),
            f"disc number {disc}",
            "magnets.pitch_radius_mm",
            None,
            depth,
        )
    )
    return out


def _places(design: Design, lay: DiscLayout, disc: int, half, kind: str, key: str, g: float = 0.0):
    spec = design.spec
    return [
        Feature(
            kind,
            _place_path(spec, half, m.angle_deg, g),
            f"{kind} {m.pocket}",
            key,
            spec.magnets.pitch_radius_mm,
        )
        for m in pocket_marks(design.geometry, disc)
    ]


def rotor_disc_flat(design: Design, disc: int, kerf_mm: float = 0.0) -> Flat:
    """Rotor disc `disc` as made, magnet side up; a plain steel disc has the hub's holes, the
    jacking screws' tapped holes, the balance holes and the marks, and no magnet places."""
    spec = design.spec
    ro = spec.rotor
    lay = disc_layout(design)
    plain = is_plain_disc(spec, disc)
    g = kerf_mm / 2
    outline = Feature(
        "outline",
        circle(0, 0, lay.outer_radius_mm + g),
        "outer edge",
        "rotor.disc_outer_diameter_mm",
        2 * lay.outer_radius_mm,
    )
    holes = _common_holes(design, lay, disc, g)
    # A plain steel disc has no magnets (layout.rotor.pocket_marks): no places, no pockets.
    reference = _places(design, lay, disc, lay.magnet_half_mm, "magnet", "magnets.pitch_radius_mm")
    jack = lay.jacking
    if jack is not None:
        for k, a in enumerate(jack.angles_deg, start=1):
            angle = part_angle_deg(disc, a)
            if jack.on == "disc 2" and disc == 2:
                path = _ring_hole(jack.radius_mm, angle, jack.tap_drill_mm, g)
                holes.append(
                    Feature(
                        "jack", path, f"jacking screw hole {k}", "rotor.jacking_circle_mm", 2 * jack.radius_mm
                    )
                )
            elif disc == 1:
                # Where the screw's tip bears: keep it clear (a washer or pad goes here).
                path = _ring_hole(jack.radius_mm, angle, jack.diameter_mm + 4.0, 0.0)
                reference.append(
                    Feature(
                        "landing",
                        path,
                        f"jacking screw pad {k}",
                        "rotor.jacking_circle_mm",
                        2 * jack.radius_mm,
                    )
                )
    if lay.balance_radius_mm is not None:
        for k, a in enumerate(lay.balance_angles_deg, start=1):
            path = _ring_hole(lay.balance_radius_mm, part_angle_deg(disc, a), lay.balance_hole_mm, g)
            holes.append(
                Feature(
                    "balance",
                    path,
                    f"balance hole {k}",
                    "rotor.disc_outer_diameter_mm",
                    2 * lay.outer_radius_mm,
                )
            )
    pockets = ()
    if not is_steel_disc(spec):
        pockets = tuple(
            Feature(f.kind, f.path, f.label, f.key, f.value, lay.pocket_depth_mm)
            for f in _places(design, lay, disc, lay.place_half_mm, "pocket", "magnets.pitch_radius_mm")
        )
    return Flat(
        part=f"rotor_disc_{disc}",
        title=disc_title(spec, disc),
        thickness_mm=disc_thickness_mm(spec, disc),
        thickness_key="rotor.steel_disc_thickness_mm" if plain else "rotor.disc_thickness_mm",
        outline=outline,
        holes=tuple(holes),
        pockets=pockets,
        engraved=tuple(_marks(design, lay, disc)),
        reference=tuple(reference),
        web_mm=ro.min_web_mm,
    )


def disc_title(spec: Spec, disc: int) -> str:
    """How drawings, notes and errors name a rotor disc."""
    where = "lower" if disc == 1 else "upper"
    if spec.rotor.topology == "one_disc_steel_disc":
        return f"rotor disc {disc} ({'plain steel' if is_plain_disc(spec, disc) else 'magnets'}, {where})"
    return f"rotor disc {disc} ({where})" if disc_count(spec) == 2 else "rotor disc"


def template_thickness_mm(spec: Spec) -> float:
    if spec.fab.template_thickness_mm is not None:
        return spec.fab.template_thickness_mm
    return min(6.0, 0.6 * spec.magnets.thickness_mm)


def magnet_template_flat(design: Design, disc: int, kerf_mm: float = 0.0) -> Flat:
    """A plate over a steel disc with a place cut for every magnet; dowels clock and centre it."""
    spec = design.spec
    lay = disc_layout(design)
    g = kerf_mm / 2
    outline = Feature(
        "outline",
        circle(0, 0, lay.outer_radius_mm + g),
        "outer edge",
        "rotor.disc_outer_diameter_mm",
        2 * lay.outer_radius_mm,
    )
    holes = _common_holes(design, lay, disc, g)
    holes += _places(design, lay, disc, lay.place_half_mm, "pocket", "magnets.pitch_radius_mm", -g)
    title = f"magnet template for rotor disc {disc}" if disc_count(spec) == 2 else "magnet template"
    return Flat(
        part=f"magnet_template_{disc}",
        title=title,
        thickness_mm=template_thickness_mm(spec),
        thickness_key="fab.template_thickness_mm",
        outline=outline,
        holes=tuple(holes),
        engraved=tuple(_marks(design, lay, disc)),
        reference=tuple(_places(design, lay, disc, lay.magnet_half_mm, "magnet", "magnets.pitch_radius_mm")),
        web_mm=spec.rotor.min_web_mm,
    )
