"""Where the machine actually runs: the source's power meets the alternator's demand.

At a steady speed the shaft power the source delivers equals what the alternator takes
(its output plus every loss: copper, bridge, cable, steel, the wire's eddies, bearings and
windage). Started from rest, the shaft speeds up while the source gives more than the
alternator takes, so it settles at the lowest speed where the surplus turns to a deficit
(the stable crossing). Found on a grid from standstill to runaway, then refined by the
secant rule on the full model until the two powers agree to `BALANCE_REL`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from layout import converter as conv
from layout.materials import STATOR_BINDERS_MAX_C
from layout.model import OperatingPoint
from layout.safety import Warning
from layout.source import Source, annual_energy_kwh, cable_resistance_ohm

GRID_POINTS = 36
LOW_POINTS = 4  # grid points below the curve's first speed
BALANCE_REL = 0.01  # the two powers agree within 1 % of the source's at each steady point
BALANCE_FLOOR_W = 0.2  # or within 0.2 W, near standstill
REFINE_REL = 0.005  # the refining steps aim closer, as their coil temperature is interpolated
REFINE_STEPS = 8
# The blades count as stalled by the alternator where it holds them below this share of the
# tip-speed ratio of peak Cp (our choice: about 70 % of peak Cp remains there).
STALL_TSR_SHARE = 0.7


@dataclass(frozen=True)
class OperatingRow:
    condition: float  # wind m/s, flow l/s, or the person's effort in W
    rpm: float  # alternator
    tsr: float | None  # wind only
    cp: float | None  # wind only
    available_w: float  # in the wind or the water (ρgQH), or the person's effort
    source_power_w: float  # shaft power into the alternator at the steady speed
    output_power_w: float  # the alternator's output (DC after the bridge, or AC)
    load_power_w: float  # at the battery, after the cable; or out of the converter
    efficiency: float  # output over shaft input
    stalled: bool
    point: OperatingPoint | None  # the alternator's state there; None when it does not turn


@dataclass(frozen=True)
class Operating:
    source: Source
    rows: tuple[OperatingRow, ...]
    runaway_rpm: float
    cut_in_condition: float | None  # the first row with output
    stall_wind_m_s: float | None  # the first wind the alternator stalls the blades in
    energy: dict  # {annual_kwh, capacity_factor} (wind), {kwh_per_day} (water), {wh_per_hour}

    @property
    def peak_tsr(self) -> float | None:
        if self.source.kind != "wind":
            return None
        lam = np.linspace(0.1, 20, 4000)
        return float(lam[int(np.argmax(self.source.cp(lam)))])


def _steady(src: Source, condition: float, rpms: np.ndarray, shaft_w: np.ndarray) -> tuple[float, int]:
    """The stable crossing on the grid: (rpm estimate, index of the bracket's upper end), or
    (0, 0) where the source cannot turn the alternator at all."""
    surplus = src.power_w(rpms, condition) - shaft_w
    deficit = np.flatnonzero(surplus <= 0)
    if len(deficit) == 0:
        return float(rpms[-1]), len(rpms) - 1
    j = int(deficit[0])
    if j == 0:
        return 0.0, 0
    a, b = surplus[j - 1], surplus[j]
    return float(rpms[j - 1] + (rpms[j] - rpms[j - 1]) * a / (a - b)), j


def operating_points(
    src: Source, evaluate, curve: tuple[OperatingPoint, ...] = (), grid_temps=None
) -> Operating:
    """Every condition's steady point. `evaluate(rpms, temps_c=None)` returns the alternator's
    OperatingPoints at those speeds, with the coils at their steady temperature or at
    `temps_c` (model.curve_at with the machine's arguments). `curve`: points already solved
    (the plan's curve), used as the search grid where they reach the runaway speed.
    `grid_temps(rpms)`: coil temperatures to search the grid with instead of solving them
    (the found points are solved as always)."""
    top = max(src.runaway_rpm, 1.0) * 1.02
    if curve and curve[-1].rpm >= src.runaway_rpm:
        # below the curve's first speed the coils are as cool as there
        low = np.linspace(curve[0].rpm / LOW_POINTS, curve[0].rpm, LOW_POINTS, endpoint=False)
        ops = [*evaluate(low, np.full(LOW_POINTS, curve[0].coil_temperature_c)), *curve]
        grid = np.array([op.rpm for op in ops])
    else:
        grid = np.linspace(top / GRID_POINTS, top, GRID_POINTS)
        ops = evaluate(grid) if grid_temps is None else evaluate(grid, grid_temps(grid))
    shaft = np.array([op.shaft_power_w for op in ops])
    conditions = src.conditions()
    n = len(conditions)
    rpm, lo, hi = np.zeros(n), np.zeros(n), np.zeros(n)
    f_lo, f_hi = np.zeros(n), np.zeros(n)
    for k, c in enumerate(conditions):
        rpm[k], j = _steady(src, c, grid, shaft)
        surplus = src.power_w(grid, c) - shaft
        if j > 0:
            lo[k], hi[k], f_lo[k], f_hi[k] = grid[j - 1], grid[j], surplus[j - 1], surplus[j]
    # Between grid points the coils' temperature is interpolated from the grid's steady ones,
    # so each refining step is one circuit run; the found speeds are then evaluated once more
    # with the temperature solved there, and that is what is reported.
    grid_temps = np.array([op.coil_temperature_c for op in ops])
    todo = np.flatnonzero(rpm > 0)
    for _ in range(REFINE_STEPS):
        if len(todo) == 0:
            break
        got = evaluate(rpm[todo], np.interp(rpm[todo], grid, grid_temps))
        left = []
        for k, op in zip(todo, got, strict=True):
            give = float(src.power_w(op.rpm, conditions[k]))
            gap = give - op.shaft_power_w
            if abs(gap) <= max(REFINE_REL * abs(give), BALANCE_FLOOR_W / 4):
                continue
            left.append(k)
            # false position with the Illinois rule: the end that stays has its value halved
            if gap > 0:
                lo[k], f_lo[k] = op.rpm, gap
                f_hi[k] *= 0.5
            else:
                hi[k], f_hi[k] = op.rpm, gap
                f_lo[k] *= 0.5
            rpm[k] = lo[k] + (hi[k] - lo[k]) * f_lo[k] / (f_lo[k] - f_hi[k])
        todo = np.array(left, dtype=int)
    points: list[OperatingPoint | None] = [None] * n
    turning = np.flatnonzero(rpm > 0)
    if len(turning):
        for k, op in zip(turning, evaluate(rpm[turning]), strict=True):
            points[k] = op
    return _operating(src, tuple(_row(src, c, points[k]) for k, c in enumerate(conditions)))


def converter_points(
    src: Source, evaluate, target, top_bus_v: float, curve: tuple[OperatingPoint, ...] = ()
) -> Operating:
    """Every condition's steady point with a converter on the bus (layout.converter). Held at
    one level the bus is a constant-voltage sink and the shaft settles as with a battery, so
    each level the converter may hold is solved as above (`evaluate(rpms, temps_c, bus_v)`)
    and at each condition the converter's pick is taken: its best output (mppt) or input_v
    (fixed), or at its current limit the highest level still reaching it. `top_bus_v`: the
    open-circuit bus at the runaway speed, above which no level draws anything. `curve`: the
    plan's, whose coil temperatures each level's search grid takes (the found points are
    solved at their own), so a level costs one circuit run per grid point, not a thermal
    solve."""
    levels = conv.bus_levels(target, top_bus_v)[0]
    if target.tracking == "fixed":
        levels = levels[:1]  # input_v; the levels above only where the limit pushes the bus up

    warm = None
    if curve:
        rpm_c = np.array([op.rpm for op in curve])
        temp_c = np.array([op.coil_temperature_c for op in curve])

        def warm(rpms):
            return np.interp(rpms, rpm_c, temp_c)

    def run(v):
        return operating_points(
            src, lambda rpms, temps_c=None: evaluate(rpms, temps_c, bus_v=v), grid_temps=warm
        )

    limit = conv.limit_w(target)

    def capped(run_):
        return any(r.load_power_w >= limit * (1 - 1e-9) for r in run_.rows)

    runs = [run(v) for v in levels]
    if target.tracking == "fixed" and capped(runs[0]):
        # the limit pushes the bus up: the levels above, until one no longer reaches it
        levels = conv.bus_levels(target, top_bus_v, from_v=target.input_v)[0]
        for v in levels[1:]:
            runs.append(run(v))
            if not capped(runs[-1]):
                break
        levels = levels[: len(runs)]
    bus_w = np.array([[r.output_power_w for r in run_.rows] for run_ in runs]).T
    pick = conv.pick(target, np.tile(levels, (len(bus_w), 1)), bus_w)
    return _operating(src, tuple(runs[j].rows[k] for k, j in enumerate(pick)))


def _operating(src: Source, rows: tuple[OperatingRow, ...]) -> Operating:
    return Operating(
        source=src,
        rows=rows,
        runaway_rpm=src.runaway_rpm,
        cut_in_condition=next((r.condition for r in rows if r.output_power_w > 0.5), None),
        stall_wind_m_s=next((r.condition for r in rows if r.stalled), None),
        energy=_energy(src, rows),
    )


def _row(src: Source, condition: float, op: OperatingPoint | None) -> OperatingRow:
    wind = src.kind == "wind"
    if op is None:
        return OperatingRow(
            condition,
            0.0,
            0.0 if wind else None,
            0.0 if wind else None,
            src.available_w(condition),
            0.0,
            0.0,
            0.0,
            0.0,
            False,
            None,
        )
    tsr = cp = None
    stalled = False
    if wind:
        seen = src.furled_wind(condition)
        tsr = float(src.tsr(op.rpm, seen))
        cp = float(src.cp(tsr))
        lam = np.linspace(0.1, 20, 4000)
        peak = float(lam[int(np.argmax(src.cp(lam)))])
        stalled = tsr < STALL_TSR_SHARE * peak and op.dc_power_w > 0.5
    cable_w = op.dc_current_a**2 * cable_resistance_ohm(src.spec)
    return OperatingRow(
        condition=float(condition),
        rpm=op.rpm,
        tsr=tsr,
        cp=cp,
        available_w=src.available_w(condition),
        source_power_w=op.shaft_power_w,
        output_power_w=op.dc_power_w,
        load_power_w=op.delivered_w if op.delivered_w is not None else max(op.dc_power_w - cable_w, 0.0),
        efficiency=op.efficiency,
        stalled=stalled,
        point=op,
    )


def _energy(src: Source, rows: tuple[OperatingRow, ...]) -> dict:
    so = src.spec
    power = np.array([r.load_power_w for r in rows])
    if src.kind == "wind":
        kwh = annual_energy_kwh([r.condition for r in rows], power, so.mean_wind_m_s, so.weibull_k)
        top = float(power.max())
        # capacity factor against the most the machine delivers on this table (stated)
        return {"annual_kwh": kwh, "capacity_factor": kwh * 1000 / (8760 * top) if top > 0 else 0.0}
    if src.kind == "water":
        return {"kwh_per_day": float(power[list(src.conditions()).index(so.flow_l_s)]) * 24 / 1000}
    comfortable = list(src.conditions()).index(so.sustained_power_w)
    return {"wh_per_hour": float(power[comfortable])}


def source_warnings(
    operating: Operating | None, max_rpm: float, given_max_rpm: float | None, binder: str
) -> list[Warning]:
    """What the source does to the machine: a runaway above the file's max_rpm, blades the
    alternator stalls, coils the source's steady points overheat, a source that never makes
    it deliver."""
    if operating is None:
        return []
    out = []
    src = operating.source
    limit = STATOR_BINDERS_MAX_C[binder]
    hot = next(
        (r for r in operating.rows if r.point is not None and r.point.coil_temperature_c > limit), None
    )
    if hot is not None:
        unit = src.condition_unit
        out.append(
            Warning(
                "source.coil_heat",
                "warning",
                f"From {hot.condition:g} {unit} the source drives the coils to "
                f"{hot.point.temperature_words}, over the {limit:g} °C that {binder} takes, at "
                f"{hot.rpm:.0f} rpm and {hot.output_power_w:.0f} W: the energy figures count output "
                "the coils would not survive. Limit the current there (furl, brake or govern earlier) "
                "or size the coils for it.",
            )
        )
    if given_max_rpm is not None:
        out.append(
            Warning(
                "source.runaway",
                "warning",
                f"With no load, {src.runaway_condition}, the shaft runs away to "
                f"{operating.runaway_rpm:.0f} rpm, "
                f"above target.max_rpm = {given_max_rpm:g}: every check here (voltage, disc stress, "
                f"magnet retention, balance) is made at {max_rpm:g} rpm. A broken wire or a flat "
                "controller leaves the machine unloaded: furl, brake or govern the source below that, "
                "or design for it.",
            )
        )
    if operating.stall_wind_m_s is not None:
        row = next(r for r in operating.rows if r.stalled)
        out.append(
            Warning(
                "source.stall",
                "warning",
                f"From {row.condition:g} m/s the alternator holds the blades at a tip-speed ratio of "
                f"{row.tsr:.1f}, under {STALL_TSR_SHARE:.0%} of the {operating.peak_tsr:.1f} of their best "
                f"Cp: they stall, Cp falls to {row.cp:.2f} and the output lags the wind.",
            )
        )
    if operating.cut_in_condition is None:
        out.append(
            Warning(
                "source.no_output",
                "warning",
                "The source never turns the alternator fast enough to deliver anything in this table: "
                "lower the cut-in (target.cut_in_rpm) or raise source.drive_ratio.",
            )
        )
    return out
