"""What turns the shaft: blades in the wind, a water turbine, or a person on cranks.

Each source gives the shaft power it delivers at a given alternator speed under one
condition (a wind speed, a flow, an effort). `layout.operating` finds where that meets the
alternator's demand. Speeds in rpm at the alternator (the drive ratio applied here), power
in W, SI inside.

- Wind: P = ½ρAv³·Cp(λ), λ = ωR/v. Without a curve of its own, Cp(λ) is the generic curve
  of Heier (Grid Integration of Wind Energy Conversion Systems, 1998) with the coefficients
  of Slootweg et al. (IEEE Trans. Power Systems 18(1), 2003) at zero pitch,
  Cp = 0.5176(116/λi − 5)e^(−21/λi) + 0.0068λ with 1/λi = 1/λ − 0.035,
  stretched so that its peak falls at `design_tsr` and scaled to `peak_cp`.
- Water: torque falls linearly with speed from stall to runaway, so power peaks at half the
  runaway speed. The best-efficiency speed is set by the runner's speed ratio (below) and
  the power there by η·ρ·g·Q·H.
- Pedal and crank: a linear torque–cadence line, as measured in cycling (Dorel et al., Int.
  J. Sports Med. 26, 2005: torque falls linearly and power is parabolic in cadence), with its
  peak placed at the comfortable cadence (common practice).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from layout.spec import SourceSpec

G = 9.81  # m/s²
WATER_DENSITY = 1000.0  # kg/m³
HOURS_PER_YEAR = 8760.0
WIND_SPEEDS_M_S = np.arange(1.0, 26.0)  # the operating table's rows, 1 to 25 m/s
STORM_WIND_M_S = 25.0  # the runaway wind for a rotor that neither furls nor is braked

# Nozzle velocity coefficient: the jet leaves at Cv·√(2gH) (0.97–0.99, from memory).
NOZZLE_CV = 0.97
# Runner peripheral speed over the speed the runner is rated on, at best efficiency:
# - Pelton and Turgo: u/v_jet ≈ 0.46 in practice, 0.5 in ideal theory (Dixon & Hall, Fluid
#   Mechanics and Thermodynamics of Turbomachinery, 7th ed. 2014, §10 on the Pelton wheel).
# - Crossflow: u/v1 = ½·cos α1 with α1 = 16° (Mockmore & Merryfield, Oregon State College
#   Bulletin 25, 1949) ≈ 0.48.
# - Propeller: peripheral velocity coefficient u/√(2gH) ≈ 1.6 (from memory: 1.4–2.0).
SPEED_RATIO = {"pelton": 0.46, "turgo": 0.46, "crossflow": 0.5 * math.cos(math.radians(16)), "propeller": 1.6}
# Whole-turbine efficiency of small home- or workshop-built units (common practice).
TURBINE_EFFICIENCY = {"pelton": 0.75, "turgo": 0.7, "crossflow": 0.65, "propeller": 0.65}
FLOW_STEPS = (0.25, 0.5, 0.75, 1.0)  # of the stated flow: a spear valve or a dry season
EFFORT_STEPS = (0.25, 0.5, 0.75, 1.0)  # of the sustained power
# A chain or belt between source and alternator (common practice: 0.95–0.98 per stage).
DRIVE_EFFICIENCY = 0.95

# Heier's generic curve (zero pitch), see the module docstring.
_HEIER = (0.5176, 116.0, 5.0, 21.0, 0.0068, 0.035)


def _heier_cp(tsr: np.ndarray) -> np.ndarray:
    c1, c2, c3, c4, c5, c6 = _HEIER
    lam = np.maximum(np.asarray(tsr, dtype=float), 1e-6)
    inv = 1 / lam - c6
    # Past λ = 1/0.035 the formula's exponential would blow up: continue it at 1/λi → 0+,
    # where it is already well below zero (the rotor is being driven).
    inv = np.maximum(inv, 0.0)
    return c1 * (c2 * inv - c3) * np.exp(-c4 * inv) + c5 * lam


def _heier_peak() -> tuple[float, float]:
    lam = np.linspace(2, 14, 24001)
    cp = _heier_cp(lam)
    k = int(np.argmax(cp))
    return float(lam[k]), float(cp[k])


HEIER_PEAK_TSR, HEIER_PEAK_CP = _heier_peak()  # about 8.1 and 0.48


@dataclass(frozen=True)
class Source:
    """A resolved source: every default filled in, the figures a reader is shown."""

    spec: SourceSpec
    drive_efficiency: float
    turbine_efficiency: float | None = None  # water
    best_rpm: float | None = None  # water, pedal: the source's best speed at the alternator
    runaway_rpm: float = 0.0  # unloaded alternator speed at the worst condition it meets
    runaway_condition: str = ""  # when it runs away, for a reader: "at 11 m/s (the furling wind)"

    @property
    def kind(self) -> str:
        return self.spec.kind

    @property
    def condition_key(self) -> str:
        """The JSON key of an operating row's condition."""
        return {"wind": "wind_m_s", "water": "flow_l_s"}.get(self.kind, "effort_w")

    @property
    def condition_unit(self) -> str:
        """The unit of a condition, for a reader: "m/s", "l/s" or "W effort"."""
        return {"wind": "m/s", "water": "l/s"}.get(self.kind, "W effort")

    def conditions(self) -> np.ndarray:
        """The operating table's rows: wind speeds, flows (l/s) or efforts (W)."""
        so = self.spec
        if self.kind == "wind":
            return WIND_SPEEDS_M_S
        if self.kind == "water":
            return so.flow_l_s * np.array(FLOW_STEPS)
        steps = [so.sustained_power_w * f for f in EFFORT_STEPS]
        if so.peak_power_w is not None and so.peak_power_w > so.sustained_power_w:
            steps.append(so.peak_power_w)
        return np.array(steps)

    def cp(self, tsr) -> np.ndarray:
        """Power coefficient at tip-speed ratio `tsr` (wind only)."""
        so = self.spec
        tsr = np.asarray(tsr, dtype=float)
        if so.cp_curve is not None:
            x = np.array([p[0] for p in so.cp_curve])
            y = np.array([p[1] for p in so.cp_curve])
            # Past the last point the curve falls on to Cp = 0 at 1.3× its tip-speed ratio
            # when it has not reached zero by then (an assumption, stated).
            if y[-1] > 0:
                x, y = np.append(x, x[-1] * 1.3), np.append(y, 0.0)
            return np.interp(tsr, x, y, left=0.0, right=min(y[-1], 0.0))
        return so.peak_cp * _heier_cp(tsr * HEIER_PEAK_TSR / so.design_tsr) / HEIER_PEAK_CP

    def tsr(self, rpm, wind_m_s) -> np.ndarray:
        """Tip-speed ratio of the blades with the alternator at `rpm`."""
        so = self.spec
        omega = np.asarray(rpm, dtype=float) / so.drive_ratio * 2 * math.pi / 60
        return omega * so.rotor_diameter_m / 2 / np.maximum(wind_m_s, 1e-9)

    def power_w(self, rpm, condition: float) -> np.ndarray:
        """Shaft power (W) the source delivers to the alternator turning at `rpm` (after the
        drive), under `condition`; negative where the source would have to be driven."""
        so = self.spec
        rpm = np.asarray(rpm, dtype=float)
        if self.kind == "wind":
            area = math.pi * so.rotor_diameter_m**2 / 4
            wind = self.furled_wind(condition)
            p = 0.5 * so.air_density_kg_m3 * area * wind**3 * self.cp(self.tsr(rpm, wind))
        else:
            # linear torque line: P = 4·P_best·x(1 − x), x = n / n_runaway, peak at x = ½
            best = self.peak_power_at(condition)
            x = rpm / (2 * self.best_rpm)
            p = 4 * best * x * (1 - x)
        return p * self.drive_efficiency

    def furled_wind(self, wind_m_s: float) -> float:
        """The wind the rotor sees: above `furl_wind_m_s` it is taken as furled and holding the
        furl wind's power (tail furling roughly does; common practice)."""
        furl = self.spec.furl_wind_m_s
        return min(wind_m_s, furl) if furl is not None else wind_m_s

    def peak_power_at(self, condition: float) -> float:
        """Water and people: the source's best shaft power under `condition` (before the drive)."""
        so = self.spec
        if self.kind == "water":
            return self.turbine_efficiency * WATER_DENSITY * G * condition / 1000 * so.head_m
        return condition

    def available_w(self, condition: float) -> float:
        """The power in the flow (wind: ½ρAv³; water: ρgQH) or the person's effort, W."""
        so = self.spec
        if self.kind == "wind":
            return 0.5 * so.air_density_kg_m3 * math.pi * so.rotor_diameter_m**2 / 4 * condition**3
        if self.kind == "water":
            return WATER_DENSITY * G * condition / 1000 * so.head_m
        return condition


