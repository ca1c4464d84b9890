"""Warnings: what could hurt someone or the machine, and what to do about the danger.

Severity: "danger" (can injure or kill), "warning" (the machine may fail or underperform),
"info" (worth knowing). Codes are stable names for scripts.
"""

from __future__ import annotations

from dataclasses import dataclass

from layout import converter as conv
from layout.forces import HOOP_SAFETY_FACTOR, JACKING_FORCE_N, STEEL_B_LIMIT_T, Forces, G
from layout.geometry import magnet_limit_c
from layout.materials import DISC_MATERIALS, STATOR_BINDERS_MAX_C
from layout.model import Prediction
from layout.spec import Spec, unit_slip_hint
from layout.winding import Layout

# Extra-low voltage limits, IEC 61140: 50 V AC rms, 120 V ripple-free DC.
ELV_AC_V = 50.0
ELV_DC_V = 120.0
CURRENT_DENSITY_STILL_AIR_A_MM2 = 5.0  # hand-wound coils in still air: 3–5 A/mm² (common practice)
CURRENT_DENSITY_CAST_A_MM2 = 4.0  # coils cast in resin shed heat worse (common practice)
STEEL_LOSS_SHARE = 0.1  # a stationary plate's loss worth a warning, share of shaft input (our choice)
PRINTED_MARGIN_K = 10.0  # a printed disc should stay this far below its softening point (our choice)
WIRE_EDDY_SHARE = 0.1  # the wire's eddy loss worth a warning, share of I²R (our choice)
DISC_BEND_SHARE = 0.3  # a disc's bending worth a warning, share of the running clearance (our choice)
BOND_SAFETY_FACTOR = 3.0  # on what holds a magnet against pull and fling (common practice)
DELTA_LOOP_SHARE = 0.03  # a delta's circulating loss worth a warning, share of output (our choice)
PACEMAKER_DISTANCE_MM = 150  # keep strong magnets this far from implants (from memory)
DEFER = "follow local codes and have a licensed electrician check the installation"


INSULATION_TEST_ELV_V = 250  # insulation tester voltage for extra-low-voltage windings (common practice)
INSULATION_TEST_LV_V = 500  # and for windings whose open-circuit voltage exceeds it (common practice)
INSULATION_MIN_MOHM = 1.0  # windings to frame, low-voltage machines (common practice)


def _losses_words(op, bridge: bool) -> str:
    """The losses an operating point has, for a reader: "copper, rectifier and steel losses"."""
    names = (
        ["copper"] + (["rectifier"] if bridge else []) + (["stationary steel"] if op.steel_loss_w > 0 else [])
    )
    return (", ".join(names[:-1]) + " and " + names[-1] if len(names) > 1 else names[0]) + " losses"


def above_extra_low_voltage(pred: Prediction) -> bool:
    """True when the open-circuit voltage at max_rpm exceeds the IEC 61140 extra-low limits."""
    return pred.open_circuit_line_rms_at_max_v > ELV_AC_V or pred.open_circuit_dc_peak_at_max_v > ELV_DC_V


def insulation_test_v(pred: Prediction) -> int:
    """DC voltage (V) to test the windings' insulation at: higher once above extra-low voltage."""
    return INSULATION_TEST_LV_V if above_extra_low_voltage(pred) else INSULATION_TEST_ELV_V


@dataclass(frozen=True)
class Warning:
    code: str
    severity: str
    message: str


