"""Screening a part: mast, effective climate and yield of every building, then its class.

The per-chunk computation of a screening run. Both engines (:mod:`engine.screening.local`,
:mod:`engine.screening.dask_engine`) call :func:`screen_part` on each checked part. The chain
itself — the climate at each hub over the building's own surroundings, the roof flow, the yield
of every turbine — is :mod:`engine.chain.arrays`, the entry point the detailed assessment's
:func:`engine.chain.pipeline.energy_table` shares; this module adds only the screening's own
choices: one roof position at the centre, the mast that clears the roof's turbulence zone, the
suitability class and its reasons.

Array shapes: N buildings, S sectors, T turbines.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.chain import arrays as chain_arrays
from engine.climate import air
from engine.screening.checks import good_rows
from engine.screening.merge import rank_key_arrays, ranking_order
from engine.screening.neighbourhood import Neighbourhood, surroundings
from engine.screening.settings import CLASSES, ScreeningContext
from engine.screening.tiles import sector_surroundings, upwind_shelter

#: Per-sector surroundings (N, S) -> the chain's terrain keys.
SECTOR_TERRAIN = {"roughness_m": "sector_roughness_m", "displacement_m": "sector_displacement_m",
                  "frontal_area_fraction": "sector_frontal_area_fraction",
                  "surroundings_height_m": "sector_height_m"}

#: Output columns before the per-turbine ones, in order.
RESULT_COLUMNS = ("rank", "id", "line", "zone", "suitability", "reasons", "best_turbine_id",
                  "best_aep_kwh", "best_capacity_factor", "x_m", "y_m", "length_m", "width_m",
                  "height_m", "orientation_deg", "roof_type", "roof_pitch_deg", "parapet_height_m",
                  "plan_area_fraction", "frontal_area_fraction", "surroundings_height_m",
                  "roughness_m", "displacement_m", "surroundings_from", "min_clear_mast_m",
                  "mast_height_m", "hub_height_m", "mean_speed_ms", "turbulence_intensity")




def choose_mast_m(rows, sur: dict, climate, air_density_kgm3, ctx, geometry=None,
                  return_main: bool = False, rotor_radius_m=None):
    """Mast for each roof centre: clear of the turbulence zone with the largest chosen rotor [m].

    The hub at the zone's top plus the rotor radius (``rotor_radius_m`` per row, default the
    largest chosen rotor's), rounded up to the settings' step,
    at least the 0.5 m a position allows and at most 60 m. With ``return_main``, also the
    (P, S) main energy sectors, or None when they depend on the mast.

    Notes
    -----
    The main energy sectors are found at a first mast (rotor radius + 1 m). When the Weibull
    shape changes with height they depend on the hub height, so the clearance is found once
    more at the mast the first pass gives; otherwise every sector's scale changes by the same
    factor with height and the sectors stay the same, at this mast and at any other.
    """
    n = len(rows["height_m"])
    r = np.broadcast_to(np.asarray(ctx.rotor_radius_m if rotor_radius_m is None
                                   else rotor_radius_m, float), (n,))
    step = ctx.settings.mast_step_m
    mast = r + 1.0
    if geometry is None:
        geometry = chain_arrays.roof_geometry(rows, np.asarray(climate.sector_deg, float))
    varies = ctx.transfer.adjust_shape_with_height
    for _ in range(2 if varies else 1):
        need, main = chain_arrays.roof_climate(rows, sur, mast, climate, air_density_kgm3,
                                               ctx.transfer, clearance_only=True,
                                               geometry=geometry)
        mast = np.clip(np.ceil(np.round((need + r) / step, 9)) * step, 0.5, 60.0)
    mast = np.round(mast, 6)
    if return_main:
        return mast, (None if varies else main)
    return mast
def turbine_columns(turbines) -> list:
    """Per-turbine result columns: ``aep_kwh_<id>``, ``capacity_factor_<id>`` for each."""
    return [f"{name}_{t.id}" for t in turbines for name in ("aep_kwh", "capacity_factor")]


def result_columns(turbines) -> list:
    """All result columns, in order."""
    return list(RESULT_COLUMNS) + ["suitability_code"] + turbine_columns(turbines)


def empty_result(ctx: ScreeningContext) -> pd.DataFrame:
    cols = result_columns(ctx.turbines)
    text = {"id", "zone", "suitability", "reasons", "best_turbine_id", "roof_type",
            "surroundings_from"}
    data = {}
    for c in cols:
        if c in text:
            data[c] = pd.Series([], dtype=object)
        elif c in ("rank", "line", "suitability_code"):
            data[c] = pd.Series([], dtype=np.int64)
        else:
            data[c] = pd.Series([], dtype=float)
    return pd.DataFrame(data)[cols]



def roof_carries(rows, turbines, settings) -> np.ndarray:
    """(n, T) bool: the roof is wide enough for each turbine's rotor.

    Notes
    -----
    D_t <= f · min(L, W), f = ``settings.max_rotor_to_roof_side`` (a derived, conservative
    assumption; see :class:`engine.screening.settings.ScreeningSettings`).
    """
    side = np.minimum(np.asarray(rows["length_m"], float), np.asarray(rows["width_m"], float))
    diameter = np.array([float(t.rotor_diameter_m) for t in turbines])
    return diameter[None, :] <= settings.max_rotor_to_roof_side * side[:, None] + 1e-9


def _phrases(combo: np.ndarray, by_cf, extra) -> np.ndarray:
    """Reasons text of each row from its combination code: the capacity-factor phrase (3 low
    bits) and the extra phrases (one bit each). Each combination present is written once and
    its rows share it (no text work per row)."""
    # The combinations present, by counting (small codes; no sort of every row's code).
    uniq = np.flatnonzero(np.bincount(combo, minlength=1))
    where = np.zeros(int(uniq[-1]) + 1 if len(uniq) else 1, np.int64)
    where[uniq] = np.arange(len(uniq))
    phrases = np.empty(len(uniq), dtype=object)
    for i, u in enumerate(uniq):
        parts = [by_cf[u & 7]] + [w for bit, (_, w) in enumerate(extra) if u >> (3 + bit) & 1]
        phrases[i] = "; ".join(parts)
    return phrases[where[combo].ravel()]


def suitability(best_cf, mast_m, hub_m, sur: dict, rows, ctx: ScreeningContext,
                mean_speed_ms=None, carried=None, shelter_factor=None):
    """Suitability class code (index into :data:`CLASSES`) and reasons text per building.

    Notes
    -----
    By the best carried turbine's net capacity factor against the settings' thresholds; a
    building is unsuitable whatever its yield when the mast it needs is above the ranking's
    mast limit or above the settings' fraction of the building's height, when the hub would
    sit at or below the surroundings' displacement height, when the mean hub speed is below
    the settings' floor, or when no chosen turbine's rotor fits the roof. A reason says when
    the upwind neighbours' wakes (``shelter_factor`` below 0.9) slow the wind at the hub.
    """
    st = ctx.settings
    limit = ctx.ranking.max_mast_height_m
    n = len(best_cf)
    height = np.asarray(rows["height_m"], float)
    speed = np.full(n, np.inf) if mean_speed_ms is None else np.asarray(mean_speed_ms, float)
    none_fits = np.zeros(n, bool) if carried is None else ~np.asarray(carried, bool)
    cf_code = np.where(none_fits, 4, np.where(best_cf >= st.cf_exceptional_from, 0,
                       np.where(best_cf >= st.cf_marginal_below, 1,
                                np.where(best_cf >= st.cf_unsuitable_below, 2, 3))))
    pct = lambda v: f"{v * 100:g} %"  # noqa: E731 - a label, formatted once per run
    by_cf = np.array([
        f"capacity factor {pct(st.cf_exceptional_from)} or more: rare for roof mounts in field "
        "trials; measure on the roof before relying on it",
        f"capacity factor {pct(st.cf_marginal_below)} to {pct(st.cf_exceptional_from)}: worth "
        "a visit and a measurement",
        f"capacity factor {pct(st.cf_unsuitable_below)} to {pct(st.cf_marginal_below)}: typical "
        "of building-mounted turbines in field trials",
        f"capacity factor below {pct(st.cf_unsuitable_below)}: less than the best urban roof "
        "mounts in field trials",
        f"no chosen turbine fits: every rotor is wider than {st.max_rotor_to_roof_side:g} x "
        "the roof's smaller side"], dtype=object)
    extra = [
        (mast_m > limit + 1e-9, f"needs a mast above the {limit:g} m limit to clear the "
                                "roof's turbulence zone"),
        (mast_m > st.max_mast_to_building_height * height + 1e-9,
         f"needs a mast taller than {st.max_mast_to_building_height:g} x the building's "
         "height: more than a roof is usually built to carry"),
        (hub_m <= sur["displacement_m"], "hub at or below the displacement height of the "
                                         "surroundings: deep in their wake, the profile there "
                                         "is only held at its lowest value"),
        (speed < st.min_mean_speed_ms, f"mean hub speed below {st.min_mean_speed_ms:g} m/s, "
                                       "too little wind for a small turbine whatever the "
                                       "capacity factor"),
        (sur["plan_area_fraction"] > st.dense_plan_fraction, "dense surroundings slow the wind"),
        (height >= st.tall_ratio * sur["surroundings_height_m"], "stands above its neighbours"),
        (np.asarray(rows["roof_type"], object) == "pitched",
         "pitched roof: the flow over it depends strongly on direction"),
        (np.zeros(n, bool) if shelter_factor is None else np.asarray(shelter_factor) < 0.9,
         "sheltered by upwind neighbours: their wakes slow the wind at the hub by more than "
         "10 %"),
    ]
    ruled_out = none_fits | np.any([m for m, _ in extra[:4]], axis=0)
    code = np.where(ruled_out, 3, np.minimum(cf_code, 3))
    combo = cf_code.astype(np.int64)
    for bit, (mask, _) in enumerate(extra):
        combo = combo + (np.asarray(mask, bool).astype(np.int64) << (3 + bit))
    return code.astype(np.int64), _phrases(combo, by_cf, extra)


def screen_part(checked: pd.DataFrame, ctx: ScreeningContext, nb: Neighbourhood,
                rejected_lines=()) -> pd.DataFrame:
    """Screen the good rows of one checked part: one result row per building (unranked).

    The frame of :func:`screen_columns`, with the columns of :func:`result_columns` and text
    columns as object (as in the Dask meta).
    """
    return result_frame(screen_columns(checked, ctx, nb, rejected_lines), ctx)


def result_frame(cols, ctx: ScreeningContext) -> pd.DataFrame:
    """The result frame of :func:`screen_columns`' arrays; None gives the empty result."""
    if cols is None:
        return empty_result(ctx)
    # Text columns stay object (as in empty_result, the Dask meta): no conversion per part.
    # The arrays are the frame's own (copy=False): no copy into 2-D blocks.
    return pd.DataFrame({c: (pd.Series(cols[c], dtype=object, copy=False)
                             if cols[c].dtype == object else cols[c])
                         for c in result_columns(ctx.turbines)}, copy=False)


