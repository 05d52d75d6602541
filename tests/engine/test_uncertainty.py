"""P50/P75/P90: analytic combination of speed and curve uncertainties, checked by Monte Carlo."""
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
