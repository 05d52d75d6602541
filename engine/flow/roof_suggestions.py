"""Suggested positions on one roof of a site: where to look, and the shortest rotor-clear mast.

For an assessor placing positions by hand: the candidates of
:func:`engine.flow.roof_candidates.roof_candidate_points` (the roof's centre and a grid set
back from the edges) on one building of a valid assessment, each with the shortest mast that
keeps the largest chosen rotor clear of the roof's high-turbulence zone, found by the detailed
chain's own building model (:func:`engine.flow.effective.effective_climate`, its
``min_clear_mast_m``) with the site's other buildings, terrain and climate. The candidates are
proposals: the assessor accepts, moves or deletes them, and the chain then assesses the
accepted ones as it does any position.
"""
from __future__ import annotations

import dataclasses
import math

import numpy as np
import pandas as pd

from engine.core.errors import InputError, Problems
from engine.core.model import Position
from engine.flow.effective import effective_climate
from engine.flow.roof_candidates import (DEFAULT_SETBACK_M, MAX_ROOF_CANDIDATES,  # noqa: F401
                                         finest_spacing_m, roof_candidate_points)

#: Default spacing of the suggested grid along and across a roof [m] (a setting: a few
#: metres between masts keeps one rotor out of the next one's near wake on a small roof).
DEFAULT_SPACING_M = 6.0
#: Suggested masts are rounded up to this step [m] (as the screening's masts).
MAST_STEP_M = 0.1
#: The shortest and tallest mast a position allows [m] (:class:`engine.core.model.Position`).
MAST_LIMITS_M = (0.5, 60.0)

#: Columns of :func:`suggest_roof_positions`, in order.
SUGGESTION_COLUMNS = ("id", "x_m", "y_m", "mast_height_m", "min_clear_mast_m",
                      "rotor_radius_m", "edge_distance_m", "why")


def free_ids(names, taken) -> list:
    """``names`` with each one already in ``taken`` (or earlier in ``names``) given the first
    free ``-2``, ``-3``, ... suffix; the others unchanged."""
    used = set(map(str, taken))
    out = []
    for name in map(str, names):
        new, k = name, 2
        while new in used:
            new, k = f"{name}-{k}", k + 1
        used.add(new)
        out.append(new)
    return out


def _building(assessment, building_id: str):
    found = [b for b in assessment.buildings if b.id == building_id]
    if not found:
        known = ", ".join(b.id for b in assessment.buildings) or "none"
        raise InputError([("building", f"building must be one of the site's buildings "
                                       f"({known}), got {building_id!r}")])
    return found[0]


def _check_fits(b, setback_m: float) -> None:
    need = 2.0 * setback_m
    short = min(b.length_m, b.width_m)
    if short < need:
        side = "width_m" if b.width_m <= b.length_m else "length_m"
        raise InputError([(f"building {b.id}: {side}",
                           f"must be at least {need:g} m (twice the {setback_m:g} m kept from "
                           f"every edge) for a suggested position, got {short:g} m; place a "
                           "position by hand, or use a smaller set-back")])


def _edge_distance_m(b, pts: np.ndarray) -> np.ndarray:
    """(N,) distance of each plan point to the nearest edge of the block [m]."""
    th = math.radians(b.orientation_deg)
    d = pts - np.array([b.x_m, b.y_m])
    s = d @ np.array([math.sin(th), math.cos(th)])  # along the length
    t = d @ np.array([math.cos(th), -math.sin(th)])  # along the width
    return np.minimum(b.length_m / 2.0 - np.abs(s), b.width_m / 2.0 - np.abs(t))


def _clear_mast_m(assessment, extra: tuple, radius_m: float, rho: float, step_m: float):
    """(min_clear_mast_m, mast_m) of the ``extra`` positions appended to the assessment."""
    n = len(assessment.positions)
    lo, hi = MAST_LIMITS_M
    mast = np.full(len(extra), float(np.clip(radius_m + 1.0, lo, hi)))
    passes = 2 if assessment.transfer.adjust_shape_with_height else 1
    for _ in range(passes):  # the main sectors depend on the hub when the shape does
        cands = tuple(dataclasses.replace(p, mast_height_m=float(m))
                      for p, m in zip(extra, mast))
        trial = dataclasses.replace(assessment, positions=assessment.positions + cands)
        eff = effective_climate(trial, rho)
        need = np.asarray(eff.diagnostics["min_clear_mast_m"], float)[n:]
        mast = np.clip(np.ceil(np.round((need + radius_m) / step_m, 9)) * step_m, lo, hi)
    return need, np.round(mast, 6)


