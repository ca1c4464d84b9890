"""Magnet wire: copper resistivity, standard sizes, choosing a size, resistance, inductance."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from layout.wire import (
    AWG_SIZES,
    METRIC_DIAMETERS_MM,
    METRIC_SIZES,
    Wire,
    awg_diameter_mm,
    choose_wire,
    coil_resistance_ohm,
    copper_resistivity,
    wheeler_inductance_h,
)

INCH_MM = 25.4


def round_area_mm2(d_mm: float) -> float:
    return math.pi * d_mm**2 / 4


def sizes(standard: str) -> tuple[tuple[str, float], ...]:
    return AWG_SIZES if standard == "awg" else METRIC_SIZES


# --- copper ---------------------------------------------------------------------------


def test_copper_resistivity_at_20c():
    # IEC 60028: annealed copper 1/58 ohm mm2/m = 0.017241 at 20 C
    assert copper_resistivity(20.0) == pytest.approx(0.017241, abs=1e-6)
    assert copper_resistivity(20.0) == pytest.approx(1 / 58, rel=1e-12)


@pytest.mark.parametrize("temperature_c", [-20.0, 75.0, 120.0])
def test_copper_temperature_coefficient(temperature_c):
    # IEC 60028: alpha20 = 0.00393 /K, linear about 20 C
    expected = (1 / 58) * (1 + 0.00393 * (temperature_c - 20))
    assert copper_resistivity(temperature_c) == pytest.approx(expected, rel=1e-12)


def test_resistance_of_100_m_of_1_mm_wire():
    # Hand computed: rho20 = 1/58 ohm mm2/m (IEC 60028), A = pi/4 mm2 for 1.00 mm,
    # R = 0.017241 * 100 / 0.785398 = 2.1952 ohm. 100 turns of 1000 mm make the 100 m.
    wire = Wire("1.00 mm", 1.0, 1)
    assert coil_resistance_ohm(100, 1000.0, wire) == pytest.approx(2.1952, abs=1e-4)
    # At 75 C: x (1 + 0.00393 * 55) = x 1.21615 -> 2.6697 ohm (IEC 60028 alpha20, hand computed)
    assert coil_resistance_ohm(100, 1000.0, wire, 75.0) == pytest.approx(2.6697, abs=1e-4)


def test_strands_in_hand_share_the_current():
    # Two strands in hand are two conductors in parallel: half the resistance of one.
    one = coil_resistance_ohm(50, 200.0, Wire("1.00 mm", 1.0, 1))
    two = coil_resistance_ohm(50, 200.0, Wire("1.00 mm", 1.0, 2))
    assert two == pytest.approx(one / 2, rel=1e-12)


def test_twice_the_turns_in_the_same_copper_is_four_times_the_resistance():
    # Same window: 2N turns each of half the copper area. R = rho*N*l/A -> 2 * 2 = 4.
    n, mlt = 60, 180.0
    thick = Wire("thick", 1.2, 1)
    thin = Wire("thin", 1.2 / math.sqrt(2), 1)
    assert 2 * n * thin.copper_mm2 == pytest.approx(n * thick.copper_mm2, rel=1e-12)
    ratio = coil_resistance_ohm(2 * n, mlt, thin) / coil_resistance_ohm(n, mlt, thick)
    assert ratio == pytest.approx(4.0, rel=1e-12)


# --- standard sizes -------------------------------------------------------------------


@pytest.mark.parametrize(("gauge", "diameter_mm"), [(14, 1.628), (18, 1.024), (20, 0.812)])
def test_awg_diameters(gauge, diameter_mm):
    # ASTM B258 table: AWG 14 = 0.0641 in = 1.628 mm, 18 = 1.024 mm, 20 = 0.812 mm
    assert awg_diameter_mm(gauge) == pytest.approx(diameter_mm, abs=0.001)
    table = dict(AWG_SIZES)
    assert table[f"AWG {gauge}"] == pytest.approx(diameter_mm, abs=0.001)


def test_awg_formula_end_points():
    # ASTM B258: d = 0.005 in * 92^((36 - n)/39); AWG 36 = 0.005 in = 0.127 mm and
    # AWG 0000 (n = -3) = 0.4600 in = 11.684 mm.
    assert awg_diameter_mm(36) == pytest.approx(0.127, rel=1e-12)
    assert awg_diameter_mm(-3) == pytest.approx(0.46 * INCH_MM, rel=1e-12)
    # ASTM B258: the diameter doubles every 6 gauges, to about 0.1 % (92^(6/39) = 2.006).
    assert awg_diameter_mm(14) / awg_diameter_mm(20) == pytest.approx(2.0, rel=0.005)


def test_awg_table_gets_thicker_with_smaller_gauge():
    diameters = [d for _, d in AWG_SIZES]
    assert all(a < b for a, b in zip(diameters, diameters[1:], strict=False))
    assert len({name for name, _ in AWG_SIZES}) == len(AWG_SIZES)


def test_metric_table_is_increasing_and_has_the_r20_steps():
    assert all(a < b for a, b in zip(METRIC_DIAMETERS_MM, METRIC_DIAMETERS_MM[1:], strict=False))
    # IEC 60317-0-1 nominal diameters, R20 with R40 intermediate steps (from memory)
    r20 = (0.80, 0.85, 0.90, 0.95, 1.00, 1.06, 1.12, 1.18, 1.25, 1.32, 1.40, 1.50, 1.60)
    for d in r20:
        assert any(abs(d - m) < 1e-9 for m in METRIC_DIAMETERS_MM), d
    assert [d for _, d in METRIC_SIZES] == list(METRIC_DIAMETERS_MM)
    assert dict(METRIC_SIZES)["1.00 mm"] == 1.00


# --- choosing a size ------------------------------------------------------------------


def test_choose_wire_takes_the_largest_size_that_fits():
    # 0.8 mm2 per turn. Hand computed areas: 1.00 mm -> 0.785 mm2 fits, 1.06 mm -> 0.882 does not.
    assert choose_wire(0.8, "metric", 1.6) == Wire("1.00 mm", 1.00, 1)
    # AWG 18 (1.024 mm, 0.823 mm2) does not fit; AWG 19 (0.912 mm, 0.653 mm2) does.
    wire = choose_wire(0.8, "awg", 1.6)
    assert (wire.name, wire.strands) == ("AWG 19", 1)
    assert wire.diameter_mm == pytest.approx(0.912, abs=0.001)  # ASTM B258: AWG 19 = 0.0359 in


def test_choose_wire_uses_strands_in_hand_above_the_maximum_diameter():
    # 4 mm2 per turn: one wire would be 2.24 mm (3.94 mm2), thicker than 1.6 mm allowed.
    # Two strands may have 2 mm2 each: 1.60 mm is 2.01 mm2 (too big), 1.50 mm is 1.77 mm2.
    assert choose_wire(4.0, "metric", 1.6) == Wire("1.50 mm", 1.50, 2)
    # With a 2.5 mm limit the single 2.24 mm wire is allowed.
    assert choose_wire(4.0, "metric", 2.5) == Wire("2.24 mm", 2.24, 1)


def test_choose_wire_none_when_the_finest_size_does_not_fit():
    # The finest metric size, 0.20 mm, is 0.0314 mm2; the finest AWG (40, 0.0799 mm) 0.0050 mm2.
    assert choose_wire(0.01, "metric", 1.6) is None
    assert choose_wire(0.004, "awg", 1.6) is None


def test_choose_wire_fills_a_very_large_area_with_the_most_strands():
    wire = choose_wire(1000.0, "metric", 1.6)
    assert wire is not None
    assert wire.copper_mm2 <= 1000.0


@settings(max_examples=300, deadline=None)
@given(
    area=st.floats(min_value=0.001, max_value=60.0),
    standard=st.sampled_from(["awg", "metric"]),
    max_d=st.floats(min_value=0.15, max_value=3.5),
)
def test_choose_wire_never_exceeds_the_copper_available(area, standard, max_d):
    wire = choose_wire(area, standard, max_d)
    if wire is None:
        return
    assert wire.copper_mm2 <= area * (1 + 1e-9)
    assert wire.strands >= 1
    assert (wire.name, wire.diameter_mm) in sizes(standard)
    assert wire.diameter_mm <= max_d + 1e-9
    # Largest that fits: the next larger standard size would not, with the same strands.
    larger = [d for _, d in sizes(standard) if wire.diameter_mm < d <= max_d + 1e-9]
    if larger:
        assert wire.strands * round_area_mm2(min(larger)) > area * (1 + 1e-9)
    # Strands only when one wire that fits would be too thick.
    if wire.strands > 1:
        one = [d for _, d in sizes(standard) if round_area_mm2(d) <= area * (1 + 1e-9)]
        assert max(one) > max_d


# --- inductance -----------------------------------------------------------------------


def test_wheeler_hand_worked_value():
    # Wheeler, Proc. IRE 16(10), 1928: L[uH] = 0.8 a^2 N^2 / (6a + 9b + 10c), inches.
    # a = 1 in, b = 1 in, c = 0.5 in, N = 100: 0.8 * 1 * 1e4 / (6 + 9 + 5) = 400 uH.
    got = wheeler_inductance_h(100, 1.0 * INCH_MM, 1.0 * INCH_MM, 0.5 * INCH_MM)
    assert got == pytest.approx(400e-6, rel=1e-9)


def test_wheeler_second_hand_worked_value():
    # Wheeler 1928 formula: a = 2 in, b = 0.4 in, c = 0.6 in, N = 50:
    # 0.8 * 4 * 2500 / (12 + 3.6 + 6) = 8000 / 21.6 = 370.37 uH.
    got = wheeler_inductance_h(50, 2.0 * INCH_MM, 0.4 * INCH_MM, 0.6 * INCH_MM)
    assert got == pytest.approx(370.37e-6, rel=1e-4)


def test_wheeler_scales_as_turns_squared():
    one = wheeler_inductance_h(40, 30.0, 8.0, 10.0)
    assert wheeler_inductance_h(80, 30.0, 8.0, 10.0) == pytest.approx(4 * one, rel=1e-12)
    assert wheeler_inductance_h(120, 30.0, 8.0, 10.0) == pytest.approx(9 * one, rel=1e-12)


@pytest.mark.parametrize("strands", [1, 2, 4, 7])
def test_bundle_grows_with_the_root_of_the_strands(strands):
    from layout.wire import ENAMEL_DIAMETER_FACTOR, Wire, bundle_diameter_mm

    # A bundle of n round strands packs into about √n strand diameters (common practice);
    # its cross-section is n strands' worth whatever the packing.
    w = Wire("1.00 mm", 1.0, strands)
    d = bundle_diameter_mm(w)
    assert d == pytest.approx(ENAMEL_DIAMETER_FACTOR * strands**0.5)
    assert d**2 == pytest.approx(strands * bundle_diameter_mm(Wire("1.00 mm", 1.0, 1)) ** 2)
    assert 1.04 <= ENAMEL_DIAMETER_FACTOR * 1.0 <= 1.12  # IEC 60317-0-1 grade 1–2 on 1 mm (from memory)