def screen_chunk(rows: dict, sur: dict, climate, air_density_kgm3,
                 ctx: ScreeningContext, blocks=None) -> dict:
    """Mast, hub conditions and yield of one chunk of buildings (one climate), (n,) arrays.

    The roof geometry is found once and shared by the mast search (:func:`choose_mast_m`) and
    the chain (:func:`engine.chain.arrays.roof_yields`: the effective climate at the roof's
    centre and the yield of every turbine, without the speed sensitivity behind P90, which
    would cost as much again).

    Returns
    -------
    dict: ``min_clear_mast_m``, ``mast_height_m``, ``hub_height_m``, ``mean_speed_ms``,
    ``turbulence_intensity`` (n,); ``net_kwh`` [kWh], ``capacity_factor`` (n, T), NaN for a
    turbine whose rotor the roof cannot carry (:func:`roof_carries`); the mast is chosen for
    the largest rotor the roof carries; ``shelter_factor`` (n,) of the upwind wakes [-]

    With ``blocks`` (the table's buildings, :class:`engine.screening.tiles.TableBlocks`) the
    positions are sheltered by the neighbours within ``transfer.sector_fetch_m``
    (:func:`engine.screening.tiles.upwind_shelter`; a position at ``px_m``, ``py_m`` where
    the rows give them, else at its building's centre).
    """
    if "sector_roughness_m" in sur:  # per sector: the chain takes the (n, S) terrain
        sur = {**sur, **{k: sur[v] for k, v in SECTOR_TERRAIN.items()}}
    carried = roof_carries(rows, ctx.turbines, ctx.settings)
    radius = np.array([float(t.rotor_radius_m) for t in ctx.turbines])
    # One mast for the largest rotor the roof carries (the largest chosen one where none fits).
    r_row = np.where(carried.any(axis=1), np.max(np.where(carried, radius, 0.0), axis=1),
                     radius.max())
    geo = chain_arrays.roof_geometry(rows, np.asarray(climate.sector_deg, float))
    mast, main = choose_mast_m(rows, sur, climate, air_density_kgm3, ctx, geometry=geo,
                               return_main=True, rotor_radius_m=r_row)
    upwind = None
    if blocks is not None:
        upwind = upwind_shelter(rows.get("px_m", rows["x_m"]), rows.get("py_m", rows["y_m"]),
                                rows["x_m"], rows["y_m"], blocks, climate.sector_deg,
                                ctx.transfer.sector_fetch_m)
    at_hub, sheltered = chain_arrays.roof_yields(
        rows, sur, mast, climate, air_density_kgm3, ctx.transfer, ctx.turbines, ctx.losses,
        geometry=geo, main_sector=main, upwind=upwind)
    return {"min_clear_mast_m": at_hub.min_clear_mast_m, "mast_height_m": mast,
            "shelter_factor": sheltered,
            "hub_height_m": at_hub.hub_height_m, "mean_speed_ms": at_hub.mean_speed_ms,
            "turbulence_intensity": at_hub.turbulence_intensity,
            "net_kwh": np.where(carried, at_hub.net_kwh, np.nan),
            "capacity_factor": np.where(carried, at_hub.capacity_factor, np.nan)}


