"""Energy yield: method of bins, density and turbulence corrections, skew, losses, months."""
import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import integrate, stats
from scipy.special import gamma

from engine.energy import aep as energy
from engine.core import model
from engine.chain import pipeline
from engine.io import sitefile
from engine.energy import turbines
from engine.energy import uncertainty
from engine.energy.aep import HOURS_PER_YEAR

# IEC 61400-12-1 method of bins (derived check values, recomputed below): a 1 m/s curve,
# W at 0..20 m/s.
REF_CURVE_W = [0, 0, 0, 20, 60, 120, 210, 330, 490, 680, 850, 950] + [1000] * 9


def ref_turbine(regulation="stall"):
    """The 1 m/s reference curve as a Turbine (2 m rotor keeps it inside Betz)."""
    return model.Turbine("ref", "reference curve", "horizontal", 1000.0,
                         tuple(float(v) for v in range(21)), tuple(float(p) for p in REF_CURVE_W),
                         2.0, 12.0, 20.0, rotor_diameter_m=2.0, regulation=regulation)


def cubic_turbine(cp=0.4, d=2.0):
    """A curve P = ½ ρ0 A Cp V³ from 0 to 40 m/s (no cap inside the range): moments scale exactly."""
    area = math.pi * d * d / 4
    v = np.arange(0.0, 40.01, 0.25)
    p = 0.5 * model.RHO_STANDARD * area * cp * v ** 3
    return model.Turbine("cubic", "cubic test curve", "horizontal", float(p[-1]),
                         tuple(map(float, v)), tuple(map(float, p)), 0.0, 39.0, 40.0,
                         rotor_diameter_m=d)


def hand_rayleigh_aep_kwh(mean_ms):
    """IEC 61400-12-1 formula written out: N_h Σ [F(V_i) - F(V_i-1)] (P_i-1 + P_i)/2, Rayleigh F."""
    F = [1.0 - math.exp(-math.pi / 4.0 * (v / mean_ms) ** 2) for v in range(21)]
    return HOURS_PER_YEAR * sum((F[i] - F[i - 1]) * (REF_CURVE_W[i - 1] + REF_CURVE_W[i]) / 2
                                for i in range(1, 21)) / 1000.0


@pytest.mark.parametrize("mean_ms, listed_kwh", [(4.0, 1007.5), (5.0, 1796.9), (6.0, 2663.6)])
def test_method_of_bins_matches_hand_rayleigh(mean_ms, listed_kwh):
    """Bins sum equals the IEC 61400-12-1 formula worked by hand with Rayleigh F (derived)."""
    edges = np.arange(0.0, 21.0)
    t = ref_turbine()
    pw = energy.curve_on_edges_w([t], edges)[0]
    c = mean_ms / gamma(1.5)  # Rayleigh = Weibull k = 2 with c = V̄ / Γ(3/2)
    got = energy.aep_method_of_bins_wh([1.0], [2.0], [c], pw[None, :], edges) / 1000.0
    assert got == pytest.approx(hand_rayleigh_aep_kwh(mean_ms), rel=1e-12)
    # Derived values of the IEC 61400-12-1 formula (recomputed above; printed to 0.1 kWh)
    assert got == pytest.approx(listed_kwh, abs=0.05)


@pytest.mark.parametrize("k, c", [(1.5, 4.0), (2.0, 6.0), (2.5, 8.0), (3.0, 11.0)])
def test_bins_agree_with_quad_on_weibull(k, c):
    """0.5 m/s bins within 0.5 % of scipy.integrate.quad of P(V) f(V) (independent reference)."""
    t = ref_turbine()
    bins = energy.aep_method_of_bins_wh([1.0], [k], [c], energy.curve_on_edges_w([t])[0][None, :])

    def integrand(v):
        return float(energy.power_at_speed_w(v, t.curve_speed_ms, t.curve_power_w,
                                             t.cut_in_ms, t.cut_out_ms)) * stats.weibull_min.pdf(v, k, scale=c)

    exact = HOURS_PER_YEAR * integrate.quad(integrand, 0.0, 20.0, points=list(range(1, 20)),
                                            limit=200)[0]
    assert bins == pytest.approx(exact, rel=5e-3)


