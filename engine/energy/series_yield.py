"""Time-series yield: energy summed over the (long-term corrected) record itself.

Each record's speed V(t), measured at the climate's height, is carried to every rotor by the
effective climate's per-sector speed ratio r_ps = c_eff,ps / c_climate,s (transfer and building
effects together), lowered by the skewed-inflow factor of the rotor's axis, and put through
the very curves the Weibull yield integrates: the density-corrected curve normalised from the
maker's curve TI to the position's TI in that sector with the
:class:`engine.core.model.EnergySettings` allowances, capped at the published curve where the
rotor gets no turbulence credit (:func:`engine.energy.aep.prepare_bins`), as the linear pieces
:func:`engine.energy.exact.exact_table` integrates exactly. The mean power times 8760 h is the
annual energy, shown beside the exact Weibull yield of the same curves; monthly and hour-of-day
energy come from the same series. An assessor checks the fit against it; self-consumption
needs its timing.

Notes
-----
E_year = 8760 h · mean_t P_T(r_ps(t) f_skew V(t); TI_ps(t)); month m: mean power over the
records of month m times the month's hours (a month without records has none); hour of day h:
mean power of the records in UTC hour h times 365 h. On a record drawn from the climate's own
Weibull distributions the two yields agree to the sampling error of the mean power.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from engine.climate.sectors import sector_index
from engine.energy import aep
from engine.energy import exact


@dataclass(frozen=True)
class SeriesYield:
    """Arrays over positions P and turbines T.

    gross_wh (P, T) [Wh/year]; net_wh (P, T); weibull_gross_wh (P, T) the exact Weibull yield
    of the same curves on the same effective climate; difference (P, T) series / Weibull − 1
    [-]; monthly_wh (P, T, 12) and hourly_wh (P, T, 24) net energy per calendar month and per
    UTC hour of day [Wh]; records : number of records used.
    """

    gross_wh: np.ndarray
    net_wh: np.ndarray
    weibull_gross_wh: np.ndarray
    difference: np.ndarray
    monthly_wh: np.ndarray
    hourly_wh: np.ndarray
    records: int


def piece_coefficients(recipe):
    """Knots (K,) and piece coefficients α [W], β [W s/m], each (T, I, K), of a curve table.

    ``recipe`` is a :class:`engine.energy.aep.BinsSetup`'s ``curve_recipe``. Piece j (from
    knot j to knot j+1) is P = α_j + β_j V; the last column is zero (above the top knot).
    Recovered from the summation-by-parts weights of :func:`engine.energy.exact.exact_table`
    (a_j = α_j − α_(j−1), b_j = β_(j−1) − β_j), so they are the same pieces.
    """
    knots, a, b = exact.exact_table(recipe)
    return knots, np.cumsum(a, axis=-1), -np.cumsum(b, axis=-1)


def curve_power_w(setup, speed_ms, sector):
    """Power of every turbine at every position and record on a setup's curves: (P, T, N) [W].

    Parameters
    ----------
    setup : :class:`engine.energy.aep.BinsSetup` (curves, TI rows per position and sector)
    speed_ms : (P, T, N) wind speed at each rotor, skew factor included [m/s]
    sector : (N,) sector index of each record
    """
    knots, alpha, beta = piece_coefficients(setup.curve_recipe)
    v = np.asarray(speed_ms, float)
    j = np.clip(np.searchsorted(knots, v, side="right") - 1, 0, len(knots) - 1)
    sec = np.asarray(sector, np.intp)
    lo = setup.ti_lo[:, sec]                   # (P, N) table rows
    frac = setup.ti_frac[:, sec][:, None, :]   # (P, 1, N)
    hi = np.minimum(lo + 1, alpha.shape[1] - 1)
    t = np.arange(alpha.shape[0])[None, :, None]
    p_lo = alpha[t, lo[:, None, :], j] + beta[t, lo[:, None, :], j] * v
    p_hi = alpha[t, hi[:, None, :], j] + beta[t, hi[:, None, :], j] * v
    return p_lo + (p_hi - p_lo) * frac


def series_yield(time_ns, speed_ms, direction_deg, climate, eff, turbines, losses,
                 weibull_gross_wh=None, energy_settings=None) -> SeriesYield:
    """Energy over a record for every position and turbine, beside the Weibull yield.

    Parameters
    ----------
    time_ns, speed_ms, direction_deg : (N,) the record's valid rows at the climate's height
        (UTC ns, m/s, deg)
    climate : :class:`engine.core.model.WindClimate` the record belongs to
    eff : :class:`engine.flow.effective.EffectiveClimate` of the assessment
    turbines, losses : the assessment's turbines and :class:`engine.core.model.Losses`
    weibull_gross_wh : (P, T) Weibull gross yield to compare with [Wh]; when None the exact
        integral of the same curves (:func:`engine.energy.exact.exact_energy_wh`)
    energy_settings : :class:`engine.core.model.EnergySettings` (the assessment's ``energy``;
        defaults when None), as in :func:`engine.chain.arrays.position_yields`

    Returns
    -------
    SeriesYield
    """
    t = np.asarray(time_ns, np.int64)
    v = np.maximum(np.asarray(speed_ms, float), 0.0)
    sec = sector_index(np.asarray(direction_deg, float), climate.n_sectors)
    c_clim = np.maximum(np.asarray(climate.weibull_c_ms, float), 1e-9)
    ratio = eff.weibull_c_ms / c_clim[None, :]                       # (P, S)
    setup = aep.prepare_bins(eff.frequency, eff.weibull_k, eff.weibull_c_ms,
                             eff.turbulence_intensity, eff.inflow_skew_deg, turbines,
                             eff.air_density_kgm3, energy_settings=energy_settings,
                             no_credit=eff.diagnostics.get("no_turbulence_credit"))
    v_ptn = v[None, None, :] * (ratio[:, None, :] * setup.skew_factor)[:, :, sec]
    power = np.maximum(curve_power_w(setup, v_ptn, sec), 0.0)
    net = aep.net_fraction(losses)
    gross = power.mean(axis=-1) * aep.HOURS_PER_YEAR
    if weibull_gross_wh is None:
        weibull_gross_wh = exact.exact_energy_wh(setup)
    month = t.astype("datetime64[ns]").astype("datetime64[M]").astype(np.int64) % 12
    hour = (t // 3_600_000_000_000) % 24
    monthly = _group_mean(power, month, 12) * aep.month_hours()[None, None, :] * net
    hourly = _group_mean(power, hour, 24) * 365.0 * net
    with np.errstate(invalid="ignore", divide="ignore"):
        diff = np.where(weibull_gross_wh > 0, gross / weibull_gross_wh - 1.0, np.nan)
    return SeriesYield(gross_wh=gross, net_wh=gross * net, weibull_gross_wh=weibull_gross_wh,
                       difference=diff, monthly_wh=monthly, hourly_wh=hourly,
                       records=int(v.size))


def _group_mean(power, group, n):
    """Mean power per group along the last axis, 0 where a group has no records: (P, T, n)."""
    cnt = np.bincount(group, minlength=n).astype(float)
    flat = power.reshape(-1, power.shape[-1])
    sums = np.stack([np.bincount(group, row, n) for row in flat]).reshape(*power.shape[:-1], n)
    return np.divide(sums, cnt, out=np.zeros_like(sums), where=cnt > 0)
