"""Measured turbulence intensity from a logger's speed standard deviations, per sector and bin.

TI = σ_u / U per record (the logger's 10-minute standard deviation over its mean), averaged per
direction sector and speed bin over records at or above :data:`MIN_TI_SPEED_MS` (at low speeds
σ/U grows without meaning for energy; common practice). The per-sector mean is what the
energy model uses in place of the EN 1991-1-4 formula at the logger's position.

Instrument averaging: a cup anemometer responds as a first-order filter of distance constant
L_d, so it misses part of the variance; the measured σ is divided by √ρ_f, the ratio of
filtered to true variance for the Kaimal spectrum (:func:`cup_variance_ratio`).

References
----------
IEC 61400-1:2019, Wind energy generation systems - Part 1: Design requirements, annex C (Kaimal
spectrum, integral scale L_1 = 8.1 Λ_1, Λ_1 = 0.7 z below 60 m). From memory.
ISO 17713-1:2007, Meteorology - Wind measurements - Part 1: Wind tunnel test methods for
rotating anemometer performance (distance constant). From memory.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.climate.sectors import sector_index

#: Records below this mean speed are left out of the TI means [m/s] (common practice).
MIN_TI_SPEED_MS = 4.0
#: Speed-bin edges of the TI table [m/s].
TI_BIN_EDGES_MS = (4.0, 6.0, 8.0, 10.0, 12.0, 15.0, np.inf)
#: Distance constant of a typical cup anemometer [m] (from memory: 2-3 m).
DEFAULT_DISTANCE_CONSTANT_M = 2.5


def cup_variance_ratio(speed_ms, height_m, distance_constant_m=DEFAULT_DISTANCE_CONSTANT_M,
                       window_s: float = 600.0, n_freq: int = 400):
    """Share of the longitudinal variance a first-order anemometer records [-].

    Parameters
    ----------
    speed_ms : mean speed(s) U [m/s]
    height_m : measurement height z [m]
    distance_constant_m : the anemometer's distance constant L_d [m]; 0 = ideal sensor
    window_s : averaging window T [s]; frequencies below 1/T are not in a T-second σ

    Notes
    -----
    ρ_f = ∫ S(f) H(f) df / ∫ S(f) df over f > 1/T, with the Kaimal spectrum
    f S(f)/σ² = 4 f L_1/U / (1 + 6 f L_1/U)^(5/3), L_1 = 8.1 · 0.7 min(z, 60 m) (IEC 61400-1),
    and the first-order response H(f) = 1 / (1 + (2π f L_d / U)²). Integrated on a
    logarithmic frequency grid (trapezoidal rule in ln f).
    """
    u = np.maximum(np.asarray(speed_ms, float), 0.1)[..., None]
    l1 = 8.1 * 0.7 * np.minimum(np.asarray(height_m, float), 60.0)
    f = np.logspace(np.log10(1.0 / window_s), 2.0, n_freq)
    n = f * l1 / u
    fs = 4.0 * n / (1.0 + 6.0 * n) ** (5.0 / 3.0)       # f S(f)/σ², integrand in ln f
    h = 1.0 / (1.0 + (2.0 * np.pi * f * float(distance_constant_m) / u) ** 2)
    lnf = np.log(f)
    return np.trapezoid(fs * h, lnf, axis=-1) / np.trapezoid(fs, lnf, axis=-1)


def measured_ti(speed_ms, sd_ms, direction_deg, height_m, n_sectors: int = 12,
                distance_constant_m=DEFAULT_DISTANCE_CONSTANT_M, min_speed_ms=MIN_TI_SPEED_MS):
    """Measured turbulence intensity per sector, and the sector x speed-bin table.

    Parameters
    ----------
    speed_ms, sd_ms, direction_deg : (N,) valid records: mean [m/s], standard deviation [m/s],
        direction [deg]
    height_m : measurement height [m] (for the instrument correction)
    n_sectors : direction sectors
    distance_constant_m : anemometer distance constant [m]; 0 for a sonic or no correction

    Returns
    -------
    (ti_sector, table)
        (S,) mean corrected TI per sector (the all-sector mean where a sector has no record at
        or above ``min_speed_ms``) and a DataFrame ``sector_deg``, ``bin``, ``records``,
        ``ti_mean``, ``ti_p90`` per sector and bin.

    Notes
    -----
    TI_i = σ_i / (U_i √ρ_f(U_i)) (:func:`cup_variance_ratio`).
    """
    v, s, d = (np.asarray(a, float) for a in (speed_ms, sd_ms, direction_deg))
    ok = np.isfinite(v) & np.isfinite(s) & np.isfinite(d) & (v >= min_speed_ms) & (s >= 0)
    v, s, d = v[ok], s[ok], d[ok]
    if v.size == 0:
        return np.full(n_sectors, np.nan), pd.DataFrame()
    ti = s / (v * np.sqrt(cup_variance_ratio(v, height_m, distance_constant_m)))
    sec = sector_index(d, n_sectors)
    cnt = np.bincount(sec, minlength=n_sectors)
    with np.errstate(invalid="ignore", divide="ignore"):
        ti_s = np.bincount(sec, ti, n_sectors) / cnt
    ti_s = np.where(cnt > 0, ti_s, float(ti.mean()))
    edges = np.asarray(TI_BIN_EDGES_MS)
    b = np.clip(np.searchsorted(edges, v, side="right") - 1, 0, len(edges) - 2)
    df = pd.DataFrame({"sector": sec, "bin": b, "ti": ti})
    g = df.groupby(["sector", "bin"])["ti"]
    table = pd.DataFrame({"records": g.size(), "ti_mean": g.mean(),
                          "ti_p90": g.quantile(0.9)}).reset_index()
    names = [f"{edges[i]:g}-{edges[i + 1]:g}" if np.isfinite(edges[i + 1]) else f">{edges[i]:g}"
             for i in range(len(edges) - 1)]
    table.insert(0, "sector_deg", table.pop("sector") * 360.0 / n_sectors)
    table["bin"] = np.asarray(names, dtype=object)[table["bin"].to_numpy()]
    return ti_s, table
