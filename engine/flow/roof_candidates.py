"""Candidate mounting positions on a roof: its centre and, on request, a grid set back from
the edges.

A roof's best spot depends on the wind's directions and the roof-zone geometry, which the
chain works out for every candidate; this module only proposes where to look. The grid keeps a
set-back from every edge of the block (the roof's edge zones carry the strongest separation,
and a mast near the edge is harder to install and maintain safely); the set-back is a setting,
not a published figure.
"""
from __future__ import annotations

import math

import numpy as np

from engine.core.errors import InputError

#: Most candidates one roof's grid may hold (a setting: a grid finer than this says nothing a
#: coarser one does not, and each candidate costs a pass of the chain).
MAX_ROOF_CANDIDATES = 400

#: Default set-back of grid candidates from the roof's edges [m] (a setting; common practice
#: keeps masts clear of the edge for safe access, and the edge zones are the most disturbed).
DEFAULT_SETBACK_M = 2.0


def roof_candidate_points(building, spacing_m: float | None = None,
                          setback_m: float = DEFAULT_SETBACK_M) -> np.ndarray:
    """Plan points (N, 2) [m] for candidates on one block's roof, the centre first.

    Parameters
    ----------
    building : :class:`engine.core.model.Building`
    spacing_m : grid spacing along and across the roof [m]; only the centre when None
    setback_m : distance kept from every edge of the block [m]

    Returns
    -------
    (N, 2) array of (x, y) on the site plan; grid points inside the set-back rectangle, in
    rows along the length, the centre not repeated.
    """
    c = np.array([[building.x_m, building.y_m]], float)
    if spacing_m is None:
        return c
    if not spacing_m > 0:
        raise ValueError(f"spacing_m must be positive, got {spacing_m}")
    half_l = building.length_m / 2.0 - setback_m
    half_w = building.width_m / 2.0 - setback_m
    if half_l < 0 or half_w < 0:
        return c
    if _grid_count(half_l, half_w, spacing_m) > MAX_ROOF_CANDIDATES:
        raise InputError([("spacing", f"must be at least "
                                      f"{finest_spacing_m(building, setback_m):.3g} m on "
                                      f"building {building.id} (at most "
                                      f"{MAX_ROOF_CANDIDATES} candidates on one roof), got "
                                      f"{spacing_m:g} m")])
    along = _symmetric_steps(half_l, spacing_m)
    across = _symmetric_steps(half_w, spacing_m)
    s, t = np.meshgrid(along, across, indexing="ij")
    s, t = s.ravel(), t.ravel()
    keep = ~((np.abs(s) < 1e-9) & (np.abs(t) < 1e-9))
    th = math.radians(building.orientation_deg)
    u = np.array([math.sin(th), math.cos(th)])   # along the length
    v = np.array([math.cos(th), -math.sin(th)])  # along the width
    pts = c + s[keep, None] * u + t[keep, None] * v
    return np.vstack([c, pts])


def _grid_count(half_l: float, half_w: float, spacing) -> np.ndarray:
    """Points of the grid (centre included) for half-sides ``half_l``, ``half_w`` [m] at
    ``spacing`` [m] (scalar or array), counted in floats before any grid is made."""
    s = np.asarray(spacing, float)
    n_l = np.floor(half_l / s + 1e-9)
    n_w = np.floor(half_w / s + 1e-9)
    return (2.0 * n_l + 1.0) * (2.0 * n_w + 1.0)


def finest_spacing_m(building, setback_m: float = DEFAULT_SETBACK_M) -> float:
    """The finest grid spacing [m] that keeps one roof within :data:`MAX_ROOF_CANDIDATES`.

    The count changes only where a half-side is a whole number of spacings, so the spacings
    ``half / n`` are the only ones to try.
    """
    half_l = building.length_m / 2.0 - setback_m
    half_w = building.width_m / 2.0 - setback_m
    if half_l <= 0 and half_w <= 0:
        return 0.0
    n = np.arange(1, MAX_ROOF_CANDIDATES + 1, dtype=float)
    tried = np.concatenate([h / n for h in (half_l, half_w) if h > 0])
    ok = tried[_grid_count(max(half_l, 0.0), max(half_w, 0.0), tried) <= MAX_ROOF_CANDIDATES]
    return float(ok.min())


def _symmetric_steps(half: float, spacing: float) -> np.ndarray:
    """Offsets -n·s .. n·s with n·s ≤ half, centred on 0."""
    n = int(math.floor(half / spacing + 1e-9))
    return np.arange(-n, n + 1) * spacing


def roof_candidate_arrays(length_m, width_m, spacing_m: float | None = None,
                          setback_m: float = DEFAULT_SETBACK_M):
    """Candidates on many roofs at once, in each block's own axes (vectorised).

    Parameters
    ----------
    length_m, width_m : (B,) block sides [m]
    spacing_m, setback_m : as :func:`roof_candidate_points`

    Returns
    -------
    block : (N,) index of the block of each candidate
    u_m, v_m : (N,) offsets along the length and along the width from the block's centre [m];
        per block the centre first, then the grid in rows along the length (the order and
        points of :func:`roof_candidate_points`)
    """
    L = np.asarray(length_m, float)
    W = np.asarray(width_m, float)
    B = L.size
    if spacing_m is None:
        return np.arange(B), np.zeros(B), np.zeros(B)
    if not spacing_m > 0:
        raise ValueError(f"spacing_m must be positive, got {spacing_m}")
    half_l, half_w = L / 2.0 - setback_m, W / 2.0 - setback_m
    fits = (half_l >= 0) & (half_w >= 0)
    na = np.where(fits, np.floor(np.maximum(half_l, 0) / spacing_m + 1e-9), 0).astype(np.int64)
    nc = np.where(fits, np.floor(np.maximum(half_w, 0) / spacing_m + 1e-9), 0).astype(np.int64)
    per = np.where(fits, (2 * na + 1) * (2 * nc + 1), 1)  # grid points incl. the centre
    block = np.repeat(np.arange(B), per)
    start = np.concatenate([[0], np.cumsum(per)[:-1]])
    k = np.arange(block.size) - start[block]  # index within the block's grid, row-major
    cols = 2 * nc[block] + 1
    s = (k // cols - na[block]) * spacing_m
    t = (k % cols - nc[block]) * spacing_m
    centre = (np.abs(s) < 1e-9) & (np.abs(t) < 1e-9)
    # The centre first, then the grid without it (as roof_candidate_points orders them).
    order = np.lexsort((~centre, block))
    return block[order], s[order], t[order]
