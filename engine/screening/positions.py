"""Screening from GIS footprints: candidate positions on every roof, the best one per building.

A GeoJSON footprint file (:func:`engine.io.footprints.read_footprints`: polygons with a height,
in any CRS, onto a local plan, each footprint as its oriented rectangle) becomes a buildings
table, which the screening takes as it takes a CSV (surroundings, classes and ranking
unchanged). Each roof then gets candidate positions (:func:`engine.flow.roof_candidates.
roof_candidate_arrays`: the centre and, with a spacing, a grid set back from the edges), each
with its own mast, the shortest that keeps the largest carried rotor clear of the roof's
high-turbulence zone (:func:`engine.screening.compute.screen_chunk`, the screening's own mast
search and the chain's array entry). The output is a table per position and a table per
building holding its best position (best class, then the larger net AEP, then the position id).
Both passes run on any engine (:func:`screen_footprints`' ``client`` and ``tile_m``) with the
same results: the candidates go in the file's order, in the same chunks everywhere.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from engine.climate import air
from engine.core.errors import InputError
from engine.flow.roof_candidates import DEFAULT_SETBACK_M, roof_candidate_arrays
from engine.screening.compute import screen_chunk, suitability
from engine.screening.merge import descending_aep_key, ranking_order
from engine.screening.neighbourhood import SURROUNDINGS_FROM
from engine.screening.settings import CLASSES, ScreeningContext
from engine.screening.tiles import combine_blocks, sector_surroundings

#: Building columns a position row carries from its block.
BLOCK_FIELDS = ("x_m", "y_m", "length_m", "width_m", "height_m", "orientation_deg",
                "roof_type", "roof_pitch_deg", "parapet_height_m")
#: Surroundings columns of the screened table a position inherits from its building.
SURROUNDINGS_FIELDS = ("plan_area_fraction", "frontal_area_fraction", "surroundings_height_m",
                       "roughness_m", "displacement_m", "surroundings_from")


@dataclass(frozen=True)
class FootprintScreening:
    """Per position and per building (its best position) results of a footprint screening."""

    positions: pd.DataFrame
    buildings: pd.DataFrame
    problems: tuple  # (where, message) of the features that could not be read
    n_features: int
    #: The file's local plan (:class:`engine.io.footprints.LocalPlan`) and CRS text, and the
    #: buildings read (with their outlines), for maps of the answer.
    plan: object = None
    crs: str = ""
    footprints: tuple = ()


#: Columns a position gets when the plan's geographic origin is known: longitude and
#: latitude (WGS 84) [deg], and x, y in the footprint file's own CRS (its units).
GEO_COLUMNS = ("longitude_deg", "latitude_deg", "crs_x", "crs_y")


def with_coordinates(positions: pd.DataFrame, plan, crs: str) -> pd.DataFrame:
    """``positions`` with :data:`GEO_COLUMNS` inserted after ``y_m``.

    Parameters
    ----------
    positions : rows with plan ``x_m``, ``y_m`` [m] on ``plan``
    plan : :class:`engine.io.footprints.LocalPlan` (its transverse Mercator about the origin)
    crs : the footprint file's CRS (any pyproj knows)

    Notes
    -----
    Both by pyproj from the local plan (``LocalPlan.from_local``), the inverse of the
    transform the footprints were read with, so a position is where the file put it.
    """
    x = positions["x_m"].to_numpy(float)
    y = positions["y_m"].to_numpy(float)
    lon, lat = plan.from_local(x, y, "EPSG:4326")
    cx, cy = plan.from_local(x, y, crs)
    out = positions.copy()
    at = list(out.columns).index("y_m") + 1
    for k, (name, v) in enumerate(zip(GEO_COLUMNS, (lon, lat, cx, cy))):
        out.insert(at + k, name, np.asarray(v, float))
    return out


def footprint_frame(footprints) -> pd.DataFrame:
    """A screening buildings table (DataFrame) from a :class:`~engine.io.footprints.FootprintSet`."""
    b = footprints.buildings
    return pd.DataFrame({
        "id": [x.id for x in b], "x_m": [x.x_m for x in b], "y_m": [x.y_m for x in b],
        "length_m": [x.length_m for x in b], "width_m": [x.width_m for x in b],
        "height_m": [x.height_m for x in b], "orientation_deg": [x.orientation_deg for x in b],
        "roof_type": [x.roof_type for x in b], "roof_pitch_deg": [x.roof_pitch_deg for x in b],
        "parapet_height_m": [x.parapet_height_m for x in b]})


def _position_rows(table: pd.DataFrame, spacing_m, setback_m):
    """(rows, sur) dicts of (N,) arrays for every candidate on the screened buildings."""
    blk, u, v = roof_candidate_arrays(table["length_m"].to_numpy(float),
                                      table["width_m"].to_numpy(float), spacing_m, setback_m)
    take = lambda c: table[c].to_numpy()[blk]  # noqa: E731
    rows = {c: take(c) for c in BLOCK_FIELDS}
    rows["roof_type"] = np.asarray(rows["roof_type"], object)
    rows.update(u_m=u, v_m=v, zone=np.asarray(take("zone"), object))
    ids = table["id"].to_numpy(object)[blk]
    within = np.arange(blk.size) - np.searchsorted(blk, blk)
    rows["building_id"] = ids
    rows["id"] = np.array([f"{i}-p{k}" for i, k in zip(ids, within)], dtype=object)
    sur = {c: take(c) for c in SURROUNDINGS_FIELDS}
    sur["surroundings_from"] = np.asarray(sur["surroundings_from"], object)
    return rows, sur, blk


def _position_inputs(table: pd.DataFrame, ctx: ScreeningContext, spacing_m, setback_m,
                     blocks_frame):
    """(rows, sur, blocks): every candidate's (N,) arrays in the table's line order, its
    building's surroundings, and the buildings for per-sector surroundings (or None)."""
    # In the file's order whatever order an engine ranked the buildings in, so the chunks,
    # and with them every number, are the same on every engine.
    table = table.sort_values("line", kind="stable") if "line" in table.columns else table
    rows, sur, _ = _position_rows(table, spacing_m, setback_m)
    blocks = None
    if ctx.transfer.sector_morphometry and blocks_frame is not None:
        blocks = combine_blocks([blocks_frame[["x_m", "y_m", "length_m", "width_m", "height_m",
                                               "orientation_deg"]].astype(float)])
        # The building's own sectors are found again per chunk (the screened table keeps
        # only their means).
        src = sur["surroundings_from"]
        sur["surroundings_from"] = np.where(src == SURROUNDINGS_FROM[4], SURROUNDINGS_FROM[0],
                                            src)
    # The plan position of each candidate from its block's axes (u along the length).
    phi = np.radians(np.asarray(rows["orientation_deg"], float))
    rows["px_m"] = rows["x_m"] + rows["u_m"] * np.sin(phi) + rows["v_m"] * np.cos(phi)
    rows["py_m"] = rows["y_m"] + rows["u_m"] * np.cos(phi) - rows["v_m"] * np.sin(phi)
    return rows, sur, blocks


