"""Money and carbon as the client sees them: installed cost by part, self-consumption at the
import price and export at the export price, standby consumption, O&M, escalation, degradation,
support; net present value, payback, levelised cost of energy, CO2 avoided, break-even price.

All inputs come from :class:`engine.core.model.Economics`, the turbine's ``installed_cost`` and
the position (its kind and mast height); every function broadcasts over arrays of rows
(position x turbine). Money is in the site's currency; energy in kWh; rates per year.

Cash flow of year y = 1..n (today's money escalated at g, discounted at r):

    F_y = (E_s p_i + E_x p_e) x^(y-1) - B p_i (1+g)^(y-1) - O + sigma E (1-d)^(y-1) [y <= m]

with x = (1-d)(1+g), E the first year's net energy, E_s = s E its self-consumed part,
E_x = E - E_s the export, B the standby consumption, O the O&M, d the degradation, sigma the
support per kWh for m years; NPV = -(C_0 - grant) + sum_y F_y / (1+r)^y.

References
----------
Short, W., Packey, D. J. and Holt, T. (1995), "A Manual for the Economic Evaluation of Energy
Efficiency and Renewable Energy Technologies", NREL/TP-462-5173 (present value of a growing
annuity, capital recovery factor, levelised cost of energy, net present value, payback).
"""
from __future__ import annotations

import numpy as np

from engine.energy import selfuse

#: Years searched for a payback; beyond it the payback is reported as never (+inf).
PAYBACK_HORIZON_YEARS = 100


def growing_annuity_factor(discount_rate, growth, years):
    """Present value of a yearly flow that starts at 1 and grows at ``growth`` [year].

    Parameters
    ----------
    discount_rate : float or ndarray
        r [1/year], >= 0.
    growth : float or ndarray
        g [1/year], > -1 (negative for a falling flow, e.g. degradation).
    years : float or ndarray
        n [year].

    Returns
    -------
    float or ndarray
        A = sum_{y=1..n} (1+g)^(y-1) / (1+r)^y.

    Notes
    -----
    With q = (1+g)/(1+r) and L = ln q = ln(1+g) - ln(1+r),
    A = (1/(1+r)) (q^n - 1)/(q - 1) = (1/(1+r)) expm1(n L)/expm1(L), which tends to
    n/(1+r) as L -> 0 (g = r, and r = g = 0 gives n). The log1p/expm1 form never divides by
    zero and keeps full precision for rates down to 1e-16 (Short, Packey & Holt 1995, for the
    sum; the stable form is the usual numerical treatment).
    """
    r = np.asarray(discount_rate, float)
    g = np.asarray(growth, float)
    n = np.asarray(years, float)
    lq = np.log1p(g) - np.log1p(r)
    small = np.abs(lq) < 1e-9
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(small, n * (1.0 + 0.5 * (n - 1.0) * lq),
                         np.expm1(n * lq) / np.where(small, 1.0, np.expm1(lq)))
    out = ratio / (1.0 + r)
    return float(out) if out.ndim == 0 else out


def capital_recovery_factor(discount_rate, lifetime_years):
    """Annuity (capital recovery) factor a = r / (1 - (1 + r)^-n) [1/year]; 1/n when r = 0.

    Notes
    -----
    The constant yearly payment that repays a capital of 1 over n years at rate r
    (Short, Packey & Holt 1995): 1 / :func:`growing_annuity_factor` (r, 0, n), safe as r -> 0.
    """
    return 1.0 / growing_annuity_factor(discount_rate, 0.0, lifetime_years)


def present_value_factor(discount_rate, lifetime_years):
    """Present value of 1 per year for n years, (1 - (1 + r)^-n) / r [year]; n when r = 0."""
    return growing_annuity_factor(discount_rate, 0.0, lifetime_years)


