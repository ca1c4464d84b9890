"""Winding layout by the star of slots.

Coil position k of Q (numbered from 1, position 1 at 0°) sits at mechanical angle
α = 2π(k−1)/Q. Under P alternating magnets (p = P/2 pole pairs) its EMF phasor as wound has
electrical angle −p·α: the rotor turning towards +α reaches the coil later, so its EMF lags.
Bianchi & Dai Prè, "Use of the star of slots in designing fractional-slot single-layer
synchronous motors", IEE Proc. Electr. Power Appl. 153(3), 2006.

Three phases take 60° belts (+A, −B, +C, −A, +B, −C around the star); a coil in a "−" belt
is connected reversed. Single phase takes the half plane that maximises the series sum.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

PHASE_NAMES = ("A", "B", "C")
# IEC 60034-8 terminal letters for phases A, B, C of the layout; each winding runs 1 → 2.
TERMINAL_LETTERS = {"A": "U", "B": "V", "C": "W"}


def terminal_pair(phase: str) -> tuple[str, str]:
    """The IEC 60034-8 markings of one phase winding's start and end, e.g. ("U1", "U2")."""
    t = TERMINAL_LETTERS[phase]
    return f"{t}1", f"{t}2"


def terminal_markings(phases: int) -> tuple[str, ...]:
    """Every lead of the stator by its IEC 60034-8 marking: U1, U2 (, V1, V2, W1, W2)."""
    return tuple(m for ph in PHASE_NAMES[:phases] for m in terminal_pair(ph))


def electrical_hz(pole_pairs: int, rpm):
    """Electrical frequency (Hz) at a shaft speed (rpm): f = p·rpm/60 (f = P·rpm/120)."""
    return pole_pairs * np.asarray(rpm, dtype=float) / 60


# Belt b (60° wide, counted from the offset) → (phase index, polarity).
_BELTS = ((0, +1), (1, -1), (2, +1), (0, -1), (1, +1), (2, -1))
_BELT_PHASE = np.array([b[0] for b in _BELTS])
_BELT_SIGN = np.array([b[1] for b in _BELTS])
_ANGLE_TOL_DEG = 0.1  # phases 120° apart within this
_REL_TOL = 1e-6


@dataclass(frozen=True)
class Coil:
    index: int  # position number, 1..Q
    angle_deg: float  # mechanical angle of the coil's centre line
    phasor_deg: float  # electrical angle of its EMF as wound, relative to position 1
    phase: str  # "A", "B", "C"
    polarity: int  # +1 as wound, -1 connected reversed
    path: int  # parallel path number, 1..a


@dataclass(frozen=True)
class Layout:
    coil_positions: int
    magnets: int
    phases: int
    empty_positions: tuple[int, ...]
    coils: tuple[Coil, ...]
    pole_pairs: int
    periodicity: int  # t = gcd(Q, p)
    rotational_symmetry: int  # gcd(Q, P): how many identical sectors the forces see
    balanced: bool
    distribution_factor: float  # smallest over the phases
    pitch_factor: float  # tooth coils spanning one position pitch
    winding_factor: float
    as_wound_distribution_factor: float  # every coil connected as wound (single phase)
    phase_angles_deg: tuple[float, ...]  # angle of each phase's EMF sum
    phase_magnitudes: tuple[float, ...]  # |sum of signed unit phasors| per phase
    coils_per_phase: tuple[int, ...]
    cogging_steps: int  # LCM(Q, P) per revolution, with iron teeth only
    unbalanced_pull: bool
    allowed_parallel_paths: tuple[int, ...]
    parallel_paths: int

    def phase_coils(self, phase: str) -> tuple[Coil, ...]:
        """The coils of one phase ("A", "B" or "C"), in position order."""
        return tuple(c for c in self.coils if c.phase == phase)

    @property
    def phase_names(self) -> tuple[str, ...]:
        """("A",) for a single-phase layout, ("A", "B", "C") for three phases."""
        return PHASE_NAMES[: self.phases]

    @property
    def series_coils_per_path(self) -> int:
        """Coils in series in each parallel path of one phase."""
        return self.coils_per_phase[0] // self.parallel_paths