def test_full_chain_at_the_curves_own_ti_equals_plain_bins():
    """At the TI the curve was measured at, no skew and ρ0, the chain is the published curve.

    IEC 61400-12-1 turbulence normalisation (from memory): only the difference between the
    site's and the curve's turbulence changes the curve, so at equal TI nothing changes.
    """
    t = ref_turbine()
    freq, k, c = np.array([[0.4, 0.6]]), np.array([[2.0, 1.8]]), np.array([[5.0, 6.5]])
    ti = np.full((1, 2), t.power_curve_ti)
    y = energy.yield_arrays(freq, k, c, ti, np.zeros((1, 2)), [t],
                            model.RHO_STANDARD, model.Losses(0, 0, 0, 0, 0), integration="bins")
    plain = energy.aep_method_of_bins_wh(freq, k, c, energy.curve_on_edges_w([t]))
    assert y.gross_wh[0, 0] == pytest.approx(float(plain[0]), rel=1e-12)
    assert y.net_wh[0, 0] == pytest.approx(y.gross_wh[0, 0], rel=1e-15)
    assert y.turbulence_effect[0, 0] == pytest.approx(0.0, abs=1e-12)


def test_pitch_density_uses_cube_root_speed():
    """Pitch: P(V) = P0(V (ρ/ρ0)^(1/3)) (IEC 61400-12-1 normalisation, from memory); ρ0/8 halves V."""
    t = ref_turbine("pitch")
    got = energy.density_corrected_power_w(np.array([10.0, 12.0]), t, model.RHO_STANDARD / 8)
    assert got == pytest.approx([REF_CURVE_W[5], REF_CURVE_W[6]], rel=1e-12)


def test_stall_never_above_published_peak():
    """A curve peaking below rated is not lifted above its peak by dense air (cautious bound)."""
    t = model.Turbine("low", "low curve", "horizontal", 100.0, (1.0, 9.0), (0.25, 0.25), 0.0,
                      1.0, 9.0, rotor_diameter_m=1.0)
    p = energy.density_corrected_power_w(np.array([5.0]), t, 1.3)
    assert p[0] == pytest.approx(0.25)
    y = energy.yield_arrays(np.ones((1, 1)), np.full((1, 1), 3.0), np.full((1, 1), 3.0),
                            np.full((1, 1), 0.3), np.zeros((1, 1)), [t], 1.3,
                            model.Losses(0, 0, 0, 0, 0))
    assert y.gross_wh[0, 0] <= 0.25 * HOURS_PER_YEAR * (1 + 1e-12)


def test_stall_density_scales_power():
    """Stall: P proportional to ρ (IEC 61400-12-1 normalisation, from memory), capped at the limit."""
    t = ref_turbine("stall")
    got = energy.density_corrected_power_w(np.array([6.0, 15.0]), t, 0.9 * model.RHO_STANDARD)
    assert got == pytest.approx([0.9 * 210.0, 900.0], rel=1e-12)
    dense = energy.density_corrected_power_w(np.array([15.0]), t, 1.2 * model.RHO_STANDARD)
    assert dense[0] == pytest.approx(1000.0)  # not above rated (generator limit, common practice)


def test_density_variants_agree_in_cubic_region():
    """Both variants give ½ ρ A Cp V³ at the site density where the curve is cubic (first principles)."""
    for reg in ("stall", "pitch"):
        t = cubic_turbine()
        t = model.Turbine(**{**t.__dict__, "regulation": reg})
        rho = 1.1
        v = np.array([4.0, 8.0])
        expected = 0.5 * rho * t.area_m2 * 0.4 * v ** 3
        # 0.5 % allows for linear interpolation of the 0.25 m/s table at the shifted speed
        assert energy.density_corrected_power_w(v, t, rho) == pytest.approx(expected, rel=5e-3)


def test_turbulence_average_of_cube_is_exact():
    """E[(V + X)³] = V³ (1 + 3 I²) for X ~ N(0, (I V)²) (Gaussian moments; IEC 61400-12-1 annex idea, from memory)."""
    v = np.array([3.0, 7.0, 12.0])
    for ti in (0.0, 0.1, 0.3, 0.6):
        got = energy.gaussian_average(lambda x: x ** 3, v, ti * v)
        assert got == pytest.approx(v ** 3 * (1 + 3 * ti ** 2), rel=1e-12)


def test_turbulence_conserves_curve_at_ti_zero():
    """TI = 0 returns the (density-corrected) curve unchanged at every edge."""
    t = turbines.load_library()[1]
    table = energy.turbulent_curve_table_w([t], model.RHO_STANDARD, np.array([0.0, 0.01]))
    plain = energy.density_corrected_power_w(energy.DEFAULT_EDGES_MS, t, model.RHO_STANDARD)
    assert table[0, 0] == pytest.approx(plain, rel=1e-12, abs=1e-9)


