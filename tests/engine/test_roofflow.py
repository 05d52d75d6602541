"""Speed-up, turbulence and inflow skew above a roof."""
import numpy as np
import pytest

from engine.flow import roofflow as rf
from engine.flow import roofzones as rz

R = 15.0


def test_speedup_only_above_the_separation_layer_and_of_order_10_to_30_percent():
    """Gain of order 10-30 % just above the bubble, none inside it (Mertens 2003, memory)."""
    for x in np.array([0.1, 0.5, 1.0]) * R:
        z1 = rz.recirculation_boundary_m(x, R, 100.0)
        s = rf.roof_speed_factor(z1 + np.linspace(0.0, 1.5 * R, 1501), x, R, 100.0)
        # Mertens (2003), from memory: mean-speed gains of order 10-30 % above the layer.
        assert 1.10 <= s.max() <= 1.30
    x = 0.5 * R
    z1 = rz.recirculation_boundary_m(x, R, 100.0)
    inside = rf.roof_speed_factor(0.5 * z1, x, R, 100.0)
    assert inside == pytest.approx(rf.ROOF_FLOW["bubble_speed_ratio"])
    assert inside < 1.0
    # Far aloft the roof no longer matters (speed ratio tends to 1, common practice).
    assert rf.roof_speed_factor(z1 + 5 * R, x, R, 100.0) == pytest.approx(1.0, abs=1e-3)


def test_speed_factor_bounds():
    """0 < S <= 1 + A everywhere over the roof (no negative speeds, bounded gain)."""
    zz, xx = np.meshgrid(np.linspace(-1, 30, 60), np.linspace(0, 40, 50))
    s = rf.roof_speed_factor(zz, xx, R, 40.0)
    assert np.all(s > 0) and np.all(s <= 1.0 + rf.ROOF_FLOW["speedup_amplitude"] + 1e-12)


def test_turbulence_falls_with_height_above_the_zone():
    """Turbulence intensity falls with height above a flat roof (Ledo et al. 2011, memory)."""
    x = 0.5 * R
    top = rz.turbulence_zone_top_m(x, R, 100.0)
    z = top + np.linspace(0.0, R, 50)
    s = rf.roof_speed_factor(z, x, R, 100.0)
    ti = rf.roof_turbulence_intensity(0.15, s, z, x, R, 100.0)
    near = z - top <= 0.3 * R
    assert np.all(np.diff(ti[near]) < 0)
    assert ti[0] > 0.2 and np.all(ti[~near] < ti[0])
    # Aloft, back to the ambient intensity scaled by the (small) remaining speed change.
    assert ti[-1] == pytest.approx(0.15 / s[-1], rel=0.05)


def test_pitched_roof_more_direction_sensitive_than_flat():
    """Pitched roofs vary more with direction than flat ones (Ledo et al. 2011, memory)."""
    gamma = np.linspace(0.0, 90.0, 10)
    x = 0.3 * R
    z = rz.recirculation_boundary_m(x, R, 100.0) + 0.1 * R
    spread = {}
    for pitched in (False, True):
        ds, _ = rf.direction_weights(pitched, gamma)
        s = rf.roof_speed_factor(z, x, R, 100.0, gain_weight=ds)
        spread[pitched] = s.max() - s.min()
    assert spread[False] == pytest.approx(0.0, abs=1e-12)
    assert spread[True] > 0.05


def test_inflow_skew_largest_at_the_windward_edge():
    """Upward skew is largest near the windward edge and of order 20-30 deg (Mertens, memory)."""
    x = np.array([0.0, 0.25, 0.5, 1.0, 2.0]) * R
    z = rz.recirculation_boundary_m(x, R, 100.0)
    skew = rf.roof_inflow_skew_deg(z, x, R, 100.0)
    assert np.all(np.diff(skew) < 0)
    assert 20.0 <= skew[0] <= 30.0
    assert skew[-1] < 1.0
