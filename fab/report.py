"""Text tables and JSON views of pairs and designs. No computation happens here."""

from __future__ import annotations

import dataclasses
import json
import math
from collections.abc import Sequence

from layout import converter as conv
from layout.advice import advised_codes
from layout.converter import converter_words
from layout.design import Design
from layout.forces import STEEL_B_LIMIT_T, G
from layout.model import TEMPERATURE_CAP_C
from layout.pairs import STATOR_RULES, Pair
from layout.spec import source_keys


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
            "stator": r.stator,
            "notes": list(r.notes),
        }
        if r.phases == 1:
            d["as_wound_distribution_factor"] = round(r.as_wound_distribution_factor, 6)
        out.append(d)
    return out


def pairs_text(rows: Sequence[Pair], phases: int, stator: str = "coreless") -> str:
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
        f"k_d distribution factor, k_p pitch factor, k_w = k_d*k_p. k_p for {STATOR_RULES[stator]}.\n"
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


def _r(x, n=4):
    """A figure rounded for JSON; None (null) where it is missing or not a finite number."""
    if x is None or not math.isfinite(float(x)):
        return None
    return round(float(x), n)


def to_json(obj) -> str:
    """Strict JSON for scripts: a NaN or an infinity is a bug here, never a token in the output."""
    return json.dumps(obj, indent=2, allow_nan=False)


