"""Climate from data, from a table and from a mean speed (engine.climate.fit)."""
import hashlib
import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from engine.climate import fit as climate
from engine.climate import sectors
from engine.core.errors import InputError
from engine.climate.weibull import mixture_mean_ms


def test_mle_matches_scipy_fit():
    """Weibull MLE equals scipy.stats.weibull_min.fit(..., floc=0) on seeded samples."""
    rng = np.random.default_rng(11)
    for k, c, n in ((1.6, 5.0, 800), (2.2, 7.0, 5000), (3.5, 9.0, 2000)):
        x = stats.weibull_min.rvs(k, scale=c, size=n, random_state=rng)
        kk, cc, nn = climate.weibull_fit_mle(x)
        k_ref, _, c_ref = stats.weibull_min.fit(x, floc=0)  # scipy as independent reference
        assert kk[0] == pytest.approx(k_ref, rel=1e-4) and cc[0] == pytest.approx(c_ref, rel=1e-4)
        assert nn[0] == n


def test_mle_recovers_known_parameters_n5000():
    """k, c recovered within 4 asymptotic standard errors for n = 5000."""
    k, c, n = 2.2, 7.0, 5000
    x = stats.weibull_min.rvs(k, scale=c, size=n, random_state=np.random.default_rng(3))
    kk, cc, _ = climate.weibull_fit_mle(x)
    # Weibull MLE asymptotic variances (Fisher information; from memory):
    # var k = 6 k²/(π² n), var c = (c/k)² (1 + 6 (1 − γ)²/π²) / n
    se_k = math.sqrt(6 * k ** 2 / (math.pi ** 2 * n))
    se_c = (c / k) * math.sqrt((1 + 6 * (1 - 0.5772156649) ** 2 / math.pi ** 2) / n)
    assert abs(kk[0] - k) < 4 * se_k and abs(cc[0] - c) < 4 * se_c


def test_moments_method_is_justus_formula():
    """Moments option: k = (σ/V̄)^-1.086, c = V̄/Γ(1+1/k) (Justus et al. 1978)."""
    x = stats.weibull_min.rvs(2.0, scale=6.0, size=4000, random_state=np.random.default_rng(4))
    k, c, _ = climate.weibull_fit_moments(x)
    k_hand = (np.std(x, ddof=1) / np.mean(x)) ** -1.086
    assert k[0] == pytest.approx(k_hand, rel=1e-12)
    assert c[0] == pytest.approx(np.mean(x) / math.gamma(1 + 1 / k_hand), rel=1e-12)
    assert k[0] == pytest.approx(2.0, rel=0.06)  # Justus et al. 1978: good for 1 < k < 10


def test_grouped_fit_equals_separate_fits():
    """Fitting sectors together equals fitting each sector alone (scipy reference)."""
    rng = np.random.default_rng(8)
    a = stats.weibull_min.rvs(1.8, scale=4.0, size=1500, random_state=rng)
    b = stats.weibull_min.rvs(2.6, scale=8.0, size=2500, random_state=rng)
    g = np.r_[np.zeros(a.size, int), np.ones(b.size, int)]
    k, c, n = climate.weibull_fit_mle(np.r_[a, b], g, 3)
    for i, x in enumerate((a, b)):
        k_ref, _, c_ref = stats.weibull_min.fit(x, floc=0)
        assert k[i] == pytest.approx(k_ref, rel=1e-4) and c[i] == pytest.approx(c_ref, rel=1e-4)
    assert np.isnan(k[2]) and n.tolist() == [1500, 2500, 0]


def test_sector_index_convention():
    """Sector i is centred on i·360/n; 345..15 deg is sector 0 of 12 (engine.core.model convention)."""
    d = np.array([0.0, 14.99, 15.0, 344.99, 345.0, 360.0, 359.9, 180.0])
    assert sectors.sector_index(d, 12).tolist() == [0, 0, 1, 11, 0, 0, 0, 6]


def test_sector_sums_match_scipy_binned_statistic():
    """Blocked per-sector count, ΣV and ΣV³ equal scipy.stats.binned_statistic on shifted angles."""
    rng = np.random.default_rng(5)
    n_rows = 3 * sectors.SECTOR_BLOCK_ROWS + 1234  # several blocks and a short last one
    v = 6.0 * rng.weibull(2.0, n_rows)
    d = rng.uniform(0.0, 360.0, n_rows)
    d[:4] = (0.0, 15.0, 345.0, 360.0)  # sector edges and both ends of the circle
    idx = np.empty(n_rows, np.intp)
    counts, s1, s3 = sectors.sector_sums(v, d, 12, index_out=idx)
    # Independent reference: scipy's binning of θ + w/2 (mod 360) into 12 equal bins of 30°.
    shifted = np.mod(d + 15.0, 360.0)
    edges = np.linspace(0.0, 360.0, 13)
    ref_n = stats.binned_statistic(shifted, v, "count", bins=edges).statistic
    ref_1 = stats.binned_statistic(shifted, v, "sum", bins=edges).statistic
    ref_3 = stats.binned_statistic(shifted, v ** 3, "sum", bins=edges).statistic
    assert counts.tolist() == ref_n.astype(int).tolist()
    np.testing.assert_allclose(s1, ref_1, rtol=1e-12)
    np.testing.assert_allclose(s3, ref_3, rtol=1e-12)
    assert np.array_equal(idx, sectors.sector_index(d, 12))
    assert counts.sum() == n_rows and np.all(s1 >= 0) and np.all(s3 >= 0)


