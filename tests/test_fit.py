"""Checks before anything is written: every failure names the key to change, in one line."""

from __future__ import annotations

import dataclasses
import math
import re

import numpy as np
import pytest
from demos import DEMOS, design, variant

from fab import outlines as o
from fab.fit import Shape, check_coils, check_parts, check_stator, clashes, edge_gap_mm, gap_mm
from layout.spec import DesignError


@pytest.mark.parametrize("demo", DEMOS)
def test_demos_fit(demo):
    check_parts(design(demo))


def test_gap_between_circles_and_polygons():
    a, b = Shape(o.circle(0, 0, 5)), Shape(o.circle(13, 0, 3))
    assert gap_mm(a, b) == pytest.approx(5)
    square = Shape(o.polygon([(10, -1), (12, -1), (12, 1), (10, 1)]))
    assert gap_mm(a, square) == pytest.approx(5)
    assert gap_mm(square, Shape(o.polygon([(13, -1), (14, -1), (14, 1), (13, 1)]))) == pytest.approx(1)
    # Overlapping, or one inside the other: negative.
    assert gap_mm(a, Shape(o.circle(1, 0, 1))) < 0
    assert gap_mm(Shape(o.polygon([(-1, -1), (1, -1), (1, 1), (-1, 1)])), a) < 0
    crossing = Shape(o.polygon([(4, -1), (8, -1), (8, 1), (4, 1)]))
    assert gap_mm(crossing, a) < 0
    assert edge_gap_mm(Shape(o.circle(0, 0, 2)), a) == pytest.approx(3)
    assert edge_gap_mm(crossing, a) < 0


def one_line(d) -> str:
    with pytest.raises(DesignError) as info:
        check_parts(d)
    message = str(info.value)
    assert "\n" not in message and message.startswith(f"{d.spec.file}: ")
    return message


# Four hub bolts and two dowels leave no gap a ring of three M10 jacking screws clears.
CROWDED_HUB = (
    ("rotor.hub_bolts", 4),
    ("rotor.hub_bolt_circle_mm", 47.0),
    ("rotor.hub_hole_diameter_mm", 9.0),
    ("rotor.jacking_screw", "M10"),
)

# (id, demo, changes, key named, words of the advice)
FAILURES = [
    ("magnets past the disc's edge", "millrace", (("rotor.disc_outer_diameter_mm", 252.0),),
     "rotor.disc_outer_diameter_mm = 252.0", "make the disc at least 258 across"),
    ("hub bolts into the bore", "millrace", (("rotor.hub_bolt_circle_mm", 40.0),),
     "rotor.hub_bolt_circle_mm = 40.0", "use a bolt circle of at least 50"),
    ("dowels among many bolts", "millrace", (("rotor.hub_bolt_circle_mm", 64.0), ("rotor.hub_bolts", 12)),
     "rotor.dowel_diameter_mm = 6.0", "0.9 mm apart, less than rotor.min_web_mm = 3"),
    ("jacking screws outside the stator's bore", "millrace", (("rotor.jacking_circle_mm", 150.0),),
     "rotor.jacking_circle_mm = 150.0", "at most 114.8"),
    ("lead slots into the lugs", "millrace", (("stator.mounting_lugs", 24),),
     "stator.mounting_lugs = 24", "use fewer lugs"),
    ("stator bore round the hub", "millrace", (("stator.resin_rim_mm", 40.0),),
     "stator.resin_rim_mm = 40.0", "too small for the hub bolts"),
    ("winder hole wider than the core", "millrace", (("fab.winder_hole_diameter_mm", 30.0),),
     "fab.winder_hole_diameter_mm = 30.0", "want at least 2 mm"),
    ("no room for balance holes", "millrace", (("rotor.min_web_mm", 14.0),),
     "rotor.disc_outer_diameter_mm = 270.0", "no room for M5 balance holes"),
    ("pockets too near the rim", "pedalbox", (("rotor.min_web_mm", 12.0),),
     "rotor.disc_outer_diameter_mm = 190.0", "magnet place 1 and outer edge"),
    ("jacking screws into the hub bolts", "pedalbox", CROWDED_HUB,
     "rotor.jacking_screws = 3", "jacking screw hole"),
]  # fmt: skip


@pytest.mark.parametrize(
    ("demo", "changes", "named", "words"), [f[1:] for f in FAILURES], ids=[f[0] for f in FAILURES]
)
def test_failures_name_the_dimension(demo, changes, named, words):
    message = one_line(design(demo, *changes))
    assert message.startswith(f"{demo}.toml: {named}: "), message
    assert words in message, message


