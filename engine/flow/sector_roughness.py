"""Roughness and displacement of the surroundings, sector by sector, from building footprints.

The wind from the west crosses different ground from the wind from the east: a tall block on
one side roughens only the sectors it stands in. For each direction sector this module takes
the buildings inside the upwind fetch — a wedge of the sector's width and radius ``fetch_m``
from the site centre, on the side the wind comes from — and computes their plan and frontal
area fractions and mean height, then the roughness length and displacement by the morphometric
method of Macdonald, Griffiths & Hall (1998), :func:`engine.flow.transfer.macdonald_roughness`.

Notes
-----
Per sector s, over the wedge W_s of area A_W = π r² / n:

* λp = Σ_b A(b ∩ W_s) / A_W, the plan area of the buildings' parts inside the wedge;
* λf = Σ_b H_b w_b(θ_s) f_b / A_W, with w_b the footprint's width seen from the sector's
  centre direction θ_s (the spread of its vertices across the wind) and f_b the share of its
  plan area inside the wedge;
* H̄ the plan-area-weighted mean height of the buildings in the wedge.

A sector with no building in its fetch has no array roughness: it keeps the site's own
roughness and displacement (``fallback``), which the caller says. The fetch is a setting; a
few hundred metres is the usual range over which an urban surface's roughness sets the wind at
roof level (Wieringa 1993, "Representative roughness parameters for homogeneous terrain",
Boundary-Layer Meteorol. 63:323-363, recommends a fetch of the order of 1 km for a
representative z0; from memory). The default here is shorter, a site-scale choice.

References
----------
Macdonald, R. W., Griffiths, R. F. and Hall, D. J. (1998), Atmos. Environ. 32:1857-1864.
"""
from __future__ import annotations

import math

import numpy as np

from engine.flow.buildings import building_outline_m
from engine.flow.transfer import morphometric_roughness

#: Default upwind fetch radius [m] (a setting; see the module notes).
DEFAULT_FETCH_M = 300.0
#: Vertices of the wedge's arc (enough that the area is within 0.1 % of π r² / n).
_ARC_POINTS = 32


def wedge_polygon(centre_xy, direction_deg: float, width_deg: float, radius_m: float):
    """The upwind wedge: a circular sector of ``width_deg`` centred on the bearing the wind
    comes from, as a shapely Polygon on the plan."""
    import shapely.geometry
    a = np.radians(np.linspace(direction_deg - width_deg / 2, direction_deg + width_deg / 2,
                               _ARC_POINTS))
    cx, cy = centre_xy
    arc = np.column_stack([cx + radius_m * np.sin(a), cy + radius_m * np.cos(a)])
    return shapely.geometry.Polygon(np.vstack([[cx, cy], arc]))


def crosswind_width_m(outline_xy, direction_deg: float) -> float:
    """Width of a footprint seen by a wind from ``direction_deg`` [m]: the spread of its
    vertices along the crosswind axis (cos θ, −sin θ)."""
    t = math.radians(direction_deg)
    across = outline_xy @ np.array([math.cos(t), -math.sin(t)])
    return float(across.max() - across.min())