def test_sector_sums_wrap_and_reject_missing_direction():
    """Directions outside 0-360 wrap like sector_index; a NaN direction is named, not binned."""
    d = np.array([-20.0, 370.0, 725.0, 180.0])
    counts, s1, _ = sectors.sector_sums(np.ones(4), d, 12)
    # -20 deg = 340 deg (sector 11), 370 = 10 deg and 725 = 5 deg (sector 0), 180 (sector 6).
    assert counts.tolist() == [2, 0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1]
    with pytest.raises(InputError, match="direction_deg"):
        sectors.sector_sums(np.ones(3), np.array([10.0, np.nan, 20.0]), 12)


def _series(seed=21, n=20000):
    rng = np.random.default_rng(seed)
    d = rng.choice([0.0, 90.0, 180.0, 270.0], size=n, p=[0.1, 0.2, 0.3, 0.4])
    d = np.mod(d + rng.uniform(-10, 10, n), 360)
    k = np.select([d < 45, d < 135, d < 225], [1.7, 2.0, 2.3], 2.6)
    c = np.select([d < 45, d < 135, d < 225], [4.0, 5.0, 6.0], 7.0)
    v = c * rng.weibull(k)
    t = np.datetime64("2023-01-01", "ns").astype(np.int64) + np.arange(n) * 3600 * 10 ** 9
    return v, np.where(d > 315, d - 360 + 360, d), t


def test_climate_from_series_tables():
    """Per-sector frequency, fits, mean speed, power density, rose, monthly and diurnal means."""
    v, d, t = _series()
    s = climate.climate_from_series(v, d, t, height_m=10.0, n_sectors=4)
    sec = sectors.sector_index(d, 4)
    np.testing.assert_allclose(s.climate.frequency, np.bincount(sec, minlength=4) / v.size)
    for i in range(4):
        k_ref, _, c_ref = stats.weibull_min.fit(v[sec == i], floc=0)  # scipy reference
        assert s.climate.weibull_k[i] == pytest.approx(k_ref, rel=1e-4)
        assert s.climate.weibull_c_ms[i] == pytest.approx(c_ref, rel=1e-4)
    assert s.mean_speed_ms == pytest.approx(v.mean())
    assert s.power_density_wm2 == pytest.approx(0.5 * 1.225 * np.mean(v ** 3))
    rose = s.rose.drop(columns="sector_deg").to_numpy()
    assert rose.sum() == pytest.approx(1.0)
    np.testing.assert_allclose(rose.sum(axis=1), s.climate.frequency)
    ts_ = pd.to_datetime(t, utc=True)  # pandas groupby as independent reference
    monthly = pd.Series(v).groupby(ts_.month).mean().to_numpy()
    diurnal = pd.Series(v).groupby(ts_.hour).mean().to_numpy()
    np.testing.assert_allclose(s.monthly_mean_ms, monthly)
    np.testing.assert_allclose(s.diurnal_mean_ms, diurnal)
    assert len(s.climate.monthly_mean_ms) == 12 and s.climate.source == "measured"
    assert all(c > 0 for c in s.climate.weibull_c_ms)  # non-negative speeds


def test_thin_sector_borrows_all_sector_shape():
    """A sector with too few records keeps its mean speed with the all-sector k."""
    v, d, t = _series(n=3000)
    d = d.copy()
    d[:5] = 45.0  # five records in sector 45 deg of 8
    s = climate.climate_from_series(v, d, t, height_m=10.0, n_sectors=8)
    row = s.sectors.iloc[1]
    assert row["fit"] == "all-sector shape" and row["weibull_k"] == pytest.approx(s.all_k)
    assert row["weibull_mean_speed_ms"] == pytest.approx(row["mean_speed_ms"])
    assert any("fewer than" in n for n in s.notes)


def test_too_few_records_refused():
    """Fewer than 10 valid speeds: InputError naming the record."""
    with pytest.raises(InputError):
        climate.climate_from_series(np.ones(5), np.zeros(5), height_m=10.0)


