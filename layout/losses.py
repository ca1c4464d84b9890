"""The losses besides copper, rectifier and steel: eddy currents in the wire, bearings, windage.

Eddy loss in round conductors. A round wire of diameter d, thin against its skin depth, in
a field B(t) across it loses, per metre, P = π d⁴ ⟨(dB/dt)²⟩ / (64 ρ): for a sinusoid of
peak B̂ at ω that is the usual π d⁴ ω² B̂² / (128 ρ) (e.g. Hanselman, Brushless Permanent
Magnet Motor Design, 2nd ed., 2003, §5; from memory). The field is the axial field of the
flux map (thickness-averaged, so the loss is a little low where it varies through the
coil), seen by the coil legs between the coil's inner and outer radius as the rotor turns;
the tangential component and the end turns are left out.

Bearings: two rolling bearings carrying the rotor's weight, friction torque μ·F·d/2 with
μ ≈ 0.0015 for deep-groove ball bearings (the bearing makers' general catalogues give
0.0010–0.0015; from memory) on the bore diameter.

Windage: each disc as a free disc turning in air, torque ½ρω²r⁵·C_m with C_m = 3.87/√Re
laminar and 0.146·Re^(−1/5) turbulent (von Kármán 1921, Cochran 1934, as given by Owen &
Rogers, Flow and Heat Transfer in Rotating-Disc Systems, 1989; from memory).
"""

from __future__ import annotations

import math

import numpy as np

from layout.emf import FluxMap
from layout.thermal import NU_AIR_M2_S, RE_TRANSITION
from layout.wire import Wire, copper_resistivity

BEARING_FRICTION = 0.0015  # deep-groove ball bearings (from memory)
AIR_DENSITY_KG_M3 = 1.2  # near 25 °C (handbook value)
G = 9.80665


def mean_db_dt_squared(fmap: FluxMap, r_lo_mm: float, r_hi_mm: float, rpm) -> np.ndarray:
    """⟨(dBz/dt)²⟩ (T²/s²) over one period and the radii the coil legs span, at each rpm.

    The map is one electrical period in mechanical angle θ, so dB/dt = ω_m·∂B/∂θ, taken
    spectrally (exact for the map's trigonometric interpolant)."""
    inside = (fmap.r_mm >= r_lo_mm) & (fmap.r_mm <= r_hi_mm)
    b = fmap.bz_t[inside] if inside.any() else fmap.bz_t
    n = b.shape[1]
    span = (fmap.theta_rad[1] - fmap.theta_rad[0]) * n  # one electrical period, rad
    spec_b = np.fft.rfft(b, axis=1)
    k = np.arange(spec_b.shape[1]) * 2 * math.pi / span  # rad⁻¹ of mechanical angle
    weight = np.full(spec_b.shape[1], 2.0)
    weight[0] = 0.0
    if n % 2 == 0:
        weight[-1] = 1.0
    dtheta2 = float((weight * k**2 * np.abs(spec_b) ** 2).sum(axis=1).mean()) / n**2
    omega = np.asarray(rpm, dtype=float) * 2 * math.pi / 60
    return omega**2 * dtheta2


def conductor_eddy_w(fmap, r_lo_mm, r_hi_mm, wire: Wire, turns: int, coils: int, rpm, temp_c) -> np.ndarray:
    """Eddy loss (W) in every strand of the coil legs, at each rpm and copper temperature."""
    d = wire.diameter_mm * 1e-3
    rho = copper_resistivity(np.asarray(temp_c, dtype=float)) * 1e-6  # Ω·m
    length = 2 * (r_hi_mm - r_lo_mm) * 1e-3 * turns * wire.strands * coils  # both legs
    return math.pi * d**4 * mean_db_dt_squared(fmap, r_lo_mm, r_hi_mm, rpm) / (64 * rho) * length


def windage_w(rpm, disc_radius_mm: float, discs: int) -> np.ndarray:
    """Air drag (W) of `discs` free discs of this radius (both faces each)."""
    omega = np.asarray(rpm, dtype=float) * 2 * math.pi / 60
    r = disc_radius_mm * 1e-3
    re = np.maximum(omega * r**2 / NU_AIR_M2_S, 1e-9)
    cm = np.where(re < RE_TRANSITION, 3.87 / np.sqrt(re), 0.146 * re**-0.2)
    return discs * 0.5 * AIR_DENSITY_KG_M3 * omega**3 * r**5 * cm


def bearing_w(rpm, rotor_mass_kg: float, bore_mm: float) -> np.ndarray:
    """Rolling-bearing friction (W) carrying the rotor's weight on the shaft of the bore."""
    omega = np.asarray(rpm, dtype=float) * 2 * math.pi / 60
    return BEARING_FRICTION * rotor_mass_kg * G * bore_mm * 1e-3 / 2 * omega


def rotor_mass_kg(spec, forces) -> float:
    """Everything that turns on the bearings: the magnet discs with their magnets and any
    plain steel disc (from layout.forces)."""
    from layout.rotor import disc_count

    magnets = disc_count(spec) * spec.magnets.count * forces.magnet_mass_g / 1000
    plain = getattr(forces, "steel_disc_mass_kg", None) or 0.0
    return disc_count(spec) * forces.disc_mass_kg + magnets + plain
