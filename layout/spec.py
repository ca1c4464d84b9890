"""Design files: TOML in, a frozen, validated Spec out.

The spec key, the dataclass field and the JSON key are the same name. Each field's metadata
says what is allowed; the reader checks every key against it, rejects unknown keys (a typo
must not pass silently) and reports the first problem as one line naming the file, the key,
the value and what is allowed.
"""

from __future__ import annotations

import dataclasses
import json
import math
import stat
import tomllib
import types
import typing
from dataclasses import dataclass, field
from pathlib import Path

from layout.materials import DISC_MATERIALS, MAGNET_GRADES, METRIC_THREADS, STATOR_BINDERS_MAX_C


class DesignError(ValueError):
    """A design file that cannot be used; str() is the one line shown to the user."""

    def __init__(self, source: str, key: str | None, value: object, allowed: str):
        self.source, self.key, self.value, self.allowed = source, key, value, allowed
        where = f"{source}: {key} = {_show(value)}" if key else source
        super().__init__(f"{where}: {allowed}")


_SHOWN_CHARS = 60  # a value in an error message is cut here, so the message stays one line


def _show(value: object, depth: int = 0) -> str:
    """A value as the design file would spell it, short, on one line, whatever its size."""
    if depth > 2:
        return "…"
    if value is None:
        return "(not given)"
    if isinstance(value, str):
        text = json.dumps(value, ensure_ascii=False)  # escapes newlines: one line always
    elif isinstance(value, bool):
        text = "true" if value else "false"
    elif isinstance(value, int) and abs(value) > 10**30:
        text = f"(a whole number of {len(str(abs(value)))} digits)"
    elif isinstance(value, list | tuple):
        items = [_show(v, depth + 1) for v in value[:8]]
        text = "[" + ", ".join(items + (["…"] if len(value) > 8 else [])) + "]"
    elif isinstance(value, dict):
        text = "{" + ", ".join(f"{k} = {_show(v, depth + 1)}" for k, v in list(value.items())[:4]) + "}"
    else:
        text = str(value)
    return text if len(text) <= _SHOWN_CHARS else text[: _SHOWN_CHARS - 1] + "…"


def rule(
    default=dataclasses.MISSING,
    *,
    gt: float | None = None,
    ge: float | None = None,
    le: float | None = None,
    lt: float | None = None,
    choices: typing.Iterable[str] | None = None,
    even: bool = False,
    why: str = "",
    pairs: bool = False,
):
    """A spec field with its allowed range; `why` is appended to range errors. `pairs`: a
    list of [x, y] number pairs (a curve)."""
    meta = {"gt": gt, "ge": ge, "le": le, "lt": lt, "even": even, "why": why, "pairs": pairs}
    meta["choices"] = tuple(choices) if choices is not None else None
    if default is dataclasses.MISSING:
        return field(metadata=meta)
    return field(default=default, metadata=meta)


_IN_MM = "in mm; 1 inch is 25.4 mm"


@dataclass(frozen=True)
class StatorSpec:
    phases: int = rule(ge=1, le=3, why="1 (single phase) or 3 (three phase)")
    coil_positions: int = rule(ge=2, le=96)
    thickness_mm: float = rule(ge=2, le=80, why="a cast stator thinner than 2 mm holds no winding")
    empty_positions: tuple[int, ...] = rule(())
    coil_clearance_mm: float = rule(1.5, ge=0, le=20)
    resin_cover_mm: float = rule(0.5, ge=0, le=10)
    hole_radial_mm: float | None = rule(None, ge=1, le=1000)
    hole_tangential_mm: float | None = rule(None, ge=1, le=1000)
    leg_width_mm: float | None = rule(None, ge=1, le=500)
    hole_margin_mm: float = rule(1.0, ge=0, le=20)
    binder: str = rule("epoxy", choices=STATOR_BINDERS_MAX_C)
    fill_factor: float = rule(0.5, gt=0.1, le=0.75, why="hand-wound round wire fills 0.4–0.6")
    wire_standard: str = rule("awg", choices=("awg", "metric"))
    max_wire_diameter_mm: float = rule(1.6, gt=0.1, le=5)
    mould_wall_mm: float = rule(10.0, ge=1, le=100)
    resin_rim_mm: float = rule(8.0, ge=1, le=100)
    mounting_lugs: int = rule(4, ge=3, le=24)
    mounting_hole_diameter_mm: float = rule(11.0, ge=2, le=60)