def electrical_json(design: Design) -> dict:
    pr = design.prediction
    rated = pr.rated
    return {
        "turns_per_coil": pr.turns_per_coil,
        "as_built": list(design.spec.coils_given),  # the [coils] keys the design gave
        "wire": pr.wire.name,
        "wire_diameter_mm": _r(pr.wire.diameter_mm),
        "strands_in_hand": pr.wire.strands,
        "copper_fill": _r(pr.copper_fill),
        "series_coils_per_path": pr.series_coils,
        "parallel_paths": pr.parallel_paths,
        "coil_resistance_ohm": _r(pr.coil_resistance_ohm),
        "phase_resistance_ohm": _r(pr.phase_resistance_ohm),
        "coil_inductance_mh": _r(pr.coil_inductance_mh),
        "phase_inductance_mh": _r(pr.phase_inductance_mh),
        "inductance_accuracy_pct": 20,
        "wire_length_per_phase_m": _r(pr.wire_length_per_phase_m, 2),
        "copper_mass_kg": _r(pr.copper_mass_kg, 3),
        "rated_rpm": pr.rated_rpm,
        "max_rpm": pr.max_rpm,
        "cut_in_rpm": _r(pr.cut_in_rpm, 1),
        "cut_in_voltage_v": _r(pr.cut_in_voltage_v, 3),
        "electrical_hz_at_rated": _r(pr.electrical_hz_at_rated, 3),
        "open_circuit_phase_rms_v": _r(pr.open_circuit_phase_rms_v, 3),
        "open_circuit_line_rms_v": _r(pr.open_circuit_line_rms_v, 3),
        "open_circuit_line_rms_at_max_v": _r(pr.open_circuit_line_rms_at_max_v, 3),
        "open_circuit_dc_peak_at_max_v": _r(pr.open_circuit_dc_peak_at_max_v, 3),
        "phase_thd": _r(pr.phase_thd),
        "line_thd": _r(pr.line_thd),
        "geometric_pitch_factor": _r(design.geometric_pitch_factor),
        "geometric_winding_factor": _r(design.winding_factor_as_built),
        "rated_dc_voltage_v": _r(rated.dc_voltage_v, 3),
        "rated_dc_current_a": _r(rated.dc_current_a, 3),
        "rated_dc_power_w": _r(rated.dc_power_w, 2),
        "efficiency": _r(rated.efficiency),
        "rated_current_density_a_mm2": _r(rated.current_density_a_mm2, 3),
        "rated_coil_temperature_c": None if rated.temperature_over_cap else _r(rated.coil_temperature_c, 1),
        "magnet_temperature_c": _r(pr.magnet_temperature_c, 1),
        "saturation_derate": _r(pr.saturation_derate),  # EMF a saturated steel plate leaves
        "open_circuit_line_rms_warm_v": _r(pr.open_circuit_line_rms_warm_v, 3),
        "cut_in_warm_rpm": _r(pr.cut_in_warm_rpm, 1),
        # at rated_rpm over the grade's Br range, strongest magnets cold (ambient) to weakest warm
        "open_circuit_line_rms_band_v": [
            _r(v, 3) for v in pr.open_circuit_band_v(pr.rated_rpm, pr.ambient_c, pr.magnet_temperature_c)
        ],
        "rated_losses_w": {
            "copper_w": _r(rated.copper_loss_w, 3),
            "rectifier_w": _r(rated.rectifier_loss_w, 3),
            "stationary_steel_w": _r(rated.steel_loss_w, 3),
            "conductor_eddy_w": _r(rated.conductor_eddy_w, 3),
            "mechanical_w": _r(rated.mechanical_w, 3),
        },
        "rated_shaft_power_w": _r(rated.shaft_power_w, 2),
        "coil_temperature_cap_c": TEMPERATURE_CAP_C,
        "curve": [
            {
                "rpm": _r(op.rpm, 2),
                "dc_voltage_v": _r(op.dc_voltage_v, 3),
                "dc_current_a": _r(op.dc_current_a, 4),
                "dc_power_w": _r(op.dc_power_w, 3),
                "efficiency": _r(op.efficiency),
                "copper_loss_w": _r(op.copper_loss_w, 3),
                "rectifier_loss_w": _r(op.rectifier_loss_w, 3),
                "delta_loop_loss_w": _r(op.loop_loss_w, 3),  # part of copper_loss_w
                "stationary_steel_w": _r(op.steel_loss_w, 3),
                "shaft_power_w": _r(op.shaft_power_w, 3),
                "conductor_eddy_w": _r(op.conductor_eddy_w, 4),
                "mechanical_w": _r(op.mechanical_w, 4),
                "magnet_temperature_c": _r(op.magnet_temperature_c, 1),
                "phase_current_rms_a": _r(op.phase_current_rms_a, 4),
                "current_density_a_mm2": _r(op.current_density_a_mm2, 3),
                # null where the steady state lies past the cap: no figure is claimed there
                "coil_temperature_c": None if op.temperature_over_cap else _r(op.coil_temperature_c, 1),
                "open_circuit_line_rms_v": _r(op.open_circuit_line_rms_v, 3),
                **({} if op.delivered_w is None else {"delivered_w": _r(op.delivered_w, 3)}),
            }
            for op in pr.curve
        ],
        **_converter_json(design),
    }


def _converter_json(design: Design) -> dict:
    """`converter`: what the converter on the bus does (target.kind = "converter"), else nothing."""
    ta, pr = design.spec.target, design.prediction
    if ta.kind != "converter":
        return {}
    top = conv.idle_bus_v(pr, ta)
    return {
        "converter": {
            "tracking": ta.tracking,
            "input_window_v": [ta.min_input_v, ta.max_input_v],
            "start_rpm": _r(pr.cut_in_rpm, 1),  # where the open bus reaches the converter's start
            "open_bus_at_max_v": _r(top, 3),  # what an idle converter sees at max_rpm
            "limit_w": _r(conv.limit_w(ta), 3),
            "rated_bus_v": _r(pr.rated.dc_voltage_v, 3),
            "rated_delivered_w": _r(pr.rated.delivered_w, 3),
            "capacitor_rating_v": conv.capacitor_rating_v(top),
        }
    }


