"""Warnings: what can hurt someone or the machine, and what to change."""

from __future__ import annotations

import dataclasses
import re

import pytest
from demos import DEMOS, PLATE, design, variant

from layout.advice import CANDIDATES
from layout.design import Design, compute_design
from layout.safety import collect_warnings

SEVERITIES = {"danger", "warning", "info"}
ALL_CODES = {
    "voltage.above_elv",
    "voltage.open_circuit",
    "disc.hoop_stress",
    "coil.temperature",
    "coil.overspeed_heat",
    "coil.current_density",
    "magnet.temperature",
    "magnet.pinch",
    "magnet.pacemaker",
    "rotor.jacking_screws",
    "rotor.attraction",
    "steel.saturation",
    "layout.unbalanced_pull",
    "turns.cut_in",
    "output.low_efficiency",
    "delta.circulating",
    "steel.stationary_loss",
    "coils.as_built_short",
    "disc.softening",
    "coil.wire_eddy",
    "disc.bending",
    "magnet.retention",
    "disc.printed_care",
    "output.below_cut_in",
    "source.stall",
    "source.coil_heat",
    "source.runaway",
    "source.no_output",
    "rotor.spinning",
    "converter.overvoltage",
    "converter.late_start",
    "converter.at_limit",
    "converter.ripple",
    "converter.stored_charge",
}
ACTION_VERBS = (
    "use", "raise", "lower", "fit", "make", "handle", "keep", "guard", "limit", "choose",
    "bring", "enclose", "never", "follow",
)  # fmt: skip
SPEC_KEY = re.compile(r"\b(stator|magnets|rotor|connection|target|coils|fab|source)\.[a-z_]+")


def codes(d: Design) -> dict[str, str]:
    return {w.code: w.severity for w in d.warnings}


def message(d: Design, code: str) -> str:
    return next(w.message for w in d.warnings if w.code == code)


PLA_FAST = ("millrace", ("rotor.disc_material", "pla"), ("target.max_rpm", 10000.0))
VARIANTS = [
    ("hilltop",),
    ("hilltop", *PLATE),  # the stationary plate and its loss
    ("hilltop", ("source.furl_wind_m_s", None)),  # blades that never furl run away in a storm
    ("millrace",),
    ("pedalbox",),
    ("pedalbox", ("target.max_rpm", 3000.0)),
    ("fieldkit",),
    ("fieldkit", ("target.bus_capacitor_uf", 470.0)),  # too small a bus capacitor: ripple
    # a window too narrow for the speed range: the converter starts past the rated speed
    ("fieldkit", ("target.tracking", "mppt"), ("target.input_v", None), ("target.min_input_v", 24.0)),
    PLA_FAST,
    ("millrace", ("rotor.disc_thickness_mm", 3.0)),
    ("millrace", ("rotor.topology", "one_disc_coreless")),
    ("millrace", ("rotor.disc_material", "pla"), ("target.rated_rpm", 450.0)),  # printed, hot
    ("pedalbox", ("target.rated_rpm", 900.0), ("target.max_rpm", 1200.0)),  # thick wire, fast
    ("millrace", ("coils.turns_per_coil", 40)),  # coils as built too few: cut-in past rated
    ("millrace", ("rotor.disc_material", "pla"), ("rotor.disc_thickness_mm", 4.0)),  # a soft, thin disc
    # a weak bond on discs that do not hold the magnets by their own pull
    (
        "millrace",
        ("rotor.disc_material", "aluminium"),
        ("rotor.magnet_bond_mpa", 0.1),
        ("rotor.running_clearance_mm", 1.0),
    ),
]


