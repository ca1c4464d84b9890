"""From a requirement to designs: screen many candidates fast, re-check the best in full.

Candidates: coil/magnet counts from `pairs` (balanced three-phase, or single phase with a
coil per magnet), each stock magnet, pitch radii that space the magnets at a few shares of
the circle, stator thicknesses, connections and topologies.

The screen (`screen`) estimates each candidate's rectified open-circuit peak per turn from
the magnets' field with their steel images (the kernels of `layout.field`, on a 3 × 3 grid
over the magnet face in the stator's mid-plane, the two nearest neighbours each side),
times the winding's distribution factor and series coils. One full-model run per stock
magnet and topology calibrates it (the coil's turn weighting and fringing are the full
model's). Turns, resistance, output, current density, masses and cost then follow from
closed forms. The screen only chooses: every figure reported comes from the full model
(`compute_design`), run on the best screened candidates written as design files.
"""

from __future__ import annotations

import dataclasses
import functools
import math
import time
import tomllib
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from layout import converter as conv
from layout.design import Design, compute_design, winding_layout
from layout.emf import coil_linkage, flux_map, phase_emf
from layout.field import Sources, _with_images, bz
from layout.forces import disc_outer_radius_mm
from layout.geometry import MIN_LEG_WIDTH_MM, _trapezoid, resolve_geometry
from layout.materials import MAGNET_GRADES, STATOR_BINDERS_MAX_C
from layout.pairs import combinations
from layout.requirement import Magnet, Requirement, replace_limits
from layout.safety import ELV_DC_V, above_extra_low_voltage
from layout.source import resolve
from layout.spec import DesignError, parse_spec

# A battery's cut-in taken from the source may be raised by these factors: a later cut-in
# lets the blades gather speed before the battery loads them (the stall remedy of layout.advice).
CUT_IN_FACTORS = (1.0, 1.3, 1.6, 2.0)
CLEARANCE_MM = 1.5  # running clearance each side of the stator (common practice)
COIL_CLEARANCE_MM = 1.5
FILL = 0.5  # hand-wound round wire fills 0.4–0.6 of the window (common practice)
# Strands in hand no thicker than this: easy to wind, and the wire's own eddy loss (∝ d⁴)
# stays small beside I²R (common practice).
MAX_WIRE_MM = 1.2
RIM_MM = 10.0  # disc beyond the magnets' outer edge (layout.forces default)
STEEL_DESIGN_T = 1.4  # discs sized to carry the flux under the 1.5 T plate limit (common practice)
SHARES = (0.55, 0.7)  # magnets' share of the pitch circle
THICKNESS_FACTORS = (1.0, 1.4)  # stator thickness over magnet thickness
SCREEN_J_A_MM2 = 4.0  # cast coils: 3–4 A/mm² where the source drives them hardest (common practice)
FULL_CHECKS = 24  # candidates re-checked with the full model
NDFEB_G_CM3, COPPER_G_CM3, STEEL_G_CM3, RESIN_G_CM3 = 7.5, 8.96, 7.85, 1.2
RHO_CU_OHM_MM = 1.72e-5  # Ω·mm at 20 °C (IEC 60028)
# Danger warnings every machine of strong magnets carries; any other one is avoidable.
INHERENT = {"magnet.pinch", "magnet.pacemaker", "rotor.jacking_screws", "converter.stored_charge"}


@dataclass(frozen=True)
class Candidate:
    coils: int
    magnets: int
    phases: int
    magnet: Magnet
    pitch_radius_mm: float
    stator_mm: float
    connection: str
    topology: str
    k_d: float  # distribution factor of the counts
    series: int  # coils in series per path
    cut_in_rpm: float | None = None  # a battery's, where the search chooses it
    share: float = 0.0  # the magnets' share of the pitch circle
    paths: int = 1  # parallel paths per phase


@dataclass(frozen=True)
class Screened:
    candidate: Candidate
    turns: int
    peak_per_turn: float  # rectified open-circuit peak, V per turn per rad/s (calibrated)
    power_w: float
    efficiency: float
    density_a_mm2: float
    disc_mm: float
    magnet_kg: float
    copper_kg: float
    cost: float
    ok: bool
    steel_mm: float = 0.0  # the rotor discs' thickness, enough to carry the flux unsaturated


@dataclass(frozen=True)
class Result:
    """One candidate re-checked in full."""

    rank: int
    design: Design
    text: str  # its design file
    cost: float
    magnet_kg: float
    copper_kg: float
    disc_mm: float
    output_w: float
    binding: tuple[str, ...]  # limits it meets within 5 %
    fails: tuple[str, ...]  # limits it misses (empty: meets them all)
    screen_peak: float  # the screen's estimate, to compare with the full model's
    efficiency: float = 0.0  # at the rated point (with a source, where it holds the shaft)
    coil_c: float = 0.0  # the hottest steady coil temperature
    figure: float = 0.0  # the objective's figure: output W (cost), kg, efficiency, kWh a year

    @property
    def full_peak(self) -> float:
        """The full model's rectified open-circuit peak per turn per rad/s."""
        pr = self.design.prediction
        return pr.open_circuit_dc_peak_at_max_v / (
            pr.turns_per_coil * self.design.spec.target.max_rpm * math.pi / 30
        )


@dataclass(frozen=True)
class Sizing:
    requirement: Requirement
    screened: int
    seconds: float
    results: tuple[Result, ...]  # feasible first, by objective
    closest: str  # when nothing is feasible: what is nearest and what relaxing gives


