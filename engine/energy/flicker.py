"""Shadow flicker at windows: when the rotor stands between a window and the sun.

The sun's position over one year comes from pvlib (NREL solar position algorithm) at the
site plan's origin (``origin_lat_deg``, ``origin_lon_deg``). A window (a receptor with
``facing_deg``) is sampled at its bottom, middle and top; at each time step it is in the
rotor's shadow when the ray from the window towards the sun passes through the rotor:

* **astronomical worst case**: the sun always shines and the rotor always turns, face-on to
  the sun, so the ray must pass within one rotor radius of the hub;
* **expected case**: the rotor faces the wind of each direction sector of the position's
  climate with that sector's frequency, turns only between cut-in and cut-out (the sector's
  Weibull), and the sun shines for the stated fraction of daylight.

The sun must be above ``min_sun_elevation_deg`` and in front of the window, and the hub
within ``max_distance_rotor_diameters`` rotor diameters. A vertical-axis rotor is a cylinder
of its diameter and height, whatever the wind direction. Hours are counted at the settings'
time step; days are local solar days (UTC shifted by longitude / 15 h).

References
----------
Reda, I. and Andreas, A. (2004), Solar position algorithm for solar radiation applications,
Solar Energy 76(5), 577-589 (as implemented in pvlib.solarposition).
Holmgren, W. F., Hansen, C. W. and Mikofski, M. A. (2018), pvlib python: a python package for
modeling solar energy systems, Journal of Open Source Software 3(29), 884.
"""
from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
import pandas as pd

#: Sample heights across a window, as fractions of its height from its centre.
WINDOW_SAMPLES = (-0.5, 0.0, 0.5)

CAUTION = ("Shadow flicker is estimated from the sun's path and the rotor's size; the "
           "astronomical worst case assumes constant sunshine and a rotor always face-on to "
           "the sun. Limits are set by the local authority; trees, curtains and other "
           "buildings are not counted.")


@functools.lru_cache(maxsize=8)
def sun_path(latitude_deg, longitude_deg, year, step_min, altitude_m=0.0):
    """Sun position over one year at ``step_min`` steps, daylight above the horizon only.

    Returns
    -------
    times : UTC times (pandas DatetimeIndex)
    azimuth_deg : clockwise from north [deg]
    elevation_deg : apparent elevation [deg]
    """
    times = pd.date_range(f"{year}-01-01", f"{year + 1}-01-01", freq=f"{step_min}min",
                          inclusive="left", tz="UTC")
    import pvlib  # the solar-position library; imported here so the chain loads without it
    sp = pvlib.solarposition.get_solarposition(times, latitude_deg, longitude_deg,
                                               altitude=altitude_m)
    up = sp["apparent_elevation"].to_numpy() > 0.0
    return (times[up], sp["azimuth"].to_numpy()[up], sp["apparent_elevation"].to_numpy()[up])


def sun_vectors(azimuth_deg, elevation_deg):
    """Unit vectors towards the sun (x east, y north, z up), shape (N, 3)."""
    az, el = np.radians(azimuth_deg), np.radians(elevation_deg)
    return np.stack([np.sin(az) * np.cos(el), np.cos(az) * np.cos(el), np.sin(el)], axis=-1)