@dataclass(frozen=True)
class MagnetSpec:
    count: int = rule(ge=2, le=200, even=True, why="must be even (magnets alternate N/S)")
    shape: str = rule(choices=("block", "disc"))
    thickness_mm: float = rule(ge=0.5, le=100, why=_IN_MM)
    pitch_radius_mm: float = rule(ge=5, le=2000, why=_IN_MM)
    length_mm: float | None = rule(None, ge=1, le=500, why=_IN_MM)
    width_mm: float | None = rule(None, ge=1, le=500, why=_IN_MM)
    diameter_mm: float | None = rule(None, ge=1, le=500, why=_IN_MM)
    grade: str | None = rule(None, choices=MAGNET_GRADES)
    remanence_t: float | None = rule(None, ge=0.1, le=1.6, why="hard ferrite about 0.4 T, NdFeB 1.2–1.5 T")
    max_temperature_c: float | None = rule(None, gt=20, le=350)
    mass_tolerance_pct: float = rule(1.0, ge=0, le=20)


@dataclass(frozen=True)
class RotorSpec:
    topology: str = rule(
        choices=("two_discs", "one_disc_steel_stator", "one_disc_steel_disc", "one_disc_coreless")
    )
    disc_material: str = rule(choices=DISC_MATERIALS)
    disc_thickness_mm: float = rule(ge=0.5, le=100)
    running_clearance_mm: float = rule(
        ge=0.2, le=50, why="a disc that flexes or runs out rubs below a few tenths; 1–3 mm is usual"
    )
    bore_diameter_mm: float = rule(25.0, ge=3, le=1000)
    disc_outer_diameter_mm: float | None = rule(None, ge=10, le=4000)
    stator_plate_thickness_mm: float | None = rule(None, ge=0.5, le=100)
    # The plain disc of one_disc_steel_disc; by default as thick as rotor.disc_thickness_mm, steel.
    steel_disc_thickness_mm: float | None = rule(None, ge=0.5, le=100)
    steel_disc_material: str | None = rule(None, choices=DISC_MATERIALS)
    hub_bolt_circle_mm: float | None = rule(None, ge=5, le=2000)
    hub_bolts: int = rule(4, ge=3, le=16)
    hub_hole_diameter_mm: float = rule(9.0, ge=1, le=100)
    dowel_diameter_mm: float = rule(6.0, ge=1, le=50)
    pocket_clearance_mm: float | None = rule(None, ge=0, le=3)
    pocket_depth_mm: float | None = rule(None, ge=0.2, le=100)
    min_web_mm: float = rule(3.0, ge=0.5, le=50)
    jacking_screw: str = rule("M10", choices=METRIC_THREADS)
    jacking_screws: int = rule(3, ge=3, le=12, why="three or more hold the disc level")
    jacking_circle_mm: float | None = rule(None, ge=5, le=2000)
    magnet_bond_mpa: float | None = rule(
        None, ge=0.1, le=50, why="the adhesive's strength holding a magnet in its place, in MPa"
    )


@dataclass(frozen=True)
class ConnectionSpec:
    kind: str = rule(choices=("star", "delta", "single_phase"))
    parallel_paths: int = rule(1, ge=1, le=96)


TARGET_KINDS = ("battery", "dc", "ac_line", "converter")
TRACKING_MODES = ("mppt", "fixed")
CONVERTER_KEYS = (
    "min_input_v", "max_input_v", "output_v", "max_output_current_a", "bus_capacitor_uf", "input_v",
)  # fmt: skip


@dataclass(frozen=True)
class TargetSpec:
    kind: str = rule(choices=TARGET_KINDS)
    rated_rpm: float = rule(ge=1, le=20000)
    max_rpm: float = rule(ge=1, le=20000)
    battery_v: float | None = rule(None, ge=1, le=1000, why="in volts, not millivolts")
    cut_in_rpm: float | None = rule(None, ge=1, le=20000)
    battery_resistance_ohm: float = rule(0.05, ge=0.001, le=100)
    voltage_v: float | None = rule(None, ge=1, le=10000)
    rated_current_a: float | None = rule(
        None, ge=0.05, le=1000, why="below 50 mA the losses of the machine swamp its output"
    )
    diode_drop_v: float = rule(0.9, ge=0, le=3, why="silicon 0.7–1.0 V, Schottky 0.3–0.5 V")
    ambient_c: float = rule(25.0, ge=-40, le=60)
    # converter: a DC-DC converter or charge controller on the rectified bus (layout.converter)
    min_input_v: float | None = rule(None, ge=1, le=1000, why="the converter's lowest input, in volts")
    max_input_v: float | None = rule(None, ge=2, le=1500, why="the converter's highest input, in volts")
    efficiency: float = rule(0.9, ge=0.5, le=0.99, why="small converters run at 0.85–0.95")
    output_v: float | None = rule(None, ge=1, le=1000, why="what the converter delivers, in volts")
    max_output_current_a: float | None = rule(None, ge=0.05, le=500)
    bus_capacitor_uf: float | None = rule(None, ge=1, le=1e6, why="in microfarads")
    tracking: str = rule("mppt", choices=TRACKING_MODES)
    input_v: float | None = rule(None, ge=1, le=1500, why='the bus voltage tracking = "fixed" holds')


