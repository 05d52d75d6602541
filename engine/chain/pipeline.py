"""The one chain: assessment -> effective climate -> energy -> results table -> ranking.

The dashboard, the command line, the siting summary and the screening all call
:func:`evaluate`; none of them holds a second copy of a model.
"""
from __future__ import annotations

import collections
import dataclasses
from dataclasses import dataclass

import numpy as np
import pandas as pd

from engine.climate import air
from engine.energy import economics
from engine.energy import aep as energy
from engine.flow import effective as flow
from engine.flow import measured_position
from engine.energy import loads
from engine.chain import arrays
from engine.chain import neighbours
from engine.chain import ranking
from engine.chain import verdict
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
    turbulence intensity and inflow skew per position and sector and is integrated exactly
    (:func:`engine.energy.aep.yield_arrays`); the method of bins is reported beside it
    (``aep_bins_kwh``) and ``turbulence_effect`` is what the turbulence adjustment did to
    the energy [-]. P75/P90 come from :mod:`engine.energy.uncertainty` for the average year of the
    project life (``p75_aep_kwh``, ``p90_aep_kwh`` = ``p90_life_aep_kwh``) and for a single
    year (``p75_one_year_aep_kwh``, ``p90_one_year_aep_kwh``);
    loads (:mod:`engine.energy.loads`) are a screening caution; noise by hub wind speed,
    shadow flicker, local rules and certification come from :mod:`engine.chain.neighbours`;
    money and CO2 use the net (P50) energy (:mod:`engine.energy.economics`).
    """
    turbines = assessment.turbines
    # The yield step the screening shares (engine.chain.arrays): energy, mean speed, TI.
    at_hub = arrays.position_yields(eff, turbines, assessment.losses, assessment.energy)
    y = at_hub.yields
    pv = uncertainty.exceedance_with_logger(  # the long-term correction can raise σ_LT
        y.setup, y.net_wh, uncertainty.with_climate(assessment.uncertainty, assessment.climate),
        assessment.economics.lifetime_years, uncertainty.logger_row(assessment.climate,
        measured_position.measuring_index(assessment)), gross_wh=y.bins_gross_wh)
    mast = np.array([float(p.mast_height_m) for p in assessment.positions])
    ld = loads.turbine_loads(turbines, mast, eff.air_density_kgm3)
    ti_mean = np.sum(eff.frequency * eff.turbulence_intensity, axis=-1)  # (P,)
    rows = _energy_rows(assessment, eff, at_hub, pv, mast)
    rows.update(_flow_and_load_rows(eff, at_hub.mean_speed_ms, _load_columns(ld, ti_mean),
                                    ti_mean, len(turbines)))
    rows.update(_diagnostic_rows(eff, len(turbines)))
    rows.update(_clearance_rows(eff, turbines, mast))
    df = pd.DataFrame(rows)
    _add_neighbour_and_monthly_columns(df, assessment, eff, y)
    df["flags"] = _row_flags(eff, rows["ti_above_class_design"], ti_mean, ld["design_ti"],
                             len(turbines))
    return df


def _energy_rows(assessment, eff, at_hub, pv, mast) -> dict:
    """Ids, heights, yield, P-values, the yield cross-checks and money, one entry per row."""
    turbines, pos = assessment.turbines, assessment.positions
    P, T = eff.n_positions, len(turbines)
    y = at_hub.yields
    gross_kwh = y.gross_wh / 1000.0
    net_kwh = y.net_wh / 1000.0
    mean_ms = at_hub.mean_speed_ms  # (P,)
    k_mean = np.sum(eff.frequency * eff.weibull_k, axis=-1)  # (P,) shape of hourly speeds
    money = economics.position_money(net_kwh, mean_ms, k_mean, [p.kind for p in pos], mast,
                                     turbines, assessment.economics,
                                     assessment.climate.monthly_mean_ms)
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
        "rated_power_kw": np.tile(y.rated_power_w / 1000.0, P),
        "full_load_hours": y.full_load_hours.ravel(),
        "p50_aep_kwh": net_kwh.ravel(),
        # P75/P90 of the average year over the project life (names kept); one year beside it.
        "p75_aep_kwh": pv["p75_life"].ravel() / 1000.0,
        "p90_aep_kwh": pv["p90_life"].ravel() / 1000.0,
        "speed_sensitivity": y.speed_sensitivity.ravel(),
        "skew_speed_factor": y.skew_factor_mean.ravel(),
    }
    rows.update(_yield_columns(y, pv, assessment))
    rows.update({name: arr.ravel() for name, arr in money.items()})
    return rows


def _flow_and_load_rows(eff, mean_ms, load_cols, ti_mean, T) -> dict:
    """Thrusts and moment, speed-up over the free stream, mean TI, then the other load columns.

    ``speedup`` is the mean hub speed over the free stream's mean speed at the same height [-].
    """
    out = {name: load_cols.pop(name) for name in
           ("thrust_rated_n", "thrust_extreme_n", "mast_base_moment_nm")}
    free_mean = mixture_mean_ms(eff.frequency, eff.weibull_k, eff.free_c_ms)
    out["speedup"] = np.repeat(mean_ms / free_mean, T)
    out["turbulence_intensity"] = np.repeat(ti_mean, T)
    out.update(load_cols)
    return out


def _diagnostic_rows(eff, T) -> dict:
    """Per-position diagnostics of the building models as columns (shape (P,) only)."""
    P = eff.n_positions
    out = {}
    for name, arr in eff.diagnostics.items():
        arr = np.asarray(arr)
        if arr.shape == (P,):
            out[name] = np.repeat(arr, T)
    return out


def _clearance_rows(eff, turbines, mast) -> dict:
    """Mast that lifts the whole rotor out of the roof's turbulent zone [m], and whether it is in.

    The whole rotor must clear the zone: mast - r >= ``min_clear_mast_m``
    (:mod:`engine.flow.effective`); no columns when that diagnostic is not per position.
    """
    P = eff.n_positions
    need = np.asarray(eff.diagnostics.get("min_clear_mast_m", np.full(P, np.nan)), float)
    if need.shape != (P,):
        return {}
    radius = np.array([t.rotor_radius_m for t in turbines], float)
    clear_mast = need[:, None] + radius[None, :]
    return {
        "mast_to_clear_turbulence_m": clear_mast.ravel(),
        "rotor_in_turbulence_zone": np.where(
            np.isfinite(clear_mast), mast[:, None] < clear_mast - 1e-9, False).ravel(),
    }


def _add_neighbour_and_monthly_columns(df, assessment, eff, y) -> None:
    """Noise by wind speed, flicker, local rules, certification, vibration, then monthly yield.

    The first come from :mod:`engine.chain.neighbours`; ``monthly_aep_kwh`` (twelve values
    a row [kWh]) only when the climate has monthly mean speeds. Adds to ``df`` in place.
    """
    for name, values in neighbours.consent_columns(assessment, eff, df).items():
        df[name] = values
    months = assessment.climate.monthly_mean_ms
    if months:
        P, T = y.net_wh.shape
        monthly = energy.monthly_energy_wh(y.net_wh, months, assessment.climate,
                                           y.setup) / 1000.0
        df["monthly_aep_kwh"] = list(monthly.reshape(P * T, 12).tolist())


def _row_flags(eff, ti_above, ti_mean, design_ti, T) -> list:
    """Each row's flags: its position's flags, then a note where the TI is above the class's."""
    P = eff.n_positions
    flags = [list(eff.flags[i]) if eff.flags else [] for i in np.repeat(np.arange(P), T)]
    for r in np.flatnonzero(ti_above):
        flags[r] = flags[r] + [
            f"turbulence intensity {ti_mean[r // T]:.2f} above the IEC 61400-2 class design "
            f"value {design_ti[r % T]:.2f}: ask the maker whether the turbine is rated "
            "for it"]
    return flags


