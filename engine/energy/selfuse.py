"""Self-consumption: an hourly generation series against an hourly load, for one typical year.

Where no measured hourly record is used, the generation series is *synthesised* from the sector
climate. Its shape rests on assumptions, stated here and in ``docs/energy.md``:

* hourly mean speeds are Weibull distributed with the position's (frequency-weighted) shape k;
* consecutive hours are correlated: a Gaussian AR(1) process with lag-1 autocorrelation
  :data:`HOURLY_AUTOCORRELATION`, mapped to the Weibull marginal (a Gaussian copula);
* a monthly shape (the climate's ``monthly_mean_ms`` when given, else
  :data:`DEFAULT_MONTHLY_FACTOR`, windier in winter) and a diurnal shape
  (:data:`DEFAULT_DIURNAL_FACTOR`, an afternoon maximum) multiply the speed;
* the series is seeded (:data:`SERIES_SEED`), so a site always gets the same series;
* power follows the turbine's curve; the series only *shares out* the year's energy from the
  method of bins, which stays the authoritative total.

The typical load profiles (:data:`LOAD_SHAPES`) are **invented** shapes (a household, an office,
a workshop), not measurements: use a measured profile (``load_profile: custom``) when there is
one. Hourly steps overstate self-consumption against what a meter sees within the hour (a
gust above the load is exported even if the hour's mean is below it), so the share is an upper
estimate.

References
----------
Box, G. E. P. and Jenkins, G. M. (1976), "Time Series Analysis: Forecasting and Control",
Holden-Day (AR(1) process). Nelsen, R. B. (2006), "An Introduction to Copulas", 2nd ed.,
Springer (Gaussian copula). Luthander, R. et al. (2015), "Photovoltaic self-consumption in
buildings: a review", Applied Energy 142, 80-94 (definition of self-consumption and the
effect of time resolution).
"""
from __future__ import annotations

import functools

import numpy as np
from scipy import special

HOURS_PER_YEAR = 8760
MONTH_DAYS = (31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31)
#: Lag-1 autocorrelation of hourly mean wind speed (assumption; typical 0.9-0.97, from memory).
HOURLY_AUTOCORRELATION = 0.95
SERIES_SEED = 61400
#: Monthly speed factors, January first (assumption: +-15 % cosine, windiest in mid-January).
DEFAULT_MONTHLY_FACTOR = tuple(float(v) for v in 1.0 + 0.15 * np.cos(2 * np.pi * np.arange(12) / 12))
#: Speed factor by hour of day 0..23 (assumption: +-10 % cosine, maximum at 14:00).
DEFAULT_DIURNAL_FACTOR = tuple(float(v) for v in
                               1.0 + 0.10 * np.cos(2 * np.pi * (np.arange(24) - 14) / 24))

# Invented typical load shapes: relative use in each hour 0..23 on weekdays, Saturdays and
# Sundays, and a monthly factor (January first). Scaled to ``annual_load_kwh``.
_HOUSE_DAY = (0.35, 0.3, 0.28, 0.28, 0.3, 0.4, 0.8, 1.2, 1.0, 0.7, 0.6, 0.6,
              0.65, 0.6, 0.55, 0.6, 0.8, 1.2, 1.6, 1.6, 1.4, 1.1, 0.8, 0.5)
_HOUSE_END = (0.4, 0.35, 0.3, 0.3, 0.3, 0.35, 0.5, 0.8, 1.1, 1.2, 1.1, 1.0,
              1.0, 0.9, 0.85, 0.9, 1.0, 1.3, 1.6, 1.5, 1.3, 1.1, 0.8, 0.5)
_OFFICE_DAY = (0.2, 0.2, 0.2, 0.2, 0.2, 0.25, 0.4, 0.8, 1.5, 1.7, 1.7, 1.7,
               1.6, 1.7, 1.7, 1.6, 1.5, 1.1, 0.6, 0.35, 0.3, 0.25, 0.2, 0.2)
