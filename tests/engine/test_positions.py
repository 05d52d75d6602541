"""Screening from footprints (engine.screening.positions): candidates on every roof, each with
its mast, equal to the detailed chain at that point; the best per building."""
from __future__ import annotations

import json
import math
from dataclasses import replace

import numpy as np
import pytest
import shapely.geometry

from engine import screening
from engine.chain import pipeline
from engine.core import model
from engine.flow import roof_candidates as rc
from engine.flow.buildings import building_corners_m
from engine.io import footprints as fp
from engine.screening import positions as sp
from footprint_rings import rectangle_ring


def _geojson(extra=()):
    """Six invented blocks in UTM zone 31N coordinates (offshore: nowhere real)."""
    x0, y0 = 500000.0, 6000000.0
    blocks = [("A", 0, 0, 30, 14, 20, 12.0), ("B", 45, 5, 24, 12, 70, 9.0),
              ("C", -40, 30, 18, 10, 0, 7.0), ("D", 10, 60, 40, 16, 15, 18.0),
              ("E", -35, -45, 20, 20, 45, 10.0), ("F", 60, -50, 12, 9, 100, 6.0)]
    feats = [{"type": "Feature", "properties": {"ref": r, "h": h},
              "geometry": {"type": "Polygon",
                           "coordinates": [rectangle_ring(x0 + x, y0 + y, L, W, b)]}}
             for r, x, y, L, W, b, h in blocks]
    feats += list(extra)
    return json.dumps({"type": "FeatureCollection",
                       "crs": {"type": "name", "properties": {"name": "EPSG:32631"}},
                       "features": feats}).encode()


def test_candidate_arrays_match_the_per_roof_points_and_keep_the_setback():
    """The vectorised candidates are the per-roof function's points, and every grid point lies
    inside the roof shrunk by the set-back (shapely's negative buffer as the reference)."""
    bs = [model.Building("a", 10, 20, 30, 12, 9, orientation_deg=33),
          model.Building("b", -5, 2, 3, 3, 5),
          model.Building("c", 0, 0, 14, 9.5, 6, orientation_deg=120)]
    blk, u, v = rc.roof_candidate_arrays([b.length_m for b in bs], [b.width_m for b in bs],
                                         4.0, 2.0)
    for i, b in enumerate(bs):
        ref = rc.roof_candidate_points(b, 4.0, 2.0)
        t = math.radians(b.orientation_deg)
        x = b.x_m + u[blk == i] * math.sin(t) + v[blk == i] * math.cos(t)
        y = b.y_m + u[blk == i] * math.cos(t) - v[blk == i] * math.sin(t)
        np.testing.assert_allclose(np.column_stack([x, y]), ref, atol=1e-9)
        inner = shapely.geometry.Polygon(building_corners_m(b)).buffer(-2.0 + 1e-6,
                                                                       join_style=2)
        if len(ref) > 1:
            assert all(inner.covers(shapely.geometry.Point(p)) for p in ref)
    assert np.bincount(blk).tolist() == [21, 1, 3]


@pytest.fixture(scope="module")
def screened(ctx):
    return sp.screen_footprints(_geojson(), ctx, height_field="h", id_field="ref",
                                spacing_m=4.0)


def test_centres_equal_the_table_screening(ctx, screened):
    """The centre candidate of each roof equals the screening of the same buildings as a
    table (the CSV path), to rounding."""
    frame = sp.footprint_frame(fp.read_footprints(_geojson(), height_field="h",
                                                   id_field="ref"))
    table = screening.screen_local(frame, ctx).table.set_index("id")
    centre = screened.positions[screened.positions["position_id"].str.endswith("-p0")]
    assert len(centre) == 6
    for _, p in centre.iterrows():
        row = table.loc[p["building_id"]]
        for c in ("mast_height_m", "hub_height_m", "mean_speed_ms", "best_aep_kwh"):
            assert p[c] == pytest.approx(row[c], rel=1e-12), c
        assert p["suitability"] == row["suitability"]


