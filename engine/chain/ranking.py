"""Ranking of position x turbine rows by an objective, with exclusions explained.

A row is *excluded* when any constraint of :class:`engine.core.model.RankingSettings` fails: mast
taller than allowed, rotor in a building's high-turbulence zone (the whole rotor, when the
table has ``rotor_in_turbulence_zone``; else the hub) or recirculation zone, noise above
a receptor's limit, extreme rotor thrust above the load limit. Its reasons, with the numbers
behind them, are appended to ``flags`` and it is ranked after every eligible row, never
silently dropped. Each row keeps one piece of advice per matter
(:func:`one_advice_per_matter`): one minimum mast, the one that clears the whole rotor, and one
recirculation note.

Objectives: ``net_aep``, ``p90_aep`` and ``npv`` (larger is better), ``lcoe`` and ``payback``
(smaller is better). With ``viability_first`` the options that pay back within their life come
first, then those that pay back only with support, then the rest (each group by the objective;
:func:`engine.chain.verdict.money_class`). Ties are broken by position and turbine id, so a
ranking is reproducible. ``exclusion_reason`` holds each excluded row's constraint texts.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.chain.verdict import money_class

#: objective -> (column, larger is better)
OBJECTIVE_COLUMNS = {
    "net_aep": ("aep_kwh", True),
    "p90_aep": ("p90_aep_kwh", True),
    "lcoe": ("lcoe_per_kwh", False),
    "payback": ("payback_years", False),
    "npv": ("npv", True),
}


def exclusion_reasons(table: pd.DataFrame, settings) -> list:
    """Per row, the list of constraints it fails, each with its numbers (empty when eligible)."""
    n = len(table)
    reasons = [[] for _ in range(n)]

    def add(mask, text):
        idx = np.flatnonzero(np.asarray(mask, bool))
        texts = text(idx) if callable(text) else dict.fromkeys(idx, text)
        for i in idx:
            reasons[i].append(texts[i])

    mast = table["mast_height_m"].to_numpy(dtype=float)
    add(mast > settings.max_mast_height_m + 1e-9,
        lambda idx: {i: f"mast {mast[i]:g} m taller than the {settings.max_mast_height_m:g} m "
                        "limit" for i in idx})
    if settings.require_clear_of_turbulence_zone and "rotor_in_turbulence_zone" in table:
        need = table["mast_to_clear_turbulence_m"].to_numpy(dtype=float)
        add(table["rotor_in_turbulence_zone"].to_numpy(dtype=bool),
            lambda idx: {i: "rotor in the roof's high-turbulence zone; a mast of at least "
                            f"{need[i]:.1f} m clears it with the whole rotor" for i in idx})
    elif settings.require_clear_of_turbulence_zone and "in_turbulence_zone" in table:
        add(table["in_turbulence_zone"].to_numpy(dtype=bool),
            "rotor in the roof's high-turbulence zone; raise the mast or move the position")
    if "in_recirculation_zone" in table:
        add(table["in_recirculation_zone"].to_numpy(dtype=bool),
            "hub in a recirculation zone")
    if settings.apply_noise_limits and "noise_exceeds_limit" in table:
        mask = table["noise_exceeds_limit"].to_numpy(dtype=bool)
        if {"noise_margin_db", "noise_worst_receptor"} <= set(table.columns):
            margin = table["noise_margin_db"].to_numpy(dtype=float)
            worst = table["noise_worst_receptor"].to_numpy()
            speed = (table["noise_worst_speed_ms"].to_numpy(dtype=float)
                     if "noise_worst_speed_ms" in table else np.full(n, np.nan))
            add(mask, lambda idx: {i: f"noise {-margin[i]:.1f} dB(A) above the limit at "
                                      f"{worst[i]}" + (f" at {speed[i]:g} m/s"
                                                       if np.isfinite(speed[i]) else "")
                                   for i in idx})
        else:
            add(mask, "noise above a receptor's limit")
    if settings.max_thrust_n > 0 and "thrust_extreme_n" in table:
        thrust = table["thrust_extreme_n"].to_numpy(dtype=float)
        add(thrust > settings.max_thrust_n,
            lambda idx: {i: f"extreme thrust {thrust[i]:.0f} N above the "
                            f"{settings.max_thrust_n:g} N load limit" for i in idx})
    return reasons


def one_advice_per_matter(table: pd.DataFrame, reasons: list) -> list:
    """Each row's notes with its exclusion reasons appended, one piece of advice per matter.

    Where the rotor check gives the mast that clears the whole rotor
    (``mast_to_clear_turbulence_m``, m), the building model's hub-only mast note goes: an
    assessor following the lower figure would still be excluded. The rotor-clear figure is
    added as a note when the rotor is in the zone but the constraint is not applied. A
    recirculation exclusion replaces the zone's plain note.

    Parameters
    ----------
    table : rows with ``flags`` and optionally ``mast_to_clear_turbulence_m`` (m) and
        ``rotor_in_turbulence_zone``.
    reasons : per row, the texts of :func:`exclusion_reasons`.

    Returns
    -------
    list of lists of str, one per row.
    """
    n = len(table)
    need = (table["mast_to_clear_turbulence_m"].to_numpy(dtype=float)
            if "mast_to_clear_turbulence_m" in table else np.full(n, np.nan))
    rotor_in = (table["rotor_in_turbulence_zone"].to_numpy(dtype=bool)
                if "rotor_in_turbulence_zone" in table else np.zeros(n, bool))
    merged = []
    for f, rs, clear, inside in zip(table["flags"], reasons, need, rotor_in):
        f = list(f)
        if np.isfinite(clear):
            f = [x for x in f if not (x.startswith("a mast of ") and "puts the hub above" in x)]
            if inside and not any(r.startswith("rotor in the roof's high-turbulence")
                                  for r in rs):
                f.append("rotor in the roof's high-turbulence zone; a mast of at least "
                         f"{clear:.1f} m clears it with the whole rotor")
        if "hub in a recirculation zone" in rs:
            f = [x for x in f if x != "in roof recirculation zone"]
        merged.append(f + [r for r in rs if r not in f])
    return merged


def rank(table: pd.DataFrame, settings) -> pd.DataFrame:
    """Sort rows by the objective; eligible rows first. Adds ``rank``, ``excluded``, ``flags``,
    ``exclusion_reason``.

    A missing objective column falls back to net AEP; non-finite values (an LCOE or payback
    with no energy) rank last.
    """
    col, larger_better = OBJECTIVE_COLUMNS[settings.objective]
    if col not in table:
        col, larger_better = "aep_kwh", True
    out = table.copy()
    reasons = exclusion_reasons(out, settings)
    out["excluded"] = [bool(r) for r in reasons]
    out["flags"] = one_advice_per_matter(out, reasons)
    out["exclusion_reason"] = ["; ".join(r) for r in reasons]
    key = out[col].to_numpy(dtype=float)
    key = np.where(np.isfinite(key), key, -np.inf if larger_better else np.inf)
    score = -key if larger_better else key
    viable = (money_class(out) if getattr(settings, "viability_first", False)
              else np.zeros(len(out), int))
    # Stable order: eligibility, viability if asked, objective, then ids (ties reproducible).
    order = np.lexsort((out["turbine_id"].to_numpy(), out["position_id"].to_numpy(),
                        score, viable, out["excluded"].to_numpy()))
    out = out.iloc[order].reset_index(drop=True)
    out.insert(0, "rank", np.arange(1, len(out) + 1))
    return out