def suggest_roof_positions(assessment, building_id: str, *, spacing_m=DEFAULT_SPACING_M,
                           setback_m: float = DEFAULT_SETBACK_M, taken_ids=(),
                           air_density_kgm3: float | None = None,
                           mast_step_m: float = MAST_STEP_M) -> pd.DataFrame:
    """Suggested roof positions on one building, each with its shortest rotor-clear mast.

    Parameters
    ----------
    assessment : a valid :class:`engine.core.model.Assessment`
    building_id : the building whose roof is searched
    spacing_m : grid spacing along and across the roof [m]; only the centre when None
    setback_m : distance every candidate keeps from the block's edges [m]
    taken_ids : position ids already used (the suggestions take other names)
    air_density_kgm3 : site air density [kg/m³]; the site's (:mod:`engine.climate.air`)
        when None
    mast_step_m : masts are rounded up to this step [m]

    Returns
    -------
    DataFrame with :data:`SUGGESTION_COLUMNS`: ``id`` (``<building>-s<k>``, free of
    ``taken_ids``), plan ``x_m``, ``y_m`` [m], ``mast_height_m`` (the shortest mast, above the
    roof surface, that keeps the rotor clear) [m], ``min_clear_mast_m`` (the mast putting the
    hub at the zone's top) [m], ``rotor_radius_m`` [m], ``edge_distance_m`` (to the nearest
    edge) [m] and ``why`` (where the candidate comes from and why it is set back).

    Raises
    ------
    InputError
        the building is not the site's, or its roof is narrower than twice the set-back.

    Notes
    -----
    mast = ⌈(z_clear + r) / step⌉ · step, clipped to 0.5–60 m, with z_clear the height above
    the roof surface of the high-turbulence zone's top in the main energy sectors (the
    detailed chain's ``min_clear_mast_m``: ASHRAE roof zones, Wilson's scaling length) and r
    the largest chosen rotor's radius, so every chosen turbine's rotor clears the zone.

    References
    ----------
    ASHRAE (2011). *HVAC Applications Handbook*, ch. 45, Building air intake and exhaust
    design (the roof zones; see :mod:`engine.flow.roofzones`).
    """
    b = _building(assessment, str(building_id))
    if not setback_m >= 0:
        raise InputError([("set-back", f"must be 0 m or more, got {setback_m} m")])
    if spacing_m is not None and not spacing_m > 0:
        raise InputError([("spacing", f"must be more than 0 m, got {spacing_m} m")])
    _check_fits(b, setback_m)
    # To the millimetre, as the site file keeps plan positions (no -1e-15 m from the rotation).
    pts = np.round(roof_candidate_points(b, spacing_m, setback_m), 3) + 0.0
    taken = {p.id for p in assessment.positions} | set(map(str, taken_ids))
    ids = free_ids([f"{b.id}-s{k + 1}" for k in range(len(pts))], taken)
    got = measure_roof_points(assessment, b.id, pts[:, 0], pts[:, 1],
                              air_density_kgm3=air_density_kgm3, mast_step_m=mast_step_m)
    need, mast, radius = got["min_clear_mast_m"], got["mast_height_m"], got["rotor_radius_m"]
    edge = _edge_distance_m(b, pts)
    why = np.empty(len(pts), dtype=object)
    why[0] = f"roof centre, {edge[0]:.1f} m from the nearest edge"
    if len(pts) > 1:
        why[1:] = (f"grid every {spacing_m:g} m, kept {setback_m:g} m or more from every edge "
                   "(the edge zones carry the strongest separation, and a mast near the edge "
                   "is harder to reach and service safely)")
    return pd.DataFrame({"id": np.asarray(ids, object), "x_m": pts[:, 0], "y_m": pts[:, 1],
                         "mast_height_m": mast, "min_clear_mast_m": need,
                         "rotor_radius_m": radius,
                         "edge_distance_m": edge, "why": why})[list(SUGGESTION_COLUMNS)]


def measure_roof_points(assessment, building_id: str, x_m, y_m, *,
                        air_density_kgm3: float | None = None,
                        mast_step_m: float = MAST_STEP_M) -> dict:
    """Shortest rotor-clear mast and distance to the edge at given points of one roof.

    For points the assessor placed or moved: the same rule as
    :func:`suggest_roof_positions` (see its Notes) at each point.

    Parameters
    ----------
    assessment : a valid :class:`engine.core.model.Assessment`
    building_id : the building the points stand on
    x_m, y_m : (N,) plan points [m]
    air_density_kgm3 : [kg/m³]; the site's when None
    mast_step_m : masts are rounded up to this step [m]

    Returns
    -------
    dict of (N,) arrays: ``mast_height_m``, ``min_clear_mast_m``, ``rotor_radius_m``,
    ``edge_distance_m`` [m]

    Raises
    ------
    InputError
        a point is not a finite number, or is off the roof (``point <k>``, from 1).
    """
    b = _building(assessment, str(building_id))
    x = np.asarray(x_m, dtype=float).ravel()
    y = np.asarray(y_m, dtype=float).ravel()
    pts = np.column_stack([x, y])
    p = Problems()
    ok = np.isfinite(pts).all(axis=1)
    edge = np.where(ok, _edge_distance_m(b, np.where(ok[:, None], pts, 0.0)), np.nan)
    for k in np.flatnonzero(~ok):
        p.add(f"point {k + 1}", f"x and y must be numbers, got {x[k]}, {y[k]} m")
    for k in np.flatnonzero(ok & (edge < 0)):
        p.add(f"point {k + 1}", f"must be on the roof of {b.id}, got ({x[k]:g}, {y[k]:g}) m, "
                                f"{-edge[k]:.1f} m outside its edge; move it onto the roof")
    p.raise_if_any()
    taken = {q.id for q in assessment.positions}
    ids = free_ids([f"{b.id}-point-{k + 1}" for k in range(len(pts))], taken)
    extra = tuple(Position(id=i, kind="roof", x_m=float(px), y_m=float(py), mast_height_m=1.0,
                           building_id=b.id) for i, (px, py) in zip(ids, pts))
    radius = max((t.rotor_radius_m for t in assessment.turbines), default=0.0)
    if air_density_kgm3 is None:
        from engine.climate import air
        air_density_kgm3 = air.site_air_density_kgm3(assessment.site)
    need, mast = _clear_mast_m(assessment, extra, float(radius), float(air_density_kgm3),
                               mast_step_m)
    return {"mast_height_m": mast, "min_clear_mast_m": need,
            "rotor_radius_m": np.full(len(pts), float(radius)), "edge_distance_m": edge}