def sector_morphometry(buildings, n_sectors: int, centre_xy=(0.0, 0.0),
                       fetch_m: float = DEFAULT_FETCH_M, exclude_ids=()):
    """Plan and frontal area fractions and mean height of the buildings upwind, per sector.

    Parameters
    ----------
    buildings : sequence of :class:`engine.core.model.Building`
    n_sectors : sectors, sector i centred on i·360/n deg (the wind's direction of origin)
    centre_xy : the point the fetch is measured from [m] (the site centre)
    fetch_m : radius of the upwind wedge [m]
    exclude_ids : buildings left out (e.g. the one a rotor stands on, whose own flow the roof
        models handle)

    Returns
    -------
    lambda_p, lambda_f, mean_height_m : (n,) arrays; NaN height where a wedge holds no building
    """
    import shapely
    import shapely.geometry
    n = int(n_sectors)
    width = 360.0 / n
    polys, heights, outlines = [], [], []
    for b in buildings:
        if b.id in exclude_ids:
            continue
        xy = building_outline_m(b)
        polys.append(shapely.geometry.Polygon(xy))
        heights.append(b.height_m)
        outlines.append(xy)
    heights = np.asarray(heights, float)
    area = np.array([p.area for p in polys])
    lp, lf, hbar = np.zeros(n), np.zeros(n), np.full(n, np.nan)
    if not polys:
        return lp, lf, hbar
    polys = np.asarray(polys, dtype=object)
    for s in range(n):
        theta = s * width
        wedge = wedge_polygon(centre_xy, theta, width, fetch_m)
        inside = shapely.area(shapely.intersection(polys, wedge))
        if not np.any(inside > 0):
            continue
        share = inside / area
        widths = np.array([crosswind_width_m(o, theta) for o in outlines])
        lp[s] = inside.sum() / wedge.area
        lf[s] = float(np.sum(heights * widths * share)) / wedge.area
        hbar[s] = float(np.sum(heights * inside) / inside.sum())
    return lp, lf, hbar


def sector_roughness(buildings, n_sectors: int, fallback_z0_m: float, fallback_d_m: float,
                     centre_xy=(0.0, 0.0), fetch_m: float = DEFAULT_FETCH_M,
                     layout: str = "staggered", exclude_ids=()):
    """Roughness length and displacement per sector [m] from the buildings upwind.

    Returns
    -------
    z0_m, d_m : (n,) arrays, Macdonald et al. (1998) where the wedge holds buildings, else the
        fallbacks
    from_buildings : (n,) bool, which sectors came from the buildings
    """
    lp, lf, hbar = sector_morphometry(buildings, n_sectors, centre_xy, fetch_m, exclude_ids)
    have = np.isfinite(hbar) & (lp > 0) & (lp < 1) & (lf > 0)
    z0 = np.full(n_sectors, float(fallback_z0_m))
    d = np.full(n_sectors, float(fallback_d_m))
    if have.any():
        z0_b, d_b = morphometric_roughness(lp[have], lf[have], hbar[have], layout)
        z0[have], d[have] = z0_b, d_b
    return z0, d, have


def sector_index(bearing_deg, n_sectors: int):
    """Sector of each bearing [deg]: sector i spans i·w ± w/2, w = 360/n (int array)."""
    w = 360.0 / int(n_sectors)
    return np.floor(np.mod(np.asarray(bearing_deg, float) + 0.5 * w, 360.0) / w).astype(
        np.int64) % int(n_sectors)


