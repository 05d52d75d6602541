"""The flicker worked on the pruned sun steps equals testing every step, and the hit
geometry checked by hand.

``loop_flicker`` is the straightforward form: for each position and turbine, every window
sample against every sun step (the form the module had before the sun steps were pruned). The
engine's :func:`engine.energy.flicker.window_flicker` must give the same hours, cell for cell,
on geometries chosen to reach the pruning's edges: a window inside the rotor's bounding
sphere, a window beyond the distance limit, vertical- and horizontal-axis rotors, windows
facing each way, a window above the hub, monthly sunshine fractions.
"""
import math
from types import SimpleNamespace

import numpy as np
import pytest

from engine.core import model
from engine.core.consent import FlickerSettings
from engine.energy import flicker


def _hits_one(offset, sun, turbine, radius, axes):
    """Worst-case (W, N) and per-sector (W, N, S) hits of one rotor at every sun step."""
    off = offset[:, :, None, :]
    s = sun[None, None]
    if turbine.axis == "vertical":
        h = turbine.rotor_height_m or 2.0 * radius
        hit = flicker.cylinder_hit(off, s, radius, h).any(1)
        return hit, np.repeat(hit[..., None], len(axes), -1)
    worst = flicker.disc_hit(off, s, radius).any(1)
    sector = np.zeros(worst.shape + (len(axes),), bool)
    cand = np.nonzero(worst)
    if cand[0].size:
        o = offset[cand[0]]
        ss = sun[cand[1]][:, None, None, :]
        sector[cand] = flicker.disc_hit(o[:, :, None, :], ss, radius, axes[None, None]).any(1)
    return worst, sector


def loop_flicker(hub, windows, turbines, climate, site, settings):
    """Every position x turbine in turn, every window sample against every sun step."""
    P, T, W = len(hub), len(turbines), len(windows)
    sun, day, month = flicker.sun_steps(site.origin_lat_deg, site.origin_lon_deg,
                                        settings.year, settings.time_step_min,
                                        site.altitude_m, settings.min_sun_elevation_deg)
    sunny = flicker.sunshine_share(settings, month)
    facing = np.radians([w.facing_deg for w in windows])
    normal = np.stack([np.sin(facing), np.cos(facing), np.zeros(W)], -1)
    in_front = sun @ normal.T > 0
    k = np.asarray(flicker.WINDOW_SAMPLES)
    win = np.array([[w.x_m, w.y_m, w.height_m] for w in windows], float)
    pts = np.repeat(win[:, None, :], len(k), 1)
    pts[..., 2] += k[None, :] * np.array([w.window_height_m for w in windows])[:, None]
    offset = np.asarray(hub, float)[:, None, None, :] - pts[None]
    dist = np.sqrt(np.sum(offset[:, :, 1] ** 2, -1))
    step_h = settings.time_step_min / 60.0
    worst, expected = np.zeros((P, T, W)), np.zeros((P, T, W))
    daily = np.zeros((P, T, W, 366))
    op = flicker.operating_share(climate, turbines)
    theta = np.radians(np.asarray(climate.sector_deg, float))
    axes = np.stack([np.sin(theta), np.cos(theta), np.zeros_like(theta)], -1)
    bins = (np.arange(W)[:, None] * 366 + day[None, :]).ravel()
    for p in range(P):
        for j, tb in enumerate(turbines):
            # A vertical axis's cylinder has half its diameter as radius (rotor_radius_m is
            # half its height, for clearance).
            radius = tb.rotor_diameter_m / 2.0 if tb.axis == "vertical" else tb.rotor_radius_m
            near = dist[p] <= settings.max_distance_rotor_diameters * 2.0 * radius
            hit_any, hit_sector = _hits_one(offset[p], sun, tb, radius, axes)
            ok = hit_any & in_front.T & near[:, None]
            worst[p, j] = ok.sum(-1) * step_h
            daily[p, j] = np.bincount(bins, ok.ravel(), minlength=W * 366).reshape(W, 366) \
                * settings.time_step_min
            share = hit_sector.astype(float) @ (climate.frequency[p] * op[p, j])
            expected[p, j] = np.sum(np.where(ok, share * sunny, 0.0), -1) * step_h
    return worst, daily, expected


def _turbine(tid, axis="horizontal", diameter=3.0, height=0.0):
    return model.Turbine(id=tid, name=tid, axis=axis, rated_power_w=1000.0,
                         curve_speed_ms=(0.0, 3.0, 11.0, 25.0),
                         curve_power_w=(0.0, 0.0, 1000.0, 1000.0), cut_in_ms=3.0,
                         rated_speed_ms=11.0, cut_out_ms=25.0, rotor_diameter_m=diameter,
                         rotor_height_m=height)


TURBINES = (_turbine("h3"), _turbine("h6", diameter=6.0),
            _turbine("v", axis="vertical", diameter=2.0, height=3.0))
