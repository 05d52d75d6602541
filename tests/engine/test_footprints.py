"""GeoJSON footprints onto the local plan (engine.io.footprints): oriented rectangles, CRS
handling with pyproj as the independent reference, and per-feature problems."""
from __future__ import annotations

import json
import math

import numpy as np
from pathlib import Path
import pytest
from pyproj import Geod, Transformer

from engine.core.errors import InputError, Problems
from engine.io import footprints, sitefile


def rectangle(cx, cy, length, width, bearing_deg):
    """Corners of a length x width block whose length side bears ``bearing_deg`` from north."""
    b = math.radians(bearing_deg)
    u = np.array([math.sin(b), math.cos(b)])      # along the length
    v = np.array([math.cos(b), -math.sin(b)])     # along the width
    c = np.array([cx, cy])
    pts = [c + s * length / 2 * u + t * width / 2 * v
           for s, t in ((-1, -1), (1, -1), (1, 1), (-1, 1))]
    return [list(map(float, p)) for p in pts] + [list(map(float, pts[0]))]


def collection(features, crs=None):
    doc = {"type": "FeatureCollection", "features": features}
    if crs:
        doc["crs"] = {"type": "name", "properties": {"name": crs}}
    return json.dumps(doc).encode()


def feature(ring, **props):
    return {"type": "Feature", "properties": props,
            "geometry": {"type": "Polygon", "coordinates": [ring]}}


# An arbitrary place on British National Grid coordinates for the projected case; the blocks
# themselves are invented test shapes.
E0, N0 = 451_000.0, 206_000.0


def test_oriented_rectangle_recovers_a_rotated_block():
    """A 40 x 12 m block bearing 30° comes back as itself (hand construction)."""
    import shapely.geometry
    poly = shapely.geometry.Polygon(rectangle(100.0, 50.0, 40.0, 12.0, 30.0))
    x, y, length, width, bearing = footprints.oriented_rectangle(poly)
    assert (x, y) == pytest.approx((100.0, 50.0), abs=1e-9)
    assert (length, width) == pytest.approx((40.0, 12.0), abs=1e-9)
    assert bearing == pytest.approx(30.0, abs=1e-9)


def test_l_shaped_footprint_area_ratio():
    """Three 10 m squares in an L fill 3/4 of their 20 x 20 m rectangle (hand count)."""
    ring = [[E0, N0], [E0 + 20, N0], [E0 + 20, N0 + 10], [E0 + 10, N0 + 10],
            [E0 + 10, N0 + 20], [E0, N0 + 20], [E0, N0]]
    fs = footprints.read_footprints(collection([feature(ring, h=6.0, name="L")], "EPSG:27700"),
                                    height_field="h", id_field="name")
    assert fs.problems == ()
    assert fs.area_ratio[0] == pytest.approx(0.75, rel=1e-6)
    b = fs.buildings[0]
    # Grid metres are not ground metres: the National Grid's scale factor here is about
    # 1.0004 (Ordnance Survey, "A guide to coordinate systems in Great Britain"; from memory).
    assert (b.length_m, b.width_m) == pytest.approx((20.0, 20.0), rel=1e-3)
    assert len(b.outline_xy_m) == 12  # six vertices kept for the plan view


def _estate():
    return [feature(rectangle(E0 + 30, N0 + 10, 36.0, 11.0, 20.0), height_m=9.5, ref="A"),
            feature(rectangle(E0 - 45, N0 - 20, 24.0, 9.0, 110.0), height_m=6.0, ref="B"),
            feature(rectangle(E0 + 5, N0 - 60, 50.0, 18.0, 75.0), height_m=21.0, ref="C")]


def test_projected_and_lat_lon_footprints_give_the_same_plan():
    """The same footprints in EPSG:27700 and in longitude/latitude (converted by pyproj) give
    the same blocks to 0.1 m and the same bearings to 0.01°."""
    projected = _estate()
    to_ll = Transformer.from_crs("EPSG:27700", "EPSG:4326", always_xy=True)
    geographic = []
    for f in projected:
        ring = np.asarray(f["geometry"]["coordinates"][0])
        lon, lat = to_ll.transform(ring[:, 0], ring[:, 1])
        geographic.append(feature(np.column_stack([lon, lat]).tolist(), **f["properties"]))
    a = footprints.read_footprints(collection(projected, "EPSG:27700"), height_field="height_m",
                                   id_field="ref")
    b = footprints.read_footprints(collection(geographic), height_field="height_m",
                                   id_field="ref")
    assert a.problems == b.problems == ()
    assert (a.plan.origin_lat_deg, a.plan.origin_lon_deg) == pytest.approx(
        (b.plan.origin_lat_deg, b.plan.origin_lon_deg), abs=2e-7)
    for p, q in zip(a.buildings, b.buildings):
        assert p.id == q.id
        assert math.hypot(p.x_m - q.x_m, p.y_m - q.y_m) < 0.1
        assert (p.length_m, p.width_m) == pytest.approx((q.length_m, q.width_m), abs=0.1)
        assert p.orientation_deg == pytest.approx(q.orientation_deg, abs=0.01)


