"""The tiled screening: a table cut into square tiles, each screened with a halo of neighbours.

:func:`screen_tiled` screens each tile's rows with the rows within the sector fetch of the
tile's edges as neighbours only (:mod:`engine.screening.tiles` finds the per-sector
surroundings; the halo holds every building they can reach), locally or one task per tile on
a Dask client, so no process needs more than a tile and its halo.
"""
from __future__ import annotations

from dataclasses import replace

import numpy as np
import pandas as pd

from engine.core.errors import InputError
from engine.screening.checks import duplicate_problems, row_problems
from engine.screening.compute import empty_result, rank_results, result_frame, screen_columns
from engine.screening.neighbourhood import (combine_anchors, combine_cell_sums,
                                            neighbourhood_lookup, part_anchor, part_cells)
from engine.screening.passes import ScreeningResult, bad_rows_frame, finish_table, read_check
from engine.screening.table import read_part, table_parts
from engine.screening.tiles import combine_blocks, part_blocks


def _tile_frames(frame: pd.DataFrame, tile_m: float, halo_m: float):
    """(core row positions, core + halo row positions) of each occupied tile, in tile order;
    rows without finite plan coordinates form one last group of their own (the checks
    report them)."""
    x = pd.to_numeric(frame["x_m"], errors="coerce").to_numpy(float)
    y = pd.to_numeric(frame["y_m"], errors="coerce").to_numpy(float)
    ok = np.isfinite(x) & np.isfinite(y)
    idx = np.flatnonzero(ok)
    tx = np.floor(x[idx] / tile_m).astype(np.int64)
    ty = np.floor(y[idx] / tile_m).astype(np.int64)
    order = np.lexsort((ty, tx))
    key = np.stack([tx[order], ty[order]], axis=1)
    cut = np.flatnonzero(np.concatenate([[True], np.any(key[1:] != key[:-1], axis=1), [True]]))
    by_x = idx[np.argsort(x[idx], kind="stable")]
    xs = x[by_x]
    for a, b in zip(cut[:-1], cut[1:]):
        core = np.sort(idx[order[a:b]])
        i, j = key[a]
        lo = np.searchsorted(xs, i * tile_m - halo_m, side="left")
        hi = np.searchsorted(xs, (i + 1) * tile_m + halo_m, side="right")
        near = by_x[lo:hi]
        near = near[(y[near] >= j * tile_m - halo_m) & (y[near] <= (j + 1) * tile_m + halo_m)]
        yield core, np.sort(near)
    if (~ok).any():
        rest = np.flatnonzero(~ok)
        yield rest, rest


#: Smallest tile side the command line accepts, as a multiple of the halo (the sector fetch):
#: a tile of side L with a halo r reads and checks ((L + 2 r)/L)² rows per row it screens,
#: 9 at L = r, and more than that below.
MIN_TILE_TO_HALO = 1.0


def check_tile_size(tile_m, halo_m: float, field: str = "tile_m") -> float:
    """``tile_m`` as a float, or :class:`InputError` naming ``field`` when it is not a finite
    number of at least :data:`MIN_TILE_TO_HALO` × the halo ``halo_m`` [m]."""
    try:
        t = float(tile_m)
    except (TypeError, ValueError):
        t = float("nan")
    least = MIN_TILE_TO_HALO * float(halo_m)
    if not (np.isfinite(t) and t >= least and t > 0):
        raise InputError([(field, f"must be at least the halo, the sector fetch "
                                  f"transfer.sector_fetch_m = {least:g} m (a smaller tile "
                                  f"reads and checks more than 9 times the rows it screens), "
                                  f"got {tile_m} m; give a larger tile")])
    return t


def read_table_frame(source) -> tuple:
    """(frame, first line) of a CSV or Parquet buildings table read whole: row k of the frame
    is the table's line (CSV) or row (Parquet) k + first line; lines the CSV parser skipped
    are rows carrying their problem."""
    parts = table_parts(source)
    frames = [read_part(p) for p in parts]
    frame = pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()
    first = int(parts[0].first_line) if parts else 2
    return frame.drop(columns=["line"], errors="ignore"), first


