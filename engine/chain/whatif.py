"""What would change the answer: break-even price, speed and mast height, and NPV sensitivity.

For the leading options of an :class:`engine.chain.pipeline.Evaluation` the money is re-worked
through the same chain functions (method of bins in :mod:`engine.energy.aep`, money in
:mod:`engine.energy.economics`), with one input moved at a time:

* break-even import price: NPV linear in the import price (``break_even_import_price``);
* break-even mean speed: every sector's Weibull scale times λ (shape, turbulence and skew
  kept), λ found where NPV = 0 (scipy ``brentq`` inside the first sign change of a scan);
* mast height that pays back: the position re-evaluated from the building models up at 1 m
  steps (taller masts cost more per metre; loads, noise and the roof must be checked again);
* NPV sensitivity (:func:`npv_sensitivity`): mean speed ±10 %, installed cost ±20 %, energy
  prices ±20 %, downtime from none to 10 points more than the site file's availability loss.
"""
from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd
from scipy import optimize

from engine.climate.weibull import mixture_mean_ms
from engine.core.model import Position
from engine.energy import aep as energy
from engine.energy import economics as money
from engine.flow import effective as flow

#: Speed scales searched for the break-even mean speed [-].
SPEED_SCAN = np.geomspace(0.4, 3.0, 41)
#: Extra availability loss of the "more downtime" case [-] (assumption).
EXTRA_DOWNTIME = 0.10


def _option(ev, position_id, turbine_id):
    a = ev.assessment
    i = list(ev.climate.position_ids).index(position_id)
    tur = next(t for t in a.turbines if t.id == turbine_id)
    return a, i, tur


def _npv_at_scales(a, eff, idx, tur, scales, economics=None, energy_factor=1.0,
                   cost_scale=1.0, kinds=None, mast_m=None):
    """NPV [currency] of one turbine at positions ``idx`` (N,) each with speed scale (N,)."""
    e = economics or a.economics
    idx = np.asarray(idx, int)
    scales = np.broadcast_to(np.asarray(scales, float), idx.shape)
    f, k = eff.frequency[idx], eff.weibull_k[idx]
    c = eff.weibull_c_ms[idx] * scales[:, None]
    no_credit = eff.diagnostics.get("no_turbulence_credit")
    # All the site's turbines, as the chain runs them: the curves share one speed grid, so a
    # turbine alone would differ from its row in the table in the fifth digit.
    y = energy.yield_arrays(f, k, c, eff.turbulence_intensity[idx], eff.inflow_skew_deg[idx],
                            a.turbines, eff.air_density_kgm3, a.losses, energy_settings=a.energy,
                            no_credit=None if no_credit is None else np.asarray(no_credit)[idx])
    j = [t.id for t in a.turbines].index(tur.id)
    net = y.net_wh[:, j:j + 1] / 1000.0 * energy_factor
    pos = a.positions
    kinds = kinds if kinds is not None else [pos[j].kind for j in idx]
    mast_m = mast_m if mast_m is not None else [float(pos[j].mast_height_m) for j in idx]
    priced = dataclasses.replace(tur, installed_cost=tur.installed_cost * cost_scale)
    out = money.position_money(net, mixture_mean_ms(f, k, c), np.sum(f * k, axis=-1), kinds,
                               mast_m, [priced], e, a.climate.monthly_mean_ms)
    return out["npv"][:, 0]


def break_even_speed_ms(ev, position_id, turbine_id) -> float:
    """Mean hub-height speed at which the option's NPV is zero [m/s]; NaN if none in the scan."""
    a, i, tur = _option(ev, position_id, turbine_id)
    eff = ev.climate
    npv = _npv_at_scales(a, eff, np.full(SPEED_SCAN.size, i), tur, SPEED_SCAN)
    up = np.flatnonzero((npv[:-1] < 0) & (npv[1:] >= 0))
    if not up.size:  # never pays back in the scan, or pays back even at its lowest speed
        return float("nan")
    lam = optimize.brentq(lambda s: _npv_at_scales(a, eff, [i], tur, [s])[0],
                          SPEED_SCAN[up[0]], SPEED_SCAN[up[0] + 1], xtol=1e-7)
    mean = float(mixture_mean_ms(eff.frequency[i], eff.weibull_k[i], eff.weibull_c_ms[i]))
    return float(lam * mean)