BETZ_LIMIT = 16 / 27  # the most power a rotor in open flow can take from the wind (Betz 1920)
SOURCE_KINDS = ("wind", "water", "pedal", "crank")
TURBINES = ("pelton", "turgo", "crossflow", "propeller")


@dataclass(frozen=True)
class SourceSpec:
    """What turns the alternator (layout.source): blades in the wind, a water turbine, or a
    person. Keys apply to the kinds named beside them; `_check_consistency` enforces it."""

    kind: str = rule(choices=SOURCE_KINDS)
    drive_ratio: float = rule(1.0, ge=0.05, le=50, why="alternator rpm per source rpm; 1 for direct drive")
    drive_efficiency: float | None = rule(None, ge=0.5, le=1)
    # wind
    rotor_diameter_m: float | None = rule(None, ge=0.3, le=20)
    blades: int | None = rule(None, ge=1, le=12)
    design_tsr: float | None = rule(None, ge=1, le=15, why="the tip-speed ratio of peak Cp")
    peak_cp: float | None = rule(None, gt=0, le=BETZ_LIMIT, why="the Betz limit is 16/27 = 0.593")
    cp_curve: tuple[tuple[float, float], ...] | None = rule(None, pairs=True)
    mean_wind_m_s: float | None = rule(None, ge=0.5, le=20)
    weibull_k: float = rule(2.0, ge=1, le=5, why="2 is the Rayleigh distribution")
    air_density_kg_m3: float = rule(1.225, ge=0.6, le=1.5, why="1.225 at sea level, 15 °C")
    furl_wind_m_s: float | None = rule(None, ge=3, le=60)
    # the cable from the alternator's rectifier to the battery (two conductors)
    cable_length_m: float = rule(0.0, ge=0, le=5000)
    cable_area_mm2: float = rule(2.5, ge=0.2, le=500)
    # water
    head_m: float | None = rule(None, ge=0.5, le=1000, why="the net head, in metres")
    flow_l_s: float | None = rule(None, ge=0.05, le=5000, why="in litres per second")
    turbine: str | None = rule(None, choices=TURBINES)
    runner_diameter_mm: float | None = rule(None, ge=20, le=3000, why=_IN_MM)
    turbine_efficiency: float | None = rule(None, ge=0.1, le=0.95)
    # pedal or crank
    cadence_rpm: float | None = rule(None, ge=10, le=200, why="turns of the cranks a minute")
    sustained_power_w: float | None = rule(None, ge=5, le=2000)
    peak_power_w: float | None = rule(None, ge=5, le=3000)


@dataclass(frozen=True)
class FabSpec:
    kerf_mm: float = rule(0.0, ge=0, le=5)
    winder_hole_diameter_mm: float = rule(8.5, ge=1, le=50)
    jig_cheek_thickness_mm: float = rule(6.0, ge=1, le=50)
    template_thickness_mm: float | None = rule(None, ge=0.5, le=50)
    print_bed_mm: float = rule(250.0, ge=20, le=2000)
    stl_tolerance_mm: float = rule(0.05, ge=0.005, le=1)


@dataclass(frozen=True)
class CoilsSpec:
    """Coils already wound, or a design's published coils: the model takes them as given
    instead of sizing them for the target. Every key is optional."""

    turns_per_coil: int | None = rule(None, ge=1, le=100000)
    wire_diameter_mm: float | None = rule(None, ge=0.05, le=5, why="bare copper, in mm")
    strands_in_hand: int = rule(1, ge=1, le=100)


@dataclass(frozen=True)
class Spec:
    name: str
    purpose: str
    stator: StatorSpec
    magnets: MagnetSpec
    rotor: RotorSpec
    connection: ConnectionSpec
    target: TargetSpec
    file: str  # the file name shown in messages
    fab: FabSpec = field(default_factory=FabSpec)
    coils: CoilsSpec = field(default_factory=CoilsSpec)
    coils_given: tuple[str, ...] = ()  # the [coils] keys the file gave, in its order
    source: SourceSpec | None = None  # [source]: what turns the shaft; None: the speeds are held

    def fail(self, key: str, value: object, allowed: str) -> DesignError:
        """An error about this design's `key` (dotted), for checks made after loading."""
        return DesignError(self.file, key, value, allowed)


