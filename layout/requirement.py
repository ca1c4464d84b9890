"""A requirement file: what the machine must do and within which limits (`statorsmith size`).

The [target] and [source] tables are those of a design file (layout.spec), with
`target.rated_power_w` added; with a [source] the speeds may be left out and come from it.
[limits] bound the search, [magnets] names the stock to choose from, [prices] cost it.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import math
import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from layout.materials import MAGNET_GRADES, STATOR_BINDERS_MAX_C
from layout.spec import (
    DesignError,
    SourceSpec,
    TargetSpec,
    _read_section,
    printable_name,
    read_text_input,
    rule,
)

OBJECTIVES = ("cost", "magnet_mass", "efficiency", "annual_energy")
TOPOLOGIES = ("two_discs", "one_disc_steel_disc")


@dataclass(frozen=True)
class LimitsSpec:
    max_disc_diameter_mm: float = rule(ge=60, le=2000, why="the rotor discs' outer diameter, in mm")
    print_bed_mm: float | None = rule(None, ge=50, le=2000, why="a printed part's largest side")
    phases: int = rule(3, ge=0, le=3, why="1, 3, or 0 for either")
    topology: str = rule("two_discs", choices=(*TOPOLOGIES, "either"))
    binder: str = rule("epoxy", choices=STATOR_BINDERS_MAX_C)
    max_coil_temperature_c: float | None = rule(None, ge=40, le=220)
    min_efficiency: float = rule(0.0, ge=0, le=0.99)
    elv_at_runaway: bool = rule(True)
    budget: float | None = rule(None, gt=0, le=1e7, why="in the units of [prices]")


@dataclass(frozen=True)
class StockSpec:
    stock: str = rule("builtin", why='"builtin" or the path of a CSV of magnets')


@dataclass(frozen=True)
class PricesSpec:
    currency: str = rule("EUR")
    magnet_per_kg: float = rule(80.0, ge=0, le=10000)  # sintered NdFeB retail (from memory)
    copper_per_kg: float = rule(15.0, ge=0, le=1000)  # enamelled winding wire (from memory)
    steel_per_kg: float = rule(2.0, ge=0, le=1000)  # plate, cut (from memory)
    resin_per_kg: float = rule(20.0, ge=0, le=1000)  # casting epoxy or polyester (from memory)


@dataclass(frozen=True)
class Magnet:
    """One stock magnet: block (length radial × width tangential × thickness) or disc."""

    shape: str
    length_mm: float | None
    width_mm: float | None
    diameter_mm: float | None
    thickness_mm: float
    grade: str
    price_each: float | None  # None: priced by mass from [prices]
    available: int | None  # None: as many as wanted

    @property
    def radial_mm(self) -> float:
        return self.length_mm if self.shape == "block" else self.diameter_mm

    @property
    def tangential_mm(self) -> float:
        return self.width_mm if self.shape == "block" else self.diameter_mm

    @property
    def volume_mm3(self) -> float:
        face = self.length_mm * self.width_mm if self.shape == "block" else math.pi * self.diameter_mm**2 / 4
        return face * self.thickness_mm

    @property
    def words(self) -> str:
        if self.shape == "block":
            return f"{self.length_mm:g}x{self.width_mm:g}x{self.thickness_mm:g} mm {self.grade}"
        return f"disc {self.diameter_mm:g}x{self.thickness_mm:g} mm {self.grade}"


# Common stock NdFeB sizes sold widely (common practice); priced by mass.
BUILTIN_STOCK = tuple(
    Magnet("block", a, b, None, t, "N42", None, None)
    for a, b, t in ((30, 10, 5), (40, 20, 10), (46, 30, 10), (50, 25, 12.5), (50, 30, 10), (60, 30, 10))
) + tuple(
    Magnet("disc", None, None, d, t, "N42", None, None) for d, t in ((20, 5), (25, 10), (30, 10), (40, 10))
)


@dataclass(frozen=True)
class Requirement:
    name: str
    purpose: str
    objective: str
    file: str
    target: TargetSpec
    rated_power_w: float
    source: SourceSpec | None
    limits: LimitsSpec
    stock: tuple[Magnet, ...]
    prices: PricesSpec
    cut_in_given: bool = True  # False: taken from the source, and the search may raise it

    @property
    def rated_condition(self) -> float | None:
        """The source's condition the rated output is asked at: twice the mean wind (the
        table's nearest whole m/s), the stated flow, or the sustained effort."""
        so = self.source
        if so is None:
            return None
        if so.kind == "wind":
            return float(round(2 * so.mean_wind_m_s)) if so.mean_wind_m_s else 10.0
        return so.flow_l_s if so.kind == "water" else so.sustained_power_w

    def fail(self, key: str, value: object, reason: str) -> DesignError:
        return DesignError(self.file, key, value, reason)


