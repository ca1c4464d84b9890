"""The exploded view on the sheet's first page (fab.sheet.exploded), drawn from the solids."""

from __future__ import annotations

import numpy as np
import pytest
from demos import design

from fab.outlines import stator_layout
from fab.sheet.exploded import _lift, _view_axes, exploded_faces
from fab.solids import COPPER, NORTH, PRINTED, RESIN, SOUTH, STEEL
from layout.materials import is_printed_binder


@pytest.mark.parametrize("demo", ["millrace", "hilltop"])
def test_the_view_holds_every_part_and_is_as_wide_as_the_machine(demo):
    d = design(demo)
    polys, colours, alphas = exploded_faces(d)
    assert len(polys) > 500 and np.isfinite(polys).all()
    # every kind of part is painted: each colour is its base colour times a shade in (0, 1]
    stator = PRINTED if is_printed_binder(d.spec.stator.binder) else RESIN  # a printed frame, or cast
    for base in (STEEL, NORTH, SOUTH, COPPER, stator):
        ratio = colours / np.array(base)
        assert (np.ptp(ratio, axis=1) < 1e-9).any(), base
    # Closed form: a round disc of radius r projects to a width of 2r across the view,
    # whatever the view; the stator's lugs reach further, to the lug circle plus half a lug.
    width = np.ptp(polys[..., 0])
    sl = stator_layout(d)
    r_disc = d.forces.disc_outer_radius_mm
    assert (
        2 * max(r_disc, sl.outer_radius_mm) - 0.5
        <= width
        <= 2 * max(r_disc, sl.lug_radius_mm + sl.lug_half_width_mm) + 0.5
    )
    see_through = alphas < 1  # the stator, so the coils in it show
    assert see_through.any() and (np.ptp(colours[see_through] / np.array(stator), axis=1) < 1e-9).all()


def test_the_discs_move_apart_along_the_shaft():
    right, up, eye = _view_axes()
    assert np.dot(up, [0, 0, 1]) > 0 and abs(np.dot(right, [0, 0, 1])) < 1e-12
    assert _lift("rotor_disc_1", 50) < 0 < _lift("rotor_disc_2", 50)
    assert _lift("magnet_1_3", 50) == _lift("rotor_disc_1", 50) and _lift("coil_4", 50) == 0
