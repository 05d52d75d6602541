"""Chart builders: the numbers they draw against independent references, and offline specs."""
import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from engine.flow import buildings
from engine.report import charts
from engine.core import model
from engine.chain import pipeline
from engine.io import sitefile

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


@pytest.fixture(scope="module")
def ev():
    return pipeline.evaluate(sitefile.load(DEMO))


def test_building_corners_keep_area_and_bearing():
    """A block's corners enclose length × width (shoelace formula) along its bearing."""
    b = model.Building(id="b", x_m=10.0, y_m=-5.0, length_m=40.0, width_m=14.0, height_m=10.0,
                       orientation_deg=30.0)
    c = buildings.building_corners_m(b)
    x, y = c[:, 0], c[:, 1]
    area = 0.5 * abs(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))
    assert area == pytest.approx(40.0 * 14.0)  # shoelace formula (plane geometry)
    side = c[0] - c[3]  # the length side
    assert math.degrees(math.atan2(side[0], side[1])) % 180 == pytest.approx(30.0)
    np.testing.assert_allclose(c.mean(axis=0), [10.0, -5.0])


@pytest.mark.parametrize("deg,name", [(0, "N"), (359, "N"), (45, "NE"), (225, "SW"),
                                      (247.5, "WSW"), (180, "S")])
def test_compass_names(deg, name):
    """Bearings map to the 16-point compass (common practice)."""
    assert charts.compass_name(deg) == name


def test_hub_distribution_matches_scipy_mixture(ev):
    """Bin probabilities add up to the sector-Weibull mixture CDF computed with scipy."""
    pid = ev.climate.position_ids[0]
    df = charts.hub_distribution(ev, pid, top_ms=25.0)
    f, k, c = ev.climate.frequency[0], ev.climate.weibull_k[0], ev.climate.weibull_c_ms[0]
    ref = sum(fs * stats.weibull_min.cdf(25.0, ks, scale=cs) for fs, ks, cs in zip(f, k, c))
    assert df["probability"].sum() == pytest.approx(ref, rel=1e-9)  # scipy as reference
    assert (df["probability"] >= 0).all() and df["probability"].sum() <= 1 + 1e-12


def test_energy_share_matches_scipy_third_moment(ev):
    """Sector energy shares are f·E[V³] normalised, E[V³] from scipy's Weibull moments."""
    clim = ev.assessment.climate
    df = charts.sector_table(clim)
    m3 = np.array([fs * stats.weibull_min.moment(3, k, scale=c)
                   for fs, k, c in zip(clim.frequency, clim.weibull_k, clim.weibull_c_ms)])
    np.testing.assert_allclose(df["energy_share"], m3 / m3.sum(), rtol=1e-9)
    assert df["frequency"].sum() == pytest.approx(1.0, abs=1e-3)


def test_every_chart_is_valid_vega_lite_and_offline(ev):
    """Each builder gives a spec that passes the Vega-Lite schema and fetches nothing."""
    a = ev.assessment
    pid, tid = ev.table.iloc[0]["position_id"], ev.table.iloc[0]["turbine_id"]
    tur = next(t for t in a.turbines if t.id == tid)
    built = [charts.plan_view(ev, "ft", selected=pid), charts.wind_rose(a.climate),
             charts.speed_distribution(ev, pid, "knots"),
             charts.vertical_profile(ev, pid, tid, "m", "m/s",
                                     zones=[{"name": "zone", "bottom_m": 10.0, "top_m": 12.0}]),
             charts.power_curve(tur, "mph", corrected=charts.corrected_curve(ev, pid, tid),
                                distribution=charts.hub_distribution(ev, pid, "mph")),
             charts.ranking_bars(ev.table),
             charts.suggestion_plan(a, a.buildings[0].id, pd.DataFrame(
                 {"id": ["s1"], "x_m": [1.0], "y_m": [2.0], "mast_height_m": [5.0]}), "ft"),
             charts.ranking_bars(ev.table.drop(columns=["p50_aep_kwh", "p90_aep_kwh"],
                                               errors="ignore"))]
    for chart in built:
        spec = chart.to_dict(validate=True)
        text = json.dumps(spec)
        assert "http" not in text.replace(spec["$schema"], "")


def test_suggestion_plan_draws_the_suggestions_in_the_display_unit(ev):
    """The suggested points are drawn where they are, in feet: 1 ft = 0.3048 m exactly
    (NIST SP 811, appendix B)."""
    a = ev.assessment
    sug = pd.DataFrame({"id": ["s1", "s2"], "x_m": [3.048, -6.096], "y_m": [0.0, 30.48],
                        "mast_height_m": [6.0, 7.5]})
    spec = charts.suggestion_plan(a, a.buildings[0].id, sug, "ft").to_dict()
    rows = [r for d in spec["datasets"].values() for r in d if "mast" in r]
    assert [(r["name"], r["x"], r["y"]) for r in rows] == [
        ("s1", pytest.approx(10.0), 0.0), ("s2", pytest.approx(-20.0), pytest.approx(100.0))]


def test_monthly_energy_is_absent_without_monthly_speeds(ev):
    """Without monthly mean speeds in the climate there is no monthly split to draw."""
    pid, tid = ev.table.iloc[0]["position_id"], ev.table.iloc[0]["turbine_id"]
    assert charts.monthly_energy_kwh(ev, pid, tid) is None


def test_corrected_curve_is_bounded(ev):
    """The curve the yield used is never negative nor above 1.2 × rated power (model rule)."""
    pid = ev.table.iloc[0]["position_id"]
    for t in ev.assessment.turbines:
        df = charts.corrected_curve(ev, pid, t.id)
        assert (df["power_w"] >= 0).all()
        assert df["power_w"].max() <= 1.2 * t.rated_power_w