@pytest.mark.parametrize(("material", "clearance"), [("pla", 0.2), ("steel", 0.3)])
def test_pockets_too_close_name_the_pitch_radius(material, clearance):
    d = design("millrace", ("magnets.width_mm", 31.0), ("rotor.disc_material", material))
    message = one_line(d)
    # Neighbouring places come nearest at their inner corners, 2·(r_in·sin(π/P) − w·cos(π/P))
    # apart, r_in and w the place's inner radius and half width.
    r_in, w = 105 - 20 - clearance, 15.5 + clearance
    gap = 2 * (r_in * math.sin(math.pi / 16) - w * math.cos(math.pi / 16))
    assert f"are {gap:.1f} mm apart, less than rotor.min_web_mm = 3" in message, message
    assert message.startswith("millrace.toml: magnets.pitch_radius_mm = 105.0: "), message
    advice = float(message.rsplit("at least ", 1)[1].split(",")[0])
    # At the advised radius the two places keep the web.
    half = 20 + clearance
    assert 2 * ((advice - half) * math.sin(math.pi / 16) - w * math.cos(math.pi / 16)) >= 3 - 1e-9
    assert 2 * ((advice - 0.1 - half) * math.sin(math.pi / 16) - w * math.cos(math.pi / 16)) < 3


def test_coils_that_touch_are_caught():
    d = design("millrace")
    coil = d.geometry.coil
    wide = dataclasses.replace(coil, outline_mm=np.array(o.offset_convex(coil.outline_mm, 1.0)))
    touching = dataclasses.replace(d, geometry=dataclasses.replace(d.geometry, coil=wide))
    with pytest.raises(DesignError, match="stator.coil_clearance_mm = 1.5: neighbouring coils overlap"):
        check_coils(touching)
    check_coils(d)


def advised(message: str) -> list[object]:
    """The values a fit error says would do: "(at least 24.8 would do)", "("M5" or "M6" would do)"."""
    words = re.search(r"\(([^()]*) would do\)$", message).group(1)
    values = []
    for w in re.split(r", | or ", words):
        w = w.removeprefix("at least ").removeprefix("at most ")
        values.append(w.strip('"') if w.startswith('"') else float(w) if "." in w else int(w))
    return values


# (id, demo, changes, key named, words, how the advised values read)
ADVISED = [
    # The jig's pins stand 0.3 of the coil hole's radial size from its centre: a short hole
    # puts them too near its ends, and the winder shaft's size cannot move them.
    # the pins keep their web to the hole's wide end and so crowd the winder shaft instead
    ("jig pins in a short hole", "millrace", (("magnets.length_mm", 20.0),),
     "fab.winder_hole_diameter_mm = 8.5", "winder shaft hole and pin hole 1", "at most 4.5"),
    ("winder shaft into the jig pins", "millrace", (("fab.winder_hole_diameter_mm", 20.0),),
     "fab.winder_hole_diameter_mm = 20.0", "winder shaft hole and pin hole 1", "at most"),
    ("jacking screws into a crowded hub", "pedalbox", CROWDED_HUB,
     "rotor.jacking_screws = 3", "no rotor.jacking_circle_mm clears them", "4"),
    ("jacking screws too big for a small hub", "pedalbox", (*CROWDED_HUB, ("rotor.hub_bolt_circle_mm", 40.0)),
     'rotor.jacking_screw = "M10"', "no rotor.jacking_circle_mm clears them", '"M5" or "M6"'),
]  # fmt: skip


@pytest.mark.parametrize(
    ("demo", "changes", "named", "words", "advice"), [f[1:] for f in ADVISED], ids=[f[0] for f in ADVISED]
)
def test_a_clash_names_the_key_that_clears_it(demo, changes, named, words, advice):
    message = one_line(design(demo, *changes))
    assert message.startswith(f"{demo}.toml: {named}: "), message
    assert words in message and f"({advice}" in message, message
    key = named.split(" = ")[0]
    for value in advised(message):
        check_parts(design(demo, *changes, (key, value)))
    if advice in ("at least", "at most"):
        # The bound is the nearest tenth that clears: a tenth the other way does not.
        (bound,) = advised(message)
        step = -0.1 if advice == "at least" else 0.1
        with pytest.raises(DesignError):
            check_parts(design(demo, *changes, (key, round(bound + step, 1))))


def test_no_jacking_circle_clears_a_crowded_hub():
    # Independently of the advice: every circle, in steps of 0.5 mm, either leaves the
    # stator's bore or brings a jacking screw hole within the web of another hole.
    d = design("pedalbox", *CROWDED_HUB)
    for circle in np.arange(5.0, 200.0, 0.5):
        trial = dataclasses.replace(
            d, spec=variant("pedalbox", *CROWDED_HUB, ("rotor.jacking_circle_mm", circle))
        )
        try:
            check_stator(trial)
        except DesignError:
            continue
        assert next(clashes(o.rotor_disc_flat(trial, 2), kinds=frozenset({"jack"})), None), circle


def test_a_printed_frame_keeps_two_perimeters_between_its_pockets():
    # pockets are the coils' outlines grown by the print fit each side, so the web between
    # them is the coil clearance less twice the fit
    from fab.fit import check_parts
    from fab.outlines import PRINT_FIT_MM
    from fab.outlines.stator import MIN_PRINTED_WEB_MM

    ok = 2 * PRINT_FIT_MM + MIN_PRINTED_WEB_MM + 0.05
    check_parts(design("hilltop", ("stator.coil_clearance_mm", ok)))
    with pytest.raises(DesignError) as info:
        check_parts(design("hilltop", ("stator.coil_clearance_mm", ok - 0.2)))
    text = str(info.value)
    assert "stator.coil_clearance_mm" in text and "printed stator frame" in text and "\n" not in text
