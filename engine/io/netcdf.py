"""Gridded reanalysis series from a NetCDF file: the grid cell nearest a latitude/longitude.

The file is read with xarray's built-in scipy backend (NetCDF3 classic / 64-bit offset), so no
extra binary library is needed and nothing is fetched at run time. The wind is taken from
either an eastward/northward pair (``u10``/``v10``, ``u100``/``v100``, ``u``/``v``, or any
variables whose ``standard_name`` is ``eastward_wind``/``northward_wind``) or a speed and
direction pair (``ws``/``wd``, ``wind_speed``/``wind_from_direction``...). The result is an
:class:`engine.io.records.Record` like any imported CSV, ready for quality control and the
long-term correction.

Notes
-----
From the components, speed V = √(u² + v²) and the direction the wind comes FROM
θ = atan2(−u, −v) in degrees clockwise from north (meteorological convention, WMO).
The nearest cell minimises the great-circle (haversine) distance; longitudes on 0..360 or
−180..180 are both handled.
"""
from __future__ import annotations

import hashlib
import io
from dataclasses import replace
from pathlib import Path

import numpy as np

from engine.core.errors import InputError, Problems, check_range
from engine.io.records import record_from_arrays

#: Largest NetCDF file accepted [bytes].
MAX_NETCDF_BYTES = 200 * 1024 * 1024
_U_NAMES = ("u10", "u100", "u", "uas", "eastward_wind")
_V_NAMES = ("v10", "v100", "v", "vas", "northward_wind")
_SPEED_NAMES = ("ws", "wspd", "wind_speed", "speed", "si10", "sfcwind")
_DIR_NAMES = ("wd", "wdir", "wind_direction", "wind_from_direction", "direction")
_LAT_NAMES = ("latitude", "lat", "nav_lat", "y")
_LON_NAMES = ("longitude", "lon", "nav_lon", "x")
_EARTH_RADIUS_KM = 6371.0


def _open(data, where):
    import xarray as xr
    try:
        src = io.BytesIO(data) if isinstance(data, (bytes, bytearray)) else str(data)
        return xr.open_dataset(src, engine="scipy")
    except Exception as e:  # any parse failure is a bad file, reported with its reason
        raise InputError([(where, "is not a readable NetCDF3 file (classic or 64-bit offset; "
                                  "convert NetCDF4/HDF5 files with 'nccopy -k classic'): "
                                  f"{type(e).__name__}: {str(e)[:160]}")]) from None


def _find(ds, names, standard_name=None):
    lower = {str(k).lower(): k for k in list(ds.variables)}
    for n in names:
        if n in lower:
            return lower[n]
    if standard_name:
        for k, var in ds.variables.items():
            if var.attrs.get("standard_name") == standard_name:
                return k
    return None


