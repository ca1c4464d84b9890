"""`statorsmith check`: bench readings against the design.

Readings are simulated here by brute force, independently of layout.bench_check's phasor
model: coil 1's flux linkage λ(φ) from the field model (`Design.linkage`), differentiated
sample by sample, shifted to every coil, signed and summed in the time domain, and the
RMS taken numerically. A flipped magnet's waveform comes from the field of the whole rotor,
one magnet reversed, over a full revolution (layout.field), integrated over each coil's turns.
"""

from __future__ import annotations

import dataclasses
import functools
import json
import math

import numpy as np
import pytest
from demos import DESIGNS, design

from fab.bench_check import bench_check, check_json
from fab.sheet.words import OPEN_CIRCUIT_BAND_PCT, PHASE_MATCH_PCT, RESISTANCE_BAND_PCT, open_circuit_rms_v
from layout.emf import _z_nodes, turn_weight
from layout.field import bz, image_sources
from layout.winding import TERMINAL_LETTERS

DEMOS = tuple(sorted(p.stem for p in DESIGNS.glob("*.toml")))
PAIRS = ("U-V", "V-W", "W-U")


# ---------------------------------------------------------------- brute force


@functools.cache
def coil_waves(name: str, *changes) -> np.ndarray:
    """Open-circuit EMF of every coil as wound (before its polarity), volts per rpm, over one
    electrical period: N·ω·dλ/dt by central differences of the model's λ(φ) of coil 1, shifted
    by p·α_k to coil k; magnets at room temperature, a saturated plate's derate applied."""
    d = design(name, *changes)
    lam = d.linkage.lambda_wb
    m, p = len(lam), d.linkage.pole_pairs
    dphi = 2 * math.pi / m  # electrical radians a sample
    e1 = p * (np.roll(lam, -1) - np.roll(lam, 1)) / (2 * dphi)  # dλ/dφ_mech per turn
    pr = d.prediction
    scale = (
        pr.turns_per_coil * 2 * math.pi / 60 * pr.saturation_derate * (1 + pr.br_per_k * (pr.ambient_c - 20))
    )
    out = []
    for c in d.layout.coils:
        shift = p * math.radians(c.angle_deg) / dphi
        assert abs(shift - round(shift)) < 1e-9, "the demos' coils sit on whole samples"
        out.append(np.roll(e1, round(shift)) * scale)
    return np.array(out)


def simulate(name, *changes, flip=(), turns=None, short=(), open_=(), rpm=None, reversed_phase=None):
    """Every reading the bench could take, by brute force: a dict (what, where) → value."""
    d = design(name, *changes)
    lay, pr = d.layout, d.prediction
    rpm = rpm or d.spec.target.rated_rpm
    waves = coil_waves(name, *changes) * rpm
    rc = pr.coil_resistance_ohm
    turns = turns or {}
    phases = {}
    res = {}
    for letter, ph in zip("UVW", lay.phase_names, strict=False):
        e = np.zeros(waves.shape[1])
        r = 0.0
        for i, c in enumerate(lay.coils):
            if c.phase != ph:
                continue
            t = turns.get(c.index, 1.0)
            sign = -1 if c.index in flip else 1
            if c.index in short:
                res["coil_resistance_ohm", str(c.index)] = 0.002
                continue
            e += sign * c.polarity * t * waves[i]
            r += rc * t
            res["coil_resistance_ohm", str(c.index)] = 1e9 if c.index in open_ else rc * t
        if reversed_phase == letter:
            e = -e
        is_open = any(c.index in open_ for c in lay.coils if c.phase == ph)
        res["phase_resistance_ohm", letter] = 1e9 if is_open else r
        phases[letter] = (e, is_open)
    out = dict(res)
    for letter, (e, is_open) in phases.items():
        if not is_open:
            out["phase_voltage_v", letter] = float(np.sqrt(np.mean(e**2)))
    lines = []
    if lay.phases == 3:
        kind = d.spec.connection.kind
        e = {k: v for k, (v, _) in phases.items()}
        opened = [k for k, (_, o) in phases.items() if o]
        for pair in PAIRS:
            a, b = pair.split("-")
            if kind == "star":
                if a in opened or b in opened:
                    continue
                v = e[a] - e[b]
            elif opened:  # an open delta: the open side sees the other two
                v = -sum(e[k] for k in "UVW" if k != a) if a in opened else e[a]
            else:  # equal sides: the loop current drops the mean EMF in each
                v = e[a] - (e["U"] + e["V"] + e["W"]) / 3
            lines.append(v)
            out["line_voltage_v", pair] = float(np.sqrt(np.mean(v**2)))
    elif not phases["U"][1]:
        lines = [phases["U"][0]]
    if lines:  # the bridge sees what is joined; an open single winding gives it nothing
        out["dc_voltage_v", ""] = float(np.abs(lines).max()) - 2 * d.spec.target.diode_drop_v
    return out, rpm