_SECTIONS: dict[str, type] = {
    "stator": StatorSpec,
    "magnets": MagnetSpec,
    "rotor": RotorSpec,
    "connection": ConnectionSpec,
    "target": TargetSpec,
    "fab": FabSpec,
    "coils": CoilsSpec,
    "source": SourceSpec,
}
_OPTIONAL_SECTIONS = ("fab", "coils", "source")  # every key has a default, or the table is optional
_TOP_KEYS = ("name", "purpose")


def _base_type(annotation: str) -> tuple[type, bool]:
    """The Python type a field holds and whether None is allowed."""
    hint = eval(annotation, {"tuple": tuple, "int": int, "float": float, "str": str, "bool": bool})  # noqa: S307
    optional = False
    if isinstance(hint, types.UnionType):
        args = [a for a in typing.get_args(hint) if a is not type(None)]
        optional, hint = True, args[0]
    if typing.get_origin(hint) is tuple:
        return tuple, optional
    return hint, optional


def _read_value(src: str, key: str, value: object, f: dataclasses.Field):
    kind, _ = _base_type(f.type)
    m = f.metadata
    if m.get("pairs"):
        ok = isinstance(value, list) and len(value) >= 2
        ok = ok and all(
            isinstance(p, list)
            and len(p) == 2
            and all(isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v) for v in p)
            for p in value
        )
        if not ok:
            raise DesignError(src, key, value, "must be a list of at least two [x, y] number pairs")
        return tuple((float(a), float(b)) for a, b in value)
    if kind is tuple:
        if not isinstance(value, list) or not all(
            isinstance(v, int) and not isinstance(v, bool) for v in value
        ):
            raise DesignError(src, key, value, "must be a list of whole numbers")
        return tuple(value)
    if kind is bool:
        if not isinstance(value, bool):
            raise DesignError(src, key, value, "must be true or false")
        return value
    if kind is str:
        if not isinstance(value, str):
            raise DesignError(src, key, value, "must be text in quotes")
        if m["choices"] is not None and value not in m["choices"]:
            raise DesignError(src, key, value, "must be one of " + ", ".join(m["choices"]))
        return value
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise DesignError(src, key, value, "must be a number")
    if isinstance(value, int) and abs(value) > 10**15:
        raise DesignError(src, key, value, "is far too large for a number of this design")
    if kind is int and not (isinstance(value, int) or float(value).is_integer()):
        raise DesignError(src, key, value, "must be a whole number")
    number = int(value) if kind is int else float(value)
    if not math.isfinite(number):
        raise DesignError(src, key, value, "must be a finite number")
    if m["even"] and number % 2:
        raise DesignError(src, key, value, m["why"] or "must be even")
    bounds = []
    ok = True
    for name, test, word in (
        ("gt", lambda b: number > b, "more than"),
        ("ge", lambda b: number >= b, "at least"),
        ("lt", lambda b: number < b, "less than"),
        ("le", lambda b: number <= b, "at most"),
    ):
        if m[name] is not None:
            bounds.append(f"{word} {m[name]:g}")
            ok = ok and test(m[name])
    if not ok:
        reason = "must be " + " and ".join(bounds)
        if m["why"]:
            reason += f" ({m['why']})"
        raise DesignError(src, key, value, reason)
    return number


def _read_section(src: str, section: str, table: object, cls: type):
    if not isinstance(table, dict):
        raise DesignError(src, section, table, "must be a table ([" + section + "])")
    fields = {f.name: f for f in dataclasses.fields(cls)}
    for key in table:
        if key not in fields:
            raise DesignError(
                src, f"{section}.{key}", table[key], "unknown key; allowed: " + ", ".join(fields)
            )
    values = {}
    for name, f in fields.items():
        key = f"{section}.{name}"
        if name in table:
            values[name] = _read_value(src, key, table[name], f)
        elif f.default is dataclasses.MISSING:
            raise DesignError(src, key, None, "required")
    return cls(**values)


def parse_spec(data: dict, source: str) -> Spec:
    """Validate a parsed TOML document; raise DesignError on the first problem."""
    allowed = ", ".join(_TOP_KEYS + tuple(f"[{s}]" for s in _SECTIONS))
    for key in data:
        if key not in _TOP_KEYS and key not in _SECTIONS:
            raise DesignError(source, key, data[key], "unknown key; allowed: " + allowed)
    for key in _TOP_KEYS:
        if key not in data:
            raise DesignError(source, key, None, "required")
        if not isinstance(data[key], str) or not data[key].strip():
            raise DesignError(source, key, data[key], "must be non-empty text in quotes")
    sections = {}
    for section, cls in _SECTIONS.items():
        if section not in data:
            if section in _OPTIONAL_SECTIONS:
                continue
            raise DesignError(source, f"[{section}]", None, "required table")
        sections[section] = _read_section(source, section, data[section], cls)
    given = tuple(data["coils"]) if isinstance(data.get("coils"), dict) else ()
    spec = Spec(name=data["name"], purpose=data["purpose"], file=source, coils_given=given, **sections)
    _check_consistency(spec)
    return spec


