"""Ranking of position x turbine rows by an objective, with exclusions explained.

A row is *excluded* when any constraint fails; its reasons are appended to ``flags`` and it is
ranked after every eligible row, never silently dropped.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

#: objective -> (column, larger is better)
OBJECTIVE_COLUMNS = {
    "net_aep": ("aep_kwh", True),
    "p90_aep": ("p90_aep_kwh", True),
    "lcoe": ("lcoe_per_kwh", False),
    "payback": ("payback_years", False),
}


def exclusion_reasons(table: pd.DataFrame, settings) -> list:
    """Per row, the list of constraints it fails (empty when eligible)."""
    n = len(table)
    reasons = [[] for _ in range(n)]

    def add(mask, text):
        for i in np.flatnonzero(np.asarray(mask, bool)):
            reasons[i].append(text)

    add(table["mast_height_m"].to_numpy() > settings.max_mast_height_m + 1e-9,
        f"mast taller than the {settings.max_mast_height_m:g} m limit")
    if settings.require_clear_of_turbulence_zone and "in_turbulence_zone" in table:
        add(table["in_turbulence_zone"].to_numpy(), "rotor in the roof's high-turbulence zone")
    if "in_recirculation_zone" in table:
        add(table["in_recirculation_zone"].to_numpy(), "rotor in a recirculation zone")
    if settings.apply_noise_limits and "noise_exceeds_limit" in table:
        add(table["noise_exceeds_limit"].to_numpy(), "noise above a receptor's limit")
    if settings.max_thrust_n > 0 and "thrust_extreme_n" in table:
        add(table["thrust_extreme_n"].to_numpy() > settings.max_thrust_n,
            f"extreme thrust above the {settings.max_thrust_n:g} N limit")
    return reasons


def rank(table: pd.DataFrame, settings) -> pd.DataFrame:
    """Sort rows by the objective; eligible rows first. Adds ``rank``, ``excluded``, ``flags``."""
    col, larger_better = OBJECTIVE_COLUMNS[settings.objective]
    if col not in table:
        col, larger_better = "aep_kwh", True
    out = table.copy()
    reasons = exclusion_reasons(out, settings)
    out["excluded"] = [bool(r) for r in reasons]
    out["flags"] = [list(f) + [r for r in rs if r not in f] for f, rs in zip(out["flags"], reasons)]
    key = out[col].to_numpy(dtype=float)
    key = np.where(np.isfinite(key), key, -np.inf if larger_better else np.inf)
    score = -key if larger_better else key
    # Stable order: eligibility, objective, then ids (so ties are reproducible).
    order = np.lexsort((out["turbine_id"].to_numpy(), out["position_id"].to_numpy(),
                        score, out["excluded"].to_numpy()))
    out = out.iloc[order].reset_index(drop=True)
    out.insert(0, "rank", np.arange(1, len(out) + 1))
    return out
