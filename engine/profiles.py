"""Vertical wind profiles: log law with displacement, EN 1991-1-4 terrain factor, power law.

References
----------
EN 1991-1-4:2005, Eurocode 1: Actions on structures - Part 1-4: Wind actions, §4.3.2 and
Table 4.1 (national annexes may differ).
Grimmond, C. S. B. and Oke, T. R. (1999), "Aerodynamic properties of urban areas derived from
analysis of surface form", J. Appl. Meteorol. 38:1262.
Macdonald, R. W. (2000), "Modelling the mean velocity profile in the urban canopy layer",
Boundary-Layer Meteorol. 97:25-45 (exponential in-canopy profile, attenuation from the frontal
area fraction; from memory).
"""
from __future__ import annotations

import numpy as np

#: von Kármán constant [-].
KARMAN = 0.4

#: EN 1991-1-4 Table 4.1: terrain category -> (z0 [m], z_min [m]).
EN1991_TERRAIN = {
    "0": (0.003, 1.0),
    "I": (0.01, 1.0),
    "II": (0.05, 2.0),
    "III": (0.3, 5.0),
    "IV": (1.0, 10.0),
}

#: Reference roughness of terrain category II [m] (EN 1991-1-4 eq. 4.5).
Z0_II = 0.05
#: Attenuation coefficient of the in-canopy profile per unit frontal area fraction,
#: a = 9.6 λf (Macdonald 2000, from memory).
CANOPY_ATTENUATION_PER_LAMBDA_F = 9.6


def terrain_factor(roughness_m):
    """EN 1991-1-4 terrain factor k_r = 0.19 (z0 / z0,II)^0.07 [-].

    Notes
    -----
    Eq. (4.5) of EN 1991-1-4 with z0,II = 0.05 m.
    """
    return 0.19 * (np.asarray(roughness_m, dtype=float) / Z0_II) ** 0.07


def minimum_height_m(roughness_m):
    """z_min for a roughness length, interpolated in log z0 between EN 1991-1-4 Table 4.1 rows [m]."""
    z0s = np.log([v[0] for v in EN1991_TERRAIN.values()])
    zmins = [v[1] for v in EN1991_TERRAIN.values()]
    return np.interp(np.log(np.asarray(roughness_m, dtype=float)), z0s, zmins)


def roughness_factor(height_m, roughness_m, displacement_m=0.0, z_min_m=None):
    """EN 1991-1-4 roughness factor c_r(z) = k_r ln((z - d)/z0), held at c_r(z_min) below z_min [-].

    Parameters
    ----------
    height_m : height above ground [m]
    roughness_m : roughness length z0 [m]
    displacement_m : zero-plane displacement d [m]; EN 1991-1-4 itself has d = 0
    z_min_m : minimum height [m]; from Table 4.1 (interpolated) when None

    Notes
    -----
    Eq. (4.4) of EN 1991-1-4; the displacement is the urban extension of Grimmond & Oke (1999).
    """
    z0 = np.asarray(roughness_m, dtype=float)
    zmin = minimum_height_m(z0) if z_min_m is None else np.asarray(z_min_m, dtype=float)
    zeff = np.maximum(np.asarray(height_m, dtype=float) - displacement_m, zmin)
    return terrain_factor(z0) * np.log(zeff / z0)


def canopy_top_m(roughness_m, displacement_m=0.0):
    """Lowest height where the log law is used, z_t = d + z_min(z0) [m] (EN 1991-1-4 §4.3.2)."""
    return np.asarray(displacement_m, float) + minimum_height_m(roughness_m)


def canopy_attenuation(roughness_m, displacement_m=0.0, frontal_area_fraction=None):
    """Attenuation coefficient a of the in-canopy exponential profile [-].

    Parameters
    ----------
    roughness_m, displacement_m : z0 and d of the surroundings [m]
    frontal_area_fraction : λf of the surroundings [-], or None when unknown

    Notes
    -----
    a = 9.6 λf when λf is known (Macdonald 2000, from memory). Otherwise the exponential's
    slope is matched to the log law's at z_t = d + z_min, a = z_t / ((z_t − d) ln((z_t −
    d)/z0)) (derived: the gentlest fall that joins the log law without a kink).
    """
    z0 = np.asarray(roughness_m, float)
    d = np.asarray(displacement_m, float)
    zt = canopy_top_m(z0, d)
    matched = zt / ((zt - d) * np.log((zt - d) / z0))
    if frontal_area_fraction is None:
        return matched
    lf = np.asarray(frontal_area_fraction, float)
    return np.where(np.isfinite(lf), CANOPY_ATTENUATION_PER_LAMBDA_F * lf, matched)


