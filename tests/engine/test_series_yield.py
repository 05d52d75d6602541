"""Time-series yield over a record beside the Weibull (method of bins) yield."""
import numpy as np
import pytest
from scipy import stats

from engine.chain import pipeline
from engine.climate import fit
from engine.core import model
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
    """On ten years of Weibull speeds the two yields agree within 3 % (the fit describes the
    record; the method of bins is IEC 61400-12-1), at a mast and on a roof."""
    t, v, d = _long_weibull_record()
    s = fit.climate_from_series(v, d, t, height_m=18.0, roughness_m=0.1)
    a = _site(s.climate)
    ev = pipeline.evaluate(a)
    out = sy.series_yield(t, v, d, s.climate, ev.climate, a.turbines, a.losses)
    assert np.all(np.abs(out.difference) < 0.03)
    assert np.all(out.gross_wh <= 2500.0 * 8760 + 1e-6) and np.all(out.gross_wh > 0)
    # Months and hours of day add up to the year (net).
    np.testing.assert_allclose(out.monthly_wh.sum(-1), out.net_wh, rtol=0.01)
    np.testing.assert_allclose(out.hourly_wh.sum(-1), out.net_wh * 365 * 24 / 8760, rtol=1e-9)
    assert np.all(out.monthly_wh >= 0)
