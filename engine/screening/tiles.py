"""Direction-aware surroundings of screened buildings, in spatial tiles with a halo.

With ``transfer.sector_morphometry`` on, each building's surroundings are found per direction
sector from the other buildings of the table whose centres lie within ``transfer.
sector_fetch_m`` of it, by the same array function the detailed chain uses
(:func:`engine.flow.sector_roughness.sector_morphometry_points`). The buildings are gathered
once from every part (:func:`part_blocks`, :func:`combine_blocks`: 48 bytes a building) in one
canonical order, sorted by their own values, so no split of the table into parts changes it.

The rows to screen are grouped into square tiles of :data:`TILE_M`; each tile is worked with
the buildings inside the tile grown by a halo of the fetch on every side (all that any of its
rows can see). A row's neighbours are then the same buildings in the same order whether it is
screened alone, in a tile, next to a tile's edge or on another worker, and the sums
(``np.bincount``, in order) are identical to the last bit (tested).

References
----------
Macdonald, R. W., Griffiths, R. F. and Hall, D. J. (1998), Atmos. Environ. 32(11):1857-1864.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from engine.flow import sector_roughness
from engine.flow import shelter
from engine.flow import transfer
from engine.flow.buildings import BuildingArrays
from engine.screening.checks import good_rows

#: Side of the square tiles the rows are grouped into [m].
TILE_M = 250.0
#: Most (row, building) pairs held at once in a tile (8 bytes each, a few arrays).
MAX_PAIRS = 2_000_000
#: The block columns gathered from every part, in the canonical sort's order of keys.
BLOCK_COLUMNS = ("x_m", "y_m", "length_m", "width_m", "height_m", "orientation_deg")


def part_blocks(checked: pd.DataFrame, rejected_lines=()) -> pd.DataFrame:
    """The block columns of a part's good rows (float64)."""
    g = good_rows(checked, rejected_lines)
    return pd.DataFrame({c: np.asarray(g[c], float) for c in BLOCK_COLUMNS})


@dataclass(frozen=True)
class TableBlocks:
    """Every good building of a table, in canonical order (x, then y, then the sizes)."""

    x_m: np.ndarray
    y_m: np.ndarray
    length_m: np.ndarray
    width_m: np.ndarray
    height_m: np.ndarray
    orientation_deg: np.ndarray

    @property
    def n(self) -> int:
        return len(self.x_m)

    def take(self, idx) -> BuildingArrays:
        """The blocks ``idx`` as :class:`engine.flow.buildings.BuildingArrays`."""
        n = len(idx)
        return BuildingArrays(ids=tuple(range(n)), x_m=self.x_m[idx], y_m=self.y_m[idx],
                              length_m=self.length_m[idx], width_m=self.width_m[idx],
                              height_m=self.height_m[idx],
                              orientation_deg=self.orientation_deg[idx],
                              pitched=np.zeros(n, bool), roof_pitch_deg=np.zeros(n),
                              parapet_height_m=np.zeros(n))


def combine_blocks(frames) -> TableBlocks:
    """The parts' blocks in one canonical order: sorted by x, y, then the sizes (lexsort)."""
    frames = [f for f in frames if len(f)]
    if not frames:
        return TableBlocks(*(np.zeros(0) for _ in BLOCK_COLUMNS))
    both = pd.concat(frames, ignore_index=True)
    cols = [both[c].to_numpy(float) for c in BLOCK_COLUMNS]
    order = np.lexsort(cols[::-1])  # last key is primary: x first
    return TableBlocks(*(np.ascontiguousarray(c[order]) for c in cols))


def _halo_blocks(blocks: TableBlocks, x0, x1, y0, y1) -> np.ndarray:
    """Indices, in canonical order, of the blocks whose centres lie in [x0, x1] × [y0, y1]."""
    lo = np.searchsorted(blocks.x_m, x0, side="left")
    hi = np.searchsorted(blocks.x_m, x1, side="right")
    return lo + np.flatnonzero((blocks.y_m[lo:hi] >= y0) & (blocks.y_m[lo:hi] <= y1))


def _tile_sums(px, py, cand: BuildingArrays, n_sectors: int, fetch_m: float):
    """(λp, λf, H̄) of points from the candidate blocks (a tile's blocks and its halo)."""
    # A building is not its own surroundings (its flow is the roof model's): the block at the
    # row's own centre is left out, as the detailed chain leaves out the roof it stands on.
    own = (cand.x_m[None, :] == px[:, None]) & (cand.y_m[None, :] == py[:, None])
    return sector_roughness.sector_morphometry_points(px, py, cand, n_sectors, fetch_m, own)