def with_value(spec: Spec, dotted: str, value: object) -> Spec:
    """The design with one "section.key" changed, checked as the file would be.

    Raises DesignError when the new value is out of range or breaks a rule that ties keys
    together; the original spec is not touched.
    """
    return with_values(spec, ((dotted, value),))


def with_values(spec: Spec, changes) -> Spec:
    """The design with several ("section.key", value) changes, each checked as the file would
    be and the rules that tie keys together checked once after all of them. None leaves out
    an optional key (as if the file did not give it)."""
    new = spec
    for dotted, value in changes:
        section, key = dotted.split(".")
        f = {f.name: f for f in dataclasses.fields(_SECTIONS[section])}[key]
        optional = value is None and f.default is None
        number = None if optional else _read_value(spec.file, dotted, value, f)
        table = dataclasses.replace(getattr(new, section), **{key: number})
        new = dataclasses.replace(new, **{section: table})
    _check_consistency(new)
    return new


def _check_consistency(spec: Spec) -> None:
    """Rules that tie several keys together."""
    st, mg, ro, co, ta = spec.stator, spec.magnets, spec.rotor, spec.connection, spec.target
    if len(spec.name) > MAX_NAME_CHARS:
        raise spec.fail(
            "name", spec.name, f"at most {MAX_NAME_CHARS} characters (it names the package's files)"
        )
    if not spec.name.replace("-", "").replace("_", "").isascii() or not (
        spec.name.replace("-", "").replace("_", "").isalnum()
    ):
        raise spec.fail("name", spec.name, "use letters, digits, - and _ only (it names files)")
    if "strands_in_hand" in spec.coils_given and spec.coils.wire_diameter_mm is None:
        raise spec.fail(
            "coils.strands_in_hand",
            spec.coils.strands_in_hand,
            "needs coils.wire_diameter_mm (each strand's)",
        )
    if st.phases == 2:
        raise spec.fail("stator.phases", 2, "must be 1 (single phase) or 3 (three phase)")
    if (st.phases == 1) != (co.kind == "single_phase"):
        allowed = '"single_phase"' if st.phases == 1 else '"star" or "delta"'
        raise spec.fail("connection.kind", co.kind, f"must be {allowed} for stator.phases = {st.phases}")
    for pos in st.empty_positions:
        if not 1 <= pos <= st.coil_positions:
            raise spec.fail(
                "stator.empty_positions",
                list(st.empty_positions),
                f"positions are numbered 1 to {st.coil_positions}",
            )
    if len(set(st.empty_positions)) != len(st.empty_positions):
        raise spec.fail("stator.empty_positions", list(st.empty_positions), "lists a position twice")
    if len(st.empty_positions) >= st.coil_positions:
        raise spec.fail("stator.empty_positions", list(st.empty_positions), "leaves no coil")
    if mg.shape == "block":
        for key in ("length_mm", "width_mm"):
            if getattr(mg, key) is None:
                raise spec.fail(f"magnets.{key}", None, 'required for magnets.shape = "block"')
        if mg.diameter_mm is not None:
            raise spec.fail("magnets.diameter_mm", mg.diameter_mm, 'only for magnets.shape = "disc"')
    else:
        if mg.diameter_mm is None:
            raise spec.fail("magnets.diameter_mm", None, 'required for magnets.shape = "disc"')
        for key in ("length_mm", "width_mm"):
            if getattr(mg, key) is not None:
                raise spec.fail(f"magnets.{key}", getattr(mg, key), 'only for magnets.shape = "block"')
    if (mg.grade is None) == (mg.remanence_t is None):
        raise spec.fail(
            "magnets.grade", mg.grade, "give exactly one of magnets.grade and magnets.remanence_t"
        )
    if ta.max_rpm < ta.rated_rpm:
        raise spec.fail("target.max_rpm", ta.max_rpm, f"must be at least target.rated_rpm ({ta.rated_rpm:g})")
    if ta.kind == "battery":
        for key in ("battery_v", "cut_in_rpm"):
            if getattr(ta, key) is None:
                raise spec.fail(f"target.{key}", None, 'required for target.kind = "battery"')
        if ta.cut_in_rpm >= ta.rated_rpm:
            raise spec.fail(
                "target.cut_in_rpm",
                ta.cut_in_rpm,
                f"must be below target.rated_rpm ({ta.rated_rpm:g})",
            )
    elif ta.kind == "converter":
        _check_converter(spec)
    else:
        for key in ("voltage_v", "rated_current_a"):
            if getattr(ta, key) is None:
                raise spec.fail(f"target.{key}", None, f'required for target.kind = "{ta.kind}"')
    if ta.kind != "converter":
        for key in CONVERTER_KEYS:
            if getattr(ta, key) is not None:
                raise spec.fail(f"target.{key}", getattr(ta, key), 'only for target.kind = "converter"')
    if ta.kind == "ac_line" and st.phases == 1:
        raise spec.fail("target.kind", ta.kind, 'single phase: use "battery" or "dc"')
    steel_stator = ro.topology == "one_disc_steel_stator"
    if steel_stator and ro.stator_plate_thickness_mm is None:
        raise spec.fail(
            "rotor.stator_plate_thickness_mm",
            None,
            'required for rotor.topology = "one_disc_steel_stator"',
        )
    if not steel_stator and ro.stator_plate_thickness_mm is not None:
        raise spec.fail(
            "rotor.stator_plate_thickness_mm",
            ro.stator_plate_thickness_mm,
            'only for rotor.topology = "one_disc_steel_stator"',
        )
    for key in ("steel_disc_thickness_mm", "steel_disc_material"):
        if ro.topology != "one_disc_steel_disc" and getattr(ro, key) is not None:
            raise spec.fail(
                f"rotor.{key}", getattr(ro, key), 'only for rotor.topology = "one_disc_steel_disc"'
            )
    if ro.steel_disc_material is not None and not DISC_MATERIALS[ro.steel_disc_material].magnetic:
        magnetic = ", ".join(m.name for m in DISC_MATERIALS.values() if m.magnetic)
        raise spec.fail(
            "rotor.steel_disc_material",
            ro.steel_disc_material,
            f"the plain disc closes the magnets' flux: use a magnetic material ({magnetic})",
        )
    if 2 * st.resin_cover_mm >= st.thickness_mm:
        raise spec.fail(
            "stator.resin_cover_mm",
            st.resin_cover_mm,
            f"two covers leave no room for coils in stator.thickness_mm = {st.thickness_mm:g}",
        )
    _check_pockets(spec)
    _check_source(spec)
    inner = magnet_radial_extent_mm(mg)
    if mg.pitch_radius_mm - inner / 2 <= ro.bore_diameter_mm / 2:
        raise spec.fail(
            "magnets.pitch_radius_mm",
            mg.pitch_radius_mm,
            f"magnets reach into the bore (rotor.bore_diameter_mm = {ro.bore_diameter_mm:g})",
        )