def doctored_warnings():
    """Warnings for millrace with every figure pushed past its limit, to reach each branch."""
    d = design("millrace")
    pr, f = d.prediction, d.forces
    rated = dataclasses.replace(
        pr.rated,
        coil_temperature_c=200.0,
        magnet_temperature_c=120.0,
        current_density_a_mm2=9.0,
        efficiency=0.5,
    )
    top = dataclasses.replace(pr.curve[-1], coil_temperature_c=300.0)
    pr = dataclasses.replace(
        pr, rated=rated, curve=pr.curve[:-1] + (top,), cut_in_rpm=2 * d.spec.target.cut_in_rpm
    )
    f = dataclasses.replace(
        f, hoop_safety_factor=1.0, steel_peak_b_t=2.0, axial_force_n=50.0, jacking_screws=False
    )
    lay = dataclasses.replace(d.layout, unbalanced_pull=True)
    return collect_warnings(d.spec, lay, pr, f)


def bus_over():
    """fieldkit with coils as built of twice the turns it sizes: the idle bus passes the
    converter's input limit."""
    turns = design("fieldkit").prediction.turns_per_coil * 2
    spec = dataclasses.replace(
        variant("fieldkit", ("coils.turns_per_coil", turns)), coils_given=("turns_per_coil",)
    )
    return compute_design(spec)


def as_built_short():
    """pedalbox with coils as built of two thirds the turns it needs: short of its target."""
    turns = design("pedalbox").prediction.turns_per_coil * 2 // 3
    spec = dataclasses.replace(
        variant("pedalbox", ("coils.turns_per_coil", turns)), coils_given=("turns_per_coil",)
    )
    return compute_design(spec)


def every_warning():
    out = [w for args in VARIANTS for w in design(*args).warnings]
    return out + doctored_warnings() + list(as_built_short().warnings) + list(bus_over().warnings)


# --- always there ------------------------------------------------------------------------


@pytest.mark.parametrize("name", DEMOS)
def test_magnet_handling_dangers_are_always_listed(name):
    found = codes(design(name))
    assert found["magnet.pinch"] == "danger"
    assert found["magnet.pacemaker"] == "danger"
    assert found["rotor.spinning"] == "info"


@pytest.mark.parametrize("args", VARIANTS, ids=lambda a: "-".join(str(x) for x in a))
def test_codes_unique_and_severities_known(args):
    d = design(*args)
    found = [w.code for w in d.warnings]
    assert len(found) == len(set(found))
    assert {w.severity for w in d.warnings} <= SEVERITIES
    assert set(found) <= ALL_CODES
    # Exactly one of the two open-circuit voltage notes.
    assert len({"voltage.above_elv", "voltage.open_circuit"} & set(found)) == 1


# --- extra-low voltage -------------------------------------------------------------------


def test_runaway_speed_above_extra_low_voltage_is_a_danger():
    d = design("pedalbox", ("target.max_rpm", 3000.0))
    assert codes(d)["voltage.above_elv"] == "danger"
    text = message(d, "voltage.above_elv")
    # IEC 61140: extra-low voltage is at most 50 V AC rms (120 V ripple-free DC).
    assert "IEC 61140" in text
    assert "50 V" in text


@pytest.mark.parametrize(
    ("factor", "expected"), [(0.95, "voltage.open_circuit"), (1.05, "voltage.above_elv")]
)
def test_extra_low_voltage_threshold_is_50_v_ac(factor, expected):
    base = design("pedalbox").prediction
    # Open-circuit line voltage is proportional to speed; find where it reaches 50 V rms
    # (IEC 61140 ELV limit for AC).
    rpm_50 = 50.0 / (base.open_circuit_line_rms_v / base.rated_rpm)
    d = design("pedalbox", ("target.max_rpm", round(factor * rpm_50)))
    assert d.prediction.turns_per_coil == base.turns_per_coil
    # The rectified peak stays under the 120 V DC limit (IEC 61140) at both speeds, so the
    # 50 V AC limit alone decides.
    assert d.prediction.open_circuit_dc_peak_at_max_v < 120.0
    assert expected in codes(d)


# --- rotor disc --------------------------------------------------------------------------