def _yield_columns(y, pv, assessment) -> dict:
    """Life and one-year P90s, the bins cross-check and the turbulence effect (new columns)."""
    P, T = y.gross_wh.shape
    keep = energy.net_fraction(assessment.losses)
    return {
        "p90_life_aep_kwh": pv["p90_life"].ravel() / 1000.0,
        "p90_one_year_aep_kwh": pv["p90_one_year"].ravel() / 1000.0,
        "p75_one_year_aep_kwh": pv["p75_one_year"].ravel() / 1000.0,
        "project_life_years": np.full(P * T, float(assessment.economics.lifetime_years)),
        "aep_bins_kwh": (y.bins_gross_wh * keep).ravel() / 1000.0,
        "turbulence_effect": y.turbulence_effect.ravel(),
        "power_curve_ti": np.tile([t.power_curve_ti for t in assessment.turbines], P),
    }


def _load_columns(ld, ti_mean) -> dict:
    """Thrusts, moment, the extreme load's method and the class-design turbulence check."""
    P, T = ld["thrust_rated_n"].shape
    out = {name: ld[name].ravel() for name in
           ("thrust_rated_n", "thrust_extreme_n", "mast_base_moment_nm")}
    out["extreme_load_method"] = np.tile(np.asarray(ld["extreme_load_method"], object), P)
    out["class_design_ti"] = np.tile(ld["design_ti"], P)
    # A site more turbulent than the class's design value: its fatigue design does not cover it.
    out["ti_above_class_design"] = (ti_mean[:, None] > ld["design_ti"][None, :]).ravel()
    return out