def magnetics_json(design: Design) -> dict:
    f = design.forces
    return {
        "remanence_t": _r(design.geometry.remanence_t),
        "airgap_peak_bz_t": _r(f.airgap_peak_bz_t),
        "axial_force_n": _r(f.axial_force_n, 1),
        "axial_force_kgf": _r(f.axial_force_n / G, 1),
        "jacking_screws": f.jacking_screws,
        "steel_peak_b_t": _r(f.steel_peak_b_t),
        "steel_needed_mm": _r(f.steel_needed_mm, 2),
        "magnet_pull_n": _r(f.magnet_pull_n, 1),
        "image_order": design.flux.sources.image_order,
        "hoop_stress_mpa": _r(f.hoop_stress_mpa, 3),
        "hoop_safety_factor": _r(f.hoop_safety_factor, 2),
        "disc_outer_diameter_mm": _r(2 * f.disc_outer_radius_mm, 2),
        "magnet_mass_g": _r(f.magnet_mass_g, 2),
    }


def geometry_json(design: Design) -> dict:
    geo = design.geometry
    coils = []
    for idx in geo.coil_indices:
        outline, hole = geo.coil_polygons(idx)
        coils.append(
            {
                "index": idx,
                "outline_mm": [[_r(x, 4), _r(y, 4)] for x, y in outline],
                "hole_mm": [[_r(x, 4), _r(y, 4)] for x, y in hole],
                "z_min_mm": _r(geo.coil.z_min_mm, 4),
                "z_max_mm": _r(geo.coil.z_max_mm, 4),
            }
        )
    return {
        "magnets": [
            {
                "disc": m.disc,
                "shape": m.shape,
                "center_mm": [_r(v, 4) for v in m.center_mm],
                "dimension_mm": [_r(v, 4) for v in m.dimension_mm],
                "rotation_deg": _r(m.rotation_deg, 6),
                "polarization_t": _r(m.polarization_t, 6),
            }
            for m in geo.magnets
        ],
        "iron_planes_z_mm": [_r(z, 4) for z in geo.iron_planes_z_mm],
        "stator_z_mm": [_r(z, 4) for z in geo.stator_z_mm],
        "coil_leg_width_mm": _r(geo.coil.leg_width_mm, 3),
        "coil_mean_turn_mm": _r(geo.coil.mean_turn_length_mm, 3),
        "coil_span_deg": _r(geo.coil.span_deg, 4),
        "coils": coils,
    }


def plan_json(design: Design) -> dict:
    spec = design.spec
    return {
        "name": spec.name,
        "purpose": spec.purpose,
        "layout": layout_json(design),
        "electrical": electrical_json(design),
        "magnetics": magnetics_json(design),
        "geometry": geometry_json(design),
        "warnings": [_warning_json(design, w) for w in design.warnings],
        **source_json(design),
    }


def source_json(design: Design) -> dict:
    """`source`, `operating`, `energy` and `runaway_rpm` where a [source] drives the machine;
    nothing otherwise."""
    op = design.operating
    if op is None:
        return {}
    src = op.source
    mine = source_keys(src.kind)
    resolved = {f.name: getattr(src.spec, f.name) for f in dataclasses.fields(src.spec) if f.name in mine}
    if resolved.get("cp_curve") is not None:
        resolved["cp_curve"] = [list(p) for p in resolved["cp_curve"]]
    resolved["drive_efficiency"] = src.drive_efficiency
    if src.turbine_efficiency is not None:
        resolved["turbine_efficiency"] = src.turbine_efficiency
    rows = []
    bus = design.spec.target.kind == "converter"
    for r in op.rows:
        row = {src.condition_key: _r(r.condition, 3)}
        if src.kind in ("pedal", "crank"):
            row["cadence_rpm"] = _r(r.rpm / src.spec.drive_ratio, 1)
        row |= {
            "rpm": _r(r.rpm, 1),
            "tsr": _r(r.tsr, 3) if r.tsr is not None else None,
            "cp": _r(r.cp, 4) if r.cp is not None else None,
            "available_w": _r(r.available_w, 1),
            "source_power_w": _r(r.source_power_w, 2),
            "output_power_w": _r(r.output_power_w, 2),
            "load_power_w": _r(r.load_power_w, 2),
            **({"bus_v": _r(r.point.dc_voltage_v if r.point else 0.0, 3)} if bus else {}),
            "efficiency": _r(r.efficiency, 4),
            "stalled": r.stalled,
        }
        rows.append(row)
    return {
        "source": resolved,
        "operating": rows,
        "energy": {k: _r(v, 4) for k, v in op.energy.items()},
        "runaway_rpm": _r(op.runaway_rpm, 1),
        "cut_in_condition": _r(op.cut_in_condition, 3) if op.cut_in_condition is not None else None,
        "stall_wind_m_s": op.stall_wind_m_s,
        "given_max_rpm": design.given_max_rpm,
    }


