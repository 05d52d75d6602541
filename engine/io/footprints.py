"""Building footprints from GeoJSON: polygons with heights, in any coordinate reference system,
to blocks on the site's local plan.

An assessor's buildings usually arrive as GIS footprints with a height attribute, in a national
grid or in latitude/longitude. This module reads them (GeoJSON text; shapely for the geometry,
pyproj for the coordinates, both offline), moves every vertex onto the site's **local plan** —
metres east and north of an origin, on a transverse Mercator projection centred on that origin
— and gives each footprint its oriented minimum rectangle, the block the roof-zone model works
with. The true outline is kept beside the block (``Building.outline_xy_m``) for the plan view,
and the ratio of the footprint's area to its rectangle's says how well the block stands for it.

Every bad feature (no geometry, not a polygon, self-intersecting, empty, no or a bad height) is
reported by its index and id with the fix; the good ones are still read.

Notes
-----
The local plan is ``+proj=tmerc +lat_0=φ0 +lon_0=λ0 +k=1 +x_0=0 +y_0=0`` on the WGS 84
datum (so a national grid is shifted to it exactly as to latitude/longitude). Its y axis points
to true north at the origin, so a block's bearing is measured from true north (as
:class:`engine.core.model.Building` expects), not from grid north. Its scale error at a
distance r from the origin is about r² / (2 R²): 3·10⁻⁷ at 5 km (Snyder 1987, *Map
Projections — A Working Manual*, USGS Professional Paper 1395, §8).

A footprint file in a projected CRS and the same footprints in latitude/longitude give the same
plan (to a few centimetres; tested to 0.1 m), because both are carried to the same geographic
origin.
"""
from __future__ import annotations

import json
import math
from dataclasses import dataclass

import numpy as np

from engine.core.errors import InputError, Problems
from engine.core.model import Building

#: Largest footprint file accepted [bytes]; a city district fits well inside.
MAX_FOOTPRINT_BYTES = 100 * 1024 * 1024
#: RFC 7946: GeoJSON coordinates are longitude, latitude on WGS 84 unless a CRS is stated.
GEOJSON_DEFAULT_CRS = "EPSG:4326"


@dataclass(frozen=True)
class LocalPlan:
    """The site's local plan: metres east (x) and north (y) of a geographic origin."""

    origin_lat_deg: float
    origin_lon_deg: float

    def proj4(self) -> str:
        return (f"+proj=tmerc +lat_0={self.origin_lat_deg!r} +lon_0={self.origin_lon_deg!r} "
                "+k=1 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs")

    def _transformer(self, crs, to_local: bool):
        from pyproj import CRS, Transformer
        local = CRS.from_proj4(self.proj4())
        src, dst = (crs_of(crs), local) if to_local else (local, crs_of(crs))
        return Transformer.from_crs(src, dst, always_xy=True)

    def to_local(self, x, y, crs):
        """(x, y) in ``crs`` (longitude, latitude for a geographic CRS) to local metres."""
        return self._transformer(crs, True).transform(np.asarray(x, float), np.asarray(y, float))

    def from_local(self, x_m, y_m, crs):
        """Local metres to (x, y) in ``crs`` (longitude, latitude for a geographic CRS)."""
        return self._transformer(crs, False).transform(np.asarray(x_m, float),
                                                       np.asarray(y_m, float))


def crs_of(crs):
    """A :class:`pyproj.CRS` from text ("EPSG:27700", an OGC URN, WKT) or a CRS; InputError if
    pyproj does not know it."""
    from pyproj import CRS
    from pyproj.exceptions import CRSError
    if isinstance(crs, CRS):
        return crs
    try:
        return CRS.from_user_input(crs)
    except (CRSError, TypeError, ValueError):
        raise InputError([("crs", f"{str(crs)[:80]!r} is not a coordinate reference system "
                                  "known offline; give an EPSG code such as 'EPSG:27700' or "
                                  "'EPSG:4326'")]) from None


@dataclass(frozen=True)
class FootprintSet:
    """Footprints read onto the local plan.

    ``buildings`` are the blocks (oriented minimum rectangles, with the true outline kept);
    ``area_ratio`` is each footprint's area over its rectangle's [-]; ``problems`` lists every
    feature that could not be read, as (where, message); ``crs`` is the input's CRS text.
    """

    buildings: tuple
    area_ratio: tuple
    problems: tuple
    plan: LocalPlan
    crs: str


def oriented_rectangle(polygon):
    """Oriented minimum rectangle of a shapely polygon: centre (x, y), length, width [m] and
    the bearing of the length side clockwise from the plan's north [deg, 0–180)."""
    import shapely
    rect = shapely.oriented_envelope(polygon)
    xy = np.asarray(rect.exterior.coords)[:4]
    edges = np.diff(np.vstack([xy, xy[:1]]), axis=0)
    lengths = np.hypot(edges[:, 0], edges[:, 1])
    i = int(np.argmax(lengths[:2]))
    dx, dy = edges[i]
    bearing = math.degrees(math.atan2(dx, dy)) % 180.0
    centre = rect.centroid
    return (centre.x, centre.y, float(lengths[i]), float(lengths[1 - i]),
            0.0 if bearing >= 180.0 - 1e-9 else bearing)


