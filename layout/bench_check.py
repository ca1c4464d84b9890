"""Bench readings of a finished machine against its design: which fault explains them.

Method.

1. The winding as connected, harmonic by harmonic. Coil 1's open-circuit EMF per turn and
   per rad/s over one electrical period (`Prediction.emf.coil_v`: the field model's, with a
   saturated plate's derate) is resolved into harmonics c_ν. Coil k, at mechanical angle
   α_k, sees the same field p·α_k later, so as connected its EMF is s_k·c_ν·e^{−iνpα_k}
   (s_k its polarity): the shift `emf.phase_emf` applies, so the coils of a path add up to
   the model's phase EMF exactly. Scaled by turns and speed, and by the ratio of the
   sheet's open-circuit figure (magnets at room temperature) to the model's, so the sound
   machine's line voltage is the figure the test plan prints.
2. A fault is a change to the coils (`Part`): a coil connected the wrong way round
   multiplies its EMF by −1; a whole phase backwards, the phase's; t times the turns
   multiplies a coil's EMF and resistance by t and its inductance by t² (the same wire on
   the same former: resistance goes with the length of wire, inductance with the square of
   the turns, Wheeler 1928); a wire of another size changes the resistance alone; a
   shorted coil adds nothing and resists nothing; an open coil takes its path out.
3. The terminals at open circuit, each harmonic apart (a linear network): a phase's paths
   in parallel give it the Thevenin EMF Σ(E_p/Z_p)/Σ(1/Z_p), each path's Z being the sum of
   R + jνω_e·L of its coils (mutual coupling neglected, as in `model`). A star carries no
   current, so line U-V reads E_U − E_V. A delta carries I = ΣE/ΣZ round itself and each
   side reads E_j − Z_j·I; with one side open, the other two (−ΣE of them) appear across
   it. RMS from the harmonics (Parseval). The bridge's DC output with no load is the
   highest line voltage's peak less two diode drops (a capacitor across it holds the
   peak), or the mean of that envelope when nothing smooths it.
4. Each hypothesis predicts every reading. A resistance agrees within RESISTANCE_BAND_PCT
   of its prediction (an open coil: OPEN_RATIO times the coil's or more; a short:
   SHORT_SHARE of it or less). The phase resistances, each divided by its prediction,
   agree within PHASE_MATCH_PCT of each other, as the test plan asks of a sound winding.
   Voltages may all be off by one common factor g (the magnets' strength, the gap as
   built, the speed reading): their ratios to the prediction must agree within
   PHASE_MATCH_PCT (the pattern), and g must lie in the open-circuit band (the grade's Br
   span widened by OPEN_CIRCUIT_BAND_PCT) for the magnets to be as designed.
5. The simplest account wins. Faults the coil resistances show directly (open, short,
   turns of a coil read alone) are taken as found; on top of them one more fault of any
   kind is sought (reversed coil or phase; short, open or wrong turns of a coil or a phase
   not read alone). If nothing more is needed, nothing more is said; otherwise every single
   fault that fits is listed, and when several coils fit alike they are named together
   with a way to find the one. Only then is a common factor outside the band accepted (the
   magnets, the gap or the speed reading, said so), and last two coils reversed at once.
   Where a fault fits in band and a sound pattern fits out of it, both are said.
6. A recorded waveform (steady speed, at least one revolution): the rotor angle advances
   uniformly, so a sound rotor's waveform repeats every electrical period and its spectrum
   holds only multiples of the electrical frequency p·n/60. A magnet the wrong way up or
   missing makes the pattern repeat once a revolution: energy appears at multiples of the
   shaft frequency n/60 that are not multiples of p, in proportion to the winding's array
   factor |Σ c_k e^{−ihα_k}| at that order h (a winding whose array factor vanishes there,
   every coil seeing the magnets alike, cannot show it). The spectrum is taken at exact
   orders over whole revolutions (order analysis; e.g. Fyfe & Munck, Mech. Syst. Signal
   Process. 11(2), 1997, from memory). The fundamental's rms joins the voltage readings
   (one magnet of M flipped takes 2/M off it, by superposition, so the band widens by that
   where one is seen), and two channels give the phase sequence from the lag between their
   fundamentals.

Units: ohms, volts (rms unless named), rpm, seconds. Pure functions of the Design's
figures and the readings; the bands come from the caller (the sheet's, `fab.sheet.words`).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np

from layout.design import Design
from layout.emf import FIELD_SAMPLES_PER_POLE
from layout.readings import RESISTANCE_WHATS, Reading, Waveform, line_pairs, terminal_letters
from layout.rotor import disc_count
from layout.winding import TERMINAL_LETTERS, Coil

# A coil reading this many times its resistance has a break, a joint not made or enamel not
# scraped: its window holds at most MAX_COPPER_FILL/fill_factor (1.5 at the usual fill) of
# its turns of that wire, so no winding slip gets near it (our own margin).
OPEN_RATIO = 10.0
# A coil reading under this share of its resistance is shorted across (leads touching, or
# turns to turns across most of it); between this and the band, turns are missing or shorted
# among themselves (our own margin).
SHORT_SHARE = 0.2
# A meter across terminals no conducting path joins reads little: stray capacitance and its
# own input share what it sees (our own margin).
FLOATING_SHARE = 0.25
# A sound rotor's magnets differ by the grade's Br spread, which puts a few tenths of a per
# cent of the fundamental at the orders a revolution adds; one magnet flipped puts 6 to 19 %
# there on the three-phase demos (the field model with one magnet reversed, brute force in
# tests/test_check.py), a missing one 3 to 9 % (our own threshold between them).
FLIPPED_ORDER_SHARE = 0.02
# The halves of a recording must agree on the speed this closely for the orders to be sharp.
STEADY_SPEED_PCT = 1.0
# Two channels' lag is named a sequence within this of the model's (our own margin, wide
# against a scope's channel skew, well under a degree at these frequencies).
SEQUENCE_TOL_DEG = 15.0
# Read from voltages alone, a phase's turns are sought within this factor of the design's: a
# miscounted coil or two shifts a phase by a fraction; past it the resistance would be the
# evidence, and a reversed coil explains the voltages more simply (our own bound).
VOLTAGE_TURNS_RANGE = (0.75, 1.33)
# The highest electrical harmonic the field model resolves (layout.emf).
HARMONICS_RESOLVED = FIELD_SAMPLES_PER_POLE - 1
_DC = "dc_voltage_v"
WAVEFORM_WHAT = "waveform_fundamental_v"

# Findings that describe rather than condemn: they leave the verdict "ok".
INFO_CODES = frozenset(
    {"ok", "phase.sequence", "waveform.too_short", "waveform.unsteady", "waveform.blind", "reading.speed"}
)


@dataclass(frozen=True)
class Bands:
    """The tolerances a reading is judged by (the build sheet's, `fab.sheet.words`)."""

    resistance_pct: float
    open_circuit_pct: float
    phase_match_pct: float
    br_span: tuple[float, float]  # the grade's Br range over its typical value

    @property
    def voltage_factor(self) -> tuple[float, float]:
        """The common factor on every voltage that the magnets as designed allow."""
        lo, hi = self.br_span
        return lo * (1 - self.open_circuit_pct / 100), hi * (1 + self.open_circuit_pct / 100)


@dataclass(frozen=True)
class BenchModel:
    """The winding as connected: each coil's EMF harmonics and the copper's figures."""

    coils: tuple[Coil, ...]
    phase_index: np.ndarray  # (n,) 0, 1, 2 for A, B, C
    path_index: np.ndarray  # (n,) 0 .. a−1
    emf_v_per_rpm: np.ndarray  # (n, H) complex harmonics ν = 0..H−1 as connected, V per rpm
    coil_resistance_ohm: float  # 20 °C
    coil_inductance_h: float
    pole_pairs: int
    phases: int
    connection: str  # star, delta, single_phase
    parallel_paths: int
    diode_drop_v: float
    rated_rpm: float
    magnets_seen: int  # magnets on the rotor, every magnet disc
    turns_per_coil: int
    magnets: str  # "grade N42", or the Br given

    @property
    def letters(self) -> tuple[str, ...]:
        return terminal_letters(self.phases)

    def position(self, index: int) -> int:
        """The row of coil `index` (position number) in the arrays."""
        return next(i for i, c in enumerate(self.coils) if c.index == index)


def bench_model(design: Design, line_rms_v: Callable[[float], float]) -> BenchModel:
    """The winding of `design` as connected, scaled so that its sound line voltage at any rpm
    is `line_rms_v(rpm)` (the sheet's open-circuit figure)."""
    pr, lay, mg = design.prediction, design.layout, design.spec.magnets
    m = pr.emf.samples
    c = np.fft.rfft(pr.emf.coil_v) * 2 / m
    c[0] = 0.0  # an EMF has no mean
    keep = np.flatnonzero(np.abs(c) > 1e-9 * np.abs(c).max())
    c = c[: int(keep.max()) + 1]
    nu = np.arange(len(c))
    p = lay.pole_pairs
    alpha = np.radians([k.angle_deg for k in lay.coils])
    sign = np.array([k.polarity for k in lay.coils], dtype=float)
    harm = sign[:, None] * c[None, :] * np.exp(-1j * np.outer(alpha * p, nu))
    rated = pr.rated_rpm
    model_line = float(np.sqrt(np.mean(pr.line_emf_v(rated)[0] ** 2)))
    scale = line_rms_v(rated) / model_line
    per_rpm = harm * pr.turns_per_coil * 2 * math.pi / 60 * scale
    return BenchModel(
        coils=lay.coils,
        phase_index=np.array([lay.phase_names.index(k.phase) for k in lay.coils]),
        path_index=np.array([k.path - 1 for k in lay.coils]),
        emf_v_per_rpm=per_rpm,
        coil_resistance_ohm=pr.coil_resistance_ohm,
        coil_inductance_h=pr.coil_inductance_mh / 1e3,
        pole_pairs=p,
        phases=lay.phases,
        connection=design.spec.connection.kind,
        parallel_paths=lay.parallel_paths,
        diode_drop_v=design.spec.target.diode_drop_v,
        rated_rpm=rated,
        magnets_seen=design.spec.magnets.count * disc_count(design.spec),
        turns_per_coil=pr.turns_per_coil,
        magnets=f"grade {mg.grade}" if mg.grade else f"magnets of Br {mg.remanence_t:g} T",
    )


# ---------------------------------------------------------------- hypotheses


@dataclass(frozen=True)
class Part:
    """One fault: what, which coils (position numbers), and a factor where it has one."""

    code: str  # coil.reversed, phase.reversed, coil.turns, coil.wire, coil.short, coil.open
    coils: tuple[int, ...]
    factor: float | None = None  # turns (coil.turns) or resistance (coil.wire) over design
    phase: str | None = None  # terminal letter, for a fault of a whole phase


@dataclass(frozen=True)
class Hypothesis:
    parts: tuple[Part, ...]
    emf: np.ndarray  # (n,) multiplier of each coil's EMF
    resistance: np.ndarray  # (n,) multiplier of its resistance; inf open, 0 shorted
    inductance: np.ndarray  # (n,)
    phase_sign: np.ndarray  # (phases,)


def hypothesis(model: BenchModel, parts: Sequence[Part]) -> Hypothesis:
    """The coils' multipliers under these faults together."""
    n = len(model.coils)
    emf, res, ind = np.ones(n), np.ones(n), np.ones(n)
    sign = np.ones(model.phases)
    for part in parts:
        rows = [model.position(k) for k in part.coils]
        if part.code == "coil.reversed":
            emf[rows] *= -1
        elif part.code == "phase.reversed":
            sign[model.letters.index(part.phase)] *= -1
        elif part.code == "coil.turns":
            emf[rows] *= part.factor
            res[rows] *= part.factor
            ind[rows] *= part.factor**2
        elif part.code == "coil.wire":
            res[rows] *= part.factor
        elif part.code == "coil.short":
            emf[rows], res[rows], ind[rows] = 0.0, 0.0, 0.0
        elif part.code == "coil.open":
            res[rows] = np.inf
        else:
            raise ValueError(part.code)
    return Hypothesis(tuple(parts), emf, res, ind, sign)


_Z_FLOOR = 1e-9  # of a coil's resistance: a path of shorted coils conducts, without 0/0


def _phase_sources(model: BenchModel, hyp: Hypothesis, rpm: float):
    """Per phase: (Thevenin EMF (H,), impedance (H,)) at open circuit, or None if it is open."""
    h = model.emf_v_per_rpm.shape[1]
    nu = np.arange(h)
    we = model.pole_pairs * rpm * 2 * math.pi / 60
    e = model.emf_v_per_rpm * rpm * hyp.emf[:, None] * hyp.phase_sign[model.phase_index][:, None]
    r = model.coil_resistance_ohm * hyp.resistance
    x = model.coil_inductance_h * hyp.inductance
    out = []
    for j in range(model.phases):
        e_paths, y_paths = [], []
        for a in range(model.parallel_paths):
            rows = (model.phase_index == j) & (model.path_index == a)
            if not rows.any() or np.isinf(r[rows]).any():
                continue
            z = r[rows].sum() + 1j * nu * we * x[rows].sum() + _Z_FLOOR * model.coil_resistance_ohm
            e_paths.append(e[rows].sum(axis=0))
            y_paths.append(1 / z)
        if not e_paths:
            out.append(None)
            continue
        y = np.sum(y_paths, axis=0)
        out.append((np.sum([ep * yp for ep, yp in zip(e_paths, y_paths, strict=True)], axis=0) / y, 1 / y))
    return out


@dataclass(frozen=True)
class Terminals:
    """Harmonics (H,) of every voltage one can read at open circuit; None: nothing joins them."""

    phase: dict[str, np.ndarray | None]  # a phase winding's own EMF, by terminal letter
    line: dict[str, np.ndarray | None]  # across the terminals as connected, by pair
    loop_a: np.ndarray | None  # a closed delta's circulating current, by harmonic


def terminals(model: BenchModel, hyp: Hypothesis, rpm: float) -> Terminals:
    """Open-circuit voltages of the winding under `hyp` at `rpm`, harmonic by harmonic."""
    src = _phase_sources(model, hyp, rpm)
    letters = model.letters
    phase = {t: (s[0] if s is not None else None) for t, s in zip(letters, src, strict=True)}
    line: dict[str, np.ndarray | None] = {}
    loop = None
    pairs = line_pairs(model.phases)
    if model.connection == "star":
        for k, pair in enumerate(pairs):
            a, b = phase[letters[k]], phase[letters[(k + 1) % 3]]
            line[pair] = a - b if a is not None and b is not None else None
    elif model.connection == "delta":
        # Side j (phase j, U1 to U2) lies between lines j and j+1 (U1-W2, V1-U2, W1-V2).
        open_ = [j for j in range(3) if src[j] is None]
        if not open_:
            loop = sum(s[0] for s in src) / sum(s[1] for s in src)
            for j, pair in enumerate(pairs):
                line[pair] = src[j][0] - src[j][1] * loop
        else:
            for j, pair in enumerate(pairs):
                if src[j] is not None:
                    line[pair] = src[j][0]
                elif len(open_) == 1:
                    line[pair] = -sum(src[i][0] for i in range(3) if i != j)
                else:
                    line[pair] = None
    return Terminals(phase, line, loop)


def rms_of(harmonics: np.ndarray) -> float:
    """RMS of Re Σ V_ν e^{iνθ} (no mean): √(Σ|V_ν|²/2), Parseval."""
    return float(np.sqrt(np.sum(np.abs(harmonics[1:]) ** 2) / 2))


_ENVELOPE_SAMPLES = 720


def _envelope(lines: list[np.ndarray]) -> np.ndarray:
    """max over the lines of |v(θ)| over one electrical period: what a bridge passes."""
    h = lines[0].shape[0]
    theta = 2 * math.pi * np.arange(_ENVELOPE_SAMPLES) / _ENVELOPE_SAMPLES
    basis = np.exp(1j * np.outer(theta, np.arange(h)))
    return np.abs(np.real(basis @ np.array(lines).T)).max(axis=1)


@dataclass(frozen=True)
class Predicted:
    """A reading's value under a hypothesis. `value` None: no conducting path joins the
    meter's leads. A DC reading also has its unsmoothed value (`unsmoothed_v`)."""

    value: float | None
    unsmoothed_v: float | None = None


def predict(
    model: BenchModel, hyp: Hypothesis, what: str, where: str, rpm: float | None, at: Terminals | None = None
) -> Predicted:
    """The value of one reading (`layout.readings.Reading` fields) under `hyp`; `at`: the
    terminals under `hyp` at `rpm`, where already computed."""
    if what == "coil_resistance_ohm":
        return Predicted(model.coil_resistance_ohm * float(hyp.resistance[model.position(int(where))]))
    if what == "phase_resistance_ohm":
        return Predicted(_phase_resistance(model, hyp, model.letters.index(where)))
    t = at if at is not None else terminals(model, hyp, rpm)
    if what in ("phase_voltage_v", "line_voltage_v", WAVEFORM_WHAT):
        v = t.phase[where] if where in t.phase else t.line[where]
        if v is None:
            return Predicted(None)
        return Predicted(float(np.abs(v[1])) / math.sqrt(2) if what == WAVEFORM_WHAT else rms_of(v))
    if what == _DC:
        seen = [v for v in (t.line.values() if model.phases == 3 else t.phase.values()) if v is not None]
        if not seen:
            return Predicted(None)
        env = _envelope(seen)
        drop = 2 * model.diode_drop_v
        return Predicted(max(float(env.max()) - drop, 0.0), max(float(env.mean()) - drop, 0.0))
    raise ValueError(what)


def _phase_resistance(model: BenchModel, hyp: Hypothesis, j: int) -> float:
    """Phase j's resistance at 20 °C (its paths in parallel); inf if every path is open."""
    r = model.coil_resistance_ohm * hyp.resistance
    conductance = 0.0
    for a in range(model.parallel_paths):
        rows = (model.phase_index == j) & (model.path_index == a)
        path = float(r[rows].sum())
        if math.isinf(path):
            continue
        conductance += 1 / max(path, _Z_FLOOR * model.coil_resistance_ohm)
    return math.inf if conductance == 0 else 1 / conductance


# ---------------------------------------------------------------- fitting


@dataclass(frozen=True)
class Fit:
    """How one hypothesis meets the readings."""

    hypothesis: Hypothesis
    resistances_agree: bool
    pattern_agrees: bool  # the voltages' ratios to prediction agree, and floating ones read little
    factor: float | None  # the voltages' common factor g; None without voltage readings
    in_band: bool  # g within Bands.voltage_factor (True without voltages)
    misfit: float  # ≤ 1 when resistances and pattern agree; to rank the near misses
    dc_smoothed: bool | None = None  # which way the DC readings fit, None without them

    @property
    def agrees(self) -> bool:
        return self.resistances_agree and self.pattern_agrees

    @property
    def fits(self) -> bool:
        return self.agrees and self.in_band


def _resistance_misfit(model: BenchModel, m: float, p: float, bands: Bands) -> float:
    """≤ 1 when a resistance reading m agrees with the prediction p."""
    rc = model.coil_resistance_ohm
    if math.isinf(p):
        return 0.0 if m >= OPEN_RATIO * rc else 1.0 + math.log(OPEN_RATIO * rc / max(m, 1e-12))
    if p <= _Z_FLOOR * rc * 10:
        return m / (SHORT_SHARE * rc)
    return abs(math.log(max(m, 1e-12) / p)) / math.log(1 + bands.resistance_pct / 100)


def fit(
    model: BenchModel,
    hyp: Hypothesis,
    readings: Sequence[Reading],
    bands: Bands,
    expected: dict[int, float],
    factor_range: tuple[float, float] | None = None,
) -> Fit:
    """Judge `hyp` against the readings (method, step 4). `expected`: each voltage reading's
    sound value by its index, for the floating test. `factor_range`: the g the magnets allow
    (by default `bands.voltage_factor`)."""
    match = math.log(1 + bands.phase_match_pct / 100)
    worst = 0.0
    phase_ratios = []
    ratios: list[float] = []
    dc_pairs: list[tuple[float, float]] = []
    floating = 0.0  # the worst reading across terminals nothing joins, over what it may show
    at: dict[float, Terminals] = {}
    for i, rd in enumerate(readings):
        if rd.rpm is not None and rd.what not in RESISTANCE_WHATS and rd.rpm not in at:
            at[rd.rpm] = terminals(model, hyp, rd.rpm)
        pr = predict(model, hyp, rd.what, rd.where, rd.rpm, at.get(rd.rpm))
        if rd.what in RESISTANCE_WHATS:
            worst = max(worst, _resistance_misfit(model, rd.value, pr.value, bands))
            if (
                rd.what == "phase_resistance_ohm"
                and math.isfinite(pr.value)
                and pr.value > 0
                and rd.value > 0
            ):
                phase_ratios.append(math.log(rd.value / pr.value))
            continue
        if pr.value is None or pr.value <= 0:
            floating = max(floating, rd.value / (FLOATING_SHARE * expected[i]))
            continue
        offset = 2 * model.diode_drop_v if rd.what == _DC else 0.0
        if rd.what == _DC:
            dc_pairs.append(
                (
                    math.log(max(rd.value + offset, 1e-12) / (pr.value + offset)),
                    math.log(max(rd.value + offset, 1e-12) / (pr.unsmoothed_v + offset)),
                )
            )
        else:
            ratios.append(math.log(max(rd.value, 1e-12) / pr.value))
    if len(phase_ratios) > 1:
        worst = max(worst, (max(phase_ratios) - min(phase_ratios)) / match)
    resist_ok = worst <= 1 + 1e-9
    # The DC readings fit smoothed or unsmoothed, all alike (one meter, one set-up): the better.
    options = [(ratios + [a for a, _ in dc_pairs], True), (ratios + [b for _, b in dc_pairs], False)]
    if not dc_pairs:
        options = options[:1]
    best = None
    for logs, smoothed in options:
        if not logs:
            continue
        spread = max(logs) - min(logs)
        if best is None or spread < best[0] - 1e-12:
            best = (spread, (max(logs) + min(logs)) / 2, smoothed)
    lo, hi = factor_range or bands.voltage_factor
    if best is None:
        return Fit(hyp, resist_ok, floating <= 1, None, True, max(worst, floating))
    spread, mid, smoothed = best
    g = math.exp(mid)
    misfit = max(worst, spread / match, floating)
    return Fit(
        hyp,
        resist_ok,
        floating <= 1 and spread <= match * (1 + 1e-9),
        g,
        lo * (1 - 1e-9) <= g <= hi * (1 + 1e-9),
        misfit,
        smoothed if dc_pairs else None,
    )


def _solve_factor(f: Callable[[float], float], target: float, lo: float = 0.05, hi: float = 20.0) -> float:
    """x in [lo, hi] with f(x) = target for an increasing f, by bisection in log x."""
    a, b = math.log(lo), math.log(hi)
    for _ in range(60):
        mid = (a + b) / 2
        if f(math.exp(mid)) < target:
            a = mid
        else:
            b = mid
    return math.exp((a + b) / 2)


def _golden(f: Callable[[float], float], a: float, b: float, steps: int) -> float:
    """The x in [a, b] where a unimodal f is least, by golden-section search."""
    gr = (math.sqrt(5) - 1) / 2
    c, d = b - gr * (b - a), a + gr * (b - a)
    fc, fd = f(c), f(d)
    for _ in range(steps):
        if fc < fd:
            b, d, fd = d, c, fc
            c = b - gr * (b - a)
            fc = f(c)
        else:
            a, c, fc = c, d, fd
            d = a + gr * (b - a)
            fd = f(d)
    return (a + b) / 2


def _best_factor(score: Callable[[float], float], lo: float, hi: float) -> float:
    """The factor in [lo, hi] with the least score: a coarse grid in log, then golden section
    between the best point's neighbours."""
    grid = np.log(np.geomspace(lo, hi, 25))
    k = int(np.argmin([score(math.exp(x)) for x in grid]))
    a, b = grid[max(k - 1, 0)], grid[min(k + 1, len(grid) - 1)]
    return math.exp(_golden(lambda x: score(math.exp(x)), a, b, 20))


# ---------------------------------------------------------------- waveform


@dataclass(frozen=True)
class OrderAnalysis:
    """One channel of a recording, analysed in orders of the shaft speed."""

    where: str
    electrical_hz: float  # the fundamental's frequency, from the recording itself
    rpm_from_frequency: float  # 60·f/p
    revolutions: float  # how many the recording covers
    fundamental_rms_v: float
    phasor: complex  # fundamental at the recording's t = 0 (V, peak)
    steady: bool  # both halves agree on the speed within STEADY_SPEED_PCT
    off_order_share: float | None  # rms at orders not multiples of p over the fundamental's
    orders_visible: bool  # the winding's array factor lets a flipped magnet show here


def _uniform(t: np.ndarray, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Samples on a uniform time grid (a scope's export is; a logger's may not be)."""
    dt = np.diff(t)
    if dt.max() - dt.min() <= 1e-3 * dt.mean():
        return t, v
    grid = np.linspace(t[0], t[-1], len(t))
    return grid, np.interp(grid, t, v)


def _amplitude_at(t: np.ndarray, x: np.ndarray, hz: float, window: np.ndarray) -> complex:
    """(2/Σw)·Σ w·x·e^{−2πif(t − t0)}: the complex amplitude of x at one frequency."""
    return complex(np.exp(-2j * math.pi * hz * (t - t[0])) @ (window * x)) * 2 / window.sum()


def _fundamental_hz(t: np.ndarray, v: np.ndarray, guess_hz: float) -> float:
    """The strongest frequency between half and twice the guess, to a small part of a bin:
    the peak of a Hann-windowed, zero-padded spectrum, refined by golden section."""
    dt = t[1] - t[0]
    w = np.hanning(len(v))
    x = v - v.mean()
    pad = 4 * len(x)
    spec = np.abs(np.fft.rfft(w * x, n=pad))
    hz = np.fft.rfftfreq(pad, dt)
    band = (hz >= 0.5 * guess_hz) & (hz <= 2.0 * guess_hz)
    if not band.any():
        return guess_hz
    k = int(np.flatnonzero(band)[np.argmax(spec[band])])
    return _golden(lambda f: -abs(_amplitude_at(t, x, f, w)), hz[k] - hz[1], hz[k] + hz[1], 40)


def array_factor(model: BenchModel, where: str, order: int) -> float:
    """|Σ c_k e^{−ihα_k}| / Σ|c_k| at mechanical order h for the voltage at `where`: how much
    of a pattern the rotor carries once a revolution reaches those terminals."""
    w = _weights(model, where)
    alpha = np.radians([c.angle_deg for c in model.coils])
    return float(abs(np.sum(w * np.exp(-1j * order * alpha))) / max(np.abs(w).sum(), 1e-12))


def _weights(model: BenchModel, where: str) -> np.ndarray:
    """Each coil's share c_k (polarity included) of the voltage at `where`, sound winding:
    a phase's coils over its paths; a star's line, one phase less the other; a delta's side,
    its phase less a third of all three (the loop current's drop)."""
    sign = np.array([c.polarity for c in model.coils], dtype=float) / model.parallel_paths

    def phase(letter):
        return np.where(model.phase_index == model.letters.index(letter), sign, 0.0)

    if "-" not in where:
        return phase(where)
    x, y = where.split("-")
    if model.connection == "delta":
        return phase(x) - sign / 3
    return phase(x) - phase(y)


_PER_REVOLUTION = 1024  # angle samples a revolution for the order spectrum


def analyse_channel(model: BenchModel, t: np.ndarray, v: np.ndarray, where: str, rpm: float) -> OrderAnalysis:
    """Frequency, fundamental and order spectrum of one recorded channel (method, step 6).

    The speed is taken from the recording's own fundamental; whole revolutions of it are
    resampled onto a uniform grid of rotor angle, so that order h falls on a bin exactly."""
    t, v = _uniform(np.asarray(t, float), np.asarray(v, float))
    p = model.pole_pairs
    dt = t[1] - t[0]
    fe = _fundamental_hz(t, v, p * rpm / 60)
    half = len(t) // 2
    fe1, fe2 = _fundamental_hz(t[:half], v[:half], fe), _fundamental_hz(t[half:], v[half:], fe)
    steady = abs(fe1 - fe2) <= STEADY_SPEED_PCT / 100 * fe
    fm = fe / p
    revs = (t[-1] - t[0]) * fm
    whole = math.floor(revs)
    visible = any(array_factor(model, where, h) > 1e-6 for h in range(1, p * HARMONICS_RESOLVED + 1) if h % p)
    share = None
    if whole >= 1:
        n = whole * _PER_REVOLUTION
        at = t[0] + np.arange(n) / (_PER_REVOLUTION * fm)
        x = np.interp(at, t, v)
        x -= x.mean()
        spec = np.fft.rfft(x) * 2 / n
        one = complex(spec[whole * p])
        top = min(p * HARMONICS_RESOLVED, int(0.45 / (dt * fm)), _PER_REVOLUTION // 2 - 1)
        orders = np.array([h for h in range(1, top + 1) if h % p])
        if steady and visible and abs(one) > 0 and len(orders):
            share = float(np.sqrt(np.sum(np.abs(spec[orders * whole]) ** 2)) / abs(one))
    else:
        one = _amplitude_at(t, v - v.mean(), fe, np.ones_like(v))
    return OrderAnalysis(
        where=where,
        electrical_hz=fe,
        rpm_from_frequency=60 * fe / p,
        revolutions=revs,
        fundamental_rms_v=abs(one) / math.sqrt(2),
        phasor=one,
        steady=steady,
        off_order_share=share,
        orders_visible=visible,
    )


# ---------------------------------------------------------------- the check


@dataclass(frozen=True)
class Finding:
    code: str
    coils: tuple[int, ...]
    message: str
    what_to_do: str


@dataclass(frozen=True)
class Compared:
    """One reading beside the sound design's value at its speed."""

    what: str
    where: str
    rpm: float | None
    measured: float
    expected: float
    deviation_pct: float
    low: float  # the band it is judged by, alone
    high: float


@dataclass(frozen=True)
class BenchCheck:
    verdict: str  # "ok" or "fault"
    findings: tuple[Finding, ...]
    compared: tuple[Compared, ...]
    waveform: tuple[OrderAnalysis, ...] = field(default=())


def _and(items: Sequence[object]) -> str:
    items = [str(x) for x in items]
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _or(items: Sequence[object]) -> str:
    items = [str(x) for x in items]
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " or " + items[-1]


def _cap(text: str) -> str:
    """The first letter upper case, the rest as written (str.capitalize lowers them)."""
    return text[:1].upper() + text[1:]


def _phase_word(model: BenchModel, letter: str) -> str:
    return f"phase {letter}" if model.phases == 3 else "the winding"


def _letter(model: BenchModel, index: int) -> str:
    return TERMINAL_LETTERS[model.coils[model.position(index)].phase]


def _compared(model: BenchModel, readings: Sequence[Reading], bands: Bands, sound: Hypothesis):
    rows, expected = [], {}
    lo_g, hi_g = bands.voltage_factor
    for i, rd in enumerate(readings):
        e = predict(model, sound, rd.what, rd.where, rd.rpm).value
        expected[i] = e
        if rd.what in RESISTANCE_WHATS:
            lo, hi = e * (1 - bands.resistance_pct / 100), e * (1 + bands.resistance_pct / 100)
        else:
            off = 2 * model.diode_drop_v if rd.what == _DC else 0.0
            lo, hi = (e + off) * lo_g - off, (e + off) * hi_g - off
        dev = 100 * (rd.value / e - 1) if e > 0 else 0.0
        rows.append(Compared(rd.what, rd.where, rd.rpm, rd.value, e, dev, lo, hi))
    return tuple(rows), expected


def _coil_base(model: BenchModel, readings: Sequence[Reading], bands: Bands) -> list[list[Part]]:
    """The faults the coil resistances show directly (method, step 5): one list, or two where a
    coil reads off (wrong turns, or the right turns of another wire)."""
    rc = model.coil_resistance_ohm
    by_coil: dict[int, list[float]] = {}
    for rd in readings:
        if rd.what == "coil_resistance_ohm":
            by_coil.setdefault(int(rd.where), []).append(rd.value)
    ratio = {k: float(np.median(v)) / rc for k, v in by_coil.items()}
    band = bands.resistance_pct / 100
    parts: list[Part] = []
    sound = [r for r in ratio.values() if SHORT_SHARE < r < OPEN_RATIO]
    ref = 1.0
    common: Part | None = None
    # Every coil off alike (3 or more read, most within the band of their median): the wire,
    # the meter's leads or the turns of them all, not one coil.
    if len(sound) >= 3:
        med = float(np.median(sound))
        alike = sum(abs(r / med - 1) <= band for r in sound)
        if abs(med - 1) > band and alike > len(sound) / 2:
            ref = med
            common = Part("coil.turns", tuple(c.index for c in model.coils), med)
    offs = []
    for k in sorted(ratio):
        r = ratio[k]
        if r >= OPEN_RATIO:
            parts.append(Part("coil.open", (k,)))
        elif r <= SHORT_SHARE:
            parts.append(Part("coil.short", (k,)))
        elif abs(r / ref - 1) > band:
            offs.append((k, r / ref))
    turns = parts + ([common] if common else []) + [Part("coil.turns", (k,), f) for k, f in offs]
    if not offs and common is None:
        return [turns]
    wire = parts + ([Part("coil.wire", common.coils, ref)] if common else [])
    wire += [Part("coil.wire", (k,), f) for k, f in offs]
    return [turns, wire]


def check(
    model: BenchModel,
    readings: Sequence[Reading],
    bands: Bands,
    waveform: Waveform | None = None,
) -> BenchCheck:
    """The readings (and a recording) against the design: a table and what it says."""
    readings = list(readings)
    sound = hypothesis(model, [])
    analyses: tuple[OrderAnalysis, ...] = ()
    wave_findings: list[Finding] = []
    flipped = False
    if waveform is not None:
        analyses = tuple(
            analyse_channel(model, waveform.time_s, v, w, waveform.rpm) for w, v in waveform.channels
        )
        readings += [Reading(WAVEFORM_WHAT, a.where, a.fundamental_rms_v, waveform.rpm, 0) for a in analyses]
        wave_findings, flipped = _waveform_findings(model, analyses, waveform, bands)
    compared, expected = _compared(model, readings, bands, sound)
    lo_g, hi_g = bands.voltage_factor
    # One flipped magnet of M takes 2/M off the fundamental (each magnet's share equal, by
    # superposition); a missing one 1/M: the band widens down to that where one is seen.
    factor_range = (lo_g * (1 - 2 / model.magnets_seen), hi_g) if flipped else None

    def judge(parts):
        return fit(model, hypothesis(model, parts), readings, bands, expected, factor_range)

    bases = _coil_base(model, readings, bands)
    tiers = (
        lambda: [judge(b) for b in bases],
        lambda: [judge(b + [x]) for b in bases for x in _extras(model, readings, b, judge)],
        lambda: [judge(b + list(two)) for b in bases for two in _reversed_pairs(model, b)],
    )
    # The simplest account first: the faults read directly; one more; then weak or strong
    # magnets on top of either; only then two coils reversed at once.
    tried: dict[int, list[Fit]] = {}

    def tier(k: int) -> list[Fit]:
        if k not in tried:
            tried[k] = tiers[k]()
        return tried[k]

    findings: list[Finding] = []
    chosen: list[Fit] = []
    for k, test in ((0, "fits"), (1, "fits"), (0, "agrees"), (1, "agrees"), (2, "fits"), (2, "agrees")):
        chosen = [f for f in tier(k) if getattr(f, test)]
        if k == 0:
            chosen = chosen[:1]  # wrong turns before another wire, where both fit
        if chosen:
            break
    if chosen:
        findings += _fault_findings(model, chosen, readings, expected)
        if chosen[0].factor is not None and not chosen[0].in_band:
            findings.append(_magnet_finding(model, chosen[0], readings, bands))
        weak = [f for f in tier(0) if f.agrees and not f.in_band]
        if k > 0 and chosen[0].in_band and weak:
            findings.append(_ambiguous(model, weak[0]))
    else:
        near = sorted(tier(1) + tier(2), key=lambda f: f.misfit)
        findings += _fault_findings(model, tier(0)[:1], readings, expected, quiet=True)
        findings.append(_unexplained(compared, near[:3]))
    findings += wave_findings
    if not any(f.code not in INFO_CODES for f in findings):
        findings.insert(0, _ok_finding(bands, chosen[0] if chosen else None))
    verdict = "ok" if all(f.code in INFO_CODES for f in findings) else "fault"
    return BenchCheck(verdict, tuple(findings), compared, analyses)


def _reversed_pairs(model: BenchModel, base: list[Part]) -> list[tuple[Part, Part]]:
    """Two coils reversed at once, on top of `base`: the search when no single fault fits."""
    faulted = {k for p in base for k in p.coils if p.code in ("coil.open", "coil.short")}
    free = [c.index for c in model.coils if c.index not in faulted]
    return [
        (Part("coil.reversed", (a,)), Part("coil.reversed", (b,)))
        for i, a in enumerate(free)
        for b in free[i + 1 :]
    ]


def _read_alone(readings: Sequence[Reading]) -> set[int]:
    return {int(r.where) for r in readings if r.what == "coil_resistance_ohm"}


def _extras(model: BenchModel, readings, base: list[Part], judge) -> list[Part]:
    """The one more fault to try on top of `base` (method, step 5)."""
    faulted = {k for p in base for k in p.coils if p.code in ("coil.open", "coil.short")}
    measured = _read_alone(readings)
    out: list[Part] = []
    for c in model.coils:
        if c.index not in faulted:
            out.append(Part("coil.reversed", (c.index,)))
    for c in model.coils:
        if c.index not in measured:
            out += [Part("coil.short", (c.index,)), Part("coil.open", (c.index,))]
    if model.phases == 3:
        out += [Part("phase.reversed", (), phase=t) for t in model.letters]
    has_voltage = any(r.what not in RESISTANCE_WHATS for r in readings)
    for j, letter in enumerate(model.letters):
        free = tuple(c.index for c in model.coils if model.phase_index[model.position(c.index)] == j)
        free = tuple(k for k in free if k not in measured)
        if not free:
            continue
        phase_r = [r.value for r in readings if r.what == "phase_resistance_ohm" and r.where == letter]
        if phase_r:
            target = float(np.median(phase_r))

            def r_of(f, free=free, j=j):
                return _phase_resistance(model, hypothesis(model, base + [Part("coil.turns", free, f)]), j)

            if not r_of(0.05) < target < r_of(20.0):
                continue
            f = _solve_factor(r_of, target)
        elif has_voltage:
            f = _best_factor(
                lambda f, free=free: judge(base + [Part("coil.turns", free, f)]).misfit, *VOLTAGE_TURNS_RANGE
            )
        else:
            continue
        if abs(f - 1) > 1 / (2 * model.turns_per_coil * len(free)):  # at least half a turn a coil
            out.append(Part("coil.turns", free, f, phase=letter))
    return out


# ---------------------------------------------------------------- words


def _voltage_pattern_words(readings, expected) -> str:
    """ "U-V and W-U read 24 % low and V-W as expected" for the voltage readings at hand."""
    parts = []
    for i, rd in enumerate(readings):
        if rd.what in RESISTANCE_WHATS or rd.what == WAVEFORM_WHAT:
            continue
        dev = 100 * (rd.value / expected[i] - 1)
        label = {"dc_voltage_v": "the DC output"}.get(rd.what, rd.where)
        parts.append(
            f"{label} {abs(dev):.0f} % {'low' if dev < 0 else 'high'}"
            if abs(dev) >= 0.5
            else f"{label} as expected"
        )
    return _and(parts) if parts else ""


def _locate_reversed_words(model: BenchModel, letter: str, coils: Sequence[int]) -> str:
    """How to find which of several coils is the reversed one, in plain words."""
    phase_coils = [c for c in model.coils if TERMINAL_LETTERS[c.phase] == letter]
    marked = [c.index for c in phase_coils if c.polarity < 0]
    first = coils[0]
    compass = (
        "the needle points the same way over every coil of the phase"
        if not marked
        else f"the needle points one way over the coils connected as wound and the other way over "
        f"{_and(marked)} (connected REVERSED on the checklist)"
    )
    return (
        f"To find which: turn the rotor slowly and, with a two-channel scope, watch coil {first}'s own "
        f"voltage (probe on its start lead S, ground on its finish F) beside each of {_and(coils[1:])} "
        "in turn, probed the same way: coils connected alike run in step, the odd one runs upside down. "
        "Without a scope, with the rotor off: pass a small DC current (1 to 2 A from a bench supply "
        f"through a resistor) through {_phase_word(model, letter)} and hold a compass over each coil's "
        f"face: {compass}; the coil that breaks the rule is the one. Then swap its two leads at its joints."
    )


def _delta_loop_words(model: BenchModel, hyp: Hypothesis) -> str:
    """A closed delta's circulating current at rated speed under `hyp`, in words; '' if none."""
    if model.connection != "delta":
        return ""
    loop = terminals(model, hyp, model.rated_rpm).loop_a
    if loop is None:
        return ""
    sound = terminals(model, hypothesis(model, []), model.rated_rpm).loop_a
    amps, amps0 = rms_of(loop), rms_of(sound)
    if amps <= 1.5 * amps0 + 1e-6:
        return ""
    heat = 3 * amps**2 * model.coil_resistance_ohm * len(model.coils) / 3
    return (
        f" Closed, the delta carries about {amps:.1f} A round itself at {model.rated_rpm:g} rpm with "
        f"nothing connected (about {heat:.0f} W of heat in the coils, a drag on the rotor): open the "
        "delta until this is put right."
    )


def _fault_findings(model, fits, readings, expected, quiet=False) -> list[Finding]:
    """One finding per kind of fault and phase, the coils that fit it listed together."""
    groups: dict[tuple, list[Part]] = {}
    first_fit: dict[tuple, Fit] = {}
    for f in fits:
        for part in f.hypothesis.parts:
            if part.code in ("coil.turns", "coil.wire"):
                key = (part.code, part.coils, part.factor)
            elif part.code == "phase.reversed":
                key = (part.code, part.phase)
            else:
                key = (part.code, _letter(model, part.coils[0]))
            if part not in groups.setdefault(key, []):
                groups[key].append(part)
                first_fit.setdefault(key, f)
    return [
        _words(model, key[0], parts, first_fit[key], readings, expected, quiet)
        for key, parts in groups.items()
    ]


def _subject(coils: Sequence[int]) -> str:
    return f"Coil {coils[0]}" if len(coils) == 1 else f"Coils {_and(coils)}"


def _read_values(readings, coils) -> str:
    vals = [f"{r.value:g} Ω" for r in readings if r.what == "coil_resistance_ohm" and int(r.where) in coils]
    return _and(vals)


def _words(model, code, parts, fit_, readings, expected, quiet) -> Finding:
    """The message and the advice for one group of faults."""
    rc = model.coil_resistance_ohm
    part = parts[0]
    pattern = _voltage_pattern_words(readings, expected)
    volts = any(r.what not in RESISTANCE_WHATS for r in readings)
    coils = tuple(sorted({k for p in parts for k in p.coils}))
    read_alone = _read_alone(readings)
    if code == "coil.reversed":
        letter = _letter(model, coils[0])
        phase_all = [c.index for c in model.coils if TERMINAL_LETTERS[c.phase] == letter]
        together = [_letter(model, p.coils[0]) for p in fit_.hypothesis.parts if p.code == code]
        here = together.count(letter)
        others = sorted({x for x in together if x != letter})
        if len(coils) == here:
            which = f"{_subject(coils)} {'fits' if here == 1 else 'fit'} these readings; no other coil does."
            todo = f"Swap the leads of {_subject(coils).lower()} at the joints, then read the voltages again."
        else:
            alike = len(coils) == len(phase_all)
            which = f"Any {'two ' if here == 2 else ''}of coils {_and(coils)} would read so: " + (
                "their voltages run in step, so no reading at the terminals can tell which."
                if alike
                else "the readings cannot tell them apart."
            )
            todo = _locate_reversed_words(model, letter, coils)
        what = "A coil" if here == 1 else "Two coils"
        mine = "one reversed coil" if here == 1 else "two reversed coils"
        if others:
            cause = (
                f"{mine} here and one in {_and([_phase_word(model, x) for x in others])} together make them"
            )
        else:
            cause = f"{mine} {'makes' if here == 1 else 'make'} them"
        verb = "is" if here == 1 else "are"
        msg = (
            f"{what} of {_phase_word(model, letter)} {verb} connected the wrong way round"
            + (f": {pattern}" if pattern else "")
            + f", as {cause} (the phase gives E − {2 * here}e instead of E). {which}"
            + _delta_loop_words(model, fit_.hypothesis)
        )
        return Finding(code, coils, msg, todo)
    if code == "phase.reversed":
        letter = part.phase
        if model.connection == "delta":
            msg = (
                f"{_cap(_phase_word(model, letter))} is connected backwards in the delta"
                + (f": {pattern}" if pattern else "")
                + ", as a phase turned round makes them (its own side reads a third of expected, the other "
                "two about 0.88)." + _delta_loop_words(model, fit_.hypothesis)
            )
            todo = (
                f"Swap {letter}1 and {letter}2 where phase {letter} joins the delta (the whole phase, not a "
                "coil)."
            )
        else:
            msg = (
                f"{_cap(_phase_word(model, letter))} is connected backwards at the star point"
                + (f": {pattern}" if pattern else "")
                + f", as a phase turned round makes them (the two lines through {letter} at 1/√3, 58 %, of "
                "expected; the third line and each phase alone as expected)."
            )
            todo = (
                f"Swap {letter}1 and {letter}2: {letter}2 goes to the star point, {letter}1 to the {letter} "
                "terminal (the whole phase, not one coil)."
            )
        return Finding(code, (), msg, todo)
    letter = _letter(model, coils[0])
    where = _phase_word(model, letter)
    if code == "coil.open":
        if set(coils) <= read_alone:
            verb = "reads" if len(coils) == 1 else "read"
            msg = f"{_subject(coils)} {verb} open ({_read_values(readings, coils)} against {rc:.3f} Ω)"
        else:
            msg = f"{_cap(where)} reads open: one of coils {_and(coils)}, a joint or a lead has a break"
        msg += ": a break in the wire, a joint not made, or enamel not scraped where it is joined."
        if model.connection == "delta" or model.parallel_paths > 1:
            msg += (
                " The open-circuit voltages cannot show it here: "
                + (
                    "an open side of a delta still has the other two across it."
                    if model.connection == "delta"
                    else "the other paths of the phase carry the same EMF."
                )
                + " Only the resistance does."
            )
        else:
            msg += (
                " Open-circuit voltage alone cannot find the break (nothing flows), but across "
                f"{where} a voltmeter reads little or nothing, unsteady."
            )
        todo = (
            "Check the coil's two joints and leads first (scrape, re-solder); if the break is inside a cast "
            "coil, the coil must be replaced. Read its resistance again before closing up."
        )
        return Finding(code, coils, msg, todo)
    if code == "coil.short":
        if set(coils) <= read_alone:
            head = (
                f"{_subject(coils)} {'reads' if len(coils) == 1 else 'read'} "
                f"{_read_values(readings, coils)}, nearly nothing against {rc:.3f} Ω: leads touching, or "
                "turns shorted across most of the coil"
            )
        else:
            head = (
                f"{_cap(where)} reads one coil short: one of coils {_and(coils)} is shorted (its leads "
                "touching, or its turns shorted across it)"
            )
        msg = head + (
            f". {_cap(where)} loses that coil's share of resistance and of voltage"
            + (f" ({pattern})" if pattern else "")
            + "."
        )
        todo = (
            "Look for bare copper touching at the coil's leads and joints and part it. A coil shorted inside "
            "carries a large current round itself whenever the rotor turns: turning the rotor by hand with "
            "the terminals open, a drag that comes and goes points to it, and it warms. Replace such a coil."
        )
        return Finding(code, coils, msg, todo)
    t = part.factor
    every = len(coils) == len(model.coils)
    whole_phase = part.phase is not None
    if every:
        subject = "Every coil reads"
    elif whole_phase and len(coils) == sum(TERMINAL_LETTERS[c.phase] == part.phase for c in model.coils):
        subject = f"{_cap(_phase_word(model, part.phase))} reads"
    elif whole_phase:
        subject = f"Coils {_and(coils)} of {_phase_word(model, part.phase)} read"
    else:
        subject = f"{_subject(coils)} read" + ("s" if len(coils) == 1 else "")
    pct = 100 * (t - 1)
    side = "high" if pct > 0 else "low"
    if code == "coil.turns":
        msg = (
            f"{subject} {abs(pct):.0f} % {side} in resistance"
            + (" and voltage together" if volts else "")
            + f": about {t * model.turns_per_coil:.0f} turns a coil instead of {model.turns_per_coil}"
            + (
                f" (or all the difference, {abs(pct) * len(coils):.0f} % of one coil's turns, in one of them)"
                if whole_phase and len(coils) > 1
                else ""
            )
            + ": resistance and EMF both go with the turns of one wire."
            + (f" Voltages: {pattern}." if pattern else "")
        )
        if not volts:
            msg += " Without a voltage reading a wire of another size would read the same: read one."
        todo = (
            "Count the turns (unwind and rewind a coil that cannot be counted), or check that the wire is "
            "the design's; turns shorted to each other inside a coil also read low, and warm under load."
        )
    else:
        msg = (
            f"{subject} {abs(pct):.0f} % {side} in resistance but the voltages are as designed: the turns "
            f"are right and the wire is {'thinner' if pct > 0 else 'thicker'} than the design's, or the "
            "meter's own leads are in the reading."
        )
        todo = (
            "Touch the meter's probes together and subtract what it reads (or pass a known current and read "
            "the voltage across the coil); measure the wire's diameter with the enamel scraped off."
        )
    if quiet:
        msg += " (Read directly; the other readings are not explained: see below.)"
    return Finding(code, coils, msg, todo)


def _magnet_finding(model: BenchModel, f: Fit, readings, bands: Bands) -> Finding:
    lo, hi = bands.voltage_factor
    pct = 100 * (f.factor - 1)
    has_r = any(r.what in RESISTANCE_WHATS for r in readings)
    if f.factor < lo:
        msg = (
            f"Every voltage reads about {abs(pct):.0f} % low in the same proportion"
            + (" while the resistances are right" if has_r else "")
            + f", below the band of {model.magnets} ({100 * (lo - 1):+.0f} % at its weakest): the "
            "magnets are weaker than the grade, the gap between magnets and coils is larger than "
            "designed, or the speed was read high."
            + ("" if has_r else " Fewer turns on every coil would read the same: read the resistances.")
        )
        todo = (
            "Check the speed against the frequency on the meter (electrical Hz = pole pairs x rpm / 60, "
            f"{model.pole_pairs} pole pairs here); measure the gap from each magnet face to the stator; "
            "compare a magnet's pull with one of known grade. Magnets that have been hot lose strength "
            "for good."
        )
        return Finding("magnet.weak", (), msg, todo)
    msg = (
        f"Every voltage reads about {pct:.0f} % high in the same proportion, above the band of "
        f"{model.magnets}: the speed was read low, the gap is smaller than designed, the magnets are "
        "stronger than the grade" + (", or every coil has more turns" if not has_r else "") + "."
    )
    todo = (
        "Check the speed against the frequency on the meter (electrical Hz = pole pairs x rpm / 60, "
        f"{model.pole_pairs} pole pairs here). Higher voltage raises the cut-in's current and the "
        "extra-low-voltage margin: re-run the plan with the gap or magnets as built."
    )
    return Finding("voltage.high", (), msg, todo)


def _ambiguous(model: BenchModel, alt: Fit) -> Finding:
    return Finding(
        "readings.ambiguous",
        (),
        f"These readings also fit a sound winding with every voltage {100 * (1 - alt.factor):.0f} % low "
        "(weak magnets, a larger gap or a wrong speed reading): too few of them to tell the two apart.",
        "Read all three line voltages at one speed (and the phase resistances); a fault in the winding "
        "makes them differ, weak magnets lower them alike."
        if model.phases == 3
        else "Read each coil's resistance, and the voltage at a second speed with a trusted rev counter.",
    )


def _part_words(part: Part) -> str:
    """A fault in a few words: "coil 4 reversed", "phase V backwards"."""
    coils = _subject(part.coils).lower() if part.coils else ""
    if part.code == "phase.reversed":
        return f"phase {part.phase} backwards"
    if part.code == "coil.turns":
        return f"{coils} at {part.factor:.2f} of the turns"
    if part.code == "coil.wire":
        return f"{coils} of another wire"
    return (
        f"{coils} " + {"coil.reversed": "reversed", "coil.open": "open", "coil.short": "shorted"}[part.code]
    )


def _unexplained(compared, near: list[Fit]) -> Finding:
    off = [
        f"{c.what} {c.where} {c.deviation_pct:+.0f} %" if c.where else f"{c.what} {c.deviation_pct:+.0f} %"
        for c in compared
        if not c.low <= c.measured <= c.high
    ]
    closest = [" with ".join(_part_words(p) for p in f.hypothesis.parts) or "a sound winding" for f in near]
    return Finding(
        "readings.unexplained",
        (),
        "No single fault explains these readings, nor two coils reversed"
        + (f" (outside their bands: {_and(off)})" if off else "")
        + (f"; nearest: {_or(closest)}" if closest else "")
        + ".",
        "Read again, at one steady speed: each coil's resistance, each phase's, and all the line voltages; "
        "check the meter's range and leads.",
    )


def _ok_finding(bands: Bands, f: Fit | None) -> Finding:
    dc = ""
    if f is not None and f.dc_smoothed is False:
        dc = (
            " The DC reading fits the bridge's output unsmoothed, read as an average; with a capacitor "
            "across the output it reads the peak."
        )
    return Finding(
        "ok",
        (),
        f"Every reading agrees with the design: resistances within ±{bands.resistance_pct:g} %, open-circuit "
        f"voltages within the grade's spread ±{bands.open_circuit_pct:g} % and in proportion to each other "
        f"within {bands.phase_match_pct:g} %." + dc,
        "Go on to the loaded tests of the test plan.",
    )


def _channel_finding(model: BenchModel, a: OrderAnalysis) -> Finding | None:
    """What one recorded channel says of the rotor's magnets; None where it says nothing."""
    m = model.magnets_seen
    if a.revolutions < 1:
        need = 60 / a.rpm_from_frequency
        return Finding(
            "waveform.too_short",
            (),
            f"The recording of {a.where} covers {a.revolutions:.2f} of a revolution: a magnet the wrong way "
            f"up shows once a revolution, so at least one whole revolution ({need:.2f} s here) is needed.",
            f"Record at least two revolutions ({2 * need:.2f} s at this speed).",
        )
    if not a.steady:
        return Finding(
            "waveform.unsteady",
            (),
            f"The speed changed by more than {STEADY_SPEED_PCT:g} % while {a.where} was recorded: the orders "
            "smear, and a flipped magnet cannot be told.",
            "Drive the rotor at a steady speed (a drill or a motor on the shaft, not by hand), record again.",
        )
    if not a.orders_visible:
        return Finding(
            "waveform.blind",
            (),
            f"This winding cannot show a flipped magnet at {a.where}: its coils see the magnets alike, so "
            "the waveform at the terminals repeats every electrical period whatever the rotor carries; "
            f"only the level drops ({200 / m:.0f} % for one magnet flipped).",
            "Check the magnets' faces with a compass before the discs go on, or record one coil's voltage "
            "between its own leads.",
        )
    if a.off_order_share is None or a.off_order_share <= FLIPPED_ORDER_SHARE:
        return None
    return Finding(
        "magnet.flipped",
        (),
        f"The waveform at {a.where} repeats once a revolution, not once an electrical period: "
        f"{100 * a.off_order_share:.0f} % of its fundamental lies at multiples of the shaft speed that are "
        "not multiples of the electrical frequency, where a sound rotor puts almost nothing (under "
        f"{100 * FLIPPED_ORDER_SHARE:g} %). A magnet is the wrong way up or missing; one flipped also "
        f"takes about {200 / m:.0f} % off every voltage, one missing {100 / m:.0f} %.",
        "With the rotor apart, check every magnet's face with a compass or a marked magnet: the faces "
        "must alternate N, S round each disc as the magnet map shows. Look for a missing or cracked "
        "magnet too.",
    )


def _waveform_findings(model: BenchModel, analyses, waveform: Waveform, bands: Bands):
    """Findings of a recording, and whether it shows a flipped or missing magnet."""
    out: list[Finding] = []
    first = analyses[0]
    if abs(first.rpm_from_frequency / waveform.rpm - 1) > bands.phase_match_pct / 100:
        out.append(
            Finding(
                "reading.speed",
                (),
                f"The recording's fundamental is {first.electrical_hz:.2f} Hz: with {model.pole_pairs} pole "
                f"pairs that is {first.rpm_from_frequency:.0f} rpm, not the {waveform.rpm:g} rpm given.",
                "Trust the frequency over a rev counter; read the speed again, and the voltages with it.",
            )
        )
    out += [f for f in (_channel_finding(model, a) for a in analyses) if f is not None]
    if len(analyses) >= 2:
        out.append(_sequence(model, analyses[0], analyses[1], waveform.rpm))
    return out, any(f.code == "magnet.flipped" for f in out)


def _sequence(model: BenchModel, a: OrderAnalysis, b: OrderAnalysis, rpm: float) -> Finding:
    """The phase sequence from the lag between two channels' fundamentals."""
    measured = math.degrees(np.angle(b.phasor / a.phasor)) if abs(a.phasor) > 0 else 0.0
    best = None
    for parts, label in [([], "")] + [
        ([Part("phase.reversed", (), phase=t)], f" with phase {t} connected backwards") for t in model.letters
    ]:
        t = terminals(model, hypothesis(model, parts), rpm)
        ea = t.phase.get(a.where) if a.where in t.phase else t.line.get(a.where)
        eb = t.phase.get(b.where) if b.where in t.phase else t.line.get(b.where)
        if ea is None or eb is None or abs(ea[1]) == 0:
            continue
        model_lag = math.degrees(np.angle(eb[1] / ea[1]))
        for sense, name in ((1, "U-V-W"), (-1, "U-W-V")):
            miss = abs((measured - sense * model_lag + 180) % 360 - 180)
            if best is None or miss < best[0]:
                best = (miss, name, label, sense * model_lag)
    lag = (-measured) % 360
    words = f"{b.where} lags {a.where} by {lag:.0f}°"
    if best is None or best[0] > SEQUENCE_TOL_DEG:
        return Finding(
            "phase.sequence",
            (),
            f"{words}: no sequence of this winding gives that; a probe's ground may be on the wrong lead.",
            "Check both probes' grounds go to the same point (the star point, or one terminal).",
        )
    _, name, label, _ = best
    msg = (
        f"Phase sequence {name}{label}: {words}. U-V-W is the order the rotor gives turning the way the "
        "positions are numbered; the other way round, or with two lines swapped, it is U-W-V."
    )
    return Finding(
        "phase.sequence",
        (),
        msg,
        "A bridge rectifier does not care. Where a load needs a sequence (a three-phase motor, an inverter "
        "that checks it), swap two lines to reverse it.",
    )
