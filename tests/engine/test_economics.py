"""Money and carbon against hand-computed annuity values."""
import numpy as np
import pytest

from engine.energy import economics
from engine.core import model


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


def _econ(**kw):
    """An invented case (not demo data) with every money input stated."""
    base = dict(tariff_per_kwh=0.30, export_price_per_kwh=0.05, standby_kwh_per_year=40.0,
                om_cost_per_year=100.0, discount_rate=0.05, lifetime_years=20.0,
                tariff_escalation_per_year=0.0, degradation_per_year=0.0,
                roof_mast_cost_per_m=200.0, ground_mast_cost_per_m=300.0,
                roof_structure_cost=1500.0, ground_structure_cost=800.0, connection_cost=500.0,
                emission_factor_kg_per_kwh=0.25, load_profile="none")
    base.update(kw)
    return model.Economics(**base)


def test_cost_parts_by_height_and_kind():
    """Roof, 5 m: 6000 + 5 × 200 + 1500 + 500 = 9000; ground mast 12 m: 6000 + 12 × 300 + 800
    + 500 = 10900 (hand sums of the stated rates)."""
    parts = economics.installed_cost_parts([6000.0], [5.0, 12.0], ["roof", "mast"], _econ())
    assert parts["cost_mast"][:, 0] == pytest.approx([1000.0, 3600.0])
    assert parts["installed_cost"][:, 0] == pytest.approx([9000.0, 10900.0])


def test_npv_payback_lcoe_hand_calculation():
    """Worked example, constant prices (hand arithmetic, annuity formula of Short, Packey & Holt
    1995; A(5 %, 20 yr) = 12.46221 from annuity tables).

    E = 2000 kWh/yr, self-consumed share 0.6: 1200 kWh used at 0.30, 800 kWh exported at 0.05;
    standby 40 kWh bought at 0.30; O&M 100; installed 9000 (the parts above).
    First-year saving = 1200 × 0.30 + 800 × 0.05 - 40 × 0.30 - 100 = 360 + 40 - 12 - 100 = 288.
    NPV = 288 × 12.46221 - 9000 = 3589.12 - 9000 = -5410.88.
    Payback = 9000 / 288 = 31.25 years.
    LCOE = (9000 + 100 × 12.46221) / (2000 × 12.46221) = 10246.22 / 24924.42 = 0.41109.
    Break-even import price: dNPV/dp = (1200 - 40) × 12.46221 = 14456.16;
    p* = 0.30 + 5410.88 / 14456.16 = 0.67430.
    CO2 = (2000 - 40) × 0.25 = 490 kg/yr.
    """
    parts = economics.installed_cost_parts([6000.0], [5.0], ["roof"], _econ())
    out = economics.economics_arrays(np.array([[2000.0]]), np.array([[0.6]]), parts, _econ())
    assert out["first_year_saving"][0, 0] == pytest.approx(288.0)
    assert out["npv"][0, 0] == pytest.approx(-5410.88, abs=0.01)
    assert out["npv_without_support"][0, 0] == pytest.approx(-5410.88, abs=0.01)
    assert out["payback_years"][0, 0] == pytest.approx(31.25, abs=1e-9)
    assert out["lcoe_per_kwh"][0, 0] == pytest.approx(0.41109, abs=1e-5)
    assert out["break_even_import_price"][0, 0] == pytest.approx(0.67430, abs=1e-5)
    assert out["co2_avoided_kg_per_year"][0, 0] == pytest.approx(490.0)
    assert out["self_consumed_kwh"][0, 0] == pytest.approx(1200.0)
    assert out["exported_kwh"][0, 0] == pytest.approx(800.0)
    # 20 years of 288 never repay 9000 undiscounted (5760), so no discounted payback either.
    assert np.isposinf(out["discounted_payback_years"][0, 0])