def _tiles(x, y, tile_m):
    """(tile column, tile row, rows) of each occupied tile of the points, in tile order."""
    tx = np.floor(x / tile_m).astype(np.int64)
    ty = np.floor(y / tile_m).astype(np.int64)
    order = np.lexsort((ty, tx))
    key = tx[order] * (int(ty.max() - ty.min()) + 1) + (ty[order] - ty.min())
    starts = np.flatnonzero(np.concatenate([[True], key[1:] != key[:-1], [True]]))
    for a, b in zip(starts[:-1], starts[1:]):
        sel = order[a:b]
        yield tx[sel[0]], ty[sel[0]], sel


def upwind_shelter(x_m, y_m, own_x_m, own_y_m, blocks: TableBlocks, sector_deg,
                   fetch_m: float, tile_m: float = TILE_M):
    """The shelter of points by their upwind neighbours, as a function of the hub heights.

    Parameters
    ----------
    x_m, y_m : (N,) points (positions on roofs) [m]
    own_x_m, own_y_m : (N,) centre of the building each point stands on [m] (that block is
        left out: its flow is the roof model's)
    blocks : every building of the table (:func:`combine_blocks`)
    sector_deg : (S,) sector centres [deg]
    fetch_m : only blocks whose centres lie within this of a point shelter it [m]: the
        neighbours of the per-sector surroundings; each tile's halo is this wide
    tile_m : side of the tiles the points are grouped into [m] (any value gives the same
        numbers; it bounds the work per step)

    Returns
    -------
    callable (N,) hub heights [m] -> dict of (N, S) ``speed_factor``, ``added_ti``,
    ``in_wake_recirculation`` (:func:`engine.flow.shelter.shelter_within_fetch`), for
    :func:`engine.chain.arrays.roof_climate`'s ``upwind``

    Notes
    -----
    Per tile, over the blocks within the tile grown by the fetch, in canonical order; blocks
    out of reach give exact zeros to the root-sum-square, so a point's shelter is the same to
    the last bit alone, in any tile or on any worker (tested).
    """
    x, y = np.asarray(x_m, float), np.asarray(y_m, float)
    ox, oy = np.asarray(own_x_m, float), np.asarray(own_y_m, float)
    sector_deg = np.asarray(sector_deg, float)

    def at_hubs(hub_height_m):
        hub = np.broadcast_to(np.asarray(hub_height_m, float), x.shape)
        n, S = len(x), len(sector_deg)
        out = {"speed_factor": np.ones((n, S)), "added_ti": np.zeros((n, S)),
               "in_wake_recirculation": np.zeros((n, S), bool)}
        if n == 0:
            return out
        for i, j, sel in _tiles(x, y, tile_m):
            idx = _halo_blocks(blocks, i * tile_m - fetch_m, (i + 1) * tile_m + fetch_m,
                               j * tile_m - fetch_m, (j + 1) * tile_m + fetch_m)
            cand = blocks.take(idx)
            step = max(1, MAX_PAIRS // max(1, len(idx) * S))
            for s in range(0, len(sel), step):
                rows = sel[s:s + step]
                own = ((cand.x_m[None, :] == ox[rows, None])
                       & (cand.y_m[None, :] == oy[rows, None]))
                sh = shelter.shelter_within_fetch(x[rows], y[rows], hub[rows], cand,
                                                  sector_deg, fetch_m, own)
                for k in out:
                    out[k][rows] = sh[k]
        return out
    return at_hubs


def sector_fractions(x_m, y_m, blocks: TableBlocks, n_sectors: int, fetch_m: float,
                     tile_m: float = TILE_M):
    """Per-sector λp, λf [-] and H̄ [m] around each point, worked tile by tile, (N, S).

    Parameters
    ----------
    x_m, y_m : (N,) points (building centres) [m]
    blocks : every building of the table (:func:`combine_blocks`)
    n_sectors : sectors of the climate
    fetch_m : radius of the upwind wedge [m]; the halo of each tile is this wide
    tile_m : side of the tiles the points are grouped into [m] (any value gives the same
        numbers; it bounds the work per step)

    Notes
    -----
    :func:`engine.flow.sector_roughness.sector_morphometry_points` per tile, over the blocks
    within the tile's bounds grown by ``fetch_m``; points of a tile are taken in runs that keep
    the (point, block) pairs under :data:`MAX_PAIRS`.
    """
    x = np.asarray(x_m, float)
    y = np.asarray(y_m, float)
    n = len(x)
    lp, lf, h = (np.zeros((n, n_sectors)), np.zeros((n, n_sectors)),
                 np.full((n, n_sectors), np.nan))
    if n == 0:
        return lp, lf, h
    for i, j, sel in _tiles(x, y, tile_m):
        # The tile grown by a halo of the fetch on every side holds every block any of its
        # rows can count.
        idx = _halo_blocks(blocks, i * tile_m - fetch_m, (i + 1) * tile_m + fetch_m,
                           j * tile_m - fetch_m, (j + 1) * tile_m + fetch_m)
        cand = blocks.take(idx)
        step = max(1, MAX_PAIRS // max(1, len(idx)))
        for s in range(0, len(sel), step):
            rows = sel[s:s + step]
            lp[rows], lf[rows], h[rows] = _tile_sums(x[rows], y[rows], cand, n_sectors,
                                                     fetch_m)
    return lp, lf, h


def sector_surroundings(rows, sur: dict, blocks: TableBlocks, site, settings,
                        n_sectors: int) -> dict:
    """Per-sector terrain of each row from its neighbours, where the row gives none.

    Parameters
    ----------
    rows : mapping of (N,) arrays (``x_m``, ``y_m``)
    sur : :func:`engine.screening.neighbourhood.surroundings` of the same rows (what a row
        gives keeps precedence)
    blocks : the table's buildings
    site, settings : the context's site and transfer settings (the site's own terrain is what
        a sector with no building upwind keeps, as in the detailed chain)
    n_sectors : sectors of the climate

    Returns
    -------
    ``sur`` with (N,) summaries replaced for the rows whose surroundings came from the
    neighbours (``plan_area_fraction`` = the mean over sectors, i.e. Σ plan area / π r²;
    ``roughness_m`` and ``displacement_m`` the means over sectors; ``surroundings_from``
    "neighbours by sector"), and (N, S) ``sector_roughness_m``, ``sector_displacement_m``,
    ``sector_frontal_area_fraction``, ``sector_height_m`` for the chain.
    """
    from engine.screening.neighbourhood import SURROUNDINGS_FROM
    lp, lf, hbar = sector_fractions(rows["x_m"], rows["y_m"], blocks, n_sectors,
                                    settings.sector_fetch_m)
    z0, d, _ = transfer.site_roughness(site, settings)
    own = {"roughness_m": z0, "displacement_m": d,
           "frontal_area_fraction": site.frontal_area_fraction,
           "canopy_height_m": site.mean_building_height_m}
    t = sector_roughness.sector_terrain(lp, lf, hbar, own, settings.morphometry_layout)
    mine = np.asarray(sur["surroundings_from"], object) == SURROUNDINGS_FROM[0]
    out = dict(sur)
    col = mine[:, None]
    for name, key in (("sector_roughness_m", "roughness_m"),
                      ("sector_displacement_m", "displacement_m"),
                      ("sector_frontal_area_fraction", "frontal_area_fraction"),
                      ("sector_height_m", "surroundings_height_m")):
        given = np.asarray(sur[key], float)[:, None]
        src = t["canopy_height_m" if key == "surroundings_height_m" else key]
        out[name] = np.where(col, src, np.broadcast_to(given, src.shape))
    a_sum = lp.sum(axis=1)
    h_all = np.divide(np.nansum(lp * np.nan_to_num(hbar), axis=1), a_sum,
                      out=np.full(len(mine), np.nan), where=a_sum > 0)
    out["plan_area_fraction"] = np.where(mine, lp.mean(axis=1), sur["plan_area_fraction"])
    out["frontal_area_fraction"] = np.where(mine, lf.mean(axis=1),
                                            sur["frontal_area_fraction"])
    out["surroundings_height_m"] = np.where(mine & np.isfinite(h_all), h_all,
                                            sur["surroundings_height_m"])
    out["roughness_m"] = np.where(mine, out["sector_roughness_m"].mean(axis=1),
                                  sur["roughness_m"])
    out["displacement_m"] = np.where(mine, out["sector_displacement_m"].mean(axis=1),
                                     sur["displacement_m"])
    out["surroundings_from"] = np.where(mine, SURROUNDINGS_FROM[4], sur["surroundings_from"])
    return out
