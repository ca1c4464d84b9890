"""The magnet map of each disc, to an ISO 5455 scale: faces up, pocket numbers, index mark,
balance correction, and the list of magnets from the balance plan.
"""

from __future__ import annotations

import functools
import math

from fab.sheet.document import MM, SANS, SANS_BOLD, _Ctx, _figure, _p, _plain, _table
from fab.sheet.words import _disc_name, _pocket_word
from layout.design import Design
from layout.rotor import (
    BALANCE_SCREW,
    PLAIN_DISC,
    balance_positions,
    is_plain_disc,
    is_steel_disc,
    pocket_marks,
    pockets_either_side,
)

# Reduction scales of ISO 5455 (technical drawings).
ISO_5455_SCALES = (1, 2, 5, 10, 20, 50, 100)

GREY_N = 0.3  # fill of a magnet with N up: dark enough to tell from S in black and white

_MAP_ROOM = 24 * MM  # pocket numbers and the index mark outside the rim, both sides together


def _map_scale(diameter_mm: float, avail_w: float, avail_h: float) -> int:
    """The largest ISO 5455 scale (1:n) at which the disc and its labels fit."""
    for n in ISO_5455_SCALES:
        size = diameter_mm * MM / n + _MAP_ROOM
        if size <= avail_w and size <= avail_h:
            return n
    return ISO_5455_SCALES[-1]


def _scale_bar_mm(diameter_mm: float) -> float:
    """A round length for the scale bar, no longer than about half the disc."""
    for length in (500, 200, 100, 50, 20, 10):
        if length <= 0.6 * diameter_mm:
            return float(length)
    return 10.0


def _clocking_words(design: Design) -> str:
    w = _pocket_word(design)
    lower = " Lower it on the jacking screws, never by hand." if design.forces.jacking_screws else ""
    return (
        "Clocking the second disc: disc 2 is made magnet side up like disc 1, then turned over onto the "
        f"shaft, magnets facing the stator. Turned over, its {w}s run counter-clockwise like disc 1's and "
        f"{w} k lies over {w} k. Line up the index marks ({w} 1 over {w} 1) and fit the dowels through "
        "both discs: every magnet then faces one of the other pole across the stator (N faces S)." + lower
    )


def _plain_disc_words(design: Design) -> str:
    """Fitting the plain steel disc that faces the magnet disc (it has no map of its own)."""
    jack = design.forces.jacking_screws
    holes = " Its tapped jacking screw holes then sit over this disc's pads." if jack else ""
    lower = (
        f" Lower it on the jacking screws, never by hand: the magnets pull it with about "
        f"{design.forces.axial_force_n:.0f} N."
        if jack
        else ""
    )
    return (
        "The plain steel disc (disc 2) carries no magnets. It goes on the shaft above the stator, its "
        "marked face (index and 2) towards the stator, and turns with this disc. Line up the index marks "
        f"and fit the dowels through both discs.{holes}{lower}"
    )