def readings_csv(tmp_path, rows, name="readings.csv") -> str:
    path = tmp_path / name
    text = "what,where,value,rpm\n" + "".join(
        f"{what},{where},{value:.6g},{rpm if what.endswith('_v') else ''}\n"
        for what, where, value, rpm in rows
    )
    path.write_text(text, encoding="utf-8")
    return str(path)


def rows_of(sim, rpm, keep=None, scale_v=1.0, scale_r=1.0):
    out = []
    for (what, where), value in sim.items():
        if keep is not None and what not in keep:
            continue
        k = scale_v if what.endswith("_v") else scale_r
        out.append((what, where, value * k, rpm))
    return out


def terminal_readings(d):
    """What a builder reads of a finished machine: line voltages (the winding alone for one
    phase), the DC output, phase resistances."""
    return {"line_voltage_v", "dc_voltage_v", "phase_resistance_ohm"} | (
        {"phase_voltage_v"} if d.layout.phases == 1 else set()
    )


# ---------------------------------------------------------------- the brute force itself


@pytest.mark.parametrize("name", DEMOS)
def test_brute_force_reproduces_the_sheet_s_figure(name):
    # The sheet's open-circuit figure is the model's line EMF; the brute force gets it from
    # the flux linkage by central differences (error about (2π/192)²/6 of the fundamental).
    d = design(name)
    sim, rpm = simulate(name)
    key = ("line_voltage_v", "U-V") if d.layout.phases == 3 else ("phase_voltage_v", "U")
    assert sim[key] == pytest.approx(open_circuit_rms_v(d, rpm), rel=2e-3)


def run_check(tmp_path, name, rows, *changes, **wave):
    path = readings_csv(tmp_path, rows)
    return bench_check(design(name, *changes), path, **wave)


def codes(result):
    return [f.code for f in result.findings]


# ---------------------------------------------------------------- faults


def _reversed_cases():
    for name in DEMOS:
        for c in design(name).layout.coils:
            yield name, c.index


@pytest.mark.parametrize(("name", "coil"), list(_reversed_cases()))
def test_one_reversed_coil_is_found(tmp_path, name, coil):
    d = design(name)
    sim, rpm = simulate(name, flip=(coil,))
    result = run_check(tmp_path, name, rows_of(sim, rpm, keep=terminal_readings(d)))
    assert result.verdict == "fault"
    found = [f for f in result.findings if f.code == "coil.reversed"]
    assert len(found) == 1, codes(result)
    letter = TERMINAL_LETTERS[next(c.phase for c in d.layout.coils if c.index == coil)]
    assert coil in found[0].coils
    assert all(TERMINAL_LETTERS[c.phase] == letter for c in d.layout.coils if c.index in found[0].coils)
    if d.layout.phases == 3:
        assert f"phase {letter}" in found[0].message
    if len(found[0].coils) > 1:  # how to tell them apart, in words
        assert "scope" in found[0].what_to_do and "compass" in found[0].what_to_do


# Coils of one phase whose phasors differ give different line voltages when reversed: 12 coils
# under 14 magnets puts phase U's coils at two angles 30° apart (layout.winding's star of slots).
UNEQUAL = (("magnets.count", 14),)


@pytest.mark.parametrize("coil", [1, 2, 7, 8])
def test_coils_with_other_phasors_are_told_apart(tmp_path, coil):
    d = design("millrace", *UNEQUAL)
    sim, rpm = simulate("millrace", *UNEQUAL, flip=(coil,))
    result = run_check(tmp_path, "millrace", rows_of(sim, rpm, keep=terminal_readings(d)), *UNEQUAL)
    (found,) = [f for f in result.findings if f.code == "coil.reversed"]
    phasor = {c.index: round((c.phasor_deg + (180 if c.polarity < 0 else 0)) % 360) for c in d.layout.coils}
    same = sorted(k for k in (1, 2, 7, 8) if phasor[k] == phasor[coil])
    assert list(found.coils) == same  # the pair in step with it, not the other pair