def runaway_tsr(src: Source) -> float:
    """The tip-speed ratio where Cp falls back to zero above its peak: the unloaded rotor."""
    lam = np.linspace(0.05, 40, 8000)
    cp = src.cp(lam)
    k = int(np.argmax(cp))
    after = np.flatnonzero(cp[k:] <= 0)
    if len(after) == 0:
        return float(lam[-1])
    j = k + int(after[0])
    return float(np.interp(0.0, [cp[j], cp[j - 1]], [lam[j], lam[j - 1]]))


def resolve(so: SourceSpec) -> Source:
    """Fill in the defaults and the speeds that follow from the source's keys."""
    drive = so.drive_efficiency
    if drive is None:
        drive = 1.0 if so.drive_ratio == 1 else DRIVE_EFFICIENCY
    if so.kind == "wind":
        src = Source(so, drive)
        storm = so.furl_wind_m_s if so.furl_wind_m_s is not None else STORM_WIND_M_S
        omega = runaway_tsr(src) * storm / (so.rotor_diameter_m / 2)
        words = f"at {storm:g} m/s" + (" (the furling wind)" if so.furl_wind_m_s else " (a storm)")
        rpm = omega * 60 / (2 * math.pi) * so.drive_ratio
        return Source(so, drive, runaway_rpm=rpm, runaway_condition=words)
    if so.kind == "water":
        eta = so.turbine_efficiency or TURBINE_EFFICIENCY[so.turbine]
        if so.turbine == "propeller":
            u = SPEED_RATIO["propeller"] * math.sqrt(2 * G * so.head_m)
        else:
            u = SPEED_RATIO[so.turbine] * NOZZLE_CV * math.sqrt(2 * G * so.head_m)
        best = u / (math.pi * so.runner_diameter_mm / 1000) * 60 * so.drive_ratio
        return Source(so, drive, eta, best, 2 * best, "at the turbine's runaway speed")
    best = so.cadence_rpm * so.drive_ratio
    who = "spun as fast as the rider can" if so.kind == "pedal" else "cranked as fast as the person can"
    return Source(so, drive, None, best, 2 * best, who)


