"""Data exports shared by the command line, the dashboard and the summary."""
from __future__ import annotations

import numpy as np
import pandas as pd

#: First characters a spreadsheet would run as a formula.
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r", "\n")
FORMULA_START = _FORMULA_START


def neutralise_cell(value):
    """Prefix text a spreadsheet would treat as a formula with an apostrophe (OWASP CSV injection)."""
    if isinstance(value, str):
        # The CSV writer quotes a cell holding LF (its line end) but not a bare CR, at which a
        # spreadsheet starts a new row, so "x\r=cmd" would become a formula cell. As LF the
        # cell is quoted and stays one cell.
        value = value.replace("\r\n", "\n").replace("\r", "\n")
        if value.startswith(_FORMULA_START):
            return "'" + value
    return value


def safe_csv(table: pd.DataFrame) -> str:
    """CSV text with list cells joined by '; ' and formula-like text neutralised."""
    out = table.copy()
    for col in out.columns:
        if out[col].dtype == object or str(out[col].dtype).startswith("str"):
            out[col] = [neutralise_cell("; ".join(map(str, v)) if isinstance(v, (list, tuple)) else v)
                        for v in out[col]]
    return out.to_csv(index=False, lineterminator="\n")


def effective_climate_table(eff) -> pd.DataFrame:
    """Per-sector effective climate of every position, one row per position x sector.

    Columns: ``position_id``, ``sector_deg``, ``hub_height_m``, ``frequency``, ``weibull_k``,
    ``free_c_ms`` (undisturbed scale at hub), ``speed_factor``, ``weibull_c_ms`` (at the
    rotor), ``mean_speed_ms`` (c Γ(1 + 1/k) at the rotor), ``turbulence_intensity``,
    ``inflow_skew_deg``, then every (P, S) diagnostic of the building models.
    """
    from engine.climate.weibull import weibull_mean_ms

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