def _chunks(zkey: np.ndarray, zone_key, step: int):
    """Index selections of one zone's rows, ``step`` at a time (slices when they run on)."""
    idx = np.flatnonzero(zkey == zone_key)
    # One zone's rows in one run (the usual case): chunks are slices, views without copies.
    run = len(idx) and idx[-1] - idx[0] + 1 == len(idx)
    for a in range(0, len(idx), step):
        yield (slice(int(idx[a]), int(idx[min(a + step, len(idx)) - 1]) + 1) if run
               else idx[a:a + step])


def _screen_zones(rows: dict, sur: dict, ctx: ScreeningContext, blocks=None) -> dict:
    """:func:`screen_chunk` of every chunk of every zone, gathered into (n,) / (n, T) arrays."""
    n, T = len(rows["id"]), len(ctx.turbines)
    rho = air.site_air_density_kgm3(ctx.site)
    zone = np.asarray(rows["zone"], object)
    zkey = np.where(np.isin(zone, [z for z in ctx.climates if z]), zone, "")
    out = {c: np.empty(n) for c in ("min_clear_mast_m", "mast_height_m", "hub_height_m",
                                    "mean_speed_ms", "turbulence_intensity",
                                    "shelter_factor")}
    out.update(net_kwh=np.empty((n, T)), capacity_factor=np.empty((n, T)))
    for zk in sorted(set(zkey)):
        for sel in _chunks(zkey, zk, int(ctx.settings.chunk_rows)):
            got = screen_chunk({k: v[sel] for k, v in rows.items()},
                               {k: v[sel] for k, v in sur.items()}, ctx.climates[zk], rho, ctx,
                               blocks)
            for name, arr in got.items():
                out[name][sel] = arr
    return out


