"""Energy yield: IEC 61400-12-1 method of bins against per-sector Weibull climates.

References
----------
IEC 61400-12-1:2017, Wind energy generation systems - Part 12-1: Power performance measurements
of electricity producing wind turbines (annual energy production by the method of bins).
"""
from __future__ import annotations

import numpy as np

from .weibull import weibull_cdf

HOURS_PER_YEAR = 8760.0
#: Default bin edges [m/s]: 0.5 m/s bins up to 40 m/s.
DEFAULT_EDGES_MS = np.arange(0.0, 40.0 + 1e-9, 0.5)


def power_at_speed_w(speed_ms, curve_speed_ms, curve_power_w, cut_in_ms, cut_out_ms):
    """Power from a curve table by linear interpolation; 0 below cut-in and above cut-out [W].

    Broadcasts ``speed_ms`` against one curve.
    """
    v = np.asarray(speed_ms, dtype=float)
    p = np.interp(v, np.asarray(curve_speed_ms, float), np.asarray(curve_power_w, float),
                  left=0.0, right=0.0)
    return np.where((v < cut_in_ms) | (v > cut_out_ms), 0.0, p)


def curve_on_edges_w(turbines, edges_ms=DEFAULT_EDGES_MS):
    """Power of each turbine at each bin edge [W], shape (T, J)."""
    return np.stack([power_at_speed_w(edges_ms, t.curve_speed_ms, t.curve_power_w,
                                      t.cut_in_ms, t.cut_out_ms) for t in turbines])


def aep_method_of_bins_wh(frequency, weibull_k, weibull_c_ms, power_edges_w,
                          edges_ms=DEFAULT_EDGES_MS, hours=HOURS_PER_YEAR):
    """Annual energy [Wh] by the method of bins, summed over sectors.

    Parameters
    ----------
    frequency, weibull_k, weibull_c_ms : arrays (..., S) per sector [-], [-], [m/s]
    power_edges_w : array (..., S, J) or (T, J) power at the bin edges [W]; a leading turbine
        axis is allowed when its shape broadcasts against ``(..., S, J)``
    edges_ms : bin edges V_0 < V_1 < ... [m/s]

    Notes
    -----
    AEP = N_h Σ_s f_s Σ_i [F_s(V_i) - F_s(V_{i-1})] (P_{i-1} + P_i)/2 with the Weibull CDF F_s,
    the formula of IEC 61400-12-1 with the measured distribution replaced by the sector Weibull.
    """
    F = weibull_cdf(edges_ms, np.asarray(weibull_k)[..., None], np.asarray(weibull_c_ms)[..., None])
    dF = np.diff(F, axis=-1)  # (..., S, J-1)
    pw = np.asarray(power_edges_w, dtype=float)
    p_mid = 0.5 * (pw[..., 1:] + pw[..., :-1])
    per_sector = np.sum(dF * p_mid, axis=-1)  # broadcast to (..., S)
    return hours * np.sum(np.asarray(frequency) * per_sector, axis=-1)
