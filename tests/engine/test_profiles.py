"""EN 1991-1-4 terrain factor, roughness factor, log and power laws (engine.flow.profiles)."""
import math

import numpy as np
import pytest

from engine.flow import profiles


def test_table_4_1_roughness_and_minimum_heights():
    """Terrain categories carry the z0 and z_min of EN 1991-1-4 Table 4.1."""
    # EN 1991-1-4:2005 Table 4.1 (z0 [m], z_min [m])
    table = {"0": (0.003, 1.0), "I": (0.01, 1.0), "II": (0.05, 2.0), "III": (0.3, 5.0),
             "IV": (1.0, 10.0)}
    assert profiles.EN1991_TERRAIN == table
    for z0, zmin in table.values():
        assert profiles.minimum_height_m(z0) == pytest.approx(zmin)


def test_terrain_factor_eq_4_5():
    """k_r = 0.19 (z0/0.05)^0.07; category II gives exactly 0.19."""
    assert profiles.terrain_factor(0.05) == pytest.approx(0.19)  # EN 1991-1-4 eq. (4.5)
    for z0 in (0.003, 0.01, 0.3, 1.0):
        # EN 1991-1-4 eq. (4.5), evaluated by hand
        assert profiles.terrain_factor(z0) == pytest.approx(0.19 * (z0 / 0.05) ** 0.07, rel=1e-12)
    # Category IV: 0.19 * 20^0.07 = 0.2343 (EN 1991-1-4 eq. 4.5, hand value to 4 places)
    assert profiles.terrain_factor(1.0) == pytest.approx(0.2343, abs=1e-4)


def test_roughness_factor_at_10_m_for_each_category():
    """c_r(10 m) per category matches k_r ln(10/z0) (values derived by hand)."""
    # Derived from EN 1991-1-4 eq. (4.4)/(4.5): 1.2657, 1.1726, 1.0067, 0.7553, 0.5396
    expect = {0.003: 1.2657, 0.01: 1.1726, 0.05: 1.0067, 0.3: 0.7553, 1.0: 0.5396}
    for z0, cr in expect.items():
        assert profiles.roughness_factor(10.0, z0) == pytest.approx(cr, abs=5e-4)
    # c_r(30 m) for category II = 1.2154 (derived, EN 1991-1-4 eq. 4.4)
    assert profiles.roughness_factor(30.0, 0.05) == pytest.approx(1.2154, abs=5e-4)


def test_roughness_factor_held_below_z_min():
    """Below z_min the roughness factor is c_r(z_min) (EN 1991-1-4 eq. 4.4)."""
    assert profiles.roughness_factor(4.0, 1.0) == pytest.approx(profiles.roughness_factor(10.0, 1.0))


def test_category_transfer_iv_20m_over_ii_10m():
    """v_m(IV, 20 m)/v_m(II, 10 m) = 0.697 (derived from EN 1991-1-4 eq. 4.3-4.5)."""
    hand = 0.19 * (1.0 / 0.05) ** 0.07 * math.log(20.0) / (0.19 * math.log(10 / 0.05))
    r = profiles.transfer_speed_ratio(20.0, 1.0, 10.0, 0.05)
    assert r == pytest.approx(hand, rel=1e-12)
    assert r == pytest.approx(0.697, abs=5e-4)  # derived by hand


def test_turbulence_intensity_category_ii_10m():
    """I_v(10 m, II) = 1/ln(10/0.05) = 0.1887 (EN 1991-1-4 eq. 4.7, k_I = c_o = 1)."""
    assert profiles.turbulence_intensity_terrain(10.0, 0.05) == pytest.approx(0.1887, abs=1e-4)