def position_chunk(rows: dict, sur: dict, ctx: ScreeningContext, blocks=None) -> pd.DataFrame:
    """The result rows of one chunk of candidates (the frame of :func:`screen_positions`).

    Per-sector surroundings from ``blocks`` (when given), then
    :func:`engine.screening.compute.screen_chunk` (the upwind wakes too, when the settings
    ask for them) and the class (:func:`engine.screening.compute.suitability`). Each row's
    numbers depend on that row alone; the chunk is the unit of work of both engines.
    """
    if blocks is not None and len(rows["id"]):
        sur = sector_surroundings(rows, sur, blocks, ctx.site, ctx.transfer,
                                  len(ctx.climates[""].frequency))
    got = _screened(rows, sur, ctx, blocks if ctx.settings.upwind_shelter else None)
    net, cf = got["net_kwh"], got["capacity_factor"]
    carried = np.isfinite(net).any(axis=1)
    best = np.argmax(np.where(np.isfinite(net), net, -np.inf), axis=1)
    n = len(best)
    best_aep, best_cf = net[np.arange(n), best], cf[np.arange(n), best]
    flat = {k: (v.mean(axis=1) if np.ndim(v) == 2 else v) for k, v in sur.items()
            if not k.startswith("sector_")}
    if "sector_displacement_m" in sur:
        flat["displacement_m"] = sur["sector_displacement_m"].max(axis=1)
    code, reasons = suitability(best_cf, got["mast_height_m"], got["hub_height_m"], flat, rows,
                                ctx, mean_speed_ms=got["mean_speed_ms"], carried=carried,
                                shelter_factor=got["shelter_factor"])
    ids = np.asarray([t.id for t in ctx.turbines], dtype=object)[best]
    ids[~carried] = ""
    out = {"position_id": rows["id"], "building_id": rows["building_id"],
           "x_m": rows["px_m"], "y_m": rows["py_m"],
           "u_m": rows["u_m"], "v_m": rows["v_m"], "min_clear_mast_m": got["min_clear_mast_m"],
           "mast_height_m": got["mast_height_m"], "hub_height_m": got["hub_height_m"],
           "mean_speed_ms": got["mean_speed_ms"], "shelter_factor": got["shelter_factor"],
           "suitability_code": code,
           "suitability": np.asarray(CLASSES, dtype=object)[code], "reasons": reasons,
           "best_turbine_id": ids, "best_aep_kwh": best_aep, "best_capacity_factor": best_cf}
    for j, t in enumerate(ctx.turbines):
        out[f"aep_kwh_{t.id}"] = net[:, j]
    return pd.DataFrame(out)


