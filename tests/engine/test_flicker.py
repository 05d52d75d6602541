"""Shadow flicker at a window against an independent computation (pvlib sun, geometry by hand)."""
import math
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pvlib
import pytest
from scipy import stats

from engine.core import model
from engine.core.consent import FlickerSettings
from engine.energy import flicker

# An invented window 25 m west of a 12 m hub, facing east, at 52.2° N 0.1° E.
LAT, LON = 52.2, 0.1
HUB = np.array([[0.0, 0.0, 12.0]])
WINDOW = model.Receptor("w", -25.0, 0.0, 4.0, facing_deg=90.0, window_height_m=0.0)
SITE = SimpleNamespace(origin_lat_deg=LAT, origin_lon_deg=LON, altitude_m=0.0)
CLIMATE = SimpleNamespace(frequency=np.array([[0.2, 0.3, 0.2, 0.3]]),
                          weibull_k=np.array([[2.0, 2.0, 2.0, 2.0]]),
                          weibull_c_ms=np.array([[5.0, 6.0, 5.0, 7.0]]),
                          sector_deg=np.array([0.0, 90.0, 180.0, 270.0]))
SETTINGS = FlickerSettings(time_step_min=5.0, sunshine_fraction=(0.4,), year=2025)


def _turbine():
    return model.Turbine(id="t", name="t", axis="horizontal", rated_power_w=1000.0,
                         curve_speed_ms=(0.0, 3.0, 11.0, 25.0),
                         curve_power_w=(0.0, 0.0, 1000.0, 1000.0), cut_in_ms=3.0,
                         rated_speed_ms=11.0, cut_out_ms=25.0, rotor_diameter_m=3.0)


@pytest.fixture(scope="module")
def result():
    return flicker.window_flicker(HUB, (WINDOW,), (_turbine(),), CLIMATE, SITE, SETTINGS)


@pytest.fixture(scope="module")
def reference():
    """Independent: pvlib's ephemeris sun at 1-minute steps; a time flickers when the angle
    between the sun and the hub, seen from the window, is at most asin(R / D) (the rotor
    face-on to the sun is a disc of radius R at distance D), the sun at least 3° up and in
    front of the east-facing window (geometry by hand)."""
    times = pd.date_range("2025-01-01", "2026-01-01", freq="1min", inclusive="left", tz="UTC")
    sp = pvlib.solarposition.get_solarposition(times, LAT, LON, method="ephemeris")
    az, el = np.radians(sp["azimuth"].to_numpy()), sp["apparent_elevation"].to_numpy()
    elr = np.radians(el)
    sun = np.stack([np.sin(az) * np.cos(elr), np.cos(az) * np.cos(elr), np.sin(elr)], -1)
    d = np.array([25.0, 0.0, 8.0])
    dist = math.sqrt(25.0 ** 2 + 8.0 ** 2)
    angle = np.degrees(np.arccos(np.clip(sun @ (d / dist), -1, 1)))
    worst = (angle <= math.degrees(math.asin(1.5 / dist))) & (el >= 3.0) & (sun[:, 0] > 0)
    # Expected case: the rotor axis east-west (wind from 90° or 270°): the ray from the window
    # (-25, 0, 4) meets the disc plane x = 0 at t = 25 / s_x; hit when the point is within R.
    # Wind from north or south puts the window in the disc's plane: seen edge-on, no shadow.
    with np.errstate(divide="ignore", invalid="ignore"):
        t = 25.0 / sun[:, 0]
    ew = (sun[:, 0] > 0) & ((t * sun[:, 1]) ** 2 + (4.0 + t * sun[:, 2] - 12.0) ** 2 <= 1.5 ** 2)
    op = [stats.weibull_min.cdf(25.0, 2.0, scale=c) - stats.weibull_min.cdf(3.0, 2.0, scale=c)
          for c in (6.0, 7.0)]
    prob = 0.4 * (0.3 * op[0] + 0.3 * op[1])
    expected = np.sum(ew & (el >= 3.0)) * prob / 60.0
    local_day = (times + pd.to_timedelta(LON / 15.0, unit="h")).day_of_year.to_numpy()
    per_day = np.bincount(local_day[worst], minlength=367)
    return {"worst_h": worst.sum() / 60.0, "day_min": per_day.max(), "expected_h": expected}


