"""Averaging period detected; hourly means corrected for the cube of the wind."""
import numpy as np
import pytest
from scipy import integrate, stats

from engine.climate import averaging


def test_interval_detected():
    t10 = np.arange(100, dtype=np.int64) * 600 * 10**9
    assert averaging.averaging_interval_s(t10) == 600.0
    assert averaging.averaging_interval_s(t10 * 6) == 3600.0


def test_gaussian_cube_moment_is_exact():
    """E[(U + X)³] = U³ + 3Uσ² for X ~ N(0, σ²) (Gaussian moments; scipy.stats as reference)."""
    U, s = 6.0, 1.3
    ref = stats.norm(U, s).moment(3)
    f = averaging.cube_factor([U], [s], [0], 1)
    assert f[0] * U ** 3 == pytest.approx(ref, rel=1e-12)


def test_between_share_matches_quad_and_is_bounded():
    """β = 1 − V(600)/V(3600) on the Kaimal spectrum, against scipy.integrate.quad."""
    U, z = 6.0, 10.0
    l1 = 8.1 * 0.7 * z

    def v(T):
        def g(lf):
            f = np.exp(lf)
            n = f * l1 / U
            return 4 * n / (1 + 6 * n) ** (5 / 3) * (1 - np.sinc(f * T) ** 2)
        return integrate.quad(g, np.log(1e-6), np.log(100), limit=500)[0]
    ref = 1 - v(600) / v(3600)
    beta = float(averaging.between_share(U, z, 3600.0))
    assert beta == pytest.approx(ref, rel=5e-3)
    assert 0 < beta < 1
    assert float(averaging.between_share(U, z, 600.0)) == 0.0


def test_hourly_is_corrected_and_warned_ten_minute_is_not():
    rng = np.random.default_rng(1)
    u = 5 * rng.weibull(2, 5000)
    sec = rng.integers(0, 12, 5000)
    f, note = averaging.averaging_correction(u, sec, 12, 3600.0, 10.0, 0.3, sd_ms=0.2 * u)
    assert np.all(f > 1) and np.all(f < 1.2) and "60 minutes" in note
    f2, note2 = averaging.averaging_correction(u, sec, 12, 3600.0, 10.0, 0.3)
    assert np.all(f2 > 1) and "stated model" in note2
    f3, note3 = averaging.averaging_correction(u, sec, 12, 600.0, 10.0, 0.3, sd_ms=0.2 * u)
    assert np.all(f3 == 1) and note3 == ""


def test_finer_means_cube_factor_hand_value():
    """Two whole hours of 10-minute means, hour 1 three at 4 and three at 6 m/s, hour 2 six at
    8 m/s, one sector: F = Σ v³ / Σ U³ (per value) = (3·64 + 3·216 + 6·512) / (6·125 + 6·512)
    = 3912/3822 = 1.02355 (hand). A half-empty hour is left out (coverage)."""
    h = 3600 * 10**9
    t = np.arange(12, dtype=np.int64) * 600 * 10**9
    v = np.array([4.0, 6.0] * 3 + [8.0] * 6)
    f = averaging.finer_means_cube_factor(t, v, np.zeros(12), np.array([0, h]), 3600.0, 1)
    assert f[0] == pytest.approx(3912.0 / 3822.0, rel=1e-12)
    thin = np.r_[0:6, 6:8]  # hour 2 with two values of six: not used
    f2 = averaging.finer_means_cube_factor(t[thin], np.r_[v[:6], 2.0, 14.0], np.zeros(8),
                                           np.array([0, h]), 3600.0, 1)
    assert f2[0] == pytest.approx((3 * 64 + 3 * 216) / (6 * 125.0), rel=1e-12)


def test_finer_means_cube_factor_is_the_gaussian_cube_moment():
    """Hourly means U with Gaussian 10-minute deviations σ: F → E[(U + X)³]/U³ = 1 + 3σ²/U²
    (scipy.stats.norm third raw moment as the reference), and F ≥ 1 in every sector."""
    rng = np.random.default_rng(8)
    hours, per = 20000, 6
    U, s = 7.0, 0.9
    t = (np.arange(hours * per, dtype=np.int64) * 600) * 10**9
    dev = rng.normal(0.0, s, (hours, per))
    dev -= dev.mean(axis=1, keepdims=True)          # the hour's mean stays U
    dev *= np.sqrt(per / (per - 1.0))                # population variance of each hour → σ²
    v = (U + dev).ravel()
    d = np.repeat(rng.uniform(0, 360, hours), per)
    grid = np.arange(hours, dtype=np.int64) * 3600 * 10**9
    f = averaging.finer_means_cube_factor(t, v, d, grid, 3600.0, 12)
    ref = stats.norm(U, s).moment(3) / U ** 3
    np.testing.assert_allclose(f, ref, rtol=2e-3)
    assert np.all(f >= 1.0)
