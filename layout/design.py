"""Spec → Design: everything a writer needs, computed once."""

from __future__ import annotations

from dataclasses import dataclass

from layout.pairs import balanced_alternatives
from layout.spec import Spec
from layout.winding import Layout, layout_notes, star_of_slots


@dataclass(frozen=True)
class Design:
    spec: Spec
    layout: Layout
    layout_notes: tuple[str, ...]


def winding_layout(spec: Spec) -> Layout:
    """The layout the design asks for; a DesignError if it cannot work, saying what would."""
    st, mg = spec.stator, spec.magnets
    lay = star_of_slots(
        st.coil_positions, mg.count, st.phases, st.empty_positions, spec.connection.parallel_paths
    )
    if lay.distribution_factor < 1e-6 or (st.phases == 3 and not lay.balanced):
        if st.empty_positions:
            full = star_of_slots(st.coil_positions, mg.count, st.phases)
            if full.balanced and full.distribution_factor > 1e-6:
                raise spec.fail(
                    "stator.empty_positions",
                    list(st.empty_positions),
                    "leave the phases unequal; leave out one coil of each phase or none "
                    "(positions numbered from 1 at 0°)",
                )
        alts = balanced_alternatives(st.coil_positions, st.phases, mg.count)
        hint = ", ".join(f"{a.magnets} (winding factor {a.winding_factor:.3f})" for a in alts)
        what = "coil EMFs cancel" if lay.distribution_factor < 1e-6 else "phases unbalanced"
        raise spec.fail(
            "magnets.count",
            mg.count,
            f"{what} with {st.coil_positions} coil positions"
            + (f"; magnet counts that work: {hint}" if hint else "; see statorsmith pairs"),
        )
    if spec.connection.parallel_paths not in lay.allowed_parallel_paths:
        allowed = ", ".join(str(a) for a in lay.allowed_parallel_paths)
        raise spec.fail(
            "connection.parallel_paths",
            spec.connection.parallel_paths,
            f"paths would not carry equal EMF; allowed for this layout: {allowed}",
        )
    return lay


def compute_design(spec: Spec) -> Design:
    lay = winding_layout(spec)
    return Design(spec=spec, layout=lay, layout_notes=tuple(layout_notes(lay)))