def test_worst_case_hours_match_independent_computation(result, reference):
    """Astronomical worst-case hours a year agree within 3 % (5-min vs 1-min steps, SPA vs
    ephemeris sun)."""
    assert reference["worst_h"] > 5.0  # the geometry does produce flicker
    assert result.worst_hours[0, 0, 0] == pytest.approx(reference["worst_h"], rel=0.03)


def test_worst_day_matches_independent_computation(result, reference):
    """The worst day's minutes agree within 10 % (a day is a few tens of minutes; 5-min steps)."""
    assert result.worst_day_minutes[0, 0, 0] == pytest.approx(reference["day_min"], rel=0.10)


def test_expected_case_matches_independent_computation(result, reference):
    """Expected hours (sunshine 0.4, direction frequencies, operating share from the Weibull
    by scipy.stats.weibull_min) agree within 5 %, and never exceed the worst case."""
    assert result.expected_hours[0, 0, 0] == pytest.approx(reference["expected_h"], rel=0.05)
    assert result.expected_hours[0, 0, 0] <= result.worst_hours[0, 0, 0]


def test_window_facing_away_sees_no_flicker():
    """A west-facing window west of the hub cannot see the rotor against the sun."""
    away = model.Receptor("w2", -25.0, 0.0, 4.0, facing_deg=270.0, window_height_m=0.0)
    res = flicker.window_flicker(HUB, (away,), (_turbine(),), CLIMATE, SITE, SETTINGS)
    assert res.worst_hours[0, 0, 0] == 0.0


def test_far_window_is_not_counted():
    """Beyond max_distance_rotor_diameters (here 5 D = 15 m < 26 m) nothing is counted."""
    res = flicker.window_flicker(HUB, (WINDOW,), (_turbine(),), CLIMATE, SITE,
                                 FlickerSettings(max_distance_rotor_diameters=5.0))
    assert res.worst_hours.sum() == 0.0


def test_columns_flag_limits(result):
    """The limit flag follows the configured limits."""
    tight = flicker.flicker_columns(result, FlickerSettings(worst_hours_per_year_limit=1.0))
    loose = flicker.flicker_columns(result, FlickerSettings(
        worst_hours_per_year_limit=1e3, worst_minutes_per_day_limit=1e3,
        expected_hours_per_year_limit=1e3))
    assert tight["flicker_over_limit"][0] and not loose["flicker_over_limit"][0]
    assert tight["flicker_worst_window"] == ["w"]


def test_vertical_axis_rotor_is_a_cylinder():
    """A vertical-axis rotor (diameter 3 m, height 3 m) seen from the window: worst and
    expected cases share the geometry (no yaw), so expected = worst x sunshine x operating
    share; and its shadow hours are bounded by those of a sphere of radius √(1.5² + 1.5²)
    that contains the cylinder (geometry by hand)."""
    va = model.Turbine(id="v", name="v", axis="vertical", rated_power_w=1000.0,
                       curve_speed_ms=(0.0, 3.0, 11.0, 25.0),
                       curve_power_w=(0.0, 0.0, 1000.0, 1000.0), cut_in_ms=3.0,
                       rated_speed_ms=11.0, cut_out_ms=25.0, rotor_diameter_m=3.0,
                       rotor_height_m=3.0)
    res = flicker.window_flicker(HUB, (WINDOW,), (va,), CLIMATE, SITE, SETTINGS)
    op = [stats.weibull_min.cdf(25.0, 2.0, scale=c) - stats.weibull_min.cdf(3.0, 2.0, scale=c)
          for c in (5.0, 6.0, 5.0, 7.0)]
    share = 0.4 * sum(f * o for f, o in zip((0.2, 0.3, 0.2, 0.3), op))
    assert res.worst_hours[0, 0, 0] > 0
    assert res.expected_hours[0, 0, 0] == pytest.approx(res.worst_hours[0, 0, 0] * share, rel=1e-9)
    times, az, el = flicker.sun_path(LAT, LON, 2025, 5.0, 0.0)
    keep = el >= 3.0
    sun = flicker.sun_vectors(az[keep], el[keep])
    d = np.array([25.0, 0.0, 8.0])
    dist = np.linalg.norm(d)
    angle = np.degrees(np.arccos(np.clip(sun @ (d / dist), -1, 1)))
    sphere_h = np.sum((angle <= np.degrees(np.arcsin(math.hypot(1.5, 1.5) / dist)))
                      & (sun[:, 0] > 0)) * 5.0 / 60.0
    assert res.worst_hours[0, 0, 0] <= sphere_h + 1e-9