_OFFICE_END = (0.2,) * 24
_SHOP_DAY = (0.15, 0.15, 0.15, 0.15, 0.15, 0.2, 0.6, 1.6, 1.9, 1.9, 1.9, 1.6,
             1.3, 1.9, 1.9, 1.8, 1.2, 0.5, 0.2, 0.15, 0.15, 0.15, 0.15, 0.15)
_SHOP_SAT = tuple(v if h < 13 else 0.15 for h, v in enumerate(_SHOP_DAY))
_SHOP_SUN = (0.15,) * 24
LOAD_SHAPES = {
    "household": (_HOUSE_DAY, _HOUSE_END, _HOUSE_END,
                  (1.25, 1.15, 1.05, 0.95, 0.9, 0.85, 0.85, 0.85, 0.9, 1.0, 1.1, 1.2)),
    "office": (_OFFICE_DAY, _OFFICE_END, _OFFICE_END,
               (1.1, 1.05, 1.0, 0.95, 0.95, 1.0, 1.0, 0.9, 0.95, 1.0, 1.05, 1.05)),
    "workshop": (_SHOP_DAY, _SHOP_SAT, _SHOP_SUN, (1.0,) * 12),
}
LOAD_LABELS = {
    "household": "typical household (invented profile)",
    "office": "typical small office (invented profile)",
    "workshop": "typical workshop (invented profile)",
    "none": "no own use: every kWh exported",
    "custom": "the site's own hourly load",
}


def calendar():
    """Month (0..11), hour of day (0..23) and weekday (0 = Monday) of each hour of the year.

    A non-leap year that starts on a Monday (a convention of the typical year).
    """
    day = np.arange(HOURS_PER_YEAR) // 24
    month = np.repeat(np.arange(12), np.array(MONTH_DAYS) * 24)
    return month, np.arange(HOURS_PER_YEAR) % 24, day % 7


def unit_speed_series(weibull_k, monthly_factor=None, diurnal_factor=DEFAULT_DIURNAL_FACTOR,
                      rho=HOURLY_AUTOCORRELATION, seed=SERIES_SEED):
    """Synthetic hourly speed relative to the yearly mean, one row per shape k [-].

    Parameters
    ----------
    weibull_k : array_like, shape (P,)
        Weibull shape of each position's hourly speeds.
    monthly_factor : 12 floats or None
        Relative monthly mean speeds (normalised here); :data:`DEFAULT_MONTHLY_FACTOR` if None.
    diurnal_factor : 24 floats
        Relative speed by hour of day (normalised here).
    rho : float
        Lag-1 autocorrelation of the underlying Gaussian AR(1) process.

    Returns
    -------
    ndarray, shape (P, 8760)
        Non-negative, mean 1 in each row.

    Notes
    -----
    z_t = rho z_(t-1) + sqrt(1 - rho^2) e_t with e_t ~ N(0, 1) (stationary, unit variance);
    u_t = (-ln(1 - Phi(z_t)))^(1/k) / Gamma(1 + 1/k) has a unit-mean Weibull marginal; the
    monthly and diurnal factors multiply u_t and the row is rescaled to mean 1.
    """
    k = np.atleast_1d(np.asarray(weibull_k, float))
    month, hour, _ = calendar()
    m = np.asarray(DEFAULT_MONTHLY_FACTOR if monthly_factor is None or len(monthly_factor) != 12
                   else monthly_factor, float)
    d = np.asarray(diurnal_factor, float)
    shape = (m / m.mean())[month] * (d / d.mean())[hour]
    # u = expo^(1/k) as exp(ln(expo)/k): one exponential per element, written in place.
    u = np.divide(_log_exponential_series(float(rho), int(seed))[None, :], k[:, None])
    np.exp(u, out=u)
    u *= shape[None, :]
    u /= u.mean(axis=1, keepdims=True)  # the Gamma(1 + 1/k) of the unit mean cancels here
    return u