_SOURCE_KEYS = {
    "wind": (
        "rotor_diameter_m",
        "blades",
        "design_tsr",
        "peak_cp",
        "cp_curve",
        "mean_wind_m_s",
        "weibull_k",
        "air_density_kg_m3",
        "furl_wind_m_s",
    ),
    "water": ("head_m", "flow_l_s", "turbine", "runner_diameter_mm", "turbine_efficiency"),
    "pedal": ("cadence_rpm", "sustained_power_w", "peak_power_w"),
}
_SOURCE_KEYS["crank"] = _SOURCE_KEYS["pedal"]
_SOURCE_REQUIRED = {
    "wind": ("rotor_diameter_m", "mean_wind_m_s"),
    "water": ("head_m", "flow_l_s", "turbine", "runner_diameter_mm"),
    "pedal": ("cadence_rpm", "sustained_power_w"),
    "crank": ("cadence_rpm", "sustained_power_w"),
}


def source_keys(kind: str) -> tuple[str, ...]:
    """The [source] keys that apply to `kind`: its own and those every kind has."""
    common = ("kind", "drive_ratio", "drive_efficiency", "cable_length_m", "cable_area_mm2")
    return common + _SOURCE_KEYS[kind]


def _check_source(spec: Spec) -> None:
    """[source]: the keys of its kind only, those it needs, and curves a rotor could have."""
    so = spec.source
    if so is None:
        return
    mine = set(_SOURCE_KEYS[so.kind])
    for other in {k for keys in _SOURCE_KEYS.values() for k in keys} - mine:
        default = next(f.default for f in dataclasses.fields(SourceSpec) if f.name == other)
        if getattr(so, other) != default:
            raise spec.fail(f"source.{other}", getattr(so, other), f'not a key of source.kind = "{so.kind}"')
    for key in _SOURCE_REQUIRED[so.kind]:
        if getattr(so, key) is None:
            raise spec.fail(f"source.{key}", None, f'required for source.kind = "{so.kind}"')
    if so.kind == "wind":
        if so.cp_curve is not None:
            for key in ("design_tsr", "peak_cp"):
                if getattr(so, key) is not None:
                    raise spec.fail(
                        f"source.{key}", getattr(so, key), "give source.cp_curve or this, not both"
                    )
            tsr = [p[0] for p in so.cp_curve]
            if any(b <= a for a, b in zip(tsr, tsr[1:], strict=False)) or tsr[0] < 0:
                raise spec.fail(
                    "source.cp_curve",
                    [list(p) for p in so.cp_curve],
                    "tip-speed ratios must rise from 0 or more, point by point",
                )
            top = max(p[1] for p in so.cp_curve)
            if top > BETZ_LIMIT or min(p[1] for p in so.cp_curve) < -0.5:
                raise spec.fail(
                    "source.cp_curve",
                    [list(p) for p in so.cp_curve],
                    "Cp must stay at most 16/27 = 0.593 (the Betz limit)",
                )
            if top <= 0:
                raise spec.fail("source.cp_curve", [list(p) for p in so.cp_curve], "no point has Cp above 0")
        else:
            for key in ("design_tsr", "peak_cp"):
                if getattr(so, key) is None:
                    raise spec.fail(f"source.{key}", None, "required unless source.cp_curve is given")
        if so.furl_wind_m_s is not None and so.furl_wind_m_s <= so.mean_wind_m_s:
            raise spec.fail(
                "source.furl_wind_m_s",
                so.furl_wind_m_s,
                f"must be above source.mean_wind_m_s ({so.mean_wind_m_s:g})",
            )
    if (
        so.kind in ("pedal", "crank")
        and so.peak_power_w is not None
        and so.peak_power_w < so.sustained_power_w
    ):
        raise spec.fail(
            "source.peak_power_w",
            so.peak_power_w,
            f"must be at least source.sustained_power_w ({so.sustained_power_w:g})",
        )
    if so.cable_length_m > 0 and spec.target.kind != "battery":
        raise spec.fail(
            "source.cable_length_m",
            so.cable_length_m,
            'the cable is modelled for target.kind = "battery" only; leave it out',
        )


