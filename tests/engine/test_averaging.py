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