def lcoe_per_kwh(installed_cost, om_cost_per_year, energy_kwh_per_year, discount_rate,
                 lifetime_years, degradation_per_year=0.0):
    """Levelised cost of energy [currency/kWh]; +inf where the energy is 0.

    Notes
    -----
    LCOE = (C_0 + O A(r, 0, n)) / (E A(r, -d, n)): discounted costs over discounted energy,
    with :func:`growing_annuity_factor` A; for d = 0 it is (C_0 a + O)/E with the capital
    recovery factor a (Short, Packey & Holt 1995). Support, grants and prices do not enter.
    """
    e = np.asarray(energy_kwh_per_year, float)
    cost = (np.asarray(installed_cost, float)
            + float(om_cost_per_year) * growing_annuity_factor(discount_rate, 0.0, lifetime_years))
    disc_e = e * growing_annuity_factor(discount_rate, -float(degradation_per_year),
                                        lifetime_years)
    cost = np.broadcast_to(cost, np.broadcast_shapes(np.shape(cost), e.shape))
    # Below a watt-hour a year the energy is nil for costing (and cost/E would overflow).
    return np.divide(cost, disc_e, out=np.full(cost.shape, np.inf), where=e > 1e-3)


def yearly_net_saving(energy_kwh_per_year, tariff_per_kwh, om_cost_per_year):
    """Value of the energy less O&M each year at one price, E p - O&M [currency/year]."""
    return np.asarray(energy_kwh_per_year, float) * float(tariff_per_kwh) - float(om_cost_per_year)


def simple_payback_years(installed_cost, energy_kwh_per_year, tariff_per_kwh, om_cost_per_year):
    """Simple payback C_0 / (E p - O&M) at one price [years]; +inf when the saving is <= 0."""
    s = yearly_net_saving(energy_kwh_per_year, tariff_per_kwh, om_cost_per_year)
    c = np.broadcast_to(np.asarray(installed_cost, float), np.broadcast_shapes(
        np.shape(installed_cost), s.shape))
    return np.divide(c, s, out=np.full(c.shape, np.inf), where=s > 0)


def net_present_value(installed_cost, energy_kwh_per_year, tariff_per_kwh, om_cost_per_year,
                      discount_rate, lifetime_years):
    """Net present value at one price, constant flows, -C_0 + (E p - O&M) A(r, 0, n) [currency]."""
    s = yearly_net_saving(energy_kwh_per_year, tariff_per_kwh, om_cost_per_year)
    return s * present_value_factor(discount_rate, lifetime_years) - np.asarray(installed_cost,
                                                                                float)


def co2_avoided_kg_per_year(energy_kwh_per_year, emission_factor_kg_per_kwh):
    """CO2 the grid would have emitted for the same energy, E × grid factor [kg/year]."""
    return np.asarray(energy_kwh_per_year, float) * float(emission_factor_kg_per_kwh)


def installed_cost_parts(turbine_cost, mast_height_m, kinds, economics) -> dict:
    """Installed cost by part for positions (P,) x turbines (T,) [currency], each (P, T).

    ``cost_turbine`` is the turbine's price; ``cost_mast`` the mast or bracket, its rate per
    metre times the mast height (roof rate on roofs, free-standing rate for gap and mast
    positions); ``cost_structure`` roof fixings or a foundation; ``cost_connection`` inverter,
    wiring and grid connection; ``installed_cost`` their sum. Linear in height: real masts cost
    more than linearly with height and rotor size (common practice), so tall masts are if
    anything under-costed.
    """
    e = economics
    turbine = np.asarray(turbine_cost, float)[None, :]
    mast = np.asarray(mast_height_m, float)[:, None]
    roof = (np.asarray(kinds) == "roof")[:, None]
    shape = np.broadcast_shapes(turbine.shape, mast.shape)
    parts = {
        "cost_turbine": np.broadcast_to(turbine, shape),
        "cost_mast": np.broadcast_to(mast * np.where(roof, e.roof_mast_cost_per_m,
                                                     e.ground_mast_cost_per_m), shape),
        "cost_structure": np.broadcast_to(np.where(roof, e.roof_structure_cost,
                                                   e.ground_structure_cost), shape),
        "cost_connection": np.full(shape, float(e.connection_cost)),
    }
    parts["installed_cost"] = sum(parts.values())
    return {k: np.array(v, float) for k, v in parts.items()}