def test_turbulence_raises_near_cut_in_and_lowers_near_rated():
    """Averaging a convex foot raises power, a concave knee lowers it (Jensen's inequality)."""
    t = ref_turbine()
    table = energy.turbulent_curve_table_w([t], model.RHO_STANDARD, np.array([0.0, 0.15]),
                                           np.array([4.0, 5.0, 12.0, 13.0]))
    zero, turb = table[0, 0], table[0, 1]
    assert np.all(turb[:2] > zero[:2])  # near cut-in
    assert np.all(turb[2:] < zero[2:])  # near rated
    assert np.all(turb <= 1000.0 + 1e-9) and np.all(turb >= 0)  # within rated power, not negative


def test_turbulence_average_agrees_with_quad():
    """The exact piecewise average equals scipy.integrate.quad on real curves, jumps included."""
    lib = turbines.library_by_id()
    for t, rho in ((lib["ha-1k5"], 1.1), (lib["ha-5k"], 1.3), (lib["va-1k"], 1.225)):
        seg = energy.curve_segments(t, rho)

        def integrand(x, v, s):
            p0 = float(energy.density_corrected_power_w(x, t, rho))
            return p0 * math.exp(-0.5 * ((x - v) / s) ** 2) / (s * math.sqrt(2 * math.pi))

        for v in (3.0, 4.0, 10.0, 12.0, 24.0):
            for ti in (0.1, 0.3):
                s = ti * v
                got = float(energy.gaussian_average_segments(*seg, np.array(v), np.array(s)))
                inside = seg[0][(seg[0] > v - 9 * s) & (seg[0] < v + 9 * s)]
                ref = integrate.quad(integrand, v - 9 * s, v + 9 * s, args=(v, s),
                                     points=list(inside), limit=200)[0]
                assert got == pytest.approx(ref, rel=1e-7, abs=1e-6)


def test_gauss_hermite_average_agrees_with_exact_on_smooth_part():
    """Gauss-Hermite (any function) and the exact piecewise form agree where the curve is smooth."""
    t = turbines.load_library()[1]
    seg = energy.curve_segments(t, model.RHO_STANDARD)
    v, s = np.array([7.0]), np.array([0.3])  # ±5σ stays inside the cubic part
    gh = energy.gaussian_average(lambda x: energy.density_corrected_power_w(x, t, 1.225), v, s)
    assert gh == pytest.approx(energy.gaussian_average_segments(*seg, v, s), rel=2e-3)


def test_ti_table_lookup_matches_direct_average():
    """Interpolating the TI table at off-grid TI gives AEP within 0.05 % of the direct average."""
    t = turbines.load_library()[3]
    ti = np.array([[0.173, 0.268]])
    grid = energy.ti_grid_for(ti)
    curves = energy.lookup_turbulent_curve_w(
        energy.turbulent_curve_table_w([t], 1.2, grid), grid, ti)[0, 0]  # (S, J)
    e = energy.DEFAULT_EDGES_MS
    seg = energy.curve_segments(t, 1.2)
    for s in range(2):
        direct = energy.gaussian_average_segments(*seg, e, ti[0, s] * e)
        core = e <= 30.0  # the far tail beyond cut-out holds no energy
        assert curves[s][core] == pytest.approx(direct[core], rel=2e-2, abs=1.0)  # pointwise, W
        a = energy.aep_method_of_bins_wh([1.0], [2.0], [6.0], curves[s][None, :])
        b = energy.aep_method_of_bins_wh([1.0], [2.0], [6.0], direct[None, :])
        assert a == pytest.approx(b, rel=5e-4)


def test_skew_factor_by_axis():
    """Horizontal axis: power ∝ cos³γ (common practice), speed factor cos γ; vertical: no change."""
    g = np.array([0.0, 30.0, 60.0])
    assert energy.skew_speed_factor(g, "horizontal") == pytest.approx(np.cos(np.radians(g)))
    assert energy.skew_speed_factor(g, "vertical") == pytest.approx(np.ones(3))


