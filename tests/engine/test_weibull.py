"""Weibull closed forms (engine.climate.weibull) against the Gamma-function forms and scipy.stats."""
import math

import numpy as np
import pytest
from scipy import stats

from engine.climate import weibull


def test_mean_and_power_density_closed_forms():
    """Mean c Γ(1+1/k) and power density ½ρc³Γ(1+3/k) for k 2, c 6."""
    # Closed forms with math.gamma (Justus et al. 1978); derived by hand 5.3174 m/s, 175.87 W/m²
    assert weibull.weibull_mean_ms(2.0, 6.0) == pytest.approx(6 * math.gamma(1.5), rel=1e-12)
    assert weibull.weibull_mean_ms(2.0, 6.0) == pytest.approx(5.3174, abs=1e-4)
    pd_ = weibull.weibull_power_density_wm2(2.0, 6.0, 1.225)
    assert pd_ == pytest.approx(0.5 * 1.225 * 216 * math.gamma(2.5), rel=1e-12)
    assert pd_ == pytest.approx(175.87, abs=0.01)


def test_against_scipy_moments():
    """Mean and third moment agree with scipy.stats.weibull_min (independent reference)."""
    for k, c in ((1.5, 5.0), (2.0, 7.0), (3.2, 9.5)):
        dist = stats.weibull_min(k, scale=c)
        assert weibull.weibull_mean_ms(k, c) == pytest.approx(dist.mean(), rel=1e-10)
        assert weibull.weibull_power_density_wm2(k, c, 1.2) == pytest.approx(
            0.5 * 1.2 * dist.moment(3), rel=1e-10)
        v = np.linspace(0, 25, 101)
        np.testing.assert_allclose(weibull.weibull_cdf(v, k, c), dist.cdf(v), rtol=1e-12,
                                   atol=1e-15)
        np.testing.assert_allclose(weibull.weibull_pdf(v[1:], k, c), dist.pdf(v[1:]), rtol=1e-10)


def test_rayleigh_energy_pattern_factor():
    """Rayleigh (k = 2) energy pattern factor E[V³]/V̄³ = 6/π (common practice)."""
    c = weibull.weibull_scale_from_mean(5.0, 2.0)
    epf = weibull.weibull_power_density_wm2(2.0, c, 2.0) / 5.0 ** 3
    assert epf == pytest.approx(6 / math.pi, rel=1e-12)
    # Rayleigh mean 5 m/s at 1.225 kg/m³ -> 146.2 W/m² (derived by hand)
    assert weibull.weibull_power_density_wm2(2.0, c) == pytest.approx(146.2, abs=0.05)


def test_scale_from_mean_round_trip_and_mixture():
    """c from a mean gives back the mean; a mixture's mean is the weighted sum."""
    k = np.array([1.8, 2.4])
    c = weibull.weibull_scale_from_mean(np.array([4.0, 6.0]), k)
    np.testing.assert_allclose(weibull.weibull_mean_ms(k, c), [4.0, 6.0])
    assert weibull.mixture_mean_ms([0.25, 0.75], k, c) == pytest.approx(0.25 * 4 + 0.75 * 6)


def test_cdf_bounds():
    """F is 0 for negative speeds and never exceeds 1 (probability bounds)."""
    v = np.array([-3.0, 0.0, 1.0, 100.0])
    F = weibull.weibull_cdf(v, 2.0, 6.0)
    assert F[0] == 0 and F[1] == 0 and np.all((F >= 0) & (F <= 1))