def test_printed_pla_disc_at_high_speed_may_burst():
    d = design(*PLA_FAST)
    # Printed PLA: tensile strength about 50 MPa (from memory); a safety factor of 3 on a
    # spinning disc (common practice).
    assert d.forces.hoop_safety_factor < 3
    assert codes(d)["disc.hoop_stress"] == "danger"
    # What to change is computed (layout.advice): a slower top speed is among the changes the
    # model offers, and its gain follows the closed form σ ∝ ω² for a spinning disc and its
    # rim load (Timoshenko & Goodier, rotating discs): the safety factor scales as (n0/n1)².
    from layout.advice import suggest

    slower = next(s for s in suggest(d) if s.key == "target.max_rpm")
    assert slower.value == pytest.approx(slower.now * (slower.was / slower.to) ** 2, rel=1e-6)
    slow = design("millrace", ("rotor.disc_material", "pla"))
    assert slow.forces.hoop_safety_factor > 3
    assert "disc.hoop_stress" not in codes(slow)


# --- message form ------------------------------------------------------------------------


def test_doctored_inputs_reach_every_warning():
    found = {w.code for w in every_warning()}
    assert found == ALL_CODES


def test_every_message_is_short_and_says_what_to_do():
    for w in every_warning():
        text = w.message
        assert "\n" not in text, w.code
        assert not text[0].islower() and text.endswith("."), w.code
        assert 40 <= len(text) <= 450, w.code
        sentences = len(re.findall(r"[.!?](\s+[A-Z]|$)", text))
        assert sentences <= 3, w.code
        words = re.findall(r"[a-z]+", text.lower())
        acts = any(word.startswith(verb) for word in words for verb in ACTION_VERBS)
        # What to change for these is computed and checked by the model (layout.advice).
        assert acts or SPEC_KEY.search(text) or w.code in CANDIDATES, w.code


@pytest.mark.parametrize("demo", DEMOS)
def test_insulation_test_voltage_rises_above_extra_low_voltage(demo):
    from layout.safety import ELV_AC_V, ELV_DC_V, above_extra_low_voltage, insulation_test_v

    pr = design(demo).prediction
    # IEC 61140 extra-low voltage: 50 V AC rms, 120 V ripple-free DC.
    assert (ELV_AC_V, ELV_DC_V) == (50.0, 120.0)
    high = pr.open_circuit_line_rms_at_max_v > 50 or pr.open_circuit_dc_peak_at_max_v > 120
    assert above_extra_low_voltage(pr) == high
    assert insulation_test_v(pr) == (500 if high else 250)  # common practice
    assert any(w.code == "voltage.above_elv" for w in design(demo).warnings) == high


def test_ac_line_warnings_have_no_bridge_words():
    # An AC-line load has no bridge: no warning may speak of a rectifier or rectified volts.
    from test_model import DELTA_AC

    for kind in ("delta", "star"):
        d = design(*DELTA_AC[:3], ("connection.kind", kind), *DELTA_AC[4:], ("target.max_rpm", 2000.0))
        assert "voltage.above_elv" in codes(d)
        for w in d.warnings:
            assert not re.search(r"rectif|bridge|diode", w.message, re.IGNORECASE), w.code


def test_coils_as_built_short_of_the_target_say_what_they_give():
    d = as_built_short()
    w = next(w for w in d.warnings if w.code == "coils.as_built_short")
    assert f"{d.prediction.rated.dc_voltage_v:.1f} V" in w.message
    assert d.prediction.rated.dc_voltage_v < d.spec.target.voltage_v


def test_no_warning_quotes_a_nonsense_share():
    # A share of a loss or a bound is a figure a builder reads: never past 1000 %, never a
    # ratio to nothing (a machine below cut-in has no output to take a share of).
    for w in every_warning():
        for pct in re.findall(r"(\d+(?:\.\d+)?)%", w.message):
            assert float(pct) <= 1000, (w.code, w.message)
    d = design("millrace", ("coils.turns_per_coil", 40))
    found = {w.code for w in d.warnings}
    assert "output.below_cut_in" in found
    assert not found & {"output.low_efficiency", "coil.wire_eddy"}