@pytest.mark.parametrize("name", DEMOS)
def test_a_whole_phase_reversed(tmp_path, name):
    d = design(name)
    if d.layout.phases == 1:
        pytest.skip("one winding: turned round it is the same machine")
    sim, rpm = simulate(name, reversed_phase="V")
    result = run_check(tmp_path, name, rows_of(sim, rpm, keep=terminal_readings(d)))
    assert codes(result) == ["phase.reversed"]
    assert "phase v" in result.findings[0].message.lower()
    if d.spec.connection.kind == "delta":
        assert "round itself" in result.findings[0].message  # the circulating current


@pytest.mark.parametrize("name", DEMOS)
def test_wrong_turns_on_one_coil(tmp_path, name):
    d = design(name)
    coil = d.layout.coils[1].index
    t = 0.8  # 80 % of the turns: resistance and EMF with them
    sim, rpm = simulate(name, turns={coil: t})
    result = run_check(tmp_path, name, rows_of(sim, rpm))
    assert codes(result) == ["coil.turns"]
    f = result.findings[0]
    assert f.coils == (coil,)
    assert f"about {round(t * d.prediction.turns_per_coil)} turns" in f.message


@pytest.mark.parametrize("name", DEMOS)
def test_wrong_turns_seen_from_the_terminals(tmp_path, name):
    # Without coil readings: a phase's resistance and voltage off together.
    d = design(name)
    coil = d.layout.coils[0].index
    t = 1.5
    sim, rpm = simulate(name, turns={coil: t})
    keep = terminal_readings(d) | {"phase_voltage_v"}
    result = run_check(tmp_path, name, rows_of(sim, rpm, keep=keep))
    share = (t - 1) / d.layout.series_coils_per_path  # what the phase gains
    if share * 100 <= RESISTANCE_BAND_PCT:  # pedalbox: 8 coils in series share it
        assert result.verdict == "ok"
        return
    assert "coil.turns" in codes(result)
    assert coil in next(f for f in result.findings if f.code == "coil.turns").coils


@pytest.mark.parametrize("name", DEMOS)
def test_open_coil(tmp_path, name):
    d = design(name)
    coil = d.layout.coils[2].index
    sim, rpm = simulate(name, open_=(coil,))
    result = run_check(tmp_path, name, rows_of(sim, rpm))
    assert codes(result) == ["coil.open"]
    assert result.findings[0].coils == (coil,)
    if d.spec.connection.kind == "delta":
        assert "cannot show it" in result.findings[0].message


@pytest.mark.parametrize("name", DEMOS)
def test_shorted_coil(tmp_path, name):
    d = design(name)
    coil = d.layout.coils[3].index
    sim, rpm = simulate(name, short=(coil,))
    # A delta's sides no longer match with a coil shorted: read each winding alone.
    keep = (
        None
        if d.spec.connection.kind != "delta"
        else {"coil_resistance_ohm", "phase_resistance_ohm", "phase_voltage_v"}
    )
    result = run_check(tmp_path, name, rows_of(sim, rpm, keep=keep))
    assert codes(result) == ["coil.short"]
    assert result.findings[0].coils == (coil,)


@pytest.mark.parametrize("name", DEMOS)
def test_weak_magnets(tmp_path, name):
    sim, rpm = simulate(name)
    result = run_check(tmp_path, name, rows_of(sim, rpm, scale_v=0.85))
    assert codes(result) == ["magnet.weak"]


# ---------------------------------------------------------------- sound machines


@pytest.mark.parametrize("name", DEMOS)
def test_the_prediction_itself_is_ok(tmp_path, name):
    sim, rpm = simulate(name)
    result = run_check(tmp_path, name, rows_of(sim, rpm))
    assert result.verdict == "ok"
    assert codes(result) == ["ok"]
    for c in result.compared:
        assert c.low <= c.measured <= c.high
    # The voltage expected is the test plan's own figure (fab.sheet.words), to the digit.
    d = design(name)
    what = "line_voltage_v" if d.layout.phases == 3 else "phase_voltage_v"
    (row,) = [c for c in result.compared if c.what == what and c.where in ("U-V", "U")]
    assert row.expected == pytest.approx(open_circuit_rms_v(d, rpm), rel=1e-9)


