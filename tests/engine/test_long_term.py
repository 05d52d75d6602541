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
    assert u["total"] == pytest.approx(np.hypot(u["correlation_part"], u["period_part"]))
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