def test_local_plan_distances_match_the_geodesic():
    """Distances on the plan agree with pyproj's geodesic (Karney 2013) to 1e-5 within 3 km."""
    plan = footprints.LocalPlan(51.75, -1.26)
    lon = np.array([-1.26, -1.29, -1.235])
    lat = np.array([51.75, 51.765, 51.73])
    x, y = plan.to_local(lon, lat, "EPSG:4326")
    assert (x[0], y[0]) == pytest.approx((0.0, 0.0), abs=1e-6)
    geod = Geod(ellps="WGS84")
    for i, j in ((0, 1), (0, 2), (1, 2)):
        _, _, s = geod.inv(lon[i], lat[i], lon[j], lat[j])
        assert math.hypot(x[i] - x[j], y[i] - y[j]) == pytest.approx(s, rel=1e-5)
    back_lon, back_lat = plan.from_local(x, y, "EPSG:4326")
    assert np.allclose(back_lon, lon, atol=1e-9) and np.allclose(back_lat, lat, atol=1e-9)


def test_bad_features_are_named_and_the_good_ones_kept():
    """Every bad feature is reported by index and id; the one good footprint is still read."""
    good = feature(rectangle(E0, N0, 20.0, 10.0, 0.0), h=7.0, ref="good")
    bow_tie = feature([[E0, N0], [E0 + 10, N0 + 10], [E0 + 10, N0], [E0, N0 + 10], [E0, N0]],
                      h=7.0, ref="bow")
    empty = {"type": "Feature", "properties": {"h": 5, "ref": "empty"},
             "geometry": {"type": "Polygon", "coordinates": []}}
    point = {"type": "Feature", "properties": {"h": 5, "ref": "pt"},
             "geometry": {"type": "Point", "coordinates": [E0, N0]}}
    no_height = feature(rectangle(E0 + 50, N0, 20.0, 10.0, 0.0), ref="tall?")
    bad_height = feature(rectangle(E0 + 90, N0, 20.0, 10.0, 0.0), h="six", ref="text")
    no_geometry = {"type": "Feature", "properties": {"h": 5, "ref": "none"}, "geometry": None}
    fs = footprints.read_footprints(
        collection([good, bow_tie, empty, point, no_height, bad_height, no_geometry],
                   "EPSG:27700"), height_field="h", id_field="ref")
    assert [b.id for b in fs.buildings] == ["good"]
    where = [w for w, _ in fs.problems]
    assert where == ["features[1] (id 'bow')", "features[2] (id 'empty')",
                     "features[3] (id 'pt')", "features[6]", "features[4] (id 'tall?')",
                     "features[5] (id 'text')"]
    text = " ".join(m for _, m in fs.problems)
    assert "Self-intersection" in text and "empty" in text and "Point" in text
    assert "'h' property" in text and "number of metres" in text


def test_unknown_crs_and_non_geojson_are_refused_with_the_field():
    with pytest.raises(InputError) as e:
        footprints.read_footprints(collection(_estate(), "EPSG:999999"), height_field="height_m")
    assert e.value.problems[0][0] == "crs"
    with pytest.raises(InputError) as e:
        footprints.read_footprints(b"\x00\x01 not json", height_field="h")
    assert e.value.problems[0][0] == "file"
    with pytest.raises(InputError) as e:
        footprints.read_footprints(b'{"type": "Feature"}', height_field="h")
    assert "FeatureCollection" in e.value.problems[0][1]


def test_eaves_and_ridge_make_a_pitched_roof():
    """Width 8 m, eaves 5 m, ridge 8 m: pitch atan(3 / 4) = 36.87° (hand calculation)."""
    f = feature(rectangle(E0, N0, 20.0, 8.0, 0.0), h=8.0, eaves=5.0, ridge=8.0, ref="house")
    fs = footprints.read_footprints(collection([f], "EPSG:27700"), height_field="h",
                                    id_field="ref", eaves_field="eaves", ridge_field="ridge")
    b = fs.buildings[0]
    assert b.roof_type == "pitched" and b.height_m == 5.0
    assert b.roof_pitch_deg == pytest.approx(math.degrees(math.atan(3 / 4)), abs=0.01)


