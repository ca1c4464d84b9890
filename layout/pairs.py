"""Coil/magnet count combinations: the star of slots over ranges of Q and P."""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from layout.winding import (
    _is_balanced,
    _phasors_deg,
    _single_phase,
    _three_phase,
    _unit,
    coreless_pitch_factor,
    figure_notes,
    tooth_pitch_factor,
)

STATORS = ("coreless", "teeth")
# What each stator kind's pitch factor assumes, printed under the table.
STATOR_RULES = {
    "coreless": "coreless coils: legs one position pitch apart at most one pole pitch, "
    "k_p = |sin(p·min(2π/Q, π/p)/2)|; coils with wide legs come out lower (see plan)",
    "teeth": "tooth coils round iron teeth, one position pitch wide: k_p = |sin(p·π/Q)|",
}


@dataclass(frozen=True)
class Pair:
    coils: int
    magnets: int
    phases: int
    balanced: bool
    distribution_factor: float
    pitch_factor: float
    winding_factor: float
    as_wound_distribution_factor: float
    periodicity: int
    rotational_symmetry: int
    cogging_steps: int
    notes: tuple[str, ...]
    stator: str = "coreless"


SORT_KEYS = ("coils", "magnets", "winding_factor", "cogging_steps")


@functools.cache
def _reduced(q: int, phases: int) -> tuple[bool, float, float]:
    """(balanced, k_d, as-wound k_d) of Q' = Q/t positions with t = gcd(Q, p) = 1.

    Q positions under p pole pairs put t coils on each of Q/t phasor angles, and with
    gcd(Q', p') = 1 those angles are every multiple of 360°/Q', whatever p'. The belts, sums
    and counts of the full machine are those of the reduced one times t, so its factors and
    its balance depend on Q' alone (Bianchi & Dai Prè 2006): p' = 1 stands for them all.
    """
    theta = _phasors_deg(q, 1, np.arange(q))
    if phases == 3:
        _phase, _sign, sums, counts = _three_phase(theta)
        balanced = _is_balanced(sums, counts)
    else:
        _phase, _sign, sums, counts = _single_phase(theta)
        balanced = True
    kd = float((np.abs(sums) / np.maximum(counts, 1)).min())
    as_wound = float(abs(_unit(theta).sum()) / q)
    return balanced, kd, as_wound


def pair_figures(q: int, pm: int, phases: int, stator: str = "coreless") -> Pair:
    """The `pairs` row of Q positions under P magnets, for a coreless or a toothed stator."""
    p = pm // 2
    t = math.gcd(q, p)
    balanced, kd, as_wound = _reduced(q // t, phases)
    kp = coreless_pitch_factor(p, q) if stator == "coreless" else tooth_pitch_factor(p, q)
    symmetry = math.gcd(q, pm)
    notes = figure_notes(phases, balanced, q, kd, as_wound, kd * kp, symmetry == 1)
    # Tooth coils as wide as a position can span two poles and cancel; a coreless coil
    # sized to one magnet does not, so say how to escape rather than reject the pair.
    if stator == "teeth" and kd > 0.5 and kp < 0.5:
        notes = [n for n in notes if not n.startswith("weak")]
        notes.append("a coil one position wide spans two poles: make coils about one magnet wide")
    return Pair(
        coils=q,
        magnets=pm,
        phases=phases,
        balanced=balanced,
        distribution_factor=kd,
        pitch_factor=kp,
        winding_factor=kd * kp,
        as_wound_distribution_factor=as_wound,
        periodicity=t,
        rotational_symmetry=symmetry,
        cogging_steps=math.lcm(q, pm),
        notes=tuple(notes),
        stator=stator,
    )


def combinations(
    coils: range,
    magnets: range,
    phases: int,
    balanced_only: bool = False,
    sort: str = "coils",
    stator: str = "coreless",
) -> list[Pair]:
    """Every (Q, P) in the ranges with P even; sorted by `sort` (factors best first)."""
    rows: list[Pair] = []
    for q in coils:
        for pm in magnets:
            if pm % 2 or pm < 2 or q < 2:
                continue
            row = pair_figures(q, pm, phases, stator)
            if balanced_only and not (row.balanced and row.distribution_factor > 1e-9):
                continue
            rows.append(row)
    if sort == "winding_factor":
        rows.sort(key=lambda r: (-round(r.winding_factor, 9), r.coils, r.magnets))
    elif sort == "cogging_steps":
        rows.sort(key=lambda r: (-r.cogging_steps, r.coils, r.magnets))
    elif sort == "magnets":
        rows.sort(key=lambda r: (r.magnets, r.coils))
    else:
        rows.sort(key=lambda r: (r.coils, r.magnets))
    return rows


def balanced_alternatives(coils: int, phases: int, near: int, limit: int = 3) -> list[Pair]:
    """Magnet counts near `near` that work with `coils`, best winding factor first."""
    lo, hi = max(2, near - 12), near + 12
    rows = combinations(range(coils, coils + 1), range(lo, hi + 1), phases, balanced_only=True)
    rows = [r for r in rows if r.winding_factor > 0.5 or r.distribution_factor > 0.5]
    rows.sort(key=lambda r: (abs(r.magnets - near), -r.winding_factor))
    return rows[:limit]
