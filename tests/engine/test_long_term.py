"""Long-term correction in the product: methods, uncertainty, CSV and NetCDF references, CLI."""
import json

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from engine import cli
from engine.climate import long_term, mcp
from engine.io import netcdf

H = 3600 * 10**9


def _pair(seed=3, n_ref=3 * 8784 + 24, n_conc=4000):
    rng = np.random.default_rng(seed)
    t = np.arange(n_ref, dtype=np.int64) * H + np.int64(1704067200) * 10**9
    d = np.mod(rng.normal(240.0, 60.0, n_ref), 360.0)
    x = 5.5 * rng.weibull(2.1, n_ref)
    y = np.maximum(0.9 * x[-n_conc:] + 0.4 + rng.normal(0, 0.7, n_conc), 0.0)
    return t, x, d, y, n_conc


def test_variance_ratio_keeps_mean_and_variance_linear_shrinks_it():
    """Rogers, Rogers & Manwell (2005): variance ratio m = σy/σx keeps the target's mean and
    variance over the concurrent period; least squares scales the variance by r²."""
    t, x, d, y, n = _pair()
    tc, dc = t[-n:], d[-n:]
    vr = mcp.mcp_long_term(tc, y, dc, t, x, d, method="variance_ratio", n_sectors=1)
    pred = vr.speed_ms[-n:]
    assert pred.mean() == pytest.approx(y.mean(), rel=1e-3)
    assert pred.var() == pytest.approx(y.var(), rel=1e-2)
    # over the long term the predicted variance is (σy/σx)² times the reference's
    m = vr.sectors.slope[0]
    assert vr.speed_ms.var() == pytest.approx(m ** 2 * x.var(), rel=1e-2)
    ls = mcp.mcp_long_term(tc, y, dc, t, x, d, method="linear", n_sectors=1)
    r = ls.correlation
    assert ls.speed_ms[-n:].var() == pytest.approx(r ** 2 * y.var(), rel=1e-2)


def test_speed_ratio_keeps_each_sector_mean():
    """Sector speed-ratio method: predicted concurrent mean per sector = target's (definition)."""
    t, x, d, y, n = _pair()
    res = mcp.mcp_long_term(t[-n:], y, d[-n:], t, x, d, method="speed_ratio", n_sectors=12)
    assert np.all(res.sectors.offset_ms == 0.0)
    assert res.predicted_concurrent_mean_ms == pytest.approx(res.target_mean_ms, rel=2e-3)


def test_uncertainty_parts_are_bounded():
    t, x, d, y, n = _pair()
    res = mcp.mcp_long_term(t[-n:], y, d[-n:], t, x, d, n_sectors=12)
    u = long_term.correction_uncertainty(res, t, x)
    assert 0 < u["correlation_part"] < 0.05 and 0 < u["period_part"] < 0.06
    # 4000 hours concurrent (167 days): the short-overlap term is in the total too.
    assert 0 < u["season_part"] < 0.05
    assert u["total"] == pytest.approx(np.sqrt(u["correlation_part"] ** 2
                                               + u["period_part"] ** 2 + u["season_part"] ** 2))
    assert u["interannual_from"].startswith("reference")


def _write_csv(path, t, v, d):
    pd.DataFrame({"timestamp": pd.to_datetime(t, utc=True).strftime("%Y-%m-%dT%H:%M:%SZ"),
                  "speed_ms": np.round(v, 3), "direction_deg": np.round(d, 2)}).to_csv(
        path, index=False)


def _write_nc(path, t, x, d):
    """A 3 x 3 grid; the series sits in the cell (51.5 N, 0.25 W), others are doubled."""
    lat, lon = np.array([51.25, 51.5, 51.75]), np.array([-0.5, -0.25, 0.0])
    rad = np.deg2rad(d)
    u, v = -x * np.sin(rad), -x * np.cos(rad)
    U = np.repeat(np.repeat((2 * u)[:, None, None], 3, 1), 3, 2)
    V = np.repeat(np.repeat((2 * v)[:, None, None], 3, 1), 3, 2)
    U[:, 1, 1], V[:, 1, 1] = u, v
    ds = xr.Dataset({"u10": (("time", "latitude", "longitude"), U.astype("f4")),
                     "v10": (("time", "latitude", "longitude"), V.astype("f4"))},
                    coords={"time": pd.to_datetime(t), "latitude": lat, "longitude": lon})
    ds.to_netcdf(path, engine="scipy")


