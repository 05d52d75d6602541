"""A passage between two buildings as a concentrator with spillage.

The stream approaching a passage meets a capture area A1 (the frontal area that feeds the
passage) and a throat A2 (gap width × height). Three statements bound what reaches the throat:

1. **Continuity** A1 V1 = A2 V2: the speed-up a closed duct would reach, V2/V1 = A1/A2. It is
   an upper bound that real passages never approach, because the air is free to go round.
2. **Momentum theorem** on the control volume from capture to throat, with that continuity
   flow: the net force on the air is F = ρ A1 V1² (A1/A2 − 1) (momentum flux out minus in);
   with the exit at ambient pressure, the force the air puts on the walls (the contraction)
   is ½ ρ A1 V1² (A1/A2 − 1)², the momentum flux needed to make the walls do the contraction.
   The wall force feeds the mount-load caution: walls and mounts in a passage carry a channelled
   wind load that a structural engineer must check.
3. **Energy balance** (Bernoulli along a streamline into the throat, with losses): the faces can
   only drive the air through with the pressure difference they hold. With C_t the total-pressure
   coefficient at the entrance and C_p,e the static-pressure coefficient in the passage,

       V2/V1 = sqrt[(C_t − C_p,e) / (1 + K)],

   and the realised ratio is the smaller of this and A1/A2. The rest of the capture flow spills
   over and around the buildings: spilled fraction 1 − A2 V2 / (A1 V1).

This pressure-limited throat speed is a **derived model, not a published one**: it applies
textbook Bernoulli and continuity to the passage with published pressure coefficients. Its
terms here:

* C_t = f + (1 − f) C_p,w with f = A2/A1: the part of the capture area in line with the throat
  arrives with the free-stream total head (C = 1); the rest is collected off the windward faces,
  where the flow has stagnated to C_p,w = +0.8 (EN 1991-1-4 Table 7.1, zone D, from memory).
* C_p,e: the passage walls are the two buildings' side walls, so the passage static pressure is
  the side-wall suction of EN 1991-1-4 Table 7.1 (zones A −1.2 to e/5, B −0.8 to e, C −0.5
  beyond, e = min(b, 2h); from memory) averaged over the passage length.
* K = K_in + λ L / D_h + K_rotor: a sharp-cornered entry (K_in = 0.2, common practice for
  rounded-to-sharp inlets), wall friction of a rough channel (λ = 0.04, common practice) over
  the passage length L with hydraulic diameter D_h, and optionally the rotor's loading.

**Relief.** A short passage keeps the strong suction of the side walls' leading zone and little
friction; a long one averages down to zone C and adds friction; a passage open at the top has
no roof wall (D_h = 4 w h / (w + 2h) instead of 2 w h / (w + h)). So a short or open-topped
passage spills less than a long, closed channel.

**Range.** For common layouts (two blocks of similar height, gaps of half to twice the height,
passages up to the height long) the realised speed-up lands at about 1.1 to 1.3 (1.05 to 1.3
over the grid in the tests) — the amplifications that wind-tunnel and CFD studies of passages
between buildings report (around 1.1 to 1.4; Blocken et al. 2008, from memory), far below the
area ratio. No layout exceeds sqrt((1 + 1.2)/(1 + 0.2)) = 1.35 (full total head, zone-A
suction, entry loss only); long, narrow passages fall below 1 through friction. The realised speed-up falls slowly as the gap narrows past the point
where spillage governs: the direct share f and the hydraulic diameter shrink.

References
----------
Blocken, B., Moonen, P., Stathopoulos, T. and Carmeliet, J. (2008), "Numerical study on the
existence of the Venturi effect in passages between perpendicular buildings", J. Eng. Mech.
134(12):1021-1028.
Blocken, B., Stathopoulos, T. and Carmeliet, J. (2008), "Wind environmental conditions in
passages between two long narrow perpendicular buildings", J. Aerosp. Eng. 21(4):280-287.
EN 1991-1-4:2005, Table 7.1 (external pressure coefficients of vertical walls).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from engine.flow import buildings as geom

#: Coefficients of the pressure-limited throat model (sources in the module docstring).
GAP = {
    "cp_windward": 0.8,
    "cp_side_a": -1.2,
    "cp_side_b": -0.8,
    "cp_side_c": -0.5,
    "entry_loss": 0.2,
    "friction_factor": 0.04,
}


def continuity_speed_ratio(capture_area_m2, throat_area_m2):
    """Closed-duct bound V2/V1 = A1/A2 [-] (continuity, A1 V1 = A2 V2)."""
    return np.asarray(capture_area_m2, float) / np.asarray(throat_area_m2, float)


def momentum_net_force_n(air_density_kgm3, capture_area_m2, inlet_speed_ms, area_ratio):
    """Net force on the air between capture and throat, F = ρ A1 V1² (A1/A2 − 1) [N].

    Parameters
    ----------
    air_density_kgm3 : ρ [kg/m³]
    capture_area_m2 : A1 [m²]
    inlet_speed_ms : V1 [m/s]
    area_ratio : A1/A2 [-]

    Notes
    -----
    Momentum theorem with continuity: F = ρ Q (V2 − V1), Q = A1 V1, V2 = V1 A1/A2.
    """
    return (np.asarray(air_density_kgm3, float) * np.asarray(capture_area_m2, float)
            * np.asarray(inlet_speed_ms, float) ** 2 * (np.asarray(area_ratio, float) - 1.0))


def wall_force_n(air_density_kgm3, capture_area_m2, inlet_speed_ms, area_ratio):
    """Force of the air on the contracting walls, exit at ambient, ½ ρ A1 V1² (A1/A2 − 1)² [N].

    Notes
    -----
    Momentum balance with the inlet pressure from Bernoulli, p1 − p∞ = ½ ρ (V2² − V1²), and the
    exit at ambient: F_wall = (p1 − p∞) A1 − ρ Q (V2 − V1) = ½ ρ A1 V1² (A1/A2 − 1)².
    """
    return (0.5 * np.asarray(air_density_kgm3, float) * np.asarray(capture_area_m2, float)
            * np.asarray(inlet_speed_ms, float) ** 2 * (np.asarray(area_ratio, float) - 1.0) ** 2)


def side_wall_cp(passage_length_m, e_m, coeffs=None):
    """Side-wall pressure coefficient averaged over a passage length [-] (EN 1991-1-4 Table 7.1).

    Notes
    -----
    Zones A (0..e/5), B (e/5..e), C (beyond e); a passage of zero length takes zone A.
    """
    c = {**GAP, **(coeffs or {})}
    L = np.asarray(passage_length_m, float)
    e = np.asarray(e_m, float)
    la = np.minimum(L, e / 5.0)
    lb = np.clip(L - e / 5.0, 0.0, 0.8 * e)
    lc = np.maximum(L - e, 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = (c["cp_side_a"] * la + c["cp_side_b"] * lb + c["cp_side_c"] * lc) / L
    return np.where(L > 1e-9, mean, c["cp_side_a"])


def hydraulic_diameter_m(width_m, height_m, open_top=True):
    """Hydraulic diameter 4 A / wetted perimeter of a passage [m].

    Open at the top: perimeter w + 2h (two walls and the ground); closed: 2 (w + h).
    """
    w = np.asarray(width_m, float)
    h = np.asarray(height_m, float)
    return np.where(open_top, 4.0 * w * h / (w + 2.0 * h), 2.0 * w * h / (w + h))


def pressure_limited_speed_ratio(area_ratio, passage_length_m, width_m, height_m, e_m,
                                 open_top=True, rotor_loss=0.0, coeffs=None):
    """Throat speed ratio that the face pressures can drive, sqrt[(C_t − C_p,e)/(1 + K)] [-].

    A derived model (Bernoulli with published pressure coefficients), not a published one;
    see the module docstring for each term.

    Parameters
    ----------
    area_ratio : A1/A2 [-], ≥ 1
    passage_length_m : length of the passage along its axis [m]
    width_m, height_m : gap width and passage height [m]
    e_m : EN 1991-1-4 zone scale e = min(b, 2h) of the side walls [m]
    open_top : passage open to the sky (no roof wall)
    rotor_loss : extra loss coefficient of a rotor in the throat [-]
    """
    c = {**GAP, **(coeffs or {})}
    f = 1.0 / np.maximum(np.asarray(area_ratio, float), 1.0)
    ct = f + (1.0 - f) * c["cp_windward"]
    cpe = side_wall_cp(passage_length_m, e_m, c)
    k = (c["entry_loss"] + c["friction_factor"] * np.asarray(passage_length_m, float)
         / hydraulic_diameter_m(width_m, height_m, open_top) + rotor_loss)
    return np.sqrt(np.maximum(ct - cpe, 0.0) / (1.0 + k))


@dataclass(frozen=True)
class PassageGeometry:
    """A passage between two blocks (arrays of shape (G,))."""

    width_m: np.ndarray        # gap between the facing walls
    length_m: np.ndarray       # overlap of the walls along the passage axis
    height_m: np.ndarray       # lower of the two roofs
    axis_deg: np.ndarray       # bearing of the passage axis, 0..180
    capture_area_m2: np.ndarray
    throat_area_m2: np.ndarray
    e_m: np.ndarray            # EN 1991-1-4 side-wall zone scale


def passage_geometry(bldg: geom.BuildingArrays, ia, ib) -> PassageGeometry:
    """Passage between blocks ``ia`` and ``ib`` (index arrays of shape (G,)).

    Notes
    -----
    The passage's normal n joins the two centres; the gap width is the centre distance less the
    blocks' half extents along n (exact for facing walls, approximate for skewed blocks). The
    axis is perpendicular to n; the passage length is the overlap of the two blocks along it.
    Capture area A1 = h (w + a_A + a_B), a the half extents along n: the stagnation line splits
    each windward face in half and the inner half feeds the passage. Throat A2 = w h.
    Blocks that touch or overlap give a width of 0 and raise no error here; the caller flags it.
    """
    ia, ib = np.asarray(ia, int), np.asarray(ib, int)
    dx = bldg.x_m[ib] - bldg.x_m[ia]
    dy = bldg.y_m[ib] - bldg.y_m[ia]
    dist = np.hypot(dx, dy)
    n_deg = np.degrees(np.arctan2(dx, dy))
    a_deg = n_deg + 90.0
    ha = geom.half_extent_m(bldg.length_m[ia], bldg.width_m[ia], bldg.orientation_deg[ia], n_deg)
    hb = geom.half_extent_m(bldg.length_m[ib], bldg.width_m[ib], bldg.orientation_deg[ib], n_deg)
    width = np.maximum(dist - ha - hb, 0.0)
    ga = geom.half_extent_m(bldg.length_m[ia], bldg.width_m[ia], bldg.orientation_deg[ia], a_deg)
    gb = geom.half_extent_m(bldg.length_m[ib], bldg.width_m[ib], bldg.orientation_deg[ib], a_deg)
    ar = np.radians(a_deg)
    sb = dx * np.sin(ar) + dy * np.cos(ar)
    length = np.maximum(np.minimum(ga, sb + gb) - np.maximum(-ga, sb - gb), 0.0)
    height = np.minimum(bldg.height_m[ia], bldg.height_m[ib])
    throat = width * height
    capture = height * (width + ha + hb)
    e = np.minimum(ha + hb, 2.0 * height)
    return PassageGeometry(width_m=width, length_m=length, height_m=height,
                           axis_deg=np.mod(a_deg, 180.0), capture_area_m2=capture,
                           throat_area_m2=throat, e_m=e)


def cross_flow_factor(width_m, height_m):
    """Speed ratio in a passage for wind straight across it, 1 − exp(−w/(2h)) [-].

    Notes
    -----
    Common-practice assumption: a narrow passage lies in the upwind block's lee (skimming flow
    for h/w above about 0.65, isolated-roughness flow for wide gaps; street-canyon regimes,
    Oke 1988, from memory), so a cross wind reaches it much weakened.
    """
    return 1.0 - np.exp(-np.asarray(width_m, float) / (2.0 * np.asarray(height_m, float)))


def gap_flow(geo: PassageGeometry, direction_deg, hub_height_m, open_top=True, rotor_loss=0.0,
             coeffs=None):
    """Sector-by-sector flow at a rotor in a passage.

    Parameters
    ----------
    geo : passage geometry, arrays (G,)
    direction_deg : sector centres [deg], (S,)
    hub_height_m : hub height above ground [m], (G,)

    Returns
    -------
    dict of (G, S) arrays: ``speed_factor`` (to the free stream at hub height), ``axial_ratio``
    (realised throat / axial approach speed), ``continuity_ratio``, ``pressure_ratio``,
    ``spilled_fraction``, ``governing`` ("continuity" or "pressure"), ``axial_cosine``
    |cos β| of the wind on the axis, ``added_ti``, ``wall_force_per_q_m2``
    (wall force per unit free-stream dynamic pressure ½ ρ V∞², realised stream tube) and
    ``channel_weight`` (1 inside the passage height, falling to 0 at 1.5 × height).

    Notes
    -----
    With β the angle between wind and axis, V1 = V∞ |cos β|; r = min(pressure, continuity);
    S = sqrt[(r cos β)² + (s_x sin β)²] with s_x the cross-flow factor. Above the passage the
    channel effect fades linearly to the free stream at 1.5 h.
    """
    th = np.asarray(direction_deg, float)[None, :]
    beta = np.radians(th - geo.axis_deg[:, None])
    cosb, sinb = np.abs(np.cos(beta)), np.abs(np.sin(beta))
    ar = continuity_speed_ratio(geo.capture_area_m2, np.maximum(geo.throat_area_m2, 1e-9))
    ar = np.where(geo.throat_area_m2 > 0, ar, 1.0)[:, None]
    pr = pressure_limited_speed_ratio(ar, geo.length_m[:, None], geo.width_m[:, None],
                                      geo.height_m[:, None], geo.e_m[:, None], open_top,
                                      rotor_loss, coeffs)
    r = np.minimum(pr, ar)
    governing = np.where(ar <= pr, "continuity", "pressure")
    spilled = 1.0 - r / ar
    sx = cross_flow_factor(geo.width_m, geo.height_m)[:, None]
    s_gap = np.hypot(r * cosb, sx * sinb)
    z = np.asarray(hub_height_m, float)[:, None]
    h = geo.height_m[:, None]
    wgt = np.clip(1.0 - (z - h) / (0.5 * h), 0.0, 1.0)
    speed = wgt * s_gap + (1.0 - wgt)
    added_ti = wgt * 0.2 * sinb ** 2 * (1.0 - sx)
    force = wall_force_n(1.0, r * geo.throat_area_m2[:, None], cosb, r) * 2.0
    out = {"speed_factor": speed, "axial_ratio": r, "continuity_ratio": ar,
           "pressure_ratio": pr, "spilled_fraction": spilled, "governing": governing,
           "axial_cosine": cosb, "added_ti": added_ti, "wall_force_per_q_m2": force,
           "channel_weight": wgt}
    return {k: np.broadcast_to(v, speed.shape).copy() for k, v in out.items()}
