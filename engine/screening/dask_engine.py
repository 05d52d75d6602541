"""The Dask engine: the same part functions as the local loop, as partitions on a cluster.

``dask.dataframe.from_map`` over the table's parts runs :func:`engine.screening.passes.
read_check`, :func:`engine.screening.passes.cells_and_ids` and :func:`engine.screening.compute.
screen_part`; the neighbourhood sums are whole numbers, so the table is identical to the local
engine's. Only small facts come back to this process before the screening pass.

A Dask client runs what its scheduler sends it: connect only to a cluster you trust (the
command line asks for a sign of trust, see :mod:`engine.cli.screen`).
"""
from __future__ import annotations

import os
from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd

from engine.core.errors import InputError
from engine.screening.checks import (check_part, duplicate_problems, origin_from_bounds,
                                     row_problems)
from engine.screening.compute import empty_result, rank_results, result_columns, screen_part
from engine.screening.merge import block_rows_for, merge_sorted_parts, spill_dir
from engine.screening.tiles import combine_blocks, part_blocks
from engine.screening.neighbourhood import (combine_anchors, combine_cell_sums,
                                            neighbourhood_lookup)
from engine.screening.passes import (OutputWriteError, ScreeningResult, bad_rows_frame,
                                     cells_and_ids, check_header, duplicate_lines, finish_table,
                                     part_facts, read_check, spill_sorted)
from engine.screening.settings import ScreeningContext
from engine.screening import table as table_layout
from engine.screening.table import read_part, table_parts


class _Run:
    """One Dask screening run's partitions: held on the workers (gathered results) or read
    again for each pass (streamed to CSV)."""

    def __init__(self, client, parts, zones, hold: bool):
        import dask
        self.client, self.parts, self.zones, self.hold = client, parts, zones, hold
        with dask.config.set({"dataframe.convert-string": False}):
            self.meta = check_part(read_part(parts[0]).iloc[:0], zones)

    def checked(self, origin=None):
        """Checked partitions (as futures held on the workers when results are gathered)."""
        import dask.dataframe as dd
        frame = dd.from_map(read_check, self.parts, zones=self.zones, origin=origin,
                            meta=self.meta, enforce_metadata=False)
        if not self.hold:
            return frame, []
        # One future per partition (not a persisted collection), so that each can be let go
        # on its own once its results are back.
        held = self.client.compute(frame.to_delayed())
        return dd.from_delayed(held, meta=self.meta, verify_meta=False), held


def _facts(run: _Run, ctx: ScreeningContext):
    """First pass: facts of every partition, again with a plan origin for latitude/longitude."""
    import dask
    checked, held = run.checked()
    facts = dask.compute(*[dask.delayed(part_facts)(d) for d in checked.to_delayed()])
    origin = origin_from_bounds([f["bounds"] for f in facts])
    if origin is not None:
        ctx = replace(ctx, origin_deg=origin)
        del checked, held
        checked, held = run.checked(origin)
        facts = dask.compute(*[dask.delayed(part_facts)(d) for d in checked.to_delayed()])
    return ctx, checked, held, facts


def _neighbourhood(client, checked, rejected, anchor):
    """Second pass: the cell sums, added up as the parts' sums arrive (a few at a time), so
    this process never holds every part's cells at once (whole numbers: any order)."""
    import dask
    from distributed import as_completed

    rejected_d = dask.delayed(rejected, traverse=False)
    futures = client.compute([dask.delayed(cells_and_ids)(d, rejected_d, anchor)
                              for d in checked.to_delayed()])
    cells, waiting, dup_parts = None, [], []
    for fut, (part_cells_, part_dups) in as_completed(futures, with_results=True):
        waiting.append(part_cells_)
        dup_parts.append(part_dups)
        fut.release()
        if len(waiting) >= 8:
            cells = combine_cell_sums(([cells] if cells is not None else []) + waiting)
            waiting = []
    del futures
    cells = combine_cell_sums(([cells] if cells is not None else []) + waiting)
    dup_rows = pd.concat(dup_parts, ignore_index=True)
    return (neighbourhood_lookup(cells, anchor=anchor),
            duplicate_problems(dup_rows["id"], dup_rows["line"]))