def canopy_factor(height_m, roughness_m, displacement_m=0.0, attenuation=None):
    """Speed below the log law's lowest height relative to the speed there [-], ≤ 1.

    Parameters
    ----------
    height_m : height above ground [m]
    roughness_m, displacement_m : z0 and d [m]
    attenuation : a of :func:`canopy_attenuation` (the slope-matched value when None)

    Notes
    -----
    U(z) = U(z_t) exp[a (z/z_t − 1)] for z < z_t = d + z_min, 1 above: the exponential
    in-canopy profile of Macdonald (2000), matched to the log law where EN 1991-1-4 stops
    using it, so the mean speed keeps falling towards the ground instead of being held at its
    z_min value (a rule for design loads).
    """
    z = np.asarray(height_m, float)
    zt = canopy_top_m(roughness_m, displacement_m)
    a = canopy_attenuation(roughness_m, displacement_m) if attenuation is None else attenuation
    return np.where(z < zt, np.exp(np.asarray(a, float) * (np.minimum(z / zt, 1.0) - 1.0)), 1.0)


def mean_speed_factor(height_m, roughness_m, displacement_m=0.0, attenuation=None):
    """Mean-speed profile for energy: c_r(z) above z_t, falling exponentially below [-].

    Notes
    -----
    :func:`roughness_factor` (held at z_min, EN 1991-1-4) times :func:`canopy_factor`; the
    held c_r alone is kept for loads.
    """
    return (roughness_factor(height_m, roughness_m, displacement_m)
            * canopy_factor(height_m, roughness_m, displacement_m, attenuation))


def speed_log_law(height_m, speed_ref_ms, height_ref_m, roughness_m, displacement_m=0.0):
    """Log-law speed at ``height_m`` from a speed at ``height_ref_m`` in the same terrain [m/s].

    Notes
    -----
    U(z2) = U(z1) ln((z2 - d)/z0) / ln((z1 - d)/z0), from U(z) = (u*/κ) ln((z - d)/z0).
    Heights at or below d + z0 give 0 (no negative speeds).
    """
    z0 = np.asarray(roughness_m, dtype=float)
    num = np.log(np.maximum(np.asarray(height_m, dtype=float) - displacement_m, z0) / z0)
    den = np.log((np.asarray(height_ref_m, dtype=float) - displacement_m) / z0)
    return np.asarray(speed_ref_ms, dtype=float) * num / den


def speed_power_law(height_m, speed_ref_ms, height_ref_m, exponent):
    """Power-law speed U2 = U1 (z2/z1)^α [m/s] (ASHRAE Fundamentals, Airflow Around Buildings)."""
    return np.asarray(speed_ref_ms, dtype=float) * (
        np.asarray(height_m, dtype=float) / np.asarray(height_ref_m, dtype=float)) ** exponent


def transfer_speed_ratio(height_to_m, roughness_to_m, height_from_m, roughness_from_m,
                         displacement_to_m=0.0, displacement_from_m=0.0, canopy=True,
                         attenuation_to=None, attenuation_from=None):
    """Ratio of mean speeds between two terrains and heights, by the EN 1991-1-4 terrain factor.

    Both speeds are referred to the same basic wind (category II, 10 m):
    v(z) = c_r(z) v_b, so v_to / v_from = c_r,to(z_to) / c_r,from(z_from). With ``canopy``
    (for energy) each side follows :func:`mean_speed_factor` below its z_t, with the
    attenuations given (slope-matched when None); without, c_r is held at z_min (for loads).
    """
    if not canopy:
        return (roughness_factor(height_to_m, roughness_to_m, displacement_to_m)
                / roughness_factor(height_from_m, roughness_from_m, displacement_from_m))
    return (mean_speed_factor(height_to_m, roughness_to_m, displacement_to_m, attenuation_to)
            / mean_speed_factor(height_from_m, roughness_from_m, displacement_from_m,
                                attenuation_from))


def turbulence_intensity_terrain(height_m, roughness_m, displacement_m=0.0, canopy=True,
                                 attenuation=None):
    """Turbulence intensity of the undisturbed flow I_v = k_I / (c_o ln((z - d)/z0)) [-].

    EN 1991-1-4 eq. (4.7) with k_I = 1 and orography factor c_o = 1, down to z_t = d + z_min.
    Below it, with ``canopy``, σ_u keeps its value at z_t while the mean speed follows the
    in-canopy profile (:func:`canopy_factor`), so I = I_v(z_t) / canopy factor; without,
    held at its z_min value as in EN 1991-1-4.
    """
    z0 = np.asarray(roughness_m, dtype=float)
    zeff = np.maximum(np.asarray(height_m, dtype=float) - displacement_m, minimum_height_m(z0))
    held = 1.0 / np.log(zeff / z0)
    if not canopy:
        return held
    return held / canopy_factor(height_m, z0, displacement_m, attenuation)
