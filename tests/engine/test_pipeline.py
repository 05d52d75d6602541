"""The whole chain on small hand-checkable sites: transfer, yield bounds, ranking order."""
import dataclasses
import math
from pathlib import Path

import numpy as np
import pytest

from engine.core import model
from engine.chain import pipeline
from engine.io import sitefile
from engine.energy.aep import HOURS_PER_YEAR

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


def open_field(c_ms=6.0, k=2.0, mast_m=10.0, z0=0.03):
    """One free-standing mast in the same open terrain as its reference climate."""
    site = model.Site(name="open field", terrain_roughness_m=z0, displacement_m=0.0,
                      altitude_m=0.0, air_temperature_c=15.0)
    clim = model.WindClimate(height_m=10.0, roughness_m=z0, frequency=(1.0,), weibull_k=(k,),
                             weibull_c_ms=(c_ms,))
    v = tuple(float(x) for x in range(0, 26))
    p = tuple(float(min(1000.0, 0.5 * 1.225 * 3.14 * 0.3 * x ** 3)) if x >= 3 else 0.0 for x in v)
    t = model.Turbine("t", "test 1 kW", "horizontal", 1000.0, v, p, 3.0, 10.0, 25.0,
                      rotor_diameter_m=2.0)
    pos = model.Position("m", "mast", 0.0, 0.0, mast_m)
    return model.Assessment(site=site, climate=clim, buildings=(), positions=(pos,), turbines=(t,))


def test_same_terrain_transfer_is_log_ratio():
    """Same terrain, 10 m -> 25 m: scale ratio ln(25/z0)/ln(10/z0) (log law, hand value)."""
    a = open_field(mast_m=25.0)
    ev = pipeline.evaluate(a)
    expected = 6.0 * math.log(25 / 0.03) / math.log(10 / 0.03)
    assert ev.climate.free_c_ms[0, 0] == pytest.approx(expected, rel=1e-12)


def test_transfer_to_rougher_site_follows_en1991_terrain_factor():
    """Open station (cat II, 10 m) to a cat IV suburb at 20 m: v ratio 0.697 (EN 1991-1-4 Table 4.1, derived)."""
    a = open_field(z0=0.05, mast_m=20.0)
    a = dataclasses.replace(a, site=dataclasses.replace(a.site, terrain_roughness_m=1.0))
    ev = pipeline.evaluate(a)
    # (derived by hand from EN 1991-1-4 eq. 4.4/4.5): v_m(IV, 20 m)/v_m(II, 10 m) = 0.697
    assert ev.climate.free_c_ms[0, 0] / 6.0 == pytest.approx(0.697, abs=5e-4)


def test_aep_never_exceeds_rated_times_hours():
    """Even in an extreme climate AEP <= rated power x 8760 h (energy bound)."""
    ev = pipeline.evaluate(open_field(c_ms=30.0, k=4.0))
    row = ev.table.iloc[0]
    assert row.gross_aep_kwh <= 1.0 * HOURS_PER_YEAR + 1e-9
    assert 0.0 <= row.capacity_factor <= 1.0


def test_climate_below_cut_in_gives_zero():
    """A climate almost wholly below cut-in gives (numerically) zero energy."""
    ev = pipeline.evaluate(open_field(c_ms=0.3, k=4.0, mast_m=10.0))
    assert ev.table.iloc[0].aep_kwh == pytest.approx(0.0, abs=1e-9)


def test_demo_ranking_sorted_and_complete():
    """The demo ranks every position x turbine once, eligible rows first, by net AEP."""
    a = sitefile.load(DEMO)
    t = pipeline.evaluate(a).table
    assert len(t) == len(a.positions) * len(a.turbines)
    assert list(t["rank"]) == list(range(1, len(t) + 1))
    elig = t[~t["excluded"]]
    assert np.all(np.diff(elig["aep_kwh"].to_numpy()) <= 1e-9)
    if t["excluded"].any():
        first_excluded = int(np.flatnonzero(t["excluded"].to_numpy())[0])
        assert not t["excluded"].iloc[first_excluded:].eq(False).any()
    assert (t["aep_kwh"] >= 0).all() and t["mean_speed_ms"].gt(0).all()


def test_higher_mast_never_lowers_free_stream_speed():
    """Monotone in height: a taller mast in the same terrain sees at least the same mean speed."""
    speeds = [pipeline.evaluate(open_field(mast_m=h)).table.iloc[0].mean_speed_ms
              for h in (5.0, 10.0, 20.0, 40.0)]
    assert all(b >= a for a, b in zip(speeds, speeds[1:]))
