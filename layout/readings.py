"""Bench readings and recorded waveforms as the builder types or exports them.

Readings: CSV with the header `what,where,value,rpm`, one reading a row. Resistances are at
20 °C, voltages open-circuit rms at the row's rpm. Waveforms: CSV with the header
`time_s,volts` (one channel, its terminals given on the command line) or `time_s,U,V` ...
(a channel a column, named by its terminals), as a scope or a sound card exports them.

Every problem is a DesignError whose text is one line naming the file, the line, the column
and what is allowed; nothing here knows the physics beyond the names of the terminals.
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass

import numpy as np

from layout.design import MAX_RPM_LIMIT
from layout.spec import DesignError
from layout.winding import PHASE_NAMES, TERMINAL_LETTERS

READINGS_HEADER = ("what", "where", "value", "rpm")
RESISTANCE_WHATS = ("coil_resistance_ohm", "phase_resistance_ohm")
VOLTAGE_WHATS = ("phase_voltage_v", "line_voltage_v", "dc_voltage_v")
WHATS = RESISTANCE_WHATS + VOLTAGE_WHATS
MAX_READING_RPM = float(MAX_RPM_LIMIT)  # no bench turns a machine faster than a design may run
# Past these a value is a slip of the keyboard, not a reading: no machine of this kind makes
# 10 kV, and an insulation tester's top range is about a teraohm (our own bounds).
MAX_READING_V = 1e4
MAX_READING_OHM = 1e12
WAVEFORM_MAX_BYTES = 32 << 20  # a scope's or sound card's export of a few seconds
MIN_WAVEFORM_SAMPLES = 16


@dataclass(frozen=True)
class Reading:
    """One bench reading. `where` is canonical: a coil position ("3"), a terminal letter
    ("U"), a pair in the winding's order ("U-V", "V-W", "W-U"), or "" for the DC output."""

    what: str
    where: str
    value: float  # ohms or volts rms (dc_voltage_v: volts DC)
    rpm: float | None  # voltages only
    line: int  # line of the file, for messages

    @property
    def is_voltage(self) -> bool:
        return self.what in VOLTAGE_WHATS


@dataclass(frozen=True)
class Waveform:
    """Samples of one or more terminal voltages against time, as recorded."""

    source: str
    time_s: np.ndarray  # (m,) strictly increasing
    channels: tuple[tuple[str, np.ndarray], ...]  # (where, volts (m,)) in the file's column order
    rpm: float  # the speed the builder gives for the recording


def terminal_letters(phases: int) -> tuple[str, ...]:
    """U (, V, W): the IEC 60034-8 letters of the phases of this winding."""
    return tuple(TERMINAL_LETTERS[p] for p in PHASE_NAMES[:phases])


def line_pairs(phases: int) -> tuple[str, ...]:
    """The three line pairs in the winding's order, U-V, V-W, W-U; none for one phase."""
    t = terminal_letters(phases)
    return tuple(f"{t[k]}-{t[(k + 1) % 3]}" for k in range(3)) if phases == 3 else ()


def canonical_pair(text: str, phases: int) -> str | None:
    """ "V-U", "u - v" → "U-V"; None if `text` is not a pair of this winding's terminals."""
    parts = [p.strip().upper() for p in text.split("-")]
    if len(parts) != 2:
        return None
    for pair in line_pairs(phases):
        if sorted(parts) == sorted(pair.split("-")):
            return pair
    return None


def _where_words(what: str, phases: int, coils: tuple[int, ...]) -> str:
    letters = ", ".join(terminal_letters(phases))
    if what == "coil_resistance_ohm":
        return f"a coil position of this design ({_ranges(coils)})"
    if what in ("phase_resistance_ohm", "phase_voltage_v"):
        return f"a phase terminal, {letters}" if phases == 3 else "U (one phase winding)"
    if what == "line_voltage_v":
        return "a pair of terminals, U-V, V-W or W-U"
    return "empty (the DC output of the bridge)"


def _ranges(numbers: tuple[int, ...]) -> str:
    """1-12 or 1-4, 6-12: the positions wound, short."""
    out, run = [], [numbers[0]]
    for n in numbers[1:]:
        if n == run[-1] + 1:
            run.append(n)
        else:
            out.append(run)
            run = [n]
    out.append(run)
    return ", ".join(f"{r[0]}-{r[-1]}" if len(r) > 2 else ", ".join(map(str, r)) for r in out)


