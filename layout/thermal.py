"""Steady-state heat paths of the stator: copper → binder → faces → stirred air → discs → ambient.

A small lumped network, linear in the heat, one per speed (the convection depends on it):

- Conduction from the copper to the stator's faces through the cast coils. Heat made
  evenly through a slab of thickness t leaving by both faces raises its mean temperature
  by P·t/(12·k·A) above the faces (A one face). The winding's conductivity across the
  wires is that of conducting cylinders in the binder, k = k_b·(1+φ)/(1−φ) for a copper
  fraction φ (Rayleigh, Phil. Mag. 34, 1892, the dilute limit used across the range; from
  memory).
- Each face hands its heat to the air the rotor stirs. For the heat transfer of a disc
  turning in still air the average Nusselt number on its radius is 0.36·Re^0.5 laminar and
  0.015·Re^0.8 past transition at Re ≈ 2.4·10^5, Re = ωr²/ν (Cobb & Saunders, Proc. R.
  Soc. A 236, 1956; from memory). The same h is taken for the stator face beside it, for
  the air to the disc, and for the disc's outer face to the room: a rough estimate of a
  rotor–stator gap (the gap's own correlations, e.g. Owen & Rogers, Flow and Heat Transfer
  in Rotating-Disc Systems, 1989, need its throughflow, which a builder does not know).
- The turning disc pumps air out through the gap (von Kármán's free disc; Owen & Rogers),
  which carries part of the heat away before it reaches the disc.
- A face with nothing turning beside it (the open face of a one-disc coreless stator, the
  back of a stationary plate) and the stator's rim lose heat by natural convection,
  H_STILL_AIR (5–10 W/(m²·K) for a plate in still air: common practice), which is also the
  floor of every film.

The magnets sit on their disc, so they take the disc's temperature: the room plus the heat
that crosses the gap to that disc times the disc's outer film.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from layout.forces import disc_outer_radius_mm
from layout.geometry import Geometry
from layout.spec import Spec

K_BINDER_W_MK = 0.2  # cast epoxy or polyester ~0.2, printed PLA/PETG/ABS 0.13–0.2 (from memory)
K_AIR_W_MK = 0.026  # air near 25 °C (handbook value)
NU_AIR_M2_S = 1.6e-5  # kinematic viscosity of air near 25 °C (handbook value)
H_STILL_AIR_W_M2K = 6.0  # natural convection, plate in still air: 5–10 (common practice)
AIR_HEAT_CAPACITY_J_M3K = 1.2 * 1005  # ρ·c_p of air near 25 °C (handbook values)
RE_TRANSITION = 2.4e5  # rotating disc, laminar to turbulent (Cobb & Saunders 1956; from memory)


def rotating_disc_h_w_m2k(rpm, radius_m: float) -> np.ndarray:
    """Mean film coefficient (W/(m²·K)) of a disc of `radius_m` turning at `rpm` in still air,
    Cobb & Saunders 1956 (from memory), never below natural convection."""
    omega = np.asarray(rpm, dtype=float) * 2 * math.pi / 60
    re = omega * radius_m**2 / NU_AIR_M2_S
    nu = np.where(re < RE_TRANSITION, 0.36 * np.sqrt(re), 0.015 * re**0.8)
    return np.maximum(nu * K_AIR_W_MK / radius_m, H_STILL_AIR_W_M2K)


def disc_pumped_m3_s(rpm, radius_m: float) -> np.ndarray:
    """Air a disc face pumps outwards (m³/s): von Kármán's free disc, Q = 0.886·2π·r²·√(νω)
    laminar, C_w = Q/(νr) = 0.219·Re^0.8 turbulent (Owen & Rogers 1989; from memory)."""
    omega = np.asarray(rpm, dtype=float) * 2 * math.pi / 60
    re = omega * radius_m**2 / NU_AIR_M2_S
    laminar = 0.886 * 2 * math.pi * radius_m**2 * np.sqrt(NU_AIR_M2_S * omega)
    turbulent = 0.219 * re**0.8 * NU_AIR_M2_S * radius_m
    return np.where(re < RE_TRANSITION, laminar, turbulent)


@dataclass(frozen=True)
class HeatPaths:
    """The network at each speed: copper to room, and how warm the magnets get per watt."""

    conductance_w_k: np.ndarray  # (n,) heat made in the stator per K of coil rise over the room
    magnet_k_per_w: np.ndarray  # (n,) magnet rise over the room per W made in the stator

    def magnet_rise_k(self, coil_rise_k, idx=slice(None)) -> np.ndarray:
        """Magnet temperature over the room for a coil temperature over it, at points `idx`."""
        return np.asarray(coil_rise_k) * (self.conductance_w_k * self.magnet_k_per_w)[idx]


def stator_heat_paths(spec: Spec, geo: Geometry, rpms) -> HeatPaths:
    """The heat network of this design at each of `rpms`; areas from the coil band and the
    resin rim (mm in, SI out)."""
    st, ro = spec.stator, spec.rotor
    rpms = np.atleast_1d(np.asarray(rpms, dtype=float))
    r_in = max(geo.coil.r_min_mm - st.resin_rim_mm, 1.0) * 1e-3
    r_out = (geo.coil.r_max_mm + st.resin_rim_mm) * 1e-3
    t = st.thickness_mm * 1e-3
    face = math.pi * (r_out**2 - r_in**2)
    phi = min(st.fill_factor, 0.9)
    k = K_BINDER_W_MK * (1 + phi) / (1 - phi)
    r_cond = t / (12 * k * face)
    r_disc = disc_outer_radius_mm(spec) * 1e-3
    disc_out = math.pi * (r_disc**2 - (ro.bore_diameter_mm * 5e-4) ** 2)
    h = rotating_disc_h_w_m2k(rpms, r_disc)
    # Face → gap air; the gap air → the disc → the room (its outer film), and the gap air
    # → the room with the air the disc pumps through the gap.
    flow = AIR_HEAT_CAPACITY_J_M3K * disc_pumped_m3_s(rpms, r_disc)
    disc_path = 1 / (1 / (h * face) + 1 / (h * disc_out))
    beside_disc = 1 / (1 / (h * face) + 1 / (disc_path + flow))
    to_disc = disc_path / (disc_path + flow)  # of the heat a face hands to its gap
    still = H_STILL_AIR_W_M2K * face
    if ro.topology in ("two_discs", "one_disc_steel_disc"):  # a disc turns beside each face
        sides = [beside_disc, beside_disc]
        magnet_sides = 2 if ro.topology == "two_discs" else 1
    elif ro.topology == "one_disc_steel_stator":
        sides = [beside_disc, np.full_like(h, still)]  # the plate's back, standing still
        magnet_sides = 1
    else:
        sides = [beside_disc, np.full_like(h, still)]
        magnet_sides = 1
    rim = H_STILL_AIR_W_M2K * 2 * math.pi * r_out * t
    g_faces = sum(sides) + rim
    conductance = 1 / (r_cond + 1 / g_faces)
    # The share of the heat that reaches one magnet disc, then its outer film.
    to_one_disc = sides[0] / g_faces * to_disc
    magnet = to_one_disc / (h * disc_out) if magnet_sides else np.zeros_like(h)
    return HeatPaths(conductance, magnet)
