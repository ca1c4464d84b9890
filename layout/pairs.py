"""Coil/magnet count combinations: the star of slots over ranges of Q and P."""

from __future__ import annotations

from dataclasses import dataclass

from layout.winding import Layout, layout_notes, star_of_slots


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


SORT_KEYS = ("coils", "magnets", "winding_factor", "cogging_steps")


def pair_notes(layout: Layout) -> list[str]:
    """Short notes on one coil/magnet pair for the `pairs` table (balance, pull, factors)."""
    notes = layout_notes(layout)
    # Tooth coils as wide as a position can span two poles and cancel; a coreless coil
    # sized to one magnet does not, so say how to escape rather than reject the pair.
    if layout.distribution_factor > 0.5 and layout.pitch_factor < 0.5:
        notes = [n for n in notes if not n.startswith("weak")]
        notes.append("a coil one position wide spans two poles: make coils about one magnet wide")
    return notes


def combinations(
    coils: range, magnets: range, phases: int, balanced_only: bool = False, sort: str = "coils"
) -> list[Pair]:
    """Every (Q, P) in the ranges with P even; sorted by `sort` (factors best first)."""
    rows: list[Pair] = []
    for q in coils:
        for pm in magnets:
            if pm % 2 or pm < 2 or q < 2:
                continue
            lay = star_of_slots(q, pm, phases, exact_paths=False)
            if balanced_only and not (lay.balanced and lay.distribution_factor > 1e-9):
                continue
            rows.append(
                Pair(
                    coils=q,
                    magnets=pm,
                    phases=phases,
                    balanced=lay.balanced,
                    distribution_factor=lay.distribution_factor,
                    pitch_factor=lay.pitch_factor,
                    winding_factor=lay.winding_factor,
                    as_wound_distribution_factor=lay.as_wound_distribution_factor,
                    periodicity=lay.periodicity,
                    rotational_symmetry=lay.rotational_symmetry,
                    cogging_steps=lay.cogging_steps,
                    notes=tuple(pair_notes(lay)),
                )
            )
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