def test_skew_lowers_cubic_energy_by_cos_cubed():
    """For a cubic curve AEP scales with c³, so 40° skew gives cos³(40°) of the energy (Weibull moments)."""
    t = cubic_turbine()
    args = (np.ones((1, 1)), np.full((1, 1), 2.0), np.full((1, 1), 5.0), np.zeros((1, 1)))
    lo = model.Losses(0, 0, 0, 0, 0)
    straight = energy.yield_arrays(*args, np.zeros((1, 1)), [t], model.RHO_STANDARD, lo)
    skewed = energy.yield_arrays(*args, np.full((1, 1), 40.0), [t], model.RHO_STANDARD, lo)
    ratio = skewed.gross_wh[0, 0] / straight.gross_wh[0, 0]
    assert ratio == pytest.approx(math.cos(math.radians(40.0)) ** 3, rel=5e-3)


def test_cubic_curve_energy_and_sensitivity():
    """Cubic curve: AEP = N_h ½ρ A Cp c³ Γ(1+3/k) (Weibull moment) and d ln E / d ln V = 3."""
    t = cubic_turbine()
    y = energy.yield_arrays(np.ones((1, 1)), np.full((1, 1), 2.0), np.full((1, 1), 5.0),
                            np.full((1, 1), t.power_curve_ti), np.zeros((1, 1)), [t],
                            model.RHO_STANDARD, model.Losses(0, 0, 0, 0, 0))
    exact = HOURS_PER_YEAR * 0.5 * model.RHO_STANDARD * t.area_m2 * 0.4 * 5.0 ** 3 * gamma(2.5)
    # 1 %: trapezoidal 0.5 m/s bins overstate a convex (cubic) curve by about 0.7 % here
    assert y.bins_gross_wh[0, 0] == pytest.approx(exact, rel=1e-2)
    assert y.bins_gross_wh[0, 0] > exact
    # The exact integral of the 0.25 m/s linear pieces: only their own chord error, which
    # for V³ is 0.75 (h/V)² locally, about 0.1 % here (derived).
    assert y.gross_wh[0, 0] == pytest.approx(exact, rel=2e-3)
    assert y.speed_sensitivity[0, 0] == pytest.approx(3.0, rel=5e-3)


def test_slope_of_bins_sum_equals_central_difference():
    """d ln E / d ln V from the bins-sum derivative equals a numerical central difference."""
    lib = turbines.load_library()
    rng = np.random.default_rng(11)
    setup = energy.prepare_bins(rng.dirichlet(np.ones(4), 3), rng.uniform(1.5, 2.5, (3, 4)),
                                rng.uniform(3, 9, (3, 4)), rng.uniform(0.05, 0.4, (3, 4)),
                                rng.uniform(0, 30, (3, 4)), lib, 1.2)
    e, s = energy.energy_and_sensitivity(setup)
    assert e == pytest.approx(setup.energy_wh(1.0), rel=1e-12)
    assert s == pytest.approx(energy.speed_sensitivity(setup, 1e-4), rel=1e-6)


def test_losses_chain_multiplies():
    """Losses multiply: (1 - 0.05)(1 - 0.04)(1 - 0.02)(1 - 0.01) (common practice)."""
    lo = model.Losses(availability=0.05, electrical=0.04, icing=0.02, cut_out_hysteresis=0.01)
    chain = energy.losses_chain(lo)
    assert [c[0] for c in chain] == list(energy.LOSS_ORDER)
    assert chain[1][2] == pytest.approx(0.95 * 0.96)
    assert energy.net_fraction(lo) == pytest.approx(0.95 * 0.96 * 0.98 * 0.99)


def test_months_of_equal_wind_share_by_days():
    """With every month at the annual mean, shares follow the calendar: January 31/365 (calendar)."""
    clim = model.WindClimate(10.0, 0.03, (1.0,), (2.0,), (6.0,))
    mean = 6.0 * gamma(1.5)
    t = ref_turbine()
    annual = np.array([[1000.0]])
    setup = energy.prepare_bins(np.ones((1, 1)), np.full((1, 1), 2.0), np.full((1, 1), 6.0),
                                np.full((1, 1), 0.1), np.zeros((1, 1)), [t], 1.225)
    m = energy.monthly_energy_wh(annual, [mean] * 12, clim, setup)
    assert m.sum() == pytest.approx(1000.0)
    assert m[0, 0, 0] == pytest.approx(1000.0 * 31 / 365)
    assert m[0, 0, 1] == pytest.approx(1000.0 * 28 / 365)