def energy_words(design: Design) -> str:
    """The energy figure in a sentence, for the plan and the sheet."""
    op = design.operating
    so, e = op.source.spec, op.energy
    if op.source.kind == "wind":
        return (
            f"about {e['annual_kwh']:.0f} kWh a year at a mean wind of {so.mean_wind_m_s:g} m/s "
            f"(Weibull k = {so.weibull_k:g}; method of bins, IEC 61400-12-1), capacity factor "
            f"{e['capacity_factor']:.0%} of the most this table delivers"
        )
    if op.source.kind == "water":
        return f"about {e['kwh_per_day']:.1f} kWh a day at {so.flow_l_s:g} l/s"
    return f"about {e['wh_per_hour']:.0f} Wh for each hour at a comfortable {so.sustained_power_w:g} W effort"


def source_sentences(design: Design) -> list[str]:
    """Where output starts, the stall, the energy and the runaway: one sentence each, for the
    plan and the sheet."""
    op = design.operating
    src = op.source
    out = []
    if op.cut_in_condition is not None:
        unit = src.condition_unit
        out.append(f"Output starts at {condition_words(src.kind, op.cut_in_condition)} {unit}.")
    if op.stall_wind_m_s is not None:
        out.append(
            f"From {op.stall_wind_m_s:g} m/s the alternator holds the blades well below their best "
            "tip-speed ratio: they stall (source.stall says what to change)."
        )
    out.append(f"Energy: {energy_words(design)}.")
    out.append(f"Runaway: {op.runaway_rpm:.0f} rpm with no load, {src.runaway_condition}.")
    return out


def condition_words(kind: str, value: float) -> str:
    """A condition as a reader wants it: 7 (m/s), 12.5 (l/s), 19 (W of effort)."""
    return f"{value:.0f}" if kind in ("pedal", "crank") else f"{value:.3g}"


def _source_text(design: Design) -> str:
    op = design.operating
    src = op.source
    key = src.condition_key
    wind = src.kind == "wind"
    cable = src.spec.cable_length_m > 0
    person = src.kind in ("pedal", "crank")
    bus = design.spec.target.kind == "converter"
    headings = [
        key,
        *(["cadence_rpm"] if person else []),
        "rpm",
        *(["tsr", "cp"] if wind else []),
        "source_w",
        *(["bus_v"] if bus else []),
        "output_w",
        *(["battery_w"] if cable else []),
        *(["delivered_w"] if bus else []),
        "efficiency",
        "coil_c",
        "",
    ]
    furl = src.spec.furl_wind_m_s if wind else None
    shown = [r for r in op.rows if furl is None or r.condition <= furl]
    rows = []
    for r in shown:
        pt = r.point
        coil = (
            ""
            if pt is None
            else (f">{TEMPERATURE_CAP_C:g}" if pt.temperature_over_cap else f"{pt.coil_temperature_c:.0f}")
        )
        rows.append(
            [
                condition_words(src.kind, r.condition),
                *([f"{r.rpm / src.spec.drive_ratio:.0f}"] if person else []),
                int(round(r.rpm)),
                *([f"{r.tsr:.1f}", f"{r.cp:.2f}"] if wind else []),
                f"{r.source_power_w:.1f}",
                *([f"{pt.dc_voltage_v:.1f}" if pt is not None else ""] if bus else []),
                f"{r.output_power_w:.1f}",
                *([f"{r.load_power_w:.1f}"] if cable or bus else []),
                f"{r.efficiency:.0%}",
                coil,
                "stalls" if r.stalled else "",
            ]
        )
    if len(shown) < len(op.rows):
        last = op.rows[-1].condition
        first = op.rows[len(shown)].condition
        rows.append(
            [
                f"{first:g}–{last:g}",
                f"furled: as at {shown[-1].condition:g}",
                *([""] * (len(headings) - 3)),
                "",
            ]
        )
    title = {
        "wind": "Where it runs in each wind (steady speed: the blades' power meets the alternator's)",
        "water": "Where it runs at each flow (steady speed on the turbine's torque line)",
        "pedal": "Where it runs at each effort (steady cadence on the rider's torque line)",
    }.get(src.kind, "Where it runs at each effort (steady cadence on the torque line of the person cranking)")
    lines = [table(headings, rows, title)]
    if bus:
        lines.append(
            "bus_v: the level the converter settles the bus at there; output_w goes into it, "
            "delivered_w comes out."
        )
    lines += source_sentences(design)
    if design.given_max_rpm is not None:
        lines.append(
            f"That is above target.max_rpm = {design.given_max_rpm:g}: every check in this plan "
            f"is made at {design.spec.target.max_rpm:g} rpm."
        )
    return "\n".join(lines)