@dataclass(frozen=True)
class EnergyStage:
    """The chain up to the unranked energy table, kept so that a change of prices, costs or
    ranking settings alone re-runs only the money, the ranking and the verdicts
    (:func:`priced`)."""

    key: str  # energy_key of the assessment it was computed for
    assessment: object
    climate: flow.EffectiveClimate
    table: pd.DataFrame  # energy_table: unranked, money at this assessment's own prices


#: The last few (assessment, energy key) pairs, by object identity: an assessment is frozen,
#: so its key never changes, and a what-if asks for it several times (cache, stage check,
#: chart keys). The object is held with its key, so its id cannot be reused while listed.
_KEYS: "collections.OrderedDict[int, tuple]" = collections.OrderedDict()
_KEYS_KEPT = 16


def energy_key(assessment) -> str:
    """Content hash of everything the energy stage reads.

    The same assessment with the inputs that only the money step and the ranking read set
    to their defaults: every ``economics`` field but ``lifetime_years`` (the life-time P90
    reads it), each turbine's ``installed_cost``, and the ``ranking`` settings. Two
    assessments with the same key have the same :class:`EnergyStage`.
    """
    kept = _KEYS.get(id(assessment))
    if kept is not None and kept[0] is assessment:
        return kept[1]
    key = _energy_key(assessment)
    _KEYS[id(assessment)] = (assessment, key)
    while len(_KEYS) > _KEYS_KEPT:
        _KEYS.popitem(last=False)
    return key


def _energy_key(assessment) -> str:
    from engine.core import model
    from engine.io import sitefile
    e = model.Economics(lifetime_years=assessment.economics.lifetime_years)
    turbines = tuple(dataclasses.replace(t, installed_cost=0.0) for t in assessment.turbines)
    plain = dataclasses.replace(assessment, economics=e, turbines=turbines,
                                ranking=model.RankingSettings())
    return sitefile.content_hash(plain)


def energy_stage(assessment) -> EnergyStage:
    """Effective climate and energy table of an assessment (the costly part of the chain)."""
    rho = air.site_air_density_kgm3(assessment.site)
    eff = flow.effective_climate(assessment, rho)
    return EnergyStage(energy_key(assessment), assessment, eff, energy_table(assessment, eff))


def _same_money_inputs(a, b) -> bool:
    return a.economics == b.economics and [t.installed_cost for t in a.turbines] == [
        t.installed_cost for t in b.turbines]


def priced(assessment, stage: EnergyStage) -> Evaluation:
    """Money, ranking and verdicts of ``assessment`` on a kept :class:`EnergyStage`.

    The money columns are worked again by :func:`engine.energy.economics.position_money` from
    the stage's net energy, mean speed and Weibull shape (the same call
    :func:`energy_table` makes), so the result equals :func:`evaluate` of ``assessment``.
    Raises ``ValueError`` when the stage was computed for an assessment whose energy differs
    (another :func:`energy_key`).
    """
    if stage.key != energy_key(assessment):
        raise ValueError("the kept energy stage belongs to another site, climate, building, "
                         "position, turbine or loss setting: run energy_stage again")
    eff, table = stage.climate, stage.table
    if not _same_money_inputs(assessment, stage.assessment):
        P, T = eff.n_positions, len(assessment.turbines)
        pos = assessment.positions
        money = economics.position_money(
            table["aep_kwh"].to_numpy(float).reshape(P, T),
            table["mean_speed_ms"].to_numpy(float)[::T],
            np.sum(eff.frequency * eff.weibull_k, axis=-1), [p.kind for p in pos],
            np.array([float(p.mast_height_m) for p in pos]), assessment.turbines,
            assessment.economics, assessment.climate.monthly_mean_ms)
        table = table.copy()
        for name, arr in money.items():
            table[name] = arr.ravel()  # in place: the column order stays the chain's
    table = verdict.add_verdicts(ranking.rank(table, assessment.ranking), assessment.economics)
    return Evaluation(assessment=assessment, climate=eff, table=table)


def evaluate(assessment) -> Evaluation:
    """Run the whole chain for an :class:`engine.core.model.Assessment`."""
    return priced(assessment, energy_stage(assessment))