def test_windier_month_gets_more_energy():
    """A month with higher mean speed gets a larger share; months still add up to the year."""
    clim = model.WindClimate(10.0, 0.03, (1.0,), (2.0,), (6.0,))
    means = [6.5, 6.0, 5.8, 5.0, 4.5, 4.0, 4.0, 4.2, 4.8, 5.5, 6.0, 6.6]
    setup = energy.prepare_bins(np.ones((1, 1)), np.full((1, 1), 2.0), np.full((1, 1), 6.0),
                                np.full((1, 1), 0.1), np.zeros((1, 1)), [ref_turbine()], 1.225)
    m = energy.monthly_energy_wh(np.array([[500.0]]), means, clim, setup)[0, 0]
    assert m.sum() == pytest.approx(500.0)
    assert m[0] > m[5] and m[11] > m[6]


def test_energy_bounded_by_rated_power_in_any_climate():
    """AEP <= rated x 8760 h and >= 0 for every library turbine, even in extreme turbulent wind."""
    lib = turbines.load_library()
    y = energy.yield_arrays(np.ones((2, 1)), np.array([[4.0], [1.2]]), np.array([[30.0], [2.0]]),
                            np.array([[0.5], [0.0]]), np.array([[0.0], [20.0]]), lib, 1.3,
                            model.Losses(0, 0, 0, 0, 0))
    limit = np.array([energy.power_limit_w(t) for t in lib]) * HOURS_PER_YEAR
    assert np.all(y.gross_wh <= limit[None, :] * (1 + 1e-12))
    assert np.all(y.gross_wh >= 0) and np.all(y.capacity_factor <= 1.0 + 1e-12)


def test_energy_table_has_the_new_columns_with_physical_order():
    """The results table carries P50/P75/P90, money, loads and noise; P90 <= P75 <= P50 = net AEP."""
    a = sitefile.load(pipeline_demo())
    t = pipeline.evaluate(a).table
    for col in ("p50_aep_kwh", "p75_aep_kwh", "p90_aep_kwh", "lcoe_per_kwh", "payback_years",
                "npv", "co2_avoided_kg_per_year", "full_load_hours", "thrust_rated_n",
                "thrust_extreme_n", "mast_base_moment_nm", "noise_db_at_receptors",
                "noise_exceeds_limit", "aep_kwh", "gross_aep_kwh", "capacity_factor"):
        assert col in t.columns
    assert np.allclose(t["p50_aep_kwh"], t["aep_kwh"])
    assert (t["p90_aep_kwh"] <= t["p75_aep_kwh"] + 1e-9).all()
    assert (t["p75_aep_kwh"] <= t["p50_aep_kwh"] + 1e-9).all() and (t["p90_aep_kwh"] >= 0).all()
    assert (t["aep_kwh"] <= t["gross_aep_kwh"]).all()
    assert (t["aep_kwh"] <= t["rated_power_kw"] * HOURS_PER_YEAR).all()
    assert np.allclose(t["full_load_hours"], t["aep_kwh"] / t["rated_power_kw"])
    ids = {r.id for r in a.receptors}
    assert all(set(d) == ids for d in t["noise_db_at_receptors"])


def test_monthly_column_when_climate_has_months():
    """A climate with monthly means adds 12 monthly values per row that add up to net AEP."""
    import dataclasses
    a = sitefile.load(pipeline_demo())
    clim = dataclasses.replace(a.climate, monthly_mean_ms=(6.0, 5.8, 5.5, 5.0, 4.6, 4.2, 4.0,
                                                           4.1, 4.6, 5.2, 5.7, 6.1))
    t = pipeline.evaluate(dataclasses.replace(a, climate=clim)).table
    sums = np.array([sum(m) for m in t["monthly_aep_kwh"]])
    assert np.allclose(sums, t["aep_kwh"], rtol=1e-9)


def pipeline_demo():
    from pathlib import Path
    return Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


@settings(max_examples=40, deadline=None)
@given(c=st.floats(0.5, 25.0), k=st.floats(1.0, 4.0), ti=st.floats(0.0, 0.9),
       skew=st.floats(0.0, 90.0), rho=st.floats(0.9, 1.4), idx=st.integers(0, 7))
def test_energy_bounds_hold_for_any_climate(c, k, ti, skew, rho, idx):
    """0 <= gross <= power limit x 8760 h and P90 <= P75 <= P50, for any climate (physics bounds)."""
    t = turbines.load_library()[idx]
    one = np.ones((1, 1))
    y = energy.yield_arrays(one, k * one, c * one, ti * one, skew * one, [t], rho, model.Losses())
    assert 0.0 <= y.gross_wh[0, 0] <= energy.power_limit_w(t) * HOURS_PER_YEAR * (1 + 1e-12)
    assert y.net_wh[0, 0] <= y.gross_wh[0, 0]
    pv = uncertainty.analytic_p_values(y.setup, energy.net_fraction(model.Losses()),
                                       model.Uncertainty(), y.speed_sensitivity)
    assert 0.0 <= pv[90][0, 0] <= pv[75][0, 0] <= pv[50][0, 0] + 1e-9


