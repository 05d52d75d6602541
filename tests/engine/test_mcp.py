"""Long-term correction (engine.climate.mcp) on synthetic pairs whose truth is known."""
import numpy as np
import pytest
from scipy import stats

from engine.climate import mcp
from engine.climate import qc
from engine.io import records as ts
from engine.core.errors import InputError

H = 3600 * 10 ** 9
T0 = np.datetime64("2020-01-01", "ns").astype(np.int64)


def _reference(n=3 * 8760, seed=1):
    rng = np.random.default_rng(seed)
    t = T0 + np.arange(n) * H
    x = stats.weibull_min.rvs(2.0, scale=6.0, size=n, random_state=rng)
    d = rng.uniform(0, 360, n)
    return t, x, d


def test_long_term_mean_recovered():
    """Target y = 1.2 x + 0.5 + noise over 8 months: long-term mean ≈ 1.2 E[x] + 0.5."""
    t, x, d = _reference()
    rng = np.random.default_rng(2)
    sl = slice(10000, 10000 + 240 * 24)
    y = 1.2 * x[sl] + 0.5 + rng.normal(0, 0.3, x[sl].size)
    truth = 1.2 * x.mean() + 0.5  # the line the test built
    for method in mcp.MCP_METHODS:
        r = mcp.mcp_long_term(t[sl], y, d[sl] + 10, t, x, d, method=method, n_sectors=8)
        assert r.long_term_mean_ms == pytest.approx(truth, rel=0.01)
        assert r.n_pairs == y.size and r.overlap_days == pytest.approx(240.0)
        np.testing.assert_allclose(r.sectors["veer_deg"], 10.0, atol=1e-6)


def test_linear_line_is_least_squares():
    """The linear method's all-sector line equals numpy.polyfit (independent least squares)."""
    t, x, d = _reference(4000)
    y = 0.8 * x + 0.2 + np.random.default_rng(5).normal(0, 0.5, x.size)
    r = mcp.mcp_long_term(t, y, d, t, x, d, method="linear", n_sectors=1)
    m, b = np.polyfit(x, y, 1)
    assert r.sectors["slope"][0] == pytest.approx(m) and r.sectors["offset_ms"][0] == pytest.approx(b)
    assert r.correlation == pytest.approx(np.corrcoef(x, y)[0, 1])


def test_variance_ratio_preserves_target_variance():
    """Variance ratio keeps the target's mean and variance (Rogers, Rogers & Manwell 2005)."""
    t, x, d = _reference(6000)
    y = 0.9 * x + 1.0 + np.random.default_rng(6).normal(0, 0.8, x.size)
    r = mcp.mcp_long_term(t, y, d, t, x, d, method="variance_ratio", n_sectors=1)
    pred = r.speed_ms  # concurrent period == whole reference here
    assert pred.mean() == pytest.approx(y.mean(), rel=1e-9)
    assert pred.std() == pytest.approx(y.std(), rel=1e-9)
    lin = mcp.mcp_long_term(t, y, d, t, x, d, method="linear", n_sectors=1)
    assert lin.speed_ms.std() < y.std()  # least squares shrinks the variance by r (Rogers 2005)


def test_ten_minute_target_is_averaged_onto_hours():
    """A 10-minute target is averaged onto the reference's hourly steps before pairing."""
    t, x, d = _reference(2000)
    tt = T0 + np.arange(2000 * 6) * (H // 6)
    y = np.repeat(x, 6) * 1.1
    r = mcp.mcp_long_term(tt, y, np.repeat(d, 6), t, x, d, method="linear", n_sectors=4)
    np.testing.assert_allclose(r.sectors["slope"], 1.1)
    assert r.n_pairs == 2000


def test_warnings_short_overlap_weak_correlation():
    """Short overlap and weak correlation are both warned about (common practice thresholds)."""
    t, x, d = _reference()
    sl = slice(0, 60 * 24)
    y = np.random.default_rng(9).weibull(2.0, 60 * 24) * 5.0  # unrelated to x
    r = mcp.mcp_long_term(t[sl], y, d[sl], t, x, d)
    text = " ".join(r.warnings)
    assert "shorter than 365" in text and "correlation" in text
    assert r.correlation < mcp.WARN_CORRELATION


def test_no_overlap_refused():
    """Records that do not overlap give InputError, not a crash."""
    t, x, d = _reference(2000)
    with pytest.raises(InputError):
        mcp.mcp_long_term(t + 10 ** 4 * H, x, d, t, x, d)


def test_long_term_climate_from_records():
    """Two QC'd records give a long-term climate labelled as such, speeds non-negative."""
    t, x, d = _reference(2 * 8760)
    ref = ts.record_from_arrays(t, x, d, file_name="ref.csv")
    sl = slice(8760, 8760 + 24 * 200)
    tgt = ts.record_from_arrays(t[sl], 0.7 * x[sl] + 0.1, d[sl], file_name="roof.csv")
    summary, res = mcp.long_term_climate(tgt, qc.run_qc(tgt), ref, qc.run_qc(ref), height_m=15.0)
    assert summary.climate.source == "long_term" and summary.climate.record_file == "roof.csv"
    assert np.all(res.speed_ms >= 0)
    assert summary.mean_speed_ms == pytest.approx(0.7 * x.mean() + 0.1, rel=0.01)


def test_demo_records_long_term_from_bytes():
    """The two uploads run end to end; the short overlap is warned about, speeds stay >= 0."""
    from pathlib import Path
    root = Path(__file__).resolve().parents[2] / "demo_sites" / "records"
    roof = (root / "roof_logger_10min.csv").read_bytes()
    ref = (root / "reference_station_hourly.csv").read_bytes()
    clim, res, diag = mcp.long_term_from_csv_bytes(roof, "roof.csv", ref, "ref.csv",
                                                   height_m=18.0)
    assert clim.source == "long_term" and diag["target_qc"].n_excluded > 0
    assert any("shorter than 365" in w for w in res.warnings)  # the demo logger ran 3 months
    assert np.all(res.speed_ms >= 0) and all(c > 0 for c in clim.weibull_c_ms)
