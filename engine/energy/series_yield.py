"""Time-series yield: energy summed over the (long-term corrected) record itself.

Each record's speed V(t), measured at the climate's height, is carried to every rotor by the
effective climate's per-sector speed ratio r_ps = c_eff,ps / c_climate,s (transfer and building
effects together), lowered by the skewed-inflow factor of the rotor's axis, and put through the
same density-corrected, turbulence-averaged curves as the Weibull yield
(:func:`engine.energy.aep.turbulent_curve_table_w`, at the position's TI in that sector). The
mean power times 8760 h is the annual energy, shown beside the Weibull (method of bins) yield;
monthly and hour-of-day energy come from the same series. An assessor checks the fit against
it; self-consumption needs its timing.

Notes
-----
E_year = 8760 h · mean_t P_T(r_ps(t) f_skew V(t); TI_ps(t)); month m: mean power over the
records of month m times the month's hours (a month without records has none); hour of day h:
mean power of the records in UTC hour h times 365 h.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from engine.climate.sectors import sector_index
from engine.energy import aep


@dataclass(frozen=True)
class SeriesYield:
    """Arrays over positions P and turbines T.

    gross_wh (P, T) [Wh/year]; net_wh (P, T); weibull_gross_wh (P, T) the method of bins on the
    same effective climate; difference (P, T) series / Weibull − 1 [-]; monthly_wh (P, T, 12)
    and hourly_wh (P, T, 24) net energy per calendar month and per UTC hour of day [Wh];
    records : number of records used.
    """

    gross_wh: np.ndarray
    net_wh: np.ndarray
    weibull_gross_wh: np.ndarray
    difference: np.ndarray
    monthly_wh: np.ndarray
    hourly_wh: np.ndarray
    records: int


def _power_over_series(v_pn, ti_pn, table, grid, edges):
    """Bilinear lookup of the turbulent curve table at each record: (P, T, N) [W]."""
    step_e = edges[1] - edges[0]
    x = np.clip(v_pn / step_e, 0, len(edges) - 1.000001)
    jl = np.floor(x).astype(np.intp)
    jf = x - jl
    g_step = grid[1] - grid[0] if len(grid) > 1 else 1.0
    y = np.clip((ti_pn - grid[0]) / g_step, 0, max(len(grid) - 1.000001, 0))
    il = np.minimum(np.floor(y).astype(np.intp), max(len(grid) - 2, 0))
    ih = np.minimum(il + 1, len(grid) - 1)
    yf = y - il
    out = []
    for tab in table:  # turbines: a handful
        a = tab[il, jl] + (tab[il, jl + 1] - tab[il, jl]) * jf
        b = tab[ih, jl] + (tab[ih, jl + 1] - tab[ih, jl]) * jf
        out.append(a + (b - a) * yf)
    return np.stack(out, axis=1)


def series_yield(time_ns, speed_ms, direction_deg, climate, eff, turbines, losses,
                 weibull_gross_wh=None) -> SeriesYield:
    """Energy over a record for every position and turbine, beside the Weibull yield.

    Parameters
    ----------
    time_ns, speed_ms, direction_deg : (N,) the record's valid rows at the climate's height
        (UTC ns, m/s, deg)
    climate : :class:`engine.core.model.WindClimate` the record belongs to
    eff : :class:`engine.flow.effective.EffectiveClimate` of the assessment
    turbines, losses : the assessment's turbines and :class:`engine.core.model.Losses`
    weibull_gross_wh : (P, T) method-of-bins gross yield to compare with; computed when None

    Returns
    -------
    SeriesYield
    """
    t = np.asarray(time_ns, np.int64)
    v = np.maximum(np.asarray(speed_ms, float), 0.0)
    sec = sector_index(np.asarray(direction_deg, float), climate.n_sectors)
    c_clim = np.maximum(np.asarray(climate.weibull_c_ms, float), 1e-9)
    ratio = eff.weibull_c_ms / c_clim[None, :]                       # (P, S)
    ti = eff.turbulence_intensity
    grid = aep.ti_grid_for(ti)
    edges = aep.DEFAULT_EDGES_MS
    table = aep.turbulent_curve_table_w(turbines, eff.air_density_kgm3, grid, edges)
    P, T = eff.n_positions, len(turbines)
    power = np.empty((P, T, v.size))
    for axis in sorted({tb.axis for tb in turbines}):
        idx = [j for j, tb in enumerate(turbines) if tb.axis == axis]
        skew = aep.skew_speed_factor(eff.inflow_skew_deg, axis)    # (P, S)
        v_pn = v[None, :] * (ratio * skew)[:, sec]
        power[:, idx] = _power_over_series(v_pn, ti[:, sec], table[idx], grid, edges)
    net = aep.net_fraction(losses)
    gross = power.mean(axis=-1) * aep.HOURS_PER_YEAR
    if weibull_gross_wh is None:
        weibull_gross_wh = aep.yield_arrays(eff.frequency, eff.weibull_k, eff.weibull_c_ms, ti,
                                            eff.inflow_skew_deg, turbines,
                                            eff.air_density_kgm3, losses).gross_wh
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
