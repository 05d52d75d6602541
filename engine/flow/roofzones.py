"""Roof flow zones of a block from the ASHRAE scaling length, and clearances of rooftop rotors.

The ASHRAE Handbook—Fundamentals, chapter "Airflow Around Buildings" (after Wilson 1979),
scales the separated flow over a sharp-edged block with one length

    R = B_s^(2/3) B_L^(1/3),

B_s and B_L the smaller and larger of the upwind face's height and width, B_L capped at 8 B_s.
Coefficients below are from memory of that chapter; they are kept once, here.

Heights of zone boundaries are measured from the roof surface (from the top of a parapet when
there is one: a parapet raises the edge where the flow separates, a conservative common-practice
reading); X is the distance from the windward roof edge along the wind.

References
----------
ASHRAE (2017), ASHRAE Handbook—Fundamentals, ch. 24 "Airflow Around Buildings".
Wilson, D. J. (1979), "Flow patterns over flat roofed buildings and application to exhaust
stack design", ASHRAE Transactions 85(2):284-295.
"""
from __future__ import annotations

import numpy as np

#: Roof recirculation: maximum height H_c = 0.22 R at X_c = 0.5 R, length L_c = 0.9 R.
RECIRC_HEIGHT_R = 0.22
RECIRC_PEAK_X_R = 0.5
RECIRC_LENGTH_R = 0.9
#: Wake recirculation behind the block, L_r = 1.0 R.
WAKE_RECIRC_LENGTH_R = 1.0
#: High-turbulence boundary Z2/R = 0.27 − 0.1 X/R.
Z2_INTERCEPT_R = 0.27
Z2_SLOPE = 0.1
#: Roof-wake boundary Z3/R = 0.28 (X/R)^(1/3).
Z3_COEFF_R = 0.28
#: Fraction of the wind energy that defines the main energy sectors (see main_energy_sectors).
MAIN_ENERGY_SHARE = 0.8


def scaling_length_m(face_height_m, face_width_m):
    """ASHRAE scaling length R = B_s^(2/3) B_L^(1/3) of an upwind face [m].

    Parameters
    ----------
    face_height_m : height of the upwind face [m]
    face_width_m : width of the upwind face across the wind [m]

    Notes
    -----
    B_s = min(H, W), B_L = min(max(H, W), 8 B_s): beyond 8 B_s a wider face behaves as
    two-dimensional and no longer grows the zones.

    References
    ----------
    ASHRAE Handbook—Fundamentals, "Airflow Around Buildings" (from memory).
    """
    h = np.asarray(face_height_m, dtype=float)
    w = np.asarray(face_width_m, dtype=float)
    bs = np.minimum(h, w)
    bl = np.minimum(np.maximum(h, w), 8.0 * bs)
    return np.cbrt(bs * bs * bl)  # B_s^(2/3) B_L^(1/3), one root


def roof_recirculation_zone(scaling_length_m):
    """Roof recirculation zone: (height H_c, position of that height X_c, length L_c) [m].

    Notes
    -----
    H_c = 0.22 R, X_c = 0.5 R, L_c = 0.9 R (ASHRAE Handbook—Fundamentals, from memory).
    """
    r = np.asarray(scaling_length_m, dtype=float)
    return RECIRC_HEIGHT_R * r, RECIRC_PEAK_X_R * r, RECIRC_LENGTH_R * r


def recirculation_boundary_m(x_m, scaling_length_m, roof_length_m=np.inf):
    """Height of the roof recirculation zone's top at X from the windward edge [m].

    Parameters
    ----------
    x_m : distance from the windward roof edge along the wind [m]
    scaling_length_m : R [m]
    roof_length_m : along-wind roof length [m]; when shorter than L_c the flow does not
        reattach on the roof and the zone holds its height to the leeward edge

    Notes
    -----
    The handbook gives the zone's height, peak position and length only; its outline here is
    two parabolic arcs through (0, 0), (X_c, H_c) and (L_c, 0) (an assumption that keeps the
    handbook's three numbers). When L_c exceeds the roof, the downstream arc is not used:
    past X_c the zone stays at H_c (the bubble spans the roof and closes in the wake).
    """
    x = np.asarray(x_m, dtype=float)
    hc, xc, lc = roof_recirculation_zone(scaling_length_m)
    rise = hc * (1.0 - ((x - xc) / xc) ** 2)
    fall = hc * (1.0 - ((x - xc) / (lc - xc)) ** 2)
    reattaches = lc <= np.asarray(roof_length_m, dtype=float)
    down = np.where(reattaches, np.where(x < lc, fall, 0.0), hc)
    z = np.where(x <= xc, rise, down)
    return np.where(x >= 0, np.maximum(z, 0.0), 0.0)


def turbulence_boundary_m(x_m, scaling_length_m):
    """High-turbulence zone boundary Z2 = R (0.27 − 0.1 X/R), not below 0 [m].

    Notes
    -----
    ASHRAE Handbook—Fundamentals, "Airflow Around Buildings" (from memory). The boundary
    passes through (0.5 R, 0.22 R), the top of the recirculation zone, and meets the roof at
    X = 2.7 R.
    """
    r = np.asarray(scaling_length_m, dtype=float)
    x = np.maximum(np.asarray(x_m, dtype=float), 0.0)
    return np.maximum(r * (Z2_INTERCEPT_R - Z2_SLOPE * x / r), 0.0)