def test_netcdf_picks_the_nearest_cell_and_gives_the_csv_result(tmp_path, capsys):
    """The same reference as CSV and as the nearest NetCDF cell gives the same climate."""
    t, x, d, y, n = _pair(n_ref=2 * 8760)
    _write_csv(tmp_path / "site.csv", t[-n:], y, d[-n:])
    _write_csv(tmp_path / "ref.csv", t, x, d)
    _write_nc(tmp_path / "ref.nc", t, x, d)
    rec, info = netcdf.read_reanalysis(tmp_path / "ref.nc", 51.52, -0.27)
    assert (info["cell_lat_deg"], info["cell_lon_deg"]) == (51.5, -0.25)
    np.testing.assert_allclose(rec.si("speed"), x, rtol=1e-5, atol=1e-5)
    out = []
    for ref, extra in (("ref.csv", []), ("ref.nc", ["--lat-deg", "51.52", "--lon-deg", "-0.27"])):
        assert cli.main(["climate", str(tmp_path / "site.csv"), "--long-term",
                         str(tmp_path / ref), "--format", "json", "--height-m", "12"]
                        + extra) == 0
        out.append(json.loads(capsys.readouterr().out))
    for doc in out:
        assert len(doc["long_term"]["sectors"]) == 12
        assert all("correlation" in s for s in doc["long_term"]["sectors"])
        assert 0 < doc["long_term"]["long_term_uncertainty"] < 0.2
    a, b = (np.array([s["weibull_c_ms"] for s in doc["sectors"]]) for doc in out)
    np.testing.assert_allclose(a, b, rtol=2e-3)


@pytest.mark.parametrize("content,extra,needle", [
    (b"CDF\x01garbage", ["--lat-deg", "51", "--lon-deg", "0"], "not a readable NetCDF3"),
    (b"\x89HDF\r\n\x1a\n....", [], "NetCDF4/HDF5"),
    (None, [], "latitude and longitude"),
])
def test_bad_reference_exits_2(tmp_path, capsys, content, extra, needle):
    t, x, d, y, n = _pair(n_ref=2000, n_conc=500)
    _write_csv(tmp_path / "site.csv", t[-n:], y, d[-n:])
    if content is None:
        _write_nc(tmp_path / "ref.nc", t, x, d)
    else:
        (tmp_path / "ref.nc").write_bytes(content)
    code = cli.main(["climate", str(tmp_path / "site.csv"), "--long-term",
                     str(tmp_path / "ref.nc")] + extra)
    assert code == 2
    assert needle in capsys.readouterr().err


def test_table_output_shows_sector_correlation(tmp_path, capsys):
    t, x, d, y, n = _pair(n_ref=2 * 8760)
    _write_csv(tmp_path / "site.csv", t[-n:], y, d[-n:])
    _write_csv(tmp_path / "ref.csv", t, x, d)
    assert cli.main(["climate", str(tmp_path / "site.csv"), "--long-term",
                     str(tmp_path / "ref.csv"), "--lt-method", "speed_ratio"]) == 0
    text = capsys.readouterr().out
    assert "Long-term correction (speed_ratio)" in text and "correlation" in text


def test_short_concurrent_period_adds_a_season_term_that_vanishes_after_a_year():
    """Finite-population variance of a sample of n of N = 4 seasons (Cochran 1977, Sampling
    Techniques, ch. 2): u_s² = σ_s² (N − n)/((N − 1) n). One season (91.25 d) gives σ_s, two
    seasons σ_s/√3, three σ_s/3 (hand calculation from that formula); a year or more gives 0."""
    s = 0.05
    assert long_term.seasonal_part(91.25, s) == pytest.approx(s)
    assert long_term.seasonal_part(182.5, s) == pytest.approx(s / np.sqrt(3.0))
    assert long_term.seasonal_part(273.75, s) == pytest.approx(s / 3.0)
    for d in (365.0, 366.0, 730.0, 3000.0):
        assert long_term.seasonal_part(d, s) == 0.0
    days = np.linspace(5.0, 400.0, 200)
    u = long_term.seasonal_part(days, s)
    assert u.shape == days.shape and np.all(np.diff(u) <= 0.0)  # shorter overlap, larger
    assert np.all(np.diff(u[days < 365.0]) < 0.0) and np.all(u >= 0.0)