def _where(what: str, raw: str, phases: int, coils: tuple[int, ...]) -> str | None:
    """The canonical `where` of a reading, or None if it does not name a place of this winding."""
    text = raw.strip()
    if what == "coil_resistance_ohm":
        try:
            n = int(text)
        except ValueError:
            return None
        return str(n) if n in coils else None
    if what in ("phase_resistance_ohm", "phase_voltage_v"):
        return text.upper() if text.upper() in terminal_letters(phases) else None
    if what == "line_voltage_v":
        return canonical_pair(text, phases)
    return "" if not text else None


def _number(text: str) -> float | None:
    """A finite number, or None (NaN and infinities are not readings)."""
    try:
        x = float(text)
    except ValueError:
        return None
    return x if math.isfinite(x) else None


def read_readings(text: str, source: str, phases: int, coils: tuple[int, ...]) -> tuple[Reading, ...]:
    """Parse the readings CSV of a winding with `phases` phases and coils at positions `coils`.

    Blank lines are skipped; a row may leave out its last field (rpm) where it is not needed.
    Every problem is a DesignError of one line: file, line, column, value, what is allowed.
    """

    def fail(line: int, column: str | None, value: object, allowed: str) -> DesignError:
        key = f"line {line}: {column}" if column else f"line {line}"
        return DesignError(source, key, value, allowed)

    rows = [(n + 1, r) for n, r in enumerate(csv.reader(io.StringIO(text))) if any(c.strip() for c in r)]
    header = ",".join(READINGS_HEADER)
    if not rows:
        raise DesignError(source, None, None, f"is empty; give a header {header} and a reading a row")
    line, head = rows[0]
    if tuple(c.strip().lower() for c in head) != READINGS_HEADER:
        raise fail(line, "header", ",".join(head), f"must be {header}")
    if len(rows) == 1:
        raise DesignError(source, None, None, f"has the header {header} but no readings")
    out = []
    for line, row in rows[1:]:
        if not 3 <= len(row) <= 4:
            raise fail(line, None, ",".join(row), f"needs 4 fields, {header}")
        what, where_raw, value_raw = (c.strip() for c in row[:3])
        rpm_raw = row[3].strip() if len(row) == 4 else ""
        if what not in WHATS:
            raise fail(line, "what", what, "must be one of " + ", ".join(WHATS))
        if what == "line_voltage_v" and phases == 1:
            raise fail(
                line, "what", what, "a single-phase machine has no line pairs: give phase_voltage_v at U"
            )
        where = _where(what, where_raw, phases, coils)
        if where is None:
            raise fail(line, "where", where_raw, f"for {what} must be {_where_words(what, phases, coils)}")
        value = _number(value_raw)
        unit = "ohms" if what in RESISTANCE_WHATS else "volts"
        if value is None:
            hint = " (an open coil: write a large value such as 1e9)" if unit == "ohms" else ""
            raise fail(line, "value", value_raw, f"must be a number in {unit}{hint}")
        if value < 0:
            raise fail(
                line, "value", value_raw, f"must be 0 or more ({unit}; a meter's sign does not matter)"
            )
        top = MAX_READING_OHM if unit == "ohms" else MAX_READING_V
        if value > top:
            raise fail(line, "value", value_raw, f"must be at most {top:g} {unit}")
        rpm = None
        if what in VOLTAGE_WHATS:
            if not rpm_raw:
                raise fail(line, "rpm", None, f"a voltage needs the speed it was read at (rpm) for {what}")
            rpm = _number(rpm_raw)
            if rpm is None or not 0 < rpm <= MAX_READING_RPM:
                raise fail(
                    line, "rpm", rpm_raw, f"must be a speed above 0 and at most {MAX_READING_RPM:g} rpm"
                )
        out.append(Reading(what, where, value, rpm, line))
    return tuple(out)


def _channel(name: str, phases: int) -> str | None:
    """A waveform column's terminals: "U", "V", "W" or a pair; None if not of this winding."""
    letter = name.strip().upper()
    if letter in terminal_letters(phases):
        return letter
    return canonical_pair(name, phases)


def channel_words(phases: int) -> str:
    """What may name a waveform channel of this winding."""
    if phases == 1:
        return "U (the winding's terminals)"
    return ", ".join(terminal_letters(phases)) + " (a phase) or a pair such as U-V"


