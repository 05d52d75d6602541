"""Sector-wise roughness from the buildings upwind (engine.flow.sector_roughness), checked
against hand-computed area fractions and the Macdonald et al. (1998) equations written out."""
from __future__ import annotations

import math

import numpy as np
import pytest

from engine.core.model import Building
from engine.flow import sector_roughness as sr


def block(bid, x, y, length, width, height, bearing=0.0):
    return Building(id=bid, x_m=x, y_m=y, length_m=length, width_m=width, height_m=height,
                    orientation_deg=bearing)


def macdonald_by_hand(lp, lf, h, a=4.43, beta=1.0, cd=1.2, kappa=0.4):
    """Macdonald, Griffiths & Hall (1998) eqs. for d and z0, staggered array (A 4.43, β 1.0)."""
    d = h * (1 + a ** (-lp) * (lp - 1))
    z0 = h * (1 - d / h) * math.exp(-(0.5 * beta * cd / kappa ** 2 * (1 - d / h) * lf) ** -0.5)
    return z0, d


def test_a_block_to_the_west_roughens_only_the_west():
    """A 40 x 20 m, 30 m tall block 150 m west (long side north-south) is the only building:
    sector 270° gets λp = 800 / (π 300² / 12), λf = 30 · 40 / the same area; east keeps the
    fallback."""
    tall = block("tall", -150.0, 0.0, 40.0, 20.0, 30.0)
    z0, d, have = sr.sector_roughness([tall], 12, fallback_z0_m=0.3, fallback_d_m=2.0)
    west, east = 9, 3
    assert have[west] and not have[east]
    wedge = math.pi * 300.0 ** 2 / 12  # analytic wedge area [m²]
    lp, lf = 800.0 / wedge, 30.0 * 40.0 / wedge
    z0_ref, d_ref = macdonald_by_hand(lp, lf, 30.0)
    assert z0[west] == pytest.approx(z0_ref, rel=1e-3)
    assert d[west] == pytest.approx(d_ref, rel=1e-3)
    assert (z0[east], d[east]) == (0.3, 2.0)
    assert have.sum() == 1


def test_area_fractions_by_hand_and_partial_overlap():
    """λp counts only the part of a footprint inside the wedge: a block straddling the north
    sector's edge contributes the share of its area inside."""
    north = block("n", 0.0, 100.0, 10.0, 10.0, 10.0)  # wholly inside the north wedge
    lp, lf, h = sr.sector_morphometry([north], 4, fetch_m=200.0)
    wedge = math.pi * 200.0 ** 2 / 4
    assert lp[0] == pytest.approx(100.0 / wedge, rel=1e-3)
    assert lf[0] == pytest.approx(10.0 * 10.0 / wedge, rel=1e-3)
    assert h[0] == 10.0 and np.isnan(h[1:]).all()
    # the 4-sector north wedge spans 315°..45°; a block centred on the 45° edge is half inside
    edge = block("e", 100.0 / math.sqrt(2), 100.0 / math.sqrt(2), 10.0, 10.0, 10.0, bearing=45.0)
    lp2, _, _ = sr.sector_morphometry([edge], 4, fetch_m=200.0)
    assert lp2[0] == pytest.approx(50.0 / wedge, rel=2e-3)
    assert lp2[1] == pytest.approx(50.0 / wedge, rel=2e-3)


def test_excluded_and_distant_buildings_do_not_count():
    far = block("far", 0.0, 500.0, 20.0, 20.0, 20.0)
    own = block("own", 0.0, 10.0, 20.0, 20.0, 20.0)
    lp, _, _ = sr.sector_morphometry([far, own], 8, fetch_m=300.0, exclude_ids=("own",))
    assert np.all(lp == 0.0)


def test_crosswind_width_of_a_rotated_block():
    """A 40 x 10 block bearing 0° is 10 m wide to a north wind and 40 m to a west wind."""
    from engine.flow.buildings import building_corners_m
    xy = building_corners_m(block("b", 0.0, 0.0, 40.0, 10.0, 5.0))
    assert sr.crosswind_width_m(xy, 0.0) == pytest.approx(10.0)
    assert sr.crosswind_width_m(xy, 270.0) == pytest.approx(40.0)
