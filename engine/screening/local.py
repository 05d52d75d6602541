"""The local engine: the part functions in a plain loop in this process (pandas/numpy only).

Two ways to finish, with the same numbers:

* **in memory** (no ``out_csv``; the dashboard): every checked part is held, the results are
  ranked as arrays and returned as one frame;
* **streamed** (``out_csv``, the command line): a fixed memory ceiling whatever the table's
  length. Each pass reads the parts again instead of holding them (facts, cell sums, then the
  screening); each part's results are sorted and spilled to a Parquet file next to
  ``out_csv`` and the sorted files are merged into the ranked CSV in bounded blocks
  (:func:`engine.screening.merge.merge_sorted_parts`). Memory then grows with the table only
  through 16 bytes per row for the duplicate-id check and the occupied cells' sums.
"""
from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd

from engine.screening.checks import (duplicate_problems, origin_from_bounds, part_bounds,
                                     row_problems, with_plan_positions)
from engine.screening.compute import (empty_result, rank_results, result_columns,
                                      result_frame, screen_columns, screen_part)
from engine.screening.merge import (block_rows_for, descending_aep_key, merge_sorted_parts,
                                    ranking_order, spill_dir)
from engine.screening.tiles import combine_blocks, part_blocks
from engine.screening.neighbourhood import (combine_anchors, combine_cell_sums,
                                            neighbourhood_lookup, part_anchor, part_cells)
from engine.screening.passes import (OutputWriteError, ScreeningResult, bad_rows_frame,
                                     cells_and_ids, check_header, duplicate_lines, finish_table,
                                     listed_bad_rows, part_facts, read_check, spill_sorted)
from engine.screening.settings import ScreeningContext
from engine.screening import table as table_layout
from engine.screening.table import MAX_LISTED_ROWS, table_parts


#: Rows the local engine's merge buffers over all sorted parts (about 1.5 kB each while
#: held): the memory ceiling of the merge, whatever the table's length.
LOCAL_MERGE_ROWS = 32_768


def screen_local(source, ctx: ScreeningContext, progress=None, part_bytes: int = None,
                 part_rows: int = None, out_csv=None) -> ScreeningResult:
    """Screen a buildings table with pandas/numpy in this process.

    Parameters
    ----------
    source : path of a CSV or Parquet table, or a DataFrame
    ctx : the climate(s), turbines and settings
    progress : optional callable(fraction done 0..1, text)
    out_csv : when given, the ranked table is streamed to this CSV (atomically, formula-like
        text defused) with a fixed memory ceiling, and ``table`` of the result holds only the
        first 1000 ranked rows; the file is the one :func:`write_ranked_csv` writes of the
        in-memory table

    Raises
    ------
    InputError
        The table cannot be read, or its columns are unusable (bad rows do not raise).
    """
    def tell(f, text):
        if progress is not None:
            progress(float(f), text)

    parts = table_parts(source, table_layout.PART_BYTES if part_bytes is None else part_bytes,
                        table_layout.PART_ROWS if part_rows is None else part_rows)
    check_header(parts)
    if out_csv is None:
        return _screen_in_memory(parts, ctx, tell)
    if len(parts) > 1:
        return _screen_streamed(parts, ctx, Path(out_csv), tell)
    # One part: held in memory it is within the same ceiling as one part of a streamed run.
    res = _screen_in_memory(parts, ctx, tell)
    write_ranked_csv(res.table, out_csv)
    return replace(res, table=res.table.iloc[:1000], n_bad=len(res.bad_rows))


def _screen_in_memory(parts, ctx: ScreeningContext, tell) -> ScreeningResult:
    zones = ctx.zones()
    checked = []
    for i, p in enumerate(parts):
        checked.append(read_check(p, zones))
        tell(0.2 * (i + 1) / len(parts), f"read and checked part {i + 1} of {len(parts)}")
    origin = origin_from_bounds([part_bounds(c) for c in checked])
    if origin is not None:
        ctx = replace(ctx, origin_deg=origin)
        checked = [with_plan_positions(c, origin) for c in checked]
    all_ids = pd.concat([c["id"] for c in checked], ignore_index=True)
    all_lines = pd.concat([c["line"] for c in checked], ignore_index=True)
    good = pd.concat([c["problem"] == "" for c in checked], ignore_index=True).to_numpy()
    dups = duplicate_problems(all_ids[good], all_lines[good])
    rejected = dups["line"].to_numpy(np.int64)
    anchor = combine_anchors([part_anchor(c) for c in checked])
    nb = neighbourhood_lookup(combine_cell_sums([part_cells(c, rejected, anchor)
                                                 for c in checked]), anchor=anchor)
    if ctx.transfer.sector_morphometry:
        nb = replace(nb, blocks=combine_blocks([part_blocks(c, rejected) for c in checked]))
    tell(0.3, "surroundings summed")
    results = []
    for i, c in enumerate(checked):
        cols = screen_columns(c, ctx, nb, rejected)
        if cols is not None:
            results.append(cols)
        tell(0.3 + 0.7 * (i + 1) / len(checked), f"screened part {i + 1} of {len(checked)}")
    table = ranked_frame(results, ctx)
    del results
    bad = bad_rows_frame(checked, dups)
    word = "row" if parts and parts[0].kind == "parquet" else "line"
    return ScreeningResult(table=finish_table(table, ctx.turbines),
                           problems=row_problems(bad, word), n_rows=int(len(all_ids)),
                           bad_rows=bad)


