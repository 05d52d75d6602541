"""Weibull wind-speed distribution: closed forms used across the chain.

References
----------
Justus, C. G. et al. (1978), "Methods for estimating wind speed frequency distributions",
J. Appl. Meteorol. 17:350.
"""
from __future__ import annotations

import numpy as np
from scipy.special import gamma


def weibull_cdf(speed_ms, k, c_ms):
    """Weibull cumulative distribution F(V) = 1 - exp[-(V/c)^k] [-].

    Uses ``-expm1`` for accuracy at small V. Negative speeds give 0. Broadcasts.
    """
    v = np.maximum(np.asarray(speed_ms, dtype=float), 0.0)
    # (V/c)^k beyond the float range (c of a few 1e-30 m/s) is +inf, and F = 1 exactly.
    with np.errstate(over="ignore"):
        return -np.expm1(-(v / np.asarray(c_ms, dtype=float)) ** np.asarray(k, dtype=float))


def weibull_pdf(speed_ms, k, c_ms):
    """Weibull probability density f(V) = (k/c)(V/c)^(k-1) exp[-(V/c)^k] [s/m]."""
    v = np.maximum(np.asarray(speed_ms, dtype=float), 0.0)
    k = np.asarray(k, dtype=float)
    c = np.asarray(c_ms, dtype=float)
    x = v / c
    return (k / c) * x ** (k - 1.0) * np.exp(-(x ** k))


def gamma_of_shapes(k, power: float) -> np.ndarray:
    """Γ(1 + power/k) for an array of Weibull shapes [-].

    Many positions share one climate's shapes: when every row of a 2-D ``k`` is the same,
    Γ is taken on one row and broadcast (the same numbers, without a Γ per position).
    """
    k = np.asarray(k, dtype=float)
    if k.ndim == 2 and k.shape[0] > 1 and np.array_equal(k, np.broadcast_to(k[:1], k.shape)):
        return np.broadcast_to(gamma(1.0 + power / k[0]), k.shape)
    return gamma(1.0 + power / k)


def weibull_mean_ms(k, c_ms):
    """Mean speed c Γ(1 + 1/k) [m/s]."""
    return np.asarray(c_ms, dtype=float) * gamma_of_shapes(k, 1.0)


def weibull_power_density_wm2(k, c_ms, air_density_kgm3=1.225):
    """Mean wind power density ½ ρ c³ Γ(1 + 3/k) [W/m²]."""
    c = np.asarray(c_ms, dtype=float)
    return 0.5 * air_density_kgm3 * c ** 3 * gamma(1.0 + 3.0 / np.asarray(k, dtype=float))


def weibull_scale_from_mean(mean_ms, k):
    """Scale c = V̄ / Γ(1 + 1/k) [m/s] for a given mean and shape."""
    return np.asarray(mean_ms, dtype=float) / gamma(1.0 + 1.0 / np.asarray(k, dtype=float))


def mixture_mean_ms(frequency, k, c_ms, axis=-1):
    """Mean speed of a per-sector Weibull mixture Σ f_s c_s Γ(1+1/k_s) [m/s]."""
    return np.sum(np.asarray(frequency) * weibull_mean_ms(k, c_ms), axis=axis)
