"""Per-sector surroundings in the screening (engine.screening.tiles): the same roughness per
sector as the detailed chain, and the same answer in any tile, alone, or on Dask."""
from __future__ import annotations

import sys
from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from engine import screening
from engine.core import model
from engine.flow import effective as flow
from engine.screening import tiled, tiles

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "demo_sites"))
import make_district  # noqa: E402  (seeded invented district)

FETCH_M = 150.0


@pytest.fixture(scope="module")
def frame():
    return make_district.make_district(300)


@pytest.fixture(scope="module")
def ctx_on(ctx):
    return replace(ctx, transfer=replace(ctx.transfer, sector_morphometry=True,
                                         sector_fetch_m=FETCH_M))


def _blocks(frame):
    return tiles.combine_blocks([frame[list(tiles.BLOCK_COLUMNS)].astype(float)])


def _detailed_terrain(frame, i, ctx):
    """The detailed chain's per-sector terrain of a roof position at building i's centre, with
    every building of the table as a site building (flow.position_terrain)."""
    blds = tuple(model.Building(
        id=str(r.id), x_m=float(r.x_m), y_m=float(r.y_m), length_m=float(r.length_m),
        width_m=float(r.width_m), height_m=float(r.height_m),
        orientation_deg=float(r.orientation_deg)) for r in frame.itertuples())
    row = frame.iloc[i]
    pos = model.Position("p", "roof", float(row.x_m), float(row.y_m), 2.0,
                         building_id=str(row.id))
    a = model.Assessment(site=ctx.site, climate=ctx.climates[""], buildings=blds,
                         positions=(pos,), turbines=ctx.turbines, transfer=ctx.transfer)
    own = np.array([[b.id == str(row.id) for b in blds]])
    return flow.position_terrain(a, [pos.x_m], [pos.y_m], own)


def test_screened_row_agrees_with_the_detailed_chain_per_sector(frame, ctx_on):
    """The row's per-sector z0 and d (tiles.sector_surroundings over the table) equal the
    detailed chain's over the same buildings as site buildings; and the screened table's
    roughness_m is their mean over sectors (Macdonald et al. 1998 in both)."""
    rows = {c: frame[c].to_numpy() for c in ("x_m", "y_m")}
    n = len(frame)
    given = {"surroundings_from": np.full(n, "neighbours in the table", dtype=object),
             **{k: np.zeros(n) for k in ("plan_area_fraction", "frontal_area_fraction",
                                         "surroundings_height_m", "roughness_m",
                                         "displacement_m")}}
    S = len(ctx_on.climates[""].frequency)
    sur = tiles.sector_surroundings(rows, given, _blocks(frame), ctx_on.site, ctx_on.transfer, S)
    result = screening.screen_local(frame, ctx_on).table.set_index("id")
    for i in (0, 57, 150, 299):
        det = _detailed_terrain(frame, i, ctx_on)
        np.testing.assert_allclose(sur["sector_roughness_m"][i], det["roughness_m"][0],
                                   rtol=1e-12)
        np.testing.assert_allclose(sur["sector_displacement_m"][i], det["displacement_m"][0],
                                   rtol=1e-12)
        assert det["from_buildings"][0].any()
        got = result.loc[frame.iloc[i]["id"]]
        assert got["surroundings_from"] == "neighbours by sector"
        assert got["roughness_m"] == pytest.approx(det["roughness_m"][0].mean(), rel=1e-12)
    # The roughness does vary by direction on this table (the test could fail otherwise).
    assert np.ptp(sur["sector_roughness_m"], axis=1).max() > 0.1


def test_same_answer_alone_in_any_tile_and_across_tile_edges(frame):
    """Tiles of 40 m (most rows near an edge), 250 m and one tile for all, and every row
    alone: bit for bit the same fractions (the halo is the fetch wide)."""
    b = _blocks(frame)
    x, y = frame["x_m"].to_numpy(), frame["y_m"].to_numpy()
    ref = tiles.sector_fractions(x, y, b, 12, FETCH_M, tile_m=1e6)
    for tile in (40.0, 250.0):
        got = tiles.sector_fractions(x, y, b, 12, FETCH_M, tile_m=tile)
        for g, r in zip(got, ref):
            np.testing.assert_array_equal(g, r)
    for i in (0, 1, 120, 299):
        alone = tiles.sector_fractions(x[i:i + 1], y[i:i + 1], b, 12, FETCH_M, tile_m=40.0)
        for g, r in zip(alone, ref):
            np.testing.assert_array_equal(g[0], r[i])
    assert np.isfinite(ref[2]).any() and (ref[0] > 0).any()


