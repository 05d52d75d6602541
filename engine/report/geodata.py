"""The ranked positions and the buildings as GeoJSON, back in the coordinates they came in.

A GIS user maps Perch's answer beside their own layers: every position is a Point with its
best turbine's key figures as properties, every building a Polygon (its true outline where the
site came from footprints, else its block). Coordinates go from the local plan back to the
site's CRS (``site.crs``) through the plan's geographic origin, or to longitude/latitude
(RFC 7946's default) on request. A site drawn by hand has no origin: it is refused with a
message saying which fields to set.
"""
from __future__ import annotations

import json

import numpy as np

from engine.core.errors import InputError
from engine.flow.buildings import building_outline_m
from engine.io.footprints import GEOJSON_DEFAULT_CRS, LocalPlan, crs_of

#: Properties written for each position (its best-ranked row), in this order.
POSITION_PROPERTIES = ("rank", "turbine_id", "hub_height_m", "mean_speed_ms", "aep_kwh",
                       "capacity_factor", "excluded")


def _plan_and_crs(site, lon_lat: bool):
    if site.origin_lat_deg is None or site.origin_lon_deg is None:
        raise InputError([("site.origin_lat_deg", "the site has no geographic origin, so its "
                                                  "plan cannot be placed on a map; import the "
                                                  "buildings from GeoJSON or set "
                                                  "site.origin_lat_deg and site.origin_lon_deg")])
    crs = GEOJSON_DEFAULT_CRS if lon_lat or not site.crs else site.crs
    crs_of(crs)  # an unknown CRS is named before any work
    return LocalPlan(site.origin_lat_deg, site.origin_lon_deg), crs


def _value(v):
    if isinstance(v, (np.floating, float)):
        return None if not np.isfinite(v) else round(float(v), 6)
    if isinstance(v, (np.integer, int)) and not isinstance(v, bool):
        return int(v)
    if isinstance(v, np.bool_):
        return bool(v)
    return v if isinstance(v, (str, bool)) or v is None else str(v)


def _building_rings(assessment, plan, crs):
    """(id, height, ring of (x, y) in ``crs``) per building, outlines where known."""
    out = []
    for b in assessment.buildings:
        xy = building_outline_m(b)
        x, y = plan.from_local(xy[:, 0], xy[:, 1], crs)
        ring = np.column_stack([x, y]).tolist()
        out.append((b.id, b.height_m, ring + [ring[0]]))
    return out


def ranked_geojson(evaluation, lon_lat: bool = False) -> dict:
    """GeoJSON FeatureCollection of the site's positions (best row each) and buildings.

    Parameters
    ----------
    evaluation : :class:`engine.chain.pipeline.Evaluation`
    lon_lat : write longitude/latitude (EPSG:4326) instead of the site's own CRS

    Returns
    -------
    dict
        A FeatureCollection; when the CRS is not longitude/latitude it carries a ``crs``
        member naming it (the form GIS programs read; RFC 7946 itself assumes lon/lat).
    """
    a = evaluation.assessment
    plan, crs = _plan_and_crs(a.site, lon_lat)
    table = evaluation.table.sort_values("rank").drop_duplicates("position_id")
    best = {r["position_id"]: r for r in table.to_dict("records")}
    px = np.array([p.x_m for p in a.positions], float)
    py = np.array([p.y_m for p in a.positions], float)
    gx, gy = plan.from_local(px, py, crs) if len(px) else (px, py)
    features = []
    for p, x, y in zip(a.positions, np.atleast_1d(gx), np.atleast_1d(gy)):
        row = best.get(p.id, {})
        props = {"layer": "position", "position_id": p.id, "kind": p.kind,
                 "building_id": p.building_id}
        props.update({k: _value(row.get(k)) for k in POSITION_PROPERTIES})
        features.append({"type": "Feature", "id": p.id, "properties": props,
                         "geometry": {"type": "Point", "coordinates": [float(x), float(y)]}})
    for bid, height, ring in _building_rings(a, plan, crs):
        features.append({"type": "Feature", "id": bid,
                         "properties": {"layer": "building", "building_id": bid,
                                        "height_m": height},
                         "geometry": {"type": "Polygon", "coordinates": [ring]}})
    doc = {"type": "FeatureCollection", "name": a.site.name, "features": features}
    if crs != GEOJSON_DEFAULT_CRS:
        doc["crs"] = {"type": "name", "properties": {"name": crs}}
    return doc