def _suggestion_json(s) -> dict:
    return {
        "key": s.key,
        "from": s.was,
        "to": s.to,
        "figure": _r(s.value),
        "figure_now": _r(s.now),
        "unit": s.unit,
        "result": s.result,
        "rated_power_w": _r(s.rated_power_w, 1),
        "rated_power_now_w": _r(s.rated_power_now_w, 1),
        "clears": s.clears,
        "raises": list(s.brings),
    }


def _warning_json(design: Design, w) -> dict:
    """One warning; "suggestions" is null unless they were computed (plan --suggest, build)."""
    out = {"code": w.code, "severity": w.severity, "message": w.message}
    out["suggestions"] = (
        None if design.suggestions is None else [_suggestion_json(s) for s in design.suggestions_for(w.code)]
    )
    return out


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
        ["pitch factor, tooth coils (one position wide)", f"{lay.pitch_factor:.3f}"],
        ["winding factor, tooth coils", f"{lay.winding_factor:.3f}"],
        [
            "winding factor, coils as shaped",
            f"{design.winding_factor_as_built:.3f} (what this coreless stator has)",
        ],
        ["balanced", "yes" if lay.balanced else "no"],
        ["periodicity", lay.periodicity],
        ["cogging steps per rev", f"{lay.cogging_steps} (iron teeth only; none here)"],
    ]
    if lay.phases == 1:
        figures.insert(7, ["distribution factor as wound", f"{lay.as_wound_distribution_factor:.3f}"])
    out.append(table(["layout", "value"], figures))
    if design.layout_notes:
        out.append("")
        out.extend(f"note: {n}" for n in design.layout_notes)
    out += ["", _winding_text(design), "", _output_text(design), "", _magnetics_text(design)]
    if design.operating is not None:
        out += ["", _source_text(design)]
    out += ["", _warnings_text(design)]
    return "\n".join(out)


def _winding_text(design: Design) -> str:
    pr, geo = design.prediction, design.geometry
    wire = pr.wire.name + (f" x {pr.wire.strands} in hand" if pr.wire.strands > 1 else "")
    rows = [
        ["turns per coil", pr.turns_per_coil],
        ["wire", f"{wire} ({pr.wire.diameter_mm:.3f} mm bare copper)"],
        ["copper fill of the window", f"{pr.copper_fill:.2f}"],
        [
            "coil leg width / thickness",
            f"{geo.coil.leg_width_mm:.1f} mm / {geo.coil.thickness_mm:.1f} mm",
        ],
        ["mean turn length", f"{geo.coil.mean_turn_length_mm:.0f} mm"],
        ["coil resistance at 20 °C", f"{pr.coil_resistance_ohm:.3f} ohm"],
        ["phase resistance at 20 °C", f"{pr.phase_resistance_ohm:.3f} ohm"],
        ["phase inductance (Wheeler, ±20 %)", f"{pr.phase_inductance_mh:.2f} mH"],
        ["wire per phase", f"{pr.wire_length_per_phase_m:.0f} m"],
        ["geometric pitch factor", f"{design.geometric_pitch_factor:.3f}"],
    ]
    given = design.spec.coils_given
    if given:
        rows.insert(
            0,
            [
                "coils as built",
                ", ".join(f"coils.{k}" for k in given) + " from the design file; the rest sized",
            ],
        )
    return table(["winding", "value"], rows)


