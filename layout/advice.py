"""What to change for a warning: candidate changes, each re-run through the whole model.

A warning says what is wrong. The change it offers has to be one the model has checked:
for each warning with design keys that bear on it, a handful of candidate changes are
applied to the design file's values (validated as the file would be), the design is
recomputed from the layout up (field, winding, output, forces, warnings) and, where the
caller asks, fit-checked. A change is offered only if it moves the flagged figure the right
way by more than the figure's resolution; at most three per warning, those that clear the
warning first, then by how much they help. Each states its result, the rated output it
leaves and any new warning it brings.

The candidates are the usual levers of the trade (common practice): more copper per turn
(a thicker stator, a fuller window), more flux per turn (thicker magnets), a higher cut-in
for a battery, a stronger or thicker disc, thicker steel. Which of them helps a particular
design is left to the model: for instance more parallel paths leave the copper per coil,
and so the current density, unchanged, and thicker wire does little for a battery charger
whose efficiency is set by cut-in over speed.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Iterable
from dataclasses import dataclass

from layout.converter import capacitor_rating_v, idle_bus_v, most_turns
from layout.design import Design, compute_design
from layout.forces import STEEL_DISC_NAME
from layout.geometry import magnet_limit_c
from layout.materials import DISC_MATERIALS, MAGNET_GRADES
from layout.spec import DesignError, Spec, with_values

MAX_SUGGESTIONS = 3
# A change that cures a warning by giving up more than this share of the rated output is
# not a cure (our choice); one that costs less says what it costs.
MAX_OUTPUT_LOSS = 0.3


@dataclass(frozen=True)
class Suggestion:
    code: str  # the warning it answers
    key: str  # "section.key" of the design file
    was: object
    to: object
    value: float  # the flagged figure after the change
    now: float  # and before
    unit: str
    result: str  # the figure after the change, for a reader: "4.6 A/mm²"
    before: str  # and before it: "5.9 A/mm²"
    rated_power_w: float  # output at the rated speed after the change
    rated_power_now_w: float
    rated_rpm: float
    clears: bool  # the warning is no longer raised
    brings: tuple[str, ...]  # warning codes the change raises that the design had not
    also: tuple[tuple[str, object], ...] = ()  # keys the change needs with it (None: left out)
    note: str = ""  # what the change means for the build, where the key alone does not say

    @property
    def words(self) -> str:
        """One line: "stator.thickness_mm = 12 → 15: 4.6 A/mm² (now 5.9 A/mm²), 265 W at 260 rpm
        (now 270 W)", and what it costs."""
        with_ = "".join(f" without {k}" if v is None else f" with {k} = {_show(v)}" for k, v in self.also)
        text = (
            f"{self.key} = {_show(self.was)} → {_show(self.to)}{with_}"
            + (f" ({self.note})" if self.note else "")
            + f": {self.result} (now {self.before}), "
            f"{self.rated_power_w:.0f} W at {self.rated_rpm:g} rpm (now {self.rated_power_now_w:.0f} W)"
        )
        if self.clears:
            text += "; clears this warning"
        if self.brings:
            text += "; but raises " + ", ".join(self.brings)
        return text


def _show(v: object) -> str:
    if isinstance(v, float):
        return f"{v:g}"
    if isinstance(v, str):
        return f'"{v}"'
    return str(v)


@dataclass(frozen=True)
class _Figure:
    unit: str
    value: Callable[[Design], float]  # the flagged figure
    better: int  # -1: lower is better, +1: higher is better
    resolution: float  # a change must move the figure by more than this
    label: str  # what the figure is, before its value: "hoop safety factor "
    show: Callable[[Design], str]  # its value for a reader: "3.8"


def _rated(d: Design):
    return d.prediction.rated


def _softening_c(spec: Spec) -> float:
    """Where the rotor discs' material starts to creep; a metal's far above any coil."""
    return DISC_MATERIALS[spec.rotor.disc_material].softening_c or 1000.0


def _temperature(op) -> str:
    return (
        f"over {op.coil_temperature_c:g} °C" if op.temperature_over_cap else f"{op.coil_temperature_c:.0f} °C"
    )