@pytest.mark.parametrize("one_shape_per_sector", [False, True])
def test_bins_sum_per_table_row_equals_scipy_method_of_bins(one_shape_per_sector):
    """The per-row bins sum equals the IEC 61400-12-1 method of bins with scipy's Weibull CDF.

    Both forms of the sums are checked: a shape per row (ln x from a matrix product) and one
    shape per sector for every row (x = V^k c^-k from a table of powers). 70 rows span more
    than one block (BINS_BLOCK_ROWS) and a last, partial block.
    """
    from scipy.stats import weibull_min

    lib = turbines.load_library()
    rng = np.random.default_rng(5)
    P, S = 70, 6
    f, k = rng.dirichlet(np.ones(S), P), rng.uniform(1.4, 2.8, (P, S))
    if one_shape_per_sector:
        k = np.broadcast_to(k[:1], (P, S)).copy()
    c, ti = rng.uniform(2.5, 9.0, (P, S)), rng.uniform(0.05, 0.5, (P, S))
    skew = rng.uniform(0.0, 35.0, (P, S))
    setup = energy.prepare_bins(f, k, c, ti, skew, lib, 1.18)
    e = energy.DEFAULT_EDGES_MS
    grid = energy.ti_grid_for(ti)
    table = energy.turbulent_curve_table_w(lib, 1.18, grid, e, *energy.curve_model_args())
    curves = energy.lookup_turbulent_curve_w(table, grid, ti)  # (P, T, S, J), TI interpolated
    got = setup.energy_wh(1.0)
    for t, turb in enumerate(lib):
        c_t = c * energy.skew_speed_factor(skew, turb.axis)
        # IEC 61400-12-1 method of bins: N_h sum_s f_s sum_i [F(V_i) - F(V_i-1)] (P_i-1 + P_i)/2,
        # F the Weibull CDF from scipy (an independent reference library).
        F = weibull_min.cdf(e[None, None, :], k[..., None], scale=c_t[..., None])
        p_mid = 0.5 * (curves[:, t, :, 1:] + curves[:, t, :, :-1])
        ref = energy.HOURS_PER_YEAR * np.sum(f * np.sum(np.diff(F, axis=-1) * p_mid, axis=-1),
                                             axis=-1)
        assert got[:, t] == pytest.approx(ref, rel=1e-9)
    # Physics: never more than rated power all year, never negative.
    rated = np.array([t.rated_power_w for t in lib])
    assert np.all(got >= 0) and np.all(got <= rated[None, :] * energy.HOURS_PER_YEAR)
    # The slope from the same exponentials equals a central difference of the sums
    # (dE/d ln λ, step 1e-5: truncation error ~1e-10 of E).
    e_both, slope = setup.energy_and_slope_wh()
    h = 1e-5
    up, down = setup.energy_wh(math.exp(h)), setup.energy_wh(math.exp(-h))
    assert e_both == pytest.approx(got, rel=1e-12)
    assert slope == pytest.approx((up - down) / (2 * h), rel=1e-6, abs=1e-6 * got.max())


@pytest.mark.parametrize("lo, hi", [(0.04, 0.3), (0.0, 0.8), (0.1, 0.12), (0.5, 0.8)])
def test_kept_table_rows_equal_a_table_of_those_rows(lo, hi):
    """Rows taken from the one kept whole table are the numbers of a table of those rows alone
    (each row depends on its own turbulence intensity only), to the last bit; a grid off the
    table's steps is computed for itself."""
    lib = turbines.load_library()
    grid = energy.ti_grid_for(np.array([lo, hi]))
    direct = energy.bin_weights_w(energy.turbulent_curve_table_w(lib, 1.2, grid))
    np.testing.assert_array_equal(energy.table_weights_w(lib, 1.2, grid), direct)
    odd = np.array([0.013, 0.05, 0.31])
    np.testing.assert_array_equal(
        energy.table_weights_w(lib, 1.2, odd),
        energy.bin_weights_w(energy.turbulent_curve_table_w(lib, 1.2, odd)))