def test_escalation_and_degradation_two_year_hand_calculation():
    """n = 2, r = 10 %, prices +5 %/yr, energy -2 %/yr; E = 1000, s = 0.5, p_i 0.20, p_e 0.10,
    no standby, O&M 50, cost 300 (hand arithmetic, discounted cash flow definition).

    Year 1: 500 × 0.20 + 500 × 0.10 = 150; 150 - 50 = 100; / 1.1 = 90.9091.
    Year 2: 150 × 0.98 × 1.05 = 154.35; - 50 = 104.35; / 1.21 = 86.2397.
    NPV = 90.9091 + 86.2397 - 300 = -122.8512.
    Cash payback: 100, 204.35, then year 3 adds 150 × 1.029² - 50 = 108.8236;
    payback = 2 + (300 - 204.35) / 108.8236 = 2.87894 years.
    LCOE = (300 + 50 × (1/1.1 + 1/1.21)) / (1000 × (1/1.1 + 0.98/1.21))
         = (300 + 86.7769) / 1719.0083 = 0.225000.
    """
    e = _econ(tariff_per_kwh=0.20, export_price_per_kwh=0.10, standby_kwh_per_year=0.0,
              om_cost_per_year=50.0, discount_rate=0.10, lifetime_years=2.0,
              tariff_escalation_per_year=0.05, degradation_per_year=0.02)
    parts = {"installed_cost": np.array([300.0])}
    out = economics.economics_arrays(np.array([1000.0]), np.array([0.5]), parts, e)
    assert out["npv"][0] == pytest.approx(-122.8512, abs=1e-3)
    assert out["payback_years"][0] == pytest.approx(2.87894, abs=1e-4)
    assert out["lcoe_per_kwh"][0] == pytest.approx(386.7769 / 1719.0083, abs=1e-6)


def test_break_even_import_price_gives_zero_npv():
    """At the break-even import price the NPV is zero within rounding (a cent) - definition."""
    e = _econ(tariff_escalation_per_year=0.02, degradation_per_year=0.01, load_profile="none")
    parts = economics.installed_cost_parts([7000.0, 20000.0], [6.0, 10.0], ["roof", "mast"], e)
    net = np.array([[1500.0, 6000.0], [900.0, 4000.0]])
    share = np.array([[0.7, 0.3], [0.9, 0.45]])
    be = economics.economics_arrays(net, share, parts, e)["break_even_import_price"]
    for i in range(2):
        for j in range(2):
            e2 = _econ(tariff_escalation_per_year=0.02, degradation_per_year=0.01,
                       tariff_per_kwh=float(be[i, j]))
            npv = economics.economics_arrays(net[i, j], share[i, j],
                                             {"installed_cost": parts["installed_cost"][i, j]},
                                             e2)["npv"]
            assert abs(float(npv)) < 0.01


def test_support_and_grant_enter_npv_only_with_support():
    """Grant 2000 and 0.10/kWh for 10 of 20 years on 2000 kWh at 5 %, no degradation:
    support PV = 2000 + 200 × 7.72173 = 3544.35 (A(5 %, 10 yr) = 7.72173, annuity tables)."""
    e = _econ(capital_grant=2000.0, support_per_kwh=0.10, support_years=10.0)
    parts = {"installed_cost": np.array([9000.0])}
    out = economics.economics_arrays(np.array([2000.0]), np.array([0.6]), parts, e)
    assert out["npv"][0] - out["npv_without_support"][0] == pytest.approx(3544.35, abs=0.01)


def test_growing_annuity_is_stable_near_zero_rate():
    """r = 0 and r = 1e-16: A = n (limit of the geometric sum); CRF = 1/n, never a division by
    zero; r = g: A = n / (1 + r) (each term is 1/(1+r)) - hand limits of the formula."""
    for r in (0.0, 1e-300, 1e-16, 1e-12):
        assert economics.growing_annuity_factor(r, 0.0, 25) == pytest.approx(25.0, rel=1e-9)
        assert economics.capital_recovery_factor(r, 25) == pytest.approx(0.04, rel=1e-9)
    assert economics.growing_annuity_factor(0.07, 0.07, 20) == pytest.approx(20 / 1.07)
    # Against the plain sum of the series for ordinary rates.
    r, g, n = 0.06, -0.01, 15
    direct = sum((1 + g) ** (y - 1) / (1 + r) ** y for y in range(1, n + 1))
    assert economics.growing_annuity_factor(r, g, n) == pytest.approx(direct, rel=1e-12)
    arr = economics.growing_annuity_factor(np.array([0.0, 1e-16, 0.05]), 0.0, 20)
    assert np.all(np.isfinite(arr))


def test_zero_discount_rate_npv_is_undiscounted_sum():
    """r = 0 (and 1e-16), constant flows: NPV = n × saving - C0 = 20 × 288 - 9000 = -3240;
    LCOE = (9000 + 20 × 100) / (20 × 2000) = 0.275 (hand)."""
    for r in (0.0, 1e-16):
        with np.errstate(all="raise"):
            out = economics.economics_arrays(np.array([2000.0]), np.array([0.6]),
                                             {"installed_cost": np.array([9000.0])},
                                             _econ(discount_rate=r))
        assert out["npv"][0] == pytest.approx(-3240.0)
        assert out["lcoe_per_kwh"][0] == pytest.approx(0.275)