def _magnet_map(ctx: _Ctx, disc: int, balance) -> list:
    from reportlab.platypus import KeepTogether

    d = ctx.design
    marks = pocket_marks(d.geometry, disc)
    word = _pocket_word(d)
    ids = _assigned_ids(balance, disc, marks)
    corr = _correction(balance, disc)
    r_out = d.forces.disc_outer_radius_mm
    # Heading, the words round the map and the scale bar take about this much of the page;
    # the pocket table (with a balance plan) may run on to the next page.
    plain_words = disc == 1 and is_plain_disc(d.spec, PLAIN_DISC)
    second = disc == 2 or plain_words  # words for fitting the second disc
    reserve = (47 + (20 if second else 0) + (9 if corr is not None and corr.needed else 0)) * MM
    n_scale = _map_scale(2 * r_out, ctx.frame_w, ctx.frame_h - reserve)
    s = MM / n_scale  # points on paper per mm on the part
    out = [_p(ctx, f"Magnet map: {_disc_name(d, disc)}", "h1")]
    lie = "Seen from above, the disc lying on its back with its magnet side up, as it is made"
    if is_steel_disc(d.spec):
        lie += " (the magnets sit on the steel face, set out with the placing template)"
    count_dir = "counter-clockwise" if disc == 1 else "clockwise"
    faces = ", ".join(f"{m.pocket} {m.face_up}" for m in marks[:2])
    out.append(
        _p(
            ctx,
            f"{lie}. {word.capitalize()}s are numbered {count_dir} from the index mark at {word} 1. "
            f"Dark magnets go N face up, white ones S face up, alternating round the disc ({faces}, ...). "
            "Check each face with a compass or a marked test magnet before it goes in."
            + (
                " Each magnet's id from the balance plan is written inside the ring."
                if any(ident != "any" for ident, _ in ids.values())
                else f" No weighed magnets in the plan: any magnet may go in any {word} (magnet: any)."
            ),
        )
    )
    out.append(
        _figure(
            ctx.frame_w,
            2 * r_out * s + _MAP_ROOM,
            lambda c, w, h: _draw_disc(c, d, disc, marks, ids, w / 2, h / 2, s, corr),
        )
    )
    bar = _scale_bar_mm(2 * r_out)
    out.append(_figure(ctx.frame_w, 9 * MM, functools.partial(_draw_scale_bar, bar=bar, s=s, n=n_scale)))
    out.append(
        _p(
            ctx,
            f"The bar stands for {bar:g} mm and measures {bar / n_scale:g} mm on paper: check it before "
            "using this map as a template (print at 100 %, no fit to page). For marking out, the DXF "
            "files of the package are full size.",
            "small",
        )
    )
    if disc == 2:
        out.append(_p(ctx, _clocking_words(d)))
    if plain_words:
        out.append(_p(ctx, _plain_disc_words(d)))
    if corr is not None and corr.needed:
        out.append(_p(ctx, _correction_words(d, disc, corr)))
    if balance is not None:
        title = _p(ctx, f"Magnet list: {_disc_name(d, disc)}", "h2")
        out.append(KeepTogether([title, _pocket_table(ctx, d, marks, ids, balance)]))
    return out


def _draw_scale_bar(c, w: float, h: float, bar: float, s: float, n: int) -> None:
    length = bar * s
    x0, y0 = 0, h - 3.5 * MM
    c.setLineWidth(0.8)
    for k in range(10):
        c.setFillGray(0 if k % 2 == 0 else 1)
        c.rect(x0 + k * length / 10, y0, length / 10, 2 * MM, fill=1, stroke=1)
    c.setFillGray(0)
    c.setFont(SANS, 7.5)
    c.drawString(x0, y0 - 3.4 * MM, "0")
    c.drawRightString(x0 + length, y0 - 3.4 * MM, f"{bar:g} mm")
    c.setFont(SANS_BOLD, 10)
    c.drawString(x0 + length + 4 * MM, y0 - 0.2 * MM, f"scale 1:{n:g}")


def _assigned_ids(balance, disc: int, marks) -> dict[int, tuple[str, float | None]]:
    """pocket → (magnet id, mass in g) from the balance plan; 'any' without one."""
    if balance is None:
        return {m.pocket: ("any", None) for m in marks}
    found = [db for db in balance.discs if db.disc == disc]
    if not found:
        raise ValueError(f"the balance plan has no disc {disc}")
    out = {}
    faces = {m.pocket: m.face_up for m in marks}
    for a in found[0].assignment:
        if a.pocket not in faces:
            raise ValueError(f"the balance plan names pocket {a.pocket}, which disc {disc} does not have")
        if a.face != faces[a.pocket]:
            raise ValueError(
                f"the balance plan puts {a.face} up in pocket {a.pocket} of disc {disc}; "
                f"the design has {faces[a.pocket]} up there"
            )
        out[a.pocket] = (a.magnet, a.mass_g if balance.weighed else None)
    missing = sorted(set(faces) - set(out))
    if missing:
        raise ValueError(f"the balance plan leaves pockets {missing} of disc {disc} empty")
    return out


