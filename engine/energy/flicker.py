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
MIDDLE = WINDOW_SAMPLES.index(0.0)

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


@functools.lru_cache(maxsize=8)
def sun_steps(latitude_deg, longitude_deg, year, step_min, altitude_m, min_elevation_deg):
    """The sun steps that can cast a shadow (at least ``min_elevation_deg`` up), kept for
    the site: a what-if that moves a rotor or a window reuses them.

    Returns
    -------
    sun : (N, 3) unit vectors towards the sun (:func:`sun_vectors`)
    day : (N,) local solar day of the year, 0-based (UTC shifted by longitude / 15 h)
    month : (N,) local month, 1-12

    The arrays are read-only (shared by every caller).
    """
    times, az, el = sun_path(latitude_deg, longitude_deg, year, step_min, altitude_m)
    keep = el >= min_elevation_deg
    local = times[keep] + pd.to_timedelta(longitude_deg / 15.0, unit="h")
    out = (sun_vectors(az[keep], el[keep]), local.day_of_year.to_numpy() - 1,
           local.month.to_numpy())
    for arr in out:
        arr.flags.writeable = False
    return out


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


def sunshine_share(settings, months):
    """Fraction of daylight with direct sun at each step [-], from its local month (1-12)."""
    frac = np.asarray(settings.sunshine_fraction, float)
    return np.full(months.shape, frac[0]) if frac.size == 1 else frac[months - 1]


def window_flicker(hub_xyz_m, windows, turbines, climate, site, settings) -> FlickerResult:
    """Worst-case and expected flicker hours at each window (see the module notes).

    ``climate`` gives ``frequency``, ``weibull_k``, ``weibull_c_ms`` (P, S) at each hub and
    ``sector_deg`` (S,); ``site`` its ``origin_lat_deg``, ``origin_lon_deg``, ``altitude_m``.

    Notes
    -----
    Worked over every position x turbine x window x sun step at once, on the few sun steps
    that can hit (:func:`cone_candidates`); the hit tests are the exact ones of
    :func:`disc_hit` and :func:`cylinder_hit` on those steps, so the result is the same as
    testing every step.
    """
    P, T, W = len(hub_xyz_m), len(turbines), len(windows)
    sun, day, month = sun_steps(float(site.origin_lat_deg), float(site.origin_lon_deg),
                                int(settings.year), float(settings.time_step_min),
                                float(site.altitude_m), float(settings.min_sun_elevation_deg))
    normal, offset, dist = _window_geometry(hub_xyz_m, windows)      # (W,3), (P,W,K,3), (P,W)
    radius = plan_radius_m(turbines)                                                # (T,)
    near = dist[:, :, None] <= settings.max_distance_rotor_diameters * 2.0 * radius  # (P,W,T)
    reach = np.max(np.abs(WINDOW_SAMPLES)) * np.array([w.window_height_m for w in windows])
    bound = np.where(near, _bounding_radius_m(turbines)[None, None, :], 0.0).max(-1) + reach
    n, pw = cone_candidates(offset[:, :, MIDDLE].reshape(P * W, 3), sun, bound.ravel(),
                            near.any(-1).ravel(), sun @ normal.T > 0, W)
    theta = np.radians(np.asarray(climate.sector_deg, float))
    axes = np.stack([np.sin(theta), np.cos(theta), np.zeros_like(theta)], -1)       # (S, 3)
    hit, sector = _exact_hits(offset.reshape(P * W, -1, 3)[pw], sun[n], turbines, axes)
    pos, win = np.divmod(pw, W)
    ok = hit & near[pos, win]                                                           # (C, T)
    # expected share of a hit: sum over the sectors that shade of frequency x turning share
    weight = np.asarray(climate.frequency, float)[:, None, :] * operating_share(
        climate, turbines)                                                          # (P,T,S)
    share = np.einsum("cst,cts->ct", sector.astype(float), weight[pos])
    c, j = np.nonzero(ok)
    cell = (pos[c] * T + j) * W + win[c]                                  # flat (P, T, W) index
    step_h = settings.time_step_min / 60.0
    worst = np.bincount(cell, minlength=P * T * W).reshape(P, T, W) * step_h
    daily = np.bincount(cell * 366 + day[n[c]], minlength=P * T * W * 366).reshape(
        P, T, W, 366) * settings.time_step_min
    sunny = sunshine_share(settings, month)
    expected = np.bincount(cell, weights=share[c, j] * sunny[n[c]],
                           minlength=P * T * W).reshape(P, T, W) * step_h
    return FlickerResult(window_ids=tuple(w.id for w in windows), worst_hours=worst,
                         worst_day_minutes=daily.max(-1), expected_hours=expected,
                         daily_minutes=daily)


def _window_geometry(hub_xyz_m, windows):
    """Window normals (W, 3), hub minus each window sample (P, W, K, 3) [m] and the distance
    from each window's middle to each hub (P, W) [m]."""
    W = len(windows)
    facing = np.radians([w.facing_deg for w in windows])
    normal = np.stack([np.sin(facing), np.cos(facing), np.zeros(W)], -1)
    k = np.asarray(WINDOW_SAMPLES)
    win = np.array([[w.x_m, w.y_m, w.height_m] for w in windows], float).reshape(W, 3)
    pts = np.repeat(win[:, None, :], len(k), 1)
    pts[..., 2] += k[None, :] * np.array([w.window_height_m for w in windows])[:, None]
    offset = np.asarray(hub_xyz_m, float).reshape(-1, 3)[:, None, None, :] - pts[None]
    dist = np.sqrt(np.sum(offset[:, :, MIDDLE] ** 2, -1))
    return normal, offset, dist


