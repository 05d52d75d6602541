"""Shelter behind upwind buildings: wake speed deficit and added turbulence.

A common-practice engineering wake, documented here because no single published model covers
three-dimensional blocks of any proportion at any height:

* reach: an obstacle disturbs the flow to about 2 H high and 20 H downstream (the "2H/20H"
  rule of thumb of small-wind siting guides; common practice);
* decay: far-wake theory for a three-dimensional surface obstacle gives a mean-speed deficit
  falling as (x/H)^(−3/2) (Hunt 1971; Counihan, Hunt and Jackson 1974 give x^(−1) for the
  two-dimensional case; from memory); the amplitude is set so the deficit at obstacle height
  is 10 % at x = 10 H (common practice reading of the 2H/20H rule);
* cavity: the wake recirculation behind a block reaches L_r = 1.0 R downstream of its leeward
  face (ASHRAE Handbook—Fundamentals, "Airflow Around Buildings", from memory) below roof
  height; a rotor there is in recirculating flow.

Model
-----
For an upwind block of height H, crosswind width W and scaling length R, and a point at height
z, at distance x downstream of the block's leeward extent and lateral offset y from its
centreline:

    δ = min(δ_max, a (H/x)^(3/2)) · f_z · f_y · f_x
    f_z = 1 for z ≤ H, ½ [1 + cos(π (z − H)/H)] for H < z < 2H, 0 above 2H
    f_y = exp(−(max(y − b, 0) / (H/2))²), wake half-width b = W/2 + 0.1 x
    f_x = 1 for x ≤ 15 H, ½ [1 + cos(π (x − 15H)/(5H))] to 20 H, 0 beyond

with a = 0.1 × 10^(3/2) and δ_max = 0.8. Several upwind blocks combine by root-sum-square,
δ = min(δ_max, sqrt(Σ δ_i²)) (the superposition rule of wind-farm wake models, Katic, Højstrup
and Jensen 1986; a plain product would double-count a block standing in another's wake).
Added turbulence ΔI = β δ (β = 0.6), combined with the ambient intensity in quadrature: the
wake's mean speed falls while its fluctuations grow, so the intensity is not scaled up by
1/speed. Every term grows with H, so a taller upwind block never raises a sheltered speed.

References
----------
Hunt, J. C. R. (1971), "Further aspects of the theory of wakes behind buildings and comparison
of theory with experiment", Central Electricity Research Laboratories report RD/L/R 1665.
Katic, I., Højstrup, J. and Jensen, N. O. (1986), "A simple model for cluster efficiency",
Proc. European Wind Energy Association Conference, Rome, 407-410.
Counihan, J., Hunt, J. C. R. and Jackson, P. S. (1974), "Wakes behind two-dimensional surface
obstacles in turbulent boundary layers", J. Fluid Mech. 64(3):529-563.
ASHRAE Handbook—Fundamentals, "Airflow Around Buildings".
"""
from __future__ import annotations

import numpy as np

from engine.flow import buildings as geom
from engine.flow import roofzones

#: Wake coefficients (common practice, see module docstring).
WAKE = {
    "deficit_at_10h": 0.10,
    "decay_exponent": 1.5,
    "max_deficit": 0.8,
    "reach_h": 20.0,
    "taper_start_h": 15.0,
    "spread_rate": 0.1,
    "added_ti_per_deficit": 0.6,
}


def wake_deficit(x_m, z_m, lateral_m, obstacle_height_m, obstacle_width_m, coeffs=None):
    """Fractional mean-speed deficit in the wake of a block [-], 0 ≤ δ ≤ δ_max.

    Parameters
    ----------
    x_m : distance downstream of the block's leeward extent [m]; ≤ 0 gives no deficit
    z_m : height above ground [m]
    lateral_m : offset from the wake centreline [m]
    obstacle_height_m, obstacle_width_m : the block's height and crosswind width [m]
    coeffs : overrides of :data:`WAKE`

    Notes
    -----
    See the module docstring for δ = min(δ_max, a (H/x)^(3/2)) f_z f_y f_x.
    """
    c = {**WAKE, **(coeffs or {})}
    h = np.asarray(obstacle_height_m, float)
    x = np.asarray(x_m, float)
    z = np.asarray(z_m, float)
    a = c["deficit_at_10h"] * 10.0 ** c["decay_exponent"]
    with np.errstate(divide="ignore"):
        core = np.minimum(c["max_deficit"], a * (h / np.maximum(x, 1e-9)) ** c["decay_exponent"])
    zr = np.clip((z - h) / h, 0.0, 1.0)
    fz = 0.5 * (1.0 + np.cos(np.pi * zr))
    b = 0.5 * np.asarray(obstacle_width_m, float) + c["spread_rate"] * np.maximum(x, 0.0)
    fy = np.exp(-(np.maximum(np.asarray(lateral_m, float) - b, 0.0) / (0.5 * h)) ** 2)
    t0, reach = c["taper_start_h"] * h, c["reach_h"] * h
    xr = np.clip((x - t0) / (reach - t0), 0.0, 1.0)
    fx = 0.5 * (1.0 + np.cos(np.pi * xr))
    return np.where(x > 0, core * fz * fy * fx, 0.0)


