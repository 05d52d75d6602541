"""Wind shear measured at two or more heights: power-law exponent and roughness length per sector.

Per direction sector, the mean speeds over the same valid records at each height are fitted:

* power law U(z) = U_r (z/z_r)^α: least squares of ln Ū_h on ln z_h (two heights:
  α = ln(Ū_2/Ū_1) / ln(z_2/z_1));
* log law U(z) = (u*/κ) ln(z/z0): least squares of Ū_h on ln z_h, U = A ln z + B, z0 = e^(−B/A).

Only records with every height at or above :data:`MIN_SHEAR_SPEED_MS` are used (near calm the
profile is not logarithmic; common practice).

References
----------
Manwell, J. F., McGowan, J. G. and Rogers, A. L. (2009), Wind Energy Explained, 2nd ed., Wiley,
§2.3.3 (power law and logarithmic profile).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.climate.sectors import sector_index
from engine.core.errors import InputError

MIN_SHEAR_SPEED_MS = 3.0


def fit_shear(heights_m, speeds_ms, direction_deg, n_sectors: int = 12,
              min_speed_ms: float = MIN_SHEAR_SPEED_MS, min_records: int = 30):
    """Shear exponent α and roughness length z0 per sector, and for all sectors together.

    Parameters
    ----------
    heights_m : (H,) heights, H ≥ 2 [m] (above the ground or the displacement plane)
    speeds_ms : (H, N) mean speeds at each height for the same N records [m/s] (NaN = invalid)
    direction_deg : (N,) direction per record [deg]

    Returns
    -------
    DataFrame: one row per sector and a last row ``sector_deg = NaN`` for all sectors;
    columns ``records``, ``shear_exponent``, ``roughness_m`` (NaN where fewer than
    ``min_records`` or the log-law slope is not positive).
    """
    z = np.asarray(heights_m, float)
    u = np.asarray(speeds_ms, float)
    d = np.asarray(direction_deg, float)
    if z.size < 2 or u.shape[0] != z.size:
        raise InputError([("heights_m", f"must list two or more heights with a speed row each, "
                                        f"got {z.size} heights and {u.shape[0]} rows")])
    ok = np.all(np.isfinite(u) & (u >= min_speed_ms), axis=0) & np.isfinite(d)
    sec = sector_index(d[ok], n_sectors)
    G = n_sectors + 1
    grp = np.concatenate([sec, np.full(sec.size, n_sectors)])
    cnt = np.bincount(grp, minlength=G)
    mean = np.stack([np.bincount(grp, np.concatenate([row[ok], row[ok]]), G) for row in u], 1)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = mean / cnt[:, None]                              # (G, H)
        lz = np.log(z)
        lzc = lz - lz.mean()
        alpha = np.sum(np.log(mean) * lzc, axis=1) / np.sum(lzc ** 2)
        a = np.sum(mean * lzc, axis=1) / np.sum(lzc ** 2)
        b = mean.mean(axis=1) - a * lz.mean()
        z0 = np.where(a > 0, np.exp(-b / a), np.nan)
    thin = cnt < min_records
    sector_deg = np.append(np.arange(n_sectors) * 360.0 / n_sectors, np.nan)
    return pd.DataFrame({"sector_deg": sector_deg, "records": cnt,
                         "shear_exponent": np.where(thin, np.nan, alpha),
                         "roughness_m": np.where(thin, np.nan, z0)})


def sector_exponents(table) -> tuple:
    """Per-sector exponents for ``WindClimate.shear_exponent``: thin sectors take the
    all-sector value (the table's last row)."""
    a = table["shear_exponent"].to_numpy(float)
    return tuple(float(v) if np.isfinite(v) else float(a[-1]) for v in a[:-1])