# Invented windows around hubs near the origin, each looking towards them (east, north,
# south, west, northwest facing); one a metre from a hub (inside its bounding sphere), one
# far beyond ten rotor diameters, one tall window level with the hubs, one above them (no
# shadow can reach it).
WINDOWS = (model.Receptor("e", -25.0, 0.0, 4.0, facing_deg=90.0, window_height_m=1.5),
           model.Receptor("s", 2.0, -8.0, 3.0, facing_deg=0.0, window_height_m=1.2),
           model.Receptor("n", -4.0, 22.0, 5.0, facing_deg=180.0, window_height_m=1.0),
           model.Receptor("w", 30.0, 5.0, 3.0, facing_deg=270.0, window_height_m=1.0),
           model.Receptor("close", 0.5, -0.8, 11.5, facing_deg=200.0, window_height_m=1.0),
           model.Receptor("far", -400.0, 10.0, 4.0, facing_deg=95.0, window_height_m=1.0),
           model.Receptor("tall", 10.0, -12.0, 12.0, facing_deg=320.0, window_height_m=3.0),
           model.Receptor("above", -8.0, -9.0, 25.0, facing_deg=120.0, window_height_m=1.0))
HUBS = np.array([[0.0, 0.0, 12.0], [6.0, -3.0, 9.5], [-10.0, 8.0, 15.0]])


def _climate(P, S, seed):
    rng = np.random.default_rng(seed)
    f = rng.uniform(0.2, 1.0, (P, S))
    return SimpleNamespace(frequency=f / f.sum(-1, keepdims=True),
                           weibull_k=rng.uniform(1.6, 2.4, (P, S)),
                           weibull_c_ms=rng.uniform(4.0, 8.0, (P, S)),
                           sector_deg=np.arange(S) * 360.0 / S)


CASES = {
    "cambridge, 12 sectors": (52.2, 0.1, 0.0, 12, FlickerSettings(time_step_min=10.0)),
    "south, monthly sun, 8 sectors": (
        -33.9, 18.4, 40.0, 8, FlickerSettings(time_step_min=15.0, year=2024,
                                              sunshine_fraction=tuple(np.linspace(0.2, 0.7, 12)),
                                              max_distance_rotor_diameters=6.0)),
    "high north, low sun allowed": (
        64.1, -21.9, 10.0, 16, FlickerSettings(time_step_min=10.0, min_sun_elevation_deg=0.5,
                                               max_distance_rotor_diameters=20.0)),
}


@pytest.mark.parametrize("case", list(CASES))
def test_pruned_equals_every_step(case):
    """Worst hours and minutes per day are equal cell for cell (counts of the same steps);
    the expected hours equal to rounding (the same terms summed in another order)."""
    lat, lon, alt, S, settings = CASES[case]
    site = SimpleNamespace(origin_lat_deg=lat, origin_lon_deg=lon, altitude_m=alt)
    climate = _climate(len(HUBS), S, seed=S)
    got = flicker.window_flicker(HUBS, WINDOWS, TURBINES, climate, site, settings)
    worst, daily, expected = loop_flicker(HUBS, WINDOWS, TURBINES, climate, site, settings)
    assert worst.sum() > 0 and expected.sum() > 0  # the geometry does produce flicker
    assert (worst > 0).sum() >= 6  # and at several windows, rotors and positions
    np.testing.assert_array_equal(got.worst_hours, worst)
    np.testing.assert_array_equal(got.daily_minutes, daily)
    np.testing.assert_array_equal(got.worst_day_minutes, daily.max(-1))
    np.testing.assert_allclose(got.expected_hours, expected, rtol=1e-12, atol=1e-12)
    # bounded by the year: no more hours than the sun is up, expected never above worst
    assert np.all(got.worst_hours <= 8784.0) and np.all(got.expected_hours >= 0.0)
    assert np.all(got.expected_hours <= got.worst_hours + 1e-12)


def test_one_position_alone_equals_its_row():
    """Each position's flicker depends on its own hub and climate only: worked alone it is
    the same as its row of the whole site (what lets a what-if rework one position)."""
    site = SimpleNamespace(origin_lat_deg=52.2, origin_lon_deg=0.1, altitude_m=0.0)
    settings = FlickerSettings(time_step_min=10.0)
    climate = _climate(len(HUBS), 12, seed=3)
    whole = flicker.window_flicker(HUBS, WINDOWS, TURBINES, climate, site, settings)
    for p in range(len(HUBS)):
        one = SimpleNamespace(frequency=climate.frequency[p:p + 1],
                              weibull_k=climate.weibull_k[p:p + 1],
                              weibull_c_ms=climate.weibull_c_ms[p:p + 1],
                              sector_deg=climate.sector_deg)
        alone = flicker.window_flicker(HUBS[p:p + 1], WINDOWS, TURBINES, one, site, settings)
        np.testing.assert_array_equal(alone.worst_hours[0], whole.worst_hours[p])
        np.testing.assert_array_equal(alone.daily_minutes[0], whole.daily_minutes[p])
        np.testing.assert_allclose(alone.expected_hours[0], whole.expected_hours[p],
                                   rtol=1e-12, atol=1e-12)


