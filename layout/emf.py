"""Flux linkage and EMF of the coils from the magnets' field.

Turns are spread uniformly from the hole to the outline and through the coil's thickness,
so a point of the coil's face is enclosed by the fraction of turns whose loop lies outside
it: 1 inside the hole, falling linearly across the leg to 0 at the outline. The flux
linkage per turn is then λ(φ) = ∫ w(r, θ) · B̄z(r, θ − φ) dA, with B̄z the rotor's field
averaged through the coil thickness (Gauss–Legendre) and φ the rotor angle; EMF = N·dλ/dt.

Symmetry keeps this fast: the field of alternating identical magnets is antiperiodic over
one pole pitch, so it is computed over one pole pitch only; every coil sees the same field
shifted by its angle, so one coil's λ over one electrical period gives them all.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from layout.field import Sources, bz, image_sources, near_sources
from layout.geometry import Geometry
from layout.winding import Layout

RADIAL_CELL_MM = 3.5  # radial sampling of the field over the coil
FIELD_SAMPLES_PER_POLE = 10  # harmonics up to the 9th of the electrical frequency
FINE_PER_PERIOD = 192  # rotor steps per electrical period for the integral
Z_NODES = 2  # Gauss–Legendre nodes through the coil thickness


@dataclass(frozen=True)
class FluxMap:
    """Thickness-averaged Bz over the coil's radial band, one electrical period."""

    r_mm: np.ndarray  # (nr,) cell centres
    dr_mm: float
    theta_rad: np.ndarray  # (nt,) over one electrical period, uniform
    bz_t: np.ndarray  # (nr, nt)
    peak_bz_t: float  # largest |Bz| in the coil region
    sources: Sources


@dataclass(frozen=True)
class CoilLinkage:
    """Flux linkage per turn of one coil (position 1) over one electrical period."""

    pole_pairs: int
    lambda_wb: np.ndarray  # (m,) per turn at rotor electrical angles 2πk/m
    harmonics: np.ndarray  # complex rfft coefficients of lambda_wb, scaled: λ = Re Σ c_ν e^{iνφe}


