"""Sound pressure at receptors from a turbine's sound power level: a screening estimate.

Hemispherical spreading from a point source at the hub and overall air absorption, the
simplified form of ISO 9613-2 (no ground, barrier or meteorological terms). Real levels
depend on background noise, tonality, reflections from facades and the turbine's condition;
compare with the limits set by the local authority, and have a qualified acoustician measure
where a neighbour might be affected.

References
----------
ISO 9613-2:1996, Acoustics - Attenuation of sound during propagation outdoors - Part 2:
General method of calculation (geometric divergence and atmospheric absorption; the overall
absorption coefficient of about 0.005 dB/m is from memory).
"""
from __future__ import annotations

import numpy as np

#: Overall atmospheric absorption [dB/m] for broadband turbine noise (from memory).
AIR_ABSORPTION_DB_PER_M = 0.005
#: Distances below this are held at it [m] (a receptor at the hub is not a point-source case).
MIN_DISTANCE_M = 1.0

CAUTION = ("Noise levels are a screening estimate (ISO 9613-2 simplified: hemispherical "
           "spreading and air absorption only). Compare with the limits set by the local "
           "authority; background noise, tonality and reflections can matter more, and a "
           "qualified acoustician should measure where a neighbour might be affected.")


def sound_pressure_db(sound_power_db, distance_m, absorption_db_per_m=AIR_ABSORPTION_DB_PER_M):
    """Sound pressure level at a distance from a point source over hard ground [dB(A)].

    Parameters
    ----------
    sound_power_db : source sound power level L_w [dB(A)]
    distance_m : slant distance r from the hub [m]
    absorption_db_per_m : overall air absorption α [dB/m]

    Notes
    -----
    L_p = L_w - 10 log10(2 π r²) - α r (hemispherical divergence, ISO 9613-2).
    """
    r = np.maximum(np.asarray(distance_m, float), MIN_DISTANCE_M)
    return (np.asarray(sound_power_db, float) - 10.0 * np.log10(2.0 * np.pi * r ** 2)
            - absorption_db_per_m * r)


def slant_distance_m(hub_xyz_m, receptor_xyz_m):
    """3-D distance of every hub to every receptor [m], shape (P, R).

    ``hub_xyz_m`` (P, 3) and ``receptor_xyz_m`` (R, 3), as (x east, y north, z above ground).
    """
    h = np.asarray(hub_xyz_m, float)[:, None, :]
    r = np.asarray(receptor_xyz_m, float)[None, :, :]
    return np.sqrt(np.sum((h - r) ** 2, axis=-1))


def receptor_levels_db(hub_xyz_m, receptors, sound_power_db,
                       absorption_db_per_m=AIR_ABSORPTION_DB_PER_M):
    """Level of every turbine at every position at every receptor, and the limit check.

    Parameters
    ----------
    hub_xyz_m : (P, 3) hub coordinates [m]
    receptors : sequence of :class:`engine.core.model.Receptor`
    sound_power_db : (T,) sound power levels [dB(A)]

    Returns
    -------
    levels_db : (P, T, R) sound pressure levels [dB(A)]
    exceeds : (P, T) True where any receptor's level is above its limit
    margin_db : (P, T) smallest limit minus level over receptors [dB] (+inf without receptors)
    worst : (P, T) index of the receptor with that smallest margin (-1 without receptors)
    """
    lw = np.asarray(sound_power_db, float)
    P, T, R = len(hub_xyz_m), len(lw), len(receptors)
    if R == 0:
        return (np.zeros((P, T, 0)), np.zeros((P, T), bool), np.full((P, T), np.inf),
                np.full((P, T), -1))
    rec = np.array([[r.x_m, r.y_m, r.height_m] for r in receptors], float)
    limit = np.array([r.limit_db for r in receptors], float)
    dist = slant_distance_m(hub_xyz_m, rec)  # (P, R)
    levels = sound_pressure_db(lw[None, :, None], dist[:, None, :], absorption_db_per_m)
    margins = limit[None, None, :] - levels
    worst = np.argmin(margins, axis=-1)
    margin = np.take_along_axis(margins, worst[..., None], axis=-1)[..., 0]
    return levels, margin < 0, margin, worst