def _screen_tile(sub, core, near, ctx):
    """One tile: its rows screened with the halo's rows as neighbours only. ``sub`` holds the
    rows ``near`` of the whole frame. Returns the core rows' results and bad rows, with lines
    mapped back to the whole frame's."""
    sub = sub.reset_index(drop=True)
    checked = [read_check(p, ctx.zones()) for p in table_parts(sub)]
    anchor = combine_anchors([part_anchor(c) for c in checked])
    nb = neighbourhood_lookup(combine_cell_sums([part_cells(c, (), anchor) for c in checked]),
                              anchor=anchor)
    nb = replace(nb, blocks=combine_blocks([part_blocks(c) for c in checked]))
    line_of = near + 2  # a frame's rows are lines 2, 3, ... (as engine.screening.table)
    mine = np.flatnonzero(np.isin(near, core)) + 2  # the core rows' lines within ``sub``
    tables, bad = [], []
    for c in checked:
        own = c[c["line"].isin(mine)]
        if len(own):
            tables.append(result_frame(screen_columns(own, ctx, nb), ctx))
            bad.append(own.loc[own["problem"] != "", ["line", "id", "problem"]])
    table = pd.concat(tables, ignore_index=True) if tables else result_frame(None, ctx)
    bad = pd.concat(bad, ignore_index=True) if bad else pd.DataFrame(
        {"line": np.zeros(0, np.int64), "id": [], "problem": []})
    return (table.assign(line=line_of[table["line"].to_numpy(np.int64) - 2]),
            bad.assign(line=line_of[bad["line"].to_numpy(np.int64) - 2]))


def screen_tiled(frame: pd.DataFrame, ctx, tile_m: float = 2000.0, client=None,
                 first_line: int = 2):
    """Screen a buildings table tile by tile, each tile with a halo of neighbours around it.

    Parameters
    ----------
    frame : the buildings table (x_m, y_m on a plan)
    ctx : :class:`engine.screening.settings.ScreeningContext` with
        ``transfer.sector_morphometry`` on (the halo is ``transfer.sector_fetch_m`` wide, all
        that a building's surroundings can reach)
    tile_m : side of the tiles [m]; each tile reads and checks about ((L + 2 r)/L)² rows
        per row it screens, r the fetch
    client : a ``distributed.Client``: the tiles are screened on its workers (one task each)
    first_line : the line (CSV, header on line 1: 2) or row number (Parquet: 1) of the
        frame's first row, in which bad rows are reported (as "row" from 1, else "line")

    Returns
    -------
    :class:`engine.screening.passes.ScreeningResult`, ranked over the whole table

    Notes
    -----
    Each tile's rows are checked and screened with the rows within the fetch of the tile's
    edges (the halo) as their neighbours only: the halo's rows are checked but not screened
    (their own tile screens them). Ids repeated anywhere in the table are left out first, as the whole-table
    screening does. A building's surroundings are then the same to the last bit whatever the
    tiles; its yield is the same to rounding (the bins sums are summed in blocks whose size
    follows the table's, docs/screening.md "Engines").
    """
    if not ctx.transfer.sector_morphometry:
        raise InputError([("transfer.sector_morphometry", "must be on for a tiled screening "
                                                         "(its halo is the sector fetch), got "
                                                         "off")])
    for c in ("id", "x_m", "y_m"):
        if c not in frame.columns:
            raise InputError([(c, "is needed for a tiled screening (plan metres); add the "
                                  "column")])
    frame = frame.reset_index(drop=True)
    first = int(first_line)
    lines = pd.Series(np.arange(len(frame)) + first)
    dups = duplicate_problems(frame["id"].astype(str), lines)
    use = frame.drop(index=dups["line"].to_numpy(np.int64) - first) if len(dups) else frame
    kept = use.index.to_numpy()
    use = use.reset_index(drop=True)
    groups = list(_tile_frames(use, float(tile_m), float(ctx.transfer.sector_fetch_m)))
    if client is not None:
        # Each task gets its tile and halo only, never the whole table.
        futures = client.map(_screen_tile, [use.iloc[g[1]] for g in groups],
                             [g[0] for g in groups], [g[1] for g in groups],
                             [ctx] * len(groups), pure=False)
        got = client.gather(futures)
    else:
        got = [_screen_tile(use.iloc[near], core, near, ctx) for core, near in groups]
    # Lines of the de-duplicated frame back to the table's own.
    back = lambda t: t.assign(line=kept[t["line"].to_numpy(np.int64) - 2] + first)  # noqa: E731
    tables = [back(t) for t, _ in got if len(t)]
    table = pd.concat(tables, ignore_index=True) if tables else empty_result(ctx)
    bad = bad_rows_frame([back(b).assign(problem=b["problem"]) for _, b in got], dups)
    table = finish_table(rank_results(table), ctx.turbines)
    word = "row" if first == 1 else "line"  # Parquet rows count from 1, CSV lines from 2
    return ScreeningResult(table=table, problems=row_problems(bad, word), n_rows=len(frame),
                           bad_rows=bad)
