"""Rotor balance: ISO 21940-11 permissible unbalance and magnet placement from weighed magnets.

Unbalance of a disc is the vector U = Σ m_k·r_k (g·mm) of everything on it, taken about
the shaft axis. ISO 21940-11:2016 (formerly ISO 1940-1) gives the permissible residual
unbalance U_per = 1000·G·m/Ω [g·mm] for balance grade G [mm/s], rotor mass m [kg] and
maximum service speed Ω [rad/s].
"""

from __future__ import annotations

import csv
import dataclasses
import io
import math
from dataclasses import dataclass

import numpy as np

from layout.rotor import (
    balance_positions,
    disc_place,
    is_plain_disc,
    part_angle_deg,
    pocket_clearance_mm,
    pocket_marks,
    rotor_discs,
)

# Balance grades of ISO 21940-11 (mm/s).
GRADES = {"G0.4": 0.4, "G1": 1.0, "G2.5": 2.5, "G6.3": 6.3, "G16": 16.0, "G40": 40.0}
MONTE_CARLO_TRIALS = 4000
_SWAP_ROUNDS = 200
EXHAUSTIVE_UP_TO = 8  # pockets per disc up to which every placement is tried
RESTARTS = 48


def permissible_unbalance_gmm(grade_mm_s: float, mass_kg: float, rpm: float) -> float:
    """U_per = 1000·G·m/Ω, ISO 21940-11 (g·mm)."""
    omega = rpm * 2 * math.pi / 60
    return 1000.0 * grade_mm_s * mass_kg / omega


def plane_allowances(u_per_gmm: float, dist_a_mm: float, dist_b_mm: float) -> tuple[float, float]:
    """Share of U_per for two correction planes at distances a, b from the centre of mass.

    ISO 21940-11 allocates in inverse proportion to the distance: U_A = U_per·b/(a+b),
    U_B = U_per·a/(a+b); equal halves for planes symmetric about the centre of mass.
    """
    total = dist_a_mm + dist_b_mm
    if total <= 0:
        return u_per_gmm / 2, u_per_gmm / 2
    return u_per_gmm * dist_b_mm / total, u_per_gmm * dist_a_mm / total


def unbalance_vector(masses_g: np.ndarray, angles_rad: np.ndarray, radius_mm: float) -> complex:
    """Σ m·r·e^{iθ} in g·mm as a complex number (x + iy)."""
    return complex(np.sum(np.asarray(masses_g) * radius_mm * np.exp(1j * np.asarray(angles_rad))))


