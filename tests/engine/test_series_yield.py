"""Time-series yield over a record beside the exact Weibull yield of the same curves.

Independent references: scipy.stats.weibull_min draws and scipy.integrate.quad of the
published curve against scipy's Weibull density.
"""
import numpy as np
import pytest
from scipy import integrate, stats

from engine.chain import pipeline
from engine.climate import fit
from engine.core import model
from engine.energy import aep as energy
from engine.flow import effective as flow
from engine.energy import series_yield as sy

H = 3600 * 10**9


def _long_weibull_record(n=10 * 8760, seed=4):
    rng = np.random.default_rng(seed)
    d = np.mod(rng.normal(230, 80, n), 360)
    v = stats.weibull_min.rvs(2.0, scale=6.5, size=n, random_state=rng)
    t = np.int64(1735689600) * 10**9 + np.arange(n, dtype=np.int64) * H
    return t, v, d


def _site(clim, kind="mast"):
    site = model.Site(name="invented", terrain_roughness_m=0.1)
    v = tuple(float(x) for x in range(0, 26))
    p = tuple(float(min(2500.0, 0.5 * 1.225 * 7.07 * 0.35 * x ** 3)) if x >= 3 else 0.0 for x in v)
    t = model.Turbine("t", "test 2.5 kW", "horizontal", 2500.0, v, p, 3.0, 11.0, 25.0,
                      rotor_diameter_m=3.0)
    b = model.Building("b", 0.0, 0.0, 30.0, 15.0, 10.0, orientation_deg=90.0)
    pos = (model.Position("m", "mast", 60.0, 60.0, 18.0),
           model.Position("r", "roof", 0.0, 0.0, 6.0, building_id="b"))
    return model.Assessment(site=site, climate=clim, buildings=(b,), positions=pos,
                            turbines=(t,))


def test_series_and_weibull_yields_agree_on_a_long_weibull_record():
    """On ten years of Weibull speeds the series and the exact Weibull yield agree within 1 %
    (the fit describes the record; sampling error of 87 600 hourly draws about 0.4 %, derived),
    at a mast and on a roof, through the whole chain."""
    t, v, d = _long_weibull_record()
    s = fit.climate_from_series(v, d, t, height_m=18.0, roughness_m=0.1)
    a = _site(s.climate)
    ev = pipeline.evaluate(a)
    out = sy.series_yield(t, v, d, s.climate, ev.climate, a.turbines, a.losses,
                          energy_settings=a.energy)
    assert np.all(np.abs(out.difference) < 0.01)
    # The comparison is with the ranked table's own (exact) gross yield.
    table = ev.table.set_index("position_id")["gross_aep_kwh"]
    np.testing.assert_allclose(out.weibull_gross_wh[:, 0] / 1000.0,
                               table.loc[list(ev.climate.position_ids)].to_numpy(), rtol=1e-9)
    assert np.all(out.gross_wh <= 2500.0 * 8760 + 1e-6) and np.all(out.gross_wh > 0)
    # Months and hours of day add up to the year (net).
    np.testing.assert_allclose(out.monthly_wh.sum(-1), out.net_wh, rtol=0.01)
    np.testing.assert_allclose(out.hourly_wh.sum(-1), out.net_wh * 365 * 24 / 8760, rtol=1e-9)
    assert np.all(out.monthly_wh >= 0)


def _one_sector_case(ti, n=400_000, seed=11, no_credit=False):
    """A synthetic Weibull record (k 2, c 6.5 m/s) at one rotor, climate and rotor the same."""
    rng = np.random.default_rng(seed)
    v = stats.weibull_min.rvs(2.0, scale=6.5, size=n, random_state=rng)
    t = np.int64(1735689600) * 10**9 + np.arange(n, dtype=np.int64) * (600 * 10**9)
    d = np.zeros(n)
    clim = model.WindClimate(height_m=18.0, roughness_m=0.1, frequency=(1.0,),
                             weibull_k=(2.0,), weibull_c_ms=(6.5,))
    one = np.ones((1, 1))
    eff = flow.EffectiveClimate(
        position_ids=("m",), sector_deg=np.zeros(1), hub_height_m=np.array([18.0]),
        frequency=one, weibull_k=2.0 * one, free_c_ms=6.5 * one, speed_factor=one,
        turbulence_intensity=ti * one, inflow_skew_deg=0.0 * one,
        air_density_kgm3=model.RHO_STANDARD,
        diagnostics={"no_turbulence_credit": np.full((1, 1), no_credit)})
    turbine = _site(clim).turbines[0]
    return t, v, d, clim, eff, turbine