def tooth_pitch_factor(pole_pairs: int, coil_positions: int) -> float:
    """k_p = |sin(p·π/Q)| for a coil spanning one position pitch (tooth coil)."""
    return abs(math.sin(pole_pairs * math.pi / coil_positions))


def coreless_pitch_factor(pole_pairs: int, coil_positions: int) -> float:
    """k_p of a coreless coil as wide as its position allows, at most one pole pitch.

    Without teeth a coil's span is free: its legs' centres can be up to one position pitch
    2π/Q apart, and a span of one pole pitch π/p (k_p = 1) is the most worth having; so
    β = min(2π/Q, π/p) and k_p = |sin(p·β/2)|. Real coils, with legs of finite width, come
    out lower: `plan` gives the factor of the coils as shaped.
    """
    return span_pitch_factor(pole_pairs, min(2 * math.pi / coil_positions, math.pi / pole_pairs))


def span_pitch_factor(pole_pairs: int, span_rad: float) -> float:
    """k_p = |sin(p·β/2)| for a coil whose legs' centres are β (mechanical radians) apart."""
    return abs(math.sin(pole_pairs * span_rad / 2))


def _unit(deg: np.ndarray) -> np.ndarray:
    return np.exp(1j * np.radians(deg))


def _phasors_deg(q: int, p: int, active: np.ndarray) -> np.ndarray:
    """Electrical angle (degrees, [0, 360)) of each active position's EMF as wound."""
    return np.mod(-p * 360.0 * active / q, 360.0)


def _is_balanced(sums: np.ndarray, counts: np.ndarray) -> bool:
    """Equal counts, equal magnitudes, B 120° and C 240° behind A."""
    return bool(_balanced_rows(sums[None], counts[None])[0])


def _balanced_rows(sums: np.ndarray, counts: np.ndarray) -> np.ndarray:
    """For each row of (n, 3) phase sums and counts: equal counts and magnitudes, 120° apart."""
    cmin, cmax = counts.min(axis=1), counts.max(axis=1)
    mags = np.abs(sums)
    ok = (cmin > 0) & (cmin == cmax)
    ok &= mags.min(axis=1) > _REL_TOL * counts[:, 0]
    ok &= (mags.max(axis=1) - mags.min(axis=1)) <= _REL_TOL * mags.max(axis=1)
    ang = np.degrees(np.angle(sums))
    for k in (1, 2):  # B lags A by 120°, C lags A by 240°
        d = (ang[:, 0] - ang[:, k] - 120.0 * k + 180.0) % 360.0 - 180.0
        ok &= np.abs(d) <= _ANGLE_TOL_DEG
    return ok


def _three_phase(theta_deg: np.ndarray):
    """Try belt offsets midway between phasor angles; keep the best-balanced assignment.

    Offsets on a phasor would make the assignment depend on rounding (12 coils under
    14 magnets puts every phasor on a belt edge at offset 0); midpoints never do. Every
    offset is evaluated at once (offsets × coils arrays); ties go to the first offset.
    """
    frac = np.unique(np.round(np.mod(theta_deg, 60.0), 9))
    nxt = np.append(frac[1:], frac[0] + 60.0)
    candidates = np.mod((frac + nxt) / 2.0, 60.0)
    belt = np.floor(np.mod(theta_deg[None, :] - candidates[:, None], 360.0) / 60.0).astype(int) % 6
    belt = (belt - belt[:, :1]) % 6  # the first coil defines +A
    phase, sign = _BELT_PHASE[belt], _BELT_SIGN[belt]
    onehot = phase[..., None] == np.arange(3)  # (offsets, coils, phases)
    sums = ((sign * _unit(theta_deg)[None, :])[..., None] * onehot).sum(axis=1)
    counts = onehot.sum(axis=1)
    kd = np.abs(sums) / np.maximum(counts, 1)
    balanced = _balanced_rows(sums, counts)
    scores = list(
        zip(
            balanced.tolist(),
            np.round(kd.min(axis=1), 9).tolist(),
            (counts.min(axis=1) - counts.max(axis=1)).tolist(),
            strict=True,
        )
    )
    r = max(range(len(candidates)), key=scores.__getitem__)
    return phase[r], sign[r], sums[r], counts[r]