def _correction(balance, disc: int):
    if balance is None:
        return None
    for db in balance.discs:
        if db.disc == disc:
            return db.correction
    return None


def _between_pockets(design: Design, disc: int, part_angle: float) -> tuple[int, int]:
    """The two pockets either side of an angle as marked on the part (the balance plan's)."""
    return pockets_either_side(design.spec.magnets.count, disc, part_angle)


def _correction_words(design: Design, disc: int, corr) -> str:
    a, b = _between_pockets(design, disc, corr.angle_deg)
    word = _pocket_word(design)
    holes = balance_positions(design.spec, design.forces.disc_outer_radius_mm)
    where = f"in the {BALANCE_SCREW} hole" if holes is not None else "glued on the face"
    return (
        f"Balance correction for this disc: add {corr.add_g:.1f} g at {corr.radius_mm:.0f} mm radius "
        f"{where} between {word}s {a} and {b} ({corr.angle_deg:.0f}° on the part, marked + on the map); "
        f"it leaves about {corr.residual_after_gmm:.0f} g·mm."
    )


def _draw_disc(c, design: Design, disc: int, marks, ids, cx: float, cy: float, s: float, corr) -> None:
    spec = design.spec
    mg = spec.magnets
    r_out = design.forces.disc_outer_radius_mm
    r_bore = spec.rotor.bore_diameter_mm / 2
    rc = mg.pitch_radius_mm
    c.setStrokeGray(0)
    c.setLineWidth(1.2)
    c.circle(cx, cy, r_out * s)
    c.setLineWidth(0.8)
    c.circle(cx, cy, r_bore * s)
    # Centre cross and the pitch circle the magnets are set out on.
    c.setLineWidth(0.3)
    c.setDash(4, 2)
    c.circle(cx, cy, rc * s)
    c.line(cx - (r_bore + 4) * s, cy, cx + (r_bore + 4) * s, cy)
    c.line(cx, cy - (r_bore + 4) * s, cx, cy + (r_bore + 4) * s)
    c.setDash()
    radial = mg.length_mm if mg.shape == "block" else mg.diameter_mm
    tangential = mg.width_mm if mg.shape == "block" else mg.diameter_mm
    arc_pt = 2 * math.pi * rc * s / mg.count  # paper between magnet centres
    face_font = max(5.0, min(12.0, 0.55 * tangential * s, 0.45 * arc_pt))
    num_font = max(5.5, min(9.0, 0.45 * arc_pt))
    r_num = r_out * s + 3.2 * MM
    for m in marks:
        a = math.radians(m.angle_deg)
        x, y = cx + rc * s * math.cos(a), cy + rc * s * math.sin(a)
        c.saveState()
        c.translate(x, y)
        c.rotate(m.angle_deg)
        c.setLineWidth(0.8)
        c.setFillGray(GREY_N if m.face_up == "N" else 1)
        if mg.shape == "block":
            c.rect(-radial * s / 2, -tangential * s / 2, radial * s, tangential * s, fill=1, stroke=1)
        else:
            c.circle(0, 0, radial * s / 2, fill=1, stroke=1)
        c.restoreState()
        c.setFillGray(1 if m.face_up == "N" else 0)
        c.setFont(SANS_BOLD, face_font)
        c.drawCentredString(x, y - face_font * 0.35, m.face_up)
        c.setFillGray(0)
        c.setFont(SANS_BOLD if m.pocket == 1 else SANS, num_font)
        nx, ny = cx + r_num * math.cos(a), cy + r_num * math.sin(a)
        c.drawCentredString(nx, ny - num_font * 0.35, str(m.pocket))
        ident = ids[m.pocket][0]
        if ident != "any":
            r_id = (rc - radial / 2) * s - 3.5 * MM
            ix, iy = cx + r_id * math.cos(a), cy + r_id * math.sin(a)
            c.setFont(SANS, max(5.0, min(7.5, 0.3 * arc_pt)))
            c.drawCentredString(ix, iy - 2, _plain(ident))
    # Index mark: a solid triangle outside the rim at pocket 1, pointing at the disc.
    a1 = math.radians(marks[0].angle_deg)
    tip = r_out * s + 6.5 * MM
    base = tip + 4.5 * MM
    ux, uy = math.cos(a1), math.sin(a1)
    vx, vy = -uy, ux
    path = c.beginPath()
    path.moveTo(cx + tip * ux, cy + tip * uy)
    path.lineTo(cx + base * ux + 2.2 * MM * vx, cy + base * uy + 2.2 * MM * vy)
    path.lineTo(cx + base * ux - 2.2 * MM * vx, cy + base * uy - 2.2 * MM * vy)
    path.close()
    c.setFillGray(0)
    c.drawPath(path, fill=1, stroke=0)
    c.setFont(SANS_BOLD, 7.5)
    mid = (tip + base) / 2
    c.drawCentredString(cx + mid * ux + 4.8 * MM * uy, cy + mid * uy - 4.8 * MM * ux - 2.5, "INDEX")
    # Which way the pockets are counted: an arrow along an arc inside the ring.
    r_arrow = max((rc - radial / 2) * s - 7 * MM, r_bore * s + 4 * MM)
    step = 360.0 / mg.count
    start = marks[0].angle_deg
    sweep = (1 if disc == 1 else -1) * min(1.6 * step, 40.0)
    c.setLineWidth(0.8)
    arc = c.beginPath()
    arc.arc(cx - r_arrow, cy - r_arrow, cx + r_arrow, cy + r_arrow, start + sweep * 0.15, sweep * 0.85)
    c.drawPath(arc, stroke=1, fill=0)
    end = math.radians(start + sweep)
    ex, ey = cx + r_arrow * math.cos(end), cy + r_arrow * math.sin(end)
    tx, ty = -math.sin(end) * math.copysign(1, sweep), math.cos(end) * math.copysign(1, sweep)
    head = c.beginPath()
    head.moveTo(ex, ey)
    head.lineTo(ex - 2.6 * MM * tx + 1.2 * MM * ty, ey - 2.6 * MM * ty - 1.2 * MM * tx)
    head.lineTo(ex - 2.6 * MM * tx - 1.2 * MM * ty, ey - 2.6 * MM * ty + 1.2 * MM * tx)
    head.close()
    c.drawPath(head, fill=1, stroke=0)
    if corr is not None and corr.needed:
        ang = math.radians(corr.angle_deg)  # the plan gives it as marked on the part
        px, py = cx + corr.radius_mm * s * math.cos(ang), cy + corr.radius_mm * s * math.sin(ang)
        c.setLineWidth(1.4)
        k = 2.2 * MM
        c.line(px - k, py, px + k, py)
        c.line(px, py - k, px, py + k)