def _output_text(design: Design) -> str:
    pr, spec = design.prediction, design.spec
    ta = spec.target
    if ta.kind == "battery":
        what = f"battery {ta.battery_v:g} V, cut-in {pr.cut_in_rpm:.0f} rpm (target {ta.cut_in_rpm:g})"
    elif ta.kind == "converter":
        what = converter_words(ta) + f"; it starts at {pr.cut_in_rpm:.0f} rpm"
    elif ta.kind == "dc":
        what = f"{ta.voltage_v:g} V DC at {ta.rated_current_a:g} A, {ta.rated_rpm:g} rpm (resistive load)"
    else:
        what = f"{ta.voltage_v:g} V AC line at {ta.rated_current_a:g} A, {ta.rated_rpm:g} rpm"
    head = [
        f"Output into {what}",
        f"Open circuit at {ta.rated_rpm:g} rpm: {pr.open_circuit_phase_rms_v:.1f} V phase, "
        f"{pr.open_circuit_line_rms_v:.1f} V line (rms, magnets at 20 °C), THD {pr.line_thd:.1%}; "
        f"at {ta.max_rpm:g} rpm {pr.open_circuit_line_rms_at_max_v:.0f} V line",
        f"Magnets at {pr.magnet_temperature_c:.0f} °C under rated load (rough estimate): "
        f"{pr.open_circuit_line_rms_warm_v:.1f} V line at {ta.rated_rpm:g} rpm"
        + (f", cut-in {pr.cut_in_warm_rpm:.0f} rpm" if ta.kind == "battery" else "")
        + "; over the grade's Br range, cold to warm: "
        + "{:.1f}–{:.1f} V".format(
            *pr.open_circuit_band_v(pr.rated_rpm, pr.ambient_c, pr.magnet_temperature_c)
        ),
    ]
    ac = ta.kind == "ac_line"
    conv_out = ta.kind == "converter"
    plate = any(op.steel_loss_w > 0 for op in pr.curve)  # a stationary steel plate
    headings = [
        "rpm",
        "V_ac_line" if ac else "V_dc",
        "I_line_a" if ac else "I_dc_a",
        "P_w",
        *(["out_w"] if conv_out else []),
        "copper_w",
        *([] if ac else ["rectifier_w"]),  # a line load has no bridge
        *(["steel_w"] if plate else []),
        "eddy_w",
        "mech_w",
        "shaft_w",
        "efficiency",
        "A/mm2",
        "coil_c",
    ]
    rows = [
        [
            int(round(op.rpm)),
            op.dc_voltage_v,
            op.dc_current_a,
            op.dc_power_w,
            *([op.delivered_w] if conv_out else []),
            op.copper_loss_w,
            *([] if ac else [op.rectifier_loss_w]),
            *([op.steel_loss_w] if plate else []),
            op.conductor_eddy_w,
            op.mechanical_w,
            op.shaft_power_w,
            op.efficiency,
            op.current_density_a_mm2,
            f">{TEMPERATURE_CAP_C:g}" if op.temperature_over_cap else int(round(op.coil_temperature_c)),
        ]
        for op in pr.curve
    ]
    note = ""
    if any(op.temperature_over_cap for op in pr.curve):
        note = (
            f"\ncoil_c >{TEMPERATURE_CAP_C:g}: the coils would pass every enamel's rating there; "
            "the estimate means nothing past it, and the currents shown assume the cap."
        )
    if plate:
        note += (
            "\nsteel_w: eddy and hysteresis loss of the stationary steel plate under the moving "
            "magnets (limiting theory, a rough estimate)."
        )
    if conv_out:
        note += (
            "\nV_dc, I_dc_a, P_w: the bus the converter holds (idle: the open-circuit peak); out_w: what it "
            f"delivers, {ta.efficiency:.0%} of P_w, at most {conv.limit_w(ta):.0f} W."
        )
        if ta.tracking == "mppt":
            note += (
                "\nEach row holds its speed whatever the torque, so tracking takes the most the machine "
                "gives there (about half the open-circuit bus, where the copper takes about as much as "
                "the output); where a source turns it, see where it settles below."
                if design.operating is not None
                else "\nEach row holds its speed whatever the torque, so tracking takes the most the "
                "machine gives there (about half the open-circuit bus, where the copper takes about as "
                "much as the output); a [source] table lets it settle where the source gives most."
            )
    note += (
        "\neddy_w: eddy currents in the wire itself; mech_w: bearings and windage (rough); "
        "efficiency is output over shaft_w, the power the shaft must bring."
    )
    return "\n".join(head) + "\n" + table(headings, rows) + note


