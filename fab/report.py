"""Text tables and JSON views of pairs and designs. No computation happens here."""

from __future__ import annotations

from collections.abc import Sequence

from layout.design import Design
from layout.pairs import Pair


def table(headings: Sequence[str], rows: Sequence[Sequence[object]], title: str = "") -> str:
    """A plain monospace table; numbers right-aligned, text left-aligned."""
    cells = [[_cell(v) for v in row] for row in rows]
    widths = [len(h) for h in headings]
    for row in cells:
        for i, c in enumerate(row):
            widths[i] = max(widths[i], len(c))
    numeric = [
        all(isinstance(r[i], int | float) and not isinstance(r[i], bool) for r in rows) and rows
        for i in range(len(headings))
    ]

    def line(values):
        out = []
        for i, v in enumerate(values):
            out.append(v.rjust(widths[i]) if numeric[i] else v.ljust(widths[i]))
        return "  ".join(out).rstrip()

    parts = [title] if title else []
    parts.append(line(headings))
    parts.append("  ".join("-" * w for w in widths))
    parts.extend(line(r) for r in cells)
    return "\n".join(parts)


def _cell(v: object) -> str:
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float):
        return f"{v:.3f}"
    if v is None:
        return "-"
    return str(v)


def pairs_rows_json(rows: Sequence[Pair]) -> list[dict]:
    out = []
    for r in rows:
        d = {
            "coils": r.coils,
            "magnets": r.magnets,
            "phases": r.phases,
            "balanced": r.balanced,
            "distribution_factor": round(r.distribution_factor, 6),
            "pitch_factor": round(r.pitch_factor, 6),
            "winding_factor": round(r.winding_factor, 6),
            "periodicity": r.periodicity,
            "rotational_symmetry": r.rotational_symmetry,
            "cogging_steps": r.cogging_steps,
            "notes": list(r.notes),
        }
        if r.phases == 1:
            d["as_wound_distribution_factor"] = round(r.as_wound_distribution_factor, 6)
        out.append(d)
    return out


def pairs_text(rows: Sequence[Pair], phases: int) -> str:
    if not rows:
        return "No combinations in these ranges."
    headings = ["coils", "magnets", "balanced", "k_d", "k_p", "k_w"]
    if phases == 1:
        headings.insert(3, "k_d as wound")
    headings += ["periodicity", "cogging steps", "notes"]
    body = []
    for r in rows:
        row = [r.coils, r.magnets, r.balanced, r.distribution_factor]
        if phases == 1:
            row.insert(3, r.as_wound_distribution_factor)
        row += [
            r.pitch_factor,
            r.winding_factor,
            r.periodicity,
            r.cogging_steps,
            "; ".join(r.notes),
        ]
        body.append(row)
    kind = "three-phase" if phases == 3 else "single-phase"
    foot = (
        "k_d distribution factor, k_p pitch factor of a coil one position wide, k_w = k_d*k_p.\n"
        "Cogging steps per revolution = LCM(coils, magnets); they matter only with iron teeth "
        "in the stator (a coreless or flat-plate stator has no cogging)."
    )
    return table(headings, body, title=f"{len(rows)} {kind} combinations") + "\n\n" + foot


def layout_json(design: Design) -> dict:
    lay = design.layout
    d = {
        "coil_positions": lay.coil_positions,
        "magnets": lay.magnets,
        "phases": lay.phases,
        "empty_positions": list(lay.empty_positions),
        "coils": [
            {
                "index": c.index,
                "angle_deg": round(c.angle_deg, 6),
                "phasor_deg": round(c.phasor_deg, 6),
                "phase": c.phase,
                "polarity": c.polarity,
                "path": c.path,
            }
            for c in lay.coils
        ],
        "coils_per_phase": lay.coils_per_phase[0],
        "parallel_paths": lay.parallel_paths,
        "allowed_parallel_paths": list(lay.allowed_parallel_paths),
        "pole_pairs": lay.pole_pairs,
        "distribution_factor": round(lay.distribution_factor, 6),
        "pitch_factor": round(lay.pitch_factor, 6),
        "winding_factor": round(lay.winding_factor, 6),
        "balanced": lay.balanced,
        "periodicity": lay.periodicity,
        "rotational_symmetry": lay.rotational_symmetry,
        "unbalanced_pull": lay.unbalanced_pull,
        "cogging_steps": lay.cogging_steps,
        "phase_angles_deg": [round(a, 6) for a in lay.phase_angles_deg],
        "notes": list(design.layout_notes),
    }
    if lay.phases == 1:
        d["as_wound_distribution_factor"] = round(lay.as_wound_distribution_factor, 6)
    return d


def plan_json(design: Design) -> dict:
    spec = design.spec
    return {
        "name": spec.name,
        "purpose": spec.purpose,
        "layout": layout_json(design),
    }


def _polarity_word(p: int) -> str:
    return "as wound" if p > 0 else "reversed"


def plan_text(design: Design) -> str:
    spec, lay = design.spec, design.layout
    out = [f"{spec.name}: {spec.purpose}", ""]
    rows = [
        [
            c.index,
            c.angle_deg,
            c.phase,
            "+" if c.polarity > 0 else "-",
            _polarity_word(c.polarity),
            c.path,
        ]
        for c in lay.coils
    ]
    out.append(table(["coil", "angle_deg", "phase", "polarity", "connect", "path"], rows, "Coils"))
    out.append("")
    figures = [
        ["coil positions", lay.coil_positions],
        ["coils wound", len(lay.coils)],
        ["magnets per disc", lay.magnets],
        ["phases", lay.phases],
        ["coils per phase", lay.coils_per_phase[0]],
        [
            "parallel paths",
            f"{lay.parallel_paths} (allowed: {', '.join(map(str, lay.allowed_parallel_paths))})",
        ],
        ["distribution factor", f"{lay.distribution_factor:.3f}"],
        ["pitch factor (one position wide)", f"{lay.pitch_factor:.3f}"],
        ["winding factor", f"{lay.winding_factor:.3f}"],
        ["balanced", "yes" if lay.balanced else "no"],
        ["periodicity", lay.periodicity],
        ["cogging steps per rev", f"{lay.cogging_steps} (iron teeth only; none here)"],
    ]
    if lay.phases == 1:
        figures.insert(
            7, ["distribution factor as wound", f"{lay.as_wound_distribution_factor:.3f}"]
        )
    out.append(table(["layout", "value"], figures))
    if design.layout_notes:
        out.append("")
        out.extend(f"note: {n}" for n in design.layout_notes)
    return "\n".join(out)
