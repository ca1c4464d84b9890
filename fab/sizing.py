"""`statorsmith size`: the ranked table, its JSON, the trade-off picture and the design files."""

from __future__ import annotations

from pathlib import Path

from fab import OutputError
from fab.package import _make_tmp, install
from fab.report import _r, table
from layout.sizing import Result, Sizing, objective_words


def printed_size_mm(design) -> float:
    """The largest printed part's width, mm: the stator mould (its outer diameter)."""
    from fab.outlines.stator import stator_layout

    return 2 * stator_layout(design).mould_radius_mm


def _annual(r: Result) -> float | None:
    op = r.design.operating
    return None if op is None else op.energy.get("annual_kwh")


def _magnet_words(r: Result) -> str:
    mg = r.design.spec.magnets
    if mg.shape == "block":
        return f"{mg.length_mm:g}x{mg.width_mm:g}x{mg.thickness_mm:g} {mg.grade}"
    return f"disc {mg.diameter_mm:g}x{mg.thickness_mm:g} {mg.grade}"


def file_name(s: Sizing, r: Result) -> str:
    return f"{s.requirement.name}-{r.rank}.toml"


def size_text(s: Sizing, top: int) -> str:
    req = s.requirement
    wind = req.source is not None and req.source.kind == "wind"
    head = [
        f"{req.name}: {req.purpose}",
        f"{s.screened} candidates screened, the best {len(s.results)} re-checked with the full model "
        f"({s.seconds:.0f} s); ranked by {objective_words(req)}. Every figure below is the full model's.",
    ]
    where = (
        f" at {req.rated_condition:g} {_unit(req)}"
        if req.source is not None
        else f" at {req.target.rated_rpm:g} rpm"
    )
    headings = [
        "rank", "coils", "magnets", "magnet", "disc_mm", "stator_mm", "turns", "wire", "connect",
        "cut_in", "out_w", *(["kwh_yr"] if wind else []), "eff", "coil_c", "magnet_kg", "copper_kg",
        f"cost_{req.prices.currency}", "limits",
    ]  # fmt: skip
    rows = []
    for r in s.results[:top]:
        d, pr = r.design, r.design.prediction
        rows.append(
            [
                r.rank,
                d.spec.stator.coil_positions,
                d.spec.magnets.count,
                _magnet_words(r),
                f"{r.disc_mm:.0f}",
                f"{d.spec.stator.thickness_mm:g}",
                pr.turns_per_coil,
                f"{pr.wire.strands}x{pr.wire.diameter_mm:g}",
                d.spec.connection.kind,
                f"{pr.cut_in_rpm:.0f}",
                f"{r.output_w:.0f}",
                *([f"{_annual(r) or 0:.0f}"] if wind else []),
                f"{r.efficiency:.0%}",
                f"{r.coil_c:.0f}",
                f"{r.magnet_kg:.2f}",
                f"{r.copper_kg:.2f}",
                f"{r.cost:.0f}",
                _limits_words(r),
            ]
        )
    lines = head + ["", table(headings, rows, f"Candidates (output{where})")]
    met = sum(1 for r in s.results[:top] if not r.fails)
    lines.append(
        f"{met} of these meet every limit"
        + (f": design files {req.name}-1.toml … for those; run plan and build on them." if met else ".")
    )
    lines.append(
        "limits: those a candidate misses, and those it meets within 5 % (near); coil_c is the hottest "
        "steady point; cost from [prices] (defaults from memory: check your own)."
    )
    if s.closest:
        lines += ["", "Nothing meets every limit. " + s.closest]
    return "\n".join(lines)


def _limits_words(r: Result) -> str:
    words = []
    if r.fails:
        words.append("misses " + ", ".join(r.fails))
    if r.binding:
        words.append("near " + ", ".join(r.binding))
    return "; ".join(words) or "none bind"


def _unit(req) -> str:
    return {"wind": "m/s", "water": "l/s"}.get(req.source.kind, "W effort")