def _magnetics_text(design: Design) -> str:
    f = design.forces
    rows = [
        ["peak Bz in the coils", f"{f.airgap_peak_bz_t:.3f} T"],
        ["disc attraction", f"{f.axial_force_n:.0f} N ({f.axial_force_n / G:.0f} kgf)"],
        ["jacking screws", "needed" if f.jacking_screws else "not needed"],
        ["one magnet onto steel", f"{f.magnet_pull_n:.0f} N"],
    ]
    if f.steel_peak_b_t is not None:
        rows.append(
            [
                f"steel {f.steel_plate} flux density",
                f"{f.steel_peak_b_t:.2f} T (keep under {STEEL_B_LIMIT_T:g} T)",
            ]
        )
    rows.append(
        [
            "disc hoop stress at max rpm",
            f"{f.hoop_stress_mpa:.2f} MPa (safety factor {f.hoop_safety_factor:.0f})",
        ]
    )
    return table(["forces", "value"], rows)


def suggestion_lines(design: Design, code: str) -> list[str]:
    """The checked changes for one warning, one line each; why there are none, if computed."""
    if design.suggestions is None or code not in advised_codes(design):
        return []
    found = design.suggestions_for(code)
    if not found:
        return ["no change the model tried helps this figure enough to offer"]
    return ["try " + s.words for s in found]


def _warnings_text(design: Design) -> str:
    order = {"danger": 0, "warning": 1, "info": 2}
    ws = sorted(design.warnings, key=lambda w: order[w.severity])
    lines = ["Warnings and cautions"]
    for w in ws:
        lines.append(f"[{w.severity.upper()}] {w.code}: {w.message}")
        lines += [f"    {line}" for line in suggestion_lines(design, w.code)]
    pending = advised_codes(design) if design.suggestions is None else ()
    if pending:
        which = f"{pending[0]} has" if len(pending) == 1 else f"{', '.join(pending)} have"
        lines.append(
            f"{which} changes the model can try: run plan with --suggest to re-run it on each "
            "and list those that help."
        )
    lines.append(
        "This is a design aid: check every figure before building, and defer to local codes "
        "and licensed practice for anything connected to a building's wiring."
    )
    return "\n".join(lines)


