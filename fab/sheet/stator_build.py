"""Making the stator: casting it in the mould with its lid, or printing its frame and coil
formers; and the spacer that sets the discs' distance apart."""

from __future__ import annotations

from fab.outlines import LID_VENTS, frame_split, mould_lid_flat, mould_split
from fab.segments import JOIN_WORDS, segment_plan
from fab.sheet.document import _Ctx, _p
from layout.design import Design
from layout.materials import is_printed_binder
from layout.rotor import disc_spacing_mm

MIN_PRINTED_SKIN_MM = 0.8  # two or three layers of a 0.2–0.3 mm layer height (common practice)


def _spacer_words(design: Design) -> str:
    st, ro = design.spec.stator, design.spec.rotor
    gap = disc_spacing_mm(design.spec, design.geometry)
    if gap is None:
        return (
            f"The stator's mounting studs set the running clearance: {ro.running_clearance_mm:g} mm between "
            "the magnets and the stator. Check it with feeler gauges at each stud before the first spin."
        )
    return (
        f"Disc spacing: the discs' inner faces sit {gap:.1f} mm apart (the stator's {st.thickness_mm:g} mm, "
        f"a running clearance of {ro.running_clearance_mm:g} mm each side, and the magnets standing on the "
        f"faces). Cut the spacer tube, or set the nuts on the studs between the discs, to {gap:.1f} mm, "
        "and check the clearance each side with feeler gauges before the first spin."
    )


def _segments_words(design: Design, split: tuple, what: str) -> str:
    """What the sheet says of a part split to fit the bed (`split` as fab.outlines.mould_split)."""
    plan = segment_plan(*split[:2], design.spec.fab.print_bed_mm, split[2])
    if plan is None or plan.count == 1:
        return ""
    return (
        f" The {what} comes in {plan.count} segments to fit the {design.spec.fab.print_bed_mm:g} mm bed, "
        f"each joined to the next by a half lap: {JOIN_WORDS}, on a flat board so the joined part lies flat."
    )


def _casting(ctx: _Ctx) -> list:
    d = ctx.design
    st = d.spec.stator
    lid = mould_lid_flat(d)
    seg = _segments_words(d, mould_split(d), "printed mould")
    steps = [
        "Wax the mould and its lid (three coats of release wax, or packing tape on the lid)." + seg,
        f"Pour a first layer {st.resin_cover_mm:g} mm deep over the floor and let it gel. Lay the coils "
        "over their places, magnet side up, as the stator map numbers them; make the joins as it draws "
        "them, lay the leads in the rim and bring the phase ends out through the lead slots, sealed with "
        "clay.",
        "Fill to the top of the frame, working the resin between the turns; a vacuum or a warm room "
        "helps the air out.",
        f"Lay the lid ({lid.thickness_mm:g} mm board, or the printed one) on from one side so no air is "
        f"trapped, and clamp it down on the frame until resin comes out of all {LID_VENTS} vents: the "
        f"casting then sets flat and {st.thickness_mm:g} mm thick, which the running clearance depends on.",
        "Leave it clamped until the resin has cured as its maker says, then knock the mould apart.",
    ]
    advice = (
        "Reinforcement and filler (common practice): a layer of light woven glass cloth under and over "
        "the coils, where the cover allows, stops the casting cracking across the lugs; up to about a "
        "third by volume of talc or fine silica flour in the resin cuts the heat it gives off curing and "
        "its shrinkage (from memory: check the resin maker's limit). Never a metal powder: it carries "
        "eddy currents and can short the coils. A thick casting poured at once can overheat: pour it in "
        "layers as the maker advises."
    )
    out = [_p(ctx, "Casting the stator", "h2")]
    out += [_p(ctx, f"{k}. {s}") for k, s in enumerate(steps, start=1)]
    out.append(_p(ctx, advice, "small"))
    return out


def _printing(ctx: _Ctx) -> list:
    d = ctx.design
    st = d.spec.stator
    flange = d.geometry.coil.z_min_mm - d.geometry.stator_z_mm[0]
    seg = _segments_words(d, frame_split(d), "frame")
    steps = [
        f"Print the frame flat, top face up, in {st.binder.upper()}; solid infill round the lugs." + seg,
        "Print a coil former per coil, flange down. Wind each coil on its former's core against the "
        "flange, the jig's other cheek clamped on top; tag the leads S and F and leave it on the former.",
        "Glue each former with its coil into its pocket (two-part epoxy), flange down and flush with the "
        "bottom face, at the position the stator map numbers. Make the joins as the map draws them, lay "
        "the leads in the channel round the rim and out through the grooves at the exits; pot the "
        "channel with epoxy once every phase has passed its tests.",
    ]
    out = [_p(ctx, "Printing the stator", "h2")]
    out += [_p(ctx, f"{k}. {s}") for k, s in enumerate(steps, start=1)]
    if flange < MIN_PRINTED_SKIN_MM:
        out.append(
            _p(
                ctx,
                f"The formers' flanges are {flange:g} mm thick (stator.resin_cover_mm): print them at a "
                f"fine layer height, or raise stator.resin_cover_mm to {MIN_PRINTED_SKIN_MM:g} for a "
                "sturdier flange (the coils get thinner by twice the change: run plan again).",
                "small",
            )
        )
    return out


def _stator_build(ctx: _Ctx) -> list:
    d = ctx.design
    out = _printing(ctx) if is_printed_binder(d.spec.stator.binder) else _casting(ctx)
    out.append(_p(ctx, "Setting the gap", "h2"))
    out.append(_p(ctx, _spacer_words(d)))
    return out
