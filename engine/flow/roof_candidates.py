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


def _symmetric_steps(half: float, spacing: float) -> np.ndarray:
    """Offsets -n·s .. n·s with n·s ≤ half, centred on 0."""
    n = int(math.floor(half / spacing + 1e-9))
    return np.arange(-n, n + 1) * spacing
