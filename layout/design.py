"""Spec → Design: everything a writer needs, computed once."""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

from layout.bill import Bill, materials_bill
from layout.circuit import BridgeRating, bridge_rating
from layout.converter import idle_bus_v
from layout.emf import CoilLinkage, FluxMap, coil_linkage, flux_map, phase_emf
from layout.forces import Forces, compute_forces
from layout.geometry import Geometry, resolve_geometry
from layout.losses import rotor_mass_kg
from layout.materials import STEEL_SATURATION_T
from layout.model import Prediction, curve_at, predict
from layout.operating import Operating, converter_points, operating_points, source_warnings
from layout.pairs import balanced_alternatives
from layout.safety import DELTA_LOOP_SHARE, Warning, collect_warnings, converter_warnings
from layout.source import resolve
from layout.spec import DesignError, Spec, with_value
from layout.steel import PlateFlux, plate_flux
from layout.winding import Layout, layout_notes, span_pitch_factor, star_of_slots

if TYPE_CHECKING:
    from layout.advice import Suggestion


@dataclass(frozen=True)
class Design:
    spec: Spec
    layout: Layout
    layout_notes: tuple[str, ...]
    geometry: Geometry
    flux: FluxMap
    linkage: CoilLinkage
    prediction: Prediction
    forces: Forces
    warnings: tuple[Warning, ...]
    bill: Bill
    # Changes the model has re-run and found to help (layout.advice); None: not computed.
    suggestions: tuple[Suggestion, ...] | None = None
    # Where a [source] drives the machine (layout.operating); None without one.
    operating: Operating | None = None
    # target.max_rpm as the file gave it, where the source's runaway raised it for the checks.
    given_max_rpm: float | None = None

    @property
    def bridge(self) -> BridgeRating:
        """The least diode-bridge rating (V, A). The voltage is the open-circuit peak at
        max_rpm; the current the highest the machine can be driven to deliver: on the output
        curve, or with a source, at the steady speeds it holds (it cannot drive the curve's
        top, where no turbine, rotor or rider reaches)."""
        pr = self.prediction
        if self.operating is None:
            return pr.bridge
        points = [r.point for r in self.operating.rows if r.point is not None]
        if not points:
            return pr.bridge
        top = max(points, key=lambda op: op.dc_current_a)
        return bridge_rating(pr.open_circuit_dc_peak_at_max_v, top.dc_current_a, top.rpm)

    def suggestions_for(self, code: str) -> tuple[Suggestion, ...]:
        return tuple(s for s in self.suggestions or () if s.code == code)

    @property
    def geometric_pitch_factor(self) -> float:
        """k_p of the coils as shaped, legs' centres `span_deg` apart."""
        return span_pitch_factor(self.layout.pole_pairs, math.radians(self.geometry.coil.span_deg))

    @property
    def winding_factor_as_built(self) -> float:
        """k_w of this coreless stator: k_d times the pitch factor of the coils as shaped."""
        return self.geometric_pitch_factor * self.layout.distribution_factor


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


def saturation_derate(forces: Forces) -> float:
    """What a saturated steel plate leaves of the EMF: past the saturation level B_s the
    plate carries at most B_s over its section, so the flux per pole, and the EMF with it,
    is limited to B_s/B of what the image method (ideal steel) gives (a flux-limited
    equivalent reluctance; layout.materials.STEEL_SATURATION_T, from memory)."""
    b = forces.steel_peak_b_t
    return 1.0 if b is None or b <= STEEL_SATURATION_T else STEEL_SATURATION_T / b


def scaled_emf(emf, factor: float):
    """The EMF per turn with every waveform scaled by `factor`."""
    return dataclasses.replace(
        emf, coil_v=emf.coil_v * factor, phase_v=emf.phase_v * factor, line_v=emf.line_v * factor
    )


def _as_star(
    spec: Spec,
    geo: Geometry,
    lay: Layout,
    link: CoilLinkage,
    pred: Prediction,
    plate: PlateFlux | None,
    **extra,
) -> Prediction | None:
    """The same machine connected in star, where its delta loses enough to a circulating
    current to be warned of (the field and coils are unchanged: only EMF and output re-run)."""
    rated = pred.rated
    if spec.connection.kind != "delta" or rated.loop_loss_w <= DELTA_LOOP_SHARE * rated.dc_power_w:
        return None
    try:
        star = with_value(spec, "connection.kind", "star")
        emf = scaled_emf(phase_emf(link, lay, "star"), pred.saturation_derate)
        return predict(star, geo, lay, emf, plate, rated_only=True, **extra)
    except DesignError:
        return None


MAX_RPM_LIMIT = 20000  # target.max_rpm's bound


def compute_design(spec: Spec) -> Design:
    """Layout, field, EMF, winding and output, forces and warnings for one design.

    With a [source] whose runaway speed exceeds target.max_rpm, every check is made at the
    runaway speed instead: the machine is computed with target.max_rpm raised to it, and
    `given_max_rpm` keeps the file's figure."""
    if spec.source is not None:
        runaway = resolve(spec.source).runaway_rpm
        if runaway > spec.target.max_rpm:
            raised = with_value(spec, "target.max_rpm", float(min(math.ceil(runaway), MAX_RPM_LIMIT)))
            return _compute(raised, given_max_rpm=spec.target.max_rpm)
    return _compute(spec)


def _compute(spec: Spec, given_max_rpm: float | None = None) -> Design:
    lay = winding_layout(spec)
    geo = resolve_geometry(spec, tuple(c.index for c in lay.coils))
    fmap = flux_map(geo, spec.magnets.count)
    link = coil_linkage(geo, fmap, spec.magnets.count)
    emf = phase_emf(link, lay, spec.connection.kind)
    plate = plate_flux(spec, geo, fmap.sources)
    forces = compute_forces(spec, geo, fmap.sources, fmap.peak_bz_t)
    losses = {"fmap": fmap, "rotor_mass_kg": rotor_mass_kg(spec, forces)}
    derate = saturation_derate(forces)
    if derate < 1:
        emf = scaled_emf(emf, derate)
    pred = dataclasses.replace(predict(spec, geo, lay, emf, plate, **losses), saturation_derate=derate)
    operating = None
    if spec.source is not None:

        def evaluate(rpms, temps_c=None, bus_v=None):
            return curve_at(spec, geo, lay, emf, pred, rpms, plate, temps_c=temps_c, bus_v=bus_v, **losses)

        src = resolve(spec.source)
        if spec.target.kind == "converter":
            top = idle_bus_v(pred, spec.target, src.runaway_rpm)
            operating = converter_points(src, evaluate, spec.target, top, pred.curve)
        else:
            operating = operating_points(src, evaluate, pred.curve)
    warnings = collect_warnings(
        spec, lay, pred, forces, _as_star(spec, geo, lay, link, pred, plate, **losses)
    ) + source_warnings(operating, spec.target.max_rpm, given_max_rpm, spec.stator.binder)
    warnings += converter_warnings(spec, pred, lay.phases, runaway=given_max_rpm is not None)
    return Design(
        spec=spec,
        layout=lay,
        # Coreless coils: judge the layout by the factor of the coils as shaped.
        layout_notes=tuple(
            layout_notes(
                lay,
                span_pitch_factor(lay.pole_pairs, math.radians(geo.coil.span_deg)) * lay.distribution_factor,
            )
        ),
        geometry=geo,
        flux=fmap,
        linkage=link,
        prediction=pred,
        forces=forces,
        warnings=tuple(warnings),
        bill=materials_bill(spec, geo, pred, lay.phases),
        operating=operating,
        given_max_rpm=given_max_rpm,
    )
