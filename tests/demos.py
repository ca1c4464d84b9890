"""The demo designs for tests, loaded and computed once per test session."""

from __future__ import annotations

import dataclasses
import functools
from pathlib import Path

from layout.design import Design, compute_design
from layout.spec import Spec, load_spec

DESIGNS = Path(__file__).resolve().parents[1] / "designs"
DEMOS = ("hilltop", "millrace", "pedalbox", "fieldkit")
# Hilltop with a stationary steel plate behind the stator in place of its plain steel disc:
# the one-disc machine whose steel stands still (eddy and hysteresis loss, layout.steel).
PLATE = (
    ("rotor.topology", "one_disc_steel_stator"),
    ("rotor.stator_plate_thickness_mm", 8.0),
    ("rotor.steel_disc_thickness_mm", None),
)


@functools.cache
def demo_spec(name: str) -> Spec:
    return load_spec(DESIGNS / f"{name}.toml")


def variant(name: str, *changes: tuple[str, object]) -> Spec:
    """The demo with ("section.key", value) changes applied to its frozen sections."""
    spec = demo_spec(name)
    for dotted, value in changes:
        section, key = dotted.split(".")
        spec = dataclasses.replace(
            spec, **{section: dataclasses.replace(getattr(spec, section), **{key: value})}
        )
    return spec


@functools.cache
def design(name: str, *changes: tuple[str, object]) -> Design:
    return compute_design(variant(name, *changes))