def test_off_centre_positions_equal_the_detailed_chain(ctx, screened):
    """A grid candidate's yield equals engine.chain.pipeline.evaluate of that building with a
    roof position at the candidate's plan point on the screening's mast."""
    frame = sp.footprint_frame(fp.read_footprints(_geojson(), height_field="h",
                                                   id_field="ref"))
    table = screening.screen_local(frame, ctx).table.set_index("id")
    pos = screened.positions
    picks = pos[(pos["u_m"] != 0) & (pos["v_m"] != 0)].iloc[[0, 7, -1]]
    for _, p in picks.iterrows():
        row = table.loc[p["building_id"]].copy()
        row["id"] = p["building_id"]
        a = screening.assessment_for_building(row, ctx)
        at = model.Position("q", "roof", float(p["x_m"]), float(p["y_m"]),
                            float(p["mast_height_m"]), building_id=p["building_id"])
        det = pipeline.evaluate(replace(a, positions=(at,))).table.set_index("turbine_id")
        for t in ctx.turbines:
            got = p[f"aep_kwh_{t.id}"]
            if math.isnan(got):
                continue
            assert got == pytest.approx(det.loc[t.id, "aep_kwh"], rel=1e-12)
        assert p["mean_speed_ms"] == pytest.approx(det["mean_speed_ms"].iloc[0], rel=1e-12)
        # The mast is the shortest clear one for the largest carried rotor, to the 0.1 m step.
        assert p["mast_height_m"] >= p["min_clear_mast_m"]


def test_best_position_per_building(screened):
    """One row per building: its best class, then the largest net AEP among its positions
    (pandas' sort as the reference)."""
    pos = screened.positions
    ref = (pos.sort_values(["suitability_code", "best_aep_kwh", "position_id"],
                           ascending=[True, False, True], kind="mergesort")
           .drop_duplicates("building_id"))
    assert screened.buildings["position_id"].tolist() == ref["position_id"].tolist()
    assert screened.buildings["rank"].tolist() == list(range(1, 7))
    counts = pos.groupby("building_id").size()
    assert (screened.buildings.set_index("building_id")["n_positions"]
            == counts.loc[screened.buildings["building_id"]]).all()
    assert pos["position_id"].is_unique and len(pos) > 6


def test_bad_feature_is_listed_and_the_rest_screened(ctx):
    bad = {"type": "Feature", "properties": {"ref": "G"},
           "geometry": {"type": "Polygon",
                        "coordinates": [rectangle_ring(500100, 6000100, 10, 10, 0)]}}
    got = sp.screen_footprints(_geojson([bad]), ctx, height_field="h", id_field="ref")
    assert got.n_features == 6 and len(got.buildings) == 6
    assert any("h" in msg for _, msg in got.problems)


def test_screen_command_reads_footprints(tmp_path):
    """`screen FILE.geojson`: best position per building to --out, every one to
    --positions-out; a missing --height-field is named with its fix (exit 2)."""
    import pandas as pd

    from engine import cli
    src = tmp_path / "blocks.geojson"
    src.write_bytes(_geojson())
    best, every = tmp_path / "best.csv", tmp_path / "every.csv"
    root = __import__("pathlib").Path(__file__).resolve().parents[2]
    site = root / "demo_sites" / "larkspur_yard.json"
    assert cli.main(["screen", str(src), "--climate", str(site), "--height-field", "h",
                     "--id-field", "ref", "--grid-spacing-m", "4", "--out", str(best),
                     "--positions-out", str(every), "--quiet"]) == 0
    b, e = pd.read_csv(best), pd.read_csv(every)
    assert len(b) == 6 and set(b["building_id"]) == set("ABCDEF")
    assert set(b["position_id"]) <= set(e["position_id"])
    assert cli.main(["screen", str(src), "--out", str(best)]) == 2


def test_positions_take_their_buildings_sectors(ctx):
    """With per-sector surroundings the centre candidates still equal the table screening of
    the same buildings (which finds the sectors itself)."""
    on = replace(ctx, transfer=replace(ctx.transfer, sector_morphometry=True,
                                       sector_fetch_m=120.0))
    got = sp.screen_footprints(_geojson(), on, height_field="h", id_field="ref")
    frame = sp.footprint_frame(fp.read_footprints(_geojson(), height_field="h",
                                                   id_field="ref"))
    table = screening.screen_local(frame, on).table.set_index("id")
    assert (table["surroundings_from"] == "neighbours by sector").all()
    for _, p in got.positions.iterrows():
        row = table.loc[p["building_id"]]
        for c in ("mast_height_m", "mean_speed_ms", "best_aep_kwh"):
            assert p[c] == pytest.approx(row[c], rel=1e-12), c
