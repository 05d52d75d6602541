"""Shelter by upwind neighbours in the screening (per-sector surroundings on).

Check values: the wake's 10 % deficit at obstacle height 10 H downstream (the 2H/20H rule of
small-wind siting, common practice; engine/flow/shelter.py's calibration point); a sheltering
wake only slows the wind (speed factor <= 1, physics); and sameness of a building's answer
alone, in any tile, across tile edges and on a 2-worker loopback Dask cluster.
"""
from __future__ import annotations

import sys
from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from engine import screening
from engine.flow import shelter
from engine.screening import tiled, tiles

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "demo_sites"))
import make_district  # noqa: E402  (seeded invented district)

FETCH_M = 150.0
SECTORS = np.arange(12) * 30.0


@pytest.fixture(scope="module")
def frame():
    return make_district.make_district(300)


@pytest.fixture(scope="module")
def ctx_on(ctx):
    return replace(ctx, transfer=replace(ctx.transfer, sector_morphometry=True,
                                         sector_fetch_m=FETCH_M))


def _blocks(frame):
    return tiles.combine_blocks([frame[list(tiles.BLOCK_COLUMNS)].astype(float)])


def test_wake_at_ten_heights_downstream_slows_the_wind_by_a_tenth():
    """A 20 m block due north, its leeward face 10 H = 200 m upwind of a roof at 15 m hub
    height (below the block's top): the north sector's speed factor is 0.90 (2H/20H rule,
    common practice); beyond the fetch the block does not shelter."""
    blk = pd.DataFrame({"x_m": [0.0, 0.0], "y_m": [0.0, 205.0], "length_m": [10.0, 10.0],
                        "width_m": [10.0, 10.0], "height_m": [10.0, 20.0],
                        "orientation_deg": [0.0, 0.0]})
    b = _blocks(blk)
    near = tiles.upwind_shelter([0.0], [0.0], [0.0], [0.0], b, SECTORS, 300.0)([15.0])
    assert near["speed_factor"][0, 0] == pytest.approx(0.90, abs=1e-12)
    assert near["added_ti"][0, 0] == pytest.approx(0.6 * 0.10, abs=1e-12)  # β = 0.6 (shelter.py)
    assert np.all(near["speed_factor"][0, 2:11] == 1.0)  # no block upwind in those sectors
    far = tiles.upwind_shelter([0.0], [0.0], [0.0], [0.0], b, SECTORS, 150.0)([15.0])
    assert np.all(far["speed_factor"] == 1.0)


def test_shelter_is_the_same_alone_in_any_tile_and_across_edges(frame):
    """Tiles of 40 m (most rows near an edge), 250 m, one tile for all, every row alone, and
    the model called once over the whole table: bit for bit the same shelter."""
    b = _blocks(frame)
    x, y = frame["x_m"].to_numpy(float), frame["y_m"].to_numpy(float)
    hub = frame["height_m"].to_numpy(float) + 3.0
    ref = tiles.upwind_shelter(x, y, x, y, b, SECTORS, FETCH_M, tile_m=1e6)(hub)
    assert (ref["speed_factor"] < 0.95).any()  # the check below is not of ones
    # 0 <= δ <= δ_max = 0.8 (engine/flow/shelter.py)
    assert np.all(ref["speed_factor"] <= 1.0) and np.all(ref["speed_factor"] >= 0.2 - 1e-12)
    for tile in (40.0, 250.0):
        got = tiles.upwind_shelter(x, y, x, y, b, SECTORS, FETCH_M, tile_m=tile)(hub)
        for k in ref:
            np.testing.assert_array_equal(got[k], ref[k], err_msg=k)
    for i in (0, 1, 120, 299):
        near = frame[np.hypot(frame["x_m"] - x[i], frame["y_m"] - y[i]) <= FETCH_M]
        alone = tiles.upwind_shelter(x[i:i + 1], y[i:i + 1], x[i:i + 1], y[i:i + 1],
                                     _blocks(near), SECTORS, FETCH_M)(hub[i:i + 1])
        for k in ref:
            np.testing.assert_array_equal(alone[k][0], ref[k][i], err_msg=k)
    own = (b.x_m[None, :] == x[:, None]) & (b.y_m[None, :] == y[:, None])
    direct = shelter.shelter_within_fetch(x, y, hub, b.take(np.arange(b.n)), SECTORS, FETCH_M,
                                          own)
    np.testing.assert_array_equal(direct["speed_factor"], ref["speed_factor"])


def test_screening_shelters_and_agrees_alone_tiled_and_on_dask(frame, ctx_on, dask_client):
    """The screening with shelter: never a faster hub than without (wakes only slow the wind),
    some buildings slower and given the reason; a sheltered building screened alone with
    the buildings within the fetch, in 120 m tiles locally and on Dask, gets the same."""
    off = replace(ctx_on, settings=replace(ctx_on.settings, upwind_shelter=False))
    bare = screening.screen_local(frame, off).table.set_index("id")
    whole = screening.screen_local(frame, ctx_on).table.set_index("id")
    bare = bare.loc[whole.index]
    assert np.all(whole["mean_speed_ms"] <= bare["mean_speed_ms"] * (1 + 1e-12))
    slower = whole["mean_speed_ms"] < bare["mean_speed_ms"] * 0.99
    assert slower.sum() >= 10
    assert whole["reasons"].str.contains("sheltered by upwind neighbours").any()
    np.testing.assert_array_equal(whole["mast_height_m"], bare["mast_height_m"])
    me = whole.index[np.flatnonzero(slower.to_numpy())[0]]
    row = frame.set_index("id").loc[me]
    near = frame[np.hypot(frame["x_m"] - row["x_m"], frame["y_m"] - row["y_m"]) <= FETCH_M]
    alone = screening.screen_local(near, ctx_on).table.set_index("id").loc[me]
    runs = [tiled.screen_tiled(frame, ctx_on, tile_m=120.0).table.set_index("id"),
            tiled.screen_tiled(frame, ctx_on, tile_m=120.0,
                               client=dask_client).table.set_index("id")]
    for got in [alone] + [r.loc[me] for r in runs]:
        for c in ("mean_speed_ms", "turbulence_intensity", "best_aep_kwh"):
            assert got[c] == pytest.approx(whole.loc[me, c], rel=1e-12, abs=0), c
        assert got["reasons"] == whole.loc[me, "reasons"]
    for r in runs:
        np.testing.assert_allclose(r.loc[whole.index, "mean_speed_ms"], whole["mean_speed_ms"],
                                   rtol=1e-12, atol=0)
        assert (r.loc[whole.index, "suitability"] == whole["suitability"]).all()
