"""Losses in a stationary steel plate under the moving magnets (one_disc_steel_stator).

The plate behind a one-disc stator stands still while the magnets' field sweeps its face at
the electrical frequency (a plain steel disc that turns with the magnets, `one_disc_steel_disc`,
sees a steady field and loses nothing). The flux of each pole enters the face and turns along the plate,
so the flux carried along the plate, per metre of radius, swings between ±Φ₀ once per
electrical period; in solid steel that swing drives eddy currents that crowd it towards the
face. Their loss is estimated with the limiting non-linear theory of eddy currents in solid
iron (MacLean, 1954; Agarwal, "Eddy-current losses in solid and laminated iron", AIEE
Trans. 78, 1959; Stoll, The Analysis of Eddy Currents, 1974): the B–H curve is taken as a
step, B = ±B_s, so a flux front runs into the steel from the face each half-period,
reversing B from −B_s to +B_s behind it.

For a surface field H₀ sin ωt on a semi-infinite plate the front reaches
z_m = √(2H₀/(ωσB_s)) and the mean loss per unit area is P = (8/3π)·H₀²/(σ z_m), i.e.
(4√2/3π)·√(ωB_sH₀³/σ). Here the swing of the flux is what the magnets impose, so the depth
follows from the flux itself, 2B_s z_m = 2Φ₀, and eliminating H₀ gives

    P = (2/3π)·σ ω² Φ₀³ / B_s      (W/m², Φ₀ in Wb/m)

Hysteresis adds about 4 B_s H_c per unit volume per cycle in the layer the front sweeps.
The limiting theory is known to overestimate the eddy loss of real steel somewhat (Stoll,
ch. 6); the figures are rough estimates, meant to show whether the loss matters.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from layout.field import Sources, bz
from layout.forces import pole_band_mm
from layout.geometry import Geometry
from layout.materials import STEEL_COERCIVITY_A_M, STEEL_CONDUCTIVITY_S_M, STEEL_SATURATION_T
from layout.spec import Spec

RADIAL_CELLS = 8
ANGLE_CELLS = 24


def limiting_loss_from_surface_field_w_m2(h0_a_m, omega, sigma_s_m, b_sat_t):
    """Mean eddy loss per unit area (W/m²) of a semi-infinite step-B–H plate under a surface
    field H₀ sin ωt: (4√2/3π)·√(ωB_sH₀³/σ) (Agarwal 1959; MacLean 1954)."""
    return 4 * math.sqrt(2) / (3 * math.pi) * np.sqrt(omega * b_sat_t * np.asarray(h0_a_m) ** 3 / sigma_s_m)


def limiting_loss_from_flux_w_m2(flux_wb_m, omega, sigma_s_m, b_sat_t):
    """The same loss for a flux swing ±Φ₀ (Wb per metre of width) imposed along the plate:
    P = (2/3π)·σω²Φ₀³/B_s, the front reaching Φ₀/B_s."""
    return 2 / (3 * math.pi) * sigma_s_m * np.asarray(omega) ** 2 * np.asarray(flux_wb_m) ** 3 / b_sat_t


@dataclass(frozen=True)
class PlateFlux:
    """The flux the magnets sweep along a stationary plate, at each radius of its band."""

    r_m: np.ndarray  # (n,) cell centres
    dr_m: float
    swing_wb_m: np.ndarray  # (n,) amplitude Φ₀ of the flux along the plate per metre of radius
    thickness_m: float

    @property
    def depth_m(self) -> np.ndarray:
        """How deep the flux front runs (m), Φ₀/B_s, at most the plate's thickness."""
        return np.minimum(self.swing_wb_m / STEEL_SATURATION_T, self.thickness_m)

    def loss_w(self, omega_e) -> np.ndarray:
        """Eddy plus hysteresis loss (W) of the whole plate at electrical speeds ω_e (rad/s)."""
        w = np.atleast_1d(np.asarray(omega_e, dtype=float))[:, None]
        # Where the plate is too thin for the front, the swing it can carry is B_s × thickness.
        flux = self.depth_m * STEEL_SATURATION_T
        eddy = limiting_loss_from_flux_w_m2(flux[None, :], w, STEEL_CONDUCTIVITY_S_M, STEEL_SATURATION_T)
        hyst = 4 * STEEL_SATURATION_T * STEEL_COERCIVITY_A_M * self.depth_m[None, :] * w / (2 * math.pi)
        area = 2 * math.pi * self.r_m * self.dr_m
        return ((eddy + hyst) * area[None, :]).sum(axis=1)


def plate_flux(spec: Spec, geo: Geometry, sources: Sources) -> PlateFlux | None:
    """Φ₀ along the stationary plate of a one_disc_steel_stator design; None for the others.

    Φ(θ) = ∫ Bz r dθ over one pole pair centred on magnet 1, from Bz just in front of the
    plate's face (with the plate's own images: the flux that enters it), across the band
    the magnets' field reaches (forces.pole_band_mm); the swing is half its peak-to-peak.
    """
    if spec.rotor.topology != "one_disc_steel_stator":
        return None
    r_lo, r_hi = pole_band_mm(spec)
    face = geo.iron_planes_z_mm[-1] - 1e-3
    nr = RADIAL_CELLS
    dr = (r_hi - r_lo) / nr
    r = r_lo + dr * (np.arange(nr) + 0.5)
    pair = 4 * math.pi / spec.magnets.count
    dt = pair / ANGLE_CELLS
    t = -pair / 2 + dt * (np.arange(ANGLE_CELLS) + 0.5)  # centred on magnet 1
    rr, tt = np.meshgrid(r, t, indexing="ij")
    pts = np.stack([rr * np.cos(tt), rr * np.sin(tt), np.full(rr.shape, face)], axis=-1).reshape(-1, 3)
    b = bz(sources, pts).reshape(nr, ANGLE_CELLS)
    flux = np.cumsum(b * (r[:, None] * 1e-3) * dt, axis=1)  # Wb per metre of radius
    swing = (flux.max(axis=1) - flux.min(axis=1)) / 2
    return PlateFlux(r * 1e-3, dr * 1e-3, swing, spec.rotor.stator_plate_thickness_mm * 1e-3)