def plan_radius_m(turbines):
    """Radius of the rotor's swept circle [m], (T,): the disc's radius, or for a vertical axis
    half its diameter (its cylinder's radius; ``rotor_radius_m`` is half its height)."""
    return np.array([tb.rotor_diameter_m / 2.0 if tb.axis == "vertical" and tb.rotor_diameter_m
                     > 0 else tb.rotor_radius_m for tb in turbines], float)


def _rotor_height_m(turbines):
    """Height of a vertical-axis rotor's cylinder [m], (T,) (0 for a horizontal axis)."""
    return np.array([(tb.rotor_height_m or 2.0 * tb.rotor_radius_m) if tb.axis == "vertical"
                     else 0.0 for tb in turbines], float)


def _bounding_radius_m(turbines):
    """Radius of a sphere about the hub holding the whole rotor [m], (T,): the disc's radius,
    or for a vertical axis sqrt(r² + (h/2)²) around the cylinder of :func:`cylinder_hit`."""
    return np.hypot(plan_radius_m(turbines), _rotor_height_m(turbines) / 2.0)


#: Slack on the cone test's cosine: the exact hit tests decide; this only keeps every step
#: they could accept (rounding differences are ~1e-15).
CONE_SLACK = 1e-9
#: Elements of the (sun steps x window samples) cosine block worked at once.
CONE_BLOCK = 1 << 20


def cone_candidates(offset_m, sun, bound_m, use, in_front, n_windows):
    """Sun steps that can put a window in a rotor's shadow, as (step, pair) index arrays.

    Parameters
    ----------
    offset_m : (M, 3) hub minus the window's middle, M = positions x windows [m]
    sun : (N, 3) unit vectors towards the sun
    bound_m : (M,) radius of a sphere about the hub holding the rotor, plus the largest
        distance of a window sample from the middle [m]
    use : (M,) pairs to look at (the window within reach of some turbine)
    in_front : (N, W) the sun in front of each window; pair m is window ``m % n_windows``

    Returns
    -------
    step, pair : int arrays, C each, pairs ascending within a step.

    Notes
    -----
    A ray that passes within r of the hub from a sample a distance δ from the middle passes
    within b = r + δ of it from the middle (the rays are parallel). From a distance L > b
    such a ray points within asin(b / L) of the hub: s·D / L >= sqrt(1 - b²/L²). Every hit
    of :func:`disc_hit` (r the rotor radius) and :func:`cylinder_hit` (r = sqrt(r_c² +
    (h/2)²), the cylinder's bounding sphere) passes this test; a window within b of the hub
    keeps every step in front of it.
    """
    length = np.sqrt(np.sum(offset_m ** 2, -1))                                        # (M,)
    b = np.asarray(bound_m, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        cos_min = np.where(length > b, np.sqrt(np.maximum(1.0 - (b / length) ** 2, 0.0)),
                           -2.0) - CONE_SLACK
        unit = offset_m / length[:, None]
    pairs = np.flatnonzero(use)
    steps, found = [np.zeros(0, int)], [np.zeros(0, int)]
    per = max(1, CONE_BLOCK // max(len(sun), 1))
    for lo in range(0, len(pairs), per):  # blocks of pairs, each over every sun step
        m = pairs[lo:lo + per]
        keep = (sun @ unit[m].T >= cos_min[m]) & in_front[:, m % n_windows]     # (N, B)
        s, i = np.nonzero(keep)
        steps.append(s)
        found.append(m[i])
    return np.concatenate(steps), np.concatenate(found)


#: Candidate rays worked at once by the exact hit tests.
HIT_BLOCK = 8192


def _exact_hits(offset_m, sun, turbines, axes):
    """Worst-case hits (C, T) and per-sector hits (C, S, T) of candidate rays, any sample.

    ``offset_m`` (C, K, 3) hub minus window samples, ``sun`` (C, 3), ``axes`` (S, 3). The
    sector hits are those of the disc facing each sector's wind among the worst-case hits; a
    vertical axis shades alike from every sector.
    """
    C, T, S = len(offset_m), len(turbines), len(axes)
    worst = np.zeros((C, T), bool)
    sector = np.zeros((C, S, T), bool)
    vert = np.array([tb.axis == "vertical" for tb in turbines], bool)
    radius = plan_radius_m(turbines)
    height = _rotor_height_m(turbines)
    flat = axes[None, None, :, None, :]                                      # (1, 1, S, 1, 3)
    for lo in range(0, C, HIT_BLOCK):
        o = offset_m[lo:lo + HIT_BLOCK, :, None, :]                               # (B, K, 1, 3)
        s = sun[lo:lo + HIT_BLOCK, None, None, :]                                 # (B, 1, 1, 3)
        part = slice(lo, lo + HIT_BLOCK)
        if vert.any():
            hit = cylinder_hit(o, s, radius[vert], height[vert]).any(1)         # (B, Tv)
            worst[part, vert] = hit
            sector[part][..., vert] = hit[:, None, :]
        if (~vert).any():
            hit = disc_hit(o, s, radius[~vert]).any(1)                          # (B, Th)
            worst[part, ~vert] = hit
            rows = np.flatnonzero(hit.any(-1))
            if rows.size:
                by_axis = disc_hit(o[rows][:, :, :, None, :], s[rows][:, :, :, None, :],
                                   radius[~vert], flat).any(1)                  # (R, S, Th)
                sub = np.zeros((len(hit), S, hit.shape[1]), bool)
                sub[rows] = by_axis & hit[rows][:, None, :]
                sector[part][:, :, ~vert] = sub
    return worst, sector


def operating_share(climate, turbines):
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