def nearest_cell(lat_grid, lon_grid, lat_deg: float, lon_deg: float):
    """Index of the grid point nearest (lat, lon) and its distance [km].

    Parameters
    ----------
    lat_grid, lon_grid : grid latitudes and longitudes [deg], same shape (or broadcastable)
    lat_deg, lon_deg : the site [deg]

    Notes
    -----
    Haversine: d = 2 R asin √(sin²(Δφ/2) + cos φ1 cos φ2 sin²(Δλ/2)), R = 6371 km.
    """
    la, lo = np.broadcast_arrays(np.asarray(lat_grid, float), np.asarray(lon_grid, float))
    p1, p2 = np.deg2rad(lat_deg), np.deg2rad(la)
    dl = np.deg2rad(np.mod(lo - lon_deg + 180.0, 360.0) - 180.0)
    h = np.sin((p2 - p1) / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin(dl / 2) ** 2
    d = 2 * _EARTH_RADIUS_KM * np.arcsin(np.sqrt(np.clip(h, 0, 1)))
    i = np.unravel_index(int(np.nanargmin(d)), d.shape)
    return i, float(d[i])


def _wind_variables(ds, where):
    u, v = _find(ds, _U_NAMES, "eastward_wind"), _find(ds, _V_NAMES, "northward_wind")
    sp, dr = _find(ds, _SPEED_NAMES, "wind_speed"), _find(ds, _DIR_NAMES, "wind_from_direction")
    if u is not None and v is not None:
        return ("uv", u, v)
    if sp is not None and dr is not None:
        return ("sd", sp, dr)
    raise InputError([(where, "has no wind variables: need eastward/northward components "
                              "(u10 and v10, or standard_name eastward_wind/northward_wind) or "
                              "speed and direction (ws and wd); found "
                              + ", ".join(map(str, ds.data_vars)))])


def _series_at(ds, name, lat_name, lon_name, cell):
    """One variable at the chosen cell as a 1-D array over time."""
    var = ds[name]
    lat_dims, lon_dims = ds[lat_name].dims, ds[lon_name].dims
    if lat_dims == lon_dims:           # 2-D curvilinear grid
        sel = dict(zip(lat_dims, cell))
    else:                              # 1-D latitude and longitude axes
        sel = {lat_dims[0]: cell[0], lon_dims[0]: cell[1]}
    out = var.isel({k: v for k, v in sel.items() if k in var.dims}).squeeze()
    return np.asarray(out.values, float).reshape(-1)


def read_reanalysis(data, lat_deg: float, lon_deg: float, file_name: str = "reanalysis.nc",
                    max_km: float = 100.0):
    """The wind series of the grid cell nearest (lat, lon) as a Record.

    Parameters
    ----------
    data : bytes of the file, or a path
    lat_deg, lon_deg : the site's latitude and longitude [deg]
    file_name : name shown in messages and kept with the climate
    max_km : refuse a nearest cell farther than this [km]

    Returns
    -------
    (Record, dict)
        The series (speed m/s, direction deg, UTC ns) and where it came from:
        ``cell_lat_deg``, ``cell_lon_deg``, ``distance_km``, ``variables``.

    Raises
    ------
    InputError
        Unreadable file, no time or wind variables, site off the grid, bad latitude/longitude.
    """
    p = Problems()
    check_range(p, "lat_deg", lat_deg, -90, 90, "deg")
    check_range(p, "lon_deg", lon_deg, -180, 360, "deg")
    p.raise_if_any()
    where = file_name or "reanalysis"
    if not isinstance(data, (bytes, bytearray)):
        path = Path(data)
        if not path.is_file():
            raise InputError([(where, "no such file; give the path of a NetCDF file")])
        if path.stat().st_size > MAX_NETCDF_BYTES:
            raise InputError([(where, f"must be at most {MAX_NETCDF_BYTES // 2**20} MB, got "
                                      f"{path.stat().st_size / 2**20:.0f} MB; cut the file "
                                      "to the cells around the site")])
        data = path.read_bytes()
    ds = _open(data, where)
    try:
        rec, info = _read_open(ds, where, float(lat_deg), float(lon_deg), max_km, file_name)
    finally:
        ds.close()
    return replace(rec, sha256=hashlib.sha256(bytes(data)).hexdigest()), info


def _time_ns(ds, where):
    tname = _find(ds, ("time", "valid_time", "t"))
    if tname is None:
        raise InputError([(where, "has no time variable (time or valid_time)")])
    t = np.asarray(ds[tname].values)
    if not np.issubdtype(t.dtype, np.datetime64):
        raise InputError([(f"{where}.{tname}", "must have CF time units ('hours since "
                                               f"1970-01-01'), got {ds[tname].attrs.get('units')!r}")])
    return t.astype("datetime64[ns]").astype(np.int64)


def _read_open(ds, where, lat_deg, lon_deg, max_km, file_name):
    lat_name, lon_name = _find(ds, _LAT_NAMES), _find(ds, _LON_NAMES)
    if lat_name is None or lon_name is None:
        raise InputError([(where, "has no latitude/longitude coordinates (lat, lon)")])
    t = _time_ns(ds, where)
    la, lo = np.asarray(ds[lat_name].values, float), np.asarray(ds[lon_name].values, float)
    grid_lat, grid_lon = (la, lo) if la.shape == lo.shape and la.ndim == 2 else np.meshgrid(
        la, lo, indexing="ij")
    cell, dist = nearest_cell(grid_lat, grid_lon, lat_deg, lon_deg)
    if dist > max_km:
        raise InputError([("lat_deg", f"the nearest grid cell of {where} is {dist:.0f} km from "
                                      f"({lat_deg:g}, {lon_deg:g}), more than {max_km:g} km; "
                                      "check the latitude/longitude or the file")])
    kind, a, b = _wind_variables(ds, where)
    x, y = (_series_at(ds, n, lat_name, lon_name, cell) for n in (a, b))
    if x.shape != t.shape:
        raise InputError([(f"{where}.{a}", f"must have one value per time ({t.size}) at the "
                                           f"cell, got {x.size}")])
    if kind == "uv":
        speed, direction = np.hypot(x, y), np.mod(np.rad2deg(np.arctan2(-x, -y)), 360.0)
    else:
        speed, direction = x, np.mod(y, 360.0)
    order = np.argsort(t, kind="stable")
    rec = record_from_arrays(t[order], speed[order], direction[order], file_name=file_name)
    info = {"cell_lat_deg": float(grid_lat[cell]), "cell_lon_deg": float(grid_lon[cell]),
            "distance_km": dist, "variables": [str(a), str(b)], "records": int(t.size)}
    return rec, info