def test_correction_uncertainty_grows_as_the_overlap_shortens():
    """The same reference and line, overlaps of 60 d to 2 years: the total never falls as the
    overlap shortens; from a year on the season term is 0 and the total is the correlation and
    period terms alone (u² = u_c² + u_p²)."""
    t, x, d, y, _ = _pair(n_conc=2 * 8760)
    totals = []
    for days in (60, 92, 150, 250, 365, 500, 730):
        n = days * 24
        res = mcp.mcp_long_term(t[-n:], y[-n:], d[-n:], t, x, d, n_sectors=1)
        u = long_term.correction_uncertainty(res, t, x)
        assert u["total"] == pytest.approx(np.sqrt(u["correlation_part"] ** 2
                                                   + u["period_part"] ** 2
                                                   + u["season_part"] ** 2))
        if days >= 365:
            assert u["season_part"] == 0.0
            assert u["total"] == pytest.approx(np.hypot(u["correlation_part"], u["period_part"]))
        else:
            assert u["season_part"] > u["correlation_part"]  # the short overlap dominates
        totals.append(u["total"])
    assert np.all(np.diff(totals) <= 0.0), totals
    # 92 days (about one season): the season term is about σ_s = 5 % by itself.
    res = mcp.mcp_long_term(t[-92 * 24:], y[-92 * 24:], d[-92 * 24:], t, x, d, n_sectors=1)
    assert long_term.correction_uncertainty(res, t, x)["season_part"] == pytest.approx(
        long_term.seasonal_part(res.overlap_days), rel=1e-12)


def _target(tmp_path, t, y, d):
    from engine.io import records
    _write_csv(tmp_path / "site.csv", t, y, d)
    return records.read_record((tmp_path / "site.csv").read_bytes(), "site.csv")


def test_a_period_ending_before_it_starts_is_named(tmp_path):
    """Start after end is a reversed period, not a short one: the message says so."""
    t, x, d, y, n = _pair(n_ref=2000, n_conc=500)
    _write_csv(tmp_path / "ref.csv", t, x, d)
    target = _target(tmp_path, t[-n:], y, d[-n:])
    with pytest.raises(long_term.InputError) as e:
        long_term.long_term_correction(
            target, (tmp_path / "ref.csv").read_bytes(), "ref.csv", height_m=10.0,
            period_start_ns=int(t[-10]), period_end_ns=int(t[-n]))
    (w, m), = e.value.problems
    assert w == "period" and m.startswith("must end after it starts"), m


def test_a_least_squares_line_on_an_unrelated_reference_names_the_method(tmp_path):
    """With r near 0 a least-squares line predicts little more than the mean (its slope is
    r times the ratio of the spreads: any regression text, e.g. Wilks, Statistical Methods in
    the Atmospheric Sciences, ch. 7), so the series cannot be fitted: the message names the
    method and the correlation, not the record's speed column."""
    t, x, d, y, n = _pair(n_ref=3000, n_conc=1500)
    rng = np.random.default_rng(11)
    y = 5.0 * rng.weibull(2.0, n)  # the site's own wind, unrelated to the reference
    _write_csv(tmp_path / "ref.csv", t, x, d)
    target = _target(tmp_path, t[-n:], y, d[-n:])
    with pytest.raises(long_term.InputError) as e:
        long_term.long_term_correction(target, (tmp_path / "ref.csv").read_bytes(), "ref.csv",
                                       height_m=10.0, method="linear")
    (w, m), = e.value.problems
    assert w == "method" and "linear" in m and "variance ratio" in m and "r = " in m, m