def weibull_scale(mean_m_s: float, k: float) -> float:
    """Weibull scale c from the mean wind: mean = c·Γ(1 + 1/k) (Manwell, McGowan & Rogers,
    Wind Energy Explained, 2nd ed. 2009, §2.4.3)."""
    return mean_m_s / math.gamma(1 + 1 / k)


def weibull_cdf(v, c: float, k: float) -> np.ndarray:
    """Share of the time the wind is below v: F(v) = 1 − exp(−(v/c)^k)."""
    return 1 - np.exp(-((np.asarray(v, dtype=float) / c) ** k))


def annual_energy_kwh(wind_m_s, power_w, mean_m_s: float, k: float) -> float:
    """Annual energy by the method of bins (IEC 61400-12-1:2017, §9.3):
    AEP = N_h Σ [F(V_i) − F(V_{i−1})]·(P_{i−1} + P_i)/2, from V_0 = 0 with P_0 = 0 and no
    output above the last bin; N_h = 8760 h."""
    v = np.concatenate([[0.0], np.asarray(wind_m_s, dtype=float)])
    p = np.concatenate([[0.0], np.asarray(power_w, dtype=float)])
    f = weibull_cdf(v, weibull_scale(mean_m_s, k), k)
    return float(HOURS_PER_YEAR * np.sum(np.diff(f) * (p[1:] + p[:-1]) / 2) / 1000)


# IEC 60028 annealed copper at 20 °C: 1/58 Ω·mm²/m.
COPPER_OHM_MM2_PER_M = 1 / 58


def cable_resistance_ohm(so: SourceSpec | None) -> float:
    """Loop resistance (Ω, 20 °C) of the DC cable from the rectifier to the battery: two
    conductors of `cable_length_m` each; 0 without a cable."""
    if so is None or so.cable_length_m <= 0:
        return 0.0
    return 2 * so.cable_length_m * COPPER_OHM_MM2_PER_M / so.cable_area_mm2