def ranked_geojson_bytes(evaluation, lon_lat: bool = False) -> bytes:
    """:func:`ranked_geojson` as UTF-8 JSON text (lone surrogates escaped, never an error)."""
    return (json.dumps(ranked_geojson(evaluation, lon_lat), indent=1, ensure_ascii=True)
            + "\n").encode("ascii")


#: Properties written for each screened position, in this order.
SCREENED_POSITION_PROPERTIES = ("building_id", "suitability", "reasons", "best_turbine_id",
                                "best_aep_kwh", "best_capacity_factor", "mast_height_m",
                                "hub_height_m", "mean_speed_ms")
#: Properties written for each screened building (from its best position), in this order.
SCREENED_BUILDING_PROPERTIES = ("rank", "n_positions", "position_id", "suitability",
                                "best_turbine_id", "best_aep_kwh", "best_capacity_factor")


def screened_geojson(screened, lon_lat: bool = False) -> dict:
    """GeoJSON FeatureCollection of a footprint screening: every position, every building.

    Parameters
    ----------
    screened : :class:`engine.screening.positions.FootprintScreening`
    lon_lat : write longitude/latitude (EPSG:4326) instead of the footprint file's own CRS

    Returns
    -------
    dict
        Positions as Points (class, reasons, best turbine and AEP, mast), buildings as
        Polygons of their footprint outline with their best position's figures; a ``crs``
        member names the CRS when it is not longitude/latitude.

    Notes
    -----
    Coordinates go from the local plan to the CRS by pyproj (``LocalPlan.from_local``), the
    inverse of the transform the footprints were read with.
    """
    if screened.plan is None:
        raise InputError([("footprints", "the screening has no geographic plan; screen a "
                                         "GeoJSON footprint file")])
    crs = GEOJSON_DEFAULT_CRS if lon_lat or not screened.crs else screened.crs
    plan = screened.plan
    pos = screened.positions
    features = []
    if len(pos):
        gx, gy = plan.from_local(pos["x_m"].to_numpy(float), pos["y_m"].to_numpy(float), crs)
        cols = {k: pos[k].tolist() for k in ("position_id",) + SCREENED_POSITION_PROPERTIES}
        for i, (x, y) in enumerate(zip(np.atleast_1d(gx), np.atleast_1d(gy))):
            props = {"layer": "position", "position_id": cols["position_id"][i]}
            props.update({k: _value(cols[k][i]) for k in SCREENED_POSITION_PROPERTIES})
            features.append({"type": "Feature", "id": cols["position_id"][i],
                             "properties": props,
                             "geometry": {"type": "Point",
                                          "coordinates": [float(x), float(y)]}})
    best = {r["building_id"]: r for r in screened.buildings.to_dict("records")}
    for b in screened.footprints:
        xy = building_outline_m(b)
        x, y = plan.from_local(xy[:, 0], xy[:, 1], crs)
        ring = np.column_stack([x, y]).tolist()
        row = best.get(b.id, {})
        props = {"layer": "building", "building_id": b.id, "height_m": b.height_m}
        props.update({k: _value(row.get(k)) for k in SCREENED_BUILDING_PROPERTIES})
        features.append({"type": "Feature", "id": b.id, "properties": props,
                         "geometry": {"type": "Polygon", "coordinates": [ring + [ring[0]]]}})
    doc = {"type": "FeatureCollection", "name": "screened footprints", "features": features}
    if crs != GEOJSON_DEFAULT_CRS:
        doc["crs"] = {"type": "name", "properties": {"name": crs}}
    return doc


def screened_geojson_bytes(screened, lon_lat: bool = False) -> bytes:
    """:func:`screened_geojson` as UTF-8 JSON text (lone surrogates escaped)."""
    return (json.dumps(screened_geojson(screened, lon_lat), indent=1, ensure_ascii=True)
            + "\n").encode("ascii")
