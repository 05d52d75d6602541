"""Turbine noise at receptors by hub wind speed: ISO 9613-2 octave-band propagation.

Sound power per hub wind speed comes from the turbine's declared table (in the manner of
IEC 61400-11) or, failing that, its single declared value and a stated default slope. Each
octave band is propagated with the terms of ISO 9613-2:

``L_p = L_W + D_c - (A_div + A_atm + A_gr + A_bar)``, with ``D_c = 0`` (omnidirectional point
source at the hub) and downwind propagation (no ``C_met``: the level a neighbour hears when the
wind blows towards them, the sceptical case).

* ``A_div = 20 lg(d / 1 m) + 11`` geometric divergence;
* ``A_atm = α d / 1000`` with α [dB/km] from ISO 9613-1 at the set temperature and humidity;
* ``A_gr`` the general method (ISO 9613-2 section 7.3.1, Table 3) with one ground factor G;
* ``A_bar`` screening by the site's own buildings: diffraction over the roof, single or
  double, and round the building's vertical edges (ISO 9613-2 section 7.4), the paths added
  as energies, the most screening building per path. The side paths are lower bounds of the
  real detours (:func:`engine.energy.noise_paths.lateral_paths`), so screening is never
  over-credited for a short building; switch it off (``NoiseSettings.building_screening``) to
  see its effect, shown as ``noise_screening_db``.

Real levels also depend on tonality, amplitude modulation, reflections from facades and the
turbine's condition; compare with the local authority's criteria and have a qualified
acoustician measure where a neighbour might be affected.

References
----------
ISO 9613-1:1993, Acoustics - Attenuation of sound during propagation outdoors - Part 1:
Calculation of the absorption of sound by the atmosphere (equations 3 to 5, B.1).
ISO 9613-2:1996, Part 2: General method of calculation (equations 7, 8, 10, 12, 14, 18;
Table 3).
IEC 61400-11, Wind turbines - Acoustic noise measurement techniques (apparent sound power
level per wind speed).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from engine.core.consent import (DEFAULT_BACKGROUND_DB, DEFAULT_BACKGROUND_SPEED_MS,
                                 OCTAVE_HZ)
from engine.energy.noise_paths import barrier_dz_db, building_screening_paths, lateral_paths

FREQ_HZ = np.asarray(OCTAVE_HZ)
#: Speed of sound for the wavelength in the barrier term [m/s] (ISO 9613-2 uses 340 m/s).
SOUND_SPEED_MS = 340.0
MIN_DISTANCE_M = 1.0

CAUTION = ("Noise is an estimate to ISO 9613-2 (downwind, octave bands, ground and the site's "
           "buildings as barriers) with the turbine's sound power per wind speed. Compare with "
           "the local authority's criteria; tonality, amplitude modulation and reflections can "
           "matter more, and a qualified acoustician should measure where a neighbour might "
           "be affected.")


def air_absorption_db_per_km(freq_hz, temperature_c=10.0, humidity_pct=70.0,
                             pressure_kpa=101.325):
    """Pure-tone atmospheric absorption coefficient α [dB/km] (ISO 9613-1).

    Parameters
    ----------
    freq_hz : frequency [Hz]
    temperature_c : air temperature [°C]
    humidity_pct : relative humidity [%]
    pressure_kpa : ambient pressure [kPa]

    Notes
    -----
    α = 8.686 f² [1.84e-11 (p_a/p_r)⁻¹ (T/T_0)^½ + (T/T_0)^-5/2 (0.01275 e^(-2239.1/T) /
    (f_rO + f²/f_rO) + 0.1068 e^(-3352/T) / (f_rN + f²/f_rN))] dB/m, with the relaxation
    frequencies f_rO, f_rN of oxygen and nitrogen from the molar concentration of water
    vapour h (ISO 9613-1 equations 3 to 5 and B.1).

    References
    ----------
    ISO 9613-1:1993, section 6 and Annex B.
    """
    f = np.asarray(freq_hz, float)
    t = temperature_c + 273.15
    tr = t / 293.15
    pa = pressure_kpa / 101.325
    c = -6.8346 * (273.16 / t) ** 1.261 + 4.6151
    h = humidity_pct * 10.0 ** c / pa
    fro = pa * (24.0 + 4.04e4 * h * (0.02 + h) / (0.391 + h))
    frn = pa * tr ** -0.5 * (9.0 + 280.0 * h * np.exp(-4.170 * (tr ** (-1.0 / 3.0) - 1.0)))
    alpha = 8.686 * f ** 2 * (1.84e-11 / pa * tr ** 0.5 + tr ** -2.5 * (
        0.01275 * np.exp(-2239.1 / t) / (fro + f ** 2 / fro)
        + 0.1068 * np.exp(-3352.0 / t) / (frn + f ** 2 / frn)))
    return alpha * 1000.0


def divergence_db(distance_m):
    """Geometric divergence A_div = 20 lg(d / d_0) + 11 dB, d_0 = 1 m (ISO 9613-2 eq. 7)."""
    d = np.maximum(np.asarray(distance_m, float), MIN_DISTANCE_M)
    return 20.0 * np.log10(d) + 11.0


def ground_db(source_height_m, receiver_height_m, plan_distance_m, ground_factor):
    """Ground attenuation A_gr = A_s + A_r + A_m per octave band [dB] (ISO 9613-2 7.3.1).

    Parameters
    ----------
    source_height_m, receiver_height_m : h_s, h_r above ground [m]
    plan_distance_m : d_p, source to receiver projected on the ground [m]
    ground_factor : G for source, middle and receiver regions (0 hard .. 1 porous)

    Returns
    -------
    (..., 8) attenuation per octave band 63 Hz .. 8 kHz [dB]; negative values are a gain.

    Notes
    -----
    Table 3: 63 Hz -1.5; 125 Hz -1.5 + G a'(h); 250 Hz -1.5 + G b'(h); 500 Hz -1.5 + G c'(h);
    1 kHz -1.5 + G d'(h); 2-8 kHz -1.5 (1 - G), for each of A_s (h = h_s) and A_r (h = h_r);
    A_m = -3 q at 63 Hz, else -3 q (1 - G_m), q = 0 for d_p <= 30 (h_s + h_r), else
    1 - 30 (h_s + h_r) / d_p.

    References
    ----------
    ISO 9613-2:1996, section 7.3.1, Table 3 and its footnotes for a', b', c', d'.
    """
    hs = np.asarray(source_height_m, float)[..., None]
    hr = np.asarray(receiver_height_m, float)[..., None]
    dp = np.maximum(np.asarray(plan_distance_m, float), MIN_DISTANCE_M)[..., None]
    g = float(ground_factor)
    far = 1.0 - np.exp(-dp / 50.0)

    def region(h):
        a = 1.5 + 3.0 * np.exp(-0.12 * (h - 5.0) ** 2) * far + 5.7 * np.exp(-0.09 * h ** 2) * (
            1.0 - np.exp(-2.8e-6 * dp ** 2))
        b = 1.5 + 8.6 * np.exp(-0.09 * h ** 2) * far
        c = 1.5 + 14.0 * np.exp(-0.46 * h ** 2) * far
        d = 1.5 + 5.0 * np.exp(-0.9 * h ** 2) * far
        shape = np.broadcast_shapes(a.shape, dp.shape)
        out = np.empty(shape[:-1] + (8,))
        out[..., 0] = -1.5
        for band, prime in zip((1, 2, 3, 4), (a, b, c, d)):
            out[..., band] = (-1.5 + g * prime)[..., 0]
        out[..., 5:] = -1.5 * (1.0 - g)
        return out

    q = np.where(dp <= 30.0 * (hs + hr), 0.0, 1.0 - 30.0 * (hs + hr) / dp)
    am = np.concatenate([-3.0 * q, np.repeat(-3.0 * q * (1.0 - g), 7, axis=-1)], axis=-1)
    return region(hs) + region(hr) + am


def band_levels(total_db, shape_db):
    """Octave-band sound power [dB(A)] from an A-weighted total and a relative shape.

    The shape is normalised so the bands add (energetically) to the total.
    """
    shape = np.asarray(shape_db, float)
    shape = shape - 10.0 * np.log10(np.sum(10.0 ** (shape / 10.0)))
    return np.asarray(total_db, float)[..., None] + shape


def energy_sum_db(levels_db, axis=-1):
    """10 lg Σ 10^(L/10) over ``axis`` [dB]; all -inf gives -inf."""
    with np.errstate(divide="ignore"):
        return 10.0 * np.log10(np.sum(10.0 ** (np.asarray(levels_db, float) / 10.0), axis=axis))


def sound_power_by_speed(turbine, speed_ms, settings):
    """Apparent sound power L_WA [dB(A)] at hub wind speeds; -inf where the rotor is stopped.

    The turbine's declared table (``sound_power_speed_ms``, ``sound_power_by_speed_db``) is
    interpolated linearly and extended beyond its ends with ``settings.default_slope_db_per_ms``;
    without a table, the declared value (``declared_sound_power_db``, else ``sound_power_db``)
    holds at ``settings.declared_speed_ms`` and changes with that slope.

    Notes
    -----
    L_WA(v) = L_WA(v_0) + s (v - v_0) outside a declared table (s: default slope).
    """
    v = np.asarray(speed_ms, float)
    s = settings.default_slope_db_per_ms
    if turbine.sound_power_speed_ms:
        vs = np.asarray(turbine.sound_power_speed_ms, float)
        lw = np.asarray(turbine.sound_power_by_speed_db, float)
        out = np.interp(v, vs, lw)
        out = np.where(v < vs[0], lw[0] + s * (v - vs[0]), out)
        out = np.where(v > vs[-1], lw[-1] + s * (v - vs[-1]), out)
    else:
        base = turbine.declared_sound_power_db or turbine.sound_power_db
        out = base + s * (v - settings.declared_speed_ms)
    running = (v >= turbine.cut_in_ms) & (v <= turbine.cut_out_ms)
    return np.where(running, out, -np.inf)


def background_db(receptor, speed_ms):
    """Background level at a receptor per hub wind speed [dB(A)], held flat beyond its table.

    The receptor's own ``background_db`` table, else the stated default curve of
    :mod:`engine.core.consent` (an assumption; measure background at the receptor).
    Holding it flat, not extrapolating upwards, keeps a background-based limit from loosening
    beyond the measured range.
    """
    if receptor.background_speed_ms:
        vs, lb = receptor.background_speed_ms, receptor.background_db
    else:
        vs, lb = DEFAULT_BACKGROUND_SPEED_MS, DEFAULT_BACKGROUND_DB
    return np.interp(np.asarray(speed_ms, float), np.asarray(vs, float), np.asarray(lb, float))


def limit_db(receptor, speed_ms, settings):
    """The criterion at a receptor per speed [dB(A)]: its limit, or max(limit, background + m)."""
    fixed = np.full(np.shape(speed_ms), float(receptor.limit_db))
    if settings.criterion == "background_plus":
        return np.maximum(fixed, background_db(receptor, speed_ms)
                          + settings.margin_above_background_db)
    return fixed


@dataclass(frozen=True)
class Propagation:
    """Attenuation of every octave band from every hub to every receptor."""

    attenuation_db: np.ndarray  # (P, R, 8) A_div + A_atm + A_gr + A_bar
    screening_db: np.ndarray    # (P, R, 8) the part of it due to buildings (max(D_z, A_gr) - A_gr)
    distance_m: np.ndarray      # (P, R) slant distance


def propagation(hub_xyz_m, receptor_xyz_m, buildings, settings) -> Propagation:
    """ISO 9613-2 attenuation per band from each hub (P, 3) to each receptor (R, 3) [dB].

    Notes
    -----
    A = A_div + A_atm + A_gr + A_bar, with A_bar = max(D_z - A_gr, 0) for diffraction over
    the top of a building (ISO 9613-2 eq. 12), D_z of the most screening building.
    """
    h = np.asarray(hub_xyz_m, float)[:, None, :]
    r = np.asarray(receptor_xyz_m, float)[None, :, :]
    d = np.maximum(np.sqrt(np.sum((h - r) ** 2, axis=-1)), MIN_DISTANCE_M)
    dp = np.sqrt(np.sum((h[..., :2] - r[..., :2]) ** 2, axis=-1))
    alpha = air_absorption_db_per_km(FREQ_HZ, settings.air_temperature_c,
                                     settings.relative_humidity_pct)
    a_div = divergence_db(d)[..., None]
    a_atm = alpha * d[..., None] / 1000.0
    hs = np.broadcast_to(h[..., 2], d.shape)
    hr = np.broadcast_to(r[..., 2], d.shape)
    a_gr = ground_db(hs, hr, dp, settings.ground_factor)
    screen = np.zeros_like(a_gr)
    if settings.building_screening and len(buildings):
        paths = building_screening_paths(h[:, 0, :], r[0], buildings)  # arrays (P, R, B)
        wavelength = SOUND_SPEED_MS / FREQ_HZ
        dz = barrier_dz_db(paths.dss_m[..., None], paths.dsr_m[..., None], paths.e_m[..., None],
                           d[..., None, None], paths.z_m[..., None], wavelength,
                           paths.double[..., None])                       # (P, R, B, 8) top
        screen = _screening_db(dz, paths, lateral_paths(h[:, 0, :], r[0], buildings),
                               d, a_gr, wavelength)
    return Propagation(attenuation_db=a_div + a_atm + a_gr + screen, screening_db=screen,
                       distance_m=d)


def _screening_db(dz_top, paths, lateral, d, a_gr, wavelength):
    """A_bar of the most screening building per band (P, R, 8) [dB], over the top and round
    the sides together.

    Notes
    -----
    Over the top the path loses max(D_z, A_gr) in place of A_gr (eq. 12); round a vertical
    edge it loses D_z on top of A_gr (eq. 13). The paths add as energies (common practice,
    from memory): A_bar = -10 lg[10^(-max(D_z,top - A_gr, 0)/10) + Σ_sides 10^(-D_z,side/10)],
    held between 0 and the over-the-top value alone. The side paths are uncapped: only the
    sum is capped (by the over-the-top value, itself capped). Where the hub stands on the
    building (it is inside its footprint) the sound leaves over the roof edge only.
    """
    top = np.maximum(dz_top - a_gr[:, :, None, :], 0.0)                     # (P, R, B, 8)
    side = barrier_dz_db(lateral.dss_m[..., None], lateral.dsr_m[..., None], 0.0,
                         d[None, ..., None, None], lateral.z_m[..., None], wavelength,
                         False, cap=False)                                  # (2, P, R, B, 8)
    own = paths.source_inside[..., None]
    energy = 10.0 ** (-top / 10.0) + np.where(own, 0.0, np.sum(10.0 ** (-side / 10.0), axis=0))
    both = np.clip(-10.0 * np.log10(energy), 0.0, top)
    return np.where(paths.blocked[..., None], both, 0.0).max(axis=2)


def speed_bins_ms(settings):
    """Centres of the 1 m/s hub-speed bins assessed, 1 m/s up to the highest assessed [m/s]."""
    return np.arange(1.0, np.floor(settings.max_assessed_speed_ms) + 0.5)


def hours_per_bin(frequency, weibull_k, weibull_c_ms, speeds_ms):
    """Hours a year the hub speed spends in each 1 m/s bin, (P, V) [h].

    Notes
    -----
    h_v = 8760 Σ_s f_s [F_s(v + ½) - F_s(v - ½)], F_s(x) = 1 - exp(-(x/c_s)^k_s).
    """
    k = np.asarray(weibull_k, float)[..., None]
    c = np.asarray(weibull_c_ms, float)[..., None]
    v = np.asarray(speeds_ms, float)
    cdf = lambda x: 1.0 - np.exp(-(np.maximum(x, 0.0) / c) ** k)  # noqa: E731
    share = cdf(v + 0.5) - cdf(v - 0.5)                               # (P, S, V)
    return 8760.0 * np.sum(np.asarray(frequency, float)[..., None] * share, axis=-2)


@dataclass(frozen=True)
class ReceptorNoise:
    """Noise of every position x turbine at every receptor and hub-speed bin."""

    speeds_ms: np.ndarray      # (V,) bin centres
    hours: np.ndarray          # (P, V) hours a year in each bin
    level_db: np.ndarray       # (P, T, R, V) turbine level, -inf where the rotor is stopped
    unscreened_db: np.ndarray  # (P, T, R, V) the same without building screening
    background_db: np.ndarray  # (R, V)
    limit_db: np.ndarray       # (R, V) the criterion
    margin_db: np.ndarray      # (P, T, R, V) limit - level (+inf where stopped)
    over: np.ndarray           # (P, T, R, V) level above limit + tolerance in a bin that occurs


def receptor_noise(hub_xyz_m, receptors, buildings, turbines, climate, settings) -> ReceptorNoise:
    """Turbine level vs criterion per receptor and hub speed (see the module notes).

    ``climate`` gives ``frequency``, ``weibull_k``, ``weibull_c_ms`` (P, S) at each hub.
    """
    v = speed_bins_ms(settings)
    P, T, R = len(hub_xyz_m), len(turbines), len(receptors)
    hours = hours_per_bin(climate.frequency, climate.weibull_k, climate.weibull_c_ms, v)
    lw = np.array([sound_power_by_speed(t, v, settings) for t in turbines]).reshape(T, len(v))
    bands = band_levels(lw, settings.octave_shape_db)                     # (T, V, 8)
    rec = np.array([[r.x_m, r.y_m, r.height_m] for r in receptors], float).reshape(R, 3)
    prop = propagation(hub_xyz_m, rec, buildings, settings)               # (P, R, 8)
    with np.errstate(invalid="ignore"):
        lp = bands[None, :, None] - prop.attenuation_db[:, None, :, None, :]
        free = lp + prop.screening_db[:, None, :, None, :]
    level = energy_sum_db(lp)                                              # (P, T, R, V)
    unscreened = energy_sum_db(free)
    bg = np.array([background_db(r, v) for r in receptors]).reshape(R, len(v))
    lim = np.array([limit_db(r, v, settings) for r in receptors]).reshape(R, len(v))
    with np.errstate(invalid="ignore"):
        margin = np.where(np.isfinite(level), lim - level, np.inf)
    over = (margin < -settings.tolerance_db) & (hours[:, None, None, :] > 0)
    return ReceptorNoise(speeds_ms=v, hours=hours, level_db=level, unscreened_db=unscreened,
                         background_db=bg, limit_db=lim, margin_db=margin, over=over)


def noise_columns(result: ReceptorNoise, receptor_ids) -> dict:
    """Ranked-table columns (P*T rows, positions outer) from :func:`receptor_noise`.

    ``noise_db_at_receptors`` holds each receptor's highest level over the assessed bins;
    ``noise_margin_db`` the smallest margin, at ``noise_worst_receptor`` and
    ``noise_worst_speed_ms``; ``noise_hours_over_limit`` the hours a year of bins in which
    any receptor is above its criterion plus tolerance; ``noise_screening_db`` what the
    buildings take off the level at that worst receptor and speed.
    """
    P, T, R, V = result.level_db.shape
    n = P * T
    if R == 0:
        return {"noise_db_at_receptors": [{} for _ in range(n)],
                "noise_exceeds_limit": np.zeros(n, bool), "noise_margin_db": np.full(n, np.inf),
                "noise_worst_receptor": [""] * n, "noise_worst_speed_ms": np.full(n, np.nan),
                "noise_hours_over_limit": np.zeros(n), "noise_screening_db": np.zeros(n)}
    peak = result.level_db.max(axis=-1).reshape(n, R)
    flat = result.margin_db.reshape(n, R * V)
    worst = np.argmin(flat, axis=-1)
    margin = flat[np.arange(n), worst]
    w_rec, w_bin = np.divmod(worst, V)
    running = np.isfinite(margin)
    with np.errstate(invalid="ignore"):
        gain = np.where(np.isfinite(result.level_db), result.unscreened_db - result.level_db, 0.0)
    screen = gain.reshape(n, R * V)[np.arange(n), worst]
    any_over = result.over.any(axis=2)                                    # (P, T, V)
    hours_over = np.sum(np.where(any_over, result.hours[:, None, :], 0.0), axis=-1).ravel()
    return {
        "noise_db_at_receptors": [dict(zip(receptor_ids, map(float, row))) for row in peak],
        "noise_exceeds_limit": result.over.any(axis=(2, 3)).ravel(),
        "noise_margin_db": margin,
        "noise_worst_receptor": [receptor_ids[i] if ok else "" for i, ok in zip(w_rec, running)],
        "noise_worst_speed_ms": np.where(running, result.speeds_ms[w_bin], np.nan),
        "noise_hours_over_limit": hours_over,
        "noise_screening_db": np.where(running, screen, 0.0),
    }
