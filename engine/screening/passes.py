"""The passes over a table's parts that both engines run, and what a run returns.

A run reads and checks every part (:func:`read_check`), keeps only small facts of each
(:func:`part_facts`: size, bad rows, id hashes for the duplicate check, bounds), sums the
neighbourhood cells (:func:`cells_and_ids`), then screens each part (:func:`engine.screening.
compute.screen_part`). When the ranked table need not be held, each part's results are sorted
and spilled to a Parquet file (:func:`spill_sorted`) and merged into the CSV in bounded blocks
(:func:`engine.screening.merge.merge_sorted_parts`). The local loop and the Dask partitions call
the same functions, so their tables are identical.
"""
from __future__ import annotations

import os
from dataclasses import dataclass
from typing import Optional

import numpy as np
import pandas as pd

from engine.core.errors import InputError
from engine.screening.checks import (check_part, header_problems, part_bounds,
                                     with_plan_positions)
from engine.screening.compute import result_columns
from engine.screening.merge import write_sorted_part
from engine.screening.neighbourhood import part_anchor, part_cells
from engine.screening.table import MAX_LISTED_ROWS, Part, read_part


class OutputWriteError(InputError):
    """The ranked table (or the sorted parts next to it) could not be written: disk full,
    permission, a missing folder. Nothing partial is left behind."""

    def __init__(self, path, error: OSError):
        self.path = str(path)
        why = getattr(error, "strerror", None) or str(error) or type(error).__name__
        super().__init__([(self.path, f"cannot be written ({why}); nothing was written: free "
                                      "space or choose a writable folder")])


@dataclass(frozen=True)
class ScreeningResult:
    """A ranked table (one row per screened building) and the rows that were not screened.

    With a streamed run (the ranked table written to a CSV in bounded blocks), ``table`` holds
    only the first ranked rows and ``bad_rows`` the first bad rows; ``n_bad`` counts them all.
    """

    table: pd.DataFrame
    problems: list  # (where, message) items: bad rows by line and id, with the fix
    n_rows: int     # rows read
    bad_rows: pd.DataFrame  # line, id, problem of the rows left out
    n_bad: Optional[int] = None  # every row left out (default: len(bad_rows))

    @property
    def n_screened(self) -> int:
        return self.n_rows - self.n_left_out if self.n_bad is not None else len(self.table)

    @property
    def n_left_out(self) -> int:
        return len(self.bad_rows) if self.n_bad is None else int(self.n_bad)


def check_header(parts) -> None:
    """Raise :class:`InputError` when the table's columns cannot be used at all."""
    cols = parts[0].header if parts and parts[0].kind == "csv" else None
    if parts and parts[0].kind == "frame":
        cols = tuple(parts[0].source.columns)
    if parts and parts[0].kind == "parquet":
        import pyarrow.parquet as pq
        cols = tuple(pq.ParquetFile(parts[0].source).schema_arrow.names)
    probs = header_problems(cols or ())
    if probs:
        raise InputError(probs)


def bad_rows_frame(checked_list, dups: pd.DataFrame) -> pd.DataFrame:
    """(line, id, problem) of the bad rows of checked parts and of the duplicate ids, by line."""
    bad = [c.loc[c["problem"] != "", ["line", "id", "problem"]] for c in checked_list]
    bad.append(dups[["line", "id", "problem"]])
    bad = [b for b in bad if len(b)]
    if not bad:
        return pd.DataFrame({"line": np.array([], np.int64), "id": pd.Series([], dtype=object),
                             "problem": pd.Series([], dtype=object)})
    return pd.concat(bad, ignore_index=True).sort_values("line", kind="mergesort").reset_index(
        drop=True)


def finish_table(table: pd.DataFrame, turbines) -> pd.DataFrame:
    """Fixed column order and dtypes (text as object), so every engine returns the same table."""
    cols = result_columns(turbines)
    if list(table.columns) != cols:
        table = table[cols]
    table = table.reset_index(drop=True)
    for c in table.columns:
        if not pd.api.types.is_numeric_dtype(table[c].dtype) and table[c].dtype != object:
            table[c] = table[c].astype(object)
    return table


def read_check(part: Part, zones=None, origin=None) -> pd.DataFrame:
    """Read a part, check its rows, place latitude/longitude on the plan (with ``origin``)."""
    checked = check_part(read_part(part), zones)
    return with_plan_positions(checked, origin) if origin is not None else checked


def part_facts(checked: pd.DataFrame, max_bad: Optional[int] = None) -> dict:
    """Small facts of one checked part: its size, bad rows, lat/lon bounds, id hashes by line.

    ``max_bad`` keeps only the first bad rows (``n_bad`` counts them all), so the facts stay
    small whatever the part holds.
    """
    ok = (checked["problem"] == "").to_numpy()
    good = checked[ok]
    bad = checked.loc[~ok, ["line", "id", "problem"]]
    return {"n": len(checked), "bounds": part_bounds(checked), "n_bad": len(bad),
            "bad": bad if max_bad is None else bad.iloc[:max_bad],
            "hash": pd.util.hash_array(good["id"].to_numpy(object)),
            "line": good["line"].to_numpy(np.int64), "anchor": part_anchor(checked)}


def duplicate_lines(facts) -> np.ndarray:
    """Sorted lines of the good rows whose id hash appears more than once over all parts."""
    hashes = np.concatenate([f["hash"] for f in facts] or [np.zeros(0, np.uint64)])
    lines = np.concatenate([f["line"] for f in facts] or [np.zeros(0, np.int64)])
    uniq, inverse, counts = np.unique(hashes, return_inverse=True, return_counts=True)
    return np.sort(lines[counts[inverse] > 1])


def cells_and_ids(checked: pd.DataFrame, rejected_lines, anchor) -> tuple:
    """Cell sums of a part's good rows, and (id, line) of its rows among ``rejected_lines``."""
    hit = np.isin(checked["line"].to_numpy(), rejected_lines)
    return part_cells(checked, rejected_lines, anchor), checked.loc[hit, ["id", "line"]]


def spill_sorted(table: pd.DataFrame, folder: str, block_rows: int,
                 partition_info=None) -> pd.DataFrame:
    """One part's results sorted by the ranking key and written to its file in ``folder``, in
    row groups of the merge's block size; returns its row count as a frame (a Dask partition's
    ``partition_info`` gives the part's number)."""
    i = partition_info["number"] if partition_info else 0
    n = write_sorted_part(table, os.path.join(folder, f"part-{i:06d}.parquet"), block_rows)
    return pd.DataFrame({"part": [i], "rows": [n]})


def listed_bad_rows(facts, dups: pd.DataFrame) -> tuple:
    """(the first :data:`MAX_LISTED_ROWS` bad rows by line, the number of bad rows in all)."""
    bad = bad_rows_frame([f["bad"] for f in facts], dups)
    n_bad = int(sum(f["n_bad"] for f in facts)) + len(dups)
    return bad.iloc[:MAX_LISTED_ROWS + 1].reset_index(drop=True), n_bad