def _flows(net_kwh, self_share, e, price_scale=1.0):
    """First-year flows and their present-value factors (shared by NPV and break-even)."""
    n = float(e.lifetime_years)
    r, g, d = float(e.discount_rate), float(e.tariff_escalation_per_year), float(
        e.degradation_per_year)
    p_i, p_e = e.tariff_per_kwh * price_scale, e.export_price_per_kwh * price_scale
    energy = np.asarray(net_kwh, float)
    used = energy * np.clip(np.asarray(self_share, float), 0.0, 1.0)
    return {
        "energy": energy, "used": used, "exported": energy - used, "p_i": p_i, "p_e": p_e,
        "a_value": growing_annuity_factor(r, (1.0 - d) * (1.0 + g) - 1.0, n),
        "a_price": growing_annuity_factor(r, g, n),
        "a_flat": growing_annuity_factor(r, 0.0, n),
        "a_support": growing_annuity_factor(r, -d, min(float(e.support_years), n)),
    }


def _npv(f, cost, e, support=True):
    value = (f["used"] * f["p_i"] + f["exported"] * f["p_e"]) * f["a_value"]
    npv = (value - e.standby_kwh_per_year * f["p_i"] * f["a_price"]
           - e.om_cost_per_year * f["a_flat"] - cost)
    if support:
        npv = npv + e.capital_grant + e.support_per_kwh * f["energy"] * f["a_support"]
    return npv


def payback_years(net_kwh, self_share, cost, e, discounted=False, price_scale=1.0):
    """Years until the cumulative cash flow repays the installed cost less the grant [years].

    Year-by-year sums of F_y (discounted by (1+r)^y when ``discounted``), interpolated within
    the year where the sum crosses the cost; +inf when it does not within
    :data:`PAYBACK_HORIZON_YEARS` (the turbine may not last that long: compare with the life).
    """
    f = _flows(net_kwh, self_share, e, price_scale)
    r, g, d = e.discount_rate, e.tariff_escalation_per_year, e.degradation_per_year
    need = np.maximum(np.asarray(cost, float) - e.capital_grant, 0.0) + 0.0 * f["energy"]
    # years on a leading axis, every row at once: flow[y - 1] is year y's cash flow
    years = np.arange(1, PAYBACK_HORIZON_YEARS + 1, dtype=float).reshape((-1,) + (1,) * need.ndim)
    grow = ((1 - d) * (1 + g)) ** (years - 1)
    flow = ((f["used"] * f["p_i"] + f["exported"] * f["p_e"]) * grow
            - e.standby_kwh_per_year * f["p_i"] * (1 + g) ** (years - 1) - e.om_cost_per_year
            + np.where(years <= e.support_years,
                       e.support_per_kwh * f["energy"] * (1 - d) ** (years - 1), 0.0))
    if discounted:
        flow = flow / (1.0 + r) ** years
    flow = np.broadcast_to(flow, (PAYBACK_HORIZON_YEARS,) + need.shape)
    after = np.cumsum(flow, axis=0)
    before = np.concatenate([np.zeros((1,) + need.shape), after[:-1]], axis=0)
    hit = (after >= need) & (flow > 0)
    first = np.argmax(hit, axis=0)[None]  # the first year the sum reaches the cost
    cum = np.take_along_axis(before, first, axis=0)[0]
    fl = np.take_along_axis(flow, first, axis=0)[0]
    crossed = hit.any(axis=0)
    out = np.where(crossed, first[0] + (need - cum) / np.where(crossed, fl, 1.0), np.inf)
    return np.where(need <= 0, 0.0, out)