FIGURES: dict[str, _Figure] = {
    "coil.current_density": _Figure(
        "A/mm²", lambda d: _rated(d).current_density_a_mm2, -1, 0.05, "",
        lambda d: f"{_rated(d).current_density_a_mm2:.1f} A/mm²",
    ),
    "coil.temperature": _Figure(
        "°C", lambda d: _rated(d).coil_temperature_c, -1, 1.0, "coils ", lambda d: _temperature(_rated(d))
    ),
    "magnet.temperature": _Figure(
        "K", lambda d: _rated(d).magnet_temperature_c - magnet_limit_c(d.spec), -1, 1.0, "",
        lambda d: f"magnets {_rated(d).magnet_temperature_c:.0f} °C, rated to {magnet_limit_c(d.spec):g} °C",
    ),
    "output.low_efficiency": _Figure(
        "%", lambda d: 100 * _rated(d).efficiency, +1, 1.0, "efficiency ",
        lambda d: f"{_rated(d).efficiency:.0%}",
    ),
    "turns.cut_in": _Figure(
        "rpm", lambda d: abs(d.prediction.cut_in_rpm - d.spec.target.cut_in_rpm), -1, 1.0, "cut-in ",
        lambda d: f"{d.prediction.cut_in_rpm:.0f} rpm with {d.prediction.turns_per_coil} turns",
    ),
    "disc.hoop_stress": _Figure(
        "", lambda d: d.forces.hoop_safety_factor, +1, 0.05, "hoop safety factor ",
        lambda d: f"{d.forces.hoop_safety_factor:.1f}",
    ),
    "steel.stationary_loss": _Figure(
        "W", lambda d: _rated(d).steel_loss_w, -1, 1.0, "plate loss ",
        lambda d: f"{_rated(d).steel_loss_w:.0f} W",
    ),
    "disc.softening": _Figure(
        "K", lambda d: _rated(d).magnet_temperature_c - _softening_c(d.spec), -1, 1.0, "",
        lambda d: f"discs {_rated(d).magnet_temperature_c:.0f} °C, soften at {_softening_c(d.spec):g} °C",
    ),
    "coil.wire_eddy": _Figure(
        "W", lambda d: _rated(d).conductor_eddy_w, -1, 0.05, "wire eddy loss ",
        lambda d: f"{_rated(d).conductor_eddy_w:.1f} W",
    ),
    "disc.bending": _Figure(
        "mm", lambda d: d.forces.disc_deflection_mm or 0.0, -1, 0.005, "disc bends ",
        lambda d: f"{d.forces.disc_deflection_mm or 0.0:.2f} mm",
    ),
    "steel.saturation": _Figure(
        "T", lambda d: d.forces.steel_peak_b_t or 0.0, -1, 0.01, "steel ",
        lambda d: f"{d.forces.steel_peak_b_t or 0.0:.2f} T",
    ),
    "source.stall": _Figure(
        "m/s", lambda d: _stall_wind(d), +1, 0.5, "", lambda d: _stall_words(d),
    ),
    "converter.overvoltage": _Figure(
        "V", lambda d: _idle_bus_over(d), -1, 0.5, "", lambda d: _idle_bus_words(d),
    ),
    "converter.late_start": _Figure(
        "rpm", lambda d: d.prediction.cut_in_rpm, -1, 1.0, "converter starts at ",
        lambda d: f"{d.prediction.cut_in_rpm:.0f} rpm",
    ),
}  # fmt: skip


def _output_w(d: Design) -> float:
    """The rated output a change is weighed by: what reaches the load (out of a converter)."""
    rated = d.prediction.rated
    return rated.delivered_w if rated.delivered_w is not None else rated.dc_power_w


def _idle_bus_over(d: Design) -> float:
    """How far the idle bus at the highest speed passes the converter's limit, V."""
    return idle_bus_v(d.prediction, d.spec.target) - d.spec.target.max_input_v


def _idle_bus_words(d: Design) -> str:
    ta = d.spec.target
    return f"idle bus {idle_bus_v(d.prediction, ta):.0f} V at {ta.max_rpm:g} rpm, limit {ta.max_input_v:g} V"


NO_STALL_M_S = 26.0  # past the operating table's last wind: the blades never stall


def _stall_wind(d: Design) -> float:
    op = d.operating
    return NO_STALL_M_S if op is None or op.stall_wind_m_s is None else op.stall_wind_m_s