def shelter(px_m, py_m, hub_height_m, bldg: geom.BuildingArrays, direction_deg,
            exclude=None, coeffs=None):
    """Shelter of every point by every upwind block, per sector.

    Parameters
    ----------
    px_m, py_m : point positions [m], (P,)
    hub_height_m : hub heights above ground [m], (P,)
    bldg : the site's blocks
    direction_deg : sector centres [deg], (S,)
    exclude : (P, B) bool, blocks that do not shelter a point (its own roof, its passage's
        walls: their effect is in the roof and gap models)

    Returns
    -------
    dict with
    ``speed_factor`` (P, S) 1 − min(δ_max, sqrt(Σ δ²)) over blocks [-];
    ``added_ti`` (P, S) β times the combined deficit [-];
    ``in_wake_recirculation`` (P, S) bool, inside some block's wake cavity
    (0 < x ≤ L_r = 1.0 R, lateral within half the crosswind width, below its height);
    ``sheltering_building`` (P, S) index of the block with the largest deficit (−1 if none).
    """
    c = {**WAKE, **(coeffs or {})}
    P, B, S = len(np.atleast_1d(px_m)), bldg.n, len(np.atleast_1d(direction_deg))
    if B == 0:
        return {"speed_factor": np.ones((P, S)), "added_ti": np.zeros((P, S)),
                "in_wake_recirculation": np.zeros((P, S), bool),
                "sheltering_building": np.full((P, S), -1)}
    up, lat = geom.upwind_offsets(px_m, py_m, bldg.x_m, bldg.y_m, direction_deg)  # (P, B, S)
    cross, along, _, _, _ = geom.sector_geometry(bldg.length_m, bldg.width_m,
                                                 bldg.orientation_deg, direction_deg)  # (B, S)
    x = up - 0.5 * along[None]
    h = bldg.height_m[None, :, None]
    z = np.asarray(hub_height_m, float)[:, None, None]
    delta = wake_deficit(x, z, lat, h, cross[None], c)
    if exclude is not None:
        delta = np.where(np.asarray(exclude, bool)[:, :, None], 0.0, delta)
    r = roofzones.scaling_length_m(bldg.height_m[:, None], cross)[None]
    cavity = (x > 0) & (x <= roofzones.WAKE_RECIRC_LENGTH_R * r) & (lat <= 0.5 * cross[None]) & (
        z < h)
    if exclude is not None:
        cavity &= ~np.asarray(exclude, bool)[:, :, None]
    combined = np.minimum(c["max_deficit"], np.sqrt(np.sum(delta ** 2, axis=1)))
    factor = 1.0 - combined
    added = c["added_ti_per_deficit"] * combined
    strongest = np.where(delta.max(axis=1) > 0, np.argmax(delta, axis=1), -1)
    return {"speed_factor": factor, "added_ti": added,
            "in_wake_recirculation": cavity.any(axis=1), "sheltering_building": strongest}


def shelter_within_fetch(px_m, py_m, hub_height_m, bldg: geom.BuildingArrays, direction_deg,
                         fetch_m: float, exclude=None, coeffs=None):
    """:func:`shelter` by the blocks whose centres lie within ``fetch_m`` of each point only.

    Parameters
    ----------
    px_m, py_m, hub_height_m, bldg, direction_deg, exclude, coeffs : as :func:`shelter`
    fetch_m : radius around each point within which a block's centre must lie [m] (the
        per-sector surroundings' fetch, so the same neighbours give the terrain and the wakes)

    Notes
    -----
    The wake reaches 20 H downstream (module docstring); blocks further than the fetch are
    left out, so the shelter of a tall, distant block is missed (it is already part of the
    terrain of the sectors it lies in only when within the fetch).
    """
    px = np.atleast_1d(np.asarray(px_m, float))
    py = np.atleast_1d(np.asarray(py_m, float))
    far = np.hypot(bldg.x_m[None, :] - px[:, None], bldg.y_m[None, :] - py[:, None]) > fetch_m
    if exclude is not None:
        far |= np.asarray(exclude, bool)
    return shelter(px, py, hub_height_m, bldg, direction_deg, far, coeffs)


def apply_shelter(speed_factor, turbulence_intensity, sh: dict):
    """Speed factor and turbulence intensity with a :func:`shelter` result applied, (P, S).

    Notes
    -----
    S' = S · (1 − δ); TI' = sqrt(TI² + ΔI²) (the wake's added turbulence in quadrature, see
    the module docstring). The detailed chain (:func:`engine.flow.effective.effective_climate`)
    and the chain over arrays (:func:`engine.chain.arrays.roof_climate`) both call it.
    """
    return (np.asarray(speed_factor, float) * sh["speed_factor"],
            np.hypot(turbulence_intensity, sh["added_ti"]))
