"""Self-consumption from hourly generation against an hourly load."""
import warnings

import numpy as np
import pytest

from engine.core import model
from engine.energy import selfuse


def test_self_consumption_hand_summed_hours():
    """Four hours, hand sums (definition E_self = sum min(G, L), Luthander et al. 2015).

    G = 0, 2, 5, 1 kWh; L = 1, 1, 3, 2 kWh; min = 0, 1, 3, 1 -> 5 kWh used of 8 generated:
    share 5/8 = 0.625, export 3 kWh; a second row G = 0.5 in each hour uses 0.5 × 4 = 2 kWh.
    """
    gen = np.array([[0.0, 2.0, 5.0, 1.0], [0.5, 0.5, 0.5, 0.5]])
    load = np.array([1.0, 1.0, 3.0, 2.0])
    used = selfuse.self_consumed_kwh(gen, load)
    assert used == pytest.approx([5.0, 2.0])
    assert used[0] / gen[0].sum() == pytest.approx(0.625)
    # Physics: never more than generated, never more than the load.
    assert np.all(used <= gen.sum(axis=1)) and np.all(used <= load.sum())


def test_blocks_do_not_change_the_sum():
    """Rows worked in blocks give the same sums as one block (bookkeeping)."""
    rng = np.random.default_rng(3)
    gen, load = rng.random((10, 48)), rng.random(48)
    assert selfuse.self_consumed_kwh(gen, load, block_rows=3) == pytest.approx(
        np.minimum(gen, load).sum(axis=1))


def test_typical_loads_sum_to_the_annual_load():
    """Each invented profile is scaled to the annual load; custom 24 values repeat daily."""
    for name in selfuse.LOAD_SHAPES:
        load = selfuse.typical_load_kwh(name, 3500.0)
        assert load.shape == (8760,) and np.all(load >= 0)
        assert load.sum() == pytest.approx(3500.0)
    custom = selfuse.typical_load_kwh("custom", 0.0, [0.5] * 24)
    assert custom.sum() == pytest.approx(0.5 * 8760)
    assert not selfuse.typical_load_kwh("none", 3500.0).any()


def test_calendar_counts_hours():
    """365 days of 24 h; a 365-day year that starts on a Monday has 53 Mondays (calendar)."""
    month, hour, weekday = selfuse.calendar()
    assert np.bincount(month).tolist() == [d * 24 for d in selfuse.MONTH_DAYS]
    assert np.bincount(weekday)[0] == 53 * 24
    assert np.bincount(hour).tolist() == [365] * 24


def test_unit_series_is_weibull_with_unit_mean():
    """Mean 1, non-negative; without monthly/diurnal shapes the hourly values follow the
    Weibull shape k: coefficient of variation sqrt(G(1+2/k)/G(1+1/k)^2 - 1) = 0.5227 at k = 2
    (Weibull moments), within sampling error of one year of correlated hours."""
    u = selfuse.unit_speed_series([2.0, 3.0])
    assert u.shape == (2, 8760) and np.all(u >= 0)
    assert u.mean(axis=1) == pytest.approx([1.0, 1.0])
    flat = selfuse.unit_speed_series([2.0], monthly_factor=[1.0] * 12, diurnal_factor=[1.0] * 24)
    cv = flat.std() / flat.mean()
    assert cv == pytest.approx(0.5227, abs=0.06)


def test_generation_shares_sum_to_one():
    """Shares of the year's energy in each hour sum to 1; a calm site gives zeros."""
    u = selfuse.unit_speed_series([2.0, 2.0])
    shares = selfuse.generation_shares([5.0, 0.0], u, [0.0, 3.0, 12.0, 25.0],
                                       [0.0, 0.0, 1000.0, 1000.0])
    assert shares[0].sum() == pytest.approx(1.0)
    assert not shares[1].any()


def test_self_consumed_share_bounds_and_load_effect():
    """Shares in [0, 1]; more load, more used on site; no load, nothing used (monotone)."""
    tur = model.Turbine(id="t", name="t", axis="horizontal", rated_power_w=2000.0,
                        curve_speed_ms=(3.0, 12.0, 25.0), curve_power_w=(0.0, 2000.0, 2000.0),
                        cut_in_ms=3.0, rated_speed_ms=12.0, cut_out_ms=25.0,
                        rotor_diameter_m=3.5)
    net = np.array([[1500.0], [6000.0]])
    shares = []
    for load in (0.0, 2000.0, 8000.0):
        e = model.Economics(annual_load_kwh=load,
                            load_profile="household" if load else "none")
        s = selfuse.self_consumed_share([4.0, 7.0], [2.0, 2.0], net, [tur], e)
        assert np.all((s >= 0) & (s <= 1))
        shares.append(s)
    assert not shares[0].any()
    assert np.all(shares[2] >= shares[1]) and np.all(shares[1] > 0)
    # Used on site never exceeds the load: share × E <= annual load.
    assert np.all(shares[1] * net <= 2000.0 + 1e-9)


def test_fast_path_equals_the_reference_composition():
    """The chain's in-place path gives the shares of generation_shares + self_consumed_kwh
    (the definitions above) to 1e-4: the curve table at 0.01 m/s steps and single precision
    move only the last digits."""
    tur = model.Turbine(id="t", name="t", axis="horizontal", rated_power_w=3000.0,
                        curve_speed_ms=(2.5, 4.0, 8.0, 11.0, 20.0),
                        curve_power_w=(0.0, 150.0, 1500.0, 3000.0, 3000.0),
                        cut_in_ms=2.5, rated_speed_ms=11.0, cut_out_ms=20.0,
                        rotor_diameter_m=4.0)
    mean, k = np.array([3.0, 5.5, 7.0]), np.array([1.6, 2.0, 2.6])
    net = np.array([[800.0], [3000.0], [6000.0]])
    e = model.Economics(load_profile="office", annual_load_kwh=5000.0)
    fast = selfuse.self_consumed_share(mean, k, net, [tur], e, block_rows=2)
    unit = selfuse.unit_speed_series(k)
    gen = selfuse.generation_shares(mean, unit, tur.curve_speed_ms, tur.curve_power_w) * net
    ref = selfuse.self_consumed_kwh(gen, selfuse.typical_load_kwh("office", 5000.0)) / net[:, 0]
    assert fast[:, 0] == pytest.approx(ref, abs=1e-4)


def test_a_curve_of_next_to_no_power_uses_nothing_and_does_not_overflow():
    """A curve knot of 2.6e-44 W (a case the property search found) once made net / total
    overflow single precision. Below a microwatt in every hour nothing is used on site, and
    no warning is raised (warnings are errors here)."""
    tur = model.Turbine(id="t", name="t", axis="horizontal", rated_power_w=100.0,
                        curve_speed_ms=(0.0, 4.8e-15, 9.0, 10.0),
                        curve_power_w=(0.0, 0.0, 2.6e-44, 100.0),
                        cut_in_ms=0.0, rated_speed_ms=1.0, cut_out_ms=10.0,
                        rotor_diameter_m=1.0)
    e = model.Economics(load_profile="household", annual_load_kwh=3500.0)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        s = selfuse.self_consumed_share([0.18], [0.5], np.array([[0.007]]), [tur], e)
    assert np.all(np.isfinite(s)) and np.all((s >= 0) & (s <= 1))

