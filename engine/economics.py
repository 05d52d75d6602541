"""Money and carbon: simple payback, net present value, levelised cost of energy, CO2 avoided.

All inputs come from :class:`engine.model.Economics` and the turbine's installed cost; every
function broadcasts over arrays of energy (position x turbine). Money is in the site's
currency; energy in kWh.

References
----------
Short, W., Packey, D. J. and Holt, T. (1995), "A Manual for the Economic Evaluation of Energy
Efficiency and Renewable Energy Technologies", NREL/TP-462-5173 (capital recovery factor,
levelised cost of energy, net present value).
"""
from __future__ import annotations

import math

import numpy as np


def capital_recovery_factor(discount_rate, lifetime_years):
    """Annuity (capital recovery) factor a = r / (1 - (1 + r)^-n) [1/year]; 1/n when r = 0.

    Notes
    -----
    The constant yearly payment that repays a capital of 1 over n years at rate r
    (Short, Packey & Holt 1995). n need not be a whole number. The denominator is worked as
    1 - (1 + r)^-n = -expm1(-n log1p(r)), which stays exact for a rate so small that 1 + r
    rounds to 1 (below about 1e-16), where the plain form divides by zero; a = 1/n is its
    limit as r -> 0.
    """
    r = float(discount_rate)
    n = float(lifetime_years)
    if r == 0.0:
        return 1.0 / n
    den = -math.expm1(-n * math.log1p(r))
    if den == 0.0:
        return 1.0 / n
    return r / den


def present_value_factor(discount_rate, lifetime_years):
    """Present value of 1 per year for n years, (1 - (1 + r)^-n) / r [year]; n when r = 0."""
    return 1.0 / capital_recovery_factor(discount_rate, lifetime_years)


def lcoe_per_kwh(installed_cost, om_cost_per_year, energy_kwh_per_year, discount_rate,
                 lifetime_years):
    """Levelised cost of energy [currency/kWh]; +inf where the energy is 0.

    Notes
    -----
    LCOE = (C_0 a + O&M) / E with the capital recovery factor a
    (:func:`capital_recovery_factor`), constant yearly energy E and O&M.
    """
    e = np.asarray(energy_kwh_per_year, float)
    cost = (np.asarray(installed_cost, float) * capital_recovery_factor(discount_rate,
                                                                        lifetime_years)
            + float(om_cost_per_year))
    cost = np.broadcast_to(cost, np.broadcast_shapes(np.shape(cost), e.shape))
    # Below a watt-hour a year the energy is nil for costing (and cost/E would overflow).
    return np.divide(cost, e, out=np.full(cost.shape, np.inf), where=e > 1e-3)


def yearly_net_saving(energy_kwh_per_year, tariff_per_kwh, om_cost_per_year):
    """Value of the energy less O&M each year, E p - O&M [currency/year]."""
    return np.asarray(energy_kwh_per_year, float) * float(tariff_per_kwh) - float(om_cost_per_year)


def simple_payback_years(installed_cost, energy_kwh_per_year, tariff_per_kwh, om_cost_per_year):
    """Simple payback C_0 / (E p - O&M) [years]; +inf when the yearly saving is not positive."""
    s = yearly_net_saving(energy_kwh_per_year, tariff_per_kwh, om_cost_per_year)
    c = np.broadcast_to(np.asarray(installed_cost, float), np.broadcast_shapes(
        np.shape(installed_cost), s.shape))
    return np.divide(c, s, out=np.full(c.shape, np.inf), where=s > 0)


def net_present_value(installed_cost, energy_kwh_per_year, tariff_per_kwh, om_cost_per_year,
                      discount_rate, lifetime_years):
    """Net present value -C_0 + (E p - O&M) (1 - (1 + r)^-n)/r [currency].

    Notes
    -----
    Constant yearly saving discounted over the lifetime (no tariff escalation, no
    degradation, no residual value).
    """
    s = yearly_net_saving(energy_kwh_per_year, tariff_per_kwh, om_cost_per_year)
    return s * present_value_factor(discount_rate, lifetime_years) - np.asarray(installed_cost,
                                                                                float)


def co2_avoided_kg_per_year(energy_kwh_per_year, emission_factor_kg_per_kwh):
    """CO2 the grid would have emitted for the same energy, E × grid factor [kg/year]."""
    return np.asarray(energy_kwh_per_year, float) * float(emission_factor_kg_per_kwh)


def economics_arrays(net_kwh, installed_cost, economics) -> dict:
    """All money and carbon figures for net energy (P, T) and installed costs (T,)."""
    e = economics
    cost = np.asarray(installed_cost, float)[None, :]
    return {
        "lcoe_per_kwh": lcoe_per_kwh(cost, e.om_cost_per_year, net_kwh, e.discount_rate,
                                     e.lifetime_years),
        "payback_years": simple_payback_years(cost, net_kwh, e.tariff_per_kwh,
                                              e.om_cost_per_year),
        "npv": net_present_value(cost, net_kwh, e.tariff_per_kwh, e.om_cost_per_year,
                                 e.discount_rate, e.lifetime_years),
        "co2_avoided_kg_per_year": co2_avoided_kg_per_year(net_kwh,
                                                           e.emission_factor_kg_per_kwh),
    }