def _check_converter(spec: Spec) -> None:
    ta = spec.target
    for key in ("min_input_v", "max_input_v", "output_v", "max_output_current_a"):
        if getattr(ta, key) is None:
            raise spec.fail(f"target.{key}", None, 'required for target.kind = "converter"')
    if ta.max_input_v <= ta.min_input_v:
        raise spec.fail(
            "target.max_input_v", ta.max_input_v, f"must be above target.min_input_v ({ta.min_input_v:g})"
        )
    if ta.tracking == "fixed":
        if ta.input_v is None:
            raise spec.fail("target.input_v", None, 'required for target.tracking = "fixed"')
        if not ta.min_input_v <= ta.input_v <= ta.max_input_v:
            raise spec.fail(
                "target.input_v",
                ta.input_v,
                f"must lie in the converter's input window, {ta.min_input_v:g} to {ta.max_input_v:g} V",
            )
    elif ta.input_v is not None:
        raise spec.fail("target.input_v", ta.input_v, 'only for target.tracking = "fixed"')


def unit_slip_hint(spec: Spec) -> str:
    """A hint when the design's figures look like another unit than the keys ask for, else ""."""
    mg, ta = spec.magnets, spec.target
    sizes = [v for v in (mg.length_mm, mg.width_mm, mg.diameter_mm, mg.thickness_mm) if v is not None]
    hints = []
    if max(sizes) < 4:
        hints.append("the magnet sizes look like inches: give them in mm")
    if ta.rated_rpm < 25:  # the rated speed: a [source] may raise max_rpm to its runaway
        hints.append("the speeds look like revolutions per second: give them in rpm")
    if mg.pitch_radius_mm < 20 and max(sizes) < 4:
        hints.append("magnets.pitch_radius_mm looks like inches too")
    return ("; " + "; ".join(hints)) if hints else ""


MIN_POCKET_FLOOR_MM = 1.0  # thinner floors tear out of a printed or milled disc (common practice)


