"""The effective climate as a flat table, one row per position x sector, for exports.

Part of the flow layer: it reads an :class:`engine.flow.effective.EffectiveClimate` and writes
a pandas frame the summary attaches and the dashboard offers for download.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.climate.weibull import weibull_mean_ms


def effective_climate_table(eff) -> pd.DataFrame:
    """Per-sector effective climate of every position, one row per position x sector.

    Columns: ``position_id``, ``sector_deg``, ``hub_height_m``, ``frequency``, ``weibull_k``,
    ``free_c_ms`` (undisturbed scale at hub), ``speed_factor``, ``weibull_c_ms`` (at the
    rotor), ``mean_speed_ms`` (c Γ(1 + 1/k) at the rotor), ``turbulence_intensity``,
    ``inflow_skew_deg``, then every (P, S) diagnostic of the building models.
    """
    P, S = eff.frequency.shape
    c = eff.weibull_c_ms
    cols = {
        "position_id": np.repeat(np.asarray(eff.position_ids, dtype=object), S),
        "sector_deg": np.tile(np.asarray(eff.sector_deg, float), P),
        "hub_height_m": np.repeat(np.asarray(eff.hub_height_m, float), S),
        "frequency": eff.frequency.ravel(),
        "weibull_k": eff.weibull_k.ravel(),
        "free_c_ms": eff.free_c_ms.ravel(),
        "speed_factor": eff.speed_factor.ravel(),
        "weibull_c_ms": c.ravel(),
        "mean_speed_ms": weibull_mean_ms(eff.weibull_k, c).ravel(),
        "turbulence_intensity": eff.turbulence_intensity.ravel(),
        "inflow_skew_deg": eff.inflow_skew_deg.ravel(),
    }
    for name in sorted(eff.diagnostics):
        arr = np.asarray(eff.diagnostics[name])
        if arr.shape == (P, S) and name not in cols:
            cols[name] = arr.ravel()
    return pd.DataFrame(cols)
