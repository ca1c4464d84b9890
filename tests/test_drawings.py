"""DXF drawings: audit clean, millimetres, closed outlines on the right layers, right counts."""

from __future__ import annotations

import math
from collections import Counter

import ezdxf
import numpy as np
import pytest
from demos import PLATE, design

from fab import outlines as o
from fab.drawings import LAYERS, flat_document, part_note, write_dxf
from layout.rotor import rotor_discs

PLA = (("rotor.disc_material", "pla"),)


def flats(d, kerf: float = 0.0) -> list[o.Flat]:
    out = [o.rotor_disc_flat(d, disc, kerf) for disc in rotor_discs(d.spec)]
    out += [o.magnet_template_flat(d, 1, kerf), o.stator_flat(d, kerf), o.jig_core_flat(d, kerf)]
    out += [o.jig_cheek_flat(d, kerf)] + o.mould_flats(d, kerf)
    if d.spec.rotor.topology == "one_disc_steel_stator":
        out.append(o.stator_plate_flat(d, kerf))
    return out


def written(tmp_path, flat: o.Flat, kerf: float = 0.0):
    path = tmp_path / f"{flat.part}.dxf"
    write_dxf(flat, path, part_note(flat, "steel", kerf, "test"))
    return ezdxf.readfile(path)


def polylines(doc, layer: str) -> list:
    return [e for e in doc.modelspace() if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == layer]


def circle_radius(e) -> float | None:
    """The radius of a closed polyline of two half circles, else None."""
    pts = list(e.get_points("xyb"))
    if len(pts) == 2 and all(abs(abs(b) - 1) < 1e-12 for _, _, b in pts):
        return math.dist(pts[0][:2], pts[1][:2]) / 2
    return None


def centre(e) -> np.ndarray:
    pts = np.array([p[:2] for p in e.get_points("xy")])
    return pts.mean(axis=0)


@pytest.mark.parametrize(
    ("demo", "changes"), [("millrace", ()), ("millrace", PLA), ("hilltop", ()), ("hilltop", PLATE)]
)
def test_every_drawing_is_clean_mm_and_closed(tmp_path, demo, changes):
    d = design(demo, *changes)
    for flat in flats(d):
        doc = written(tmp_path, flat)
        auditor = doc.audit()
        assert not auditor.has_errors and not auditor.has_fixes, flat.part
        assert doc.header["$INSUNITS"] == 4  # millimetres (DXF reference: $INSUNITS 4 = mm)
        assert doc.header["$MEASUREMENT"] == 1
        entities = list(doc.modelspace())
        assert {e.dxf.layer for e in entities} <= set(LAYERS)
        for e in entities:
            assert e.dxftype() in ("LWPOLYLINE", "TEXT"), e.dxftype()
            if e.dxftype() == "LWPOLYLINE":
                assert e.closed, (flat.part, e.dxf.layer)
        # Text only on the reference layer; nothing to cut is text.
        assert all(e.dxf.layer == "REFERENCE" for e in entities if e.dxftype() == "TEXT")
        assert len(polylines(doc, "CUT")) == 1 + len(flat.holes)


def test_rotor_disc_counts_steel():
    d = design("millrace")
    spec = d.spec
    for disc in (1, 2):
        doc = ezdxf_doc(d, disc)
        radii = Counter(round(circle_radius(e), 3) for e in polylines(doc, "CUT") if circle_radius(e))
        # Outer edge, bore, hub bolts, dowels, 16 balance holes (M5 tap drill 4.2 mm: ISO 261
        # pitch 0.8, tap drill d − P, common practice); disc 2 tapped for three M10 jacking
        # screws (tap drill 8.5 mm).
        assert radii[135.0] == 1 and radii[17.5] == 1
        assert radii[spec.rotor.hub_hole_diameter_mm / 2] == spec.rotor.hub_bolts
        assert radii[spec.rotor.dowel_diameter_mm / 2] == 2
        assert radii[2.1] == spec.magnets.count
        assert radii[4.25] == (spec.rotor.jacking_screws if disc == 2 else 0)
        assert len(polylines(doc, "POCKET")) == 0
        # A polarity letter per magnet, the index triangle and the disc number.
        assert len(polylines(doc, "ENGRAVE")) == spec.magnets.count + 2
        refs = polylines(doc, "REFERENCE")
        magnets = [e for e in refs if len(e) == 4]
        assert len(magnets) == spec.magnets.count
        pads = [e for e in refs if circle_radius(e)]
        assert len(pads) == (3 if disc == 1 else 0)


