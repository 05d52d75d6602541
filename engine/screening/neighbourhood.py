"""The surroundings of each building, from the buildings table itself.

Buildings are binned into plan cells counted from the table's south-west corner; each
building's neighbourhood is the square of cells around its own. Plan area, frontal area and
area × height are summed in whole quanta (:func:`cell_sums`, :func:`neighbourhood_lookup`), so
any split of the table into parts gives the same sums; :func:`surroundings` turns them (or what
a row gives) into roughness length and displacement by the climate transfer's morphometric
model.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd

from engine.flow import profiles
from engine.flow import transfer
from engine.screening.checks import good_rows
from engine.screening.table import NUMERIC_LIMITS

#: Side of the plan cells the table is binned into [m].
CELL_M = 20.0
#: The neighbourhood of a building is the square of (2 m + 1) cells centred on its cell:
#: with 20 m cells and m = 5, a 220 m square (a lot of a few hundred metres is the usual
#: source area of morphometric roughness; common practice).
HALF_CELLS = 5
#: Quantum of the summed areas [m²] and area-heights [m³]: sums are kept as whole numbers of
#: this quantum, so they are exact and do not depend on how the table is split into parts.
AREA_QUANTUM = 1e-4
#: Largest number of grid cells held at once while summing neighbourhoods (8 bytes each).
MAX_BAND_CELLS = 8_000_000


def frontal_area_mean_m2(length_m, width_m, height_m):
    """Frontal area of a block averaged over all wind directions [m²].

    Notes
    -----
    A_f = H (2/π)(L + W): the mean projected width of a convex plan shape over all directions
    is its perimeter / π (Cauchy's projection formula), 2(L + W)/π for an L × W rectangle.
    """
    return (np.asarray(height_m, float) * (2.0 / math.pi)
            * (np.asarray(length_m, float) + np.asarray(width_m, float)))


def cell_index(x_m, y_m, anchor=(0.0, 0.0), cell_m=CELL_M):
    """Integer plan cell (column, row) of each point, cells counted from ``anchor`` [m]."""
    return (np.floor((np.asarray(x_m, float) - anchor[0]) / cell_m).astype(np.int64),
            np.floor((np.asarray(y_m, float) - anchor[1]) / cell_m).astype(np.int64))


def part_anchor(checked: pd.DataFrame):
    """(min x, min y) [m] of a part's good rows, or None: the cell grid starts at the table's
    south-west corner, so moving a whole table moves no building to another cell."""
    good = checked[checked["problem"] == ""]
    if not len(good):
        return None
    return float(good["x_m"].min()), float(good["y_m"].min())


def combine_anchors(anchors) -> tuple:
    """South-west corner of several parts (exact: a min reduction)."""
    anchors = [a for a in anchors if a is not None]
    if not anchors:
        return (0.0, 0.0)
    return min(a[0] for a in anchors), min(a[1] for a in anchors)


def cell_sums(x_m, y_m, length_m, width_m, height_m, anchor=(0.0, 0.0)) -> pd.DataFrame:
    """Per occupied cell: whole-quantum sums of plan area, frontal area and area × height.

    Returns a DataFrame with int64 columns cx, cy, area, frontal, area_height, count.
    """
    cx, cy = cell_index(x_m, y_m, anchor)
    L, W, H = (np.asarray(a, float) for a in (length_m, width_m, height_m))
    a = np.rint(L * W / AREA_QUANTUM).astype(np.int64)
    f = np.rint(frontal_area_mean_m2(L, W, H) / AREA_QUANTUM).astype(np.int64)
    ah = np.rint(L * W * H / AREA_QUANTUM).astype(np.int64)
    return sum_by_cell(cx, cy, {"area": a, "frontal": f, "area_height": ah,
                                 "count": np.ones(len(a), np.int64)})


CELL_SUM_COLUMNS = ("area", "frontal", "area_height", "count")


def sum_by_cell(cx, cy, values: dict) -> pd.DataFrame:
    """Whole-number sums of ``values`` per cell (cx, cy), rows sorted by cx then cy (int64).

    Notes
    -----
    One stable sort of a combined cell key and ``np.add.reduceat`` per column: exact, as the
    sums are of integers.
    """
    cx = np.asarray(cx, np.int64)
    cy = np.asarray(cy, np.int64)
    if len(cx) == 0:
        return pd.DataFrame({c: np.zeros(0, np.int64) for c in ("cx", "cy", *values)})
    kx, ky = cx - cx.min(), cy - cy.min()
    key = kx * (int(ky.max()) + 1) + ky  # ascending key = ascending (cx, cy)
    order = np.argsort(key, kind="stable")
    sk = key[order]
    starts = np.flatnonzero(np.concatenate([[True], sk[1:] != sk[:-1]]))
    first = order[starts]
    out = {"cx": cx[first], "cy": cy[first]}
    for name, v in values.items():
        out[name] = np.add.reduceat(np.asarray(v, np.int64)[order], starts)
    return pd.DataFrame(out)


def combine_cell_sums(frames) -> pd.DataFrame:
    """Add cell sums of several parts (whole numbers: the order does not matter)."""
    frames = [f for f in frames if len(f)]
    if not frames:
        return cell_sums([], [], [], [], [])
    if len(frames) == 1:
        return frames[0].reset_index(drop=True)
    both = pd.concat(frames, ignore_index=True)
    return sum_by_cell(both["cx"].to_numpy(), both["cy"].to_numpy(),
                        {c: both[c].to_numpy() for c in CELL_SUM_COLUMNS})


@dataclass(frozen=True)
class Neighbourhood:
    """Neighbourhood sums of every occupied cell, sorted by cell key, ready for look-up."""

    cx0: int
    cy0: int
    width: int
    keys: np.ndarray       # (C,) int64 cell keys (cy - cy0) * width + (cx - cx0)
    area: np.ndarray       # (C,) int64 plan area in quanta
    frontal: np.ndarray    # (C,) int64 frontal area in quanta
    area_height: np.ndarray  # (C,) int64 area x height in quanta
    lot_area_m2: float
    anchor: tuple = (0.0, 0.0)  # [m] where cell (0, 0) starts
    #: Every good building of the table (:class:`engine.screening.tiles.TableBlocks`) when
    #: the surroundings are found per sector (``transfer.sector_morphometry``), else None.
    blocks: object = None

    def at(self, x_m, y_m):
        """Plan area fraction, frontal area fraction, mean height [m] around each point.

        Notes
        -----
        λp = Σ A_i / A_lot, λf = Σ A_f,i / A_lot, H̄ = Σ A_i H_i / Σ A_i over the buildings
        whose centres lie in the (2 m + 1)-cell square around the point's cell (the building
        itself included); A_lot the square's area.
        """
        cx, cy = cell_index(x_m, y_m, self.anchor)
        key = (cy - self.cy0) * self.width + (cx - self.cx0)
        i = np.clip(np.searchsorted(self.keys, key), 0, max(len(self.keys) - 1, 0))
        if len(self.keys) == 0 or not np.all(self.keys[i] == key):
            raise ValueError("a point lies in a cell no building of the table occupies")
        a = self.area[i].astype(float)
        lp = a * AREA_QUANTUM / self.lot_area_m2
        lf = self.frontal[i].astype(float) * AREA_QUANTUM / self.lot_area_m2
        hm = np.divide(self.area_height[i].astype(float), a, out=np.zeros_like(a), where=a > 0)
        return lp, lf, hm


def neighbourhood_lookup(cells: pd.DataFrame, half_cells: int = HALF_CELLS,
                         cell_m: float = CELL_M, anchor=(0.0, 0.0)) -> Neighbourhood:
    """Sum each occupied cell's (2 m + 1)² neighbourhood, by integral images in row bands.

    Whole-number sums (int64): exact, so any split of the table into parts gives the same.
    """
    m = int(half_cells)
    lot = ((2 * m + 1) * cell_m) ** 2
    if len(cells) == 0:
        z = np.zeros(0, np.int64)
        return Neighbourhood(0, 0, 1, z, z, z, z, lot, tuple(anchor))
    cx = cells["cx"].to_numpy(np.int64)
    cy = cells["cy"].to_numpy(np.int64)
    cx0, cy0 = int(cx.min()), int(cy.min())
    width = int(cx.max() - cx0 + 1)
    ix, iy = cx - cx0, cy - cy0
    keys = iy * width + ix
    order = np.argsort(keys, kind="stable")
    keys, ix, iy = keys[order], ix[order], iy[order]
    vals = [cells[c].to_numpy(np.int64)[order] for c in ("area", "frontal", "area_height")]
    out = [np.zeros(len(keys), np.int64) for _ in vals]
    n_rows = int(iy.max() + 1)
    band = max(1, MAX_BAND_CELLS // (width + 2 * m) - 2 * m)
    for r0 in range(0, n_rows, band):
        r1 = min(r0 + band, n_rows)
        lo_row, hi_row = r0 - m, r1 + m  # rows that feed this band
        src = np.flatnonzero((iy >= lo_row) & (iy < hi_row))
        dst = np.flatnonzero((iy >= r0) & (iy < r1))
        if len(dst) == 0:
            continue
        h = hi_row - lo_row
        for v, o in zip(vals, out):
            g = np.zeros((h + 1, width + 2 * m + 1), np.int64)
            np.add.at(g, (iy[src] - lo_row + 1, ix[src] + m + 1), v[src])
            # Integral image (zero first row and column), summed in place: no copies of the
            # band, which is the largest array of a big table's run.
            np.cumsum(g, axis=0, out=g)
            np.cumsum(g, axis=1, out=g)
            r = iy[dst] - lo_row  # window rows r - m .. r + m in g's frame -> [r-m, r+m+1)
            c = ix[dst] + m       # window cols ix - m .. ix + m -> [c-m, c+m+1)
            r_a, r_b = np.maximum(r - m, 0), np.minimum(r + m + 1, h)
            c_a, c_b = c - m, c + m + 1
            o[dst] = g[r_b, c_b] - g[r_a, c_b] - g[r_b, c_a] + g[r_a, c_a]
    return Neighbourhood(cx0, cy0, width, keys, out[0], out[1], out[2], lot, tuple(anchor))



def part_cells(checked: pd.DataFrame, rejected_lines=(), anchor=(0.0, 0.0)) -> pd.DataFrame:
    """Cell sums of a part's good rows (first reduction of a screening run)."""
    g = good_rows(checked, rejected_lines)
    return cell_sums(g["x_m"], g["y_m"], g["length_m"], g["width_m"], g["height_m"], anchor)



