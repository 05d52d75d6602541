"""Portfolio screening: same numbers as the detailed assessment, engines identical, rows checked."""
from __future__ import annotations

import math
import sys
from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import integrate

from engine import cli
from engine.core import model
from engine.chain import pipeline
from engine import screening
from engine.report import screening_charts
from engine.io import sitefile
from engine.core.errors import InputError

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
SAMPLE = ROOT / "demo_sites" / "district_1000.csv"
sys.path.insert(0, str(ROOT / "demo_sites"))
import make_district  # noqa: E402


@pytest.fixture(scope="module")
def sample_result(ctx):
    return screening.screen_local(SAMPLE, ctx)


def _compare_with_detailed(result, ctx, picks):
    for i in picks:
        row = result.table.iloc[i]
        ev = pipeline.evaluate(screening.assessment_for_building(row, ctx))
        det = ev.table.set_index("turbine_id")
        side = min(row["length_m"], row["width_m"])
        for t in ctx.turbines:
            if not t.rotor_diameter_m <= ctx.settings.max_rotor_to_roof_side * side + 1e-9:
                # A rotor the roof cannot carry is not screened there.
                assert math.isnan(row[f"aep_kwh_{t.id}"])
                continue
            # Same functions, same inputs: equal to floating-point rounding.
            assert row[f"aep_kwh_{t.id}"] == pytest.approx(det.loc[t.id, "aep_kwh"], rel=1e-12)
            assert row[f"capacity_factor_{t.id}"] == pytest.approx(
                det.loc[t.id, "capacity_factor"], rel=1e-12)
            assert row["mean_speed_ms"] == pytest.approx(det.loc[t.id, "mean_speed_ms"], rel=1e-12)
            assert row["hub_height_m"] == pytest.approx(det.loc[t.id, "hub_height_m"], rel=1e-12)
            assert row["turbulence_intensity"] == pytest.approx(
                det.loc[t.id, "turbulence_intensity"], rel=1e-12)
            assert row["min_clear_mast_m"] == pytest.approx(
                det.loc[t.id, "min_clear_mast_m"], rel=1e-12)