def _check_pockets(spec: Spec) -> None:
    """Pockets exist only in non-magnetic discs, and must leave a floor and the gap."""
    ro, mg, fb = spec.rotor, spec.magnets, spec.fab
    steel = DISC_MATERIALS[ro.disc_material].magnetic
    if ro.pocket_depth_mm is not None:
        if steel:
            raise spec.fail(
                "rotor.pocket_depth_mm",
                ro.pocket_depth_mm,
                f"only for non-magnetic discs: magnets sit on the face of a {ro.disc_material} disc",
            )
        if ro.pocket_depth_mm > mg.thickness_mm:
            raise spec.fail(
                "rotor.pocket_depth_mm",
                ro.pocket_depth_mm,
                f"at most magnets.thickness_mm ({mg.thickness_mm:g}): a deeper pocket puts the disc "
                "nearer the stator than rotor.running_clearance_mm",
            )
        if ro.pocket_depth_mm > ro.disc_thickness_mm - MIN_POCKET_FLOOR_MM:
            raise spec.fail(
                "rotor.pocket_depth_mm",
                ro.pocket_depth_mm,
                f"at most {ro.disc_thickness_mm - MIN_POCKET_FLOOR_MM:g}: leave a floor of "
                f"{MIN_POCKET_FLOOR_MM:g} mm in rotor.disc_thickness_mm = {ro.disc_thickness_mm:g}",
            )
    elif not steel and ro.disc_thickness_mm <= MIN_POCKET_FLOOR_MM + 0.5:
        raise spec.fail(
            "rotor.disc_thickness_mm",
            ro.disc_thickness_mm,
            f"too thin for magnet pockets; at least {MIN_POCKET_FLOOR_MM + 1:g} for {ro.disc_material}",
        )
    if fb.template_thickness_mm is not None and fb.template_thickness_mm > mg.thickness_mm:
        raise spec.fail(
            "fab.template_thickness_mm",
            fb.template_thickness_mm,
            f"at most magnets.thickness_mm ({mg.thickness_mm:g}): the magnets must stand proud of it",
        )


def magnet_radial_extent_mm(mg: MagnetSpec) -> float:
    """Radial size of one magnet's footprint."""
    return mg.length_mm if mg.shape == "block" else mg.diameter_mm


def magnet_tangential_extent_mm(mg: MagnetSpec) -> float:
    """Tangential size of one magnet's footprint."""
    return mg.width_mm if mg.shape == "block" else mg.diameter_mm


MAX_INPUT_BYTES = 1 << 20  # a design or requirement file is a few kB; refuse anything past 1 MiB
MAX_NAME_CHARS = 64  # `name` names the package folder and its files


def printable_name(name: str) -> str:
    """A file name as one printable line: control characters (newlines) shown escaped."""
    return "".join(c if c.isprintable() else c.encode("unicode_escape").decode() for c in name)


def read_text_input(path: str | Path, what: str, max_bytes: int = MAX_INPUT_BYTES) -> tuple[str, str]:
    """(source name, text) of a small regular UTF-8 file; DesignError with one line otherwise.

    Only regular files are opened, so a FIFO or a device such as /dev/zero cannot block or
    stream without end; the size (at most `max_bytes`) is checked before reading. A UTF-8
    byte-order mark, as spreadsheets and some editors write, is dropped.
    """
    p = Path(path)
    src = printable_name(p.name or str(p))
    try:
        st = p.stat()
    except FileNotFoundError:
        raise DesignError(src, None, None, f"no such file ({printable_name(str(p))})") from None
    except OSError as exc:
        raise DesignError(src, None, None, f"cannot be read ({exc.strerror})") from None
    if stat.S_ISDIR(st.st_mode):
        raise DesignError(src, None, None, f"is a folder, not {what}")
    if not stat.S_ISREG(st.st_mode):
        raise DesignError(src, None, None, f"is not a regular file (a pipe or a device?); give {what}")
    if st.st_size > max_bytes:
        raise DesignError(src, None, None, f"is {st.st_size} bytes; {what} is at most {max_bytes}")
    try:
        with open(p, "rb") as f:
            raw = f.read(max_bytes + 1)
    except OSError as exc:
        raise DesignError(src, None, None, f"cannot be read ({exc.strerror})") from None
    if len(raw) > max_bytes:
        raise DesignError(src, None, None, f"is larger than {max_bytes} bytes; give {what}")
    try:
        return src, raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise DesignError(src, None, None, f"is not UTF-8 text ({what})") from None


def load_spec(path: str | Path) -> Spec:
    """Read and validate a design file. Every failure is a DesignError with one line."""
    src, text = read_text_input(path, "a TOML design file")
    if not text.strip():
        raise DesignError(src, None, None, "is empty; a design needs name, purpose and its tables")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(src, None, None, f"is not valid TOML: {printable_name(str(exc))}") from None
    except RecursionError:
        raise DesignError(src, None, None, "is not a design: arrays or tables nested too deep") from None
    except ValueError:  # an integer of thousands of digits (int max_str_digits)
        raise DesignError(
            src, None, None, "is not a design: a number in it has thousands of digits"
        ) from None
    return parse_spec(data, src)