def surroundings(rows: pd.DataFrame, nb: Neighbourhood, layout: str = "staggered"):
    """Roughness length and displacement of each building's surroundings [m], and their basis.

    Per row, in order of precedence: a given ``roughness_m`` (with ``displacement_m``, else 0);
    a ``terrain_category`` (EN 1991-1-4 Table 4.1 z0, d = 0); given plan and frontal area
    fractions (with ``mean_building_height_m``, else the neighbours' mean height); otherwise the
    fractions and mean height of the neighbours in the table. Fractions become z0 and d by
    :func:`engine.flow.transfer.morphometric_roughness` (Macdonald et al. 1998, ``layout``).

    Returns
    -------
    dict of (N,) arrays: plan_area_fraction, frontal_area_fraction, surroundings_height_m,
    roughness_m, displacement_m, surroundings_from (text)
    """
    lp_n, lf_n, hm_n = nb.at(np.asarray(rows["x_m"], float), np.asarray(rows["y_m"], float))
    lp_g = np.asarray(rows["plan_area_fraction"], float)
    lf_g = np.asarray(rows["frontal_area_fraction"], float)
    hm_g = np.asarray(rows["mean_building_height_m"], float)
    given = np.isfinite(lp_g) & np.isfinite(lf_g)
    lp = np.where(given, lp_g, lp_n)
    lf = np.where(given, lf_g, lf_n)
    hm = np.where(np.isfinite(hm_g), hm_g, hm_n)
    # Fractions a crowded table can push past Macdonald's range (0 < λp < 1) are held inside it.
    lp = np.clip(lp, 1e-6, 0.95)
    lf = np.clip(lf, 1e-6, 0.95)
    z0_m, d_m = transfer.morphometric_roughness(lp, lf, hm, layout)
    d_m = np.clip(d_m, 0.0, NUMERIC_LIMITS["displacement_m"][1])
    # Where each row's surroundings come from, as an index into SURROUNDINGS_FROM (the rows
    # share its few str objects).
    src = np.where(given, 1, 0)
    cat = np.asarray(rows["terrain_category"], object)
    has_cat = cat != ""
    if has_cat.any():
        z_cat = np.array([profiles.EN1991_TERRAIN[c][0] if c else np.nan for c in cat])
        z0_m = np.where(has_cat, z_cat, z0_m)
        d_m = np.where(has_cat, 0.0, d_m)
        src = np.where(has_cat, 2, src)
    z_g = np.asarray(rows["roughness_m"], float)
    has_z = np.isfinite(z_g)
    if has_z.any():
        d_g = np.asarray(rows["displacement_m"], float)
        z0_m = np.where(has_z, z_g, z0_m)
        d_m = np.where(has_z, np.where(np.isfinite(d_g), d_g, 0.0), d_m)
        src = np.where(has_z, 3, src)
    return {"plan_area_fraction": lp, "frontal_area_fraction": lf, "surroundings_height_m": hm,
            "roughness_m": z0_m, "displacement_m": d_m,
            "surroundings_from": SURROUNDINGS_FROM.take(src)}


#: Basis of a row's surroundings (:func:`surroundings`), by precedence index.
SURROUNDINGS_FROM = np.array(["neighbours in the table", "table: area fractions",
                              "table: terrain category", "table: roughness length",
                              "neighbours by sector"], dtype=object)