def sector_morphometry_points(px_m, py_m, bldg, n_sectors: int,
                              fetch_m: float = DEFAULT_FETCH_M, exclude=None):
    """Plan and frontal area fractions and mean height upwind of each point, per sector.

    The array form used by the chain (detailed assessment and screening alike): a building
    counts, whole, in the sector its centre lies in as seen from the point, when its centre is
    within ``fetch_m``.

    Parameters
    ----------
    px_m, py_m : (P,) points the fetch is measured from [m]
    bldg : :class:`engine.flow.buildings.BuildingArrays` (B blocks)
    n_sectors : sectors, sector i centred on i·360/n deg (the wind's direction of origin)
    fetch_m : radius of the upwind wedge [m]
    exclude : (P, B) bool, blocks left out for a point (the one it stands on)

    Returns
    -------
    lambda_p, lambda_f, mean_height_m : (P, n) arrays [-], [-], [m]; NaN height where a wedge
        holds no building

    Notes
    -----
    Over the wedge W_s of area A_W = π r² / n, with the blocks b whose centres lie in W_s:
    λp = Σ L_b W_b / A_W; λf = Σ H_b w_b(θ_s) / A_W, w_b(θ_s) = L |sin γ| + W |cos γ| the
    block's crosswind width to the sector's centre direction θ_s; H̄ = Σ L_b W_b H_b / Σ L_b W_b.
    The whole footprint is counted where its centre is (:func:`sector_morphometry` clips the
    footprints to the wedge instead; the two agree when the blocks are small beside the
    fetch, and are tested against each other).
    """
    from engine.flow.buildings import crosswind_width_m as block_crosswind_m
    n = int(n_sectors)
    px = np.atleast_1d(np.asarray(px_m, float))
    py = np.atleast_1d(np.asarray(py_m, float))
    P, B = px.size, bldg.n
    shape = (P, n)
    if B == 0:
        return np.zeros(shape), np.zeros(shape), np.full(shape, np.nan)
    dx = bldg.x_m[None, :] - px[:, None]
    dy = bldg.y_m[None, :] - py[:, None]
    use = np.hypot(dx, dy) <= fetch_m
    if exclude is not None:
        use &= ~np.asarray(exclude, bool)
    # Bearing from the point to the block = the direction a wind it shelters comes from.
    sec = sector_index(np.degrees(np.arctan2(dx, dy)), n)
    pi, bi = np.nonzero(use)
    si = sec[pi, bi]
    key = pi * n + si
    area = (bldg.length_m * bldg.width_m)[bi]
    cross = block_crosswind_m(bldg.length_m, bldg.width_m, bldg.orientation_deg,
                              np.arange(n) * (360.0 / n))  # (B, n)
    frontal = bldg.height_m[bi] * cross[bi, si]
    wedge = math.pi * fetch_m ** 2 / n
    a_sum = np.bincount(key, area, P * n).reshape(shape)
    f_sum = np.bincount(key, frontal, P * n).reshape(shape)
    ah_sum = np.bincount(key, area * bldg.height_m[bi], P * n).reshape(shape)
    hbar = np.divide(ah_sum, a_sum, out=np.full(shape, np.nan), where=a_sum > 0)
    return a_sum / wedge, f_sum / wedge, hbar


def sector_terrain(lambda_p, lambda_f, mean_height_m, fallback, layout: str = "staggered"):
    """Terrain per position and sector from upwind area fractions, the fallback elsewhere.

    Parameters
    ----------
    lambda_p, lambda_f, mean_height_m : (P, S) of :func:`sector_morphometry_points`
    fallback : mapping of ``roughness_m``, ``displacement_m``, ``frontal_area_fraction``,
        ``canopy_height_m``: scalars or (P,) arrays (NaN where unknown), the terrain a sector
        with no building upwind keeps
    layout : Macdonald et al. (1998) layout, "staggered" or "square"

    Returns
    -------
    dict of (P, S) arrays: ``roughness_m``, ``displacement_m`` [m],
    ``frontal_area_fraction`` [-], ``canopy_height_m`` [m], ``from_buildings`` (bool)

    Notes
    -----
    z0 and d by :func:`engine.flow.transfer.morphometric_roughness`; λp and λf held in
    [1e-6, 0.95] as the screening's square neighbourhood holds them (Macdonald's range is
    0 < λp < 1).
    """
    lp = np.asarray(lambda_p, float)
    have = np.isfinite(mean_height_m) & (lp > 0)
    lp_c = np.clip(lp, 1e-6, 0.95)
    lf_c = np.clip(np.asarray(lambda_f, float), 1e-6, 0.95)
    h = np.where(have, mean_height_m, 1.0)
    z0_b, d_b = morphometric_roughness(lp_c, lf_c, h, layout)

    def fb(name):
        v = np.asarray(np.nan if fallback.get(name) is None else fallback[name], float)
        return np.broadcast_to(v[..., None] if v.ndim == 1 else v, lp.shape)

    return {"roughness_m": np.where(have, z0_b, fb("roughness_m")),
            "displacement_m": np.where(have, d_b, fb("displacement_m")),
            "frontal_area_fraction": np.where(have, lf_c, fb("frontal_area_fraction")),
            "canopy_height_m": np.where(have, mean_height_m, fb("canopy_height_m")),
            "from_buildings": have}