def roof_wake_boundary_m(x_m, scaling_length_m):
    """Roof-wake boundary Z3 = 0.28 R (X/R)^(1/3) [m].

    Notes
    -----
    ASHRAE Handbook—Fundamentals, "Airflow Around Buildings" (from memory); Z3 passes through
    (0.5 R, 0.22 R) like Z2. Below Z3 the flow carries the roof's disturbed air.
    """
    r = np.asarray(scaling_length_m, dtype=float)
    x = np.maximum(np.asarray(x_m, dtype=float), 0.0)
    return Z3_COEFF_R * r * np.cbrt(x / r)


def turbulence_zone_top_m(x_m, scaling_length_m, roof_length_m=np.inf):
    """Top of the region a rotor must clear: max(recirculation top, Z2) [m].

    The high-turbulence region includes the recirculation bubble below it.
    """
    return np.maximum(recirculation_boundary_m(x_m, scaling_length_m, roof_length_m),
                      turbulence_boundary_m(x_m, scaling_length_m))


def zone_clearances_m(height_above_roof_m, x_m, scaling_length_m, roof_length_m=np.inf,
                      recirculation_top_m=None, zone_top_m=None):
    """Clearance of a point above each zone boundary (negative inside the zone) [m].

    Parameters
    ----------
    height_above_roof_m : height above the roof surface (above a parapet's top) [m]
    x_m : distance from the windward edge [m]
    scaling_length_m : R [m]
    roof_length_m : along-wind roof length [m]
    recirculation_top_m, zone_top_m : :func:`recirculation_boundary_m` and
        :func:`turbulence_zone_top_m` of the same x, R and roof length, when already known [m]

    Returns
    -------
    dict with ``recirculation``, ``turbulence`` (max of Z1 and Z2) and ``wake`` clearances [m]
    """
    z = np.asarray(height_above_roof_m, dtype=float)
    if recirculation_top_m is None:
        recirculation_top_m = recirculation_boundary_m(x_m, scaling_length_m, roof_length_m)
    if zone_top_m is None:
        zone_top_m = np.maximum(recirculation_top_m,
                                turbulence_boundary_m(x_m, scaling_length_m))
    return {
        "recirculation": z - recirculation_top_m,
        "turbulence": z - zone_top_m,
        "wake": z - roof_wake_boundary_m(x_m, scaling_length_m),
    }


def sector_energy_share(frequency, weibull_k, weibull_c_ms):
    """Share of the wind's energy flux carried by each sector [-], rows summing to 1.

    Notes
    -----
    e_s = f_s c_s³ Γ(1 + 3/k_s) (the sector's mean cube of speed, Weibull), normalised.
    """
    from engine.climate.weibull import gamma_of_shapes

    c = np.asarray(weibull_c_ms, float)
    e = np.asarray(frequency, float) * (c * c * c) * gamma_of_shapes(weibull_k, 3.0)
    tot = e.sum(axis=-1, keepdims=True)
    return np.divide(e, tot, out=np.zeros_like(e), where=tot > 0)


def main_energy_sectors(energy_share, share=MAIN_ENERGY_SHARE):
    """The main energy sectors: fewest sectors, largest first, that carry ``share`` of the energy.

    Parameters
    ----------
    energy_share : (..., S) energy share per sector, summing to 1 along the last axis
    share : fraction of the energy the set must reach (0.8 by default)

    Returns
    -------
    (..., S) bool

    Notes
    -----
    Sort sectors by energy share, descending; keep each sector whose preceding cumulative share
    is still below ``share``. The sector that crosses the threshold is included, so the set
    always holds at least the top sector.
    """
    e = np.asarray(energy_share, dtype=float)
    order = np.argsort(-e, axis=-1, kind="stable")
    sorted_e = np.take_along_axis(e, order, axis=-1)
    before = np.cumsum(sorted_e, axis=-1) - sorted_e
    keep_sorted = before < share - 1e-12
    keep = np.zeros_like(keep_sorted)
    np.put_along_axis(keep, order, keep_sorted, axis=-1)
    return keep


def min_clear_mast_m(zone_top_m, main_sectors, rotor_radius_m=0.0):
    """Lowest mast height above the roof that keeps the rotor clear in the main sectors [m].

    Parameters
    ----------
    zone_top_m : (P, S) height of the zone to clear above the roof (above a parapet) [m],
        parapet height already added where the mast stands on the roof surface
    main_sectors : (P, S) bool, see :func:`main_energy_sectors`
    rotor_radius_m : half the rotor's vertical extent [m]; 0 gives the hub's own clearance

    Notes
    -----
    h_min = max over main sectors of (zone top) + rotor radius.
    """
    top = np.where(main_sectors, np.asarray(zone_top_m, float), -np.inf).max(axis=-1)
    return np.maximum(top, 0.0) + rotor_radius_m