def _single_phase(theta_deg: np.ndarray):
    """The polarities that maximise |Σ s_k·e^{jθ_k}|: s_k = sign(cos(θ_k − u)) for the best u.

    The optimum is a half plane, so only directions just past ±90° of some phasor need trying;
    all of them are evaluated at once, ties to the first.
    """
    u = _unit(theta_deg)
    eps = 1e-7
    cands = np.concatenate([theta_deg, theta_deg + 90 + eps, theta_deg - 90 - eps, theta_deg + 90 - eps])
    proj = np.cos(np.radians(theta_deg)[None, :] - np.radians(cands)[:, None])
    s = np.where(proj >= -1e-12, 1, -1)
    s = np.where(s[:, :1] < 0, -s, s)
    mags = np.abs((s * u[None, :]).sum(axis=1))
    scores = list(zip(np.round(mags, 9).tolist(), (-(s < 0).sum(axis=1)).tolist(), strict=True))
    sign = s[max(range(len(cands)), key=scores.__getitem__)]
    phase = np.zeros(len(theta_deg), dtype=int)
    return phase, sign, np.array([(sign * u).sum()]), np.array([len(theta_deg)])


_SEARCH_BUDGET = 50_000  # nodes of the exact path search before giving up on an `a`


def _key(z: complex) -> tuple[int, int]:
    return (round(z.real * 1e6), round(z.imag * 1e6))


def _exact_split(u: np.ndarray, a: int) -> np.ndarray | None:
    """Partition phasors `u` into `a` equal-size groups of equal sum, by backtracking.

    Each group starts with the lowest coil not yet placed (so no group order is tried
    twice); the last member of a group is looked up rather than searched.
    """
    n = len(u)
    size = n // a
    target = u.sum() / a
    group = np.full(n, -1)
    budget = [_SEARCH_BUDGET]

    def fill(g: int, start: int, need: int, partial: complex) -> bool:
        budget[0] -= 1
        if budget[0] < 0:
            return False
        if need == 1:
            want = _key(target - partial)
            for i in range(start, n):
                if group[i] < 0 and _key(u[i]) == want:
                    group[i] = g
                    if next_group(g + 1):
                        return True
                    group[i] = -1
            return False
        for i in range(start, n):
            if group[i] < 0:
                group[i] = g
                if fill(g, i + 1, need - 1, partial + u[i]):
                    return True
                group[i] = -1
        return False

    def next_group(g: int) -> bool:
        if g == a:
            return True
        first = int(np.flatnonzero(group < 0)[0])
        group[first] = g
        if size == 1:
            ok = _key(u[first]) == _key(target) and next_group(g + 1)
        else:
            ok = fill(g, first + 1, size - 1, u[first])
        if not ok:
            group[first] = -1
        return ok

    return group + 1 if next_group(0) else None


def _path_groups(theta_deg, sign, members: np.ndarray, a: int, exact: bool) -> np.ndarray | None:
    """Split one phase's coils into `a` paths of equal EMF (equal signed phasor sums).

    Runs of consecutive coils, every a-th coil, and coils of equal phasor dealt out in
    turn cover symmetric machines at once; with `exact`, a bounded search finds the rest
    (12 coils under 14 magnets, single phase, splits into 4 paths).
    """
    n = len(members)
    if n % a:
        return None
    u = sign[members] * _unit(theta_deg[members])
    if abs(u.sum()) < 1e-9:
        return None
    size = n // a
    keys = [_key(z) for z in u]
    order = sorted(range(n), key=lambda i: (keys[i], i))
    dealt = np.empty(n, dtype=int)
    dealt[order] = np.arange(n) % a + 1
    candidates = (np.repeat(np.arange(1, a + 1), size), np.tile(np.arange(1, a + 1), size), dealt)
    for groups in candidates:
        sums = np.array([u[groups == g].sum() for g in range(1, a + 1)])
        if np.abs(sums - sums[0]).max() <= 1e-6 * max(1.0, abs(sums[0])):
            return groups
    return _exact_split(u, a) if exact else None