def test_economics_arrays_shapes_and_bounds():
    """All money columns broadcast over (position, turbine); shares in [0, 1]; used <= generated."""
    net = np.array([[1000.0, 2000.0], [0.0, 4000.0]])
    parts = economics.installed_cost_parts([5000.0, 20000.0], [4.0, 8.0], ["roof", "gap"],
                                           _econ())
    out = economics.economics_arrays(net, np.array([[0.5, 1.2], [0.3, -0.1]]), parts, _econ())
    for v in out.values():
        assert np.shape(v) == (2, 2)
    assert np.isinf(out["lcoe_per_kwh"][1, 0])
    assert np.all((out["self_consumed_share"] >= 0) & (out["self_consumed_share"] <= 1))
    assert np.all(out["self_consumed_kwh"] <= net + 1e-12)
    assert np.all(out["exported_kwh"] >= 0)


def test_bad_money_input_names_the_field():
    """Out-of-range or inconsistent money inputs are all reported, each naming its field."""
    from engine.core.errors import InputError
    with pytest.raises(InputError) as err:
        model.Economics(export_price_per_kwh=-0.1, degradation_per_year=0.5,
                        load_profile="custom", load_hourly_kwh=(1.0,) * 10,
                        standby_kwh_per_year=-5.0)
    where = [w for w, _ in err.value.problems]
    for name in ("export_price_per_kwh", "degradation_per_year", "load_hourly_kwh",
                 "standby_kwh_per_year"):
        assert name in where
    with pytest.raises(InputError) as err:
        model.Economics(load_profile="bakery")
    assert "must be one of household" in err.value.problems[0][1]


def test_old_economics_section_still_loads():
    """A site file written before the new keys loads with their defaults (backward compat)."""
    from engine.io import sitefile
    import json
    from pathlib import Path
    demo = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"
    data = json.loads(demo.read_text())
    data["economics"] = {"currency": "EUR", "om_cost_per_year": 150.0, "tariff_per_kwh": 0.25,
                         "discount_rate": 0.05, "lifetime_years": 20.0,
                         "emission_factor_kg_per_kwh": 0.25}
    data["ranking"].pop("viability_first", None)
    a = sitefile.loads(json.dumps(data))
    assert a.economics.export_price_per_kwh == model.Economics().export_price_per_kwh
    assert a.ranking.viability_first is False


def test_money_invariants_on_random_cases():
    """Seeded random cases: NPV rises with the import price and falls with the cost (slope of
    -1); NPV >= 0 without support means a discounted payback within the life (definitions)."""
    rng = np.random.default_rng(11)
    n = 200
    net = rng.uniform(0, 10000, n)
    share = rng.uniform(0, 1, n)
    cost = rng.uniform(2000, 40000, n)
    e = _econ(tariff_escalation_per_year=0.02, degradation_per_year=0.01, discount_rate=0.04)
    base = economics.economics_arrays(net, share, {"installed_cost": cost}, e)
    dearer = economics.economics_arrays(net, share, {"installed_cost": cost},
                                        _econ(tariff_escalation_per_year=0.02,
                                              degradation_per_year=0.01, discount_rate=0.04,
                                              tariff_per_kwh=0.40))
    used = share * net > e.standby_kwh_per_year
    assert np.all(dearer["npv"][used] > base["npv"][used])
    more = economics.economics_arrays(net, share, {"installed_cost": cost + 1000.0}, e)
    assert more["npv"] == pytest.approx(base["npv"] - 1000.0)
    pays = base["npv_without_support"] >= 0
    assert np.all(base["discounted_payback_years"][pays] <= e.lifetime_years + 1e-9)
    assert np.all(base["discounted_payback_years"][~pays] > e.lifetime_years - 1e-9)
    assert np.all(base["payback_years"] <= base["discounted_payback_years"] + 1e-9)


@pytest.mark.parametrize("rate", [1e-16, 5e-17, 1e-17, 1e-300, 5e-324])
def test_capital_recovery_factor_for_rates_where_one_plus_r_rounds_to_one(rate):
    """The annuity factor tends to 1/n as r -> 0 (Short, Packey & Holt 1995, NREL/TP-462-5173);
    rates below ~1e-16 used to divide by zero."""
    assert economics.capital_recovery_factor(rate, 25) == pytest.approx(1 / 25, rel=1e-9)
    assert economics.present_value_factor(rate, 25) == pytest.approx(25.0, rel=1e-9)