def _stall_words(d: Design) -> str:
    op = d.operating
    if op is None:
        return "no source"
    kwh = op.energy.get("annual_kwh", 0.0)
    where = "no stall" if op.stall_wind_m_s is None else f"stalls from {op.stall_wind_m_s:g} m/s"
    return f"{where}, {kwh:.0f} kWh a year"


def _up(x: float, factor: float, step: float = 1.0) -> float:
    """x × factor rounded up to a whole `step` (a size a builder can buy or cut)."""
    return float(math.ceil(x * factor / step - 1e-9) * step)


def _down(x: float, factor: float, step: float = 1.0) -> float:
    return float(max(step, math.floor(x * factor / step + 1e-9) * step))


def _more_copper(design: Design) -> Iterable[tuple[str, object]]:
    st, mg = design.spec.stator, design.spec.magnets
    yield "stator.thickness_mm", _up(st.thickness_mm, 1.25)
    yield "stator.thickness_mm", _up(st.thickness_mm, 1.5)
    for ff in (0.55, 0.6):  # hand-wound round wire fills 0.4–0.6 (common practice)
        if ff > st.fill_factor + 1e-9:
            yield "stator.fill_factor", ff
            break
    yield "magnets.thickness_mm", _up(mg.thickness_mm, 1.5)


def _rematch(design: Design) -> Iterable[tuple[str, object]]:
    """Where the alternator's load line meets the blades' power: a later cut-in lets the rotor
    gather speed before it is loaded, an earlier one loads it sooner but less steeply (the
    torque's slope above cut-in goes as 1/turns); which wins is the model's to say. The other
    connection changes the turns the same cut-in needs."""
    spec = design.spec
    ta = spec.target
    if ta.kind == "battery":
        yield from _higher_cut_in(design)
        yield "target.cut_in_rpm", _down(ta.cut_in_rpm, 0.85, 5.0)
    swap = {"star": "delta", "delta": "star"}.get(spec.connection.kind)
    if swap:
        yield "connection.kind", swap


def _higher_cut_in(design: Design) -> Iterable[tuple[str, object]]:
    ta = design.spec.target
    if ta.kind == "battery":
        for f in (1.2, 1.4):
            cut_in = _up(ta.cut_in_rpm, f, 5.0)
            if cut_in < 0.85 * ta.rated_rpm:  # charging must still start well below rated speed
                yield "target.cut_in_rpm", cut_in


def _lower_bus(design: Design) -> Iterable[tuple[str, object]]:
    """Less voltage at the top speed: the turns the tool would size (coils as built had more),
    the other connection, or a converter rated for the bus (a different part, the same
    machine)."""
    spec, pr = design.spec, design.prediction
    ta = spec.target
    if "turns_per_coil" in spec.coils_given:
        per_turn = pr.open_circuit_dc_peak_at_max_v / pr.turns_per_coil
        yield "coils.turns_per_coil", max(1, most_turns(ta, per_turn))
    if spec.connection.kind == "star":
        yield "connection.kind", "delta"
    yield "target.max_input_v", capacitor_rating_v(idle_bus_v(pr, ta))


def _wider_window(design: Design) -> Iterable[tuple[str, object]]:
    """A converter that starts lower: the turns sized for the top speed then start it sooner."""
    ta = design.spec.target
    for f in (0.7, 0.5):
        yield "target.min_input_v", _down(ta.min_input_v, f)


def _finer_turns(design: Design) -> Iterable[tuple[str, object]]:
    spec, lay = design.spec, design.layout
    for a in lay.allowed_parallel_paths:
        if a != spec.connection.parallel_paths:
            yield "connection.parallel_paths", a
    swap = {"star": "delta", "delta": "star"}.get(spec.connection.kind)
    if swap:
        yield "connection.kind", swap
    yield "magnets.thickness_mm", _down(spec.magnets.thickness_mm, 0.75)