@pytest.mark.parametrize("name", DEMOS)
@pytest.mark.parametrize(("scale_v", "scale_r"), [(0.93, 1.08), (1.06, 0.93)])
def test_readings_within_the_tolerances_are_ok(tmp_path, name, scale_v, scale_r):
    # Within the sheet's bands: every voltage off alike inside the grade's spread and
    # OPEN_CIRCUIT_BAND_PCT, each then ±1 % (inside PHASE_MATCH_PCT); resistances likewise.
    assert abs(scale_v - 1) * 100 < OPEN_CIRCUIT_BAND_PCT and abs(scale_r - 1) * 100 < RESISTANCE_BAND_PCT
    rng = np.random.default_rng(7)
    sim, rpm = simulate(name)
    rows = [
        (w, x, v * (1 + rng.uniform(-1, 1) * PHASE_MATCH_PCT / 300), r)
        for w, x, v, r in rows_of(sim, rpm, scale_v=scale_v, scale_r=scale_r)
    ]
    assert run_check(tmp_path, name, rows).verdict == "ok"


@pytest.mark.parametrize("name", DEMOS)
def test_two_speeds_agree(tmp_path, name):
    low, r1 = simulate(name, rpm=100.0)
    high, r2 = simulate(name)
    rows = rows_of(low, r1, keep={"line_voltage_v", "phase_voltage_v"}) + rows_of(high, r2)
    assert run_check(tmp_path, name, rows).verdict == "ok"


# ---------------------------------------------------------------- waveforms


@functools.cache
def revolution_linkage(
    name: str, magnet: int | None = None, polarization: float = -1.0
) -> tuple[np.ndarray, int]:
    """λ per turn of coil 1 (Wb) at every rotor step of one revolution: the whole rotor's field
    (magnet `magnet`'s polarisation times `polarization`: −1 flipped, 0 missing) on a polar
    grid over the coils' band, integrated over coil 1's turn weights, the rotor turned step by
    step."""
    d = design(name)
    geo = d.geometry
    mags = list(geo.magnets)
    if magnet is not None:
        mags[magnet] = dataclasses.replace(
            mags[magnet], polarization_t=polarization * mags[magnet].polarization_t
        )
    geo = dataclasses.replace(geo, magnets=tuple(mags))
    pm, q = d.spec.magnets.count, d.layout.coil_positions
    n = math.lcm(pm, q) * math.ceil(12 * pm / math.lcm(pm, q))  # ≥ 12 steps a pole, on every coil
    nr = 8
    coil = geo.coil
    dr = (coil.r_max_mm - coil.r_min_mm) / nr
    r = coil.r_min_mm + dr * (np.arange(nr) + 0.5)
    th = 2 * np.pi * np.arange(n) / n
    zs, zw = _z_nodes(geo)
    rr, tt, zz = np.meshgrid(r, th, zs, indexing="ij")
    pts = np.stack([rr * np.cos(tt), rr * np.sin(tt), zz], -1).reshape(-1, 3)
    b = (bz(image_sources(geo, pts[::53]), pts).reshape(nr, n, len(zs)) * zw).sum(-1)
    sub = (np.arange(3) + 0.5) / 3 - 0.5
    w = np.zeros((nr, n))
    signed = np.where(th > np.pi, th - 2 * np.pi, th)
    for a in sub:
        for c in sub:
            rad, ang = r[:, None] + a * dr, signed[None, :] + c * 2 * np.pi / n
            w += turn_weight(coil.hole_mm, coil.leg_width_mm, rad * np.cos(ang), rad * np.sin(ang))
    w *= r[:, None] * dr * (2 * np.pi / n) / 9 * 1e-6  # mm² → m², averaged over the sub-cells
    lam = np.array([np.sum(w * np.roll(b, j, axis=1)) for j in range(n)])  # rotor turned j steps
    return lam, n