def mast_height_to_pay_back_m(ev, position_id, turbine_id, step_m=1.0):
    """Lowest mast above the present one at which NPV >= 0 [m] (NaN if none up to 60 m).

    Returns ``(height_m, npv_by_height)`` with a frame of ``mast_height_m`` and ``npv``.
    """
    a, i, tur = _option(ev, position_id, turbine_id)
    pos = a.positions[i]
    heights = np.arange(float(pos.mast_height_m) + step_m, 60.0 + 1e-9, step_m)
    if heights.size == 0:
        return float("nan"), pd.DataFrame({"mast_height_m": [], "npv": []})
    copies = tuple(dataclasses.replace(pos, id=f"{pos.id}@{h:g}m", mast_height_m=float(h))
                   for h in heights)
    spots = tuple(dataclasses.replace(s, position_id=c.id) for s in a.spot_readings
                  if s.position_id == pos.id for c in copies)
    # A climate measured at this position holds its present height only: the taller masts
    # are modelled from its free-stream equivalent, as the chain does for other positions.
    a2 = dataclasses.replace(a, climate=flow.reference_climate(a, ev.climate.air_density_kgm3),
                             positions=copies, spot_readings=spots)
    eff2 = flow.effective_climate(a2, ev.climate.air_density_kgm3)
    n = len(copies)
    npv = _npv_at_scales(a2, eff2, np.arange(n), tur, np.ones(n))
    ok = np.flatnonzero(npv >= 0)
    frame = pd.DataFrame({"mast_height_m": heights, "npv": npv})
    return (float(heights[ok[0]]) if ok.size else float("nan")), frame


def what_would_change(ev, n: int = 3) -> pd.DataFrame:
    """Break-even import price, mean speed and mast height of the ``n`` leading options.

    The leading options are the first ``n`` allowed rows of the ranking (the first ``n`` rows
    when none is allowed). Columns: ``position_id``, ``turbine_id``, ``verdict``, ``npv``,
    ``tariff_per_kwh``, ``break_even_import_price`` [currency/kWh], ``mean_speed_ms``,
    ``break_even_mean_speed_ms`` [m/s], ``mast_height_m``, ``mast_to_pay_back_m`` [m],
    ``mast_within_limit`` (against ``ranking.max_mast_height_m``).
    """
    t = ev.table
    lead = t[~t["excluded"]] if (~t["excluded"]).any() else t
    lead = lead.head(n)
    rows = []
    limit = ev.assessment.ranking.max_mast_height_m
    for r in lead.to_dict("records"):  # a few leading options, each a vectorised re-run
        mast, _ = mast_height_to_pay_back_m(ev, r["position_id"], r["turbine_id"]) \
            if r["npv"] < 0 else (float(r["mast_height_m"]), None)
        rows.append({
            "position_id": r["position_id"], "turbine_id": r["turbine_id"],
            "verdict": r.get("verdict", ""), "npv": r["npv"],
            "tariff_per_kwh": ev.assessment.economics.tariff_per_kwh,
            "break_even_import_price": r["break_even_import_price"],
            "mean_speed_ms": r["mean_speed_ms"],
            "break_even_mean_speed_ms": break_even_speed_ms(ev, r["position_id"],
                                                            r["turbine_id"]),
            "mast_height_m": r["mast_height_m"], "mast_to_pay_back_m": mast,
            "mast_within_limit": bool(np.isfinite(mast) and mast <= limit + 1e-9),
        })
    return pd.DataFrame(rows)


def npv_sensitivity(ev, position_id, turbine_id) -> pd.DataFrame:
    """NPV of one option with one input moved at a time, for a tornado chart [currency].

    Returns
    -------
    DataFrame
        One row per input (``input``, ``low_case``, ``high_case``, ``npv_low``, ``npv_high``,
        ``npv_base``): mean wind speed ×0.9/×1.1, installed cost ×0.8/×1.2 (every part),
        energy prices ×0.8/×1.2 (import and export), downtime none / availability loss + 0.10.
    """
    a, i, tur = _option(ev, position_id, turbine_id)
    eff, e = ev.climate, a.economics

    def npv(scale=1.0, econ=None, energy_factor=1.0, cost=1.0):
        return float(_npv_at_scales(a, eff, [i], tur, [scale], econ, energy_factor, cost)[0])

    def costs(s):
        return dataclasses.replace(e, **{k: getattr(e, k) * s for k in (
            "roof_mast_cost_per_m", "ground_mast_cost_per_m", "roof_structure_cost",
            "ground_structure_cost", "connection_cost")})

    def prices(s):
        return dataclasses.replace(e, tariff_per_kwh=e.tariff_per_kwh * s,
                                   export_price_per_kwh=e.export_price_per_kwh * s)

    avail = a.losses.availability
    more = min(avail + EXTRA_DOWNTIME, 0.9)
    base = npv()
    rows = [
        ("mean wind speed", "-10 %", "+10 %", npv(0.9), npv(1.1)),
        ("installed cost", "-20 %", "+20 %", npv(econ=costs(0.8), cost=0.8),
         npv(econ=costs(1.2), cost=1.2)),
        ("energy prices", "-20 %", "+20 %", npv(econ=prices(0.8)), npv(econ=prices(1.2))),
        ("downtime", "none", f"{more:.0%} of the year", npv(energy_factor=1.0 / (1.0 - avail)),
         npv(energy_factor=(1.0 - more) / (1.0 - avail))),
    ]
    return pd.DataFrame(rows, columns=["input", "low_case", "high_case", "npv_low",
                                       "npv_high"]).assign(npv_base=base)