def _parse(data: bytes) -> dict:
    if len(data) > MAX_FOOTPRINT_BYTES:
        raise InputError([("file", f"is {len(data) / 2**20:.0f} MiB, over the "
                                   f"{MAX_FOOTPRINT_BYTES // 2**20} MiB limit for a footprint "
                                   "file; split the area into parts")])
    try:
        doc = json.loads(data.decode("utf-8-sig"))
    except RecursionError:
        raise InputError([("file", "is nested too deeply (thousands of levels) to be GeoJSON; "
                                   "export the layer as GeoJSON again")]) from None
    except (UnicodeDecodeError, ValueError) as e:
        raise InputError([("file", f"is not GeoJSON text ({type(e).__name__}); export the "
                                   "layer as GeoJSON (UTF-8)")]) from None
    if not isinstance(doc, dict) or doc.get("type") != "FeatureCollection" \
            or not isinstance(doc.get("features"), list):
        raise InputError([("file", "must be a GeoJSON FeatureCollection with a 'features' "
                                   "list")])
    return doc


def _file_crs(doc: dict, crs):
    """The CRS to read the coordinates in: the caller's, else the file's legacy ``crs`` member,
    else RFC 7946's longitude/latitude."""
    if crs:
        return str(crs)
    member = doc.get("crs")
    if isinstance(member, dict) and isinstance(member.get("properties"), dict):
        name = member["properties"].get("name")
        if isinstance(name, str) and name.strip():
            return name
    return GEOJSON_DEFAULT_CRS


def _feature_polygons(i: int, feature, id_field: str | None, problems: Problems):
    """(id, [shapely polygons], properties) of one feature, or None with its problem noted."""
    import shapely.geometry
    where = f"features[{i}]"
    if not isinstance(feature, dict) or not isinstance(feature.get("geometry"), dict):
        problems.add(where, "has no geometry; every footprint needs a Polygon")
        return None
    props = feature.get("properties") if isinstance(feature.get("properties"), dict) else {}
    raw_id = props.get(id_field) if id_field else feature.get("id", props.get("id"))
    fid = str(raw_id).strip() if raw_id is not None and str(raw_id).strip() else f"F{i + 1}"
    shown = fid if len(fid) <= 60 else fid[:60] + "..."  # the id's own check says the rest
    where = f"features[{i}] (id {shown!r})"
    try:
        geom = shapely.geometry.shape(feature["geometry"])
    except (AttributeError, KeyError, TypeError, ValueError, IndexError) as e:
        problems.add(where, f"has a geometry shapely cannot read ({str(e)[:60]}); export it "
                            "again as a Polygon")
        return None
    if geom.is_empty:
        problems.add(where, "has an empty geometry; delete the feature or draw its outline")
        return None
    if geom.geom_type not in ("Polygon", "MultiPolygon"):
        problems.add(where, f"is a {geom.geom_type}, not a Polygon; footprints are areas")
        return None
    if not geom.is_valid:
        reason = shapely.is_valid_reason(geom)
        problems.add(where, f"is not a valid polygon ({reason}); fix the outline (for "
                            "example a self-intersection) in the GIS")
        return None
    parts = list(geom.geoms) if geom.geom_type == "MultiPolygon" else [geom]
    return fid, where, parts, props


def _guarded(read, where: str, problems: Problems, *args):
    """``read(*args)``, or None with a problem noted when the feature is nested so deeply that
    reading it runs out of stack (JSON parses nesting a few hundred deep that shapely and
    ``repr`` then recurse through)."""
    try:
        return read(*args)
    except RecursionError:
        problems.add(where, "is nested too deeply to be a GeoJSON feature (coordinates or "
                            "properties hundreds of levels deep); export the layer again")
        return None


def _height(props: dict, field: str, where: str, problems: Problems):
    value = props.get(field)
    if value is None:
        problems.add(where, f"has no {field!r} property; every footprint needs its height "
                            "[m] (choose the height attribute's name)")
        return None
    try:
        h = float(value)
    except (TypeError, ValueError):
        problems.add(where, f"{field} must be a number of metres, got {str(value)[:40]!r}")
        return None
    if not math.isfinite(h) or h <= 0:
        problems.add(where, f"{field} must be a positive number of metres, got {value!r}")
        return None
    return h


