"""Vertical wind profiles: log law with displacement, EN 1991-1-4 terrain factor, power law.

References
----------
EN 1991-1-4:2005, Eurocode 1: Actions on structures - Part 1-4: Wind actions, §4.3.2 and
Table 4.1 (national annexes may differ).
Grimmond, C. S. B. and Oke, T. R. (1999), "Aerodynamic properties of urban areas derived from
analysis of surface form", J. Appl. Meteorol. 38:1262.
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
                         displacement_to_m=0.0, displacement_from_m=0.0):
    """Ratio of mean speeds between two terrains and heights, by the EN 1991-1-4 terrain factor.

    Both speeds are referred to the same basic wind (category II, 10 m):
    v(z) = c_r(z) v_b, so v_to / v_from = c_r,to(z_to) / c_r,from(z_from).
    """
    return (roughness_factor(height_to_m, roughness_to_m, displacement_to_m)
            / roughness_factor(height_from_m, roughness_from_m, displacement_from_m))


def turbulence_intensity_terrain(height_m, roughness_m, displacement_m=0.0):
    """Turbulence intensity of the undisturbed flow I_v = k_I / (c_o ln((z - d)/z0)) [-].

    EN 1991-1-4 eq. (4.7) with k_I = 1 and orography factor c_o = 1; held at z_min below it.
    """
    z0 = np.asarray(roughness_m, dtype=float)
    zeff = np.maximum(np.asarray(height_m, dtype=float) - displacement_m, minimum_height_m(z0))
    return 1.0 / np.log(zeff / z0)
