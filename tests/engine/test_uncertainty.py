"""P50/P75/P90: analytic combination of speed and curve uncertainties, checked by Monte Carlo."""
import dataclasses
import math

import numpy as np
import pytest
from scipy.stats import norm

from engine.energy import aep as energy
from engine.core import model
from engine.energy import turbines
from engine.energy import uncertainty


def setup_one(c=6.0, k=2.0, ti=0.15):
    """One position, the library's 1.5 kW turbine, one sector."""
    t = turbines.library_by_id()["ha-1k5"]
    return energy.prepare_bins(np.ones((1, 1)), np.full((1, 1), k), np.full((1, 1), c),
                               np.full((1, 1), ti), np.zeros((1, 1)), [t], 1.225)


def test_speed_components_add_in_quadrature():
    """0.03 and 0.04 combine to 0.05 (root sum of squares of independent errors, 3-4-5)."""
    u = model.Uncertainty(0.03, 0.04, 0.0, 0.0, 0.0)
    assert uncertainty.combined_speed_uncertainty(u) == pytest.approx(0.05, rel=1e-15)


def test_exceedance_quantiles():
    """z for P90 is 1.2816 and for P75 0.6745 (standard normal tables); P50 is 0."""
    assert uncertainty.exceedance_z(90) == pytest.approx(1.2816, abs=5e-5)
    assert uncertainty.exceedance_z(75) == pytest.approx(0.6745, abs=5e-5)
    assert uncertainty.exceedance_z(50) == 0.0


def test_p_values_hand_value():
    """s = 3, σ_V = 0.05, no curve term: P90 = P50 exp(-1.2816 × 0.15) (log-normal, hand)."""
    u = model.Uncertainty(0.03, 0.04, 0.0, 0.0, 0.0)
    pv = uncertainty.p_values(1000.0, 3.0, u)
    assert pv[50] == pytest.approx(1000.0)
    assert pv[90] == pytest.approx(1000.0 * math.exp(-norm.ppf(0.9) * 0.15), rel=1e-12)
    assert pv[90] == pytest.approx(825.0, abs=0.5)  # 1000 e^-0.19224 = 825.1 (hand)


def test_curve_uncertainty_adds_in_quadrature():
    """σ_E = √((s σ_V)² + u_PC²): s 2, σ_V 0.06, u_PC 0.08 -> 0.1442 (hand)."""
    u = model.Uncertainty(0.06, 0.0, 0.0, 0.0, 0.08)
    assert uncertainty.energy_sigma(2.0, u) == pytest.approx(math.hypot(0.12, 0.08))


def test_order_and_bounds():
    """P90 <= P75 <= P50 and all are non-negative, whatever the uncertainty."""
    s = setup_one()
    for u in (model.Uncertainty(), model.Uncertainty(0.3, 0.3, 0.3, 0.5, 0.5)):
        pv = uncertainty.analytic_p_values(s, 0.9, u)
        assert np.all(pv[90] <= pv[75]) and np.all(pv[75] <= pv[50]) and np.all(pv[90] >= 0)


def test_secant_equals_exact_quantile_without_curve_uncertainty():
    """With speed uncertainty only, P90 is the energy at speed × e^(-1.2816 σ_V) (monotone map)."""
    s = setup_one()
    u = model.Uncertainty(0.05, 0.05, 0.05, 0.1, 0.0)
    sv = uncertainty.combined_speed_uncertainty(u)
    pv = uncertainty.analytic_p_values(s, 1.0, u)
    assert pv[90] == pytest.approx(s.energy_wh(math.exp(-norm.ppf(0.9) * sv)), rel=1e-9)


@pytest.mark.parametrize("u", [model.Uncertainty(),
                               model.Uncertainty(0.05, 0.05, 0.08, 0.25, 0.1),
                               model.Uncertainty(0.02, 0.02, 0.02, 0.02, 0.15)])
def test_monte_carlo_agrees_with_analytic(u):
    """Seeded Monte Carlo through the method of bins agrees with the analytic P75/P90 within 3 SE."""
    s = setup_one(c=5.0)
    pv = uncertainty.analytic_p_values(s, 0.9, u, energy.speed_sensitivity(s))
    mc = uncertainty.monte_carlo_p_values(s, 0.9, u, n_samples=20000, seed=7)
    for lv in (50, 75, 90):
        assert abs(pv[lv][0, 0] - mc.values[lv][0, 0]) < 3.0 * mc.standard_error[lv][0, 0]