def size_json(s: Sizing, top: int, files: dict[int, str] | None = None) -> dict:
    req = s.requirement
    out = []
    for r in s.results[:top]:
        d, pr = r.design, r.design.prediction
        row = {
            "rank": r.rank,
            "design_file": (files or {}).get(r.rank),
            "coils": d.spec.stator.coil_positions,
            "magnets": d.spec.magnets.count,
            "magnet": _magnet_words(r),
            "topology": d.spec.rotor.topology,
            "connection": d.spec.connection.kind,
            "turns_per_coil": pr.turns_per_coil,
            "wire": pr.wire.name,
            "disc_outer_diameter_mm": _r(r.disc_mm, 1),
            "cut_in_rpm": _r(pr.cut_in_rpm, 1),
            "rated_dc_power_w": _r(r.output_w, 2),
            "efficiency": _r(r.efficiency),
            "coil_temperature_c": _r(r.coil_c, 1),
            "magnet_mass_kg": _r(r.magnet_kg, 3),
            "copper_mass_kg": _r(r.copper_kg, 3),
            "cost": _r(r.cost, 2),
            "binding_limits": list(r.binding),
            "missed_limits": list(r.fails),
        }
        if req.source is not None and req.source.kind == "wind":
            row["annual_kwh"] = _r(_annual(r) or 0.0, 1)
        out.append(row)
    return {
        "screened": s.screened,
        "seconds": _r(s.seconds, 2),
        "objective": req.objective,
        "candidates": out,
        "closest": s.closest or None,
    }


def tradeoff_svg(s: Sizing) -> str:
    """Cost against the objective's figure for every re-checked candidate: an SVG that opens
    in any browser. Ringed: those meeting every limit; numbered: the ranks."""
    req = s.requirement
    pts = [(r.cost, r.figure, r) for r in s.results]
    w, h, m = 640, 420, 60
    if not pts:
        return f'<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}"></svg>\n'
    xs = [p[0] for p in pts]
    ys = [p[1] for p in pts]
    x0, x1 = min(xs) * 0.95, max(xs) * 1.05 + 1e-9
    y0, y1 = min(ys) * 0.95, max(ys) * 1.05 + 1e-9

    def sx(x):
        return m + (x - x0) / (x1 - x0) * (w - 2 * m)

    def sy(y):
        return h - m - (y - y0) / (y1 - y0) * (h - 2 * m)

    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" '
        'font-family="sans-serif" font-size="11">',
        f'<rect x="0" y="0" width="{w}" height="{h}" fill="white"/>',
        f'<text x="{w / 2}" y="20" text-anchor="middle" font-size="14">{req.name}: cost against '
        f"{objective_words(req, figure=True)}</text>",
        f'<line x1="{m}" y1="{h - m}" x2="{w - m}" y2="{h - m}" stroke="black"/>',
        f'<line x1="{m}" y1="{m}" x2="{m}" y2="{h - m}" stroke="black"/>',
        f'<text x="{w / 2}" y="{h - 20}" text-anchor="middle">cost ({req.prices.currency})</text>',
        f'<text x="16" y="{h / 2}" text-anchor="middle" transform="rotate(-90 16 {h / 2})">'
        f"{objective_words(req, figure=True)}</text>",
    ]
    for k in range(5):
        xv = x0 + (x1 - x0) * k / 4
        yv = y0 + (y1 - y0) * k / 4
        out.append(f'<text x="{sx(xv):.1f}" y="{h - m + 15}" text-anchor="middle">{xv:.0f}</text>')
        out.append(f'<text x="{m - 6}" y="{sy(yv) + 4:.1f}" text-anchor="end">{yv:.3g}</text>')
    for x, y, r in pts:
        fill = "#1f6f3f" if not r.fails else "#bbbbbb"
        out.append(f'<circle cx="{sx(x):.1f}" cy="{sy(y):.1f}" r="5" fill="{fill}"/>')
        if not r.fails:
            out.append(f'<text x="{sx(x) + 7:.1f}" y="{sy(y) - 6:.1f}">{r.rank}</text>')
    out.append(
        f'<text x="{w - m}" y="{m - 10}" text-anchor="end">green: meets every limit (numbered by rank); '
        "grey: misses one</text>"
    )
    out.append("</svg>")
    return "\n".join(out) + "\n"


def write_size(s: Sizing, out: Path, top: int) -> dict[int, str]:
    """The design files of the top candidates that meet every limit, the table and the
    trade-off picture, put in place together (an existing folder is replaced only once the
    new one is complete)."""
    tmp = _make_tmp(out)
    files = {}
    try:
        for r in [r for r in s.results[:top] if not r.fails]:
            name = file_name(s, r)
            (tmp / name).write_text(
                r.text.replace(f'name = "{s.requirement.name}"', f'name = "{name[:-5]}"', 1)
            )
            files[r.rank] = str(out / name)
        (tmp / "size.txt").write_text(size_text(s, top) + "\n")
        (tmp / "tradeoff.svg").write_text(tradeoff_svg(s))
        install(tmp, out)
    except OSError as exc:
        raise OutputError(f"{out}: cannot be written ({exc.strerror or exc}); nothing was changed") from None
    return files
