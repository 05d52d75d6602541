"""Measured turbulence from SD columns and shear from two or more heights."""
import numpy as np
import pandas as pd
import pytest
from scipy import integrate

from engine.climate import measured, shear
from engine.io import record_columns


def _two_heights(alpha=0.22, n=20000, seed=5):
    rng = np.random.default_rng(seed)
    d = rng.uniform(0, 360, n)
    u1 = 5.0 * rng.weibull(2.0, n) + 0.5
    u2 = u1 * (18.0 / 10.0) ** alpha * np.exp(rng.normal(0, 0.03, n))
    return d, u1, u2


def test_two_height_record_gives_its_generated_shear_exponent():
    """Power law U2 = U1 (z2/z1)^α (Manwell et al. 2009 §2.3.3): fitted α within 2 %."""
    d, u1, u2 = _two_heights(alpha=0.22)
    t = shear.fit_shear([10.0, 18.0], np.vstack([u1, u2]), d)
    a = t["shear_exponent"].to_numpy()
    assert a[-1] == pytest.approx(0.22, rel=0.02)
    assert np.all(np.abs(a[:-1] / 0.22 - 1) < 0.02)
    assert len(shear.sector_exponents(t)) == 12


def test_log_profile_gives_its_roughness_length():
    """Log law U = (u*/κ) ln(z/z0) at three heights, z0 = 0.3 m recovered (Manwell et al. 2009)."""
    rng = np.random.default_rng(2)
    ustar = 0.3 + rng.weibull(2.0, 5000)
    z = np.array([6.0, 10.0, 20.0])
    u = ustar[None, :] / 0.4 * np.log(z[:, None] / 0.3)
    t = shear.fit_shear(z, u, rng.uniform(0, 360, 5000))
    assert t["roughness_m"].iloc[-1] == pytest.approx(0.3, rel=1e-6)


def test_cup_variance_ratio_matches_scipy_quad():
    """ρ_f of the Kaimal spectrum through a first-order filter, against scipy.integrate.quad."""
    U, z, L = 6.0, 10.0, 2.5
    l1 = 8.1 * 0.7 * z

    def fs(f, filt):
        n = f * l1 / U
        h = 1 / (1 + (2 * np.pi * f * L / U) ** 2) if filt else 1.0
        return 4 * n / (1 + 6 * n) ** (5 / 3) * h / f
    ref = (integrate.quad(fs, 1 / 600, 100, args=(True,), limit=400, points=[0.1, 1, 10])[0]
           / integrate.quad(fs, 1 / 600, 100, args=(False,), limit=400, points=[0.1, 1, 10])[0])
    assert measured.cup_variance_ratio(U, z, L) == pytest.approx(ref, rel=2e-3)
    assert measured.cup_variance_ratio(U, z, 0.0) == pytest.approx(1.0)
    assert 0 < measured.cup_variance_ratio(3.0, z, 5.0) < measured.cup_variance_ratio(3.0, z, 1.0) < 1


def test_ti_from_sd_per_sector_and_bin():
    """σ = TI·U generated per sector; an ideal sensor (L_d = 0) gives TI back (definition)."""
    rng = np.random.default_rng(9)
    n = 30000
    d = rng.uniform(0, 360, n)
    v = 3 + 8 * rng.random(n)
    true = np.where((d > 180) & (d < 270), 0.25, 0.12)
    ti_s, table = measured.measured_ti(v, true * v, d, 10.0, distance_constant_m=0.0)
    assert ti_s[7] == pytest.approx(0.25, rel=1e-9) and ti_s[1] == pytest.approx(0.12, rel=1e-9)
    assert set(table.columns) >= {"sector_deg", "bin", "records", "ti_mean", "ti_p90"}
    ti_c, _ = measured.measured_ti(v, true * v, d, 10.0)
    assert np.all(ti_c > ti_s) and np.all(ti_c < 1.1 * ti_s)


def test_read_heights_finds_speed_sd_direction_per_height(tmp_path):
    d, u1, u2 = _two_heights(n=600)
    t = pd.date_range("2025-01-01", periods=600, freq="10min", tz="UTC")
    df = pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"), "ws_10m": u1.round(3),
                       "ws_10m_sd": (0.15 * u1).round(3), "wd_10m": d.round(1),
                       "ws_18m": u2.round(3), "ws_18m_max": (1.5 * u2).round(3)})
    data = df.to_csv(index=False).encode()
    h = record_columns.read_heights(data, "two.csv")
    assert h.heights_m.tolist() == [10.0, 18.0]
    assert h.has_sd.tolist() == [True, False]
    np.testing.assert_allclose(h.records[1].si("speed"), u2.round(3))
    np.testing.assert_allclose(h.records[1].si("direction"), d.round(1))
    assert h.columns[1]["speed"] == "ws_18m"
