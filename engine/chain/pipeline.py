"""The one chain: assessment -> effective climate -> energy -> results table -> ranking.

The dashboard, the command line, the siting summary and the screening all call
:func:`evaluate`; none of them holds a second copy of a model.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from engine.climate import air
from engine.energy import economics
from engine.energy import aep as energy
from engine.flow import effective as flow
from engine.energy import loads
from engine.chain import neighbours, ranking
from engine.energy import uncertainty
from engine.climate.weibull import mixture_mean_ms


@dataclass(frozen=True)
class Evaluation:
    """Everything one run of the chain produced."""

    assessment: object
    climate: flow.EffectiveClimate
    table: pd.DataFrame  # one row per position x turbine, ranked


def energy_table(assessment, eff: flow.EffectiveClimate) -> pd.DataFrame:
    """Yield, uncertainty, loads, noise and money of every position x turbine (unranked).

    One row per position x turbine, positions outer. Energy uses the effective climate's
    turbulence intensity and inflow skew per position and sector
    (:func:`engine.energy.aep.yield_arrays`); P75/P90 come from :mod:`engine.energy.uncertainty`;
    loads (:mod:`engine.energy.loads`) are a screening caution; noise, flicker, rules and
    certification come from :mod:`engine.chain.neighbours`;
    money and CO2 use the net (P50) energy (:mod:`engine.energy.economics`).
    """
    turbines = assessment.turbines
    P, T = eff.n_positions, len(turbines)
    rho = eff.air_density_kgm3
    y = energy.yield_arrays(eff.frequency, eff.weibull_k, eff.weibull_c_ms,
                            eff.turbulence_intensity, eff.inflow_skew_deg, turbines, rho,
                            assessment.losses)
    rated_w = y.rated_power_w
    gross_kwh = y.gross_wh / 1000.0
    net_kwh = y.net_wh / 1000.0
    pv = uncertainty.analytic_p_values(y.setup, energy.net_fraction(assessment.losses),
                                       assessment.uncertainty, y.speed_sensitivity,
                                       gross_wh=y.gross_wh)
    mean_ms = mixture_mean_ms(eff.frequency, eff.weibull_k, eff.weibull_c_ms)  # (P,)
    pos = assessment.positions
    mast = np.array([float(p.mast_height_m) for p in pos])
    ld = loads.turbine_loads(turbines, mast, rho)
    money = economics.economics_arrays(net_kwh, [t.installed_cost for t in turbines],
                                       assessment.economics)
    rows = {
        "position_id": np.repeat([p.id for p in pos], T),
        "turbine_id": np.tile([t.id for t in turbines], P),
        "kind": np.repeat([p.kind for p in pos], T),
        "mast_height_m": np.repeat(mast, T),
        "hub_height_m": np.repeat(eff.hub_height_m, T),
        "mean_speed_ms": np.repeat(mean_ms, T),
        "gross_aep_kwh": gross_kwh.ravel(),
        "aep_kwh": net_kwh.ravel(),
        "capacity_factor": y.capacity_factor.ravel(),
        "rated_power_kw": np.tile(rated_w / 1000.0, P),
        "full_load_hours": y.full_load_hours.ravel(),
        "p50_aep_kwh": pv[50].ravel() / 1000.0,
        "p75_aep_kwh": pv[75].ravel() / 1000.0,
        "p90_aep_kwh": pv[90].ravel() / 1000.0,
        "speed_sensitivity": y.speed_sensitivity.ravel(),
        "skew_speed_factor": y.skew_factor_mean.ravel(),
    }
    rows.update({name: arr.ravel() for name, arr in money.items()})
    rows.update({name: ld[name].ravel() for name in
                 ("thrust_rated_n", "thrust_extreme_n", "mast_base_moment_nm")})
    free_mean = mixture_mean_ms(eff.frequency, eff.weibull_k, eff.free_c_ms)
    rows["speedup"] = np.repeat(mean_ms / free_mean, T)
    rows["turbulence_intensity"] = np.repeat(
        np.sum(eff.frequency * eff.turbulence_intensity, axis=-1), T)
    # Per-position diagnostics of the building models become columns (shape (P,) only).
    for name, arr in eff.diagnostics.items():
        arr = np.asarray(arr)
        if arr.shape == (P,):
            rows[name] = np.repeat(arr, T)
    need = np.asarray(eff.diagnostics.get("min_clear_mast_m", np.full(P, np.nan)), float)
    if need.shape == (P,):
        # The whole rotor must clear the zone: mast - r >= min_clear_mast_m (engine.flow.effective).
        radius = np.array([t.rotor_radius_m for t in turbines], float)
        clear_mast = need[:, None] + radius[None, :]
        rows["mast_to_clear_turbulence_m"] = clear_mast.ravel()
        rows["rotor_in_turbulence_zone"] = np.where(
            np.isfinite(clear_mast), mast[:, None] < clear_mast - 1e-9, False).ravel()
    df = pd.DataFrame(rows)
    # Noise by wind speed, flicker, local rules, certification, vibration (engine.chain.neighbours).
    for name, values in neighbours.consent_columns(assessment, eff, df).items():
        df[name] = values
    months = assessment.climate.monthly_mean_ms
    if months:
        monthly = energy.monthly_energy_wh(y.net_wh, months, assessment.climate,
                                           y.setup) / 1000.0
        df["monthly_aep_kwh"] = list(monthly.reshape(P * T, 12).tolist())
    df["flags"] = [list(eff.flags[i]) if eff.flags else [] for i in np.repeat(np.arange(P), T)]
    return df


def evaluate(assessment) -> Evaluation:
    """Run the whole chain for an :class:`engine.core.model.Assessment`."""
    rho = air.site_air_density_kgm3(assessment.site)
    eff = flow.effective_climate(assessment, rho)
    table = energy_table(assessment, eff)
    table = ranking.rank(table, assessment.ranking)
    return Evaluation(assessment=assessment, climate=eff, table=table)