def test_no_sun_step_in_reach_gives_no_candidates():
    """Every window beyond reach: no sun step is looked at, and no flicker."""
    site = SimpleNamespace(origin_lat_deg=52.2, origin_lon_deg=0.1, altitude_m=0.0)
    climate = _climate(1, 4, seed=1)
    far = (model.Receptor("far", -400.0, 0.0, 4.0, facing_deg=90.0, window_height_m=1.0),)
    res = flicker.window_flicker(HUBS[:1], far, TURBINES, climate, site, FlickerSettings())
    assert res.worst_hours.sum() == 0.0 and res.expected_hours.sum() == 0.0


# -- the hit geometry by hand: window at the origin, hub 10 m east ------------------------

def _ray(azimuth_deg, elevation_deg):
    return flicker.sun_vectors(np.array([azimuth_deg]), np.array([elevation_deg]))[0]


def test_disc_face_on_by_hand():
    """Face-on disc of radius 1.5 m 10 m away: the ray misses the hub by 10 sin(a) at an
    angle a off the line to it, so it hits just below a = asin(0.15) and misses just above
    (plane geometry by hand); a ray away from the hub never hits."""
    d = np.array([10.0, 0.0, 0.0])
    a = math.degrees(math.asin(0.15))
    assert flicker.disc_hit(d, _ray(90.0, a - 0.01), 1.5)
    assert not flicker.disc_hit(d, _ray(90.0, a + 0.01), 1.5)
    assert flicker.disc_hit(d, _ray(90.0 - (a - 0.01), 0.0), 1.5)
    assert not flicker.disc_hit(d, _ray(270.0, 0.0), 1.5)


def test_disc_with_axis_by_hand():
    """Disc in the plane x = 10 m (axis east-west): a ray at elevation e meets the plane
    10 tan(e) above the hub, so it hits while tan(e) <= 0.15 (by hand); the same disc seen
    edge-on (axis north-south) casts no shadow along the line to it."""
    d = np.array([10.0, 0.0, 0.0])
    e = math.degrees(math.atan(0.15))
    east = np.array([1.0, 0.0, 0.0])
    assert flicker.disc_hit(d, _ray(90.0, e - 0.01), 1.5, east)
    assert not flicker.disc_hit(d, _ray(90.0, e + 0.01), 1.5, east)
    # face-on this ray is inside the disc (10 sin e < 1.5) but the tilted plane is not
    assert 10.0 * math.sin(math.radians(e + 0.01)) < 1.5
    assert not flicker.disc_hit(d, _ray(90.0, 0.0), 1.5, np.array([0.0, 1.0, 0.0]))


def test_cylinder_by_hand():
    """Cylinder of radius 1 m and height 2 m, 10 m east: a ray at azimuth 90° - b, elevation
    e passes the axis 10 sin(b) away horizontally, at a height 10 cos(b) tan(e) above the
    hub there (by hand); it hits when both are within the radius and half the height."""
    d = np.array([10.0, 0.0, 0.0])
    b = math.degrees(math.asin(0.1))
    assert flicker.cylinder_hit(d, _ray(90.0 - (b - 0.01), 0.0), 1.0, 2.0)
    assert not flicker.cylinder_hit(d, _ray(90.0 - (b + 0.01), 0.0), 1.0, 2.0)
    e = math.degrees(math.atan(0.1 / math.cos(math.radians(3.0))))
    assert flicker.cylinder_hit(d, _ray(87.0, e - 0.01), 1.0, 2.0)
    assert not flicker.cylinder_hit(d, _ray(87.0, e + 0.01), 1.0, 2.0)


def test_cone_keeps_every_hit_by_hand():
    """The cone test's half-angle is asin(b / L): 10 m from a sphere of radius 1.5 m a ray
    8.6° off the line is kept (asin(0.15) = 8.627°, by hand) and one 8.7° off is not."""
    off = np.array([[10.0, 0.0, 0.0]])
    sun = np.array([_ray(90.0, 8.6), _ray(90.0, 8.7)])
    step, pair = flicker.cone_candidates(off, sun, np.array([1.5]), np.array([True]),
                                         np.ones((2, 1), bool), 1)
    assert list(step) == [0] and list(pair) == [0]


def test_vertical_rotor_shades_with_its_diameter_not_its_height():
    """A vertical-axis rotor 2 m across and 3 m tall shades as a cylinder of radius 1 m
    (hand geometry): a ray passing 1.2 m from the axis, level with the hub, misses it, though
    it would hit a cylinder of half the height (1.5 m) as radius."""
    tall = _turbine("v", axis="vertical", diameter=2.0, height=3.0)
    assert tall.rotor_radius_m == pytest.approx(1.5)  # half the height, for clearance
    assert flicker.plan_radius_m((tall,))[0] == pytest.approx(1.0)
    offset = np.array([[10.0, 1.2, 0.0]])  # hub 10 m east of the window, 1.2 m north
    sun = np.array([[1.0, 0.0, 0.0]])      # sun due east on the horizon, ray along +x
    assert not flicker.cylinder_hit(offset, sun, 1.0, 3.0)[0]
    assert flicker.cylinder_hit(offset, sun, 1.5, 3.0)[0]