def _pocket_table(ctx: _Ctx, design: Design, marks, ids, balance):
    """Pocket, face up, magnet id (and mass) from the balance plan, in up to four column groups."""
    words = [_pocket_word(design), "face up", "magnet id"] + (["mass g"] if balance.weighed else [])
    head = [_p(ctx, w, "head") for w in words]
    rows = []
    for m in marks:
        ident, mass = ids[m.pocket]
        extra = [f"{mass:.2f}" if mass is not None else ""] if balance.weighed else []
        rows.append([str(m.pocket), m.face_up, _plain(ident), *extra])
    n_cols = len(head)
    groups = max(1, min(4 if len(words) == 3 else 3, math.ceil(len(rows) / 4)))
    per = math.ceil(len(rows) / groups)
    table_rows = [head * groups]
    for i in range(per):
        line = []
        for g in range(groups):
            k = g * per + i
            line.extend(rows[k] if k < len(rows) else [""] * n_cols)
        table_rows.append(line)
    widths = [ctx.frame_w / (n_cols * groups)] * (n_cols * groups)
    rules = [
        ("LINEAFTER", (n_cols * g - 1, 0), (n_cols * g - 1, -1), 1.4, (0, 0, 0)) for g in range(1, groups)
    ]
    return _table(ctx, table_rows, widths, style_extra=[*rules, ("ALIGN", (0, 0), (-1, -1), "CENTER")])