def _cooler_grades(design: Design) -> Iterable[tuple[str, object]]:
    grade = design.spec.magnets.grade
    if not grade or design.spec.magnets.max_temperature_c or grade not in MAGNET_GRADES:
        return
    base = grade.rstrip("MHSUE")
    limit = MAGNET_GRADES[grade].max_temperature_c
    hotter = sorted(
        (g for g in MAGNET_GRADES.values() if g.name.rstrip("MHSUE") == base and g.max_temperature_c > limit),
        key=lambda g: g.max_temperature_c,
    )
    for g in hotter[:2]:
        yield "magnets.grade", g.name


def _stronger_disc(design: Design) -> Iterable[tuple[str, object]]:
    spec = design.spec
    ro = spec.rotor
    mat = DISC_MATERIALS[ro.disc_material]
    for m in sorted(DISC_MATERIALS.values(), key=lambda m: -m.strength_mpa / m.density_g_cm3):
        if m.strength_mpa / m.density_g_cm3 > mat.strength_mpa / mat.density_g_cm3 and not m.printed:
            yield "rotor.disc_material", m.name
            break
    yield "rotor.disc_thickness_mm", _up(ro.disc_thickness_mm, 1.5)
    yield "target.max_rpm", _down(spec.target.max_rpm, 0.8, 10.0)


def _thicker_steel(design: Design) -> Iterable[tuple[str, object]]:
    f = design.forces
    if f.steel_needed_mm is None:
        return
    key = {"rotor disc": "rotor.disc_thickness_mm", STEEL_DISC_NAME: "rotor.steel_disc_thickness_mm"}.get(
        f.steel_plate, "rotor.stator_plate_thickness_mm"
    )
    yield key, _up(f.steel_needed_mm, 1.0)
    yield key, _up(f.steel_needed_mm, 1.0) + 2.0


def _no_standing_steel(design: Design) -> Iterable[tuple[str, object]]:
    """Steel that turns with the magnets, or none, in place of the stationary plate."""
    ro = design.spec.rotor
    if ro.topology == "one_disc_steel_stator":
        note = "the same magnets; a plain steel disc on the shaft in place of the plate"
        plate = (
            ("rotor.stator_plate_thickness_mm", None),
            ("rotor.steel_disc_thickness_mm", ro.stator_plate_thickness_mm),
        )
        yield "rotor.topology", "one_disc_steel_disc", plate, note
        note = f"a second disc of {design.spec.magnets.count} magnets in place of the plate"
        yield "rotor.topology", "two_discs", (("rotor.stator_plate_thickness_mm", None),), note
    yield "stator.thickness_mm", _up(design.spec.stator.thickness_mm, 1.25)


def _stiffer_disc(design: Design) -> Iterable[tuple[str, object]]:
    """Bending goes as 1/(E t³): a thicker disc, or a stiffer material than the design's."""
    ro = design.spec.rotor
    yield "rotor.disc_thickness_mm", _up(ro.disc_thickness_mm, 1.5)
    yield "rotor.disc_thickness_mm", _up(ro.disc_thickness_mm, 2.0)
    now = DISC_MATERIALS[ro.disc_material].modulus_gpa
    stiffer = [m for m in DISC_MATERIALS.values() if m.modulus_gpa > now and not m.magnetic]
    if stiffer:
        yield "rotor.disc_material", max(stiffer, key=lambda m: m.modulus_gpa).name


def _thinner_strands(design: Design) -> Iterable[tuple[str, object]]:
    """The eddy loss of a round wire goes as d⁴ per strand: strands of half or two thirds."""
    d = design.prediction.wire.diameter_mm
    for f in (0.5, 0.7):
        if d * f >= 0.2:
            yield "stator.max_wire_diameter_mm", round(d * f, 2)


CANDIDATES: dict[str, tuple[Callable[[Design], Iterable[tuple[str, object]]], ...]] = {
    "coil.current_density": (_more_copper, _higher_cut_in),
    "coil.temperature": (_more_copper, _higher_cut_in),
    "magnet.temperature": (_cooler_grades, _more_copper),
    "output.low_efficiency": (_higher_cut_in, _more_copper),
    "turns.cut_in": (_finer_turns,),
    "disc.hoop_stress": (_stronger_disc,),
    "steel.saturation": (_thicker_steel,),
    "steel.stationary_loss": (_no_standing_steel,),
    "disc.softening": (_stronger_disc, _more_copper),
    "coil.wire_eddy": (_thinner_strands,),
    "disc.bending": (_stiffer_disc,),
    "source.stall": (_rematch,),
    "converter.overvoltage": (_lower_bus,),
    "converter.late_start": (_wider_window,),
}