def disc_hit(offset_m, sun, radius_m, axis=None):
    """Does the ray from a window along ``sun`` cross a rotor disc?

    Parameters
    ----------
    offset_m : (..., 3) hub minus window [m]
    sun : (..., 3) unit vector towards the sun
    radius_m : rotor radius [m]
    axis : (..., 3) unit rotor axis (horizontal, towards the wind); None for the worst case
        (the disc face-on to the sun)

    Notes
    -----
    Worst case: |D - (D·s) s| <= R with D·s > 0. With an axis n: the ray W + t s meets the
    disc plane at t = D·n / s·n; hit when t > 0 and |t s - D| <= R.
    """
    d = np.asarray(offset_m, float)
    s = np.asarray(sun, float)
    if axis is None:
        along = np.sum(d * s, axis=-1)
        perp = d - along[..., None] * s
        return (along > 0) & (np.sum(perp ** 2, axis=-1) <= radius_m ** 2)
    n = np.asarray(axis, float)
    sn = np.sum(s * n, axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.sum(d * n, axis=-1) / sn
    miss = t[..., None] * s - d
    return (np.abs(sn) > 1e-9) & (t > 0) & (np.sum(miss ** 2, axis=-1) <= radius_m ** 2)


def cylinder_hit(offset_m, sun, radius_m, height_m):
    """Ray from a window along ``sun`` through a vertical-axis rotor's cylinder (radius, height).

    The ray's closest horizontal approach to the axis must be within the radius and its height
    there within half the rotor height of the hub.
    """
    d = np.asarray(offset_m, float)
    s = np.asarray(sun, float)
    sh2 = np.maximum(s[..., 0] ** 2 + s[..., 1] ** 2, 1e-12)
    t = (d[..., 0] * s[..., 0] + d[..., 1] * s[..., 1]) / sh2
    gap2 = (t * s[..., 0] - d[..., 0]) ** 2 + (t * s[..., 1] - d[..., 1]) ** 2
    return (t > 0) & (gap2 <= radius_m ** 2) & (np.abs(t * s[..., 2] - d[..., 2]) <= height_m / 2)


@dataclass(frozen=True)
class FlickerResult:
    """Flicker of every position x turbine at every window."""

    window_ids: tuple
    worst_hours: np.ndarray        # (P, T, W) astronomical worst case [h/yr]
    worst_day_minutes: np.ndarray  # (P, T, W) worst case, most in one day [min]
    expected_hours: np.ndarray     # (P, T, W) expected case [h/yr]
    daily_minutes: np.ndarray      # (P, T, W, 366) worst case per day of year [min]


def _sunshine(settings, months):
    frac = np.asarray(settings.sunshine_fraction, float)
    return np.full(months.shape, frac[0]) if frac.size == 1 else frac[months - 1]


def window_flicker(hub_xyz_m, windows, turbines, climate, site, settings) -> FlickerResult:
    """Worst-case and expected flicker hours at each window (see the module notes).

    ``climate`` gives ``frequency``, ``weibull_k``, ``weibull_c_ms`` (P, S) at each hub and
    ``sector_deg`` (S,); ``site`` its ``origin_lat_deg``, ``origin_lon_deg``, ``altitude_m``.
    """
    P, T, W = len(hub_xyz_m), len(turbines), len(windows)
    times, az, el = sun_path(float(site.origin_lat_deg), float(site.origin_lon_deg),
                             int(settings.year), float(settings.time_step_min),
                             float(site.altitude_m))
    keep = el >= settings.min_sun_elevation_deg
    sun, times = sun_vectors(az[keep], el[keep]), times[keep]
    local = times + pd.to_timedelta(float(site.origin_lon_deg) / 15.0, unit="h")
    day = local.day_of_year.to_numpy() - 1
    sunny = _sunshine(settings, local.month.to_numpy())
    facing = np.radians([w.facing_deg for w in windows])
    normal = np.stack([np.sin(facing), np.cos(facing), np.zeros(W)], -1)          # (W, 3)
    in_front = sun @ normal.T > 0                                                   # (N, W)
    k = np.asarray(WINDOW_SAMPLES)
    win = np.array([[w.x_m, w.y_m, w.height_m] for w in windows], float)
    pts = np.repeat(win[:, None, :], len(k), 1)
    pts[..., 2] += k[None, :] * np.array([w.window_height_m for w in windows])[:, None]
    offset = np.asarray(hub_xyz_m, float)[:, None, None, :] - pts[None]           # (P, W, K, 3)
    dist = np.sqrt(np.sum(offset[:, :, 1] ** 2, -1))                                # (P, W)
    step_h = settings.time_step_min / 60.0
    worst = np.zeros((P, T, W))
    expected = np.zeros((P, T, W))
    daily = np.zeros((P, T, W, 366))
    op = _operating_share(climate, turbines)                                        # (P, T, S)
    theta = np.radians(np.asarray(climate.sector_deg, float))
    axes = np.stack([np.sin(theta), np.cos(theta), np.zeros_like(theta)], -1)       # (S, 3)
    bins = (np.arange(W)[:, None] * 366 + day[None, :]).ravel()
    # One block per position and turbine (a handful each), vectorised over windows and times.
    for p in range(P):
        for j, tb in enumerate(turbines):
            radius = tb.rotor_radius_m
            near = dist[p] <= settings.max_distance_rotor_diameters * 2.0 * radius  # (W,)
            hit_any, hit_sector = _hits(offset[p], sun, tb, radius, axes)   # (W, N), (W, N, S)
            ok = hit_any & in_front.T & near[:, None]
            worst[p, j] = ok.sum(-1) * step_h
            daily[p, j] = np.bincount(bins, ok.ravel(), minlength=W * 366).reshape(W, 366) \
                * settings.time_step_min
            share = hit_sector.astype(float) @ (climate.frequency[p] * op[p, j])   # (W, N)
            expected[p, j] = np.sum(np.where(ok, share * sunny, 0.0), -1) * step_h
    return FlickerResult(window_ids=tuple(w.id for w in windows), worst_hours=worst,
                         worst_day_minutes=daily.max(-1), expected_hours=expected,
                         daily_minutes=daily)


def _hits(offset, sun, turbine, radius, axes):
    """Worst-case hits (W, N) and per-sector hits (W, N, S) at one position, any window sample.

    ``offset`` (W, K, 3) hub minus window samples, ``sun`` (N, 3), ``axes`` (S, 3).
    """
    off = offset[:, :, None, :]                                                     # (W, K, 1, 3)
    s = sun[None, None]                                                             # (1, 1, N, 3)
    if turbine.axis == "vertical":
        h = turbine.rotor_height_m or 2.0 * radius
        hit = cylinder_hit(off, s, radius, h).any(1)
        return hit, np.repeat(hit[..., None], len(axes), -1)
    worst = disc_hit(off, s, radius).any(1)
    sector = np.zeros(worst.shape + (len(axes),), bool)
    cand = np.nonzero(worst)
    if cand[0].size:
        o = offset[cand[0]]                                                         # (C, K, 3)
        ss = sun[cand[1]][:, None, None, :]                                         # (C, 1, 1, 3)
        sector[cand] = disc_hit(o[:, :, None, :], ss, radius, axes[None, None]).any(1)
    return worst, sector


def _operating_share(climate, turbines):
    """Share of each sector's time the rotor turns: F(cut-out) - F(cut-in), (P, T, S)."""
    k = np.asarray(climate.weibull_k, float)[:, None, :]
    c = np.asarray(climate.weibull_c_ms, float)[:, None, :]
    lo = np.array([t.cut_in_ms for t in turbines], float)[None, :, None]
    hi = np.array([t.cut_out_ms for t in turbines], float)[None, :, None]
    return np.exp(-(lo / c) ** k) - np.exp(-(hi / c) ** k)


def flicker_columns(result: FlickerResult, settings) -> dict:
    """Ranked-table columns (P*T rows, positions outer): the worst window's numbers."""
    P, T, W = result.worst_hours.shape
    n = P * T
    if W == 0:
        nan = np.full(n, np.nan)
        return {"flicker_worst_hours": nan, "flicker_worst_day_min": nan,
                "flicker_expected_hours": nan, "flicker_worst_window": [""] * n,
                "flicker_over_limit": np.zeros(n, bool)}
    wh = result.worst_hours.reshape(n, W)
    wd = result.worst_day_minutes.reshape(n, W)
    ex = result.expected_hours.reshape(n, W)
    over = ((wh > settings.worst_hours_per_year_limit)
            | (wd > settings.worst_minutes_per_day_limit)
            | (ex > settings.expected_hours_per_year_limit))
    pick = np.argmax(wh, axis=-1)
    return {
        "flicker_worst_hours": wh.max(-1),
        "flicker_worst_day_min": wd.max(-1),
        "flicker_expected_hours": ex.max(-1),
        "flicker_worst_window": [result.window_ids[i] if wh[r, i] > 0 else ""
                                 for r, i in enumerate(pick)],
        "flicker_over_limit": over.any(-1),
    }