def test_log_law_with_displacement():
    """U(z) = (u*/κ) ln((z-d)/z0): the ratio of two heights matches the closed form."""
    u = profiles.speed_log_law(30.0, 5.0, 10.0, 0.5, 4.0)
    # Log law (Grimmond & Oke 1999 notation), hand evaluation
    assert u == pytest.approx(5.0 * math.log(26 / 0.5) / math.log(6 / 0.5), rel=1e-12)
    assert profiles.speed_log_law(4.2, 5.0, 10.0, 0.5, 4.0) == 0.0  # at d + z0: no wind


def test_power_law():
    """U2 = U1 (z2/z1)^α (ASHRAE Fundamentals, Airflow Around Buildings)."""
    assert profiles.speed_power_law(40.0, 5.0, 10.0, 0.14) == pytest.approx(5.0 * 4 ** 0.14)


def test_profiles_monotone_in_height():
    """Mean speed rises with height and stays non-negative (common practice)."""
    z = np.linspace(1, 200, 50)
    r = profiles.transfer_speed_ratio(z, 0.3, 10.0, 0.05)
    assert np.all(np.diff(r) >= 0) and np.all(r > 0)


def test_canopy_speed_falls_towards_the_ground_below_z_min():
    """Over z0 0.3 m (EN 1991-1-4 category III, z_min 5 m): U(3 m) < U(7 m) < U(12 m), and
    U(3 m) below the z_min-held value, which EN 1991-1-4 §4.3.2 keeps for loads only.

    The in-canopy profile continues the log law below d + z_min (Macdonald 2000, from
    memory; the slope matching is derived).
    """
    z = np.array([3.0, 7.0, 12.0])
    u = profiles.mean_speed_factor(z, 0.3)
    assert u[0] < u[1] < u[2]
    held = profiles.roughness_factor(3.0, 0.3)
    assert u[0] < held
    assert held == pytest.approx(profiles.roughness_factor(5.0, 0.3))  # EN 1991-1-4 hold
    # Above z_min the log law is untouched: c_r(12 m) = k_r ln(12/0.3) (EN 1991-1-4 eq. 4.4).
    assert u[2] == pytest.approx(0.19 * (0.3 / 0.05) ** 0.07 * np.log(12.0 / 0.3), rel=1e-12)
    # Monotone all the way down, and continuous at z_min.
    zz = np.linspace(0.5, 20.0, 400)
    assert np.all(np.diff(profiles.mean_speed_factor(zz, 0.3)) > 0)
    assert profiles.mean_speed_factor(5.0 - 1e-9, 0.3) == pytest.approx(
        profiles.roughness_factor(5.0, 0.3), rel=1e-8)


def test_macdonald_canopy_exponential_below_the_buildings():
    """Below the mean building height U = U(H) exp[a (z/H − 1)], a = 9.6 λf (Macdonald 2000,
    from memory)."""
    z0, d, lf, h = 0.7, 4.0, 0.2, 6.0
    att = profiles.canopy_attenuation(z0, d, lf)
    assert att[1] == pytest.approx(9.6 * lf)
    u_h = profiles.mean_speed_factor(h, z0, d, att, h)
    u_3 = profiles.mean_speed_factor(3.0, z0, d, att, h)
    assert u_3 / u_h == pytest.approx(np.exp(9.6 * lf * (3.0 / h - 1.0)), rel=1e-12)


def test_canopy_turbulence_follows_the_same_profile():
    """Below z_t σ_u keeps its value, so I × U is constant down the canopy (same profile)."""
    z = np.array([2.0, 3.0, 4.0, 5.0])
    ti = profiles.turbulence_intensity_terrain(z, 0.3)
    u = profiles.mean_speed_factor(z, 0.3)
    np.testing.assert_allclose(ti * u, ti[-1] * u[-1], rtol=1e-12)
    assert np.all(np.diff(ti) < 0)
    # EN 1991-1-4 eq. 4.7 above z_min: I_v = 1 / ln(z/z0).
    assert profiles.turbulence_intensity_terrain(12.0, 0.3) == pytest.approx(1 / np.log(40.0))
