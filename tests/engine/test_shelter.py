"""Wake shelter behind upwind blocks."""
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from engine.flow import buildings as geom
from engine.core import model
from engine.flow import shelter


def test_wake_reach_and_calibration():
    """10 % deficit at 10 H at obstacle height; nothing beyond 20 H or above 2 H (2H/20H rule)."""
    h, w = 10.0, 20.0
    # Common practice 2H/20H rule; amplitude set to 10 % at 10 H (module calibration).
    assert shelter.wake_deficit(10 * h, h, 0.0, h, w) == pytest.approx(0.10)
    assert shelter.wake_deficit(20 * h, 0.5 * h, 0.0, h, w) == pytest.approx(0.0, abs=1e-12)
    assert shelter.wake_deficit(25 * h, 0.5 * h, 0.0, h, w) == 0.0
    assert shelter.wake_deficit(5 * h, 2 * h, 0.0, h, w) == pytest.approx(0.0, abs=1e-12)
    assert shelter.wake_deficit(-1.0, 0.5 * h, 0.0, h, w) == 0.0


def test_wake_decays_as_three_halves_power():
    """Far-wake deficit of a 3-D obstacle falls as (x/H)^(-3/2) (Hunt 1971, from memory)."""
    h, w = 10.0, 20.0
    d5 = shelter.wake_deficit(5 * h, h, 0.0, h, w)
    d10 = shelter.wake_deficit(10 * h, h, 0.0, h, w)
    assert d5 / d10 == pytest.approx(2.0 ** 1.5)


def _one_block(height_m, dist_m, hub_m, lateral_m=0.0):
    b = geom.building_arrays((model.Building("n", lateral_m, dist_m, 20.0, 12.0, height_m, 90.0),))
    return shelter.shelter([0.0], [0.0], [hub_m], b, [0.0])


@settings(max_examples=200, deadline=None)
@given(st.floats(2.0, 40.0), st.floats(0.0, 30.0), st.floats(8.0, 400.0),
       st.floats(1.0, 60.0), st.floats(0.0, 40.0))
def test_taller_upwind_neighbour_never_raises_sheltered_speed(h, dh, dist, hub, lat):
    """A taller upwind block never raises the speed behind it (invariant)."""
    low = _one_block(h, dist, hub, lat)["speed_factor"][0, 0]
    high = _one_block(h + dh, dist, hub, lat)["speed_factor"][0, 0]
    assert high <= low + 1e-12
    assert 0.0 < high <= 1.0


def test_cavity_within_one_scaling_length_and_downwind_blocks_ignored():
    """Wake cavity to L_r = 1.0 R behind the block (ASHRAE, memory); no wake upwind."""
    # Block 20 m across the wind, 10 m high: R = 10^(2/3) 20^(1/3) = 12.6 m (by hand).
    near = _one_block(10.0, 6.0 + 5.0, 5.0)  # 5 m behind the leeward face
    far = _one_block(10.0, 6.0 + 20.0, 5.0)
    assert near["in_wake_recirculation"][0, 0] and not far["in_wake_recirculation"][0, 0]
    behind = _one_block(10.0, -30.0, 5.0)   # block south of the point, wind from north
    assert behind["speed_factor"][0, 0] == 1.0


def test_exclusion_and_superposition():
    """Excluded blocks do not shelter; two wakes combine to no more than the cap."""
    b = geom.building_arrays((model.Building("a", 0.0, 30.0, 20.0, 10.0, 12.0, 90.0),
                              model.Building("b", 0.0, 60.0, 20.0, 10.0, 12.0, 90.0)))
    both = shelter.shelter([0.0], [0.0], [6.0], b, [0.0])
    one = shelter.shelter([0.0], [0.0], [6.0], b, [0.0], exclude=np.array([[False, True]]))
    none = shelter.shelter([0.0], [0.0], [6.0], b, [0.0], exclude=np.array([[True, True]]))
    assert none["speed_factor"][0, 0] == 1.0
    assert both["speed_factor"][0, 0] <= one["speed_factor"][0, 0] < 1.0
    assert both["speed_factor"][0, 0] >= 1.0 - shelter.WAKE["max_deficit"]
