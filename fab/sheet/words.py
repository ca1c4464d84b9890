"""Words, bands and figures more than one page takes from the design: terminal names, wire,
magnets, pockets and discs, the open-circuit voltage at a speed, the tolerance bands of the
bench checks, and the closing advice.
"""

from __future__ import annotations

from layout.design import Design
from layout.rotor import disc_count, is_plain_disc, is_steel_disc
from layout.winding import terminal_pair

# Bands the bench figures are checked against (common practice): a coil's resistance
# varies with the wire's diameter tolerance and the length of its leads; open-circuit
# voltage with the magnets' remanence, the gap as built and the speed reading.
RESISTANCE_BAND_PCT = 10
OPEN_CIRCUIT_BAND_PCT = 10
PHASE_MATCH_PCT = 3  # the three phases of a sound winding agree this closely (common practice)


def _band(value: float, pct: float) -> tuple[float, float]:
    return value * (1 - pct / 100), value * (1 + pct / 100)


def open_circuit_rms_v(design: Design, rpm: float) -> float:
    """Open-circuit voltage across the terminals (line to line for three phases), rms, at `rpm`.

    The magnets at room temperature (target.ambient_c), as on the bench, with the grade's
    typical Br; in proportion to speed, as the EMF of a permanent-magnet machine is. Every
    page that states an open-circuit voltage takes it from here, so the summary and the test
    plan cannot disagree.
    """
    pr = design.prediction
    return pr.open_circuit_line_rms_at(rpm, pr.ambient_c)  # the magnets at room temperature


def cut_in_rpm_stated(design: Design) -> float | None:
    """The cut-in speed as the pages state it and the bench checks it (whole rpm); None but
    for a battery or a converter, the loads that hold a voltage for the machine to reach."""
    if design.spec.target.kind not in ("battery", "converter"):
        return None
    return float(round(design.prediction.cut_in_rpm))


_terminals = terminal_pair


def _wire_words(design: Design) -> str:
    w = design.prediction.wire
    return f"{w.name} x {w.strands} in hand" if w.strands > 1 else w.name


def _magnet_words(design: Design) -> str:
    mg = design.spec.magnets
    size = (
        f"{mg.length_mm:g} x {mg.width_mm:g} x {mg.thickness_mm:g} mm block"
        if mg.shape == "block"
        else f"{mg.diameter_mm:g} mm dia. x {mg.thickness_mm:g} mm disc"
    )
    grade = mg.grade or f"Br {mg.remanence_t:g} T"
    return f"{size}, {grade}, magnetised through the {mg.thickness_mm:g} mm thickness"


def _pocket_word(design: Design) -> str:
    return "place" if is_steel_disc(design.spec) else "pocket"


def _disc_name(design: Design, disc: int) -> str:
    if is_plain_disc(design.spec, disc):
        return "the plain steel disc"
    if disc_count(design.spec) == 1:
        return "the magnet disc"
    return "disc 1 (lower)" if disc == 1 else "disc 2 (upper)"


DEFER = (
    "This sheet is a design aid: check every figure before building. Follow local codes and "
    "licensed practice, and have a licensed electrician check anything connected to a "
    "building's wiring."
)