def star_of_slots(
    coil_positions: int,
    magnets: int,
    phases: int,
    empty_positions: tuple[int, ...] = (),
    parallel_paths: int = 1,
    exact_paths: bool = True,
    paths: bool = True,
) -> Layout:
    """The winding layout for Q positions under P magnets (per disc).

    Raises ValueError if the counts are impossible; an unusable layout (unbalanced, coils
    cancelling) is returned with its figures so the caller can say what is wrong.
    `exact_paths=False` skips the slow search for irregular parallel paths; `paths=False`
    skips parallel paths altogether (scans that show none: one path is reported).
    """
    q, pm = int(coil_positions), int(magnets)
    if q < 2 or pm < 2 or pm % 2:
        raise ValueError("need at least 2 coil positions and an even magnet count of at least 2")
    if phases not in (1, 3):
        raise ValueError("phases must be 1 or 3")
    p = pm // 2
    empty = tuple(sorted(set(empty_positions)))
    active = np.array([k for k in range(q) if (k + 1) not in empty])
    if len(active) == 0:
        raise ValueError("no coil positions left")
    theta = _phasors_deg(q, p, active)
    if phases == 3:
        phase, sign, sums, counts = _three_phase(theta)
        balanced = _is_balanced(sums, counts)
    else:
        phase, sign, sums, counts = _single_phase(theta)
        balanced = True
    kd_each = np.abs(sums) / np.maximum(counts, 1)
    kd = float(kd_each.min())
    kp = tooth_pitch_factor(p, q)
    as_wound = float(abs(_unit(theta).sum()) / len(theta))

    allowed: list[int] = []
    groups_by_a: dict[int, np.ndarray] = {}
    n_min = int(counts.min())
    for a in range(1, (max(n_min, 1) if paths else 1) + 1):
        paths = np.zeros(len(active), dtype=int)
        ok = n_min > 0 and kd > 1e-9
        for k in range(phases):
            members = np.flatnonzero(phase == k)
            g = _path_groups(theta, sign, members, a, exact_paths) if ok else None
            if g is None:
                ok = False
                break
            paths[members] = g
        if ok:
            allowed.append(a)
            groups_by_a[a] = paths
    a_used = parallel_paths if parallel_paths in groups_by_a else 1
    paths = groups_by_a.get(a_used, np.ones(len(active), dtype=int))

    coils = tuple(
        Coil(
            index=int(k) + 1,
            angle_deg=360.0 * int(k) / q,
            phasor_deg=float(theta[i]),
            phase=PHASE_NAMES[int(phase[i])],
            polarity=int(sign[i]),
            path=int(paths[i]),
        )
        for i, k in enumerate(active)
    )
    symmetry = math.gcd(q, pm)
    return Layout(
        coil_positions=q,
        magnets=pm,
        phases=phases,
        empty_positions=empty,
        coils=coils,
        pole_pairs=p,
        periodicity=math.gcd(q, p),
        rotational_symmetry=symmetry,
        balanced=bool(balanced),
        distribution_factor=kd,
        pitch_factor=kp,
        winding_factor=kd * kp,
        as_wound_distribution_factor=as_wound,
        phase_angles_deg=tuple(float(np.degrees(np.angle(s))) for s in sums),
        phase_magnitudes=tuple(float(abs(s)) for s in sums),
        coils_per_phase=tuple(int(c) for c in counts),
        cogging_steps=math.lcm(q, pm),
        unbalanced_pull=symmetry == 1,
        allowed_parallel_paths=tuple(allowed),
        parallel_paths=a_used,
    )