MIN_SAMPLES_PER_PERIOD = 8  # of the electrical frequency: its harmonics to the third, and then some


def read_waveform(
    text: str, source: str, phases: int, pole_pairs: int, rpm: float, where: str | None = None
) -> Waveform:
    """Parse a waveform CSV: `time_s,volts` with the channel's terminals in `where`, or
    `time_s,U,V,...` with a channel a column named by its terminals (then `where` must be None
    or agree with the single column). Times strictly increasing, every value finite, at least
    MIN_SAMPLES_PER_PERIOD samples an electrical period at `rpm` (f = p·rpm/60)."""
    header_words = "time_s,volts or time_s followed by channel names (" + channel_words(phases) + ")"
    if not (math.isfinite(rpm) and 0 < rpm <= MAX_READING_RPM):
        raise DesignError(
            source, "--waveform-rpm", rpm, f"must be a speed above 0 and at most {MAX_READING_RPM:g} rpm"
        )

    def fail(line: int, column: str | None, value: object, allowed: str) -> DesignError:
        key = f"line {line}: {column}" if column else f"line {line}"
        return DesignError(source, key, value, allowed)

    lines = [(n + 1, s) for n, s in enumerate(text.splitlines()) if s.strip()]
    if not lines:
        raise DesignError(source, None, None, f"is empty; give a header {header_words} and a sample a row")
    first, head_line = lines[0]
    head = [c.strip() for c in next(csv.reader([head_line]))]
    if len(head) < 2 or head[0].lower() != "time_s":
        raise fail(first, "header", head_line.strip(), f"must be {header_words}")
    names = head[1:]
    if len(names) == 1 and names[0].lower() == "volts":
        if where is None:
            raise DesignError(
                source,
                "header",
                "time_s,volts",
                "names no terminals: give --waveform-where (U, V, W or U-V ...)",
            )
        got = _channel(where, phases)
        if got is None:
            raise DesignError(source, "--waveform-where", where, f"must be {channel_words(phases)}")
        chans = [got]
    else:
        chans = []
        for name in names:
            got = _channel(name, phases)
            if got is None:
                raise fail(first, "header", name, f"a channel must be named {channel_words(phases)}")
            if got in chans:
                raise fail(first, "header", name, "names a channel twice")
            chans.append(got)
        if where is not None and (len(chans) != 1 or _channel(where, phases) != chans[0]):
            raise DesignError(
                source, "--waveform-where", where, "the header already names the channels: leave it out"
            )
    if len(lines) - 1 < MIN_WAVEFORM_SAMPLES:
        raise DesignError(
            source,
            None,
            None,
            f"has {len(lines) - 1} samples; a waveform needs at least {MIN_WAVEFORM_SAMPLES}",
        )
    width = 1 + len(chans)
    data = np.empty((len(lines) - 1, width))
    columns = ["time_s", *names]  # as the file spells them
    for i, (line, s) in enumerate(lines[1:]):
        fields = s.split(",")
        if len(fields) != width:
            raise fail(line, None, s.strip(), f"needs {width} fields, as the header names")
        for j, f in enumerate(fields):
            x = _number(f.strip())
            if x is None:
                raise fail(
                    line,
                    columns[j],
                    f.strip(),
                    "must be a number" + (" in seconds" if j == 0 else " in volts"),
                )
            data[i, j] = x
    t = data[:, 0]
    steps = np.diff(t)
    if (steps <= 0).any():
        k = int(np.flatnonzero(steps <= 0)[0]) + 1
        raise fail(lines[k + 1][0], "time_s", f"{t[k]:g}", "times must increase from one sample to the next")
    per_period = 60 / (pole_pairs * rpm) / float(np.median(steps))
    if per_period < MIN_SAMPLES_PER_PERIOD:
        raise DesignError(
            source,
            "time_s",
            f"a sample every {1e3 * float(np.median(steps)):.3g} ms",
            f"{per_period:.1f} samples an electrical period at {rpm:g} rpm; record at least "
            f"{MIN_SAMPLES_PER_PERIOD} (a faster time base or sample rate)",
        )
    return Waveform(source, t, tuple((c, data[:, j + 1]) for j, c in enumerate(chans)), float(rpm))