def test_climate_from_csv_bytes_end_to_end():
    """Upload to climate: source, record hash, QC report and air density from the record."""
    v, d, t = _series(n=3000)
    temp = np.full(v.size, 12.0)
    press = np.full(v.size, 985.0)
    df = pd.DataFrame({"timestamp": pd.to_datetime(t, utc=True).strftime("%Y-%m-%dT%H:%M:%SZ"),
                       "speed_ms": np.round(v, 3), "direction_deg": np.round(d, 2),
                       "temperature_c": temp, "pressure_hpa": press})
    data = df.to_csv(index=False).encode()
    clim, rep, diag = climate.climate_from_csv_bytes(data, "m.csv", height_m=12.0)
    assert clim.record_sha256 == hashlib.sha256(data).hexdigest() and clim.record_file == "m.csv"
    assert clim.height_m == 12.0 and rep.n_valid == 3000
    # ρ = p/(R T) with R = 287.05 J/(kg K) (ISO 2533)
    assert diag["summary"].air_density_kgm3 == pytest.approx(98500 / (287.05 * 285.15))
    with pytest.raises(InputError):
        climate.climate_from_csv_bytes(data, height_m=10.0, max_bytes=1000)


def test_mean_speed_screening_climate():
    """Mean speed only: Rayleigh c = 2V̄/√π, labelled lower confidence."""
    c = climate.climate_from_mean_speed(5.0, height_m=10.0, n_sectors=12)
    assert c.source == "mean_speed" and "lower confidence" in c.label
    assert c.weibull_c_ms[0] == pytest.approx(2 * 5.0 / math.sqrt(math.pi))  # Rayleigh
    assert mixture_mean_ms(c.frequency, c.weibull_k, c.weibull_c_ms) == pytest.approx(5.0)


def test_a_mean_speed_too_small_for_a_climate_is_one_problem_named_by_the_mean():
    """1e-9 m/s passes "> 0" but its Rayleigh scale 2V/sqrt(pi) is below the climate's 0.1 m/s
    floor for c in every sector: one message naming the mean, not one per sector."""
    with pytest.raises(InputError) as e:
        climate.climate_from_mean_speed(1e-9, height_m=10.0, n_sectors=12)
    (w, m), = e.value.problems
    assert w == "mean_speed_ms" and m.startswith("must be >= 0.1"), m


def test_table_climate_accepts_percent():
    """A per-sector table in percent is normalised; bad entries raise InputError."""
    c = climate.climate_from_table([25, 25, 50], [2, 2, 2], [5, 6, 7], height_m=10.0)
    assert c.frequency == (0.25, 0.25, 0.5) and c.source == "table"
    with pytest.raises(InputError):
        climate.climate_from_table([0.5, 0.5], [2], [5, 6], height_m=10.0)


def test_mle_on_logged_resolution_matches_scipy():
    """Speeds logged at 0.01 m/s (weighted repeated values) fit as scipy fits the same data."""
    rng = np.random.default_rng(17)
    x = np.round(stats.weibull_min.rvs(2.1, scale=6.5, size=20000, random_state=rng), 2)
    x = x[x > 0]
    g = (np.arange(x.size) % 3)
    k, c, n = climate.weibull_fit_mle(x, g, 3)
    for i in range(3):
        k_ref, _, c_ref = stats.weibull_min.fit(x[g == i], floc=0)  # scipy reference
        assert k[i] == pytest.approx(k_ref, rel=1e-4) and c[i] == pytest.approx(c_ref, rel=1e-4)
        assert n[i] == np.count_nonzero(g == i)


def test_sector_sums_agree_with_sector_index_on_awkward_directions():
    """Edges, far-out and negative directions: the blocked sums bin exactly as sector_index."""
    rng = np.random.default_rng(11)
    for n in (7, 12, 16, 36):
        w = 360.0 / n
        edges = (np.arange(-n, 2 * n) + 0.5) * w  # every sector edge, also beyond one turn
        d = np.concatenate([edges, np.nextafter(edges, -np.inf), np.nextafter(edges, np.inf),
                            rng.uniform(-720.0, 1080.0, 5000), [0.0, 360.0, 1e6, -1e6]])
        idx = np.empty(d.size, np.intp)
        counts, _, _ = sectors.sector_sums(np.ones(d.size), d, n, index_out=idx)
        ref = sectors.sector_index(d, n)
        assert np.array_equal(idx, ref), n
        # Independent of both: the definition i = floor((θ mod 360)/w + 1/2) mod n, counted by
        # numpy's histogram (common practice: sectors centred on multiples of 360/n).
        hist, _ = np.histogram(np.mod(np.mod(d, 360.0) + w / 2, 360.0), bins=n,
                               range=(0.0, 360.0))
        assert int(np.abs(hist - counts).sum()) <= 2 * 3 * n  # only exact-edge ties differ
