"""Money and carbon against hand-computed annuity values."""
import numpy as np
import pytest

from engine import economics, model


def test_capital_recovery_factor_tables():
    """r 5 %, n 20 years: a = 0.080243 (annuity tables, Short, Packey & Holt 1995 formula)."""
    assert economics.capital_recovery_factor(0.05, 20) == pytest.approx(0.0802426, abs=5e-7)
    assert economics.present_value_factor(0.05, 20) == pytest.approx(12.4622, abs=5e-5)


def test_zero_discount_rate_is_straight_line():
    """r = 0: a = 1/n (limit of the annuity formula)."""
    assert economics.capital_recovery_factor(0.0, 25) == pytest.approx(0.04)
    assert economics.capital_recovery_factor(1e-9, 25) == pytest.approx(0.04, rel=1e-6)


def test_lcoe_hand_value():
    """C0 10000, O&M 150/yr, 2000 kWh/yr, 5 %, 20 yr: (802.43 + 150)/2000 = 0.4762 per kWh (hand)."""
    got = economics.lcoe_per_kwh(10000.0, 150.0, 2000.0, 0.05, 20)
    assert got == pytest.approx((10000 * 0.0802426 + 150) / 2000, rel=1e-6)
    assert got == pytest.approx(0.4762, abs=5e-5)


def test_npv_and_payback_hand_values():
    """Saving 2000 × 0.25 - 150 = 350/yr: NPV = 350 × 12.4622 - 10000 = -5638.2; payback 28.57 yr (hand)."""
    npv = economics.net_present_value(10000.0, 2000.0, 0.25, 150.0, 0.05, 20)
    assert npv == pytest.approx(-5638.2, abs=0.1)
    assert economics.simple_payback_years(10000.0, 2000.0, 0.25, 150.0) == pytest.approx(10000 / 350)


def test_no_energy_gives_infinite_cost_and_payback():
    """Zero energy: LCOE and payback are +inf (never a division warning or a negative payback)."""
    assert np.isinf(economics.lcoe_per_kwh(5000.0, 100.0, 0.0, 0.05, 20))
    assert np.isinf(economics.simple_payback_years(5000.0, 100.0, 0.25, 150.0))  # saving < 0


def test_co2_avoided():
    """1800 kWh × 0.25 kg/kWh = 450 kg/yr (definition of a grid emission factor)."""
    assert economics.co2_avoided_kg_per_year(1800.0, 0.25) == pytest.approx(450.0)


def test_economics_arrays_shapes_follow_energy():
    """All money columns broadcast over (position, turbine) from per-turbine costs."""
    net = np.array([[1000.0, 2000.0], [0.0, 4000.0]])
    out = economics.economics_arrays(net, [5000.0, 20000.0], model.Economics())
    for v in out.values():
        assert v.shape == (2, 2)
    assert np.isinf(out["lcoe_per_kwh"][1, 0])
    assert out["npv"][0, 0] == pytest.approx(
        (1000 * 0.25 - 150) * economics.present_value_factor(0.05, 20) - 5000)


@pytest.mark.parametrize("rate", [1e-16, 5e-17, 1e-17, 1e-300, 5e-324])
def test_capital_recovery_factor_for_rates_where_one_plus_r_rounds_to_one(rate):
    """The annuity factor tends to 1/n as r -> 0 (Short, Packey & Holt 1995, NREL/TP-462-5173);
    rates below ~1e-16 used to divide by zero."""
    assert economics.capital_recovery_factor(rate, 25) == pytest.approx(1 / 25, rel=1e-9)
    assert economics.present_value_factor(rate, 25) == pytest.approx(25.0, rel=1e-9)