def collect_warnings(
    spec: Spec, layout: Layout, pred: Prediction, forces: Forces, star: Prediction | None = None
) -> list[Warning]:
    """Every warning the design earns, most dangerous first within each subject.

    Limits: IEC 61140 extra-low voltage (50 V AC rms, 120 V DC); current density in A/mm²,
    coil and magnet temperatures in °C against the binder's and grade's limits
    (layout.materials); steel flux density in T against `STEEL_B_LIMIT_T`; hoop stress against
    the disc material's strength over `HOOP_SAFETY_FACTOR`; disc pull in N against
    `JACKING_FORCE_N` (the last four common practice). A delta's circulating current is
    flagged above `DELTA_LOOP_SHARE` of the output (our choice), with the figures of the
    same machine in star (`star`, re-run by the caller) when given.
    """
    out: list[Warning] = []
    ta = spec.target

    def add(code, severity, message):
        out.append(Warning(code, severity, message))

    v_ac = pred.open_circuit_line_rms_at_max_v
    v_dc = pred.open_circuit_dc_peak_at_max_v
    # Bridge words only where there is a bridge: an AC-line load sees the line's peak.
    bridge = ta.kind != "ac_line"
    peak = f"{v_dc:.0f} V rectified" if bridge else f"{v_dc:.0f} V peak"
    if above_extra_low_voltage(pred):
        add(
            "voltage.above_elv",
            "danger",
            f"Open-circuit voltage at {ta.max_rpm:g} rpm is {v_ac:.0f} V AC line ({peak}), above "
            f"extra-low voltage (IEC 61140: {ELV_AC_V:g} V AC, {ELV_DC_V:g} V DC): a shock can kill. "
            f"Enclose terminals and {'rectifier' if bridge else 'wiring'}, fit a dump load or brake "
            f"so the machine cannot run away unloaded, and {DEFER}.",
        )
    else:
        add(
            "voltage.open_circuit",
            "info",
            f"Open-circuit voltage at {ta.max_rpm:g} rpm is {v_ac:.0f} V AC line ({peak}), within "
            "extra-low voltage; it rises with speed, so never let the "
            f"machine run faster unloaded, and {DEFER}.",
        )
    if forces.hoop_safety_factor < HOOP_SAFETY_FACTOR:
        mat = DISC_MATERIALS[spec.rotor.disc_material]
        add(
            "disc.hoop_stress",
            "danger",
            f"The {mat.name} rotor disc reaches {forces.hoop_stress_mpa:.1f} MPa at {ta.max_rpm:g} rpm, "
            f"a safety factor of {forces.hoop_safety_factor:.1f} on {mat.strength_mpa:g} MPa "
            f"(want {HOOP_SAFETY_FACTOR:g}); a burst disc throws fragments.",
        )
    plain = forces.steel_disc_hoop_safety_factor
    if plain is not None and plain < HOOP_SAFETY_FACTOR:
        add(
            "disc.hoop_stress",
            "danger",
            f"The plain steel disc reaches {forces.steel_disc_hoop_stress_mpa:.1f} MPa at "
            f"{ta.max_rpm:g} rpm, a safety factor of {plain:.1f} (want {HOOP_SAFETY_FACTOR:g}); "
            "a burst disc throws fragments.",
        )
    binder_max = STATOR_BINDERS_MAX_C[spec.stator.binder]
    rated = pred.rated
    top = pred.curve[-1]
    hot = rated
    if rated.coil_temperature_c > binder_max:
        add(
            "coil.temperature",
            "warning",
            f"Coils reach {rated.temperature_words} at {rated.rpm:g} rpm, over the "
            f"{binder_max:g} °C that {spec.stator.binder} takes: it softens "
            "and coils shift.",
        )
    if top.coil_temperature_c > binder_max and top.rpm > rated.rpm:
        add(
            "coil.overspeed_heat",
            "warning",
            f"Loaded at {top.rpm:g} rpm the coils would reach {top.temperature_words}, over the "
            f"{binder_max:g} °C of {spec.stator.binder}: limit the "
            "current above the rated speed (controller, furling, governor) or it burns out.",
        )
    cast = spec.stator.binder in ("epoxy", "polyester")
    limit = CURRENT_DENSITY_CAST_A_MM2 if cast else CURRENT_DENSITY_STILL_AIR_A_MM2
    if rated.current_density_a_mm2 > limit:
        add(
            "coil.current_density",
            "warning",
            f"Current density at {rated.rpm:g} rpm is {rated.current_density_a_mm2:.1f} A/mm², above "
            f"the {limit:g} A/mm² rule of thumb for {'cast' if cast else 'open'} coils: they run "
            "hot.",
        )
    grade_max = magnet_limit_c(spec)
    if hot.magnet_temperature_c > grade_max:
        add(
            "magnet.temperature",
            "warning",
            f"The magnets reach about {hot.magnet_temperature_c:.0f} °C at {hot.rpm:g} rpm (rough "
            f"estimate; coils {hot.temperature_words}), over the {grade_max:g} °C their grade "
            "takes: they can lose strength for good.",
        )
    disc = DISC_MATERIALS[spec.rotor.disc_material]
    if disc.printed and disc.softening_c is not None:
        # The disc holds the magnets and faces the stator across the gap: it runs about as warm
        # as they do, and its face nearer the coils warmer still.
        near = max(hot.magnet_temperature_c, (hot.magnet_temperature_c + hot.coil_temperature_c) / 2)
        if near > disc.softening_c - PRINTED_MARGIN_K:
            add(
                "disc.softening",
                "warning",
                f"The printed {disc.name} discs run at about {hot.magnet_temperature_c:.0f} °C beside coils "
                f"at {hot.temperature_words}, near or over the {disc.softening_c:g} °C where {disc.name} "
                "creeps: magnets can work loose and the gap close. Keep the machine out of the sun and "
                "check the gap after the first long runs.",
            )
    if (
        forces.disc_deflection_mm is not None
        and forces.disc_deflection_mm > DISC_BEND_SHARE * spec.rotor.running_clearance_mm
    ):
        add(
            "disc.bending",
            "warning",
            f"Under the {forces.axial_force_n:.0f} N attraction the magnet disc bends about "
            f"{forces.disc_deflection_mm:.2f} mm at the magnets (a plate clamped at the hub; rough), "
            f"{forces.disc_deflection_mm / spec.rotor.running_clearance_mm:.0%} of the running clearance: "
            "the gap closes as the discs come together and can rub.",
        )
    if forces.bond_safety_factor is not None and forces.bond_safety_factor < BOND_SAFETY_FACTOR:
        carried = (
            forces.magnet_fling_n
            if DISC_MATERIALS[spec.rotor.disc_material].magnetic
            else forces.magnet_pull_out_n
        )
        add(
            "magnet.retention",
            "danger",
            f"Each magnet is pulled out of its place with about {forces.magnet_pull_out_n:.0f} N and flung "
            f"outwards with {forces.magnet_fling_n:.0f} N at {ta.max_rpm:g} rpm; its bond holds "
            f"{forces.bond_safety_factor:.1f} times the {carried:.0f} N it carries (want "
            f"{BOND_SAFETY_FACTOR:g}): a magnet that lets go is a projectile. Set rotor.magnet_bond_mpa "
            "to the adhesive's own figure, or hold the magnets with a rim or cover.",
        )
    if disc.printed:
        add(
            "disc.printed_care",
            "info",
            f"Printed {disc.name} discs: glue every magnet into its pocket with a two-part epoxy and let "
            f"it cure fully before the first spin, keep the machine out of direct sun ({disc.name} "
            f"creeps from {disc.softening_c:g} °C), and check the discs for cracks and loose magnets "
            "before each season.",
        )
    add(
        "magnet.pinch",
        "danger",
        f"Each magnet pulls about {forces.magnet_pull_n:.0f} N ({forces.magnet_pull_n / G:.0f} kgf) "
        "onto steel and snaps to its neighbours: it crushes fingers and chips. Handle one at a "
        "time, slide rather than lift, keep spacers between them, wear eye protection.",
    )
    add(
        "magnet.pacemaker",
        "danger",
        "Strong magnets upset pacemakers and other implants: anyone with one keeps at least "
        f"{PACEMAKER_DISTANCE_MM} mm away from loose magnets and finished rotors.",
    )
    if forces.axial_force_n > 0:
        kgf = forces.axial_force_n / G
        if forces.jacking_screws:
            add(
                "rotor.jacking_screws",
                "danger",
                f"The discs attract with about {forces.axial_force_n:.0f} N ({kgf:.0f} kgf), more "
                f"than can be held by hand (over {JACKING_FORCE_N:g} N): lower them together on "
                "jacking screws, never by hand.",
            )
        else:
            add(
                "rotor.attraction",
                "info",
                f"The discs attract with about {forces.axial_force_n:.0f} N ({kgf:.0f} kgf); "
                "bring them together slowly and keep fingers out of the gap.",
            )
    if forces.steel_peak_b_t is not None and forces.steel_peak_b_t > STEEL_B_LIMIT_T:
        add(
            "steel.saturation",
            "warning",
            f"The steel {forces.steel_plate} carries about {forces.steel_peak_b_t:.2f} T, above "
            f"{STEEL_B_LIMIT_T:g} T: it saturates and the output falls"
            + (
                f"; the model limits the flux, and so the EMF, to {pred.saturation_derate:.0%} of what "
                "ideal steel would give."
                if pred.saturation_derate < 1
                else "."
            ),
        )
    if layout.unbalanced_pull:
        add(
            "layout.unbalanced_pull",
            "info",
            f"{layout.coil_positions} coils with {layout.magnets} magnets have no rotational "
            "symmetry: the magnetic pull on the rotor is not balanced round the shaft. Small in a "
            "coreless stator; use a stiff shaft and good bearings.",
        )
    as_built = "turns_per_coil" in spec.coils_given
    if ta.kind == "battery" and abs(pred.cut_in_rpm / ta.cut_in_rpm - 1) > 0.1:
        add(
            "turns.cut_in",
            "warning",
            f"With {pred.turns_per_coil} whole turns the cut-in is {pred.cut_in_rpm:.0f} rpm, "
            + (
                f"not the {ta.cut_in_rpm:g} asked: the coils as built (coils.turns_per_coil) set it."
                if as_built
                else f"not {ta.cut_in_rpm:g}: turns are too few to set it finely."
            ),
        )
    if as_built and ta.kind in ("dc", "ac_line") and rated.dc_voltage_v < ta.voltage_v * 0.97:
        add(
            "coils.as_built_short",
            "warning",
            f"The coils as built ({pred.turns_per_coil} turns) give {rated.dc_voltage_v:.1f} V at "
            f"{rated.rpm:g} rpm into the target's load, not the {ta.voltage_v:g} V asked: expect "
            f"{rated.dc_power_w:.0f} W there, or raise the speed.",
        )
    if ta.kind == "battery" and pred.cut_in_rpm >= rated.rpm:
        add(
            "output.below_cut_in",
            "warning",
            f"At the rated {rated.rpm:g} rpm the machine is below its cut-in of {pred.cut_in_rpm:.0f} rpm: "
            + (
                f"it charges nothing at any speed up to the highest {ta.max_rpm:g} rpm. "
                if pred.cut_in_rpm >= ta.max_rpm
                else f"it charges nothing there, and at most {max(op.dc_power_w for op in pred.curve):.0f} W "
                f"by {ta.max_rpm:g} rpm. "
            )
            + (
                "More turns (coils.turns_per_coil) bring the cut-in down."
                if "turns_per_coil" in spec.coils_given
                else "Set target.cut_in_rpm below the rated speed."
            ),
        )
    if rated.efficiency < 0.7 and rated.dc_power_w > 1e-3 and pred.cut_in_rpm < rated.rpm:
        # Into a battery the winding's EMF is about cut-in/rpm of what it would be at the
        # battery voltage, so the efficiency cannot much exceed that ratio whatever the wire.
        why = (
            f"; into a battery it is bounded by about cut-in over speed, here "
            f"{pred.cut_in_rpm / rated.rpm:.0%}"
            if ta.kind == "battery"
            else ""
        )
        add(
            "output.low_efficiency",
            "warning",
            f"Efficiency at {rated.rpm:g} rpm is {rated.efficiency:.0%}: {_losses_words(rated, bridge)} "
            f"eat the output{why}.",
        )
    loop = rated.loop_loss_w
    if loop > DELTA_LOOP_SHARE * max(rated.dc_power_w, 1e-9) and rated.dc_power_w > 0:
        instead = ""
        if star is not None:
            st = star.rated
            instead = (
                f' Connected in star (connection.kind = "star", {star.turns_per_coil} turns a coil) '
                f"the model gives {st.dc_power_w:.0f} W at {st.efficiency:.0%} efficiency, "
                f"against {rated.dc_power_w:.0f} W at {rated.efficiency:.0%} in delta."
            )
        add(
            "delta.circulating",
            "warning",
            f"Round the closed delta the triplen harmonics of the EMF (3rd, 9th, …) drive a current "
            f"that never reaches "
            f"the load: {loop:.0f} W of copper loss at {rated.rpm:g} rpm, "
            f"{loop / rated.dc_power_w:.0%} of the output.{instead}",
        )
    if rated.steel_loss_w > STEEL_LOSS_SHARE * max(rated.shaft_power_w, 1e-9):
        add(
            "steel.stationary_loss",
            "warning",
            f"The stationary steel plate behind the stator loses about {rated.steel_loss_w:.0f} W at "
            f"{rated.rpm:g} rpm to eddy currents and hysteresis under the moving magnets, "
            f"{rated.steel_loss_w / rated.shaft_power_w:.0%} of the shaft input (a rough estimate): "
            "it drags on the rotor and heats the stator.",
        )
    if rated.conductor_eddy_w > WIRE_EDDY_SHARE * max(rated.copper_loss_w, 1e-9) and rated.dc_power_w > 1e-3:
        add(
            "coil.wire_eddy",
            "warning",
            f"Eddy currents in the {pred.wire.diameter_mm:.2f} mm wire itself cost "
            f"{rated.conductor_eddy_w:.1f} W at {rated.rpm:g} rpm, "
            f"{rated.conductor_eddy_w / rated.copper_loss_w:.0%} of the I²R loss: "
            "thinner strands in hand carry the same current with less of it.",
        )
    slip = unit_slip_hint(spec)
    if slip:
        add(
            "input.units",
            "warning",
            f"Check the units of the design file{slip}; every figure here follows from them.",
        )
    add(
        "rotor.spinning",
        "info",
        "Spinning discs store energy: guard the rotor, balance it first, make the first spins "
        "slow and stand out of the disc's plane.",
    )
    return out