def recorded(
    name, where, magnet=None, polarization=-1.0, revolutions=2.0, per_period=60, noise=0.003, sense=1
):
    """A scope's record of `where` at rated speed, the rotor turning the way the positions
    are numbered (sense 1) or the other way (−1): brute-force EMF over whole revolutions,
    dλ/dφ taken harmonic by harmonic, the coils summed with their polarities, a line of a
    delta as its side less the mean of the three (equal sides)."""
    d = design(name)
    lam, n = revolution_linkage(name, magnet, polarization)
    pr, lay = d.prediction, d.layout
    rpm = d.spec.target.rated_rpm
    scale = (
        pr.turns_per_coil
        * rpm
        * 2
        * np.pi
        / 60
        * pr.saturation_derate
        * (1 + pr.br_per_k * (pr.ambient_c - 20))
    )

    def phase(ph):
        total = np.zeros(n)
        for c in lay.coils:
            if c.phase == ph and c.path == 1:
                total += c.polarity * np.roll(lam, round(c.angle_deg / 360 * n))
        return total

    letters = dict(zip("UVW", lay.phase_names, strict=False))
    if "-" not in where:
        rev = phase(letters[where])
    elif d.spec.connection.kind == "delta":
        a = where.split("-")[0]
        rev = phase(letters[a]) - sum(phase(ph) for ph in lay.phase_names) / 3
    else:
        a, b = where.split("-")
        rev = phase(letters[a]) - phase(letters[b])
    h = np.arange(n // 2 + 1)
    spec = np.fft.rfft(rev) / n * 1j * h * scale  # e = N·ω·dλ/dφ per harmonic of the revolution
    spec[-1] = 0.0
    fe = lay.pole_pairs * rpm / 60
    t = np.arange(int(revolutions * lay.pole_pairs * per_period)) / (fe * per_period)
    phi = sense * 2 * np.pi * rpm / 60 * t
    v = 2 * np.real(np.exp(1j * np.outer(phi, h[1:])) @ spec[1:])
    v += np.random.default_rng(3).normal(0, noise * np.abs(v).max(), len(v))
    return t, v


def write_wave(tmp_path, t, v, header="time_s,volts"):
    path = tmp_path / "wave.csv"
    path.write_text(header + "\n" + "".join(f"{a:.7g},{b:.6g}\n" for a, b in zip(t, v, strict=True)), "utf-8")
    return str(path)


def _where(name):
    return "U-V" if design(name).layout.phases == 3 else "U"


@pytest.mark.parametrize("name", DEMOS)
def test_a_flipped_magnet_shows_in_the_waveform(tmp_path, name):
    d = design(name)
    t, v = recorded(name, _where(name), magnet=3)
    sim, rpm = simulate(name)
    rows = rows_of(sim, rpm, keep={"coil_resistance_ohm", "phase_resistance_ohm"})
    wave = write_wave(tmp_path, t, v)
    result = run_check(
        tmp_path, name, rows, waveform_path=wave, waveform_where=_where(name), waveform_rpm=rpm
    )
    if name == "pedalbox":
        # 8 coils under 8 magnets in one series: every coil sees the magnets alike, and the
        # array factor Σ s_k e^{−ihα_k} vanishes at every order a revolution adds.
        assert "waveform.blind" in codes(result) and "magnet.flipped" not in codes(result)
        return
    assert "magnet.flipped" in codes(result), codes(result)
    # One magnet of M flipped takes about 2/M off the fundamental: explained, not weak magnets.
    assert "magnet.weak" not in codes(result)
    share = result.waveform[0].off_order_share
    assert share > 0.05  # the demos give 6-21 % (layout.bench_check.FLIPPED_ORDER_SHARE)
    assert d is not None


@pytest.mark.parametrize("name", DEMOS)
def test_a_clean_sine_is_not_a_flipped_magnet(tmp_path, name):
    d = design(name)
    rpm = d.spec.target.rated_rpm
    fe = d.layout.pole_pairs * rpm / 60
    t = np.arange(4000) / (fe * 100)  # 40 electrical periods
    v = math.sqrt(2) * open_circuit_rms_v(d, rpm) * np.sin(2 * np.pi * fe * t + 0.4)
    sim, _ = simulate(name)
    rows = rows_of(sim, rpm)
    result = run_check(
        tmp_path,
        name,
        rows,
        waveform_path=write_wave(tmp_path, t, v),
        waveform_where=_where(name),
        waveform_rpm=rpm,
    )
    assert "magnet.flipped" not in codes(result)
    assert result.verdict == "ok", codes(result)


def test_a_short_recording_says_so(tmp_path):
    t, v = recorded("millrace", "U-V", revolutions=0.5)
    sim, rpm = simulate("millrace")
    result = run_check(
        tmp_path,
        "millrace",
        rows_of(sim, rpm),
        waveform_path=write_wave(tmp_path, t, v),
        waveform_where="U-V",
        waveform_rpm=rpm,
    )
    assert "waveform.too_short" in codes(result)
    assert "magnet.flipped" not in codes(result)


@pytest.mark.parametrize(
    ("second", "sense", "sequence"), [("V", 1, "U-V-W"), ("W", 1, "U-V-W"), ("V", -1, "U-W-V")]
)
def test_phase_sequence_from_two_channels(tmp_path, second, sense, sequence):
    # Turning the way the positions are numbered V lags U by 120° (layout.winding); the
    # other way round the sequence reverses.
    _, u = recorded("millrace", "U", noise=0, sense=sense)
    t, x = recorded("millrace", second, noise=0, sense=sense)
    path = tmp_path / "two.csv"
    path.write_text(
        f"time_s,U,{second}\n"
        + "".join(f"{a:.7g},{b:.6g},{c:.6g}\n" for a, b, c in zip(t, u, x, strict=True)),
        "utf-8",
    )
    sim, rpm = simulate("millrace")
    result = run_check(tmp_path, "millrace", rows_of(sim, rpm), waveform_path=str(path), waveform_rpm=rpm)
    (seq,) = [f for f in result.findings if f.code == "phase.sequence"]
    assert f"Phase sequence {sequence}" in seq.message
    assert result.verdict == "ok"


# ---------------------------------------------------------------- the command


def test_json_has_the_documented_keys(run, tmp_path):
    sim, rpm = simulate("millrace", flip=(4,))
    path = readings_csv(tmp_path, rows_of(sim, rpm))
    res = run("check", DESIGNS / "millrace.toml", "--readings", path, "--json")
    assert res.returncode == 0, res.stderr
    out = json.loads(res.stdout)
    assert set(out) == {"verdict", "findings", "compared"}
    assert out["verdict"] == "fault"
    for f in out["findings"]:
        assert set(f) == {"code", "coils", "message", "what_to_do"}
    for c in out["compared"]:
        assert set(c) == {"what", "where", "measured", "expected", "deviation_pct"}
    assert check_json is not None


def test_text_report(run, tmp_path):
    sim, rpm = simulate("hilltop")
    path = readings_csv(tmp_path, rows_of(sim, rpm))
    res = run("check", DESIGNS / "hilltop.toml", "--readings", path)
    assert res.returncode == 0, res.stderr
    assert "verdict: ok" in res.stdout and "[ok]" in res.stdout
    assert "deviation_pct" in res.stdout


GOOD = "what,where,value,rpm\ncoil_resistance_ohm,1,0.37,\n"


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("", "is empty"),
        ("what,where,value,rpm\n", "no readings"),
        ("coil_resistance_ohm,1,0.37,\n", "line 1: header"),
        (GOOD + "coil_volts,1,0.37,\n", "line 3: what"),
        (GOOD + "phase_resistance_ohm,X,1.4,\n", "line 3: where"),
        (GOOD + "line_voltage_v,U-U,40,300\n", "line 3: where"),
        (GOOD + "coil_resistance_ohm,13,0.37,\n", "line 3: where"),
        (GOOD + "coil_resistance_ohm,0,0.37,\n", "line 3: where"),
        (GOOD + "coil_resistance_ohm,2,abc,\n", "line 3: value"),
        (GOOD + "coil_resistance_ohm,2,nan,\n", "line 3: value"),
        (GOOD + "coil_resistance_ohm,2,-0.3,\n", "line 3: value"),
        (GOOD + "line_voltage_v,U-V,1e300,300\n", "line 3: value"),
        (GOOD + "line_voltage_v,U-V,40,\n", "line 3: rpm"),
        (GOOD + "line_voltage_v,U-V,40,0\n", "line 3: rpm"),
        (GOOD + "line_voltage_v,U-V,40,-300\n", "line 3: rpm"),
        (GOOD + "line_voltage_v,U-V,40,fast\n", "line 3: rpm"),
        (GOOD + "dc_voltage_v,U,60,300\n", "line 3: where"),
        (GOOD + "line_voltage_v,U-V\n", "line 3"),
    ],
)
def test_bad_readings_are_one_line(run, tmp_path, text, words):
    path = tmp_path / "bad.csv"
    path.write_text(text, encoding="utf-8")
    res = run("check", DESIGNS / "millrace.toml", "--readings", path)
    assert res.returncode == 2
    lines = res.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in res.stderr
    assert lines[0].startswith("Error: bad.csv: ") and words in lines[0], lines[0]
    assert res.stdout == ""