def screen_positions(table: pd.DataFrame, ctx: ScreeningContext, spacing_m=None,
                     setback_m: float = DEFAULT_SETBACK_M, blocks_frame=None,
                     client=None) -> pd.DataFrame:
    """Screen candidate positions on the roofs of an already screened buildings table.

    Parameters
    ----------
    table : the table of a buildings screening (:func:`engine.screening.screen_local`, the
        Dask or the tiled engine): its surroundings
    ctx : the context it was screened with (one climate: the default zone's)
    spacing_m, setback_m : candidate grid (:func:`engine.flow.roof_candidates.
        roof_candidate_arrays`); only the roof centres when ``spacing_m`` is None
    blocks_frame : the buildings table itself, for per-sector surroundings
        (``transfer.sector_morphometry``): each position takes its building's sectors
    client : a ``distributed.Client``: the chunks of ``ctx.settings.chunk_rows`` candidates
        are screened on its workers, one task each (:func:`position_chunk`); here otherwise.
        The chunks are the same either way, so are the results.

    Returns
    -------
    DataFrame, one row per position in the table's line order: ``position_id``,
    ``building_id``, plan ``x_m``, ``y_m``, offsets ``u_m``, ``v_m`` in the block's axes,
    ``mast_height_m``, ``hub_height_m``, ``mean_speed_ms``, ``suitability``, ``reasons``,
    ``best_turbine_id``, ``best_aep_kwh``, ``best_capacity_factor`` and ``aep_kwh_<turbine>``
    """
    if "" not in ctx.climates:
        raise InputError([("climate", "footprint screening needs a default climate (footprints "
                                      "carry no zone); give --climate FILE")])
    rows, sur, blocks = _position_inputs(table, ctx, spacing_m, setback_m, blocks_frame)
    n, step = len(rows["id"]), int(ctx.settings.chunk_rows)
    cut = [slice(a, min(a + step, n)) for a in range(0, n, step)] or [slice(0, 0)]
    parts = [({k: v[sl] for k, v in rows.items()}, {k: v[sl] for k, v in sur.items()})
             for sl in cut]
    if client is None:
        return pd.concat([position_chunk(r, s, ctx, blocks) for r, s in parts],
                         ignore_index=True)
    import dask
    # The context and the buildings go into the graph once, not once per task.
    shared = [dask.delayed(v, traverse=False) for v in (ctx, blocks)]
    futures = client.compute([dask.delayed(position_chunk)(r, s, *shared) for r, s in parts])
    return pd.concat(client.gather(futures), ignore_index=True)