def balance_json(rb) -> dict:
    """The `balance --json` view of a layout.balance.RotorBalance."""
    return {
        "grade": rb.grade,
        "grade_mm_s": rb.grade_mm_s,
        "max_rpm": rb.max_rpm,
        "rotor_mass_kg": _r(rb.rotor_mass_kg, 4),
        "permissible_gmm": _r(rb.permissible_gmm, 3),
        "static_unbalance_gmm": _r(rb.static_unbalance_gmm, 3),
        "couple_unbalance_gmm_mm": _r(rb.couple_unbalance_gmm_mm, 2),
        "weighed": rb.weighed,
        "expected_unweighed_p95_gmm": _r(rb.expected_unweighed_p95_gmm, 3),
        "weighing_advice": rb.weighing_advice,
        "discs": [
            {
                "disc": d.disc,
                "mass_kg": _r(d.mass_kg, 4),
                "unbalance_before_gmm": _r(d.unbalance_before_gmm, 3),
                "unbalance_after_gmm": _r(d.unbalance_after_gmm, 3),
                "clearance_floor_gmm": _r(d.clearance_floor_gmm, 3),
                "permissible_gmm": _r(d.permissible_gmm, 3),
                "assignment": [
                    {"pocket": a.pocket, "magnet": a.magnet, "face": a.face, "mass_g": _r(a.mass_g, 3)}
                    for a in d.assignment
                ],
                "correction": {
                    "needed": d.correction.needed,
                    "add_g": _r(d.correction.add_g, 3),
                    "radius_mm": _r(d.correction.radius_mm, 2),
                    "angle_deg": _r(d.correction.angle_deg, 2),
                    "ideal_angle_deg": _r(d.correction.ideal_angle_deg, 2),
                    "residual_after_gmm": _r(d.correction.residual_after_gmm, 3),
                    "remove_g": _r(d.correction.remove_g, 3),
                },
            }
            for d in rb.discs
        ],
        "procedure": list(rb.procedure),
        "cautions": list(rb.cautions),
    }


def balance_text(rb, name: str) -> str:
    out = [
        f"{name}: rotor balance, ISO 21940-11 grade {rb.grade} at {rb.max_rpm:g} rpm",
        f"Rotor {rb.rotor_mass_kg:.2f} kg: permissible residual unbalance {rb.permissible_gmm:.1f} g·mm",
        rb.weighing_advice,
        "",
    ]
    rows = []
    for d in rb.discs:
        c = d.correction
        fix = (
            f"add {c.add_g:.1f} g at {c.radius_mm:.0f} mm, {c.angle_deg:.1f}° (or remove {c.remove_g:.1f} g "
            f"at {(c.ideal_angle_deg + 180) % 360:.1f}°)"
            if c.needed
            else "none needed"
        )
        after = f"<{d.clearance_floor_gmm:.0f}" if d.below_floor else f"{d.unbalance_after_gmm:.1f}"
        rows.append([d.disc, d.mass_kg, d.unbalance_before_gmm, after, d.permissible_gmm, fix])
    out.append(
        table(["disc", "mass_kg", "before_gmm", "after_gmm", "allowed_gmm", "correction"], rows, "Discs")
    )
    floor = rb.discs[0].clearance_floor_gmm
    out.append(
        f"Each magnet can sit anywhere within its place's clearance, which alone leaves about "
        f"{floor:.0f} g·mm (rms) a disc: no placement promises less"
        + (" (after_gmm <N: below that floor)." if any(d.below_floor for d in rb.discs) else ".")
    )
    if len(rb.discs) == 2:
        out.append(
            f"static unbalance {rb.static_unbalance_gmm:.2f} g·mm, "
            f"couple unbalance {rb.couple_unbalance_gmm_mm:.0f} g·mm²"
        )
    for d in rb.discs:
        if not d.assignment:  # a plain disc: no magnets to place
            continue
        out.append("")
        rows = [[a.pocket, a.magnet, a.face, a.mass_g] for a in d.assignment]
        title = f"Disc {d.disc}: pocket → magnet (face up with the disc lying magnet side up)"
        out.append(table(["pocket", "magnet", "face_up", "mass_g"], rows, title))
    out += ["", "Static check before the first spin:"]
    out += [f"  {k}. {step}" for k, step in enumerate(rb.procedure, 1)]
    out += ["", "Cautions:"] + [f"  - {c}" for c in rb.cautions]
    return "\n".join(out)