def _gather(client, results: list, empty) -> pd.DataFrame:
    """Each partition's results fetched as soon as it finishes (which frees it and its checked
    rows on its worker), then ranked here. ``results`` is a list holding the results
    collection and the checked partitions it was made from; it is emptied once the results
    are submitted, so that only their futures keep the checked partitions alive."""
    from distributed import as_completed

    futures = client.compute(results[0].to_delayed())
    results.clear()
    where = {f.key: i for i, f in enumerate(futures)}
    tables = [None] * len(futures)
    for fut, part_table in as_completed(futures, with_results=True):
        i = where[fut.key]
        tables[i] = part_table
        futures[i] = None  # let the worker free this partition now
    return rank_results(pd.concat(tables, ignore_index=True) if tables else empty)


def _stream(results, out_csv: Path, turbines) -> pd.DataFrame:
    """One task per partition reads, checks, screens, sorts and writes it next to
    ``out_csv``; this process merges the sorted files into the ranked CSV in bounded blocks.
    Returns the first 1000 ranked rows."""
    with spill_dir(out_csv) as spill:
        paths = [str(spill / f"part-{i:06d}.parquet") for i in range(results.npartitions)]
        block = block_rows_for(len(paths))
        try:
            results.map_partitions(
                spill_sorted, str(spill), block,
                meta=pd.DataFrame({"part": pd.Series([], dtype=np.int64),
                                   "rows": pd.Series([], dtype=np.int64)})).compute()
        except OSError as e:
            raise InputError([(str(out_csv), f"the Dask workers could not write the sorted "
                                             f"parts next to it ({e}); give an --out folder "
                                             "the workers can write")]) from None
        missing = [p for p in paths if not os.path.isfile(p)]
        if missing:
            raise InputError([(str(out_csv), f"{len(missing)} sorted part(s) written by the "
                                             "Dask workers are not visible here; the workers "
                                             "must share this file system (or use --workers N "
                                             "for a local cluster)")])
        try:
            return merge_sorted_parts(paths, out_csv, columns=result_columns(turbines),
                                      block_rows=block, head_rows=1000).head
        except OSError as e:
            raise OutputWriteError(out_csv, e) from None


def screen_dask(source, ctx: ScreeningContext, client, part_bytes: int = None,
                part_rows: int = None, out_csv=None) -> ScreeningResult:
    """Screen a buildings table as Dask partitions on ``client``'s cluster.

    Parameters
    ----------
    client : a ``distributed.Client`` (its cluster does the work, and can run code here)
    out_csv : when given, each partition's results are sorted by the ranking key and written by
        its worker to a Parquet file in a temporary folder next to ``out_csv``; this process
        merges them into the ranked CSV in bounded blocks
        (:func:`engine.screening.merge.merge_sorted_parts`) and ``table`` of the result holds
        only the first 1000 ranked rows. The checked rows are read again for each pass instead
        of being held, so neither the workers nor this process ever hold the whole table. The
        workers must see this process's file system (a local cluster does).

    Raises
    ------
    InputError
        The table cannot be read, its columns are unusable, or (with ``out_csv``) the workers'
        part files cannot be written or are not visible here.
    """
    import dask

    parts = table_parts(source, table_layout.PART_BYTES if part_bytes is None else part_bytes,
                        table_layout.PART_ROWS if part_rows is None else part_rows)
    check_header(parts)
    run = _Run(client, parts, ctx.zones(), hold=out_csv is None)
    with dask.config.set({"dataframe.convert-string": False}):
        ctx, checked, held, facts = _facts(run, ctx)
        rejected = duplicate_lines(facts)
        anchor = combine_anchors([f["anchor"] for f in facts])
        nb, dups = _neighbourhood(client, checked, rejected, anchor)
        if ctx.transfer.sector_morphometry:
            nb = replace(nb, blocks=combine_blocks(dask.compute(
                *[dask.delayed(part_blocks)(d, rejected) for d in checked.to_delayed()])))
        bad = bad_rows_frame([f["bad"] for f in facts], dups)
        n_rows = int(sum(f["n"] for f in facts))
        del facts
        empty = empty_result(ctx)
        # The neighbourhood table goes into the graph once, not once per partition (and not
        # scattered: scattered data is lost for good when a worker is restarted).
        shared = [dask.delayed(v, traverse=False) for v in (ctx, nb, rejected)]
        results = checked.map_partitions(screen_part, *shared, meta=empty)
        if out_csv is None:
            keep = [results, checked, held]
            del results, checked, held
            table = _gather(client, keep, empty)
        else:
            table = _stream(results, Path(out_csv), ctx.turbines)
    word = "row" if parts[0].kind == "parquet" else "line"
    return ScreeningResult(table=finish_table(table, ctx.turbines),
                           problems=row_problems(bad, word), n_rows=n_rows, bad_rows=bad)