def economics_arrays(net_kwh, self_share, cost_parts, economics) -> dict:
    """All money and carbon figures of rows of any shape [currency, years, kWh, kg].

    Parameters
    ----------
    net_kwh : ndarray
        First-year net energy E [kWh/year].
    self_share : ndarray
        Self-consumed share s of E [-] (:mod:`engine.energy.selfuse`).
    cost_parts : dict
        :func:`installed_cost_parts` (``installed_cost`` is used; the parts are passed on).
    economics : :class:`engine.core.model.Economics`

    Returns
    -------
    dict of ndarray
        ``npv`` (with grant and support), ``npv_without_support``, ``payback_years`` (cash,
        undiscounted), ``discounted_payback_years``, ``lcoe_per_kwh``, ``first_year_saving``,
        ``self_consumed_share``, ``self_consumed_kwh``, ``exported_kwh``,
        ``break_even_import_price`` (import price at which ``npv`` = 0; NaN when the import
        price cannot make it pay, i.e. nothing self-consumed beyond the standby) and
        ``co2_avoided_kg_per_year`` ((E - B) × grid factor), plus the cost parts.

    Notes
    -----
    NPV is linear in the import price p_i: NPV(p_i) = NPV_0 + p_i D with
    D = E_s A(r, x-1, n) - B A(r, g, n), so the break-even price is p_i - NPV/D for D > 0.
    """
    e = economics
    cost = np.asarray(cost_parts["installed_cost"], float)
    f = _flows(net_kwh, self_share, e)
    npv = _npv(f, cost, e)
    slope = f["used"] * f["a_value"] - e.standby_kwh_per_year * f["a_price"]
    with np.errstate(divide="ignore", invalid="ignore"):
        be = np.where(slope > 0, e.tariff_per_kwh - npv / np.where(slope > 0, slope, 1.0), np.nan)
    first = (f["used"] * f["p_i"] + f["exported"] * f["p_e"] - e.standby_kwh_per_year * f["p_i"]
             - e.om_cost_per_year + (e.support_per_kwh * f["energy"] if e.support_years >= 1
                                     else 0.0))
    out = dict(cost_parts)
    out.update({
        "self_consumed_share": np.clip(np.asarray(self_share, float), 0.0, 1.0) + 0.0 * cost,
        "self_consumed_kwh": f["used"],
        "exported_kwh": f["exported"],
        "first_year_saving": first,
        "npv": npv,
        "npv_without_support": _npv(f, cost, e, support=False),
        "payback_years": payback_years(net_kwh, self_share, cost, e),
        "discounted_payback_years": payback_years(net_kwh, self_share, cost, e, discounted=True),
        "lcoe_per_kwh": lcoe_per_kwh(cost, e.om_cost_per_year, net_kwh, e.discount_rate,
                                     e.lifetime_years, e.degradation_per_year),
        "break_even_import_price": be,
        "co2_avoided_kg_per_year": co2_avoided_kg_per_year(
            f["energy"] - e.standby_kwh_per_year, e.emission_factor_kg_per_kwh),
    })
    return out


def position_money(net_kwh, mean_speed_ms, weibull_k, kinds, mast_height_m, turbines,
                   economics, monthly_mean_ms=()) -> dict:
    """Money of positions (P,) x turbines (T,): self-consumption, cost parts, NPV... each (P, T).

    The chain's one entry point: the hourly self-consumed share
    (:func:`engine.energy.selfuse.self_consumed_share`), the cost parts
    (:func:`installed_cost_parts`) and :func:`economics_arrays`.
    """
    net = np.asarray(net_kwh, float)
    share = selfuse.self_consumed_share(mean_speed_ms, weibull_k, net, turbines, economics,
                                        monthly_mean_ms)
    parts = installed_cost_parts([t.installed_cost for t in turbines], mast_height_m, kinds,
                                 economics)
    return economics_arrays(net, share, parts, economics)
