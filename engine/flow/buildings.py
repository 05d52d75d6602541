"""Plan geometry of rectangular blocks, seen from each wind sector.

Every function works on arrays: buildings along one axis (B), sectors along another (S),
positions (P) where a position enters. Nothing here is empirical; it is the geometry the
building flow models (:mod:`engine.flow.roofzones`, :mod:`engine.flow.roofflow`, :mod:`engine.flow.shelter`,
:mod:`engine.flow.gaps`) share.

Conventions (as in :mod:`engine.core.model`): plan coordinates ``x_m`` east, ``y_m`` north;
directions in degrees clockwise from north, the direction the wind comes *from*; a block's
``orientation_deg`` is the bearing of its ``length_m`` side and the block is centred on its
(``x_m``, ``y_m``).
"""
from __future__ import annotations

import math

from dataclasses import dataclass

import numpy as np

#: Face names of a block, by the direction their outward normal points, relative to the
#: length axis: face 0 is the end whose normal is the length bearing, 1 the long side at
#: +90 deg, 2 the opposite end, 3 the long side at +270 deg.
FACE_OFFSETS_DEG = (0.0, 90.0, 180.0, 270.0)


@dataclass(frozen=True)
class BuildingArrays:
    """The buildings of a site as arrays of shape (B,)."""

    ids: tuple
    x_m: np.ndarray
    y_m: np.ndarray
    length_m: np.ndarray
    width_m: np.ndarray
    height_m: np.ndarray
    orientation_deg: np.ndarray
    pitched: np.ndarray
    roof_pitch_deg: np.ndarray
    parapet_height_m: np.ndarray

    @property
    def n(self) -> int:
        return len(self.ids)

    def index(self, building_id: str) -> int:
        return self.ids.index(building_id)


def building_arrays(buildings) -> BuildingArrays:
    """Stack :class:`engine.core.model.Building` objects into arrays."""
    b = tuple(buildings)

    def arr(name):
        return np.array([float(getattr(x, name)) for x in b], dtype=float)

    return BuildingArrays(
        ids=tuple(x.id for x in b), x_m=arr("x_m"), y_m=arr("y_m"), length_m=arr("length_m"),
        width_m=arr("width_m"), height_m=arr("height_m"), orientation_deg=arr("orientation_deg"),
        pitched=np.array([x.roof_type == "pitched" for x in b], dtype=bool),
        roof_pitch_deg=arr("roof_pitch_deg"), parapet_height_m=arr("parapet_height_m"))


def downwind_unit(direction_deg):
    """Unit vector (east, north) the wind blows *towards*, for wind from ``direction_deg``.

    Notes
    -----
    Wind from bearing θ travels towards θ + 180°: d = (−sin θ, −cos θ).
    """
    t = np.radians(np.asarray(direction_deg, dtype=float))
    return -np.sin(t), -np.cos(t)


def crosswind_width_m(length_m, width_m, orientation_deg, direction_deg):
    """Crosswind width of rotated rectangles, (B, S) [m]: the first output of
    :func:`sector_geometry` alone, L |sin γ| + W |cos γ| with γ the wind's angle to the length."""
    L = np.asarray(length_m, dtype=float)[..., None]
    W = np.asarray(width_m, dtype=float)[..., None]
    # sin and cos of γ = θ − φ by the angle-difference formulas: the sines and cosines of the
    # (S,) directions and the (B,) orientations, not of every (B, S) pair.
    th = np.radians(np.asarray(direction_deg, dtype=float))[None, ...]
    ph = np.radians(np.asarray(orientation_deg, dtype=float))[..., None]
    s_t, c_t, s_p, c_p = np.sin(th), np.cos(th), np.sin(ph), np.cos(ph)
    return L * np.abs(s_t * c_p - c_t * s_p) + W * np.abs(c_t * c_p + s_t * s_p)


def sector_geometry(length_m, width_m, orientation_deg, direction_deg):
    """Crosswind width, along-wind length and windward face of rotated rectangles.

    Parameters
    ----------
    length_m, width_m : block sides [m], shape (B,) or broadcastable
    orientation_deg : bearing of the length side [deg], shape (B,)
    direction_deg : wind directions [deg from north, wind from], shape (S,)

    Returns
    -------
    crosswind_m : (B, S) width of the block's shadow across the wind [m]
    alongwind_m : (B, S) extent of the block along the wind [m]
    windward_face : (B, S) int, face index (see :data:`FACE_OFFSETS_DEG`) that faces the wind
    face_width_m : (B, S) width of that windward face [m]
    incidence_deg : (B, S) angle between the wind and the windward face's normal [deg], 0..45

    Notes
    -----
    With γ the angle between the wind and the length axis, the projections of a rectangle are
    crosswind = L |sin γ| + W |cos γ| and along-wind = L |cos γ| + W |sin γ|.
    """
    L = np.asarray(length_m, dtype=float)[..., None]
    W = np.asarray(width_m, dtype=float)[..., None]
    phi = np.asarray(orientation_deg, dtype=float)[..., None]
    theta = np.asarray(direction_deg, dtype=float)[None, ...]
    g = np.radians(theta - phi)
    cross = crosswind_width_m(length_m, width_m, orientation_deg, direction_deg)
    along = L * np.abs(np.cos(g)) + W * np.abs(np.sin(g))
    rel = np.mod(theta - phi, 360.0)
    face = np.mod(np.rint(rel / 90.0).astype(int), 4)
    face_width = np.where(face % 2 == 0, W, L)
    incidence = np.abs(rel - 90.0 * np.rint(rel / 90.0))
    return (np.broadcast_to(cross, np.broadcast_shapes(cross.shape, theta.shape)).copy(),
            np.broadcast_to(along, np.broadcast_shapes(along.shape, theta.shape)).copy(),
            face, np.broadcast_to(face_width, face.shape).copy(), incidence)


