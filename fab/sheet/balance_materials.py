"""The balance report (ISO 21940-11) and the list of materials."""

from __future__ import annotations

from fab.sheet.document import MM, _Ctx, _key_value_table, _p, _table
from fab.sheet.magnet_maps import _between_pockets
from fab.sheet.words import _disc_name, _magnet_words, _pocket_word
from layout import converter as conv
from layout.bill import RESIN_MARGIN_PCT, WIRE_MARGIN_PCT
from layout.converter import converter_words
from layout.design import Design
from layout.materials import DISC_MATERIALS
from layout.rotor import (
    BALANCE_SCREW,
    PLAIN_DISC,
    disc_count,
    disc_material,
    disc_thickness_mm,
    is_plain_disc,
    rotor_discs,
)


def _materials_rows(design: Design) -> list[tuple[str, str, str]]:
    spec, pr, f = design.spec, design.prediction, design.forces
    lay, ro, st = design.layout, spec.rotor, spec.stator
    phases = lay.phases
    length = design.bill.wire_length_per_phase_m
    mass = design.bill.wire_mass_per_phase_kg
    strands = f"; {pr.wire.strands} strands in hand, every strand counted" if pr.wire.strands > 1 else ""
    discs = disc_count(spec)
    n_mag = lay.magnets * discs
    turning = len(rotor_discs(spec))  # with a plain steel disc, one more than the magnet discs
    rows = [
        (
            f"magnet wire, {pr.wire.name} enamelled copper",
            f"{length:.0f} m and {mass:.2f} kg per phase; "
            f"{length * phases:.0f} m, {mass * phases:.2f} kg in all",
            f"with {WIRE_MARGIN_PCT} % for leads and waste{strands}",
        ),
        (
            "magnets",
            f"{n_mag} ({lay.magnets} per disc)" if discs > 1 else f"{n_mag}",
            f"{_magnet_words(design)}; {f.magnet_mass_g:.0f} g each, "
            f"{n_mag * f.magnet_mass_g / 1000:.2f} kg in all; a spare covers a chipped one",
        ),
    ]
    vol, grams = design.bill.binder_volume_cm3, design.bill.binder_mass_g
    binder = {"epoxy": "casting epoxy", "polyester": "casting polyester"}.get(
        st.binder, f"{st.binder} (printed)"
    )
    rows.append(
        (
            f"stator binder: {binder}",
            f"about {vol:.0f} cm³" + (f" ({grams / 1000:.2f} kg)" if grams else ""),
            f"ring {st.thickness_mm:g} mm thick with {st.resin_rim_mm:g} mm rims, less the copper, "
            f"with {RESIN_MARGIN_PCT} % for lugs and waste",
        )
    )
    mat = DISC_MATERIALS[ro.disc_material]
    rows.append(
        (
            f"{'magnet' if turning > discs else 'rotor'} disc{'s' if discs > 1 else ''}, {mat.name}",
            f"{discs} x {2 * f.disc_outer_radius_mm:.0f} mm dia. x {ro.disc_thickness_mm:g} mm",
            f"{f.disc_mass_kg:.2f} kg each before the magnets; bore {ro.bore_diameter_mm:g} mm",
        )
    )
    if ro.topology == "one_disc_steel_stator":
        rows.append(
            ("stator back plate, steel", f"{ro.stator_plate_thickness_mm:g} mm thick", "behind the coils")
        )
    if f.steel_disc_mass_kg is not None:
        rows.append(
            (
                f"plain disc, {disc_material(spec, PLAIN_DISC).name}",
                f"1 x {2 * f.disc_outer_radius_mm:.0f} mm dia. x {disc_thickness_mm(spec, PLAIN_DISC):g} mm",
                f"{f.steel_disc_mass_kg:.2f} kg; bore {ro.bore_diameter_mm:g} mm; no magnets: it faces the "
                "magnet disc across the stator and turns with it",
            )
        )
    rows.append(
        (
            "hub bolts",
            f"{ro.hub_bolts} per disc" if turning > 1 else f"{ro.hub_bolts}",
            f"through {ro.hub_hole_diameter_mm:g} mm holes, length to suit the hub",
        )
    )
    rows.append(
        (
            "dowel pins",
            "2",
            f"{ro.dowel_diameter_mm:g} mm dia.; they clock "
            + ("the two discs" if turning > 1 else "the disc to the hub"),
        )
    )
    if f.jacking_screws:
        rows.append(
            (
                "jacking screws",
                f"{ro.jacking_screws} x {ro.jacking_screw}, fully threaded",
                f"to lower the {'discs together' if turning > 1 else 'disc onto the stator'} "
                f"against {f.axial_force_n:.0f} N of pull; with nuts",
            )
        )
    rows.append(
        (
            "stator mounting",
            f"{st.mounting_lugs} studs with nuts",
            f"through the lugs' {st.mounting_hole_diameter_mm:g} mm holes; they set the running clearance",
        )
    )
    rows.append(
        (
            "balance weights",
            f"{BALANCE_SCREW} screws and washers",
            "as the balance correction asks; threadlocked",
        )
    )
    if spec.target.kind != "ac_line":
        br = design.bridge
        rows.append(
            (
                "diode bridge",
                "1",
                f"at least {br.voltage_v:.0f} V, {br.current_a:.0f} A; on a heat sink",
            )
        )
    ta = spec.target
    if ta.kind == "converter":
        top = conv.idle_bus_v(pr, ta)
        size = f"{ta.bus_capacitor_uf:g} µF, " if ta.bus_capacitor_uf is not None else ""
        rows.append(
            (
                "bus capacitor",
                "1",
                f"{size}rated at least {conv.capacitor_rating_v(top):.0f} V; with a bleed resistor",
            )
        )
        rows.append(("converter", "1", converter_words(ta)))
    return rows


