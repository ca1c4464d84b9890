"""Making the stator (fab.sheet.stator_build): casting or printing it, and the disc spacing."""

from __future__ import annotations

import pytest
from demos import design

from fab import sheet
from fab.sheet.stator_build import _stator_build
from layout.rotor import disc_spacing_mm, pocket_depth_mm


def test_the_disc_spacing_is_the_stator_the_clearances_and_the_magnets():
    # closed form: two magnet discs face to face hold the stator, a running clearance each side
    # and a magnet's standing height (its thickness less any pocket) on each disc
    d = design("millrace")
    spec = d.spec
    stand = spec.magnets.thickness_mm - pocket_depth_mm(spec)
    expected = spec.stator.thickness_mm + 2 * spec.rotor.running_clearance_mm + 2 * stand
    assert disc_spacing_mm(d.spec, d.geometry) == pytest.approx(expected)
    # a plain steel disc has no magnets standing on it
    h = design("hilltop")
    s = h.spec
    plain = (
        s.stator.thickness_mm + 2 * s.rotor.running_clearance_mm + s.magnets.thickness_mm - pocket_depth_mm(s)
    )
    assert disc_spacing_mm(h.spec, h.geometry) == pytest.approx(plain)


@pytest.mark.parametrize(
    ("demo", "heading"), [("millrace", "Casting the stator"), ("hilltop", "Printing the stator")]
)
def test_the_sheet_says_how_to_make_this_stator(demo, heading):
    d = design(demo)
    ctx = sheet._Ctx(d, 180 * sheet.MM, 250 * sheet.MM, sheet._styles())
    text = " ".join(p.text for p in _stator_build(ctx))
    assert heading in text and f"{disc_spacing_mm(d.spec, d.geometry):.1f} mm" in text
    assert "segments to fit the 250 mm bed" in text  # both outgrow the default bed
    if heading.startswith("Casting"):
        assert "lid" in text and "Never a metal powder" in text


def test_the_files_list_gives_a_parts_segments_one_row():
    from fab.sheet.summary import _grouped

    files = [("a.step", "a", "x")] + [(f"m_seg{k}.stl", f"mould: segment {k} of 3", "how") for k in (1, 2, 3)]
    assert _grouped(files) == [
        ("a.step", "a", "x"),
        ("m_seg1.stl to _seg3.stl", "mould, in 3 segments", "how"),
    ]