def turn_weight(hole_mm: np.ndarray, leg_width_mm: float, x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Fraction of a coil's turns enclosing the points (x, y), coil frame, in [0, 1].

    For a convex hole offset by mitred lines, the turn at offset s encloses a point iff
    max_e(n_e·p − c_e) ≤ s over the hole's edges e (outward normals n_e); so with turns
    uniform over 0 ≤ s ≤ w the weight is 1 − clip(d/w, 0, 1), d that maximum.
    """
    pts = np.stack([x, y], axis=-1)
    d = np.full(x.shape, -np.inf)
    n = len(hole_mm)
    for i in range(n):
        p0, p1 = hole_mm[i], hole_mm[(i + 1) % n]
        edge = p1 - p0
        normal = np.array([edge[1], -edge[0]]) / math.hypot(*edge)  # outward for CCW order
        d = np.maximum(d, (pts - p0) @ normal)
    return 1.0 - np.clip(d / leg_width_mm, 0.0, 1.0)


def _z_nodes(geo: Geometry) -> tuple[np.ndarray, np.ndarray]:
    x, w = np.polynomial.legendre.leggauss(Z_NODES)
    z0, z1 = geo.coil.z_min_mm, geo.coil.z_max_mm
    return (z0 + z1) / 2 + x * (z1 - z0) / 2, w / 2


def flux_map(geo: Geometry, magnets: int) -> FluxMap:
    """Bz (T) over coil 1's radial band and one pole pitch, averaged through the coil's thickness.

    Grid: radial cells of about `RADIAL_CELL_MM` (at least 8) × `FIELD_SAMPLES_PER_POLE`
    angles centred on magnet 1, at `Z_NODES` Gauss–Legendre planes between the coil's faces
    (exact for a cubic variation through the thickness; Abramowitz & Stegun 25.4.29). The
    field is that of every magnet and its steel images (`layout.field`: closed-form
    kernels, Yang 1990, Derby & Olbert 2010), with the image orders and far magnets chosen at probe
    points so each omission changes Bz there by < 1e-4. A machine symmetric about z = 0
    evaluates half the planes. Lengths in mm, field in T; `peak_bz_t` is the largest |Bz|.
    """
    coil = geo.coil
    r_lo, r_hi = coil.r_min_mm, coil.r_max_mm
    nr = max(8, math.ceil((r_hi - r_lo) / RADIAL_CELL_MM))
    dr = (r_hi - r_lo) / nr
    r = r_lo + dr * (np.arange(nr) + 0.5)
    pole = 2 * math.pi / magnets
    nt = FIELD_SAMPLES_PER_POLE
    theta = pole * (np.arange(nt) + 0.5) / nt - pole / 2  # one pole pitch centred on magnet 1
    zs, zw = _z_nodes(geo)
    symmetric = _mirror_symmetric(geo)
    z_eval = zs[zs >= -1e-9] if symmetric else zs
    rr, tt, zz = np.meshgrid(r, theta, z_eval, indexing="ij")
    pts = np.stack([rr * np.cos(tt), rr * np.sin(tt), zz], axis=-1).reshape(-1, 3)
    # Probes at the corners, edges and middle of the evaluated region (3 radii × 5 angles ×
    # extreme planes) decide how many image orders and which far magnets are needed.
    pr_, pt_, pz_ = np.meshgrid(
        [r[0], r[nr // 2], r[-1]], np.linspace(theta[0], theta[-1], 5), [z_eval.min(), z_eval.max()]
    )
    probe = np.stack([pr_ * np.cos(pt_), pr_ * np.sin(pt_), pz_], axis=-1).reshape(-1, 3)
    sources = near_sources(image_sources(geo, probe), probe)
    b = bz(sources, pts).reshape(nr, nt, len(z_eval))
    if symmetric:
        full = np.empty((nr, nt, len(zs)))
        for k, z in enumerate(zs):
            full[:, :, k] = b[:, :, int(np.argmin(np.abs(z_eval - abs(z))))]
        b = full
    bavg = (b * zw).sum(axis=2)
    # Antiperiodic over one pole pitch: the next pole is the same field reversed.
    period = np.concatenate([bavg, -bavg], axis=1)
    theta_p = np.concatenate([theta, theta + pole])
    return FluxMap(r, dr, theta_p, period, float(np.abs(b).max()), sources)


def _mirror_symmetric(geo: Geometry) -> bool:
    """True when the magnets and iron planes are symmetric about z = 0 (two equal discs)."""
    zc = sorted(round(m.center_mm[2], 9) for m in geo.magnets)
    planes = geo.iron_planes_z_mm
    mirrored_planes = sorted(round(-p, 9) for p in planes) == sorted(round(p, 9) for p in planes)
    return (
        zc == sorted(-z for z in zc) and mirrored_planes and abs(geo.coil.z_min_mm + geo.coil.z_max_mm) < 1e-9
    )


def _resample(b_period: np.ndarray, m: int) -> np.ndarray:
    """Trigonometric interpolation of one period (last axis) onto m uniform samples."""
    n = b_period.shape[-1]
    spec = np.fft.rfft(b_period, axis=-1)
    out = np.zeros(b_period.shape[:-1] + (m // 2 + 1,), dtype=complex)
    k = min(spec.shape[-1], out.shape[-1])
    out[..., :k] = spec[..., :k]
    if n % 2 == 0 and k == n // 2 + 1:
        out[..., k - 1] *= 0.5  # split the Nyquist term
    return np.fft.irfft(out, n=m, axis=-1) * (m / n)


def coil_linkage(geo: Geometry, fmap: FluxMap, magnets: int) -> CoilLinkage:
    """λ per turn of coil 1 at FINE_PER_PERIOD rotor positions over one electrical period."""
    p = magnets // 2
    m = FINE_PER_PERIOD
    period = 2 * math.pi / p
    # Field on a fine grid over one electrical period, starting at the grid's first angle.
    b_fine = _resample(fmap.bz_t, m)  # (nr, m) at theta0 + k·period/m
    theta0 = fmap.theta_rad[0]
    dtheta = period / m
    # Coil weight on the same angles, folded into one period (the coil may be wider).
    coil = geo.coil
    half = math.atan2(np.abs(coil.outline_mm[:, 1]).max(), coil.r_min_mm) + dtheta
    nwrap = math.ceil(2 * half / period) + 1
    k = np.arange(-nwrap * m // 2 - m, nwrap * m // 2 + m)
    th = theta0 + k * dtheta
    sub = 3  # sub-samples per cell each way: the weight has kinks at the hole and outline
    offs = (np.arange(sub) + 0.5) / sub - 0.5
    w = np.zeros((len(fmap.r_mm), len(th)))
    for a in offs:
        for c in offs:
            rr = fmap.r_mm[:, None] + a * fmap.dr_mm
            tt = th[None, :] + c * dtheta
            w += turn_weight(coil.hole_mm, coil.leg_width_mm, rr * np.cos(tt), rr * np.sin(tt))
    w /= sub * sub
    w *= fmap.r_mm[:, None] * fmap.dr_mm * dtheta  # area of each cell, mm²
    w_fold = np.zeros((len(fmap.r_mm), m))
    np.add.at(w_fold, (slice(None), np.mod(k, m)), w)
    # λ(φ_j) = Σ_r Σ_i W(r, θ_i) B(r, θ_i − φ_j): a circular cross-correlation per radius.
    lam = np.fft.irfft((np.fft.rfft(w_fold, axis=1) * np.conj(np.fft.rfft(b_fine, axis=1))).sum(axis=0), n=m)
    lam_wb = lam * 1e-6  # T·mm² → Wb
    # The correlation gives λ at rotor angle φ = j·dθ; reorder so sample j is φ = j·dθ.
    harmonics = np.fft.rfft(lam_wb) * 2 / m
    harmonics[0] /= 2
    return CoilLinkage(p, lam_wb, harmonics)


def waveform(harmonics: np.ndarray, shift_rad: float, m: int) -> np.ndarray:
    """Samples over one period of Re Σ c_ν e^{iν(φ − shift)} at φ = 2πk/m."""
    nu = np.arange(len(harmonics))
    c = harmonics * np.exp(-1j * nu * shift_rad)
    phi = 2 * math.pi * np.arange(m) / m
    return np.real(np.exp(1j * np.outer(phi, nu)) @ c)


@dataclass(frozen=True)
class PhaseEmf:
    """Open-circuit EMF per turn per (mechanical rad/s), one electrical period sampled."""

    samples: int
    coil_v: np.ndarray  # (m,) coil 1, V per turn per rad/s
    phase_v: np.ndarray  # (phases, m): one phase winding (series coils of one path)
    line_v: np.ndarray  # (phases, m) or (1, m): terminal-to-terminal (star: A−B...)


def phase_emf(link: CoilLinkage, layout: Layout, connection: str, m: int = 240) -> PhaseEmf:
    """EMF of the coils, of each phase (polarities, one path) and line to line.

    e = N·dλ/dt = N·ω_m·dλ/dφ_m = N·ω_m·p·dλ/dφ_e: per unit N and ω_m the electrical
    derivative times p. Coil k lags coil 1 by p·α_k electrically.
    """
    p = link.pole_pairs
    nu = np.arange(len(link.harmonics))
    d_harm = link.harmonics * 1j * nu * p  # dλ/dφ_m per turn
    coil = waveform(d_harm, 0.0, m)
    phases = layout.phases
    phase = np.zeros((phases, m))
    names = layout.phase_names
    for c in layout.coils:
        if c.path != 1:
            continue
        k = names.index(c.phase)
        phase[k] += c.polarity * waveform(d_harm, p * math.radians(c.angle_deg), m)
    if phases == 3 and connection == "star":
        line = np.array([phase[0] - phase[1], phase[1] - phase[2], phase[2] - phase[0]])
    elif phases == 3:
        # Round a delta the triplen EMF drives a circulating current that drops exactly
        # the mean EMF inside the windings, so the terminals see e_k − mean(e).
        line = phase - phase.mean(axis=0)
    else:
        line = phase.copy()
    return PhaseEmf(m, coil, phase, line)


def rms(x: np.ndarray, axis: int = -1) -> np.ndarray:
    """Root mean square over `axis` of samples spanning one whole period (same unit as x)."""
    return np.sqrt(np.mean(np.asarray(x) ** 2, axis=axis))


def thd(x: np.ndarray) -> float:
    """Total harmonic distortion of one sampled period: √(Σ_{ν>1} |X_ν|²) / |X_1|."""
    spec = np.abs(np.fft.rfft(x))
    if spec[1] <= 0:
        return 0.0
    return float(np.sqrt((spec[2:] ** 2).sum()) / spec[1])