@functools.lru_cache(maxsize=4)
def _log_exponential_series(rho: float, seed: int) -> np.ndarray:
    """ln(-ln(1 - Phi(z_t))) of the seeded AR(1) series z_t (cached; read only)."""
    from scipy import signal  # imported here: it takes a second, and only this needs it

    rng = np.random.default_rng(seed)
    e = rng.standard_normal(HOURS_PER_YEAR)
    z = signal.lfilter([np.sqrt(1.0 - rho ** 2)], [1.0, -rho], e,
                       zi=[rho * rng.standard_normal()])[0]
    # -ln(1 - Phi(z)) = -ln Phi(-z), in log form so the tails stay finite.
    out = np.log(-special.log_ndtr(-z))
    out.flags.writeable = False
    return out


def generation_shares(mean_speed_ms, unit_series, curve_speed_ms, curve_power_w):
    """Share of the year's energy generated in each hour, for one turbine [-].

    Parameters
    ----------
    mean_speed_ms : array_like, shape (P,)
        Mean hub-height speed of each position [m/s].
    unit_series : ndarray, shape (P, 8760)
        Relative hourly speed (:func:`unit_speed_series`).
    curve_speed_ms, curve_power_w : the turbine's power curve [m/s], [W]

    Returns
    -------
    ndarray, shape (P, 8760)
        Each row sums to 1 (all zeros where the series never turns the rotor).
    """
    v = np.asarray(mean_speed_ms, float)[:, None] * unit_series
    pw = np.interp(v, curve_speed_ms, curve_power_w, left=0.0, right=0.0)
    total = pw.sum(axis=1, keepdims=True)
    return np.divide(pw, total, out=np.zeros_like(pw), where=total > 0)