def _pairs(req: Requirement) -> list[tuple[int, int, int, float]]:
    """(coils, magnets, phases, k_w) the search takes."""
    out = []
    phases = (1, 3) if req.limits.phases == 0 else (req.limits.phases,)
    for ph in phases:
        if ph == 3:
            for p in combinations(range(6, 28, 3), range(8, 34, 2), 3, balanced_only=True):
                # coreless coils as wide as their position: about a pole pitch each, or their
                # legs cancel (0.6–1.0 coils a magnet)
                if p.winding_factor >= 0.85 and 0.6 * p.magnets <= p.coils <= p.magnets:
                    out.append((p.coils, p.magnets, 3, p.distribution_factor))
        else:
            out += [(n, n, 1, 1.0) for n in range(8, 26, 4)]
    return out


def candidates(req: Requirement) -> list[Candidate]:
    out = []
    topologies = (
        ("two_discs", "one_disc_steel_disc") if req.limits.topology == "either" else (req.limits.topology,)
    )
    r_max = req.limits.max_disc_diameter_mm / 2
    ta = req.target
    cut_ins = [None]
    if ta.kind == "battery":
        factors = (1.0,) if req.cut_in_given else CUT_IN_FACTORS
        cut_ins = [
            float(round(ta.cut_in_rpm * f)) for f in factors if ta.cut_in_rpm * f < 0.85 * ta.rated_rpm
        ]
    for coils, magnets, ph, kw in _pairs(req):
        for mg in req.stock:
            for share in SHARES:
                r = round(magnets * mg.tangential_mm / (2 * math.pi * share), 1)
                if r + mg.radial_mm / 2 + RIM_MM > r_max or r - mg.radial_mm / 2 < 25:
                    continue
                probe = Candidate(coils, magnets, ph, mg, r, 10.0, "star", "two_discs", kw, coils // ph)
                if _coil(probe) is None:  # legs too narrow to wind
                    continue
                for f in THICKNESS_FACTORS:
                    t = float(max(6.0, round(mg.thickness_mm * f)))
                    for topo in topologies:
                        for conn in ("star", "delta") if ph == 3 else ("single_phase",):
                            per_phase = coils // ph
                            out += [
                                Candidate(
                                    coils,
                                    magnets,
                                    ph,
                                    mg,
                                    r,
                                    t,
                                    conn,
                                    topo,
                                    kw,
                                    per_phase // a,
                                    cut,
                                    share,
                                    a,
                                )  # fmt: skip
                                for cut in cut_ins
                                for a in PATHS
                                if per_phase % a == 0 and _paths_ok(coils, magnets, ph, a)
                            ]
    return out


Y_CELLS = 12  # radial samples of the field profile, from the centre out to a magnet length
NEIGHBOURS = 2  # magnets each side of the sampled one
IMAGE_ORDER = 1  # reflections in the steel each way


PATHS = (1, 2)  # parallel paths per phase tried


@functools.lru_cache(maxsize=1024)
def _paths_ok(coils: int, magnets: int, phases: int, paths: int) -> bool:
    """Whether the winding of these counts allows `paths` parallel paths (layout.winding)."""
    if paths == 1:
        return True
    from layout.winding import star_of_slots

    return paths in star_of_slots(coils, magnets, phases, exact_paths=False).allowed_parallel_paths


def _fundamental_profile(
    mg: Magnet, r: float, magnets: int, stator: float, topology: str, br: float
) -> tuple[np.ndarray, np.ndarray, float]:
    """The fundamental of Bz along the pitch circle in the stator's mid-plane, at radial
    offsets from the pitch circle out to one magnet length (the field is even in the
    offset): (cell-centre offsets mm, B1 in each cell T, cell width mm). The magnets are laid straight along
    the circle, three each side of the one sampled; the field alternates pole to pole, so
    one pole pitch of samples gives the fundamental."""
    h = mg.thickness_mm
    gap = stator / 2 + CLEARANCE_MM
    pitch = 2 * math.pi * r / magnets
    k = np.arange(-NEIGHBOURS, NEIGHBOURS + 1)
    zs = [-(gap + h / 2)] + ([gap + h / 2] if topology == "two_discs" else [])
    planes = (-(gap + h), gap + h) if topology == "two_discs" else (-(gap + h), gap)
    centres = np.array([(x, 0.0, z) for z in zs for x in k * pitch])
    block = mg.shape == "block"
    dim = (mg.tangential_mm, mg.radial_mm, h) if block else (mg.diameter_mm, h, 0.0)
    n = len(centres)
    real = Sources(
        block=np.full(n, block),
        center_mm=centres,
        dimension_mm=np.tile(np.array(dim, dtype=float), (n, 1)),
        rotation_rad=np.zeros(n),
        polarization_t=np.tile(br * (-1.0) ** k, len(zs)),
        image_order=IMAGE_ORDER,
    )
    src = _with_images(real, planes, IMAGE_ORDER)
    half = 8  # samples over one pole pitch (half the electrical period)
    xs = (np.arange(half) / half - 0.5) * pitch
    dy = mg.radial_mm / Y_CELLS
    ys = (np.arange(Y_CELLS) + 0.5) * dy
    gx, gy = np.meshgrid(xs, ys)
    b_xy = bz(src, np.stack([gx.ravel(), gy.ravel(), np.zeros(gx.size)], axis=1)).reshape(gx.shape)
    # antiperiodic over a pole: the period's fundamental is twice the half-period sum
    phase = np.exp(-1j * np.pi * np.arange(half) / half)
    b1 = np.abs(b_xy @ phase) * 2 * 2 / (2 * half)
    return ys, b1, dy


def _reach(c: Candidate, profile) -> np.ndarray:
    """Each profile cell's share inside the middle turn's radial reach."""
    ys, _, dy = profile
    return np.clip((_half_y(c) - (ys - dy / 2)) / dy, 0.0, 1.0)


def _fundamental_field(c: Candidate, profile) -> float:
    """∫B1 dy across the middle turn's radial reach (both sides of the pitch circle), T·mm."""
    _, b1, dy = profile
    return 2 * float((_reach(c, profile) * b1 * dy).sum())


@dataclass(frozen=True)
class _Coil:
    leg_mm: float
    mlt_mm: float
    span_in_rad: float  # between the innermost turn's legs at the pitch radius
    span_out_rad: float  # and the outermost's
    delta_hole_mm: float  # the hole's side from the sector's edge
    beta_rad: float  # half the sector


HOLE_MARGIN_MM = 1.0  # stator.hole_margin_mm's default


def _coil(c: Candidate) -> _Coil | None:
    """The coil `layout.geometry.coil_shape` makes (a trapezoid round a hole that holds the
    magnet, legs filling the sector less half the clearance), in closed form; None where
    its legs would be too narrow to wind."""
    return _coil_of(c.coils, c.magnet, c.pitch_radius_mm)


@functools.lru_cache(maxsize=4096)
def _coil_of(coils: int, mg: Magnet, rc: float) -> _Coil | None:
    beta = math.pi / coils
    a, b = mg.radial_mm, mg.tangential_mm
    if mg.shape == "block":
        foot = (rc - a / 2) * math.sin(beta) - (b / 2) * math.cos(beta)
    else:
        foot = rc * math.sin(beta) - a / 2
    delta_hole = foot - HOLE_MARGIN_MM
    leg = delta_hole - COIL_CLEARANCE_MM / 2
    half_radial = a / 2 + HOLE_MARGIN_MM
    if leg < MIN_LEG_WIDTH_MM or rc - half_radial - leg <= 0:
        return None
    mid = _trapezoid(rc - half_radial - leg / 2, rc + half_radial + leg / 2, delta_hole - leg / 2, beta)
    mlt = float(np.linalg.norm(np.roll(mid, -1, axis=0) - mid, axis=1).sum())

    def span(delta):
        return 2 * math.atan2((rc * math.sin(beta) - delta) / math.cos(beta), rc)

    return _Coil(leg, mlt, span(delta_hole), span(delta_hole - leg), delta_hole, beta)


def _raw_peak(c: Candidate, profile) -> float:
    """Rectified open-circuit peak per turn per rad/s, before calibration. At radius ρ a turn
    whose legs lie δ in from the sector's edges spans σ(ρ, δ) and links B1(ρ) (2ρ/p)
    sin(pσ/2) dρ of the fundamental; summed over the profile's radial cells within the turn's
    reach and averaged over the turns from the hole to the outline; times p, the
    distribution factor, the coils in series and the line factor (√3 for star)."""
    p = c.magnets // 2
    r = c.pitch_radius_mm
    coil = _coil(c)
    ys, b1, dy = profile
    weight = _reach(c, profile) * b1 * dy
    deltas = coil.delta_hole_mm - np.linspace(0.0, 1.0, 5) * coil.leg_mm
    sb, cb = math.sin(coil.beta_rad), math.cos(coil.beta_rad)
    flux = 0.0  # T·mm²
    for rho in (r + ys, r - ys):
        sigma = 2 * np.arctan2((rho[:, None] * sb - deltas[None, :]) / cb, rho[:, None])
        flux += float((weight * 2 * rho / p * np.sin(p * sigma / 2).mean(axis=1)).sum())
    line = math.sqrt(3) if c.connection == "star" else 1.0
    return p * abs(flux) * 1e-6 * c.k_d * c.series * line


def design_text(
    req: Requirement,
    c: Candidate,
    turns: int | None = None,
    name: str | None = None,
    steel_mm: float | None = None,
    source: bool = True,
) -> str:
    """The candidate as a design file (TOML): the requirement's target and source, sized
    turns unless `turns` is given."""
    mg = c.magnet
    ta = req.target
    lines = [
        f"# Sized by statorsmith size from {req.file}: {c.coils} coils, {c.magnets} magnets, {mg.words}.",
        f'name = "{name or req.name}"',
        f'purpose = "{req.purpose}"',
        "",
        "[stator]",
        f"phases = {c.phases}",
        f"coil_positions = {c.coils}",
        f"thickness_mm = {c.stator_mm:g}",
        f"coil_clearance_mm = {COIL_CLEARANCE_MM:g}",
        f'binder = "{req.limits.binder}"',
        f"fill_factor = {FILL:g}",
        'wire_standard = "metric"',
        f"max_wire_diameter_mm = {MAX_WIRE_MM:g}",
        "",
        "[magnets]",
        f"count = {c.magnets}",
        f'shape = "{mg.shape}"',
        *(
            [f"length_mm = {mg.length_mm:g}", f"width_mm = {mg.width_mm:g}"]
            if mg.shape == "block"
            else [f"diameter_mm = {mg.diameter_mm:g}"]
        ),
        f"thickness_mm = {mg.thickness_mm:g}",
        f'grade = "{mg.grade}"',
        f"pitch_radius_mm = {c.pitch_radius_mm:g}",
        "",
        "[rotor]",
        f'topology = "{c.topology}"',
        'disc_material = "steel"',
        f"disc_thickness_mm = {steel_mm or _disc_mm(mg):g}",
        *(
            [f"steel_disc_thickness_mm = {steel_mm or _disc_mm(mg):g}"]
            if c.topology == "one_disc_steel_disc"
            else []
        ),
        f"running_clearance_mm = {CLEARANCE_MM:g}",
        f"bore_diameter_mm = {_bore_mm(c):g}",
        *(_SMALL_HUB if c.pitch_radius_mm < 90 else ()),
        "",
        "[connection]",
        f'kind = "{c.connection}"',
        *([f"parallel_paths = {c.paths}"] if c.paths > 1 else []),
        "",
        "[target]",
        *(
            _toml_line(k, c.cut_in_rpm if k == "cut_in_rpm" and c.cut_in_rpm else v)
            for k, v in _set_fields(ta)
        ),
    ]
    if turns is not None:
        lines += ["", "[coils]", f"turns_per_coil = {turns}"]
    if req.source is not None and source:
        lines += ["", "[source]", *(_toml_line(k, v) for k, v in _set_fields(req.source))]
    return "\n".join(lines) + "\n"


def _disc_mm(mg: Magnet) -> float:
    """Steel behind the magnets: about their thickness carries their flux (common practice)."""
    return float(max(6.0, math.ceil(0.8 * mg.thickness_mm)))


def _bore_mm(c: Candidate) -> float:
    return 20.0 if c.pitch_radius_mm < 90 else 35.0


# A small flange on a 20 mm shaft: three M6 bolts on a 36 mm circle, 4 mm dowels, M8 jacking
# screws, all inside the stator's bore (common practice for small machines).
_SMALL_HUB = (
    "hub_bolts = 3",
    "hub_bolt_circle_mm = 36",
    "hub_hole_diameter_mm = 6.6",
    "dowel_diameter_mm = 4",
    'jacking_screw = "M8"',
)


def _set_fields(obj) -> list[tuple[str, object]]:
    out = []
    for f in dataclasses.fields(obj):
        v = getattr(obj, f.name)
        if v is None or (f.default is not dataclasses.MISSING and v == f.default):
            continue
        out.append((f.name, v))
    return out


def _toml_line(key: str, v: object) -> str:
    if isinstance(v, bool):
        return f"{key} = {'true' if v else 'false'}"
    if isinstance(v, str):
        return f'{key} = "{v}"'
    if isinstance(v, tuple):
        return f"{key} = [" + ", ".join(f"[{a:g}, {b:g}]" for a, b in v) + "]"
    return f"{key} = {v:g}" if isinstance(v, float) else f"{key} = {v}"


def _spec(text: str, src: str = "candidate.toml"):
    return parse_spec(tomllib.loads(text), src)


def _calibration(req: Requirement, cands: list[Candidate], fields: dict) -> dict:
    """Full over screened rectified peak per turn, one full run per stock magnet, topology and
    share of the circle (the spacing sets the harmonics the fundamental leaves out)."""
    groups: dict = {}
    for c in cands:
        groups.setdefault(_cal_key(c), []).append(c)
    out: dict = {}
    for key, group in groups.items():
        out[key] = None
        # the group's middle candidate (a typical one), then its neighbours if it fails
        mid = len(group) // 2
        for c in [group[mid], *group[mid + 1 : mid + 2], *group[max(mid - 1, 0) : mid]]:
            try:
                full = _full_peak_per_turn(_spec(design_text(req, c, turns=20, source=False)))
            except DesignError:
                continue
            out[key] = full / _raw_peak(c, fields[_field_key(c)])
            break
    return out


def _full_peak_per_turn(spec) -> float:
    """The full model's rectified open-circuit peak per turn per rad/s (unsaturated): its
    layout, field map, coil linkage and phase EMF, without the winding or the output."""
    lay = winding_layout(spec)
    geo = resolve_geometry(spec, tuple(c.index for c in lay.coils))
    fmap = flux_map(geo, spec.magnets.count)
    emf = phase_emf(coil_linkage(geo, fmap, spec.magnets.count), lay, spec.connection.kind)
    return float(np.abs(emf.line_v).max())


def _cal_key(c: Candidate):
    return (c.magnet, c.topology, c.share)


def _half_y(c: Candidate) -> float:
    return c.magnet.radial_mm / 2 + HOLE_MARGIN_MM + _coil(c).leg_mm / 2


def _field_key(c: Candidate):
    return (c.magnet, c.pitch_radius_mm, c.magnets, c.stator_mm, c.topology)


def _steel_mm(c: Candidate, b1_dy: float) -> float:
    """Disc thickness that carries half the fundamental flux per pole each way at
    `STEEL_DESIGN_T` across the magnet's radial length, rounded up to a whole mm, and never
    under `_disc_mm`'s."""
    p = c.magnets // 2
    phi = b1_dy * 2 * c.pitch_radius_mm / p  # T·mm²
    need = phi / 2 / (STEEL_DESIGN_T * c.magnet.radial_mm)
    return float(max(_disc_mm(c.magnet), math.ceil(need)))


def _screen_one(req: Requirement, c: Candidate, peak: float, b1_dy: float = 0.0) -> Screened:
    ta, mg = req.target, c.magnet
    steel_mm = _steel_mm(c, b1_dy)
    vf = ta.diode_drop_v
    w_rated = ta.rated_rpm * math.pi / 30
    coil = _coil(c)
    window = coil.leg_mm * (c.stator_mm - 1.0)
    mlt = coil.mlt_mm
    # a phase: `paths` parallel paths of `series` coils
    r_phase_per_n2 = RHO_CU_OHM_MM * mlt / (FILL * window) * c.series / c.paths
    r_line_per_n2 = r_phase_per_n2 * ((2 if c.connection == "star" else 2 / 3) if c.phases == 3 else 1.0)
    # turns and output at rated, by target
    if ta.kind == "battery":
        n = max(1, round((ta.battery_v + 2 * vf) / (peak * c.cut_in_rpm * math.pi / 30)))
        e = peak * n * w_rated
        i = max(0.0, (e - ta.battery_v - 2 * vf) / (r_line_per_n2 * n * n))
        p_out = ta.battery_v * i
    elif ta.kind == "converter":
        n = max(1, conv.most_turns(ta, peak * ta.max_rpm * math.pi / 30))
        e = peak * n * w_rated - 2 * vf
        v = min(max(e / 2, conv.start_v(ta)), ta.max_input_v)
        i = max(0.0, (e - v) / (r_line_per_n2 * n * n))
        p_out = min(ta.efficiency * v * i, conv.limit_w(ta))
    else:
        v_need = (ta.voltage_v if ta.kind == "dc" else ta.voltage_v * math.sqrt(2)) + 2 * vf
        i = ta.rated_current_a
        a, b, cc = r_line_per_n2 * i, -peak * w_rated, v_need
        disc = b * b - 4 * a * cc
        n = max(1, math.ceil((-b - math.sqrt(disc)) / (2 * a))) if disc > 0 else 10**6
        p_out = ta.voltage_v * i if disc > 0 else 0.0
    if req.source is not None:
        # the source holds the shaft at the lowest speed where the machine takes all it gives
        # (the stable crossing, as layout.operating finds it in full)
        r = r_line_per_n2 * n * n
        i, p_out = _steady(req, ta, peak * n, r, req.rated_condition)
        # the coils are judged where the source drives them hardest
        i_hot, _ = _steady(req, ta, peak * n, r, _hardest_condition(req))
        i = max(i, i_hot) if req.source.kind == "wind" else i
    cu_w = i * i * r_line_per_n2 * n * n
    eff = p_out / (p_out + cu_w + 2 * vf * i) if p_out > 0 else 0.0
    area = FILL * window / n
    i_phase = i * (0.816 if c.phases == 3 else 1.0) / (math.sqrt(3) if c.connection == "delta" else 1.0)
    density = i_phase / c.paths / area
    discs = 2 if c.topology == "two_discs" else 1
    r_out = c.pitch_radius_mm + mg.radial_mm / 2 + RIM_MM
    n_mag = c.magnets * discs
    magnet_kg = n_mag * mg.volume_mm3 * NDFEB_G_CM3 * 1e-6
    copper_kg = c.coils * n * mlt * area * COPPER_G_CM3 * 1e-6
    steel_kg = 2 * math.pi * r_out**2 * steel_mm * STEEL_G_CM3 * 1e-6
    resin_kg = (
        math.pi
        * ((r_out + 15) ** 2 - (c.pitch_radius_mm - mg.radial_mm) ** 2)
        * c.stator_mm
        * RESIN_G_CM3
        * 1e-6
    )
    pr = req.prices
    magnet_cost = n_mag * mg.price_each if mg.price_each is not None else magnet_kg * pr.magnet_per_kg
    cost = (
        magnet_cost + copper_kg * pr.copper_per_kg + steel_kg * pr.steel_per_kg + resin_kg * pr.resin_per_kg
    )
    ok = (
        p_out >= 0.9 * req.rated_power_w
        and density <= SCREEN_J_A_MM2
        and eff >= req.limits.min_efficiency - 0.05
        and (mg.available is None or n_mag <= mg.available)
        and (req.limits.budget is None or cost <= 1.1 * req.limits.budget)
    )
    return Screened(c, n, peak, p_out, eff, density, 2 * r_out, magnet_kg, copper_kg, cost, ok, steel_mm)


def _demand(ta, e, r):
    """(DC current, output W) of the machine into the target at rectified open-circuit peaks
    `e` behind a line resistance `r` (the screen's circuit: a constant drop, no inductance)."""
    vf2 = 2 * ta.diode_drop_v
    if ta.kind == "battery":
        i = np.maximum(0.0, (e - ta.battery_v - vf2) / r)
        return i, ta.battery_v * i
    if ta.kind == "converter":
        v = np.clip((e - vf2) / 2, conv.start_v(ta), ta.max_input_v)
        i = np.maximum(0.0, (e - vf2 - v) / r)
        return i, np.minimum(ta.efficiency * v * i, conv.limit_w(ta))
    load = ta.voltage_v / ta.rated_current_a
    i = np.maximum(0.0, (e - vf2) / (r + load))
    return i, i * i * load


def _steady(req: Requirement, ta, peak_n: float, r: float, condition: float) -> tuple[float, float]:
    """(DC current, output W) where the source settles the shaft at `condition`: the lowest
    speed where the machine takes all it gives (the stable crossing, as layout.operating
    finds it in full), interpolated on the grid."""
    grid, give = _source_line(req, condition)
    i_g, out_g = _demand(ta, peak_n * grid * math.pi / 30, r)
    shaft = (
        out_g / (ta.efficiency if ta.kind == "converter" else 1.0) + i_g * i_g * r + 2 * ta.diode_drop_v * i_g
    )
    surplus = give - shaft
    deficit = np.flatnonzero(surplus <= 0)
    j = int(deficit[0]) if len(deficit) else len(grid) - 1
    f = 1.0 if j == 0 or not len(deficit) else surplus[j - 1] / (surplus[j - 1] - surplus[j])
    lo = max(j - 1, 0)
    return float(i_g[lo] + f * (i_g[j] - i_g[lo])), float(out_g[lo] + f * (out_g[j] - out_g[lo]))


def _hardest_condition(req: Requirement) -> float:
    """The condition that drives the coils hardest in the operating table: the furling wind
    (or the table's last), the stated flow, the peak effort."""
    so = req.source
    if so.kind == "wind":
        return so.furl_wind_m_s or 25.0
    if so.kind == "water":
        return so.flow_l_s
    return so.peak_power_w or so.sustained_power_w


_LINES: dict = {}


def _source_line(req: Requirement, condition: float) -> tuple[np.ndarray, np.ndarray]:
    """Speeds from standstill to runaway and the source's shaft power there at `condition`
    (computed once per requirement and condition)."""
    key = (req.source, req.target.max_rpm, condition)
    if key not in _LINES:
        src = resolve(req.source)
        grid = np.linspace(req.target.max_rpm / 160, req.target.max_rpm, 160)
        _LINES[key] = (
            grid,
            np.asarray(
                src.power_w(grid, src.furled_wind(condition) if src.kind == "wind" else condition),
                dtype=float,
            ),
        )
    return _LINES[key]


def objective_value(req: Requirement, s) -> float:
    """Smaller is better: cost, magnet mass, or minus efficiency or annual energy."""
    return {
        "cost": lambda: s.cost,
        "magnet_mass": lambda: s.magnet_kg,
        "efficiency": lambda: -s.efficiency,
        "annual_energy": lambda: -getattr(s, "annual_kwh", s.power_w),
    }[req.objective]()


def screen(req: Requirement, progress: Callable[[str], None] | None = None) -> list[Screened]:
    cands = candidates(req)
    fields: dict = {}
    for c in cands:
        key = _field_key(c)
        if key not in fields:
            fields[key] = _fundamental_profile(
                c.magnet, c.pitch_radius_mm, c.magnets, c.stator_mm, c.topology,
                MAGNET_GRADES[c.magnet.grade].remanence_t,
            )  # fmt: skip
    if progress:
        progress(f"screen: {len(cands)} candidates, {len(fields)} field layouts")
    cal = _calibration(req, cands, fields)
    out = []
    for c in cands:
        k = cal.get(_cal_key(c))
        if k is None:
            continue
        prof = fields[_field_key(c)]
        out.append(_screen_one(req, c, k * _raw_peak(c, prof), _fundamental_field(c, prof)))
    return out


_REFUSED: list[str] = []  # why the full model or the fit checks refused candidates, this run


def _rated_where_it_runs(req: Requirement, d: Design, text: str, accept) -> tuple[Design, str]:
    """With a source, the design file's rated speed becomes the steady speed at the rated
    condition, so its rated-point checks are made where the machine will run, not at a speed
    nothing holds. Only where the turns do not depend on it (a battery's follow the cut-in, a
    converter's the top speed); the machine is the same, re-run."""
    ta = d.spec.target
    if d.operating is None or ta.kind not in ("battery", "converter"):
        return d, text
    row = min(d.operating.rows, key=lambda r: abs(r.condition - req.rated_condition))
    rpm = float(round(row.rpm))
    low = ta.cut_in_rpm if ta.kind == "battery" else 0.0
    if row.point is None or rpm <= (low or 0) * 1.05 or abs(rpm / ta.rated_rpm - 1) < 0.05:
        return d, text
    new = text.replace(f"rated_rpm = {ta.rated_rpm:g}\n", f"rated_rpm = {rpm:g}\n", 1)
    try:
        again = compute_design(_spec(new))
        if accept is not None:
            accept(again)
    except DesignError:
        return d, text
    return again, new


def _finer_strands(d: Design, text: str, accept) -> tuple[Design, str]:
    """Where the wire's own eddy loss is flagged, the thinner strands layout.advice tries for
    it, each re-run in full; the one with the best rated efficiency is kept if it beats the
    design's without giving up more than FINER_OUTPUT_LOSS of its rated output, and with no
    more than MAX_STRANDS_IN_HAND strands to wind together."""
    from layout.advice import _output_w, _thinner_strands

    if not any(w.code == "coil.wire_eddy" for w in d.warnings):
        return d, text
    best = (d.prediction.rated.efficiency, d, text)
    floor = (1 - FINER_OUTPUT_LOSS) * _output_w(d)
    for key, cap in _thinner_strands(d):
        line = f"{key.split('.')[1]} = "
        start = text.index(line)
        new = text[:start] + f"{line}{cap:g}" + text[text.index("\n", start) :]
        try:
            again = compute_design(_spec(new))
            if accept is not None:
                accept(again)
        except DesignError:
            continue
        if again.prediction.wire.strands > MAX_STRANDS_IN_HAND:
            continue
        if again.prediction.rated.efficiency > best[0] and _output_w(again) >= floor:
            best = (again.prediction.rated.efficiency, again, new)
    return best[1], best[2]


FINER_OUTPUT_LOSS = 0.02  # our choice: thinner strands may cost this much output for their efficiency
MAX_STRANDS_IN_HAND = 8  # more than this wound together by hand tangle and cross (common practice)


def _full(req: Requirement, s: Screened, accept, printed_mm=None) -> Result | None:
    text = design_text(req, s.candidate, steel_mm=s.steel_mm or None)
    try:
        d = compute_design(_spec(text))
        if accept is not None:
            accept(d)
    except DesignError as exc:
        _REFUSED.append(str(exc).split(": ", 1)[-1])
        return None
    d, text = _rated_where_it_runs(req, d, text, accept)
    d, text = _finer_strands(d, text, accept)
    pr, lim = d.prediction, req.limits
    rated = pr.rated
    out_w = rated.delivered_w if rated.delivered_w is not None else rated.dc_power_w
    hottest = rated.coil_temperature_c
    if d.operating is not None:
        # with a source, the figures are those where it holds the shaft
        rows = d.operating.rows
        row = min(rows, key=lambda r: abs(r.condition - req.rated_condition))
        out_w = row.load_power_w
        turning = [r.point for r in rows if r.point is not None]
        hottest = max((p.coil_temperature_c for p in turning), default=hottest)
        rated = row.point or rated
    disc_mm = 2 * disc_outer_radius_mm(d.spec)
    limit_c = lim.max_coil_temperature_c or STATOR_BINDERS_MAX_C[lim.binder]
    mg = s.candidate.magnet
    discs = 2 if s.candidate.topology == "two_discs" else 1
    magnet_kg = d.forces.magnet_mass_g * s.candidate.magnets * discs / 1000
    pr_ = req.prices
    magnet_cost = (
        s.candidate.magnets * discs * mg.price_each
        if mg.price_each is not None
        else magnet_kg * pr_.magnet_per_kg
    )
    cost = (
        s.cost
        - (s.magnet_kg * pr_.magnet_per_kg if mg.price_each is None else 0)
        + (0 if mg.price_each is not None else magnet_cost)
    )
    cost += (pr.copper_mass_kg - s.copper_kg) * pr_.copper_per_kg
    figures = {
        "rated_power_w": (out_w, req.rated_power_w, +1),
        "max_coil_temperature_c": (hottest, limit_c, -1),
        "min_efficiency": (rated.efficiency, lim.min_efficiency, +1),
        "max_disc_diameter_mm": (disc_mm, lim.max_disc_diameter_mm, -1),
        **({"budget": (cost, lim.budget, -1)} if lim.budget is not None else {}),
        **(
            {"print_bed_mm": (printed_mm(d), lim.print_bed_mm, -1)}
            if lim.print_bed_mm is not None and printed_mm is not None
            else {}
        ),
    }
    fails, binding = [], []
    for name, (value, bound, sense) in figures.items():
        if (value - bound) * sense < 0:
            fails.append(name)
        elif abs(value - bound) <= 0.05 * abs(bound) and bound > 0:
            binding.append(name)
    if lim.elv_at_runaway and above_extra_low_voltage(pr):
        fails.append("elv_at_runaway")
    # the extra-low-voltage warning is the elv_at_runaway limit's: met, missed or waived there
    dangers = sorted(
        w.code
        for w in d.warnings
        if w.severity == "danger" and w.code not in INHERENT and w.code != "voltage.above_elv"
    )
    fails += [f"danger {c}" for c in dangers]
    annual = d.operating.energy.get("annual_kwh", 0.0) if d.operating is not None else 0.0
    figure = {
        "cost": out_w,
        "magnet_mass": magnet_kg,
        "efficiency": rated.efficiency,
        "annual_energy": annual,
    }
    return Result(0, d, text, cost, magnet_kg, pr.copper_mass_kg, disc_mm, out_w,
                  tuple(binding), tuple(fails), s.peak_per_turn,
                  rated.efficiency, hottest, figure[req.objective])  # fmt: skip


def objective_words(req: Requirement, figure: bool = False) -> str:
    """The objective for a reader, or (figure) what the trade-off picture plots against cost."""
    if figure:
        return {"cost": "output (W)", "magnet_mass": "magnet mass (kg)", "efficiency": "efficiency",
                "annual_energy": "energy (kWh a year)"}[req.objective]  # fmt: skip
    return {"cost": "lowest cost", "magnet_mass": "lowest magnet mass", "efficiency": "highest efficiency",
            "annual_energy": "most energy a year"}[req.objective]  # fmt: skip


def _objective_full(req: Requirement, r: Result) -> float:
    """Smaller is better, on the figures the table shows (with a source, where it runs)."""
    if req.objective == "cost":
        return r.cost
    if req.objective == "magnet_mass":
        return r.magnet_kg
    return -r.figure  # efficiency, annual energy


def size(
    req: Requirement,
    top: int = 5,
    progress: Callable[[str], None] | None = None,
    accept: Callable[[Design], None] | None = None,
    full_checks: int = FULL_CHECKS,
    relax: bool = True,
    printed_mm: Callable[[Design], float] | None = None,
) -> Sizing:
    """Screen every candidate, re-check the best `full_checks` in full, rank by the objective.
    `accept(design)` may raise DesignError to refuse one (the build's fit checks);
    `printed_mm(design)`, the largest printed part's size, is held to limits.print_bed_mm
    (the writers know the parts; layout does not). When none
    meets the requirement and `relax`, the limits the nearest misses are relaxed one at a
    time and the search re-run, to say what each would give."""
    t0 = time.perf_counter()
    _REFUSED.clear()
    screened = screen(req, progress)
    ok = sorted((s for s in screened if s.ok), key=lambda s: objective_value(req, s))
    # then those the screen doubts, nearest in output first: re-checked where the full
    # checks reach that far (a small search space is then searched exhaustively)
    doubted = sorted((s for s in screened if not s.ok), key=lambda s: -s.power_w)
    # the best of each geometry first (counts, magnet, radius), then their variants
    # (connection, stator, cut-in): the screen's figures are rough, so breadth before depth
    firsts, rest, seen = [], [], set()
    for s in ok:
        c = s.candidate
        key = (c.coils, c.magnets, c.magnet, c.pitch_radius_mm)
        (rest if key in seen else firsts).append(s)
        seen.add(key)
    picked = (firsts + rest + doubted)[: max(full_checks, top)]
    results = []
    for k, s in enumerate(picked, start=1):
        if progress:
            progress(
                f"full model {k}/{len(picked)}: {s.candidate.coils} coils, {s.candidate.magnets} magnets"
            )
        r = _full(req, s, accept, printed_mm)
        if r is not None:
            results.append(r)
    results.sort(key=lambda r: (bool(r.fails), _objective_full(req, r) if not r.fails else len(r.fails)))
    results = [dataclasses.replace(r, rank=i) for i, r in enumerate(results, start=1)]
    closest = ""
    if not results or results[0].fails:
        closest = _closest(req, results)
        if relax and results:
            closest += _relaxed(req, results[0], accept, progress, printed_mm)
    return Sizing(req, len(screened), time.perf_counter() - t0, tuple(results), closest)


# How far each limit is relaxed to say what it would give: a factor, or the value itself
# (elv_at_runaway waived: the machine guarded as above extra-low voltage; no print bed: the
# mould printed in parts or made another way).
RELAX = {
    "max_disc_diameter_mm": 1.25,
    "budget": 1.5,
    "min_efficiency": -0.1,
    "elv_at_runaway": False,
    "print_bed_mm": None,
}


def _relaxed_value(req: Requirement, name: str):
    step, value = RELAX[name], getattr(req.limits, name)
    if isinstance(step, bool) or step is None:
        return step
    return max(0.0, round(value + step, 2)) if step < 0 else round(value * step)


def _relax_words(name: str, to) -> str:
    if to is None:
        return f"dropping limits.{name}"
    return f"limits.{name} = {str(to).lower() if isinstance(to, bool) else f'{to:g}'}"


def _relaxed(req: Requirement, nearest: Result, accept, progress, printed_mm=None) -> str:
    """What relaxing each limit the nearest candidate misses would give, the search re-run:
    one at a time, then (when no one alone is enough) all of them together."""
    misses = list(nearest.fails)
    # too little output or too hot: a larger disc carries more magnet and copper
    if {"rated_power_w", "max_coil_temperature_c"} & set(misses) and "max_disc_diameter_mm" not in misses:
        misses.append("max_disc_diameter_mm")
    changes = {}
    for name in misses:
        if name in RELAX and getattr(req.limits, name) not in (None, False):
            changes[name] = _relaxed_value(req, name)
    trials = [{k: v} for k, v in changes.items()]
    if len(changes) > 1:
        trials.append(changes)
    words, any_met = [], False
    for k, change in enumerate(trials):
        if k == len(changes) and any_met:
            break  # one alone was enough: no need to relax them all
        said = " with ".join(_relax_words(n, v) for n, v in change.items())
        if progress:
            progress(f"relaxing: {said}")
        again = size(
            replace_limits(req, **change), top=1, accept=accept, full_checks=8, relax=False,
            printed_mm=printed_mm,
        )  # fmt: skip
        best = again.results[0] if again.results else None
        if best is not None and not best.fails:
            any_met = True
            words.append(
                f"{said} would give {best.output_w:.0f} W for {best.cost:.0f} "
                f"{req.prices.currency} ({best.design.spec.stator.coil_positions} coils, "
                f"{best.design.spec.magnets.count} magnets)"
            )
        else:
            words.append(f"{said} {'together are' if len(change) > 1 else 'alone is'} not enough")
    return (". Relaxed: " + "; ".join(words)) if words else ""


def _closest(req: Requirement, results: list[Result]) -> str:
    """When nothing meets the requirement: the re-checked candidate nearest to it, the limits
    it misses and by how much."""
    if not results:
        why = f" (the first refused: {_REFUSED[0]})" if _REFUSED else ""
        return (
            "no candidate could be built within limits.max_disc_diameter_mm "
            f"({req.limits.max_disc_diameter_mm:g} mm) from this stock{why}: allow a larger disc "
            "or add magnets"
        )
    best = results[0]
    d = best.design
    words = []
    for f in best.fails:
        if f == "rated_power_w":
            words.append(f"it gives {best.output_w:.0f} W of the {req.rated_power_w:g} W asked")
        elif f == "max_disc_diameter_mm":
            words.append(f"its disc is {best.disc_mm:.0f} mm")
        elif f == "max_coil_temperature_c":
            words.append(f"its coils reach {d.prediction.rated.coil_temperature_c:.0f} °C")
        elif f == "min_efficiency":
            words.append(f"its efficiency is {d.prediction.rated.efficiency:.0%}")
        elif f == "budget":
            words.append(f"it costs {best.cost:.0f} {req.prices.currency}")
        elif f == "elv_at_runaway":
            pr = d.prediction
            words.append(
                f"unloaded at runaway ({d.spec.target.max_rpm:g} rpm) it gives "
                f"{pr.open_circuit_dc_peak_at_max_v:.0f} V DC, above extra-low voltage ({ELV_DC_V:g} V DC)"
            )
        elif f == "print_bed_mm":
            words.append(f"its largest printed part is over the {req.limits.print_bed_mm:g} mm bed")
        elif f.startswith("danger "):
            code = f.split(" ", 1)[1]
            msg = next((w.message for w in d.warnings if w.code == code), code)
            words.append(f"{code}: {msg.split(': ')[0].rstrip('.')}")
        else:
            words.append(f)
    return f"nearest: candidate 1 ({best.design.spec.name}); " + "; ".join(words)