def _streamed_facts(parts, ctx: ScreeningContext, tell):
    """First pass of a streamed run: small facts of every part (again with a plan origin)."""
    zones = ctx.zones()
    facts = []
    for i, p in enumerate(parts):
        facts.append(part_facts(read_check(p, zones), max_bad=MAX_LISTED_ROWS + 1))
        tell(0.1 * (i + 1) / len(parts), f"read and checked part {i + 1} of {len(parts)}")
    origin = origin_from_bounds([f["bounds"] for f in facts])
    if origin is not None:
        ctx = replace(ctx, origin_deg=origin)
        facts = [part_facts(read_check(p, zones, origin), max_bad=MAX_LISTED_ROWS + 1)
                 for p in parts]
    return ctx, facts, origin


def _streamed_neighbourhood(parts, zones, origin, rejected, anchor, with_blocks=False):
    """Second pass: cell sums added part by part (whole numbers), and the duplicates' rows;
    ``with_blocks`` also gathers every good building (per-sector surroundings)."""
    cells, dup_parts, blocks = None, [], []
    for p in parts:
        checked = read_check(p, zones, origin)
        part_cells_, part_dups = cells_and_ids(checked, rejected, anchor)
        if with_blocks:
            blocks.append(part_blocks(checked, rejected))
        cells = combine_cell_sums(([cells] if cells is not None else []) + [part_cells_])
        dup_parts.append(part_dups)
    if cells is None:
        cells = combine_cell_sums([])
    dup_rows = pd.concat(dup_parts, ignore_index=True)
    nb = neighbourhood_lookup(cells, anchor=anchor)
    if with_blocks:
        nb = replace(nb, blocks=combine_blocks(blocks))
    return nb, duplicate_problems(dup_rows["id"], dup_rows["line"])


def _screen_streamed(parts, ctx: ScreeningContext, out_csv: Path, tell) -> ScreeningResult:
    ctx, facts, origin = _streamed_facts(parts, ctx, tell)
    zones = ctx.zones()
    rejected = duplicate_lines(facts)
    anchor = combine_anchors([f["anchor"] for f in facts])
    nb, dups = _streamed_neighbourhood(parts, zones, origin, rejected, anchor,
                                       ctx.transfer.sector_morphometry)
    bad, n_bad = listed_bad_rows(facts, dups)
    n_rows = int(sum(f["n"] for f in facts))
    del facts
    tell(0.3, "surroundings summed")
    try:
        head = _spill_and_merge(parts, ctx, nb, rejected, origin, out_csv, tell)
    except OSError as e:
        raise OutputWriteError(out_csv, e) from None
    tell(1.0, "ranked table written")
    word = "row" if parts and parts[0].kind == "parquet" else "line"
    return ScreeningResult(table=finish_table(head, ctx.turbines),
                           problems=row_problems(bad, word, n_bad=n_bad), n_rows=n_rows,
                           bad_rows=bad, n_bad=n_bad)


def _spill_and_merge(parts, ctx, nb, rejected, origin, out_csv: Path, tell) -> pd.DataFrame:
    """Last pass of a streamed run: screen, sort and spill each part next to ``out_csv``, then
    merge the sorted files into it; returns the first 1000 ranked rows."""
    zones = ctx.zones()
    with spill_dir(out_csv) as spill:
        block = block_rows_for(len(parts), LOCAL_MERGE_ROWS)
        paths = []
        for i, p in enumerate(parts):
            table = screen_part(read_check(p, zones, origin), ctx, nb, rejected)
            spill_sorted(table, str(spill), block, partition_info={"number": i})
            paths.append(str(spill / f"part-{i:06d}.parquet"))
            del table
            tell(0.3 + 0.6 * (i + 1) / len(parts), f"screened part {i + 1} of {len(parts)}")
        return merge_sorted_parts(paths, out_csv, columns=result_columns(ctx.turbines),
                                  block_rows=block, head_rows=1000).head


def ranked_frame(results: list, ctx: ScreeningContext) -> pd.DataFrame:
    """Parts' result arrays joined, put in ranking order and made one frame (as
    :func:`engine.screening.compute.rank_results` of the parts' frames, without sorting a
    frame). The parts' dicts are emptied on the way."""
    if not results:
        return rank_results(empty_result(ctx))
    # Column by column, each source is let go as soon as it is copied, so that the next copy
    # can reuse its memory: fresh memory is what costs at a million rows (page faults).
    cols = {}
    for c in result_columns(ctx.turbines):
        cols[c] = (np.concatenate([r.pop(c) for r in results]) if len(results) > 1
                   else results[0].pop(c))
    order = ranking_order(cols["suitability_code"], descending_aep_key(cols["best_aep_kwh"]),
                          cols["id"])
    for c in list(cols):
        cols[c] = cols[c].take(order)
    cols["rank"] = np.arange(1, len(order) + 1, dtype=np.int64)
    return result_frame(cols, ctx)


def write_ranked_csv(table: pd.DataFrame, path) -> Path:
    """Write a ranked table as CSV, atomically; formula-like text cells are defused
    (:func:`engine.io.exports.safe_csv`).

    Notes
    -----
    Written through :func:`engine.io.safe_files.atomic_write_bytes` (a temporary file with a
    name unique to this write, flushed and synced to the disk, renamed over ``path``); on any
    error (disk full, permission) the temporary file is removed and
    :class:`~engine.screening.passes.OutputWriteError` raised, so no partial table is left.
    """
    from engine.io.exports import safe_csv
    from engine.io.safe_files import atomic_write_bytes

    try:
        return atomic_write_bytes(Path(path), safe_csv(table).encode("utf-8"),
                                  keep_previous=False)
    except OSError as e:
        raise OutputWriteError(path, e) from None