def typical_load_kwh(profile: str, annual_kwh: float, hourly_kwh=()):
    """Hourly load of the typical year [kWh in each hour], shape (8760,).

    ``profile`` is a key of :data:`LOAD_SHAPES` (invented shapes scaled to ``annual_kwh``),
    ``custom`` (``hourly_kwh``: 24 values repeated every day, or 8760 values, used as given) or
    ``none`` (zero load).
    """
    if profile == "none":
        return np.zeros(HOURS_PER_YEAR)
    if profile == "custom":
        h = np.asarray(hourly_kwh, float)
        return np.tile(h, HOURS_PER_YEAR // 24) if h.size == 24 else h.copy()
    day, sat, sun, monthly = LOAD_SHAPES[profile]
    month, hour, weekday = calendar()
    shapes = np.array([day, sat, sun], float)
    which = np.where(weekday < 5, 0, np.where(weekday == 5, 1, 2))
    raw = shapes[which, hour] * np.asarray(monthly, float)[month]
    return raw * (float(annual_kwh) / raw.sum())


def self_consumed_kwh(generation_kwh, load_kwh, block_rows=256):
    """Energy used on site, sum over hours of min(generation, load) [kWh/year].

    Parameters
    ----------
    generation_kwh : ndarray, shape (R, H)
        Generation in each hour [kWh].
    load_kwh : ndarray, shape (H,)
        Load in each hour [kWh].

    Returns
    -------
    ndarray, shape (R,)
        Never more than the generation nor the load (both summed over the hours).

    Notes
    -----
    E_self = sum_t min(G_t, L_t); the rest of the generation, G_t - min(G_t, L_t), is exported
    (Luthander et al. 2015). Rows are worked in blocks to bound the scratch memory.
    """
    g = np.asarray(generation_kwh, float)
    load = np.asarray(load_kwh, float)
    out = np.empty(g.shape[0])
    for start in range(0, g.shape[0], block_rows):
        out[start:start + block_rows] = np.minimum(g[start:start + block_rows], load).sum(axis=1)
    return out


#: Speed step of the power look-up table of the fast path [m/s].
TABLE_STEP_MS = 0.01


MIN_HOURLY_SUM_W = 1e-6
"""Below this sum of hourly power [W] a row's series is taken as no generation."""


def _used_on_site(mean_speed_ms, unit, net, curve_speed_ms, curve_power_w, load, scratch):
    """Sum over hours of min(G_t, L_t) for one turbine at P positions [kWh/year], (P,).

    The same numbers as :func:`generation_shares` then :func:`self_consumed_kwh`, with the
    curve read from a table at :data:`TABLE_STEP_MS` steps (nearest step: within 0.005 m/s)
    and every step in place on ``scratch`` (v, i, p of shape (P, H)).
    """
    v, i, p0 = scratch
    table = np.interp(np.arange(0.0, float(curve_speed_ms[-1]) + 3 * TABLE_STEP_MS,
                                TABLE_STEP_MS), curve_speed_ms, curve_power_w,
                      left=0.0, right=0.0).astype(v.dtype)
    table[-1] = 0.0  # every speed beyond the curve reads the last (zero) entry
    np.multiply(unit, (np.asarray(mean_speed_ms, float) / TABLE_STEP_MS)[:, None].astype(v.dtype),
                out=v)
    v += 0.5  # round to the nearest step
    np.minimum(v, table.size - 1.0, out=v)
    np.copyto(i, v, casting="unsafe")  # floor (v >= 0)
    np.take(table, i, out=p0)  # power in each hour [W]
    total = p0.sum(axis=1, dtype=float)
    # A curve that reads below a microwatt in every hour makes nothing to use on site; the
    # floor also keeps net / total inside float32 (a 1e-44 W curve knot once overflowed it).
    p0 *= np.divide(net, total, out=np.zeros_like(total), where=total > MIN_HOURLY_SUM_W)[
        :, None].astype(p0.dtype)
    np.minimum(p0, load.astype(p0.dtype)[None, :], out=p0)
    return p0.sum(axis=1, dtype=float)


def self_consumed_share(mean_speed_ms, weibull_k, net_kwh, turbines, economics,
                        monthly_mean_ms=(), block_rows=256):
    """Self-consumed share of each position x turbine's net energy [-], shape (P, T).

    The hourly series shares out each row's net energy (as :func:`generation_shares`), set
    against the load (:func:`typical_load_kwh`); the share is E_self / E (0 where E = 0).
    Positions are worked in blocks of ``block_rows`` on reused scratch arrays.
    """
    net = np.asarray(net_kwh, float)
    P, T = net.shape
    mean = np.asarray(mean_speed_ms, float)
    k = np.asarray(weibull_k, float)
    load = typical_load_kwh(economics.load_profile, economics.annual_load_kwh,
                            economics.load_hourly_kwh)
    share = np.zeros((P, T))
    if not load.any() or P == 0:
        return share
    months = monthly_mean_ms if len(monthly_mean_ms) == 12 else None
    n = min(P, block_rows)
    # Single precision on the hourly arrays halves the memory traffic; the sums over 8760
    # hours stay within 1e-6 relative (numpy sums pairwise).
    f32 = np.float32
    scratch = (np.empty((n, HOURS_PER_YEAR), f32), np.empty((n, HOURS_PER_YEAR), np.int32),
               np.empty((n, HOURS_PER_YEAR), f32))
    for start in range(0, P, block_rows):  # blocks of positions, not records
        rows = slice(start, min(P, start + block_rows))
        m = rows.stop - rows.start
        unit = unit_speed_series(k[rows], months).astype(f32)
        work = tuple(a[:m] for a in scratch)
        for j, tur in enumerate(turbines):  # one pass per turbine model
            used = _used_on_site(mean[rows], unit, net[rows, j], tur.curve_speed_ms,
                                 tur.curve_power_w, load, work)
            share[rows, j] = np.divide(used, net[rows, j], out=np.zeros(m),
                                       where=net[rows, j] > 1e-9)
    return np.clip(share, 0.0, 1.0)