def test_screening_equals_detailed_assessment(ctx, sample_result):
    """Each building's screening numbers equal the detailed assessment of that building."""
    n = len(sample_result.table)
    _compare_with_detailed(sample_result, ctx, [0, 1, n // 3, n // 2, n - 2, n - 1])


@pytest.mark.parametrize("transfer", [
    model.TransferSettings(method="power_law"),
    model.TransferSettings(adjust_shape_with_height=True),
])
def test_screening_equals_detailed_with_other_transfer(ctx, transfer):
    """The equality holds for the power-law transfer and the height-adjusted Weibull shape."""
    c2 = replace(ctx, transfer=transfer)
    frame = pd.read_csv(SAMPLE).iloc[:300]
    res = screening.screen_local(frame, c2)
    _compare_with_detailed(res, c2, [0, 150, 299])


def test_mast_clears_turbulence_zone_with_largest_rotor(ctx, sample_result):
    """The chosen mast keeps the largest carried rotor's lowest tip above the zone's top at
    the hub (every rotor's, with the roof's limits off)."""
    t = sample_result.table
    for tb in ctx.turbines:
        on = np.isfinite(t[f"aep_kwh_{tb.id}"])
        assert np.all((t["mast_height_m"] - tb.rotor_radius_m >= t["min_clear_mast_m"] - 1e-9)
                      [on])
    r = max(x.rotor_radius_m for x in ctx.turbines)
    c2 = replace(ctx, settings=screening.ScreeningSettings.without_limits())
    t2 = screening.screen_local(SAMPLE, c2).table
    assert np.all(t2["mast_height_m"] - r >= t2["min_clear_mast_m"] - 1e-9)
    assert np.all(t["mast_height_m"] >= 0.5)  # Position model: mast at least 0.5 m


def test_results_bounded_by_physics(ctx, sample_result):
    """Energy never exceeds rated power all year; speeds and fractions stay physical."""
    t = sample_result.table
    for tb in ctx.turbines:
        # Common practice: AEP <= 8760 h x rated power; capacity factor in [0, 1]. NaN only
        # where the roof cannot carry the rotor (tested below).
        aep = t[f"aep_kwh_{tb.id}"].dropna()
        cf = t[f"capacity_factor_{tb.id}"].dropna()
        assert len(aep) and np.all(aep >= 0) and np.all(aep <= 8760 * tb.rated_power_w / 1000)
        assert np.all((cf >= 0) & (cf <= 1))
    assert np.all(t["mean_speed_ms"] >= 0)
    assert np.all((t["plan_area_fraction"] > 0) & (t["plan_area_fraction"] < 1))
    # Macdonald et al. (1998): 0 <= d < H and z0 > 0.
    assert np.all(t["displacement_m"] < t["surroundings_height_m"])
    assert np.all(t["roughness_m"] > 0)


def test_ranking_by_class_then_yield(sample_result):
    """Rows are ranked best class first, then larger best yield; ranks run 1..N."""
    t = sample_result.table
    assert t["rank"].tolist() == list(range(1, len(t) + 1))
    assert np.all(np.diff(t["suitability_code"]) >= 0)
    same = np.diff(t["suitability_code"]) == 0
    assert np.all(np.diff(t["best_aep_kwh"])[same] <= 0)
    assert set(t["suitability"]) <= set(screening.CLASSES)
    assert all(r for r in t["reasons"])


def test_classes_follow_capacity_factor_thresholds(ctx):
    """Class boundaries sit at the field-trial capacity factors of the settings (3, 5, 10 %),
    with the roof's own limits switched off."""
    c2 = replace(ctx, settings=screening.ScreeningSettings.without_limits())
    t = screening.screen_local(SAMPLE, c2).table
    st = c2.settings
    # Energy Saving Trust (2009) best urban < 3 %; rural ~5 %; Warwick (2009) 4.15 %.
    assert (st.cf_unsuitable_below, st.cf_marginal_below) == (0.03, 0.05)
    ok = t["mast_height_m"] <= ctx.ranking.max_mast_height_m
    cf = t["best_capacity_factor"]
    assert np.all(t.loc[ok & (cf < 0.03), "suitability"] == "unsuitable")
    assert np.all(t.loc[ok & (cf >= 0.03) & (cf < 0.05), "suitability"] == "marginal")
    assert np.all(t.loc[ok & (cf >= 0.05) & (cf < 0.10), "suitability"] == "worth a visit")
    assert np.all(t.loc[ok & (cf >= 0.10), "suitability"] == "exceptional: measure first")
    assert np.all(t.loc[ok & (cf >= 0.10), "reasons"].str.contains("measure on the roof"))


def test_slow_wind_is_unsuitable_whatever_the_capacity_factor(ctx, sample_result):
    """Below the mean hub speed floor (4 m/s: US DOE/NREL small-wind consumer guide, from
    memory) a roof is unsuitable, with the reason, even when its capacity factor is high."""
    t = sample_result.table
    assert ctx.settings.min_mean_speed_ms == 4.0
    slow = t["mean_speed_ms"] < 4.0
    assert slow.any() and (t.loc[slow, "best_capacity_factor"] >= 0.05).any()
    assert np.all(t.loc[slow, "suitability"] == "unsuitable")
    assert np.all(t.loc[slow, "reasons"].str.contains("mean hub speed below 4 m/s"))
    assert not t.loc[~slow, "reasons"].str.contains("mean hub speed below").any()


def test_turbine_limited_to_what_the_roof_carries(ctx, sample_result):
    """A rotor wider than half the roof's smaller side is not screened there; the mast is
    chosen for the largest rotor the roof carries; a mast over half the building's height
    makes the roof unsuitable (derived, conservative settings)."""
    t = sample_result.table
    st = ctx.settings
    assert (st.max_rotor_to_roof_side, st.max_mast_to_building_height) == (0.5, 0.5)
    side = np.minimum(t["length_m"], t["width_m"]).to_numpy()
    radius = {tb.id: tb.rotor_radius_m for tb in ctx.turbines}
    carried_r = np.zeros(len(t))
    for tb in ctx.turbines:
        fits = tb.rotor_diameter_m <= 0.5 * side + 1e-9
        assert np.array_equal(np.isnan(t[f"aep_kwh_{tb.id}"].to_numpy()), ~fits)
        carried_r = np.where(fits, np.maximum(carried_r, tb.rotor_radius_m), carried_r)
    assert (carried_r < max(radius.values())).any()  # some roofs carry only the smaller rotors
    has = carried_r > 0
    best_r = t["best_turbine_id"].map(radius).to_numpy()
    assert np.all(best_r[has] <= carried_r[has])
    # The hub clears the zone with the largest carried rotor (rounded up to 0.1 m, >= 0.5 m).
    need = t["min_clear_mast_m"].to_numpy() + carried_r
    assert np.all(t["mast_height_m"].to_numpy()[has] >= np.maximum(need, 0.5)[has] - 1e-9)
    assert np.all(t["mast_height_m"].to_numpy()[has] < np.maximum(need, 0.5)[has] + 0.1 + 1e-9)
    tall = t["mast_height_m"] > 0.5 * t["height_m"] + 1e-9
    assert tall.any()
    assert np.all(t.loc[tall, "suitability"] == "unsuitable")
    assert np.all(t.loc[tall, "reasons"].str.contains("mast taller than 0.5 x the building"))


def test_frontal_area_mean_is_cauchy_mean_projection():
    """Direction-mean frontal area equals the numerically averaged projected width x height."""
    L, W, H = 30.0, 12.0, 9.0

    def projected(theta):
        return H * (L * abs(math.sin(theta)) + W * abs(math.cos(theta)))

    # Independent reference: scipy quadrature of the projection over all directions.
    mean, _ = integrate.quad(projected, 0.0, 2.0 * math.pi, limit=200)
    assert screening.frontal_area_mean_m2(L, W, H) == pytest.approx(mean / (2 * math.pi), rel=1e-9)


def test_neighbourhood_matches_brute_force_and_any_split():
    """Window sums equal a direct sum over the square, and do not depend on how rows are split."""
    d = make_district.make_district(3000, seed=7)
    cells = screening.cell_sums(d.x_m, d.y_m, d.length_m, d.width_m, d.height_m)
    nb = screening.neighbourhood_lookup(cells)
    lp, lf, hm = nb.at(d.x_m, d.y_m)
    cx, cy = screening.cell_index(d.x_m, d.y_m)
    # The cell sums equal pandas' group-by of the same whole-number quanta (reference library).
    q = screening.AREA_QUANTUM
    L, W, H = d.length_m.to_numpy(), d.width_m.to_numpy(), d.height_m.to_numpy()
    ref = pd.DataFrame({"cx": cx, "cy": cy, "area": np.rint(L * W / q).astype(np.int64),
                        "frontal": np.rint(screening.frontal_area_mean_m2(L, W, H) / q)
                        .astype(np.int64),
                        "area_height": np.rint(L * W * H / q).astype(np.int64),
                        "count": np.ones(len(d), np.int64)}).groupby(
        ["cx", "cy"], sort=True, as_index=False).sum()
    pd.testing.assert_frame_equal(cells, ref, check_exact=True)
    m, side = screening.HALF_CELLS, (2 * screening.HALF_CELLS + 1) * screening.CELL_M
    area = (d.length_m * d.width_m).to_numpy()
    for i in (0, 1234, 2999):
        sel = (np.abs(cx - cx[i]) <= m) & (np.abs(cy - cy[i]) <= m)
        # Direct sum over the (2m+1)^2 cells; sums are kept in whole quanta (1e-4 m², m³).
        q = screening.AREA_QUANTUM
        assert lp[i] == pytest.approx(area[sel].sum() / side ** 2, abs=sel.sum() * q / side ** 2)
        assert hm[i] == pytest.approx((area * d.height_m.to_numpy())[sel].sum() / area[sel].sum(),
                                      rel=1e-7)
    parts = [screening.cell_sums(*(d[c].iloc[a:b] for c in ("x_m", "y_m", "length_m", "width_m",
                                                                "height_m")))
             for a, b in ((0, 1000), (1000, 1001), (1001, 3000))]
    from engine.screening import neighbourhood
    old = neighbourhood.MAX_BAND_CELLS
    try:
        neighbourhood.MAX_BAND_CELLS = 400  # force many bands
        nb2 = screening.neighbourhood_lookup(screening.combine_cell_sums(parts))
    finally:
        neighbourhood.MAX_BAND_CELLS = old
    assert all(np.array_equal(a, b) for a, b in zip(nb2.at(d.x_m, d.y_m), (lp, lf, hm)))


def test_given_fractions_use_macdonald():
    """Area fractions given in the table give Macdonald's d/H and z0/H for a staggered array."""
    frame = pd.DataFrame({"id": ["a"], "x_m": [0.0], "y_m": [0.0], "length_m": [10.0],
                          "width_m": [10.0], "height_m": [10.0], "plan_area_fraction": [0.2],
                          "frontal_area_fraction": [0.2], "mean_building_height_m": [10.0]})
    checked = screening.check_part(frame.assign(line=[2]))
    nb = screening.neighbourhood_lookup(screening.part_cells(checked))
    sur = screening.surroundings(checked, nb)
    # Macdonald, Griffiths & Hall (1998), A = 4.43, beta = 1, C_D = 1.2, kappa = 0.4 (recomputed).
    d_h = 1 + 4.43 ** -0.2 * (0.2 - 1)
    z0_h = (1 - d_h) * math.exp(-(0.5 * 1.0 * 1.2 / 0.16 * (1 - d_h) * 0.2) ** -0.5)
    assert d_h == pytest.approx(0.4060, abs=5e-5)  # derived by hand
    assert sur["displacement_m"][0] == pytest.approx(10 * d_h, rel=1e-12)
    assert sur["roughness_m"][0] == pytest.approx(10 * z0_h, rel=1e-12)


def test_terrain_category_and_roughness_columns():
    """A terrain category takes EN 1991-1-4 Table 4.1's z0; a given roughness is kept."""
    frame = pd.DataFrame({"id": ["a", "b"], "x_m": [0.0, 500.0], "y_m": [0.0, 0.0],
                          "length_m": [10.0, 10.0], "width_m": [10.0, 10.0],
                          "height_m": [10.0, 10.0], "terrain_category": ["III", ""],
                          "roughness_m": [np.nan, 0.7], "displacement_m": [np.nan, 3.0]})
    checked = screening.check_part(frame.assign(line=[2, 3]))
    nb = screening.neighbourhood_lookup(screening.part_cells(checked))
    sur = screening.surroundings(checked, nb)
    assert sur["roughness_m"][0] == 0.3  # EN 1991-1-4 Table 4.1, category III
    assert sur["displacement_m"][0] == 0.0
    assert (sur["roughness_m"][1], sur["displacement_m"][1]) == (0.7, 3.0)


def test_latitude_longitude_to_local_metres():
    """Local metres from latitude/longitude agree with the great-circle distance within 0.1 %."""
    lat0, lon0 = 52.0, 5.0
    lat, lon = 52.02, 5.03
    x, y = screening.local_metres(lat, lon, (lat0, lon0))
    p1, p2, dl = math.radians(lat0), math.radians(lat), math.radians(lon - lon0)
    # Haversine formula, mean Earth radius 6 371 008.8 m (IUGG).
    a = math.sin((p2 - p1) / 2) ** 2 + math.cos(p1) * math.cos(p2) * math.sin(dl / 2) ** 2
    dist = 2 * 6_371_008.8 * math.asin(math.sqrt(a))
    assert math.hypot(x, y) == pytest.approx(dist, rel=1e-3)


def test_bad_rows_reported_good_rows_kept(ctx, tmp_path):
    """Bad rows are listed by line and id with the fix; every good row is screened."""
    text = ("id,x_m,y_m,length_m,width_m,height_m,roof_type,zone\n"
            "g1,0,0,12,8,9,flat,\n"
            "b1,30,0,12,8,abc,flat,\n"        # line 3: not a number
            "b2,60,0,-4,8,9,flat,\n"          # line 4: negative length
            ",90,0,12,8,9,flat,\n"            # line 5: empty id
            "b4,120,0,12,8,9,domed,\n"        # line 6: unknown roof type
            "d1,150,0,12,8,9,flat,\n"         # line 7: duplicate id
            "g2,180,0,12,8,9,pitched,\n"
            "d1,210,0,12,8,9,flat,\n"         # line 9: duplicate id
            "g3,240,0,12,8,1,flat,\n"         # line 10: height below 2 m
            "g4,270,0,12,8,12,,\n")
    path = tmp_path / "b.csv"
    path.write_text(text)
    res = screening.screen_local(path, ctx)
    where = {w: m for w, m in res.problems}
    assert "height_m must be a number, got 'abc'" in where["line 3 (id 'b1')"]
    assert "length_m must be >= 1 and <= 1000, got -4 m" in where["line 4 (id 'b2')"]
    assert "id is empty" in where["line 5"]
    assert "roof_type must be one of flat, pitched, got 'domed'" in where["line 6 (id 'b4')"]
    assert "appears on 2 lines (7, 9)" in where["line 7 (id 'd1')"]
    assert "line 9 (id 'd1')" in where
    assert "height_m must be >= 2" in where["line 10 (id 'g3')"]
    assert sorted(res.table["id"]) == ["g1", "g2", "g4"]
    assert res.n_rows == 10


def test_table_level_problems_raise(ctx, tmp_path):
    """A table without required columns raises one InputError naming every missing column."""
    path = tmp_path / "t.csv"
    path.write_text("name,x,y\na,0,0\n")
    with pytest.raises(InputError) as e:
        screening.screen_local(path, ctx)
    text = str(e.value)
    assert "'id' is missing" in text and "'height_m' is missing" in text and "unknown column" in text
    with pytest.raises(InputError):
        screening.screen_local(tmp_path / "missing.csv", ctx)


def test_zone_without_climate_is_a_bad_row(ctx):
    """With climates for named zones only, a row of another zone is reported, not guessed."""
    clim = ctx.climates[""]
    c2 = replace(ctx, climates={"north": clim})
    frame = pd.DataFrame({"id": ["a", "b"], "x_m": [0.0, 40.0], "y_m": [0.0, 0.0],
                          "length_m": [10.0, 10.0], "width_m": [10.0, 10.0],
                          "height_m": [10.0, 10.0], "zone": ["north", "south"]})
    res = screening.screen_local(frame, c2)
    assert res.table["id"].tolist() == ["a"]
    assert "zone 'south' has no climate" in res.problems[0][1]


def test_zone_climates_by_row_in_any_order_and_chunking(ctx):
    """Rows of two zones, interleaved, screened in chunks of 3: each row equals the run where
    its zone's climate serves the whole table (chunks taken by index or as slices alike)."""
    clim = ctx.climates[""]
    windy = replace(clim, weibull_c_ms=tuple(1.2 * c for c in clim.weibull_c_ms))
    d = make_district.make_district(40, seed=2)
    d["zone"] = np.where(np.arange(len(d)) % 3 == 0, "b", "a")
    c2 = replace(ctx, climates={"a": clim, "b": windy},
                 settings=replace(ctx.settings, chunk_rows=3))
    got = screening.screen_local(d, c2).table.set_index("id")
    assert len(got) == len(d)
    for zone, cl in (("a", clim), ("b", windy)):
        one = screening.screen_local(d, replace(ctx, climates={"": cl})).table.set_index("id")
        ids = d.loc[d["zone"] == zone, "id"]
        for col in ("best_aep_kwh", "mast_height_m", "mean_speed_ms"):
            np.testing.assert_allclose(got.loc[ids, col], one.loc[ids, col], rtol=1e-12)
    # The windier zone's rows gain energy (physics: more wind, more energy).
    base = screening.screen_local(d, replace(ctx, climates={"": clim})).table.set_index("id")
    ids_b = d.loc[d["zone"] == "b", "id"]
    assert np.all(got.loc[ids_b, "best_aep_kwh"] > base.loc[ids_b, "best_aep_kwh"])


def test_limits_match_the_building_model():
    """The vectorised row limits are those of engine.core.model.Building (a value just outside fails)."""
    base = dict(id="a", x_m=0.0, y_m=0.0, length_m=10.0, width_m=10.0, height_m=10.0)
    for name in ("x_m", "y_m", "length_m", "width_m", "height_m", "orientation_deg",
                 "roof_pitch_deg", "parapet_height_m"):
        lo, hi, _, lo_open, hi_open = screening.NUMERIC_LIMITS[name]
        model.Building(**{**base, name: lo if not lo_open else lo + 1e-6,
                          "roof_type": "pitched" if name == "roof_pitch_deg" else "flat"})
        for bad in (lo - 1e-6, hi + 1e-6 if not hi_open else hi):
            with pytest.raises(InputError):
                model.Building(**{**base, name: bad})


def test_parquet_rows_numbered(ctx, tmp_path):
    """A Parquet table is read by row groups; bad rows are reported by row number."""
    frame = make_district.make_district(50, seed=3)
    frame.loc[10, "width_m"] = 0.2
    path = tmp_path / "d.parquet"
    frame.to_parquet(path, row_group_size=20)
    res = screening.screen_local(path, ctx)
    assert res.problems[0][0] == f"row 11 (id '{frame.loc[10, 'id']}')"
    assert res.n_screened == 49


def test_cli_screen_writes_ranked_table(tmp_path, capsys):
    """`python -m engine screen` writes the ranked CSV, lists bad rows, exits 0."""
    frame = pd.read_csv(SAMPLE).iloc[:40].copy()
    frame["height_m"] = frame["height_m"].astype(object)
    frame.loc[5, "height_m"] = "=1+1"
    src = tmp_path / "b.csv"
    frame.to_csv(src, index=False)
    out = tmp_path / "ranked.csv"
    rc = cli.main(["screen", str(src), "--out", str(out), "--climate", str(DEMO), "--quiet",
                   "--turbines", "ha-1k5,va-1k"])
    assert rc == 0
    back = pd.read_csv(out)
    assert len(back) == 39 and list(back.columns[:3]) == ["rank", "id", "line"]
    assert "aep_kwh_va-1k" in back.columns and "aep_kwh_ha-5k" not in back.columns
    err = capsys.readouterr().err
    assert "line 7 (id" in err and "structural engineer" in err
    assert cli.main(["screen", str(tmp_path / "none.csv"), "--out", str(out)]) == 2


@pytest.mark.slow
def test_local_and_dask_identical_on_ten_thousand(ctx, dask_client, tmp_path):
    """Local and Dask engines give identical tables on 10^4 buildings, bad rows included."""
    path = tmp_path / "d10k.csv"
    frame = make_district.make_district(10_000, seed=11)
    frame.loc[17, "height_m"] = -3.0
    frame.to_csv(path, index=False)
    loc = screening.screen_local(path, ctx, part_bytes=150_000)
    dk = screening.screen_dask(path, ctx, dask_client, part_bytes=150_000)
    pd.testing.assert_frame_equal(loc.table, dk.table, check_exact=True)
    assert loc.problems == dk.problems and len(loc.problems) == 1
    assert len(dk.table) == 9_999
    out = tmp_path / "ranked.csv"
    screening.screen_dask(path, ctx, dask_client, part_bytes=150_000, out_csv=out)
    back = pd.read_csv(out)
    assert back["id"].tolist() == loc.table["id"].tolist()
    assert back["rank"].tolist() == loc.table["rank"].tolist()


def test_plan_chart_colours_by_class_and_thins_lower_classes(sample_result):
    """The plan chart colours points by class and keeps every point of the two best classes."""
    table = sample_result.table
    spec = screening_charts.plan_scatter_chart(table).to_dict()
    assert spec["encoding"]["color"]["scale"]["domain"] == list(screening.CLASSES)
    pts = screening_charts.plan_points(table, max_points=300)
    assert len(pts) == min(300, len(table))
    n_top = int((table["suitability_code"] <= 1).sum())
    assert int((pts["suitability_code"] <= 1).sum()) == min(n_top, 300)


def test_demo_district_sample_is_reproducible():
    """The committed 1000-building sample is what the seeded generator writes."""
    made = make_district.make_district(1000)
    saved = pd.read_csv(SAMPLE, dtype={"id": str})
    pd.testing.assert_frame_equal(made.reset_index(drop=True), saved, check_dtype=False)


def test_building_assessment_is_a_valid_site_file(ctx, sample_result):
    """The assessment handed to the detailed steps round-trips through the site file."""
    a = screening.assessment_for_building(sample_result.table.iloc[3], ctx)
    assert sitefile.loads(sitefile.dumps(a)) == a
    assert a.positions[0].kind == "roof" and len(a.buildings) == 1
    assert screening.SESSION_KEY == "screening_assessment"  # documented in docs/screening.md


def test_latitude_longitude_table_screens_like_local_metres(ctx):
    """Buildings given by latitude/longitude land on the same plan and get the same results."""
    xy = pd.read_csv(SAMPLE, dtype={"id": str}).iloc[:60]
    lat0, lon0 = 48.0, 11.0
    R = 6_371_008.8  # IUGG mean Earth radius, as the conversion uses
    # Latitudes centred on lat0, so the plan's scale is cos(lat0) as in this construction.
    y_mid = (xy["y_m"].min() + xy["y_m"].max()) / 2
    ll = xy.drop(columns=["x_m", "y_m"]).assign(
        latitude_deg=lat0 + np.degrees((xy["y_m"] - y_mid) / R),
        longitude_deg=lon0 + np.degrees(xy["x_m"] / (R * math.cos(math.radians(lat0)))))
    a = screening.screen_local(xy, ctx).table.set_index("id")
    b = screening.screen_local(ll, ctx).table.set_index("id").loc[a.index]
    # The plan is centred on the table's middle: positions agree up to that shift.
    shift_x = float((b["x_m"] - a["x_m"]).median())
    assert np.allclose(b["x_m"] - shift_x, a["x_m"], atol=0.05)
    # The cell grid starts at the table's south-west corner: the same neighbourhoods, except
    # where a building sits exactly on a cell edge (120.00 m from the corner here), which
    # rounding in the conversion may put on either side.
    same = np.isclose(b["plan_area_fraction"], a["plan_area_fraction"], rtol=1e-9)
    assert same.mean() >= 0.95
    assert np.allclose(b["aep_kwh_ha-1k5"][same], a["aep_kwh_ha-1k5"][same], rtol=1e-9)


def test_malformed_csv_line_reported_on_its_line(ctx, tmp_path):
    """A line with more fields than the header is reported on its line; the others keep theirs."""
    path = tmp_path / "m.csv"
    path.write_text("id,x_m,y_m,length_m,width_m,height_m\n"
                    "a,0,0,12,8,9\n"
                    "b,30,0,12,8,9,7\n"
                    "c,60,0,12,8,oops\n"
                    "d,90,0,12,8,10\n")
    res = screening.screen_local(path, ctx)
    where = dict(res.problems)
    assert "expected 6 fields, saw 7" in where["line 3"]
    assert "height_m must be a number, got 'oops'" in where["line 4 (id 'c')"]
    assert sorted(res.table["id"]) == ["a", "d"]
    assert dict(zip(res.table["id"], res.table["line"])) == {"a": 2, "d": 5}


def test_per_row_terrain_transfer_uses_each_rows_ashrae_terrain(ctx):
    """One roughness per row picks that row's ASHRAE terrain in the power-law transfer."""
    from engine.flow import transfer

    clim = ctx.climates[""]
    # ASHRAE Handbook-Fundamentals, "Airflow Around Buildings", Table 1 (a, delta [m]):
    # flat open 0.10/210, open scattered 0.14/270, urban/suburban 0.22/370, city 0.33/460.
    table1 = {0.01: (0.10, 210.0), 0.1: (0.14, 270.0), 0.5: (0.22, 370.0), 1.5: (0.33, 460.0)}
    z0 = np.array(list(table1))
    hub = np.array([12.0, 15.0, 20.0, 30.0])
    k, c = transfer.weibull_at_hub(clim, z0, np.zeros(4), hub,
                                   model.TransferSettings(method="power_law"))
    a_met, d_met = table1[0.01] if clim.roughness_m < 0.02 else (
        table1[0.1] if clim.roughness_m < 0.15 else table1[0.5])
    z_met = clim.height_m - clim.displacement_m  # the demo station: 10 m, above its z_min
    for i, (a, depth) in enumerate(table1.values()):
        ratio = (d_met / z_met) ** a_met * (hub[i] / depth) ** a
        assert c[i] == pytest.approx(np.asarray(clim.weibull_c_ms) * ratio, rel=1e-12)
    assert np.all(k == np.asarray(clim.weibull_k))