def layout_notes(layout: Layout, winding_factor: float | None = None) -> list[str]:
    """Plain-words remarks on a layout, each saying what it means for the builder.

    `winding_factor` is the factor the machine will have as built (a coreless coil's own
    span); by default the layout's tooth-coil factor.
    """
    return figure_notes(
        layout.phases,
        layout.balanced,
        len(layout.coils),
        layout.distribution_factor,
        layout.as_wound_distribution_factor,
        layout.winding_factor if winding_factor is None else winding_factor,
        layout.unbalanced_pull,
    )


def figure_notes(
    phases: int,
    balanced: bool,
    n_coils: int,
    distribution_factor: float,
    as_wound_distribution_factor: float,
    winding_factor: float,
    unbalanced_pull: bool,
) -> list[str]:
    """The remarks of `layout_notes` from the figures alone (scans build no Layout)."""
    notes: list[str] = []
    if phases == 3 and not balanced:
        if n_coils % 3:
            notes.append(f"{n_coils} coils do not split into three equal phases")
        else:
            notes.append("phases unequal or not 120° apart: not a balanced three-phase set")
    if phases == 1:
        if as_wound_distribution_factor < 1e-6:
            notes.append("coils cancel if all wired as wound; reverse the marked coils")
        elif as_wound_distribution_factor < distribution_factor - 1e-6:
            notes.append("reversing some coils raises the output")
        if distribution_factor > 1 - 1e-9:
            if as_wound_distribution_factor > 1 - 1e-9:
                notes.append("every coil in phase as wound")
            else:
                notes.append("with the reversed coils connected, every coil adds in phase")
    if distribution_factor < 1e-6:
        notes.append("no usable output: the coil EMFs cancel")
    elif winding_factor < 0.5:
        notes.append("weak: winding factor below 0.5")
    if unbalanced_pull:
        notes.append("no rotational symmetry: unbalanced magnetic pull on the bearings")
    return notes


def lead_in(coil: Coil) -> str:
    """The lead a coil's chain enters by: its start S as wound, its finish F when reversed."""
    return f"{coil.index}{'S' if coil.polarity > 0 else 'F'}"


def lead_out(coil: Coil) -> str:
    """The lead a coil's chain leaves by: the other end from `lead_in`."""
    return f"{coil.index}{'F' if coil.polarity > 0 else 'S'}"


def joins(layout: Layout, connection: str) -> tuple[tuple[str, str, str], ...]:
    """Every join the stator's wiring makes, in the order it is made: (phase, from, to).

    Leads are named by position and end ("4S", "4F"), terminals by IEC 60034-8 ("U1"). In
    each path of a phase the coils are joined in position order, out of one into the next;
    a phase's start terminal takes each path's first coil, its end terminal each path's
    last. Then the connection's joints between terminals, phase "star" or "delta" (made at
    the terminals, after each phase has passed its tests): star U2-V2-W2; delta U1-W2,
    V1-U2, W1-V2 (the three lines). Single phase has none.
    """
    out: list[tuple[str, str, str]] = []
    for phase in layout.phase_names:
        t1, t2 = terminal_pair(phase)
        coils = layout.phase_coils(phase)
        for a in range(1, layout.parallel_paths + 1):
            chain = [c for c in coils if c.path == a]
            out.append((phase, t1, lead_in(chain[0])))
            out += [(phase, lead_out(x), lead_in(y)) for x, y in zip(chain, chain[1:], strict=False)]
            out.append((phase, lead_out(chain[-1]), t2))
    if layout.phases == 3 and connection == "star":
        out += [("star", "U2", "V2"), ("star", "V2", "W2")]
    elif layout.phases == 3 and connection == "delta":
        out += [("delta", "U1", "W2"), ("delta", "V1", "U2"), ("delta", "W1", "V2")]
    return tuple(out)
