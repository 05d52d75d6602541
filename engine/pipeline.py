"""The one chain: assessment -> effective climate -> energy -> results table -> ranking.

The dashboard, the command line, the siting summary and the screening all call
:func:`evaluate`; none of them holds a second copy of a model.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from . import air, energy, flow, ranking
from .weibull import mixture_mean_ms


@dataclass(frozen=True)
class Evaluation:
    """Everything one run of the chain produced."""

    assessment: object
    climate: flow.EffectiveClimate
    table: pd.DataFrame  # one row per position x turbine, ranked


def energy_table(assessment, eff: flow.EffectiveClimate) -> pd.DataFrame:
    """Yield of every position x turbine as a DataFrame (unranked)."""
    turbines = assessment.turbines
    P, T = eff.n_positions, len(turbines)
    edges = energy.DEFAULT_EDGES_MS
    pw = energy.curve_on_edges_w(turbines, edges)  # (T, J)
    gross_wh = energy.aep_method_of_bins_wh(
        eff.frequency[:, None, :], eff.weibull_k[:, None, :], eff.weibull_c_ms[:, None, :],
        pw[None, :, None, :], edges)  # (P, T)
    rated_w = np.array([t.rated_power_w for t in turbines], float)
    gross_kwh = gross_wh / 1000.0
    lo = assessment.losses
    keep = ((1 - lo.availability) * (1 - lo.electrical) * (1 - lo.icing)
            * (1 - lo.cut_out_hysteresis) * (1 - lo.other))
    net_kwh = gross_kwh * keep
    cf = net_kwh / (rated_w[None, :] * energy.HOURS_PER_YEAR / 1000.0)
    mean_ms = mixture_mean_ms(eff.frequency, eff.weibull_k, eff.weibull_c_ms)  # (P,)
    pos = assessment.positions
    rows = {
        "position_id": np.repeat([p.id for p in pos], T),
        "turbine_id": np.tile([t.id for t in turbines], P),
        "kind": np.repeat([p.kind for p in pos], T),
        "mast_height_m": np.repeat([float(p.mast_height_m) for p in pos], T),
        "hub_height_m": np.repeat(eff.hub_height_m, T),
        "mean_speed_ms": np.repeat(mean_ms, T),
        "gross_aep_kwh": gross_kwh.ravel(),
        "aep_kwh": net_kwh.ravel(),
        "capacity_factor": cf.ravel(),
        "rated_power_kw": np.tile(rated_w / 1000.0, P),
    }
    free_mean = mixture_mean_ms(eff.frequency, eff.weibull_k, eff.free_c_ms)
    rows["speedup"] = np.repeat(mean_ms / free_mean, T)
    rows["turbulence_intensity"] = np.repeat(
        np.sum(eff.frequency * eff.turbulence_intensity, axis=-1), T)
    # Per-position diagnostics of the building models become columns (shape (P,) only).
    for name, arr in eff.diagnostics.items():
        arr = np.asarray(arr)
        if arr.shape == (P,):
            rows[name] = np.repeat(arr, T)
    df = pd.DataFrame(rows)
    df["flags"] = [list(eff.flags[i]) if eff.flags else [] for i in np.repeat(np.arange(P), T)]
    return df


def evaluate(assessment) -> Evaluation:
    """Run the whole chain for an :class:`engine.model.Assessment`."""
    rho = air.site_air_density_kgm3(assessment.site)
    eff = flow.effective_climate(assessment, rho)
    table = energy_table(assessment, eff)
    table = ranking.rank(table, assessment.ranking)
    return Evaluation(assessment=assessment, climate=eff, table=table)