def to_local(px_m, py_m, cx_m, cy_m, orientation_deg):
    """Plan point(s) in a block's own axes: (u along the length side, v along the width) [m]."""
    phi = np.radians(np.asarray(orientation_deg, dtype=float))
    dx = np.asarray(px_m, dtype=float) - cx_m
    dy = np.asarray(py_m, dtype=float) - cy_m
    eu = (np.sin(phi), np.cos(phi))            # bearing phi as (east, north)
    ev = (np.cos(phi), -np.sin(phi))           # bearing phi + 90
    return dx * eu[0] + dy * eu[1], dx * ev[0] + dy * ev[1]


def roof_fetch_m(u_m, v_m, length_m, width_m, orientation_deg, direction_deg):
    """Distance from a point on a roof back upwind to the roof edge, and on to the leeward edge.

    Parameters
    ----------
    u_m, v_m : point in the block's axes [m], shape (P,)
    length_m, width_m, orientation_deg : the block of each point, shape (P,)
    direction_deg : wind directions [deg], shape (S,)

    Returns
    -------
    upwind_m : (P, S) distance X from the windward roof edge along the wind [m]
    downwind_m : (P, S) distance to the leeward roof edge along the wind [m]

    Notes
    -----
    Ray from the point against the wind, leaving the rectangle |u| ≤ L/2, |v| ≤ W/2:
    t = min over axes of (half side ∓ coordinate) / |component|. Points outside the roof get 0.
    """
    dE, dN = downwind_unit(direction_deg)                       # (S,)
    phi = np.radians(np.asarray(orientation_deg, dtype=float))[:, None]
    du = dE[None, :] * np.sin(phi) + dN[None, :] * np.cos(phi)  # (P, S)
    dv = dE[None, :] * np.cos(phi) - dN[None, :] * np.sin(phi)
    hu = np.asarray(length_m, float)[:, None] / 2.0
    hv = np.asarray(width_m, float)[:, None] / 2.0
    u = np.asarray(u_m, float)[:, None]
    v = np.asarray(v_m, float)[:, None]
    inside = (np.abs(u) <= hu + 1e-9) & (np.abs(v) <= hv + 1e-9)

    def exit_both(c, h, d):
        # Distance along +d and along -d from coordinate c to the side each crosses:
        # (h - c sgn d) / |d| and (h + c sgn d) / |d|; none (inf) when d is about 0.
        a = np.abs(d)
        cs = np.where(d < 0, -c, c)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            fwd = (h - cs) / a
            back = (h + cs) / a
        flat = a <= 1e-12
        return np.where(flat, np.inf, fwd), np.where(flat, np.inf, back)

    if not (u.any() or v.any()):
        # Every point at its roof's centre (as in a screening): both ways are the same, h/|d|.
        with np.errstate(divide="ignore"):
            t_u = np.where(np.abs(du) <= 1e-12, np.inf, hu / np.abs(du))
            t_v = np.where(np.abs(dv) <= 1e-12, np.inf, hv / np.abs(dv))
        up = np.minimum(t_u, t_v)
        return up, up.copy()
    down_u, up_u = exit_both(u, hu, du)
    down_v, up_v = exit_both(v, hv, dv)
    down = np.minimum(down_u, down_v)
    up = np.minimum(up_u, up_v)
    up = np.where(inside, np.maximum(up, 0.0), 0.0)
    down = np.where(inside, np.maximum(down, 0.0), 0.0)
    return up, down


def upwind_offsets(px_m, py_m, cx_m, cy_m, direction_deg):
    """Where each block's centre lies relative to each point, in wind axes.

    Returns
    -------
    upwind_m : (P, B, S) distance of the block centre upwind of the point [m]
        (negative when the block is downwind)
    lateral_m : (P, B, S) distance of the block centre from the line through the point
        along the wind [m], always >= 0
    """
    dE, dN = downwind_unit(direction_deg)
    dx = np.asarray(cx_m, float)[None, :, None] - np.asarray(px_m, float)[:, None, None]
    dy = np.asarray(cy_m, float)[None, :, None] - np.asarray(py_m, float)[:, None, None]
    up = -(dx * dE + dy * dN)
    lat = np.abs(dx * (-dN) + dy * dE)
    return up, lat


def half_extent_m(length_m, width_m, orientation_deg, bearing_deg):
    """Half the extent of rotated rectangles projected on a bearing [m] (broadcasting)."""
    g = np.radians(np.asarray(bearing_deg, float) - np.asarray(orientation_deg, float))
    return 0.5 * (np.asarray(length_m, float) * np.abs(np.cos(g))
                  + np.asarray(width_m, float) * np.abs(np.sin(g)))


def building_corners_m(building) -> np.ndarray:
    """Plan corners (4, 2) of a rectangular block [m], east and north.

    Notes
    -----
    The ``length_m`` side runs along the bearing θ = ``orientation_deg`` (clockwise from
    north): unit vector (sin θ, cos θ); the ``width_m`` side along (cos θ, -sin θ).
    """
    t = math.radians(float(building.orientation_deg))
    a = np.array([math.sin(t), math.cos(t)]) * building.length_m / 2.0
    b = np.array([math.cos(t), -math.sin(t)]) * building.width_m / 2.0
    c = np.array([building.x_m, building.y_m], float)
    return np.stack([c + a + b, c + a - b, c - a - b, c - a + b])


def building_outline_m(building) -> np.ndarray:
    """Plan outline (N, 2) of a building [m]: its true footprint where it came from GIS data
    (``outline_xy_m``), else the four corners of its block."""
    if building.outline_xy_m:
        return np.asarray(building.outline_xy_m, float).reshape(-1, 2)
    return building_corners_m(building)