def _balance_and_materials(ctx: _Ctx, balance) -> list:
    d = ctx.design
    out = [_p(ctx, "Balance report and materials", "h1"), _p(ctx, "Balance", "h2")]
    if balance is None:
        out.append(
            _p(
                ctx,
                "No balance plan came with this sheet, so the magnet map says 'any' in every pocket. "
                "Weigh every magnet (to 0.1 g), run statorsmith balance on the design with the list of "
                "masses, and write the sheet again with its plan: each pocket then names its magnet, and "
                "this page gives the unbalance against ISO 21940-11 and any correction.",
            )
        )
    else:
        out.extend(_balance_report(ctx, balance))
    out.append(_p(ctx, "Materials", "h2"))
    head = [_p(ctx, h, "cell") for h in ("item", "quantity", "note")]
    body = [[_p(ctx, a, "cell"), _p(ctx, b, "cell"), _p(ctx, c, "cell")] for a, b, c in _materials_rows(d)]
    w0, w1 = 48 * MM, 56 * MM
    out.append(_table(ctx, [head, *body], [w0, w1, ctx.frame_w - w0 - w1]))
    return out


def _balance_report(ctx: _Ctx, b) -> list:
    d = ctx.design
    rows = [
        ("balance grade (ISO 21940-11)", f"{b.grade} ({b.grade_mm_s:g} mm/s) at {b.max_rpm:g} rpm"),
        ("rotor mass", f"{b.rotor_mass_kg:.2f} kg"),
        ("permissible residual unbalance", f"{b.permissible_gmm:.0f} g·mm for the whole rotor"),
        (
            "magnets",
            "weighed: placed by mass as the map shows" if b.weighed else "not weighed: nominal masses",
        ),
    ]
    if len(b.discs) > 1:
        rows.append(("static unbalance, both discs", f"{b.static_unbalance_gmm:.0f} g·mm"))
        rows.append(("couple unbalance", f"{b.couple_unbalance_gmm_mm:.0f} g·mm²"))
    if not b.weighed:
        rows.append(
            (
                "magnets as they come",
                f"about {b.expected_unweighed_p95_gmm:.0f} g·mm per disc (95th percentile)",
            )
        )
    out = [_key_value_table(ctx, rows, 60 * MM)]
    head = ["disc", "mass kg", "before g·mm", "after g·mm", "allowed g·mm", "result", "correction"]
    body = []
    for db in b.discs:
        ok = db.unbalance_after_gmm <= db.permissible_gmm
        corr = db.correction
        if corr.needed and is_plain_disc(d.spec, db.disc):
            # No pockets to count from: the angle on the part, from its index mark.
            at = f"{corr.radius_mm:.0f} mm, {corr.angle_deg:.0f}° from the index mark"
            what = f"add {corr.add_g:.1f} g at {at}"
        elif corr.needed:
            a, c2 = _between_pockets(d, db.disc, corr.angle_deg)
            what = (
                f"add {corr.add_g:.1f} g at {corr.radius_mm:.0f} mm between {_pocket_word(d)}s {a} and {c2}"
            )
        else:
            what = "none needed"
        body.append(
            [
                _p(ctx, _disc_name(d, db.disc), "cell"),
                f"{db.mass_kg:.2f}",
                f"{db.unbalance_before_gmm:.0f}",
                f"{db.unbalance_after_gmm:.0f}",
                f"{db.permissible_gmm:.0f}",
                "within" if ok else "OVER",
                _p(ctx, what, "cell"),
            ]
        )
    widths = [26 * MM, 15 * MM, 18 * MM, 18 * MM, 20 * MM, 14 * MM]
    widths.append(ctx.frame_w - sum(widths))
    out.append(_table(ctx, [[_p(ctx, h, "cell") for h in head], *body], widths))
    if b.weighing_advice:
        out.append(_p(ctx, b.weighing_advice, "small"))
    if b.procedure:
        out.append(_p(ctx, "Procedure", "h2"))
        out.extend(_p(ctx, f"{k}. {step}", "caution") for k, step in enumerate(b.procedure, start=1))
    for caution in b.cautions:
        out.append(_p(ctx, caution, "caution"))
    return out
