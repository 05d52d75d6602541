"""A measured record to the climate an assessment uses (engine.climate.site_record), the
concurrent pairs a long-term correction keeps, and the charts drawn from them.

Independent references: the variance-ratio line's slope is σ_y/σ_x of the concurrent pairs
(Rogers, Rogers & Manwell 2005, "Comparison of the performance of four measure-correlate-predict
algorithms", J. Wind Eng. Ind. Aerodyn. 93, 243-264), computed here with numpy; the linear
method's slope is the least-squares slope (scipy.stats.linregress).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from engine.climate import fit, site_record
from engine.core.errors import InputError
from engine.report import record_charts

H = 3600 * 10**9


def _pair_files(n_ref=2 * 8760, n_site=120 * 24, seed=7):
    """An hourly reference and a shorter hourly site record that follows it (invented)."""
    rng = np.random.default_rng(seed)
    t = np.int64(1704067200) * 10**9 + np.arange(n_ref, dtype=np.int64) * H
    x = stats.weibull_min.rvs(2.0, scale=7.0, size=n_ref, random_state=rng)
    d = np.mod(240.0 + rng.normal(0, 60, n_ref), 360.0)
    y = np.maximum(0.8 * x + 0.4 + rng.normal(0, 0.6, n_ref), 0.0)[-n_site:]

    def csv(tt, vv, dd):
        return pd.DataFrame({"timestamp": pd.to_datetime(tt, utc=True).strftime(
            "%Y-%m-%dT%H:%M:%SZ"), "speed_ms": np.round(vv, 3),
            "direction_deg": np.round(dd, 1)}).to_csv(index=False).encode()
    return csv(t[-n_site:], y, d[-n_site:]), csv(t, x, d)


def test_plain_ten_minute_record_gives_the_plain_fit():
    """A 10-minute record without heights in its headers: the same climate as the plain
    import (no averaging correction below an hour), at the stated height."""
    rng = np.random.default_rng(3)
    n = 40 * 144
    df = pd.DataFrame({"timestamp": pd.date_range("2025-01-01", periods=n, freq="10min",
                                                  tz="UTC").strftime("%Y-%m-%dT%H:%M:%SZ"),
                       "speed_ms": np.round(rng.weibull(2.0, n) * 6.0, 2),
                       "direction_deg": np.round(rng.uniform(0, 360, n), 0)})
    data = df.to_csv(index=False).encode()
    lc = site_record.record_climate(data, "mast.csv", height_m=12.0)
    plain, _, _ = fit.climate_from_csv_bytes(data, "mast.csv", height_m=12.0)
    assert lc.climate.height_m == 12.0 and lc.climate.averaging_s == 600.0
    np.testing.assert_allclose(lc.climate.weibull_c_ms, plain.weibull_c_ms, rtol=1e-12)
    np.testing.assert_allclose(lc.climate.frequency, plain.frequency, rtol=1e-12)


@pytest.mark.parametrize("method", ["variance_ratio", "linear"])
def test_kept_pairs_are_the_ones_the_lines_were_fitted_on(method):
    """Per sector with a line of its own, the slope is reproduced from the kept pairs: σ_y/σ_x
    (Rogers et al. 2005, variance ratio) or the least-squares slope (scipy.stats.linregress)."""
    site, ref = _pair_files()
    lc = site_record.record_climate(site, "site.csv", height_m=10.0,
                                    reference=site_record.ReferenceFile(ref, "ref.csv",
                                                                        method=method))
    m = lc.long_term.mcp
    assert m.pair_reference_ms.size == m.n_pairs == m.pair_target_ms.size
    for row in m.sectors.itertuples():
        if row.line != "own":
            continue
        s = m.pair_sector == int(round(row.sector_deg / 30.0))
        x, y = m.pair_reference_ms[s], m.pair_target_ms[s]
        want = (np.std(y) / np.std(x) if method == "variance_ratio"
                else stats.linregress(x, y).slope)
        assert row.slope == pytest.approx(want, rel=1e-9)
    # the adjustment is the long-term mean over the concurrent target mean, minus 1
    assert m.adjustment == pytest.approx(m.long_term_mean_ms / m.target_mean_ms - 1, rel=1e-12)
    assert lc.climate.long_term_uncertainty == pytest.approx(lc.long_term.uncertainty["total"])


def test_scatter_draws_at_most_the_limit_and_the_equal_speed_line():
    site, ref = _pair_files()
    lc = site_record.record_climate(site, "site.csv",
                                    reference=site_record.ReferenceFile(ref, "ref.csv"))
    spec = record_charts.concurrent_scatter(lc.long_term.mcp, max_points=500).to_dict()
    points, line = spec["layer"]
    data = spec["datasets"]
    drawn = [v for v in data.values() if v and "sector_deg" in v[0]][0]
    assert 0 < len(drawn) <= 500
    assert [p["reference_ms"] for p in [v for v in data.values() if len(v) == 2][0]] == \
        [p["target_ms"] for p in [v for v in data.values() if len(v) == 2][0]]
    assert line["mark"]["type"] == "line"


def test_problems_are_named_by_field():
    site, ref = _pair_files(n_ref=3000, n_site=1000)
    with pytest.raises(InputError) as e:
        site_record.record_climate(site, "site.csv", height_m=-1.0, roughness_m=0.0)
    assert {w for w, _ in e.value.problems} == {"height_m", "roughness_m"}
    with pytest.raises(InputError) as e:
        site_record.record_climate(site, "site.csv", reference=site_record.ReferenceFile(
            ref, "ref.csv", height_m=0.0))
    assert e.value.problems[0][0] == "reference_height_m"


def test_hour_of_day_chart_leaves_out_hours_without_records():
    """A 3-hourly series holds records in 8 of the 24 hours: the others are not drawn as
    zero energy, and the title says so."""
    records = [10 if h % 3 == 0 else 0 for h in range(24)]
    energy = [1000.0 * (h % 3 == 0) for h in range(24)]
    spec = record_charts.series_hourly(energy, "Net energy by hour", records).to_dict()
    rows = [v for v in spec["datasets"].values()][0]
    assert [r["hour_utc"] for r in rows] == list(range(0, 24, 3))
    assert "8 of 24 hours" in str(spec["title"])


def test_a_record_quality_control_empties_says_why_before_any_fit():
    """Every speed 1e9 m/s: each row fails the plausible-speed check (speeds outside 0-50
    m/s, a common-practice limit for 10-minute means), so the message gives quality
    control's count and reason, not a fit's "check the quality-control report" for a report
    that never reaches the page."""
    import numpy as np
    from engine.core.errors import InputError
    t = np.datetime64("2025-01-01T00:00") + np.arange(500) * np.timedelta64(10, "m")
    text = "time,speed_ms,dir_deg\n" + "".join(f"{a}Z,1e9,{(7 * k) % 360}\n"
                                              for k, a in enumerate(t))
    with pytest.raises(InputError) as e:
        site_record.record_climate(text.encode(), "huge.csv")
    (w, m), = e.value.problems
    assert w == "huge.csv" and "quality control excluded 500 of 500 rows" in m, m
    assert "outside" in m, m


def test_a_record_of_calms_only_says_so():
    """Every speed 0 (calm, or a dead sensor logging zeros): quality control keeps the rows,
    and the message says how many of the valid speeds are zero rather than pointing to a
    report."""
    import numpy as np
    from engine.core.errors import InputError
    t = np.datetime64("2025-01-01T00:00") + np.arange(500) * np.timedelta64(10, "m")
    text = "time,speed_ms,dir_deg\n" + "".join(f"{a}Z,0,{(7 * k) % 360}\n"
                                              for k, a in enumerate(t))
    with pytest.raises(InputError) as e:
        site_record.record_climate(text.encode(), "calm.csv")
    (w, m), = e.value.problems
    assert "0 non-zero speeds of 500" in m and "500 zero" in m, m