def converter_warnings(spec: Spec, pred: Prediction, phases: int, runaway: bool) -> list[Warning]:
    """What a converter on the bus (layout.converter) risks: an idle bus above its input limit
    at a reachable speed (`runaway`: max_rpm is the source's runaway speed), a start too late
    to deliver at the rated speed, the output held at its limit, the bus capacitor's ripple
    and the charge it keeps."""
    ta = spec.target
    if ta.kind != "converter":
        return []
    out: list[Warning] = []
    vf = ta.diode_drop_v
    per_rpm = pred.open_circuit_dc_peak_at_max_v / ta.max_rpm
    top = conv.idle_bus_v(pred, ta)
    where = f"{ta.max_rpm:g} rpm" + (", the runaway speed," if runaway else "")
    if top > ta.max_input_v:
        from_rpm = (ta.max_input_v + 2 * vf) / per_rpm
        out.append(
            Warning(
                "converter.overvoltage",
                "danger",
                f"From {from_rpm:.0f} rpm the bus an idle converter sees (the rectified open-circuit peak "
                f"less the bridge's drops) passes its {ta.max_input_v:g} V input limit (target.max_input_v): "
                f"at {where} it reaches {top:.0f} V. A converter at its current limit, behind a full "
                "battery or switched off stops drawing, and that voltage destroys it. Wind fewer turns, "
                f"fit a clamp or dump load that holds the bus below {ta.max_input_v:g} V, or choose a "
                f"converter rated for {conv.capacitor_rating_v(top):.0f} V.",
            )
        )
    start = pred.cut_in_rpm
    if start >= ta.rated_rpm:
        best = max((op.delivered_w or 0.0) for op in pred.curve)
        out.append(
            Warning(
                "converter.late_start",
                "warning",
                f"The converter starts only at {start:.0f} rpm, where the open bus reaches its "
                f"{conv.start_v(ta):g} V: at the rated {ta.rated_rpm:g} rpm it delivers nothing"
                + (f", and at most {best:.0f} W by {ta.max_rpm:g} rpm" if best > 0.5 else " at any speed")
                + f". Its window ({ta.min_input_v:g}–{ta.max_input_v:g} V) is narrow for a machine that "
                f"must also survive {ta.max_rpm:g} rpm unloaded: choose a converter with a wider window, "
                "or hold the top speed down (furl, brake or govern).",
            )
        )
    limit = conv.limit_w(ta)
    held = next((op for op in pred.curve if (op.delivered_w or 0.0) >= limit * (1 - 1e-6)), None)
    if held is not None:
        out.append(
            Warning(
                "converter.at_limit",
                "info",
                f"From about {held.rpm:.0f} rpm the converter delivers its limit, {limit:.0f} W "
                f"({ta.max_output_current_a:g} A at {ta.output_v:g} V): it draws less and lets the bus "
                f"rise (to {held.dc_voltage_v:.0f} V there), so the shaft is lightly loaded and speeds up.",
            )
        )
    rated = pred.rated
    c_uf = ta.bus_capacitor_uf
    hz = pred.electrical_hz_at_rated
    if c_uf is not None and rated.dc_current_a > 0:
        ripple = conv.ripple_v(rated.dc_current_a, hz, phases, c_uf)
        if ripple > conv.RIPPLE_SHARE * rated.dc_voltage_v:
            need = conv.capacitor_for_ripple_uf(
                rated.dc_current_a, hz, phases, conv.RIPPLE_SHARE * rated.dc_voltage_v
            )
            how = (
                f"ripples by about {ripple:.1f} V peak to peak on {rated.dc_voltage_v:.1f} V"
                if ripple < rated.dc_voltage_v
                else f"cannot hold the {rated.dc_voltage_v:.1f} V bus between the bridge's pulses"
            )
            out.append(
                Warning(
                    "converter.ripple",
                    "warning",
                    f"At {rated.rpm:g} rpm the {c_uf:g} µF bus capacitor {how} ({rated.dc_current_a:.1f} A "
                    f"at {hz:.0f} Hz electrical), more than {conv.RIPPLE_SHARE:.0%}: the bus dips under the "
                    f"level this prediction holds it at, and the output falls short of it. About "
                    f"{need:.0f} µF keeps the ripple within {conv.RIPPLE_SHARE:.0%}.",
                )
            )
    if c_uf is not None:
        joules = 0.5 * c_uf * 1e-6 * top**2
        out.append(
            Warning(
                "converter.stored_charge",
                "danger" if top > ELV_DC_V else "info",
                f"The {c_uf:g} µF bus capacitor can charge to {top:.0f} V ({joules:.1f} J) and stays "
                "charged after the machine stops: rate it for at least "
                f"{conv.capacitor_rating_v(top):.0f} V, "
                "fit a bleed resistor across it, and check it reads near 0 V before touching the bus.",
            )
        )
    return out