def advised_codes(design: Design) -> tuple[str, ...]:
    """Codes of the design's warnings that have changes to try."""
    return tuple(w.code for w in design.warnings if w.code in CANDIDATES)


def _current_value(spec: Spec, dotted: str) -> object:
    section, key = dotted.split(".")
    return getattr(getattr(spec, section), key)


def suggest(
    design: Design,
    accept: Callable[[Design], None] | None = None,
    progress: Callable[[str], None] | None = None,
) -> tuple[Suggestion, ...]:
    """The changes that help each warning of `design`, at most MAX_SUGGESTIONS per warning.

    `accept(design)` may raise DesignError to refuse a changed design (the fit checks of
    fab/, which layout/ cannot import); `progress(text)` hears of each re-run. A candidate
    used by several warnings is computed once.
    """
    spec = design.spec
    if design.given_max_rpm is not None:  # re-run each change on the file's own figures
        spec = with_values(spec, (("target.max_rpm", design.given_max_rpm),))
    tried: dict[tuple, Design | None] = {}
    out: list[Suggestion] = []
    before_codes = {w.code for w in design.warnings}
    for code in advised_codes(design):
        fig = FIGURES[code]
        now = fig.value(design)
        found = []
        for make in CANDIDATES[code]:
            for key, to, *rest in make(design):
                also, note = (tuple(rest) + ((), ""))[:2] if rest else ((), "")
                was = _current_value(spec, key)
                if to == was:
                    continue
                change = ((key, to), *also)
                if change not in tried:
                    if progress:
                        progress(f"{key} = {_show(to)}")
                    tried[change] = _rerun(spec, change, accept)
                new = tried[change]
                if new is None or any(s.key == key and s.to == to for s in found):
                    continue
                value = fig.value(new)
                gain = (value - now) * fig.better
                if not math.isfinite(value) or gain <= fig.resolution or fig.show(new) == fig.show(design):
                    continue
                p_now, p_new = _output_w(design), _output_w(new)
                if p_new < (1 - MAX_OUTPUT_LOSS) * p_now:
                    continue
                codes = {w.code for w in new.warnings if w.severity != "info"}
                found.append(
                    Suggestion(
                        code=code,
                        key=key,
                        was=was,
                        to=to,
                        also=also,
                        note=note,
                        value=value,
                        now=now,
                        unit=fig.unit,
                        result=fig.label + fig.show(new),
                        before=fig.show(design),
                        rated_power_w=p_new,
                        rated_power_now_w=p_now,
                        rated_rpm=new.prediction.rated.rpm,
                        clears=code not in codes,
                        brings=tuple(sorted(codes - before_codes)),
                    )
                )
        found = [s for s in found if not any(_dominates(o, s, fig.better) for o in found)]
        found.sort(key=lambda s: (not s.clears, bool(s.brings), -(s.value - s.now) * fig.better))
        out.extend(found[:MAX_SUGGESTIONS])
    return tuple(out)


def _dominates(a: Suggestion, b: Suggestion, better: int) -> bool:
    """`a`, another value of the same key, does at least as well as `b` on the flagged figure
    and the rated output, better on one, clears the warning if `b` does and raises no more:
    `b` need not be shown. Changes of different keys are different remedies (a rewind, another
    converter) and are all shown."""
    if a.key != b.key or a.also != b.also:
        return False
    figure = (a.value - b.value) * better
    power = a.rated_power_w - b.rated_power_w
    return (
        figure >= 0
        and power >= 0
        and (figure > 0 or power > 0)
        and (a.clears or not b.clears)
        and set(a.brings) <= set(b.brings)
    )


def _rerun(spec: Spec, change, accept) -> Design | None:
    """The whole model on the changed design; None where the change is not allowed or fails."""
    try:
        new = compute_design(with_values(spec, change))
        if accept is not None:
            accept(new)
    except DesignError:
        return None
    return new


def with_suggestions(design: Design, accept=None, progress=None) -> Design:
    """The design carrying its checked suggestions (writers show them where present)."""
    return dataclasses.replace(design, suggestions=suggest(design, accept, progress))
