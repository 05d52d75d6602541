"""Field spot readings: measured speed ratio with its confidence interval, beside the model.

An assessor records short paired readings: a handheld anemometer at the candidate position and,
at the same moments, the reference the climate describes (its station, or a sensor standing in
for it). The measured ratio is set beside the building model's speed-up for the sector the wind
came from, and may replace it (calibration).

Assumptions, stated because the site file does not record them: the handheld reading is taken
at the position's hub height; the reference reading is at ``reference_height_m`` in the
climate's own terrain (its roughness and displacement).

Method
------
Least squares through the origin, y = r x (x reference, y position), the usual fit for paired
anemometer comparisons: it weights the higher speeds that carry the energy and needs no
intercept, since both read zero in calm air.

    r = Σ x y / Σ x²,   s² = Σ (y − r x)² / (n − 1),   SE(r) = s / sqrt(Σ x²),
    CI = r ± t_{n−1, (1+c)/2} SE(r).

The measured building speed-up divides r by the terrain transfer from the reference to the hub
(:func:`engine.flow.profiles.transfer_speed_ratio`), so it compares like with like with the model's
speed factor. Short readings sample a few minutes of one weather situation: their interval
states sampling error only, not how representative the minutes were.

References
----------
Montgomery, D. C., Peck, E. A. and Vining, G. G., Introduction to Linear Regression Analysis,
regression through the origin (standard textbook result).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
from scipy.special import stdtrit  # Student's t quantile, without importing scipy.stats

from engine.climate.sectors import sector_index
from engine.flow import profiles
from engine.core.errors import InputError, Problems

CONFIDENCE = 0.95


def speed_ratio_through_origin(position_ms, reference_ms, group=None, confidence=CONFIDENCE):
    """Ratio of position to reference speed, with its confidence interval.

    Parameters
    ----------
    position_ms, reference_ms : paired readings [m/s], shape (N,)
    group : (N,) int, reading set of each pair (0..G−1); one set when None
    confidence : two-sided confidence level [-]

    Returns
    -------
    dict of (G,) arrays: ``ratio``, ``ci_low``, ``ci_high``, ``standard_error``, ``n``

    Notes
    -----
    r = Σxy/Σx², SE = sqrt(Σ(y − r x)²/(n − 1) / Σx²), CI = r ± t SE (see module docstring).
    """
    y = np.asarray(position_ms, float)
    x = np.asarray(reference_ms, float)
    g = np.zeros(len(x), int) if group is None else np.asarray(group, int)
    G = int(g.max()) + 1 if len(g) else 0
    sxx = np.bincount(g, x * x, G)
    sxy = np.bincount(g, x * y, G)
    n = np.bincount(g, None, G)
    p = Problems()
    for i in np.flatnonzero(sxx <= 0):
        p.add(f"spot_readings[{i}].reference_speed_ms",
              "all reference readings are 0 m/s; record readings while the wind blows")
    for i in np.flatnonzero(n < 3):
        p.add(f"spot_readings[{i}].position_speed_ms", "needs at least 3 paired readings")
    p.raise_if_any()
    r = sxy / sxx
    resid = np.bincount(g, (y - r[g] * x) ** 2, G)
    se = np.sqrt(resid / (n - 1) / sxx)
    t = stdtrit(n - 1, 0.5 * (1.0 + confidence))
    return {"ratio": r, "ci_low": np.maximum(r - t * se, 0.0), "ci_high": r + t * se,
            "standard_error": se, "n": n}


def spot_comparison(assessment, eff) -> pd.DataFrame:
    """One row per spot reading set: measured ratio and interval beside the model.

    Parameters
    ----------
    assessment : :class:`engine.core.model.Assessment`
    eff : :class:`engine.flow.effective.EffectiveClimate` before calibration

    Returns
    -------
    DataFrame with ``position_id``, ``direction_deg``, ``sector``, ``n``, ``measured_ratio``,
    ``ci_low``, ``ci_high`` (position / reference speed), ``terrain_transfer`` (reference to
    hub, no buildings), ``measured_speedup``, ``speedup_ci_low``, ``speedup_ci_high`` (measured
    ratio / transfer), ``model_speedup`` (the model's speed factor), ``use_for_calibration``.
    """
    readings = assessment.spot_readings
    cols = ["position_id", "direction_deg", "sector", "n", "measured_ratio", "ci_low", "ci_high",
            "terrain_transfer", "measured_speedup", "speedup_ci_low", "speedup_ci_high",
            "model_speedup", "use_for_calibration"]
    if not readings:
        return pd.DataFrame({c: [] for c in cols})
    lengths = np.array([len(s.position_speed_ms) for s in readings])
    group = np.repeat(np.arange(len(readings)), lengths)
    pos = np.concatenate([np.asarray(s.position_speed_ms, float) for s in readings])
    ref = np.concatenate([np.asarray(s.reference_speed_ms, float) for s in readings])
    fit = speed_ratio_through_origin(pos, ref, group)
    ids = list(eff.position_ids)
    pi = np.array([ids.index(s.position_id) for s in readings])
    S = len(eff.sector_deg)
    si = sector_index([s.direction_deg for s in readings], S)
    clim, site = assessment.climate, assessment.site
    # The same terrain and profile as the model's transfer (engine.flow.transfer).
    from engine.core.model import TransferSettings
    from engine.flow.transfer import site_canopy, site_roughness
    settings = getattr(assessment, "transfer", None) or TransferSettings()
    z0, d, _ = site_roughness(site, settings)
    canopy = site_canopy(site, settings)
    transfer = profiles.transfer_speed_ratio(
        eff.hub_height_m[pi], z0,
        np.array([s.reference_height_m for s in readings], float), clim.roughness_m,
        d, clim.displacement_m, attenuation_to=canopy["attenuation"],
        canopy_height_to_m=canopy["canopy_height_m"])
    return pd.DataFrame({
        "position_id": [s.position_id for s in readings],
        "direction_deg": [float(s.direction_deg) for s in readings],
        "sector": si, "n": fit["n"], "measured_ratio": fit["ratio"],
        "ci_low": fit["ci_low"], "ci_high": fit["ci_high"], "terrain_transfer": transfer,
        "measured_speedup": fit["ratio"] / transfer,
        "speedup_ci_low": fit["ci_low"] / transfer, "speedup_ci_high": fit["ci_high"] / transfer,
        "model_speedup": eff.speed_factor[pi, si],
        "use_for_calibration": [bool(getattr(s, "use_for_calibration", False)) for s in readings],
    })[cols]


#: Largest measured speed-up accepted for calibration [-]. Speed-ups over roofs and through
#: gaps between buildings stay well below 2 in wind-tunnel and field studies (common
#: practice); a ratio above 3 is a reading error (unpaired readings, wrong unit).
MAX_CALIBRATION_SPEEDUP = 3.0


def calibrated_speed_factor(speed_factor, comparison: pd.DataFrame, position_ids):
    """Speed factors with measured speed-ups put in place where readings are marked for it.

    Several reading sets for one position and sector are pooled by their reading counts.

    Returns
    -------
    (speed_factor (P, S), calibrated (P, S) bool)
    """
    sf = np.array(speed_factor, float, copy=True)
    done = np.zeros(sf.shape, bool)
    use = comparison[comparison["use_for_calibration"].astype(bool)] if len(comparison) else comparison
    if not len(use):
        return sf, done
    su = use["measured_speedup"].to_numpy(float)
    bad = ~np.isfinite(su) | (su > MAX_CALIBRATION_SPEEDUP)
    if bad.any():
        from engine.core.errors import InputError
        raise InputError([(f"spot_readings[{int(i)}].use_for_calibration",
                           f"the measured speed-up must be <= {MAX_CALIBRATION_SPEEDUP:g} to "
                           f"calibrate the model, got {v:.3g}; check that the readings are "
                           "paired, in the same unit and at the heights given, or use them for "
                           "comparison only") for i, v in zip(use.index[bad], su[bad])])
    ids = list(position_ids)
    pi = np.array([ids.index(p) for p in use["position_id"]])
    si = use["sector"].to_numpy(int)
    flat = pi * sf.shape[1] + si
    w = use["n"].to_numpy(float)
    num = np.bincount(flat, w * use["measured_speedup"].to_numpy(float), sf.size)
    den = np.bincount(flat, w, sf.size)
    hit = den > 0
    sf.ravel()[hit] = num[hit] / den[hit]
    done.ravel()[hit] = True
    return sf, done