def test_multipolygon_parts_become_buildings_and_round_trip_the_site_file():
    """A two-part footprint gives two blocks; the outline survives the site file exactly."""
    geom = {"type": "MultiPolygon",
            "coordinates": [[rectangle(E0, N0, 20.0, 10.0, 0.0)],
                            [rectangle(E0 + 60, N0, 14.0, 10.0, 90.0)]]}
    f = {"type": "Feature", "id": "pair", "properties": {"h": 6.0}, "geometry": geom}
    fs = footprints.read_footprints(collection([f], "EPSG:27700"), height_field="h")
    assert [b.id for b in fs.buildings] == ["pair-1", "pair-2"]
    b = fs.buildings[1]
    assert (b.length_m, b.width_m) == pytest.approx((14.0, 10.0), rel=1e-3)  # grid scale
    p = Problems()
    rebuilt = sitefile.build_dataclass(type(b), json.loads(json.dumps(
        {k: (list(v) if isinstance(v, tuple) else v) for k, v in b.__dict__.items()})), "b", p)
    assert not p and rebuilt == b


DEMO_FOOTPRINTS = Path(__file__).resolve().parents[2] / "demo_sites" / "footprints" / \
    "quillfield_estate_utm31n.geojson"
DEMO_SITE = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


def test_footprints_to_site_to_geojson_round_trip(tmp_path):
    """Footprints -> site file -> ranking -> GeoJSON: each roof-centre position lands back on
    its footprint's rectangle centre in the input CRS (to 5 cm), every geometry is valid to
    shapely, and the CRS member is one pyproj reads."""
    import shapely
    import shapely.geometry
    from pyproj import CRS

    from engine import cli
    site = tmp_path / "quill.json"
    assert cli.main(["footprints", str(DEMO_FOOTPRINTS), "--height-field", "height_m",
                     "--id-field", "ref", "--eaves-field", "eaves_m", "--ridge-field",
                     "ridge_m", "--site", str(DEMO_SITE), "--out", str(site)]) == 0
    out = tmp_path / "ranked.geojson"
    assert cli.main(["geojson", str(site), "--out", str(out)]) == 0
    doc = json.loads(out.read_text())
    assert CRS.from_user_input(doc["crs"]["properties"]["name"]) == CRS.from_epsg(32631)
    src = json.loads(DEMO_FOOTPRINTS.read_text())
    centres = {f["properties"]["ref"]: shapely.oriented_envelope(
        shapely.geometry.shape(f["geometry"])).centroid for f in src["features"]}
    points = [f for f in doc["features"] if f["properties"]["layer"] == "position"]
    assert len(points) == len(centres)
    for f in doc["features"]:
        geom = shapely.geometry.shape(f["geometry"])
        assert geom.is_valid and not geom.is_empty
    for f in points:
        c = centres[f["properties"]["building_id"]]
        x, y = f["geometry"]["coordinates"]
        assert math.hypot(x - c.x, y - c.y) < 0.05
        assert f["properties"]["aep_kwh"] >= 0.0
    ll = tmp_path / "ranked-ll.geojson"
    assert cli.main(["geojson", str(site), "--out", str(ll), "--lon-lat"]) == 0
    lon, lat = json.loads(ll.read_text())["features"][0]["geometry"]["coordinates"]
    assert -180 <= lon <= 180 and -90 <= lat <= 90 and "crs" not in json.loads(ll.read_text())


def test_geojson_of_a_drawn_site_is_refused_naming_the_origin(tmp_path, capsys):
    """A site drawn by hand has no place on Earth: exit 2 naming site.origin_lat_deg.

    (The demo site carries a plan origin for the sun's path, so it is written without one.)"""
    from engine import cli
    drawn = json.loads(DEMO_SITE.read_text(encoding="utf-8"))
    drawn["site"]["origin_lat_deg"] = drawn["site"]["origin_lon_deg"] = None
    site = tmp_path / "drawn.json"
    site.write_text(json.dumps(drawn), encoding="utf-8")
    assert cli.main(["geojson", str(site), "--out", str(tmp_path / "x.geojson")]) == 2
    assert "origin_lat_deg" in capsys.readouterr().err
    assert not (tmp_path / "x.geojson").exists()


def test_roof_grid_candidates_keep_the_setback():
    """Grid candidates stay inside the block less the set-back; the centre comes first."""
    from engine.core.model import Building
    from engine.flow.roof_candidates import roof_candidate_points
    b = Building(id="b", x_m=10.0, y_m=-5.0, length_m=30.0, width_m=12.0, height_m=9.0,
                 orientation_deg=35.0)
    pts = roof_candidate_points(b, spacing_m=4.0, setback_m=2.0)
    assert tuple(pts[0]) == (10.0, -5.0)
    th = math.radians(35.0)
    rel = pts - pts[0]
    along = rel @ np.array([math.sin(th), math.cos(th)])
    across = rel @ np.array([math.cos(th), -math.sin(th)])
    assert np.all(np.abs(along) <= 13.0 + 1e-9) and np.all(np.abs(across) <= 4.0 + 1e-9)
    # 7 steps along (-12..12 by 4) x 3 across (-4, 0, 4), the centre once: 21 points
    assert len(pts) == 21 and len({tuple(np.round(p, 6)) for p in pts}) == 21
