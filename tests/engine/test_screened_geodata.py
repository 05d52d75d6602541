"""Footprint screening in geographic coordinates: each position's longitude/latitude and
input-CRS coordinates, and the screened answer as GeoJSON.

The footprints are invented rectangles in the British National Grid (EPSG:27700); the same
footprints in longitude/latitude are made here with pyproj directly, independently of
engine.io.footprints. Check values come from pyproj (Transformer, Geod) and shapely, not from
the project's own numbers.
"""
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from pyproj import Geod, Transformer

from engine.report.geodata import screened_geojson
from engine.screening.positions import GEO_COLUMNS, screen_footprints

ROOT = Path(__file__).resolve().parents[2]
#: Invented blocks: (easting, northing) of the centre [m], length, width [m], bearing of the
#: length side [deg], height [m].
BLOCKS = [(530010.0, 180020.0, 30.5, 14.3, 20.0, 18.0),
          (530060.0, 180005.0, 22.7, 12.1, 95.0, 11.0),
          (529990.0, 180075.0, 41.3, 16.9, 140.0, 24.0),
          (530070.0, 180080.0, 18.9, 10.7, 0.0, 8.0)]
TO_LONLAT = Transformer.from_crs("EPSG:27700", "EPSG:4326", always_xy=True)
TO_BNG = Transformer.from_crs("EPSG:4326", "EPSG:27700", always_xy=True)
GEOD = Geod(ellps="WGS84")


def _ring(cx, cy, length, width, bearing_deg):
    """Corners of a rectangle whose length side points along the bearing (clockwise from
    north), closed."""
    b = np.radians(bearing_deg)
    along = np.array([np.sin(b), np.cos(b)]) * length / 2
    across = np.array([np.cos(b), -np.sin(b)]) * width / 2
    c = np.array([cx, cy])
    pts = [c + along + across, c - along + across, c - along - across, c + along - across]
    return np.array(pts + [pts[0]])


def _collection(lon_lat: bool) -> bytes:
    feats = []
    for i, (cx, cy, length, width, bearing, h) in enumerate(BLOCKS):
        ring = _ring(cx, cy, length, width, bearing)
        if lon_lat:
            ring = np.column_stack(TO_LONLAT.transform(ring[:, 0], ring[:, 1]))
        feats.append({"type": "Feature", "properties": {"ref": f"B{i}", "height_m": h},
                      "geometry": {"type": "Polygon", "coordinates": [ring.tolist()]}})
    doc = {"type": "FeatureCollection", "features": feats}
    if not lon_lat:
        doc["crs"] = {"type": "name", "properties": {"name": "EPSG:27700"}}
    return json.dumps(doc).encode()


@pytest.fixture(scope="module")
def both(ctx):
    kw = dict(height_field="height_m", id_field="ref", spacing_m=4.0, setback_m=2.0)
    return (screen_footprints(_collection(False), ctx, **kw),
            screen_footprints(_collection(True), ctx, **kw))


def test_positions_agree_within_a_tenth_of_a_metre(both):
    bng, ll = both
    assert set(GEO_COLUMNS) <= set(bng.positions.columns)
    a = bng.positions.set_index("position_id")
    b = ll.positions.set_index("position_id").loc[a.index]
    assert len(a) > len(BLOCKS)  # a grid on every roof
    # Same file read in two CRSs: the positions within 0.1 m on the ground (WGS 84 geodesic,
    # pyproj.Geod) and in the grid (pyproj back to EPSG:27700).
    _, _, dist = GEOD.inv(a["longitude_deg"].to_numpy(), a["latitude_deg"].to_numpy(),
                          b["longitude_deg"].to_numpy(), b["latitude_deg"].to_numpy())
    assert np.max(dist) < 0.1
    ex, ny = TO_BNG.transform(b["longitude_deg"].to_numpy(), b["latitude_deg"].to_numpy())
    assert np.max(np.hypot(ex - a["crs_x"], ny - a["crs_y"])) < 0.1
    # The input CRS's coordinates of a lon/lat file are its lon/lat.
    np.testing.assert_allclose(b["crs_x"], b["longitude_deg"], rtol=0, atol=1e-12)
    # Each building's centre position is its rectangle's centre in the grid.
    for i, (cx, cy, *_rest) in enumerate(BLOCKS):
        row = a.loc[f"B{i}-p0"]
        assert np.hypot(row["crs_x"] - cx, row["crs_y"] - cy) < 0.1