def test_local_streamed_and_dask_agree_with_sector_surroundings(frame, ctx_on, tmp_path,
                                                                dask_client):
    """In memory, streamed in small parts and on a 2-worker loopback Dask cluster: the same
    ranked table to the last bit, and the same CSV; the surroundings equal to the last bit
    to those of the table screened as one part."""
    path = tmp_path / "district.csv"
    frame.to_csv(path, index=False)
    # The yield's bins sums may round differently with the array's size, so the engines are
    # compared on the same parts (docs/screening.md, Engines); the surroundings do not
    # depend on the parts at all.
    mem = screening.screen_local(path, ctx_on, part_bytes=8_000)
    whole = screening.screen_local(path, ctx_on).table.set_index("id")
    for c in ("roughness_m", "displacement_m", "plan_area_fraction", "frontal_area_fraction",
              "surroundings_height_m"):
        np.testing.assert_array_equal(mem.table.set_index("id")[c], whole.loc[mem.table["id"], c])
    out_local = tmp_path / "local.csv"
    screening.screen_local(path, ctx_on, part_bytes=8_000, out_csv=out_local)
    dk = screening.screen_dask(path, ctx_on, dask_client, part_bytes=8_000)
    pd.testing.assert_frame_equal(mem.table, dk.table, check_exact=True)
    out_dask = tmp_path / "dask.csv"
    screening.screen_dask(path, ctx_on, dask_client, part_bytes=8_000, out_csv=out_dask)
    assert out_local.read_bytes() == out_dask.read_bytes()
    back = pd.read_csv(out_local)
    assert back["id"].tolist() == mem.table["id"].tolist()
    np.testing.assert_array_equal(back["roughness_m"].to_numpy(),
                                  mem.table["roughness_m"].to_numpy())
    assert (mem.table["surroundings_from"] == "neighbours by sector").all()


def test_zones_with_different_sector_counts_are_refused(frame, ctx_on):
    c = ctx_on.climates[""]
    other = model.WindClimate(height_m=c.height_m, roughness_m=c.roughness_m,
                              frequency=(0.25,) * 4, weibull_k=(2.0,) * 4,
                              weibull_c_ms=(5.0,) * 4)
    bad = replace(ctx_on, climates={"": c, "core": other})
    with pytest.raises(model.InputError) as e:
        screening.screen_local(frame, bad)
    assert "transfer.sector_morphometry" in str(e.value)


def test_tiled_screening_equals_the_whole_table_alone_and_on_dask(frame, ctx_on, dask_client):
    """Tiles of 120 m and 400 m, each with a halo of the fetch, locally and on a 2-worker
    loopback Dask cluster, against the whole table screened at once: the surroundings
    identical to the last bit, the yields equal to rounding; a building alone (its tile is
    only itself) gets the same."""
    whole = screening.screen_local(frame, ctx_on).table.set_index("id")
    exact = ("roughness_m", "displacement_m", "plan_area_fraction", "frontal_area_fraction",
             "surroundings_height_m", "mast_height_m", "line")
    runs = [tiled.screen_tiled(frame, ctx_on, tile_m=120.0),
            tiled.screen_tiled(frame, ctx_on, tile_m=400.0),
            tiled.screen_tiled(frame, ctx_on, tile_m=120.0, client=dask_client)]
    for res in runs:
        t = res.table.set_index("id").loc[whole.index]
        assert len(t) == len(frame) and res.problems == []
        for c in exact:
            np.testing.assert_array_equal(t[c].to_numpy(), whole[c].to_numpy(), err_msg=c)
        np.testing.assert_allclose(t["best_aep_kwh"], whole["best_aep_kwh"], rtol=1e-12)
        assert (t["suitability"] == whole["suitability"]).all()
    pd.testing.assert_frame_equal(runs[0].table, runs[2].table, check_exact=True)
    # One building screened alone with only the buildings within the fetch around it.
    me = frame.iloc[10]
    near = frame[np.hypot(frame["x_m"] - me["x_m"], frame["y_m"] - me["y_m"]) <= FETCH_M]
    assert 1 < len(near) < len(frame)
    got = screening.screen_local(near, ctx_on).table.set_index("id").loc[me["id"]]
    for c in exact[:-1]:
        assert got[c] == whole.loc[me["id"], c], c
    assert got["best_aep_kwh"] == pytest.approx(whole.loc[me["id"], "best_aep_kwh"], rel=1e-12)


def test_tiled_screening_reports_bad_and_repeated_rows_by_line(frame, ctx_on):
    bad = frame.iloc[:40].copy()
    bad.loc[3, "height_m"] = -1.0
    bad.loc[7, "id"] = bad.loc[8, "id"]
    res = tiled.screen_tiled(bad, ctx_on, tile_m=120.0)
    lines = sorted(res.bad_rows["line"].tolist())
    assert lines == [5, 9, 10]  # rows 3, 7, 8 of the frame are lines 5, 9, 10
    assert len(res.table) == 37
    off = replace(ctx_on, transfer=replace(ctx_on.transfer, sector_morphometry=False))
    with pytest.raises(model.InputError):
        tiled.screen_tiled(frame, off)
