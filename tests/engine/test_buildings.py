"""Plan geometry of blocks per wind sector."""
import math

import numpy as np
import pytest

from engine.flow import buildings as geom
from engine.core import model


def test_projections_of_a_block_along_and_across_its_length():
    """Wind along the length sees the width across it; wind across sees the length (geometry)."""
    cross, along, face, fw, inc = geom.sector_geometry([40.0], [14.0], [90.0], [90.0, 0.0, 270.0])
    # Exact projections of a 40 m x 14 m rectangle (common practice, plane geometry).
    np.testing.assert_allclose(cross[0], [14.0, 40.0, 14.0])
    np.testing.assert_allclose(along[0], [40.0, 14.0, 40.0])
    np.testing.assert_allclose(fw[0], [14.0, 40.0, 14.0])
    np.testing.assert_allclose(inc[0], [0.0, 0.0, 0.0])
    assert face[0, 0] != face[0, 2]


def test_oblique_projection_by_hand():
    """At 45 deg both projections are (L + W)/sqrt 2 (plane geometry, by hand)."""
    cross, along, _, _, inc = geom.sector_geometry([40.0], [14.0], [0.0], [45.0])
    # (40 + 14) / sqrt(2) = 38.184 m, computed by hand.
    assert cross[0, 0] == pytest.approx(54.0 / math.sqrt(2.0))
    assert along[0, 0] == pytest.approx(54.0 / math.sqrt(2.0))
    assert inc[0, 0] == pytest.approx(45.0)


def test_roof_fetch_on_a_rotated_block():
    """Fetch from the windward edge of a point on a roof, by hand for two blocks."""
    # Block 40 m long east-west (bearing 90), 14 m wide; point 5 m east of centre.
    u, v = geom.to_local([5.0], [0.0], 0.0, 0.0, [90.0])
    up, down = geom.roof_fetch_m(u, v, [40.0], [14.0], [90.0], [270.0, 90.0, 0.0])
    # West wind: 25 m back to the west edge, 15 m on; east wind: 15 and 25; north wind: 7 and 7.
    np.testing.assert_allclose(up[0], [25.0, 15.0, 7.0], atol=1e-9)
    np.testing.assert_allclose(down[0], [15.0, 25.0, 7.0], atol=1e-9)
    # Same block described as bearing 0 with sides swapped gives the same fetch (geometry).
    u2, v2 = geom.to_local([5.0], [0.0], 0.0, 0.0, [0.0])
    up2, _ = geom.roof_fetch_m(u2, v2, [14.0], [40.0], [0.0], [270.0, 90.0, 0.0])
    np.testing.assert_allclose(up2[0], [25.0, 15.0, 7.0], atol=1e-9)


def test_roof_fetch_at_the_centre():
    """At a roof's centre the fetch both ways is the half extent along the wind (by hand), and
    equals the general path's value a hair off the centre."""
    # 40 x 14 m block along north: north wind 20 m each way; wind at 45 deg to the length
    # leaves by the long sides: min(20 / cos 45, 7 / sin 45) = 9.90 m (geometry, by hand).
    d = [0.0, 45.0, 90.0, 200.0]
    up, down = geom.roof_fetch_m([0.0], [0.0], [40.0], [14.0], [0.0], d)
    np.testing.assert_allclose(up[0, :3], [20.0, 7.0 * math.sqrt(2.0), 7.0], rtol=1e-12)
    np.testing.assert_array_equal(up, down)
    rng = np.random.default_rng(4)
    L, W, phi = rng.uniform(5, 80, 30), rng.uniform(5, 40, 30), rng.uniform(0, 360, 30)
    sectors = np.arange(12) * 30.0 + 7.5
    c_up, c_down = geom.roof_fetch_m(np.zeros(30), np.zeros(30), L, W, phi, sectors)
    g_up, g_down = geom.roof_fetch_m(np.full(30, 1e-300), np.zeros(30), L, W, phi, sectors)
    np.testing.assert_array_equal(c_up, g_up)
    np.testing.assert_array_equal(c_down, g_down)


def test_upwind_offsets_sign_and_lateral():
    """A block north of a point is upwind for north wind, downwind for south wind (geometry)."""
    up, lat = geom.upwind_offsets([0.0], [0.0], [0.0, 10.0], [30.0, 0.0], [0.0, 180.0])
    np.testing.assert_allclose(up[0, 0], [30.0, -30.0], atol=1e-9)
    np.testing.assert_allclose(lat[0, 1], [10.0, 10.0], atol=1e-9)


def test_building_arrays_keep_order_and_roof_type():
    """Stacked arrays keep the buildings' order and mark pitched roofs."""
    b = geom.building_arrays((model.Building("a", 0, 0, 10, 8, 6),
                              model.Building("b", 20, 0, 12, 9, 7, roof_type="pitched",
                                             roof_pitch_deg=30)))
    assert b.ids == ("a", "b") and b.index("b") == 1
    assert list(b.pitched) == [False, True]
    assert b.height_m.tolist() == [6.0, 7.0]


def test_crosswind_width_equals_sector_geometry_first_output():
    """The crosswind width alone equals sector_geometry's: L|sin γ| + W|cos γ| (projection),
    and equals the spread of the block's four corners projected across the wind."""
    rng = np.random.default_rng(3)
    L, W, phi = rng.uniform(5, 80, 40), rng.uniform(5, 40, 40), rng.uniform(0, 360, 40)
    d = np.arange(12) * 30.0
    cross = geom.crosswind_width_m(L, W, phi, d)
    np.testing.assert_array_equal(cross, geom.sector_geometry(L, W, phi, d)[0])
    # Independent reference (common practice: the shadow of a convex shape is the spread of
    # its corners' projections): corners from the block's own axes, projected on the unit
    # vector across the wind.
    p = np.radians(phi)[:, None, None]
    su, sv = np.array([1, 1, -1, -1])[None, None, :], np.array([1, -1, -1, 1])[None, None, :]
    east = su * L[:, None, None] / 2 * np.sin(p) + sv * W[:, None, None] / 2 * np.cos(p)
    north = su * L[:, None, None] / 2 * np.cos(p) - sv * W[:, None, None] / 2 * np.sin(p)
    t = np.radians(d)[None, :, None]
    across = east * np.cos(t) - north * np.sin(t)  # (B, S, 4)
    np.testing.assert_allclose(cross, across.max(-1) - across.min(-1), rtol=1e-12)
    # Hand value (common practice: projection of a rectangle): a 20 x 10 m block along north,
    # wind from 45 deg, shows (20 + 10) sin 45 = 21.21 m across the wind.
    assert geom.crosswind_width_m([20.0], [10.0], [0.0], [45.0])[0, 0] == pytest.approx(
        30.0 * math.sqrt(0.5), rel=1e-12)
