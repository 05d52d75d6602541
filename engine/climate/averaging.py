"""The record's averaging period, and the correction of hourly (or longer) means for energy.

Power curves are measured on 10-minute means (IEC 61400-12-1), so a climate should describe
10-minute means. An hourly mean hides the variation of the 10-minute means within the hour, and
since power grows with V³ hourly means understate the energy. Per record with mean U and a
Gaussian spread σ_b of the 10-minute means about it, E[(U + X)³] = U³ + 3 U σ_b² (exact for a
Gaussian X). The factor per sector F_s = Σ(U³ + 3 U σ_b²) / Σ U³ is applied to the Weibull scale
as c' = c F^(1/3), which raises the sector's mean V³ by F.

σ_b² comes from the within-interval variance: σ_b² = β σ_T², with σ_T the logged standard
deviation over the interval T and β the share of that variance lying between 10-minute means,
β = 1 − V(600 s)/V(T), V(T) = ∫ S(f) (1 − sinc²(π f T)) df for the Kaimal spectrum
(:func:`between_share`). Without SD columns, σ_T = I_v U with the EN 1991-1-4 turbulence
intensity I_v = 1/ln(z/z0) (k_l = c_o = 1): a stated, model-based factor, warned about.

A long-term corrected climate is fitted on the predicted series, which has the reference's
interval (hourly, 3-hourly), even when the logger wrote 10-minute means. The factor is then
measured on the logger's own record over the concurrent period (:func:`finer_means_cube_factor`):
F_s = Σ v³ / Σ U³, v the logger's means and U the mean of the reference interval each falls in,
with no spectrum or Gaussian assumption.

References
----------
IEC 61400-1:2019 annex C (Kaimal spectrum), from memory. EN 1991-1-4:2005 eq. 4.7 (I_v).
"""
from __future__ import annotations

import numpy as np

from engine.climate.mcp import average_onto
from engine.climate.sectors import sector_index

#: Intervals at or above this are "hourly or longer" and corrected [s].
LONG_AVERAGING_S = 3000.0
#: The averaging the power curves assume [s] (IEC 61400-12-1).
CURVE_AVERAGING_S = 600.0


def averaging_interval_s(time_ns) -> float:
    """The record's nominal interval: the median step between times [s] (0 for < 2 rows)."""
    t = np.asarray(time_ns, np.int64)
    return float(np.median(np.diff(t))) / 1e9 if t.size > 1 else 0.0


def _captured(f, fs_over_f, window_s):
    x = np.pi * f * window_s
    keep = 1.0 - np.sinc(x / np.pi) ** 2          # np.sinc(y) = sin(πy)/(πy)
    return np.trapezoid(fs_over_f * f * keep, np.log(f), axis=-1)


def between_share(speed_ms, height_m, interval_s, short_s=CURVE_AVERAGING_S, n_freq=600):
    """Share β of the variance within ``interval_s`` that lies between ``short_s`` means [-].

    Notes
    -----
    β = 1 − V(short)/V(interval), V(T) = ∫ S(f)(1 − sinc²(π f T)) df, Kaimal
    f S(f)/σ² = 4 n/(1 + 6 n)^(5/3), n = f L_1/U, L_1 = 8.1 · 0.7 min(z, 60 m).
    """
    u = np.maximum(np.asarray(speed_ms, float), 0.1)[..., None]
    l1 = 8.1 * 0.7 * min(float(height_m), 60.0)
    f = np.logspace(-6, 2, n_freq)
    n = f * l1 / u
    s_over = 4.0 * n / (1.0 + 6.0 * n) ** (5.0 / 3.0) / f
    if interval_s <= short_s:
        return np.zeros(np.shape(speed_ms))
    return 1.0 - _captured(f, s_over, short_s) / _captured(f, s_over, interval_s)