def _screened(rows, sur, ctx, blocks=None):
    """:func:`engine.screening.compute.screen_chunk` of one chunk (one climate); empty
    arrays for no rows."""
    T = len(ctx.turbines)
    if len(rows["id"]) == 0:
        out = {k: np.empty(0) for k in ("min_clear_mast_m", "mast_height_m", "hub_height_m",
                                        "mean_speed_ms", "shelter_factor")}
        out.update(net_kwh=np.empty((0, T)), capacity_factor=np.empty((0, T)))
        return out
    rho = air.site_air_density_kgm3(ctx.site)
    return screen_chunk(rows, sur, ctx.climates[""], rho, ctx, blocks)


def best_per_building(positions: pd.DataFrame) -> pd.DataFrame:
    """Each building's best position: best class, then larger net AEP, then position id.

    Returns the position rows (one per building), ranked the same way, ``rank`` from 1.
    """
    order = ranking_order(positions["suitability_code"].to_numpy(np.int64),
                          descending_aep_key(positions["best_aep_kwh"].to_numpy(float)),
                          positions["position_id"].to_numpy(object))
    ranked = positions.take(order)
    best = ranked[~ranked["building_id"].duplicated()].reset_index(drop=True)
    best.insert(0, "rank", np.arange(1, len(best) + 1, dtype=np.int64))
    best.insert(2, "n_positions", positions.groupby("building_id").size()
                .reindex(best["building_id"]).to_numpy())
    return best


def screen_footprints(data: bytes, ctx: ScreeningContext, *, height_field: str,
                      id_field=None, crs=None, spacing_m=None,
                      setback_m: float = DEFAULT_SETBACK_M, client=None,
                      tile_m=None) -> FootprintScreening:
    """Screen a GeoJSON footprint file: every building, candidate positions on every roof.

    Parameters
    ----------
    data : the file's bytes
    ctx : climate, turbines and settings (its default climate serves every footprint)
    height_field, id_field, crs : as :func:`engine.io.footprints.read_footprints`
    spacing_m, setback_m : candidate grid on each roof [m]; only the centre when None
    client : a ``distributed.Client``: the buildings are screened as Dask partitions
        (:func:`engine.screening.screen_dask`) and the candidates one chunk per task
        (:func:`screen_positions`) on its workers
    tile_m : side of square tiles [m] for the buildings' pass
        (:func:`engine.screening.tiled.screen_tiled`, halo the sector fetch; needs
        ``transfer.sector_morphometry``), on ``client`` when given

    Returns
    -------
    :class:`FootprintScreening`; the features that could not be read are listed in
    ``problems`` with their fix (the rest are screened). The numbers are the same on every
    engine and for any tile size: the surroundings are the same to the last bit, and the
    candidates are screened in the same chunks.
    """
    from engine.io.footprints import read_footprints
    fs = read_footprints(data, height_field=height_field, id_field=id_field, crs=crs)
    frame = footprint_frame(fs)
    res = _screen_buildings(frame, ctx, client, tile_m)
    pos = screen_positions(res.table, ctx, spacing_m, setback_m, blocks_frame=frame,
                           client=client)
    pos = with_coordinates(pos, fs.plan, fs.crs)
    return FootprintScreening(positions=pos, buildings=best_per_building(pos),
                              problems=tuple(fs.problems) + tuple(res.problems),
                              n_features=len(fs.buildings), plan=fs.plan, crs=fs.crs,
                              footprints=tuple(fs.buildings))


def _screen_buildings(frame: pd.DataFrame, ctx: ScreeningContext, client, tile_m):
    """The buildings' pass on the engine asked for: tiled, Dask or local."""
    if tile_m is not None:
        from engine.screening.tiled import check_tile_size, screen_tiled
        if not ctx.transfer.sector_morphometry:
            raise InputError([("tile_m", f"needs per-sector surroundings "
                                         f"(transfer.sector_morphometry; the halo is the sector "
                                         f"fetch), got tiles of {tile_m} m with them off; turn "
                                         "them on or leave the tiles out")])
        tile = check_tile_size(tile_m, ctx.transfer.sector_fetch_m, "tile_m")
        return screen_tiled(frame, ctx, tile_m=tile, client=client)
    if client is not None:
        from engine.screening.dask_engine import screen_dask
        return screen_dask(frame, ctx, client)
    from engine.screening.local import screen_local
    return screen_local(frame, ctx)