def test_monte_carlo_is_reproducible():
    """The same seed gives the same sample quantiles."""
    s = setup_one()
    a = uncertainty.monte_carlo_p_values(s, 1.0, model.Uncertainty(), n_samples=2000, seed=3)
    b = uncertainty.monte_carlo_p_values(s, 1.0, model.Uncertainty(), n_samples=2000, seed=3)
    assert a.values[90] == pytest.approx(b.values[90], rel=0, abs=0)


def test_one_distribution_orders_the_levels_even_where_energy_vanishes():
    """P50 ≥ P75 ≥ P90 ≥ 0 by construction, also where the P90 speed gives no energy.

    A climate barely above cut-in with large speed uncertainty: the energy at the P90 speed
    is 0, so every level below P50 is 0 (one log-normal; previously P75 could fall below P90).
    """
    s = setup_one(c=1.2, k=3.0, ti=0.0)
    u = model.Uncertainty(0.3, 0.3, 0.3, 0.5, 0.1)
    e0 = s.energy_wh(1.0)
    pv = uncertainty.analytic_p_values(s, 1.0, u)
    assert np.all(pv[50] >= pv[75]) and np.all(pv[75] >= pv[90]) and np.all(pv[90] >= 0)
    table = uncertainty.exceedance_table(s, e0, u, 20)
    for key in ("p75_life", "p90_life", "p75_one_year", "p90_one_year"):
        assert np.all(np.isfinite(table[key])) and np.all(table[key] >= 0)


def test_one_year_p90_adds_interannual_variability():
    """σ² = σ_mean² + (s σ_IAV)²/n: one year n = 1, project life n = 20 (hand values).

    Inter-annual σ of the annual mean speed 6 % (common practice, from memory).
    """
    s = setup_one()
    u = model.Uncertainty(0.03, 0.04, 0.0, 0.0, 0.08, interannual_speed=0.06)
    e0 = s.energy_wh(1.0)
    table = uncertainty.exceedance_table(s, e0, u, 20)
    sens = uncertainty.distribution_sensitivity(s, u, e0)
    base2 = (sens * 0.05) ** 2 + 0.08 ** 2
    z90 = norm.ppf(0.9)
    np.testing.assert_allclose(table["p90_one_year"],
                               e0 * np.exp(-z90 * np.sqrt(base2 + (sens * 0.06) ** 2)))
    np.testing.assert_allclose(table["p90_life"],
                               e0 * np.exp(-z90 * np.sqrt(base2 + (sens * 0.06) ** 2 / 20)))
    assert np.all(table["p90_one_year"] < table["p90_life"])
    assert np.all(table["p90_life"] < table["p90_mean"])
    assert np.all(table["p75_one_year"] > table["p90_one_year"])


def test_one_year_p90_agrees_with_monte_carlo():
    """Seeded Monte Carlo with a one-year speed draw agrees with the analytic one-year P90."""
    s = setup_one(c=5.0)
    u = model.Uncertainty(0.03, 0.04, 0.06, 0.12, 0.08, interannual_speed=0.06)
    e0 = s.energy_wh(1.0)
    table = uncertainty.exceedance_table(s, e0 * 0.9, u, 20, gross_wh=e0)
    mc = uncertainty.monte_carlo_p_values(s, 0.9, u, n_samples=20000, seed=11, years=1)
    # The one log-normal uses the P90 secant for every level: exact at P90, cautious at P75.
    assert abs(table["p90_one_year"][0, 0] - mc.values[90][0, 0]) < 3 * mc.standard_error[90][0, 0]
    assert table["p75_one_year"][0, 0] <= mc.values[75][0, 0] + 3 * mc.standard_error[75][0, 0]


def test_long_term_correction_uncertainty_replaces_the_stated_component_only_upwards():
    """σ_LT = max(stated, computed): 0.04 stated and 0.09 computed give 0.09, so σ_V of
    (0.03, 0.09, 0.06, 0.12) is √0.0270 = 0.1643 (hand); 0.02 computed keeps 0.04."""
    u = model.Uncertainty()
    clim = model.WindClimate(height_m=10.0, roughness_m=0.03, frequency=(1.0,),
                             weibull_k=(2.0,), weibull_c_ms=(6.0,), long_term_uncertainty=0.09)
    got = uncertainty.with_climate(u, clim)
    assert got.speed_long_term == pytest.approx(0.09)
    assert uncertainty.combined_speed_uncertainty(got) == pytest.approx(math.sqrt(0.0270),
                                                                         rel=1e-12)
    low = uncertainty.with_climate(u, dataclasses.replace(clim, long_term_uncertainty=0.02))
    assert low is u
