"""What to buy: wire, magnets and binder for one machine, with the margins of the trade.

Quantities only; prices and suppliers are the builder's. Every figure is derived from the
Design's own numbers (copper of the sized winding, the stator ring as resolved).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from layout.geometry import Geometry
from layout.materials import BINDER_DENSITY_G_CM3, COPPER_DENSITY_G_CM3
from layout.model import Prediction
from layout.spec import Spec

WIRE_MARGIN_PCT = 10  # leads, the first turns on the jig, a spoilt coil (common practice)
RESIN_MARGIN_PCT = 15  # lugs, mixing cups, what stays in the mould's gaps (common practice)


@dataclass(frozen=True)
class Bill:
    wire_length_per_phase_m: float  # with WIRE_MARGIN_PCT
    wire_mass_per_phase_kg: float  # with WIRE_MARGIN_PCT
    binder_volume_cm3: float  # with RESIN_MARGIN_PCT
    binder_mass_g: float | None  # None where the binder's density is not known


def binder_volume_cm3(spec: Spec, geo: Geometry, copper_mass_kg: float) -> float:
    """About how much binder the stator takes (cm³), with RESIN_MARGIN_PCT for lugs and waste.

    The cast ring from the coils' inner edge less the resin rim to their outer edge plus it,
    the stator's thickness, less the copper's volume (IEC 60028 density).
    """
    st, coil = spec.stator, geo.coil
    r_in = max(coil.r_min_mm - st.resin_rim_mm, 0.0)
    r_out = coil.r_max_mm + st.resin_rim_mm
    ring_cm3 = math.pi * (r_out**2 - r_in**2) * st.thickness_mm / 1000
    copper_cm3 = copper_mass_kg * 1000 / COPPER_DENSITY_G_CM3
    return (ring_cm3 - copper_cm3) * (1 + RESIN_MARGIN_PCT / 100)


def materials_bill(spec: Spec, geo: Geometry, pred: Prediction, phases: int) -> Bill:
    """Wire per phase (m, kg) and binder (cm³, g) to buy for one machine."""
    k = 1 + WIRE_MARGIN_PCT / 100
    vol = binder_volume_cm3(spec, geo, pred.copper_mass_kg)
    density = BINDER_DENSITY_G_CM3.get(spec.stator.binder)
    return Bill(
        wire_length_per_phase_m=pred.wire_length_per_phase_m * k,
        wire_mass_per_phase_kg=pred.copper_mass_kg / phases * k,
        binder_volume_cm3=vol,
        binder_mass_g=vol * density if density else None,
    )
