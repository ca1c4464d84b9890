"""The bill of materials: wire and binder quantities, checked by hand arithmetic."""

from __future__ import annotations

import math

import pytest
from demos import DEMOS, design

from layout.bill import RESIN_MARGIN_PCT, WIRE_MARGIN_PCT, binder_volume_cm3
from layout.materials import BINDER_DENSITY_G_CM3, COPPER_DENSITY_G_CM3, DISC_MATERIALS, STATOR_BINDERS_MAX_C


@pytest.mark.parametrize("demo", DEMOS)
def test_wire_is_the_winding_plus_its_margin(demo):
    d = design(demo)
    pr, bill = d.prediction, d.bill
    k = 1 + WIRE_MARGIN_PCT / 100
    assert bill.wire_length_per_phase_m == pytest.approx(pr.wire_length_per_phase_m * k)
    assert bill.wire_mass_per_phase_kg * d.layout.phases == pytest.approx(pr.copper_mass_kg * k)


@pytest.mark.parametrize("demo", DEMOS)
def test_binder_is_the_ring_less_the_copper(demo):
    d = design(demo)
    st, coil = d.spec.stator, d.geometry.coil
    # Annulus volume π(R²−r²)·t by hand, copper by mass over density (IEC 60028: 8.89 g/cm³).
    r_in, r_out = coil.r_min_mm - st.resin_rim_mm, coil.r_max_mm + st.resin_rim_mm
    ring = math.pi * (r_out**2 - r_in**2) * st.thickness_mm / 1000
    copper = d.prediction.copper_mass_kg * 1000 / 8.89
    assert d.bill.binder_volume_cm3 == pytest.approx((ring - copper) * (1 + RESIN_MARGIN_PCT / 100))
    assert 0 < d.bill.binder_volume_cm3 < ring * (1 + RESIN_MARGIN_PCT / 100)
    density = BINDER_DENSITY_G_CM3.get(st.binder)
    if density is None:
        assert d.bill.binder_mass_g is None
    else:
        assert d.bill.binder_mass_g == pytest.approx(d.bill.binder_volume_cm3 * density)


def test_binder_without_copper_is_the_whole_ring():
    d = design("millrace")
    st, coil = d.spec.stator, d.geometry.coil
    r_in, r_out = max(coil.r_min_mm - st.resin_rim_mm, 0), coil.r_max_mm + st.resin_rim_mm
    whole = math.pi * (r_out**2 - r_in**2) * st.thickness_mm / 1000 * (1 + RESIN_MARGIN_PCT / 100)
    assert binder_volume_cm3(d.spec, d.geometry, 0.0) == pytest.approx(whole)
    assert pytest.approx(8.89) == COPPER_DENSITY_G_CM3  # IEC 60028 annealed copper


def test_binder_densities_come_from_the_material_tables():
    # Epoxy 1.15 g/cm³ (common handbook value); printed binders are the disc plastics.
    assert BINDER_DENSITY_G_CM3["epoxy"] == pytest.approx(1.15)
    for b in STATOR_BINDERS_MAX_C:
        if b in DISC_MATERIALS:
            assert BINDER_DENSITY_G_CM3[b] == DISC_MATERIALS[b].density_g_cm3
    assert "polyester" not in BINDER_DENSITY_G_CM3  # too variable with its filler to name one