def test_missing_readings_file_is_one_line(run, tmp_path):
    res = run("check", DESIGNS / "millrace.toml", "--readings", tmp_path / "none.csv")
    assert res.returncode == 2 and "no such file" in res.stderr and len(res.stderr.strip().splitlines()) == 1


def test_one_phase_has_no_lines(run, tmp_path):
    path = tmp_path / "bad.csv"
    path.write_text(GOOD + "line_voltage_v,U-V,20,600\n", encoding="utf-8")
    res = run("check", DESIGNS / "pedalbox.toml", "--readings", path)
    assert res.returncode == 2 and "phase_voltage_v at U" in res.stderr


@pytest.mark.parametrize(
    ("wave", "args", "words"),
    [
        ("time_s,volts\n" + "0,1\n" * 3, ["--waveform-where", "U-V", "--waveform-rpm", "300"], "samples"),
        ("t,v\n0,1\n", ["--waveform-where", "U-V", "--waveform-rpm", "300"], "line 1: header"),
        ("time_s,volts\n0,1\n", ["--waveform-rpm", "300"], "--waveform-where"),
        ("time_s,X\n0,1\n", ["--waveform-rpm", "300"], "line 1: header"),
        (
            "time_s,volts\n" + "".join(f"{k % 5},{k}\n" for k in range(20)),
            ["--waveform-where", "U-V", "--waveform-rpm", "300"],
            "time_s",
        ),
        (
            "time_s,volts\n" + "".join(f"{k},x\n" for k in range(20)),
            ["--waveform-where", "U-V", "--waveform-rpm", "300"],
            "line 2: volts",
        ),
        ("time_s,volts\n0,1\n", ["--waveform-where", "U-V"], "--waveform-rpm"),
        ("time_s,volts\n0,1\n", ["--waveform-where", "U-V", "--waveform-rpm", "nan"], "--waveform-rpm"),
        (  # 40 Hz at 300 rpm sampled every 10 ms: 2.5 samples a period
            "time_s,volts\n" + "".join(f"{k / 100},{k % 3}\n" for k in range(40)),
            ["--waveform-where", "U-V", "--waveform-rpm", "300"],
            "samples an electrical period",
        ),
    ],
)
def test_bad_waveforms_are_one_line(run, tmp_path, wave, args, words):
    readings = tmp_path / "r.csv"
    readings.write_text(GOOD, encoding="utf-8")
    path = tmp_path / "wave.csv"
    path.write_text(wave, encoding="utf-8")
    res = run("check", DESIGNS / "millrace.toml", "--readings", readings, "--waveform", path, *args)
    assert res.returncode == 2, res.stdout
    assert len(res.stderr.strip().splitlines()) == 1 and words in res.stderr, res.stderr


def test_waveform_options_need_a_waveform(run, tmp_path):
    readings = tmp_path / "r.csv"
    readings.write_text(GOOD, encoding="utf-8")
    res = run("check", DESIGNS / "millrace.toml", "--readings", readings, "--waveform-rpm", "300")
    assert res.returncode == 2 and "--waveform" in res.stderr


@pytest.mark.parametrize("name", DEMOS)
def test_the_test_plan_points_to_check(name):
    from fab.sheet.bench_tests import _test_plan
    from fab.sheet.document import _Ctx, _styles

    d = design(name)
    texts = [getattr(f, "text", "") for f in _test_plan(_Ctx(d, 500.0, 700.0, _styles()))]
    assert any(f"statorsmith check {name}.toml --readings {name}-readings.csv" in t for t in texts)