def best_placement(
    masses_g: np.ndarray, angles_rad: np.ndarray, radius_mm: float, base_gmm: complex = 0j
) -> np.ndarray:
    """Which magnet goes in which pocket to make |base + Σ m·r·e^{iθ}| small.

    Returns perm with magnet perm[j] in pocket j. Start from heavy magnets spread round the
    ring (heaviest, then the next opposite it, ...), then pairwise swaps while any swap
    lowers the resultant: a local optimum that is exact on small cases and never worse than
    where it started.
    """
    m = np.asarray(masses_g, dtype=float)
    n = len(m)
    e = np.exp(1j * np.asarray(angles_rad)) * radius_mm
    # Spread order: pockets visited so that consecutive picks are far apart round the ring.
    order = np.argsort(-m, kind="stable")
    visit = []
    step = n // 2 + (1 if n % 4 == 0 and n > 2 else 0)
    if math.gcd(step, n) != 1:
        step = next(s for s in range(n // 2, 0, -1) if math.gcd(s, n) == 1)
    k = 0
    for _ in range(n):
        visit.append(k)
        k = (k + step) % n
    perm = np.empty(n, dtype=int)
    perm[visit] = order
    if n <= EXHAUSTIVE_UP_TO:
        return _exhaustive(m, e, base_gmm)
    best = _improve(m, e, perm, base_gmm)
    best_u = abs(base_gmm + np.sum(m[best] * e))
    rng = np.random.default_rng(0)
    for _ in range(RESTARTS):  # swaps alone stall in local optima; restarts escape most
        cand = _improve(m, e, rng.permutation(n), base_gmm)
        u = abs(base_gmm + np.sum(m[cand] * e))
        if u < best_u:
            best, best_u = cand, u
    return best


def _exhaustive(m: np.ndarray, e: np.ndarray, base: complex) -> np.ndarray:
    """Every placement, for small rings (8 pockets: 40 320 of them)."""
    import itertools

    perms = np.array(list(itertools.permutations(range(len(m)))))
    u = np.abs(base + (m[perms] * e[None, :]).sum(axis=1))
    return perms[int(np.argmin(u))].copy()


def _improve(m: np.ndarray, e: np.ndarray, perm: np.ndarray, base: complex) -> np.ndarray:
    u = base + np.sum(m[perm] * e)
    for _ in range(_SWAP_ROUNDS):
        # Swapping pockets i and j changes U by (m_j − m_i)(e_i − e_j); try all pairs at once.
        mi = m[perm]
        dm = mi[None, :] - mi[:, None]  # m_j − m_i
        de = e[:, None] - e[None, :]  # e_i − e_j
        new = np.abs(u + dm * de)
        i, j = np.unravel_index(int(np.argmin(new)), new.shape)
        if new[i, j] >= abs(u) * (1 - 1e-12) - 1e-12:
            break
        perm[i], perm[j] = perm[j], perm[i]
        u = base + np.sum(m[perm] * e)
    return perm


def split_between_discs(masses_g: np.ndarray, per_disc: int) -> tuple[np.ndarray, np.ndarray]:
    """Deal sorted masses alternately so both discs get about the same total and spread."""
    order = np.argsort(-np.asarray(masses_g), kind="stable")
    a, b = [], []
    for k, idx in enumerate(order):
        # ABBA dealing keeps the totals closest for sorted values.
        (a if k % 4 in (0, 3) else b).append(int(idx))
    if len(a) != per_disc:  # odd counts: move the lightest surplus
        while len(a) > per_disc:
            b.append(a.pop())
        while len(b) > per_disc:
            a.append(b.pop())
    return np.array(a), np.array(b)


@dataclass(frozen=True)
class Correction:
    needed: bool
    add_g: float  # mass to add at radius_mm, angle_deg
    radius_mm: float
    angle_deg: float  # nearest balance position to the ideal angle
    ideal_angle_deg: float  # opposite the unbalance; disc angles as marked on the part
    residual_after_gmm: float  # with the mass added at the nearest position
    remove_g: float  # or material to remove opposite (at ideal_angle_deg + 180)


def correction_for(
    u_gmm: complex, limit_gmm: float, radius_mm: float, positions_deg: tuple[float, ...]
) -> Correction:
    """Mass to add at the balance position nearest to opposite the unbalance."""
    mag = abs(u_gmm)
    ideal = (math.degrees(math.atan2(u_gmm.imag, u_gmm.real)) + 180.0) % 360.0
    if not positions_deg:
        positions_deg = (ideal,)
    d = [abs((p - ideal + 180) % 360 - 180) for p in positions_deg]
    pos = positions_deg[int(np.argmin(d))]
    off = math.radians(min(d))
    # Add only the component that cancels along the chosen position.
    add = mag * math.cos(off) / radius_mm if mag > 0 else 0.0
    after = u_gmm + add * radius_mm * complex(math.cos(math.radians(pos)), math.sin(math.radians(pos)))
    return Correction(
        needed=mag > limit_gmm,
        add_g=add,
        radius_mm=radius_mm,
        angle_deg=pos,
        ideal_angle_deg=ideal,
        residual_after_gmm=abs(after),
        remove_g=mag / radius_mm,
    )


@dataclass(frozen=True)
class WeighedMagnet:
    id: str
    mass_g: float


class MassListError(ValueError):
    """A bad magnet mass list; str() is one line naming the file, line and value."""


MASS_OUTLIER_PCT = (
    5.0  # a magnet this far off the median is chipped, cracked or another size (common practice)
)
OUNCE_G = 28.349523125  # avoirdupois ounce (international yard and pound agreement, 1959)


def _unit_slip(median_g: float, nominal_g: float) -> str | None:
    """What a list whose median is far from the design's magnet probably holds instead of grams."""
    ratio = median_g / nominal_g
    if 0.5e-3 <= ratio <= 2e-3:
        return "kilograms"
    if 0.5 / OUNCE_G <= ratio <= 2 / OUNCE_G:
        return "ounces"
    if 0.5e3 <= ratio <= 2e3:
        return "milligrams"
    return None


def read_masses(text: str, source: str, expected: int, nominal_g: float | None = None) -> list[WeighedMagnet]:
    """Parse `id,mass_g` CSV text; every problem is a MassListError with one line.

    With the design's nominal magnet mass (g), a list in another unit (kilograms, ounces,
    milligrams) and a magnet more than MASS_OUTLIER_PCT off the median are refused too.
    """
    rows = list(csv.reader(io.StringIO(text)))
    rows = [(n + 1, r) for n, r in enumerate(rows) if r and any(c.strip() for c in r)]
    if not rows:
        raise MassListError(f"{source}: is empty; expected a header id,mass_g and {expected} rows")
    line, header = rows[0]
    if [c.strip().lower() for c in header] != ["id", "mass_g"]:
        raise MassListError(f"{source}: line {line}: header {','.join(header)!r}: must be id,mass_g")
    out: list[WeighedMagnet] = []
    seen: set[str] = set()
    for line, row in rows[1:]:
        if len(row) != 2:
            raise MassListError(f"{source}: line {line}: {','.join(row)!r}: need two fields, id,mass_g")
        ident, raw = row[0].strip(), row[1].strip()
        if not ident:
            raise MassListError(f"{source}: line {line}: id is missing")
        if ident in seen:
            raise MassListError(f"{source}: line {line}: id {ident!r} appears twice")
        try:
            mass = float(raw)
        except ValueError:
            raise MassListError(
                f"{source}: line {line}: mass_g = {raw!r}: must be a number in grams"
            ) from None
        if not math.isfinite(mass) or mass <= 0:
            raise MassListError(f"{source}: line {line}: mass_g = {raw}: must be a positive mass in grams")
        seen.add(ident)
        out.append(WeighedMagnet(ident, mass))
    if len(out) != expected:
        raise MassListError(f"{source}: {len(out)} magnets listed: the rotor takes {expected}")
    median = float(np.median([m.mass_g for m in out]))
    if nominal_g is not None and not 0.5 <= median / nominal_g <= 2:
        unit = _unit_slip(median, nominal_g)
        hint = f"; it looks like {unit}: give every mass in grams" if unit else "; check the unit (grams)"
        raise MassListError(
            f"{source}: mass_g: the median is {median:g}, the design's magnet about {nominal_g:.1f} g{hint}"
        )
    for m in out:
        off = 100 * (m.mass_g - median) / median
        if abs(off) > MASS_OUTLIER_PCT:
            raise MassListError(
                f"{source}: magnet {m.id!r}: {m.mass_g:g} g is {off:+.1f} % off the median {median:g} g "
                f"(more than {MASS_OUTLIER_PCT:g} %): chipped or another size? weigh it again or set it aside"
            )
    return out


def clearance_floor_gmm(magnet_g: float, clearance_mm: float, count: int) -> float:
    """RMS unbalance (g·mm) of `count` magnets of `magnet_g` each free to sit anywhere within
    `clearance_mm` of their places: offsets uniform over a disc of that radius have
    E|δ|² = c²/2, and independent ones add in power, so U_rms = m·c·√(count/2)."""
    return magnet_g * clearance_mm * math.sqrt(count / 2)


def monte_carlo_unbalance(
    nominal_g: float,
    tolerance_pct: float,
    angles_rad: np.ndarray,
    radius_mm: float,
    seed: int = 1,
    base_gmm: complex = 0j,
) -> np.ndarray:
    """|U| (g·mm) of one disc with magnets of uniformly random mass within ±tolerance, placed
    as they come. A tolerance band read as a uniform spread is the pessimistic reading
    (common practice)."""
    rng = np.random.default_rng(seed)
    n = len(angles_rad)
    masses = nominal_g * (1 + rng.uniform(-1, 1, (MONTE_CARLO_TRIALS, n)) * tolerance_pct / 100)
    e = np.exp(1j * np.asarray(angles_rad)) * radius_mm
    return np.abs(base_gmm + masses @ e)


@dataclass(frozen=True)
class PocketAssignment:
    pocket: int  # 1..P, pocket 1 at 0°, counted the way the angles increase
    magnet: str  # magnet id from the mass list, or "any" without one
    face: str  # "N" or "S": the face that is up with the disc lying magnet side up
    mass_g: float


@dataclass(frozen=True)
class DiscBalance:
    disc: int  # 1 lower (or only), 2 upper
    mass_kg: float  # disc with magnets
    unbalance_before_gmm: float  # magnets in listed order (nominal: the disc alone)
    unbalance_after_gmm: float  # with the assignment below
    permissible_gmm: float  # this disc's share of U_per (its correction plane)
    assignment: tuple[PocketAssignment, ...]
    correction: Correction
    clearance_floor_gmm: float = 0.0  # what the magnets' play in their places alone leaves (rms)

    @property
    def below_floor(self) -> bool:
        """The placement's residual is smaller than the clearance lets anyone build."""
        return self.unbalance_after_gmm < self.clearance_floor_gmm


@dataclass(frozen=True)
class RotorBalance:
    grade: str
    grade_mm_s: float
    max_rpm: float
    rotor_mass_kg: float
    permissible_gmm: float  # whole rotor, ISO 21940-11
    discs: tuple[DiscBalance, ...]
    static_unbalance_gmm: float  # |U1 + U2|
    couple_unbalance_gmm_mm: float  # |U1 − U2|·spacing/2, g·mm²
    weighed: bool
    expected_unweighed_p95_gmm: float  # Monte Carlo, magnets as they come, per disc
    weighing_advice: str
    procedure: tuple[str, ...]
    cautions: tuple[str, ...]


@dataclass(frozen=True)
class DiscBody:
    """A bare rotor disc as built: its mass and where its centre of mass lies."""

    disc: int
    mass_kg: float
    com_offset_mm: tuple[float, float]  # from the shaft axis, in the disc's plane
    z_mm: float  # axial position of its mid-plane


BENCH_PROCEDURE = (
    "Fit the disc, with its magnets set and cured, on a true shaft and rest the shaft on two "
    "level knife edges or straight rails (or a balancing stand).",
    "Let it roll and settle three times from different starting angles; if it stops with the "
    "same point down each time, that point is heavy.",
    "Tape a trial mass at the balance position opposite the heavy point; increase it until the "
    "disc stays where it is put at any angle.",
    "Fix the final mass (screw, rivet or epoxied steel) at that position or remove the same "
    "mass from the heavy side; repeat the check.",
    "With two discs, balance each disc alone, then mount both and check again.",
)
CAUTIONS = (
    "Guard the rotor before the first spin; nobody stands in the plane of the discs.",
    "First spins slow, by hand or at a fraction of the rated speed; stop at any knock, rub or vibration.",
    "Magnets snap onto steel and each other: keep them apart, handle one at a time, wear eye "
    "protection; keep them away from anyone with a pacemaker.",
)


def disc_plane_z_mm(design, disc: int) -> float:
    """Where along the shaft a disc's mass and its correction count (mm): the magnets' centre
    plane of a magnet disc, the mid-plane of a plain steel disc."""
    spec, geo = design.spec, design.geometry
    if is_plain_disc(spec, disc):
        place = disc_place(spec, geo, disc)
        return (place.front_z_mm + place.back_z_mm) / 2
    return next(m.center_mm[2] for m in geo.magnets if m.disc == disc)


def nominal_disc_bodies(design) -> tuple[DiscBody, ...]:
    """Bare discs as perfect annuli (no solids built): centred, mass from the model."""
    f = design.forces
    return tuple(
        DiscBody(
            disc,
            f.steel_disc_mass_kg if is_plain_disc(design.spec, disc) else f.disc_mass_kg,
            (0.0, 0.0),
            disc_plane_z_mm(design, disc),
        )
        for disc in rotor_discs(design.spec)
    )


def _correction_ring(design) -> tuple[float, tuple[float, ...]]:
    """Radius and machine angles of the balance holes (or, without room for them, places
    midway between the magnets at the pitch radius, for a glued mass)."""
    bp = balance_positions(design.spec, design.forces.disc_outer_radius_mm)
    if bp is not None:
        return bp.radius_mm, bp.angles_deg
    p = design.spec.magnets.count
    return design.spec.magnets.pitch_radius_mm, tuple(360.0 * (k + 0.5) / p for k in range(p))


def _on_part(disc: int, c: Correction) -> Correction:
    """Angles as marked on the part (disc 2 is made magnet side up, so mirrored)."""
    return dataclasses.replace(
        c,
        angle_deg=part_angle_deg(disc, c.angle_deg),
        ideal_angle_deg=part_angle_deg(disc, c.ideal_angle_deg),
    )


def balance_rotor(
    design,
    bodies: tuple[DiscBody, ...],
    masses: list[WeighedMagnet] | None,
    grade: str = "G6.3",
) -> RotorBalance:
    """ISO 21940-11 check of every disc and, with weighed magnets, where each one goes."""
    spec = design.spec
    mg = spec.magnets
    g = GRADES[grade]
    rpm = spec.target.max_rpm
    r = mg.pitch_radius_mm
    nominal_g = design.forces.magnet_mass_g
    per_disc = mg.count
    discs = [b.disc for b in bodies]
    mags = {d: [m for m in design.geometry.magnets if m.disc == d] for d in discs}
    carrying = [d for d in discs if mags[d]]  # a plain steel disc has no magnets to place
    marks = {d: pocket_marks(design.geometry, d) for d in discs}
    ang = {d: np.radians([m.rotation_deg for m in mags[d]]) for d in discs}
    if masses is not None:
        listed = np.array([m.mass_g for m in masses])
        ids = [m.id for m in masses]
        listed_sets = {d: np.arange(k * per_disc, (k + 1) * per_disc) for k, d in enumerate(carrying)}
        if len(carrying) == 2:
            a, b = split_between_discs(listed, per_disc)
            chosen = {carrying[0]: a, carrying[1]: b}
        else:
            chosen = {carrying[0]: np.arange(per_disc)}
    magnets_g = len(carrying) * per_disc * nominal_g if masses is None else sum(m.mass_g for m in masses)
    rotor_mass = sum(b.mass_kg for b in bodies) + magnets_g / 1000
    u_per = permissible_unbalance_gmm(g, rotor_mass, rpm)
    if len(bodies) == 2:
        zc = sum(b.z_mm * b.mass_kg for b in bodies) / sum(b.mass_kg for b in bodies)
        share = plane_allowances(u_per, abs(bodies[0].z_mm - zc), abs(bodies[1].z_mm - zc))
    else:
        share = (u_per,)
    bal_r, bal_angles = _correction_ring(design)
    out: list[DiscBalance] = []
    vectors = []
    p95, limit = 0.0, min(share)
    for k, body in enumerate(bodies):
        d = body.disc
        base = complex(*body.com_offset_mm) * body.mass_kg * 1000  # g·mm
        n_d = len(mags[d])
        if n_d:  # each magnet disc's spread against its own share of U_per
            spread = monte_carlo_unbalance(nominal_g, mg.mass_tolerance_pct, ang[d], r, base_gmm=base)
            mine = float(np.percentile(spread, 95))
            if p95 == 0.0 or mine / share[k] > p95 / limit:
                p95, limit = mine, share[k]
        if masses is None or not n_d:
            before = after = base + unbalance_vector(np.full(n_d, nominal_g), ang[d], r)
            assignment = tuple(PocketAssignment(mk.pocket, "any", mk.face_up, nominal_g) for mk in marks[d])
            mass_kg = body.mass_kg + n_d * nominal_g / 1000
        else:
            before = base + unbalance_vector(listed[listed_sets[d]], ang[d], r)
            pool = chosen[d]
            perm = best_placement(listed[pool], ang[d], r, base)
            placed = pool[perm]
            after = base + unbalance_vector(listed[placed], ang[d], r)
            assignment = tuple(
                PocketAssignment(mk.pocket, ids[placed[j]], mk.face_up, float(listed[placed[j]]))
                for j, mk in enumerate(marks[d])
            )
            mass_kg = body.mass_kg + float(listed[placed].sum()) / 1000
        vectors.append(after)
        corr = _on_part(d, correction_for(after, share[k], bal_r, bal_angles))
        out.append(
            DiscBalance(
                disc=d,
                mass_kg=mass_kg,
                unbalance_before_gmm=abs(before),
                unbalance_after_gmm=abs(after),
                permissible_gmm=share[k],
                assignment=assignment,
                correction=corr,
                clearance_floor_gmm=clearance_floor_gmm(nominal_g, pocket_clearance_mm(spec), n_d),
            )
        )
    static = abs(sum(vectors))
    couple = 0.0
    if len(bodies) == 2:
        couple = abs(vectors[0] - vectors[1]) * abs(bodies[0].z_mm - bodies[1].z_mm) / 2
    if masses is not None:
        advice = "Magnets placed from their weighed masses as listed below."
    elif p95 > limit:
        advice = (
            f"Weigh and sort the magnets: placed as they come, 1 rotor in 20 would exceed "
            f"{p95:.0f} g·mm against {limit:.0f} g·mm allowed at {rpm:g} rpm."
        )
    elif p95 > 0.3 * limit:
        advice = (
            f"Weighing is worth it: unsorted magnets use up to {p95 / limit:.0%} of the "
            f"{limit:.0f} g·mm allowed at {rpm:g} rpm (1 rotor in 20)."
        )
    else:
        advice = (
            f"Weighing is not needed at {rpm:g} rpm: unsorted magnets stay under "
            f"{p95:.1f} g·mm against {limit:.0f} g·mm allowed (1 rotor in 20)."
        )
    return RotorBalance(
        grade=grade,
        grade_mm_s=g,
        max_rpm=rpm,
        rotor_mass_kg=rotor_mass,
        permissible_gmm=u_per,
        discs=tuple(out),
        static_unbalance_gmm=static,
        couple_unbalance_gmm_mm=couple,
        weighed=masses is not None,
        expected_unweighed_p95_gmm=p95,
        weighing_advice=advice,
        procedure=BENCH_PROCEDURE,
        cautions=CAUTIONS,
    )