def _published_weibull_wh(turbine, k, c):
    """Reference: scipy.integrate.quad of the published curve times scipy's Weibull density."""
    sp, pw = np.asarray(turbine.curve_speed_ms), np.asarray(turbine.curve_power_w)
    pdf = stats.weibull_min(k, scale=c).pdf
    knots = [turbine.cut_in_ms] + [x for x in sp if turbine.cut_in_ms < x < turbine.cut_out_ms]
    knots.append(turbine.cut_out_ms)
    return 8760.0 * sum(integrate.quad(lambda x: np.interp(x, sp, pw) * pdf(x), a, b,
                                       epsabs=1e-10, epsrel=1e-10)[0]
                        for a, b in zip(knots[:-1], knots[1:]))


def test_series_on_a_weibull_record_matches_scipy_quadrature_of_the_published_curve():
    """At the curve's own TI and standard density the turbulence normalisation returns the
    published curve (IEC 61400-12-1 normalisation, from memory), so the series' mean power
    must be the Weibull expectation of the published curve.

    Reference: scipy.integrate.quad against scipy.stats.weibull_min (k 2, c 6.5 m/s). The
    series of 400 000 draws has a sampling error of the mean power of about 0.2 % (one sigma;
    coefficient of variation of the power about 1.3, derived), held to 1 %; the exact
    Weibull integral of the same curve has no sampling error (1e-6).
    """
    t, v, d, clim, eff, turbine = _one_sector_case(ti=0.12)
    assert turbine.power_curve_ti == pytest.approx(0.12)
    ref = _published_weibull_wh(turbine, 2.0, 6.5)
    out = sy.series_yield(t, v, d, clim, eff, [turbine], model.Losses())
    assert out.gross_wh[0, 0] == pytest.approx(ref, rel=0.01)
    assert out.weibull_gross_wh[0, 0] == pytest.approx(ref, rel=1e-6)


@pytest.mark.parametrize("ti", [0.05, 0.18, 0.3])
@pytest.mark.parametrize("no_credit", [False, True])
def test_series_uses_the_same_turbulence_model_as_the_weibull_yield(ti, no_credit):
    """Away from the curve TI, with the EnergySettings allowances and with no turbulence credit,
    the series and the exact Weibull yield of the same curves agree to the sampling error
    (1 %, as above); and the allowances move both by the same factor.

    Independent part: the published curve's Weibull energy by scipy quadrature bounds the
    no-credit series from above (the curve is capped at the published one there).
    """
    t, v, d, clim, eff, turbine = _one_sector_case(ti=ti, no_credit=no_credit)
    outs = {}
    for loss in (0.0, 0.5):
        es = model.EnergySettings(excess_ti_power_loss=loss)
        out = sy.series_yield(t, v, d, clim, eff, [turbine], model.Losses(), energy_settings=es)
        weib = energy.yield_arrays(eff.frequency, eff.weibull_k, eff.weibull_c_ms,
                                   eff.turbulence_intensity, eff.inflow_skew_deg, [turbine],
                                   eff.air_density_kgm3, model.Losses(), energy_settings=es,
                                   no_credit=eff.diagnostics["no_turbulence_credit"])
        assert out.weibull_gross_wh[0, 0] == pytest.approx(weib.gross_wh[0, 0], rel=1e-9)
        assert out.gross_wh[0, 0] == pytest.approx(weib.gross_wh[0, 0], rel=0.01)
        outs[loss] = out.gross_wh[0, 0], weib.gross_wh[0, 0]
    ratio_series = outs[0.5][0] / outs[0.0][0]
    ratio_weibull = outs[0.5][1] / outs[0.0][1]
    assert ratio_series == pytest.approx(ratio_weibull, rel=2e-3)
    if ti > 0.12:
        assert ratio_series < 1.0  # the excess-TI allowance takes energy off, never adds
    if no_credit:
        assert outs[0.0][0] <= _published_weibull_wh(turbine, 2.0, 6.5) * 1.01