def _roof_from_heights(props, eaves_field, ridge_field, width_m, height_m):
    """Height, roof type and pitch: a ridge above the eaves makes a pitched roof whose slope
    rises across the width (ridge along the length), tan(pitch) = (ridge − eaves) / (width/2)."""
    eaves = props.get(eaves_field) if eaves_field else None
    ridge = props.get(ridge_field) if ridge_field else None
    try:
        eaves, ridge = float(eaves), float(ridge)
    except (TypeError, ValueError):
        return height_m, "flat", 0.0
    if not (math.isfinite(eaves) and math.isfinite(ridge)) or ridge <= eaves or eaves <= 0:
        return height_m, "flat", 0.0
    pitch = math.degrees(math.atan2(ridge - eaves, width_m / 2.0))
    return eaves, "pitched", min(pitch, 60.0)


def read_footprints(data: bytes, *, height_field: str, id_field: str | None = None,
                    crs: str | None = None, eaves_field: str | None = None,
                    ridge_field: str | None = None,
                    origin: tuple[float, float] | None = None) -> FootprintSet:
    """Read GeoJSON footprints onto a local plan.

    Parameters
    ----------
    data : the GeoJSON file's bytes
    height_field : property holding each building's height [m]
    id_field : property holding an id; the feature's ``id`` (or F1, F2, ...) when None
    crs : the coordinates' CRS; the file's ``crs`` member, else longitude/latitude (RFC 7946)
    eaves_field, ridge_field : optional properties; a ridge above the eaves makes a pitched roof
    origin : (latitude, longitude) [deg] of the plan's origin; the footprints' centre when None

    Returns
    -------
    FootprintSet

    Raises
    ------
    InputError
        for a problem with the whole file (not GeoJSON, unknown CRS) or when no feature at all
        can be read; problems with single features are returned in ``problems``.
    """
    import shapely
    doc = _parse(data)
    crs_text = _file_crs(doc, crs)
    crs_obj = crs_of(crs_text)
    problems = Problems()
    read = [r for i, f in enumerate(doc["features"])
            if (r := _guarded(_feature_polygons, f"features[{i}]", problems,
                              i, f, id_field, problems)) is not None]
    if not read:
        problems.add("features", "no footprint could be read")
        problems.raise_if_any()
    if origin is None:
        origin = _centre_lat_lon(read, crs_obj)
    plan = LocalPlan(float(origin[0]), float(origin[1]))
    to_local = plan._transformer(crs_obj, True)
    buildings, ratios, seen = [], [], set()
    for fid, where, parts, props in read:
        h = _guarded(_height, where, problems, props, height_field, where, problems)
        if h is None:
            continue
        for k, part in enumerate(parts):
            bid = fid if len(parts) == 1 else f"{fid}-{k + 1}"
            if bid in seen:
                problems.add(where, f"repeats the id {bid!r}; ids must be unique")
                continue
            local = shapely.transform(
                part, lambda xy: np.column_stack(to_local.transform(xy[:, 0], xy[:, 1])))
            b, ratio = _block(bid, local, props, h, eaves_field, ridge_field, where, problems)
            if b is not None:
                seen.add(bid)
                buildings.append(b)
                ratios.append(ratio)
    return FootprintSet(tuple(buildings), tuple(ratios), tuple(problems.items), plan, crs_text)


def _centre_lat_lon(read, crs_obj) -> tuple[float, float]:
    """Latitude and longitude [deg] of the middle of all vertices' latitude/longitude bounds,
    rounded to 10⁻⁷ deg (1 cm): the same origin whichever CRS the same footprints came in."""
    import shapely
    from pyproj import Transformer
    xy = np.vstack([shapely.get_coordinates(p) for _, _, parts, _ in read for p in parts])
    lon, lat = Transformer.from_crs(crs_obj, "EPSG:4326", always_xy=True).transform(xy[:, 0],
                                                                                    xy[:, 1])
    return (round(float((lat.min() + lat.max()) / 2.0), 7),
            round(float((lon.min() + lon.max()) / 2.0), 7))


def _block(bid, local, props, height_m, eaves_field, ridge_field, where, problems):
    """The Building for one footprint on the plan, and its area ratio; None on a problem."""
    x, y, length, width, bearing = oriented_rectangle(local)
    h, roof, pitch = _roof_from_heights(props, eaves_field, ridge_field, width, height_m)
    ring = np.asarray(local.exterior.coords)[:-1]
    outline = tuple(float(round(v, 3)) for v in ring.ravel())
    try:
        b = Building(id=bid, x_m=round(x, 3), y_m=round(y, 3), length_m=round(length, 3),
                     width_m=round(width, 3), height_m=h, orientation_deg=round(bearing, 4),
                     roof_type=roof, roof_pitch_deg=round(pitch, 2), outline_xy_m=outline)
    except InputError as e:
        for field, msg in e.problems:
            problems.add(f"{where}.{field}", msg)
        return None, None
    return b, float(local.area / (length * width))
