"""Roof zones and roof flow at roof positions as arrays over positions and sectors.

The roof branch of the effective climate (:mod:`engine.flow.effective`) and the portfolio
screening (:mod:`engine.chain.arrays`) call the same three functions: :func:`roof_geometry`
(the block seen from each sector), :func:`roof_flow` (speed-up, turbulence, skew over the roof)
and :func:`roof_effects` (both, with the zones the rotor meets).
"""
from __future__ import annotations

import numpy as np

from engine.flow import buildings
from engine.flow import roofflow
from engine.flow import roofzones


def roof_effects(sector_deg, height_m, length_m, width_m, orientation_deg, parapet_height_m,
                 pitched, u_m, v_m, mast_height_m, ambient_ti, main_sector,
                 clearance_only: bool = False, geometry=None) -> dict:
    """Roof zones and roof flow at roof positions, vectorised over positions: (P, S) arrays.

    Parameters
    ----------
    sector_deg : (S,) sector centres [deg from north, wind from]
    height_m, length_m, width_m, orientation_deg, parapet_height_m : (P,) the block under each
        position: eaves height [m], plan size [m], bearing of the length side [deg], parapet [m]
    pitched : (P,) bool, pitched roof (ridge along the length)
    u_m, v_m : (P,) position in the block's own axes, from its centre [m]
    mast_height_m : (P,) mast above the roof surface [m]
    ambient_ti : (P, S) turbulence intensity of the undisturbed flow at the hub [-]
    main_sector : (P, S) bool, the main energy sectors
        (:func:`engine.flow.roofzones.main_energy_sectors`)
    clearance_only : return only the zone geometry and ``min_clear_mast_m`` (no roof flow)
    geometry : :func:`roof_geometry` of the same positions when already found (it does not
        depend on the mast, so a mast search can find it once)

    Returns
    -------
    dict: ``roof_scaling_length_m`` R, ``zone_top_m`` (high-turbulence zone's top above the roof
    surface, parapet included) (P, S) [m], ``min_clear_mast_m`` (P,) [m]; unless
    ``clearance_only``: ``speed_factor``, ``turbulence_intensity``, ``inflow_skew_deg`` (P, S)
    and ``clearance`` (dict of (P, S) clearances to the recirculation, turbulence and wake
    zones [m]).

    Notes
    -----
    R = B_s^(2/3) B_L^(1/3) of the windward face (:func:`engine.flow.roofzones.scaling_length_m`,
    ASHRAE), the roof fetch X from the windward edge to the position
    (:func:`engine.flow.buildings.roof_fetch_m`), heights above the roof surface z = mast − parapet;
    the speed-up, turbulence and skew of :mod:`engine.flow.roofflow` with the direction weights of
    the angle γ between the wind and the ridge's normal (0..90°). Used by
    :func:`effective_climate` and by the portfolio screening, so both give the same numbers.
    """
    geo = geometry if geometry is not None else roof_geometry(
        sector_deg, height_m, length_m, width_m, orientation_deg, parapet_height_m, u_m, v_m)
    out = {"roof_scaling_length_m": geo["roof_scaling_length_m"],
           "zone_top_m": geo["zone_top_m"],
           "min_clear_mast_m": roofzones.min_clear_mast_m(geo["zone_top_m"], main_sector)}
    if clearance_only:
        return out
    out.update(roof_flow(geo, sector_deg, orientation_deg, parapet_height_m, pitched,
                         mast_height_m, ambient_ti))
    return out


def roof_geometry(sector_deg, height_m, length_m, width_m, orientation_deg, parapet_height_m,
                  u_m, v_m) -> dict:
    """The mast-independent part of :func:`roof_effects`: scaling length, fetch, zone top.

    Parameters
    ----------
    as :func:`roof_effects`

    Returns
    -------
    dict of (P, S) arrays [m]: ``roof_scaling_length_m`` R, ``fetch_m`` X (windward edge to
    the position), ``roof_length_m`` X + X_d (along the wind across the roof), ``zone_top_m``
    (the high-turbulence zone's top above the roof surface, parapet included), and above the
    parapet's top ``recirculation_top_m`` and ``zone_top_above_parapet_m``

    Notes
    -----
    R = B_s^(2/3) B_L^(1/3) of the windward face (ASHRAE), with the block's eaves height plus
    parapet as its height; the zone top of :func:`engine.flow.roofzones.turbulence_zone_top_m`.
    """
    sector_deg = np.asarray(sector_deg, float)
    para = np.asarray(parapet_height_m, float)
    phi = np.asarray(orientation_deg, float)
    L = np.asarray(length_m, float)
    W = np.asarray(width_m, float)
    cross = buildings.crosswind_width_m(L, W, phi, sector_deg)
    R = roofzones.scaling_length_m((np.asarray(height_m, float) + para)[:, None], cross)
    X, Xd = buildings.roof_fetch_m(u_m, v_m, L, W, phi, sector_deg)
    roof_len = X + Xd
    z1 = roofzones.recirculation_boundary_m(X, R, roof_len)
    top = np.maximum(z1, roofzones.turbulence_boundary_m(X, R))  # turbulence_zone_top_m
    return {"roof_scaling_length_m": R, "fetch_m": X, "roof_length_m": roof_len,
            "zone_top_m": top + para[:, None], "recirculation_top_m": z1,
            "zone_top_above_parapet_m": top}


def roof_flow(geometry: dict, sector_deg, orientation_deg, parapet_height_m, pitched,
              mast_height_m, ambient_ti) -> dict:
    """The mast-dependent part of :func:`roof_effects`: speed-up, turbulence, skew, clearances.

    Parameters
    ----------
    geometry : :func:`roof_geometry` of the same positions
    others : as :func:`roof_effects`

    Returns
    -------
    dict: ``speed_factor``, ``turbulence_intensity``, ``inflow_skew_deg`` (P, S) and
    ``clearance`` (dict of (P, S) clearances to the recirculation, turbulence and wake zones [m])
    """
    sector_deg = np.asarray(sector_deg, float)
    phi = np.asarray(orientation_deg, float)
    X, R, roof_len = geometry["fetch_m"], geometry["roof_scaling_length_m"], \
        geometry["roof_length_m"]
    z = (np.asarray(mast_height_m, float) - np.asarray(parapet_height_m, float))[:, None]
    # Angle between the wind and the ridge's normal (ridge along the length), 0..90 deg.
    gamma = np.abs(np.mod(sector_deg[None, :] - phi[:, None], 180.0) - 90.0)
    ds, dt = roofflow.direction_weights(np.asarray(pitched, bool)[:, None], gamma)
    z1, top = geometry["recirculation_top_m"], geometry["zone_top_above_parapet_m"]
    s_roof = roofflow.roof_speed_factor(z, X, R, roof_len, ds, recirculation_top_m=z1)
    return {
        "speed_factor": s_roof,
        "turbulence_intensity": roofflow.roof_turbulence_intensity(
            np.asarray(ambient_ti, float), s_roof, z, X, R, roof_len, dt, zone_top_m=top),
        "inflow_skew_deg": roofflow.roof_inflow_skew_deg(z, X, R, roof_len,
                                                         recirculation_top_m=z1),
        "clearance": roofzones.zone_clearances_m(z, X, R, roof_len, recirculation_top_m=z1,
                                                 zone_top_m=top)}