_TOP = ("name", "purpose", "objective")
_TABLES = ("target", "source", "limits", "magnets", "prices")


def load_requirement(path: str | Path) -> Requirement:
    """Read and validate a requirement file; every failure is one DesignError line."""
    src, text = read_text_input(path, "a TOML requirement file")
    if not text.strip():
        raise DesignError(
            src, None, None, "is empty; a requirement needs name, purpose, objective and [target]"
        )
    try:
        data = tomllib.loads(text)
    except (tomllib.TOMLDecodeError, RecursionError, ValueError) as exc:
        raise DesignError(src, None, None, f"is not valid TOML: {printable_name(str(exc))}") from None
    return parse_requirement(data, src, Path(path).parent)


def parse_requirement(data: dict, src: str, folder: Path = Path(".")) -> Requirement:
    for key in data:
        if key not in _TOP and key not in _TABLES:
            allowed = ", ".join(_TOP + tuple(f"[{t}]" for t in _TABLES))
            raise DesignError(src, key, data[key], "unknown key; allowed: " + allowed)
    for key in ("name", "purpose"):
        if not isinstance(data.get(key), str) or not data[key].strip():
            raise DesignError(src, key, data.get(key), "required: non-empty text in quotes")
    objective = data.get("objective", "cost")
    if objective not in OBJECTIVES:
        raise DesignError(src, "objective", objective, "must be one of " + ", ".join(OBJECTIVES))
    if "target" not in data:
        raise DesignError(src, "[target]", None, "required table")
    target_table = data["target"]
    if not isinstance(target_table, dict):
        raise DesignError(src, "target", target_table, "must be a table ([target])")
    target_table = dict(target_table)
    power = target_table.pop("rated_power_w", None)
    if power is None:
        raise DesignError(src, "target.rated_power_w", None, "required: the output wanted at rated_rpm, in W")
    if isinstance(power, bool) or not isinstance(power, int | float) or not (1 <= power <= 100000):
        raise DesignError(src, "target.rated_power_w", power, "must be a number of watts from 1 to 100000")
    source = _read_section(src, "source", data["source"], SourceSpec) if "source" in data else None
    cut_in_given = "cut_in_rpm" in target_table
    if source is not None:
        target_table = _speeds_from_source(src, target_table, source)
    for key in ("rated_rpm", "max_rpm"):
        if key not in target_table:
            raise DesignError(src, f"target.{key}", None, "required without a [source] to give it")
    target = _read_section(src, "target", target_table, TargetSpec)
    if objective == "annual_energy" and (source is None or source.kind != "wind"):
        raise DesignError(src, "objective", objective, "needs a wind [source]")
    limits = _read_section(src, "limits", data.get("limits", {}), LimitsSpec)
    stock_spec = _read_section(src, "magnets", data.get("magnets", {}), StockSpec)
    prices = _read_section(src, "prices", data.get("prices", {}), PricesSpec)
    stock = BUILTIN_STOCK if stock_spec.stock == "builtin" else _read_stock(src, folder / stock_spec.stock)
    req = Requirement(
        name=data["name"], purpose=data["purpose"], objective=objective, file=src, target=target,
        rated_power_w=float(power), source=source, limits=limits, stock=stock, prices=prices,
        cut_in_given=cut_in_given,
    )  # fmt: skip
    _check(req)
    return req