def test_geojson_in_the_input_crs_and_in_lon_lat(both):
    bng, _ = both
    doc = screened_geojson(bng)
    assert doc["crs"]["properties"]["name"] == "EPSG:27700"
    pts = {f["id"]: f["geometry"]["coordinates"] for f in doc["features"]
           if f["properties"]["layer"] == "position"}
    p = bng.positions.set_index("position_id")
    assert set(pts) == set(p.index)
    xy = np.array([pts[k] for k in p.index])
    np.testing.assert_allclose(xy[:, 0], p["crs_x"], atol=1e-6)
    np.testing.assert_allclose(xy[:, 1], p["crs_y"], atol=1e-6)
    # Outlines come back onto the footprints' own corners (pyproj independently above).
    polys = {f["id"]: np.array(f["geometry"]["coordinates"][0]) for f in doc["features"]
             if f["properties"]["layer"] == "building"}
    for i, (cx, cy, length, width, bearing, _h) in enumerate(BLOCKS):
        ring = _ring(cx, cy, length, width, bearing)[:-1]
        got = polys[f"B{i}"][:-1]
        d = np.hypot(got[:, None, 0] - ring[None, :, 0], got[:, None, 1] - ring[None, :, 1])
        assert np.max(d.min(axis=1)) < 0.1
        assert polys[f"B{i}"][0].tolist() == polys[f"B{i}"][-1].tolist()
    ll = screened_geojson(bng, lon_lat=True)
    assert "crs" not in ll  # RFC 7946: longitude/latitude
    lp = np.array([f["geometry"]["coordinates"] for f in ll["features"]
                   if f["properties"]["layer"] == "position"])
    ex, ny = TO_BNG.transform(lp[:, 0], lp[:, 1])
    assert np.max(np.hypot(ex - p["crs_x"], ny - p["crs_y"])) < 0.1
    b = {f["id"]: f["properties"] for f in doc["features"]
         if f["properties"]["layer"] == "building"}
    best = bng.buildings.set_index("building_id")
    for bid, props in b.items():
        assert props["suitability"] == best.loc[bid, "suitability"]


def test_geojson_command_screens_footprints(tmp_path):
    src = tmp_path / "blocks.geojson"
    src.write_bytes(_collection(False))
    out = tmp_path / "screened.geojson"
    r = subprocess.run([sys.executable, "-m", "engine", "geojson", str(src), "--height-field",
                        "height_m", "--id-field", "ref", "--lon-lat", "--out", str(out)],
                       cwd=ROOT, capture_output=True, text=True, timeout=300)
    assert r.returncode == 0, r.stderr
    assert "structural engineer" in r.stderr
    doc = json.loads(out.read_text())
    layers = [f["properties"]["layer"] for f in doc["features"]]
    assert layers.count("building") == len(BLOCKS) and layers.count("position") == len(BLOCKS)
    lon, lat = doc["features"][0]["geometry"]["coordinates"]
    assert -0.2 < lon < -0.1 and 51.4 < lat < 51.6  # EPSG:27700 (530000, 180000) is central London (from memory)
    r = subprocess.run([sys.executable, "-m", "engine", "geojson", str(src), "--height-field",
                        "no_such", "--out", str(tmp_path / "x.geojson")],
                       cwd=ROOT, capture_output=True, text=True, timeout=300)
    assert r.returncode == 2 and "Traceback" not in r.stderr