def test_plain_steel_disc_drawing(tmp_path):
    d = design("hilltop")
    spec = d.spec
    doc = written(tmp_path, o.rotor_disc_flat(d, 2))
    assert not doc.audit().has_errors
    radii = Counter(round(circle_radius(e), 3) for e in polylines(doc, "CUT") if circle_radius(e))
    # Outer edge 145 mm (the magnets' edge 135 mm plus the 10 mm rim), bore, hub bolts,
    # dowels, a balance hole between every two magnet places of disc 1 (M5 tap drill 4.2 mm)
    # and three M10 tapped holes (tap drill 8.5 mm) for the jacking screws.
    assert radii[145.0] == 1 and radii[20.0] == 1
    assert radii[spec.rotor.hub_hole_diameter_mm / 2] == spec.rotor.hub_bolts
    assert radii[spec.rotor.dowel_diameter_mm / 2] == 2
    assert radii[2.1] == spec.magnets.count
    assert radii[4.25] == spec.rotor.jacking_screws
    assert len(polylines(doc, "CUT")) == 1 + 1 + 4 + 2 + 12 + 3
    # Nothing to pocket and no magnets to draw; the index triangle and the number 2 only.
    assert polylines(doc, "POCKET") == [] and polylines(doc, "REFERENCE") == []
    assert len(polylines(doc, "ENGRAVE")) == 2
    notes = " ".join(e.dxf.text for e in doc.modelspace() if e.dxftype() == "TEXT")
    assert "8 mm" in notes


def ezdxf_doc(d, disc: int, kerf: float = 0.0):
    flat = o.rotor_disc_flat(d, disc, kerf)
    return flat_document(flat, part_note(flat, "steel", kerf, "test"))


def test_printed_disc_has_a_pocket_per_magnet():
    d = design("millrace", *PLA)
    doc = ezdxf_doc(d, 1)
    pockets = polylines(doc, "POCKET")
    assert len(pockets) == 16
    # 0.2 mm a side for printed pockets (common practice): 40.4 × 20.4 mm.
    for e in pockets:
        pts = np.array([p[:2] for p in e.get_points("xy")])
        sides = np.linalg.norm(np.roll(pts, -1, axis=0) - pts, axis=1)
        assert sorted(np.round(sides, 6)) == [20.4, 20.4, 40.4, 40.4]
    notes = [e.dxf.text for e in doc.modelspace() if e.dxftype() == "TEXT"]
    assert any("16 pockets 6 mm deep" in t for t in notes), notes


def test_kerf_moves_the_cut_paths_in_the_drawing():
    d = design("millrace")
    doc = ezdxf_doc(d, 1, kerf=0.3)
    radii = sorted(round(circle_radius(e), 3) for e in polylines(doc, "CUT") if circle_radius(e))
    assert 135.15 in radii and 17.35 in radii and 4.35 in radii and 1.95 in radii
    notes = [e.dxf.text for e in doc.modelspace() if e.dxftype() == "TEXT"]
    assert any("0.3 mm kerf" in t for t in notes)


def dowels(doc) -> list:
    """Centres of the 6 mm holes on the CUT layer."""
    holes = [e for e in polylines(doc, "CUT") if circle_radius(e) and abs(circle_radius(e) - 3.0) < 1e-9]
    return sorted(tuple(np.round(centre(e), 6)) for e in holes)


def half_sides(e) -> np.ndarray:
    """Half lengths of a rectangle along its own sides (as the magnet's frame sees them)."""
    pts = np.array([p[:2] for p in e.get_points("xy")])
    return np.sort(np.linalg.norm(np.roll(pts, -1, axis=0) - pts, axis=1)[:2]) / 2


def test_template_places_coincide_with_the_disc_magnets(tmp_path):
    d = design("millrace")
    for disc in (1, 2):
        disc_doc = written(tmp_path, o.rotor_disc_flat(d, disc))
        tpl_doc = written(tmp_path, o.magnet_template_flat(d, disc))
        magnets = [e for e in polylines(disc_doc, "REFERENCE") if len(e) == 4]
        places = [e for e in polylines(tpl_doc, "CUT") if len(e) == 4]
        assert len(places) == len(magnets) == 16
        for m in magnets:
            match = [p for p in places if np.allclose(centre(p), centre(m), atol=1e-6)]
            assert len(match) == 1
            # The place is the magnet grown by the clearance on every side (0.3 mm, cut).
            assert half_sides(match[0]) == pytest.approx(half_sides(m) + 0.3)
        # The dowel holes are the disc's too: they pin the template in its one position.
        dd = sorted(
            tuple(np.round(centre(e), 6)) for e in polylines(disc_doc, "CUT") if circle_radius(e) == 3.0
        )
        td = sorted(
            tuple(np.round(centre(e), 6)) for e in polylines(tpl_doc, "CUT") if circle_radius(e) == 3.0
        )
        assert dd == td and len(dd) == 2