def screen_columns(checked: pd.DataFrame, ctx: ScreeningContext, nb: Neighbourhood,
                   rejected_lines=()):
    """The results of :func:`screen_part` as a dict of (n,) arrays, or None with no good row.

    Per zone (its climate) and per chunk of ``ctx.settings.chunk_rows`` buildings: the
    surroundings (:func:`engine.screening.neighbourhood.surroundings`), then
    :func:`screen_chunk`, then the class (:func:`suitability`). ``rank`` is 0 until
    :func:`rank_results`.
    """
    rows = good_rows(checked, rejected_lines)
    if len(rows) == 0:
        return None
    # The columns as plain arrays once: a chunk is then a slice of each, with no frame work.
    rows = {c: (rows[c].to_numpy() if pd.api.types.is_numeric_dtype(rows[c].dtype)
                else rows[c].to_numpy(object)) for c in rows.columns}
    n = len(rows["id"])
    sur = surroundings(rows, nb, ctx.transfer.morphometry_layout)
    if ctx.transfer.sector_morphometry and nb.blocks is not None:
        sur = sector_surroundings(rows, sur, nb.blocks, ctx.site, ctx.transfer,
                                  _sector_count(ctx))
    shelter_by = (nb.blocks if ctx.transfer.sector_morphometry and ctx.settings.upwind_shelter
                  else None)
    got = _screen_zones(rows, sur, ctx, shelter_by)
    sector = {k: sur.pop(v) for k, v in SECTOR_TERRAIN.items() if v in sur}
    net_kwh, cf = got.pop("net_kwh"), got.pop("capacity_factor")
    carried = np.isfinite(net_kwh).any(axis=1)
    best = np.argmax(np.where(np.isfinite(net_kwh), net_kwh, -np.inf), axis=1)
    take = np.arange(n)
    best_aep, best_cf = net_kwh[take, best], cf[take, best]
    # The hub must clear the displacement height of every sector (the deepest wake).
    deep = {**sur, "displacement_m": sector["displacement_m"].max(axis=1)} if sector else sur
    code, reasons = suitability(best_cf, got["mast_height_m"], got["hub_height_m"], deep, rows,
                                ctx, mean_speed_ms=got["mean_speed_ms"], carried=carried,
                                shelter_factor=got.pop("shelter_factor"))
    best_ids = np.asarray([t.id for t in ctx.turbines], dtype=object)[best]
    best_ids[~carried] = ""
    out = {"rank": np.zeros(n, np.int64), "id": np.asarray(rows["id"], object),
           "line": np.asarray(rows["line"], np.int64), "zone": np.asarray(rows["zone"], object),
           "suitability": np.asarray(CLASSES, dtype=object)[code], "reasons": reasons,
           "best_turbine_id": best_ids,
           "best_aep_kwh": best_aep, "best_capacity_factor": best_cf}
    for c in ("x_m", "y_m", "length_m", "width_m", "height_m", "orientation_deg"):
        out[c] = np.asarray(rows[c], float)
    out["roof_type"] = np.asarray(rows["roof_type"], object)
    out["roof_pitch_deg"] = np.asarray(rows["roof_pitch_deg"], float)
    out["parapet_height_m"] = np.asarray(rows["parapet_height_m"], float)
    out.update(sur)
    out.update(got)
    out["suitability_code"] = code
    for j, t in enumerate(ctx.turbines):
        out[f"aep_kwh_{t.id}"] = net_kwh[:, j]
        out[f"capacity_factor_{t.id}"] = cf[:, j]
    return out


def _sector_count(ctx: ScreeningContext) -> int:
    """Sectors of the context's climates, which per-sector surroundings need to be one."""
    from engine.core.errors import InputError
    counts = sorted({len(c.frequency) for c in ctx.climates.values()})
    if len(counts) != 1:
        raise InputError([("transfer.sector_morphometry", "needs every zone's climate to "
                           "have the same number of sectors, got "
                           f"{', '.join(map(str, counts))}; use one sector count or turn it "
                           "off")])
    return counts[0]


def rank_results(table: pd.DataFrame) -> pd.DataFrame:
    """Rank buildings: best class first, then larger best net AEP, then id; ``rank`` from 1."""
    out = table.take(ranking_order(*rank_key_arrays(table))).reset_index(drop=True)
    out["rank"] = np.arange(1, len(out) + 1, dtype=np.int64)
    return out


