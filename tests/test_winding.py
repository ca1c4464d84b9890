"""Winding layout by the star of slots: factors, balance, single phase, paths, symmetry."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from layout.winding import (
    Layout,
    span_pitch_factor,
    star_of_slots,
    tooth_pitch_factor,
)

PROPERTY_SETTINGS = settings(max_examples=60, deadline=None)


def signed_sum(coils) -> complex:
    """Σ polarity·e^{jφ} over the coils, φ their EMF phasor as wound."""
    return complex(sum(c.polarity * np.exp(1j * math.radians(c.phasor_deg)) for c in coils))


def factors(lay: Layout) -> tuple:
    return (
        lay.distribution_factor,
        lay.pitch_factor,
        lay.winding_factor,
        lay.as_wound_distribution_factor,
    )


# --- published fundamental winding factors -------------------------------------------------

# Double-layer tooth coils, one coil per position.
# EL-Refaie, IEEE Trans. Ind. Electron. 57(1), 2010, table of winding factors;
# Libert & Soulard, ICEM 2004.
PUBLISHED_KW = [
    (9, 8, 0.945),
    (9, 10, 0.945),
    (12, 10, 0.933),
    (12, 14, 0.933),
    (15, 14, 0.951),
    (18, 14, 0.902),
    (21, 22, 0.953),
    (6, 4, 0.866),
    (9, 6, 0.866),
    (9, 12, 0.866),
    (12, 8, 0.866),
]


@pytest.mark.parametrize(("coils", "magnets", "kw"), PUBLISHED_KW)
def test_published_winding_factor(coils, magnets, kw):
    lay = star_of_slots(coils, magnets, 3)
    assert lay.balanced
    # The tables give three decimals.
    assert lay.winding_factor == pytest.approx(kw, abs=0.0015)
    assert lay.winding_factor == pytest.approx(lay.distribution_factor * lay.pitch_factor)


# --- balance -------------------------------------------------------------------------------


def test_balance_condition_over_a_grid():
    """Balanced with output iff Q/(3t) is whole, t = gcd(Q, p).

    Bianchi & Dai Prè, IEE Proc. Electr. Power Appl. 153(3), 2006.
    Degenerate counts need no exclusion: when Q divides p (Q == p among them) every coil
    has the same phasor, so t = Q and Q/(3t) = 1/3 is not whole; the code calls those
    unbalanced too (checked on their own below).
    """
    wrong = []
    for q in range(3, 37):
        for pm in range(2, 49, 2):
            lay = star_of_slots(q, pm, 3)
            got = lay.balanced and lay.distribution_factor > 0
            expected = q % (3 * math.gcd(q, pm // 2)) == 0
            if got != expected:
                wrong.append((q, pm, lay.balanced, lay.distribution_factor))
    assert wrong == []


@pytest.mark.parametrize(("coils", "magnets"), [(3, 6), (6, 12), (9, 18), (4, 16), (12, 48)])
def test_coils_dividing_pole_pairs_cannot_make_three_phases(coils, magnets):
    # Q | p puts every phasor on the same angle: one phase would take every coil.
    lay = star_of_slots(coils, magnets, 3)
    assert len({round(c.phasor_deg % 360, 6) % 360 for c in lay.coils}) == 1
    assert not lay.balanced
    assert lay.distribution_factor == pytest.approx(0, abs=1e-9)


def test_12_coils_14_magnets_phases_120_degrees_apart():
    lay = star_of_slots(12, 14, 3)
    assert lay.coils_per_phase == (4, 4, 4)
    assert [len(lay.phase_coils(x)) for x in "ABC"] == [4, 4, 4]
    a, b, c = lay.phase_angles_deg

    def lag(x, y):  # how far y lags x, in [-180, 180)
        return (x - y + 180) % 360 - 180

    # A three-phase set: B lags A by 120°, C lags B by 120° (a 120° lead of C on A).
    assert abs(lag(a, b) - 120) < 0.1
    assert abs(lag(b, c) - 120) < 0.1
    assert abs(lag(c, a) - 120) < 0.1
    # The reported angles are those of the coils' signed sums.
    for name, angle in zip("ABC", lay.phase_angles_deg, strict=True):
        s = signed_sum(lay.phase_coils(name))
        assert abs(lag(math.degrees(np.angle(s)), angle)) < 1e-6


# --- single phase --------------------------------------------------------------------------


def test_12_coils_under_20_magnets_cancel_as_wound():
    # Common practice: phasors 60° apart all round sum to zero in series.
    lay = star_of_slots(12, 20, 1)
    assert lay.as_wound_distribution_factor == pytest.approx(0, abs=1e-9)
    assert lay.distribution_factor > 0.5
    assert any(c.polarity == -1 for c in lay.coils)
    assert abs(signed_sum(lay.coils)) / len(lay.coils) == pytest.approx(lay.distribution_factor)


def test_13_positions_under_26_magnets_all_in_phase_as_wound():
    # Common practice: p = 13 = Q puts every coil on the same electrical angle.
    lay = star_of_slots(13, 26, 1)
    assert lay.as_wound_distribution_factor == pytest.approx(1, abs=1e-9)
    assert lay.distribution_factor == pytest.approx(1, abs=1e-9)
    assert all(c.polarity == 1 for c in lay.coils)


def test_single_phase_in_phase_conditions():
    """Common practice (and the phasor −p·2πk/Q): in phase as wound iff Q | p; in phase with
    some coils reversed iff every phasor is 0° or 180°, i.e. 2p/Q whole, i.e. Q | P."""
    for q in range(2, 31):
        for pm in range(2, 61, 2):
            lay = star_of_slots(q, pm, 1)
            p = pm // 2
            assert (lay.as_wound_distribution_factor > 1 - 1e-9) == (p % q == 0), (q, pm)
            assert (lay.distribution_factor > 1 - 1e-9) == (pm % q == 0), (q, pm)


def test_single_phase_connection_is_the_best_of_all_polarity_choices():
    """Against brute force over every way to reverse coils (independent of the optimiser)."""
    for q in range(2, 13):
        for pm in range(2, 41, 2):
            lay = star_of_slots(q, pm, 1)
            u = np.exp(1j * np.radians([c.phasor_deg for c in lay.coils]))
            n = len(u)
            # Every sign pattern with the first coil as wound (a global flip changes nothing).
            bits = (np.arange(2 ** (n - 1))[:, None] >> np.arange(n - 1)) & 1
            signs = np.hstack([np.ones((len(bits), 1)), 1 - 2 * bits])
            best = np.abs(signs @ u).max() / n
            assert lay.distribution_factor == pytest.approx(best, abs=1e-9), (q, pm)


# --- pitch factors -------------------------------------------------------------------------


def test_tooth_pitch_factor_hand_values():
    # k_p = |sin(p·π/Q)|: 12 coils, 7 pole pairs: sin 105° = (√6 + √2)/4.
    assert tooth_pitch_factor(7, 12) == pytest.approx((math.sqrt(6) + math.sqrt(2)) / 4)
    # 9 coils, 4 pole pairs: sin 80°.
    assert tooth_pitch_factor(4, 9) == pytest.approx(math.sin(math.radians(80)))
    # Q = P: each coil spans exactly one pole, sin 90° = 1.
    assert tooth_pitch_factor(6, 12) == pytest.approx(1)
    # Q = p: a coil spans two poles and links no net flux.
    assert tooth_pitch_factor(6, 6) == pytest.approx(0, abs=1e-12)


@pytest.mark.parametrize("p", [1, 4, 7, 13])
def test_span_pitch_factor_hand_values(p):
    pole_pitch = math.pi / p  # mechanical radians between magnet centres
    assert span_pitch_factor(p, pole_pitch) == pytest.approx(1)
    assert span_pitch_factor(p, 2 * pole_pitch) == pytest.approx(0, abs=1e-12)
    assert span_pitch_factor(p, 2 / 3 * pole_pitch) == pytest.approx(math.sqrt(3) / 2)
    assert span_pitch_factor(p, 5 / 6 * pole_pitch) == pytest.approx(math.sin(math.radians(75)))


def test_tooth_coil_is_a_span_of_one_position():
    for q in range(2, 40):
        for p in range(1, 30):
            assert tooth_pitch_factor(p, q) == pytest.approx(span_pitch_factor(p, 2 * math.pi / q))


# --- coils and phasors ---------------------------------------------------------------------


@pytest.mark.parametrize(("coils", "magnets", "phases"), [(12, 14, 3), (9, 8, 3), (12, 20, 1)])
def test_coil_angles_and_phasors(coils, magnets, phases):
    lay = star_of_slots(coils, magnets, phases)
    p = magnets // 2
    assert [c.index for c in lay.coils] == list(range(1, coils + 1))
    for c in lay.coils:
        assert c.angle_deg == pytest.approx(360 * (c.index - 1) / coils)
    # Star of slots: phasor = ±p × mechanical angle, one sign for all coils (the sign is
    # a convention: which way the rotor turns).
    lagging = all(abs((c.phasor_deg + p * c.angle_deg + 180) % 360 - 180) < 1e-6 for c in lay.coils)
    leading = all(abs((c.phasor_deg - p * c.angle_deg + 180) % 360 - 180) < 1e-6 for c in lay.coils)
    assert lagging or leading


# --- empty positions -----------------------------------------------------------------------
# 12 positions under 16 magnets (p = 8): position k (from 0) has phasor −8·30°·k ≡ 120°·k,
# so phase A is positions 1, 4, 7, 10 all at one angle, B and C likewise. Moving four
# positions on (120° mechanical) turns a phasor by 8·120° ≡ 120° electrical: positions
# 1, 5, 9 hold one coil of each phase, 120° apart, and the star left after removing them is
# unchanged by a 120° turn, so the three phases stay equal and 120° apart.


def test_12_16_with_one_coil_of_each_phase_removed():
    empty = (1, 5, 9)
    lay = star_of_slots(12, 16, 3, empty)
    assert lay.empty_positions == empty
    assert not {c.index for c in lay.coils} & set(empty)
    assert len(lay.coils) == 9
    assert lay.balanced
    assert lay.coils_per_phase == (3, 3, 3)
    # The three coils left in each phase are still on one angle.
    assert lay.distribution_factor == pytest.approx(1)
    assert lay.winding_factor == pytest.approx(math.sin(math.radians(120)))


@pytest.mark.parametrize("empty", [(1,), (1, 4, 7, 10), (2, 3), (1, 2, 3, 4, 5, 6, 7)])
def test_12_16_unequal_removal_is_unbalanced(empty):
    # One coil gone leaves 11; 1, 4, 7, 10 is all of one phase; 2 and 3 are B and C.
    lay = star_of_slots(12, 16, 3, empty)
    assert not {c.index for c in lay.coils} & set(empty)
    assert not lay.balanced
    for f in factors(lay):
        assert 0 <= f <= 1 + 1e-12


def test_12_14_with_a_symmetric_triple_removed():
    """12/14: position k has phasor −210°·k; positions 1, 5, 9 hold 0°, 240°, 120°.

    Four positions on turns a phasor by 7·120° ≡ 120°, so the nine left form a star
    unchanged by a 120° turn: 30°, 60°, 90°, 150°, 180°, 210°, 270°, 300°, 330°. A phase
    takes one 60° belt and the opposite one reversed, e.g. 30°, 60° and 210° reversed
    (= 30°): |2 + e^{j30°}| / 3 = √(5 + 2√3) / 3.
    """
    lay = star_of_slots(12, 14, 3, (1, 5, 9))
    assert lay.balanced
    assert lay.coils_per_phase == (3, 3, 3)
    assert lay.distribution_factor == pytest.approx(math.sqrt(5 + 2 * math.sqrt(3)) / 3)


# --- parallel paths ------------------------------------------------------------------------


def usable_layouts():
    for q in range(3, 25):
        for pm in range(2, 41, 2):
            for phases in (1, 3):
                lay = star_of_slots(q, pm, phases)
                if lay.balanced and lay.distribution_factor > 1e-9:
                    yield lay


def test_parallel_paths_carry_equal_emf():
    checked = 0
    for lay in usable_layouts():
        assert 1 in lay.allowed_parallel_paths
        n = lay.coils_per_phase[0]
        for a in lay.allowed_parallel_paths:
            assert n % a == 0
            wired = star_of_slots(lay.coil_positions, lay.magnets, lay.phases, parallel_paths=a)
            assert wired.parallel_paths == a
            assert wired.series_coils_per_path == n // a
            for name in wired.phase_names:
                coils = wired.phase_coils(name)
                assert {c.path for c in coils} == set(range(1, a + 1))
                sums = []
                for path in range(1, a + 1):
                    members = [c for c in coils if c.path == path]
                    assert len(members) == n // a
                    sums.append(signed_sum(members))
                assert abs(sums[0]) > 1e-9
                for s in sums:
                    assert abs(s - sums[0]) <= 1e-6 * abs(sums[0])
            checked += 1
    assert checked > 200


# Single-phase layouts split into equal paths by hand. Position i has phasor
# −p·360°·(i − 1)/Q; the signs are picked by hand, and the witness test checks they reach
# the best factor (the layout's, itself checked by brute force above).
#
# 12 coils / 14 magnets: phasor −210°·(i − 1); reversing coils 2, 4, 6, 7, 9, 11 puts the
# signed phasors at 0°, −30°, …, −150° twice each. {1, 4, 5} and {7, 10, 11} sum to
# e^{j0°} + e^{−j90°} + e^{−j120°}, {2, 3, 6} and {8, 9, 12} to e^{−j30°} + e^{−j60°} +
# e^{−j150°}, the same vector: four paths of three coils with equal EMF.
#
# 8 coils / 12 magnets, positions 5 and 7 empty: phasors 0°, 90°, 180°, 270°, 90°, 270° at
# positions 1, 2, 3, 4, 6, 8; reversing 2, 3, 6 gives 0°, 270°, 0°, 270°, 270°, 270°, and
# {1, 2, 4}, {3, 6, 8} each sum to 1 − 2j. The same machine counted from another position
# (empty 2, 8: the empty pair turned by five positions) is reported with two paths allowed.
EQUAL_PATHS = {
    "12/14": (12, 14, (), [1, -1, 1, -1, 1, -1, -1, 1, -1, 1, -1, 1],
              [(1, 4, 5), (7, 10, 11), (2, 3, 6), (8, 9, 12)]),
    "8/12 empty 5, 7": (8, 12, (5, 7), [1, -1, -1, 1, -1, 1], [(1, 2, 4), (3, 6, 8)]),
}  # fmt: skip


@pytest.mark.parametrize(("q", "pm", "empty", "signs", "groups"), EQUAL_PATHS.values(),
                         ids=EQUAL_PATHS.keys())  # fmt: skip
def test_hand_split_into_equal_paths(q, pm, empty, signs, groups):
    positions = [i for i in range(1, q + 1) if i not in empty]
    angle = {i: -(pm // 2) * 360.0 * (i - 1) / q for i in positions}
    signed = {i: s * np.exp(1j * math.radians(angle[i])) for i, s in zip(positions, signs, strict=True)}
    best = star_of_slots(q, pm, 1, empty).distribution_factor
    assert abs(sum(signed.values())) / len(positions) == pytest.approx(best)
    assert sorted(i for g in groups for i in g) == positions
    sums = [sum(signed[i] for i in g) for g in groups]
    for s in sums:
        assert s == pytest.approx(sums[0])


def test_12_14_single_phase_allows_four_paths():
    assert 4 in star_of_slots(12, 14, 1).allowed_parallel_paths


def test_allowed_paths_do_not_depend_on_numbering():
    a = star_of_slots(8, 12, 1, (2, 8))
    b = star_of_slots(8, 12, 1, (5, 7))
    assert 2 in b.allowed_parallel_paths
    assert a.allowed_parallel_paths == b.allowed_parallel_paths


def test_unbalanced_tie_break_is_not_float_noise():
    # 37 positions under 36 magnets, five empty; the second is the same machine numbered
    # from position 2. Both have the same worst-phase factor; the belt search is meant to
    # prefer the assignment with the most even phase counts, so both should agree.
    a = star_of_slots(37, 36, 3, (1, 11, 18, 21, 35))
    b = star_of_slots(37, 36, 3, (2, 12, 19, 22, 36))
    assert a.distribution_factor == pytest.approx(b.distribution_factor, abs=1e-12)
    assert sorted(a.coils_per_phase) == sorted(b.coils_per_phase)


# --- properties ----------------------------------------------------------------------------


@st.composite
def machines(draw, min_empty=0):
    q = draw(st.integers(3, 40))
    pm = 2 * draw(st.integers(1, 30))
    phases = draw(st.sampled_from((1, 3)))
    empty = draw(st.sets(st.integers(1, q), min_size=min_empty, max_size=q - 1))
    return q, pm, phases, tuple(sorted(empty))


@PROPERTY_SETTINGS
@given(machines())
def test_factors_between_zero_and_one(machine):
    lay = star_of_slots(*machine)
    # 1e-12: a sum of unit phasors divided by their count may round just above 1.
    for f in factors(lay):
        assert 0 <= f <= 1 + 1e-12
    assert not {c.index for c in lay.coils} & set(machine[3])
    assert len(lay.coils) == machine[0] - len(machine[3])


@PROPERTY_SETTINGS
@given(machines())
def test_reported_factors_match_the_coils(machine):
    """The figures are those of the connection the layout reports, coil by coil."""
    lay = star_of_slots(*machine)
    # A phase with no coil counts as zero output, as in the layout's own figure.
    kd = min(abs(signed_sum(lay.phase_coils(x))) / max(len(lay.phase_coils(x)), 1) for x in lay.phase_names)
    assert lay.distribution_factor == pytest.approx(kd, abs=1e-9)
    as_wound = abs(sum(np.exp(1j * math.radians(c.phasor_deg)) for c in lay.coils))
    assert lay.as_wound_distribution_factor == pytest.approx(as_wound / len(lay.coils), abs=1e-9)
    assert all(c.polarity in (1, -1) for c in lay.coils)
    assert {c.phase for c in lay.coils} <= set(lay.phase_names)


@PROPERTY_SETTINGS
@given(machines())
def test_balanced_layouts_have_equal_phases(machine):
    lay = star_of_slots(*machine)
    if lay.phases == 3 and lay.balanced:
        counts = [len(lay.phase_coils(x)) for x in "ABC"]
        assert counts[0] == counts[1] == counts[2] == len(lay.coils) // 3
        assert list(lay.coils_per_phase) == counts
        mags = lay.phase_magnitudes
        assert max(mags) - min(mags) <= 1e-6 * max(mags)


@PROPERTY_SETTINGS
@given(machines(min_empty=1), st.data())
def test_factors_do_not_depend_on_where_numbering_starts(machine, data):
    """Renumbering from another position is the same machine.

    Turning the pattern of empty positions by r positions (e → e + r mod Q) gives the
    machine one would get by starting the count r positions earlier: every as-wound phasor
    turns by the same angle −p·r·360°/Q, phasor differences stay as they were, and so must
    every factor and the balance. Formulation: compare the factors of both numberings,
    and check that the second's phasors are the first's turned by that one angle. At
    least one position is empty (with none both calls would be the same). Parallel path
    counts are left out: see test_allowed_paths_do_not_depend_on_numbering.
    """
    q, pm, phases, empty = machine
    r = data.draw(st.integers(1, q - 1))
    shifted = tuple(sorted((e - 1 + r) % q + 1 for e in empty))
    a = star_of_slots(q, pm, phases, empty)
    b = star_of_slots(q, pm, phases, shifted)
    assert factors(b) == pytest.approx(factors(a), abs=1e-9)
    assert a.balanced == b.balanced
    if a.balanced:
        # Unbalanced layouts can tie on the worst phase and differ in the others (see
        # test_unbalanced_tie_break_is_not_float_noise), so only balanced ones are compared.
        assert sorted(a.coils_per_phase) == sorted(b.coils_per_phase)
        assert sorted(a.phase_magnitudes) == pytest.approx(sorted(b.phase_magnitudes), abs=1e-9)
    # The machines are the same: as-wound phasors of b are those of a turned by one angle.
    turn = -(pm // 2) * 360.0 * r / q
    turned_back = sorted(round((c.phasor_deg - turn) % 360, 6) % 360 for c in b.coils)
    original = sorted(round(c.phasor_deg % 360, 6) % 360 for c in a.coils)
    assert turned_back == pytest.approx(original, abs=1e-5)


def test_terminal_markings_follow_iec_60034_8():
    from layout.winding import terminal_markings, terminal_pair

    # IEC 60034-8: phase windings U, V, W, each from 1 to 2.
    assert terminal_markings(3) == ("U1", "U2", "V1", "V2", "W1", "W2")
    assert terminal_markings(1) == ("U1", "U2")
    assert terminal_pair("B") == ("V1", "V2")


def test_electrical_frequency_is_pole_pairs_times_revolutions_per_second():
    from layout.winding import electrical_hz

    # f = P·rpm/120 with P magnets (Gieras, Wang & Kamper 2008): 16 magnets at 300 rpm → 40 Hz.
    assert float(electrical_hz(8, 300)) == pytest.approx(16 * 300 / 120)
    assert np.allclose(electrical_hz(5, [0, 60, 120]), [0, 5, 10])
