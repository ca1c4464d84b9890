"""Magnet wire: standard sizes, choosing a size for a winding window, resistance, inductance."""

from __future__ import annotations

import math
from dataclasses import dataclass

from layout.materials import COPPER_RESISTIVITY_20C_OHM_MM2_PER_M, COPPER_TEMP_COEFF_PER_K


def awg_diameter_mm(gauge: int) -> float:
    """ASTM B258: d = 0.127 mm · 92^((36 − n)/39)."""
    return 0.127 * 92.0 ** ((36 - gauge) / 39)


AWG_SIZES = tuple((f"AWG {n}", awg_diameter_mm(n)) for n in range(40, 7, -1))

# Nominal bare diameters of enamelled round copper wire, IEC 60317-0-1 (R20 with R40
# intermediate steps), 0.20–3.15 mm (from memory).
METRIC_DIAMETERS_MM = (
    0.20, 0.224, 0.25, 0.28, 0.315, 0.355, 0.40, 0.45, 0.50, 0.56, 0.63, 0.71, 0.75, 0.80,
    0.85, 0.90, 0.95, 1.00, 1.06, 1.12, 1.18, 1.25, 1.32, 1.40, 1.50, 1.60, 1.70, 1.80, 1.90,
    2.00, 2.12, 2.24, 2.36, 2.50, 2.65, 2.80, 3.00, 3.15,
)  # fmt: skip
METRIC_SIZES = tuple((f"{d:.2f} mm", d) for d in METRIC_DIAMETERS_MM)


@dataclass(frozen=True)
class Wire:
    name: str  # "AWG 18" or "1.00 mm"
    diameter_mm: float  # bare copper
    strands: int  # wound together in hand, as one turn

    @property
    def copper_mm2(self) -> float:
        """Copper cross-section of one turn (mm²), every strand counted."""
        return self.strands * math.pi * self.diameter_mm**2 / 4


ENAMEL_DIAMETER_FACTOR = 1.1  # enamel adds about a tenth to the bare diameter (from memory)


def bundle_diameter_mm(wire: Wire) -> float:
    """Outside diameter (mm) of the strands of one turn laid together, enamel included.

    Round strands packed in a bundle take about √strands times one strand's diameter
    (common practice); the enamel adds `ENAMEL_DIAMETER_FACTOR` (IEC 60317-0-1 grade 1/2 adds
    0.04–0.08 mm to a 1 mm wire, from memory).
    """
    return wire.diameter_mm * ENAMEL_DIAMETER_FACTOR * math.sqrt(wire.strands)


def choose_wire(copper_mm2_per_turn: float, standard: str, max_diameter_mm: float) -> Wire | None:
    """The largest standard wire whose copper fits, with strands in hand if it would be stiff.

    One wire if the largest fitting size is no thicker than `max_diameter_mm`; otherwise
    the fewest strands of one size, at most `max_diameter_mm`, that together still fit.
    None when even one strand of the finest size is too big (too many turns).
    """
    sizes = sorted(AWG_SIZES if standard == "awg" else METRIC_SIZES, key=lambda s: s[1])
    slack = 1 + 1e-9

    def area(d: float) -> float:
        return math.pi * d * d / 4

    def largest(limit_mm2: float, cap_mm: float):
        fits = [s for s in sizes if area(s[1]) <= limit_mm2 * slack and s[1] <= cap_mm + 1e-9]
        return fits[-1] if fits else None

    one = largest(copper_mm2_per_turn, math.inf)
    if one is None:
        return None
    if one[1] <= max_diameter_mm + 1e-9:
        return Wire(one[0], one[1], 1)
    cap = largest(math.inf, max_diameter_mm)
    if cap is None:
        return None
    strands = max(2, math.floor(copper_mm2_per_turn * slack / area(cap[1])))
    while strands > 1:
        pick = largest(copper_mm2_per_turn / strands, max_diameter_mm)
        if pick is not None:
            return Wire(pick[0], pick[1], strands)
        strands += 1
    return None


def copper_resistivity(temperature_c: float) -> float:
    """Ω·mm²/m of annealed copper at a temperature, IEC 60028 (ρ20 = 1/58, α20 = 0.00393/K)."""
    return COPPER_RESISTIVITY_20C_OHM_MM2_PER_M * (1 + COPPER_TEMP_COEFF_PER_K * (temperature_c - 20))


def coil_resistance_ohm(turns: int, mean_turn_mm: float, wire: Wire, temperature_c: float = 20.0) -> float:
    """DC resistance (Ω) of a coil: ρ(T)·N·l_mean/A, mean turn in mm, IEC 60028 copper."""
    return copper_resistivity(temperature_c) * turns * mean_turn_mm / 1000 / wire.copper_mm2


def wheeler_inductance_h(turns: int, mean_radius_mm: float, length_mm: float, depth_mm: float) -> float:
    """Multilayer air-core coil, Wheeler, Proc. IRE 16(10), 1928.

    L[µH] = 0.8·a²·N² / (6a + 9b + 10c), a mean radius, b axial length, c radial depth,
    all in inches. About ±20 % for a flat trapezoidal coil taken as the circle of equal
    mean turn length, and it ignores coupling to neighbouring coils and to steel.
    """
    inch = 25.4
    a, b, c = mean_radius_mm / inch, length_mm / inch, depth_mm / inch
    return 0.8 * a * a * turns * turns / (6 * a + 9 * b + 10 * c) * 1e-6