def _speeds_from_source(src: str, table: dict, so: SourceSpec) -> dict:
    """rated_rpm, max_rpm (and a battery's cut_in_rpm) from the source where not given:
    its best speed at the rated condition, its runaway, the best speed at the cut-in wind."""
    from layout.source import resolve

    table = dict(table)
    s = resolve(so)
    battery = table.get("kind") == "battery"
    if so.kind == "wind":
        lam = np.linspace(0.5, 15, 600)
        peak = float(lam[int(np.argmax(s.cp(lam)))])

        def at(v):
            return peak * v / (math.pi * so.rotor_diameter_m) * 60 * so.drive_ratio

        # small turbines are rated near twice the site's mean wind and cut in near 3 m/s
        # (common practice)
        best = at(2 * so.mean_wind_m_s) if so.mean_wind_m_s else at(10.0)
        if battery:
            table.setdefault("cut_in_rpm", float(round(at(3.0))))
    else:
        best = s.best_rpm
        if battery:
            table.setdefault("cut_in_rpm", float(round(0.6 * best)))
    table.setdefault("rated_rpm", float(round(best)))
    table.setdefault("max_rpm", float(math.ceil(max(s.runaway_rpm, best))))
    return table


def _check(req: Requirement) -> None:
    if req.limits.phases not in (0, 1, 3):
        raise req.fail("limits.phases", req.limits.phases, "must be 1, 3, or 0 for either")
    if req.target.kind == "battery" and req.target.cut_in_rpm is None:
        raise req.fail("target.cut_in_rpm", None, 'required for target.kind = "battery"')
    if req.target.kind in ("dc", "ac_line"):
        for key in ("voltage_v", "rated_current_a"):
            if getattr(req.target, key) is None:
                raise req.fail(f"target.{key}", None, f'required for target.kind = "{req.target.kind}"')
    if req.target.max_rpm < req.target.rated_rpm:
        raise req.fail(
            "target.max_rpm",
            req.target.max_rpm,
            f"must be at least target.rated_rpm ({req.target.rated_rpm:g})",
        )


_STOCK_COLUMNS = (
    "shape",
    "length_mm",
    "width_mm",
    "diameter_mm",
    "thickness_mm",
    "grade",
    "price_each",
    "available",
)


def _read_stock(src: str, path: Path) -> tuple[Magnet, ...]:
    """A CSV of magnets: shape, length_mm, width_mm, diameter_mm, thickness_mm, grade,
    price_each, available (the last two may be empty)."""
    name, text = read_text_input(path, "a CSV of magnets")
    rows = list(csv.DictReader(io.StringIO(text)))
    if not rows:
        raise DesignError(name, None, None, "lists no magnets; header: " + ",".join(_STOCK_COLUMNS))
    missing = [c for c in ("shape", "thickness_mm", "grade") if c not in rows[0]]
    if missing:
        raise DesignError(name, missing[0], None, "column missing; header: " + ",".join(_STOCK_COLUMNS))
    out = []
    for n, row in enumerate(rows, start=2):
        where = f"line {n}"

        def num(key, lo, hi, row=row, where=where, *, required=True):
            raw = (row.get(key) or "").strip()
            if not raw:
                if required:
                    raise DesignError(name, f"{where} {key}", None, "required")
                return None
            try:
                v = float(raw)
            except ValueError:
                raise DesignError(name, f"{where} {key}", raw, "must be a number") from None
            if not (math.isfinite(v) and lo <= v <= hi):
                raise DesignError(name, f"{where} {key}", raw, f"must be from {lo:g} to {hi:g}")
            return v

        shape = (row.get("shape") or "").strip()
        if shape not in ("block", "disc"):
            raise DesignError(name, f"{where} shape", shape, "must be block or disc")
        grade = (row.get("grade") or "").strip()
        if grade not in MAGNET_GRADES:
            raise DesignError(name, f"{where} grade", grade, "must be one of " + ", ".join(MAGNET_GRADES))
        block = shape == "block"
        avail = num("available", 1, 100000, required=False)
        out.append(
            Magnet(
                shape,
                num("length_mm", 2, 300) if block else None,
                num("width_mm", 2, 300) if block else None,
                None if block else num("diameter_mm", 2, 300),
                num("thickness_mm", 1, 100),
                grade,
                num("price_each", 0, 100000, required=False),
                None if avail is None else int(avail),
            )
        )
    return tuple(out)


def replace_limits(req: Requirement, **changes) -> Requirement:
    return dataclasses.replace(req, limits=dataclasses.replace(req.limits, **changes))
