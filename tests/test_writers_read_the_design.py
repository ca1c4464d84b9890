"""fab/ only formats: every figure a writer prints comes from the Design or a layout/ function.

Two checks. A static one: no distinctive constant of layout/ (a density, g, a temperature
coefficient, a margin) appears as a literal in fab/. A behavioural one: a Design whose
figures are changed by hand prints the changed figures, which a writer that recomputed or
retyped them would not.
"""

from __future__ import annotations

import ast
import dataclasses
import importlib
import pkgutil
from pathlib import Path

import pytest
from demos import design

import layout
from fab import sheet
from layout.bill import Bill
from layout.circuit import BRIDGE_CURRENT_FACTOR, BRIDGE_VOLTAGE_FACTOR

FAB = Path(__file__).resolve().parents[1] / "fab"


def _layout_constants() -> dict[float, str]:
    """Module-level float constants of layout/ that are distinctive enough to recognise.

    Values of fewer than three significant digits are left out: 0.3 or 1.4 are also drawing
    dimensions, colours and font sizes, and a match would prove nothing. Private names are
    numerical tolerances, not figures.
    """

    def distinctive(x: float) -> bool:
        digits = f"{abs(x):.10g}".split("e")[0].replace(".", "").strip("0")
        return len(digits) >= 3

    out = {}
    for info in pkgutil.iter_modules(layout.__path__):
        mod = importlib.import_module(f"layout.{info.name}")
        for name, value in vars(mod).items():
            if (
                name.isupper()
                and not name.startswith("_")
                and isinstance(value, float)
                and distinctive(value)
            ):
                out.setdefault(value, f"layout.{info.name}.{name}")
            if name.isupper() and isinstance(value, dict):
                for v in value.values():
                    if not dataclasses.is_dataclass(v) or isinstance(v, type):
                        continue
                    for f in dataclasses.fields(v):
                        x = getattr(v, f.name)
                        if isinstance(x, float) and distinctive(x) and f.name.endswith(("_g_cm3", "_t")):
                            out.setdefault(x, f"layout.{info.name}.{name}[…].{f.name}")
    return out


def test_no_layout_constant_is_retyped_in_fab():
    constants = _layout_constants()
    assert 9.80665 in constants and 8.89 in constants  # the guard sees g and copper's density
    found = []
    for path in sorted(FAB.rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Constant) and isinstance(node.value, float) and node.value in constants:
                found.append(f"{path.relative_to(FAB)}:{node.lineno} {node.value} ({constants[node.value]})")
    assert not found, "import these instead of retyping them: " + "; ".join(found)


def test_sheet_materials_print_the_designs_bill():
    d = design("millrace")
    odd = Bill(
        wire_length_per_phase_m=123.4,
        wire_mass_per_phase_kg=0.777,
        binder_volume_cm3=4321.0,
        binder_mass_g=5555.0,
    )
    rows = sheet._materials_rows(dataclasses.replace(d, bill=odd))
    text = " ".join(" ".join(r) for r in rows)
    n = d.layout.phases
    assert "123 m and 0.78 kg per phase" in text
    assert f"{123.4 * n:.0f} m, {0.777 * n:.2f} kg in all" in text
    assert "about 4321 cm³ (5.55 kg)" in text


@pytest.mark.parametrize("demo", ["millrace", "pedalbox"])
def test_sheet_bridge_is_the_designs_rating(demo):
    d = design(demo)
    pr = dataclasses.replace(d.prediction, open_circuit_dc_peak_at_max_v=321.0)
    rows = sheet._materials_rows(dataclasses.replace(d, prediction=pr))
    bridge = next(r for r in rows if r[0] == "diode bridge")
    # with a source, the highest current where it holds the shaft (not the curve's top)
    points = [r.point for r in d.operating.rows if r.point is not None] if d.operating else pr.curve
    top = max(points, key=lambda op: op.dc_current_a)
    assert pr.bridge.voltage_v == pytest.approx(BRIDGE_VOLTAGE_FACTOR * 321.0)
    assert (
        f"at least {BRIDGE_VOLTAGE_FACTOR * 321.0:.0f} V, {BRIDGE_CURRENT_FACTOR * top.dc_current_a:.0f} A"
        in (bridge[2])
    )