def cube_factor(speed_ms, sigma_between_ms, sector, n_sectors: int):
    """F_s = Σ (U³ + 3 U σ_b²) / Σ U³ per sector [-] (1 where a sector has no wind)."""
    u = np.asarray(speed_ms, float)
    s2 = np.asarray(sigma_between_ms, float) ** 2
    g = np.asarray(sector, np.intp)
    num = np.bincount(g, u ** 3 + 3.0 * u * s2, n_sectors)
    den = np.bincount(g, u ** 3, n_sectors)
    return np.divide(num, den, out=np.ones(n_sectors), where=den > 0)


def finer_means_cube_factor(time_ns, speed_ms, direction_deg, grid_time_ns, interval_s,
                            n_sectors: int):
    """Per-sector F_s = Σ v³ / Σ U³ of a finer record against its own means over longer intervals.

    Parameters
    ----------
    time_ns, speed_ms, direction_deg : (N,) the finer record's valid rows (UTC ns, m/s, deg)
    grid_time_ns : (G,) starts of the longer intervals (the reference's times) [ns]
    interval_s : length of the longer intervals [s]
    n_sectors : direction sectors

    Returns
    -------
    (S,) factor on mean V³ [-] (1 for a sector without a covered interval)

    Notes
    -----
    U is the mean of the finer values in the interval a value falls in (intervals at least half
    covered, :func:`engine.climate.mcp.average_onto`), the sector that of the interval's vector
    mean direction, so every interval adds mean(v³) ≥ mean(v)³ to its sector (Jensen's
    inequality): F_s ≥ 1.
    """
    t = np.asarray(time_ns, np.int64)
    v = np.asarray(speed_ms, float)
    g = np.asarray(grid_time_ns, np.int64)
    u, d_mean, ok = average_onto(t, v, direction_deg, g, interval_s)
    idx = np.searchsorted(g, t, side="right") - 1
    inside = (idx >= 0) & (t < g[np.clip(idx, 0, None)] + np.int64(round(interval_s * 1e9)))
    keep = inside & ok[np.clip(idx, 0, None)]
    cell = idx[keep]
    sec = sector_index(d_mean[cell], n_sectors)
    num = np.bincount(sec, v[keep] ** 3, n_sectors)
    den = np.bincount(sec, u[cell] ** 3, n_sectors)
    return np.divide(num, den, out=np.ones(n_sectors), where=den > 0)


def averaging_correction(speed_ms, sector, n_sectors: int, interval_s: float, height_m: float,
                         roughness_m: float, sd_ms=None):
    """Per-sector cube factor for hourly or longer means, and the warning to show.

    Parameters
    ----------
    speed_ms, sector : (N,) valid interval means [m/s] and their sector index
    interval_s : the record's averaging interval [s]
    height_m, roughness_m : of the measurement [m] (spectrum scale; I_v when no SD)
    sd_ms : (N,) logged within-interval standard deviation [m/s], or None

    Returns
    -------
    (factor, note): (S,) F_s (all 1 below :data:`LONG_AVERAGING_S`) and a sentence ("" when
    no correction applies)
    """
    if interval_s < LONG_AVERAGING_S:
        return np.ones(n_sectors), ""
    u = np.asarray(speed_ms, float)
    beta = between_share(u, height_m, interval_s)
    have_sd = sd_ms is not None and np.isfinite(sd_ms).mean() > 0.5
    if have_sd:
        sd = np.where(np.isfinite(sd_ms), sd_ms, np.nanmedian(np.asarray(sd_ms) / np.maximum(u, .1)) * u)
        source = "the logged within-interval standard deviation"
    else:
        sd = u / np.log(max(height_m, 2 * roughness_m) / roughness_m)
        source = "the EN 1991-1-4 turbulence intensity 1/ln(z/z0) (no SD column: a stated model)"
    f = cube_factor(u, np.sqrt(beta) * sd, sector, n_sectors)
    total = float(np.sum(u ** 3 + 3 * u * beta * sd ** 2) / max(np.sum(u ** 3), 1e-12))
    note = (f"the record averages over {interval_s / 60:.0f} minutes, longer than the "
            f"10 minutes power curves assume: mean V³ raised by {100 * (total - 1):.1f} % "
            f"(per sector {100 * (f.min() - 1):.1f}-{100 * (f.max() - 1):.1f} %) from {source}")
    return f, note
