"""ASHRAE roof flow zones, clearances and the main energy sectors."""
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import stats

from engine.flow import roofzones as rz


def test_scaling_length_worked_block():
    """Block with a 10 m high, 30 m wide upwind face: R and the roof zone sizes by hand."""
    # ASHRAE Handbook—Fundamentals, "Airflow Around Buildings" (from memory):
    # Bs = 10, BL = 30 -> R = 10^(2/3) * 30^(1/3) = 4.6416 * 3.1072 = 14.42 m (REFERENCES derived).
    r_hand = 10.0 ** (2 / 3) * 30.0 ** (1 / 3)
    assert r_hand == pytest.approx(14.42, abs=0.005)
    r = rz.scaling_length_m(10.0, 30.0)
    assert r == pytest.approx(r_hand, rel=1e-12)
    hc, xc, lc = rz.roof_recirculation_zone(r)
    # H_c = 0.22 R = 3.17 m, X_c = 0.5 R = 7.21 m, L_c = 0.9 R = 12.98 m (ASHRAE, from memory).
    assert hc == pytest.approx(3.17, abs=0.005)
    assert xc == pytest.approx(7.21, abs=0.005)
    assert lc == pytest.approx(12.98, abs=0.005)
    # Z2 at the edge 0.27 R = 3.89 m; both Z2 and Z3 pass near (0.5 R, 0.22 R) (ASHRAE, memory).
    assert rz.turbulence_boundary_m(0.0, r) == pytest.approx(0.27 * r_hand)
    assert rz.turbulence_boundary_m(0.5 * r, r) == pytest.approx(0.22 * r_hand, rel=1e-9)
    # Z3(0.5 R) = 0.28 * 0.5^(1/3) R = 0.222 R (by hand).
    assert rz.roof_wake_boundary_m(0.5 * r, r) == pytest.approx(0.2222 * r_hand, rel=1e-3)
    # Z2 reaches the roof at X = 2.7 R (0.27 / 0.1, by hand).
    assert rz.turbulence_boundary_m(2.7 * r, r) == pytest.approx(0.0, abs=1e-9)


def test_scaling_length_caps_long_faces_at_eight_times_the_short_side():
    """B_L is capped at 8 B_s: a 5 m x 100 m face scales like 5 m x 40 m (ASHRAE, memory)."""
    assert rz.scaling_length_m(5.0, 100.0) == pytest.approx(5.0 ** (2 / 3) * 40.0 ** (1 / 3))
    # Symmetric in height and width (definition of Bs, BL).
    assert rz.scaling_length_m(30.0, 10.0) == pytest.approx(rz.scaling_length_m(10.0, 30.0))


def test_recirculation_outline_hits_the_handbook_points():
    """Bubble top is H_c at X_c, zero at the edge and at L_c on a long roof (ASHRAE, memory)."""
    r = 20.0
    z = rz.recirculation_boundary_m([0.0, 0.5 * r, 0.9 * r, 1.5 * r], r, roof_length_m=100.0)
    np.testing.assert_allclose(z, [0.0, 0.22 * r, 0.0, 0.0], atol=1e-12)
    # A roof shorter than L_c: no reattachment, the bubble holds H_c to the leeward edge.
    zs = rz.recirculation_boundary_m([0.8 * r], r, roof_length_m=0.85 * r)
    assert zs[0] == pytest.approx(0.22 * r)


@settings(max_examples=200, deadline=None)
@given(st.floats(0.0, 30.0), st.floats(0.0, 10.0), st.floats(0.0, 60.0),
       st.floats(3.0, 40.0), st.floats(3.0, 80.0))
def test_more_height_never_lowers_clearance(z, dz, x, h, w):
    """Raising the point above the roof never lowers its clearance above any zone (invariant)."""
    r = rz.scaling_length_m(h, w)
    lo = rz.zone_clearances_m(z, x, r, 30.0)
    hi = rz.zone_clearances_m(z + dz, x, r, 30.0)
    for name in lo:
        assert hi[name] >= lo[name] - 1e-12


def test_energy_share_matches_weibull_third_moment():
    """Sector energy share is f * E[V^3] normalised; E[V^3] from scipy.stats.weibull_min."""
    f = np.array([0.5, 0.3, 0.2])
    k = np.array([2.0, 1.8, 2.4])
    c = np.array([6.0, 5.0, 7.0])
    # Independent reference: scipy's Weibull third raw moment.
    m3 = np.array([stats.weibull_min(kk, scale=cc).moment(3) for kk, cc in zip(k, c)])
    expect = f * m3 / np.sum(f * m3)
    np.testing.assert_allclose(rz.sector_energy_share(f, k, c), expect, rtol=1e-10)


def test_main_energy_sectors_by_hand():
    """Fewest sectors, largest first, reaching 80 % of the energy (definition, by hand)."""
    share = np.array([[0.1, 0.5, 0.2, 0.2], [0.85, 0.05, 0.05, 0.05]])
    # Row 0: 0.5, then 0.7 (< 0.8), then a third sector crosses 0.8; the fourth is left out.
    keep = rz.main_energy_sectors(share)
    assert keep[0].sum() == 3 and not keep[0, 0] and keep[0, 1]
    assert keep[1].tolist() == [True, False, False, False]


def test_min_clear_mast_is_the_highest_main_sector_zone_top():
    """Minimum mast clears the highest zone top among the main sectors, plus the rotor radius."""
    top = np.array([[2.0, 5.0, 3.0]])
    main = np.array([[True, False, True]])
    assert rz.min_clear_mast_m(top, main)[0] == pytest.approx(3.0)
    assert rz.min_clear_mast_m(top, main, rotor_radius_m=1.5)[0] == pytest.approx(4.5)
