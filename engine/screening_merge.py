"""Ranking a screening table that does not fit in one process: sorted parts, then a k-way merge.

Each part of a screened table (one Dask partition, or one step of the local loop) is sorted by
the ranking key on its own and spilled to a Parquet file (:func:`write_sorted_part`). The
calling process then merges the sorted files (:func:`merge_sorted_parts`): it reads every file
in blocks of at most ``block_rows`` rows, emits at once every buffered row whose key is at most
the smallest "last buffered key" of the files that still have rows to read, numbers the emitted
rows with their global rank and appends them to the CSV. Only (files x block) rows are ever
held, whatever the table's length.

The ranking key is that of :func:`engine.screening.rank_results`: suitability class ascending,
best net AEP descending, id ascending; rows equal in all three keep their order in the
concatenated table (part by part, row by row), as a stable sort of the whole table would.
"""
from __future__ import annotations

import os
import shutil
import tempfile
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

#: Ranking columns and directions, as in :func:`engine.screening.rank_results`.
RANK_KEYS = ("suitability_code", "best_aep_kwh", "id")
RANK_ASCENDING = (True, False, True)
#: Most rows a merge buffers over all its files, when the block size is not given.
MERGE_BUFFER_ROWS = 262_144
#: Largest and smallest block read from one sorted file at a time [rows].
MAX_BLOCK_ROWS = 65_536
MIN_BLOCK_ROWS = 1_024


def sort_part(table: pd.DataFrame) -> pd.DataFrame:
    """One part sorted by the ranking key (stable), index reset; ``rank`` left as it is.

    Notes
    -----
    The same ``sort_values`` call as :func:`engine.screening.rank_results`, so a part sorted
    here and a whole table ranked there agree row for row.
    """
    return table.sort_values(list(RANK_KEYS), ascending=list(RANK_ASCENDING),
                             kind="mergesort").reset_index(drop=True)


def _arrow_schema(table: pd.DataFrame):
    """Arrow schema of a result part: text columns as strings, the others as they are."""
    import pyarrow as pa

    fields = []
    for c in table.columns:
        dt = table[c].dtype
        if pd.api.types.is_bool_dtype(dt):
            fields.append(pa.field(c, pa.bool_()))
        elif pd.api.types.is_integer_dtype(dt):
            fields.append(pa.field(c, pa.int64()))
        elif pd.api.types.is_float_dtype(dt):
            fields.append(pa.field(c, pa.float64()))
        else:
            fields.append(pa.field(c, pa.string()))
    return pa.schema(fields)


def write_sorted_part(table: pd.DataFrame, path, block_rows: int = MAX_BLOCK_ROWS) -> int:
    """Sort one part of a screened table by the ranking key and write it as Parquet.

    Parameters
    ----------
    table : unranked result rows of one part (:func:`engine.screening.screen_part`)
    path : file to write (its folder is created if missing)
    block_rows : rows per Parquet row group, so a reader's block never needs a whole file

    Returns
    -------
    Number of rows written.
    """
    import pyarrow as pa
    import pyarrow.parquet as pq

    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    ranked = sort_part(table)
    schema = _arrow_schema(ranked)
    arrow = pa.Table.from_pandas(ranked, schema=schema, preserve_index=False)
    pq.write_table(arrow, path, row_group_size=max(int(block_rows), 1))
    return len(ranked)


def block_rows_for(n_files: int, buffer_rows: int = MERGE_BUFFER_ROWS) -> int:
    """Block size [rows] that keeps a merge of ``n_files`` files within ``buffer_rows`` rows."""
    return int(min(MAX_BLOCK_ROWS, max(MIN_BLOCK_ROWS, buffer_rows // max(n_files, 1))))


def rank_key_arrays(frame: pd.DataFrame):
    """The ranking key as arrays: class code, negated AEP (NaN last) and id.

    Notes
    -----
    Descending AEP is ascending −AEP; a missing AEP sorts after every number, as pandas'
    ``sort_values`` puts NaN last in either direction (net AEP is never negative, so +∞ is a
    free place for it).
    """
    code = frame["suitability_code"].to_numpy(np.int64)
    aep = frame["best_aep_kwh"].to_numpy(float)
    neg = np.where(np.isnan(aep), np.inf, -aep)
    ids = frame["id"].to_numpy(object)
    return code, neg, ids


def merge_order(code, neg_aep, ids, part, pos) -> np.ndarray:
    """Indices that sort rows by (code, −AEP, id, part, position): one ``np.lexsort``.

    Notes
    -----
    Ids are compared as text, through their ranks among the rows given
    (``pd.factorize(..., sort=True)``, code-point order as Python's string order).
    """
    id_rank, _ = pd.factorize(np.asarray(ids, dtype=object), sort=True)
    return np.lexsort((pos, part, id_rank, neg_aep, code))


def key_at_most(code, neg_aep, ids, part, pos, limit) -> np.ndarray:
    """Whether each row's key (code, −AEP, id, part, pos) is <= ``limit`` (a tuple), vectorised.

    Notes
    -----
    Lexicographic: a < b on the first key, or equal there and so on down the keys. The text
    comparison runs only on the rows equal to the limit in class and AEP (few).
    """
    lc, la, li, lp, lq = limit
    out = (code < lc) | ((code == lc) & (neg_aep < la))
    tie = np.flatnonzero((code == lc) & (neg_aep == la))
    if len(tie):
        tid = np.asarray(ids, dtype=object)[tie]
        less = np.asarray(tid < li, dtype=bool)
        same = np.asarray(tid == li, dtype=bool)
        later = (part[tie] < lp) | ((part[tie] == lp) & (pos[tie] <= lq))
        out[tie] = less | (same & later)
    return out


def _csv_text(frame: pd.DataFrame, header: bool) -> str:
    """CSV text of one block, formula-like text defused as :func:`engine.exports.safe_csv`."""
    from .exports import neutralise_cell

    out = frame.copy()
    for c in out.columns:
        if out[c].dtype == object or str(out[c].dtype).startswith("str"):
            out[c] = [neutralise_cell("; ".join(map(str, v)) if isinstance(v, (list, tuple))
                                      else v) for v in out[c]]
    return out.to_csv(index=False, header=header, lineterminator="\n")


def _as_object_text(frame: pd.DataFrame) -> pd.DataFrame:
    """Text columns as object (Arrow strings come back as pandas' string dtype)."""
    for c in frame.columns:
        if not pd.api.types.is_numeric_dtype(frame[c].dtype) and frame[c].dtype != object:
            frame[c] = frame[c].astype(object)
    return frame


class _SortedFile:
    """A sorted part file read block by block, with its unemitted rows and their keys."""

    def __init__(self, path, index: int, block_rows: int, columns):
        import pyarrow.parquet as pq

        self.index = index
        self._file = pq.ParquetFile(path)
        self.left_to_read = self._file.metadata.num_rows
        self._batches = self._file.iter_batches(batch_size=block_rows, columns=columns)
        self.frame = None
        self.first_pos = 0  # position in the file of the buffer's first row
        self.keys = None

    @property
    def empty(self) -> bool:
        return self.frame is None or len(self.frame) == 0

    def refill(self) -> None:
        """Read the next block when the buffer is empty and the file has rows left."""
        if not self.empty or self.left_to_read <= 0:
            return
        batch = next(self._batches)
        self.frame = _as_object_text(batch.to_pandas())
        self.left_to_read -= len(self.frame)
        self.keys = rank_key_arrays(self.frame)

    def pos(self) -> np.ndarray:
        return np.arange(self.first_pos, self.first_pos + len(self.frame), dtype=np.int64)

    def last_key(self) -> tuple:
        code, neg, ids = self.keys
        return (int(code[-1]), float(neg[-1]), ids[-1], self.index,
                self.first_pos + len(self.frame) - 1)

    def take(self, n: int) -> pd.DataFrame:
        """Remove and return the first ``n`` buffered rows."""
        head = self.frame.iloc[:n]
        self.frame = self.frame.iloc[n:]
        self.first_pos += n
        self.keys = tuple(k[n:] for k in self.keys)
        return head


@dataclass(frozen=True)
class MergeResult:
    """What a merge wrote: the number of ranked rows and the first ones (ranked)."""

    n_rows: int
    head: pd.DataFrame
    block_rows: int


def merge_sorted_parts(paths, out_csv, columns=None, block_rows: int | None = None,
                       head_rows: int = 1000) -> MergeResult:
    """Merge sorted part files into one ranked CSV, in bounded blocks, written atomically.

    Parameters
    ----------
    paths : Parquet files written by :func:`write_sorted_part`, in the table's part order
        (the order decides between rows equal in class, AEP and id)
    out_csv : CSV to write; replaced only once it is whole (temporary file, then rename)
    columns : output columns in order (``rank`` among them); default: the first file's
    block_rows : rows read from one file at a time; default :func:`block_rows_for`
    head_rows : how many of the first ranked rows to return as a frame

    Returns
    -------
    :class:`MergeResult`

    Notes
    -----
    With every file sorted by the key k = (class, −AEP, id, part, position), which is unique
    per row, let L_p be the key of the last buffered row of file p and T = min L_p over the
    files that still have rows to read (or +∞ when none has). Every buffered row with k <= T is
    emitted: an unread row of file p has k > L_p >= T, so nothing later can come before them.
    The emitted rows are a prefix of each buffer; one ``np.lexsort`` orders them. The file
    reaching T is emptied and read again, so each round reads at least one block: at most
    N / block + files rounds, and never more than files x block rows in memory. Ranks run
    1..N in emission order; text cells are defused as :func:`engine.exports.safe_csv`.

    References
    ----------
    Knuth, D. E. (1998), *The Art of Computer Programming*, vol. 3, 2nd ed., section 5.4.1
    (multiway merging).
    """
    paths = [Path(p) for p in paths]
    out_csv = Path(out_csv)
    if block_rows is None:
        block_rows = block_rows_for(len(paths))
    block_rows = max(int(block_rows), 1)
    files = []
    if columns is None and paths:
        import pyarrow.parquet as pq
        columns = list(pq.read_schema(paths[0]).names)
    columns = list(columns or [])
    read_cols = [c for c in columns if c != "rank"] or None
    fd, tmp = tempfile.mkstemp(prefix=f".{out_csv.name}.", suffix=".tmp",
                               dir=out_csv.parent if str(out_csv.parent) else ".")
    head, n_done = [], 0
    try:
        os.chmod(tmp, (out_csv.stat().st_mode & 0o777) if out_csv.exists() else 0o644)
        files = [_SortedFile(p, i, block_rows, read_cols) for i, p in enumerate(paths)]
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(_csv_text(pd.DataFrame(columns=columns), header=True))
            while True:
                for f in files:
                    f.refill()
                live = [f for f in files if not f.empty]
                if not live:
                    break
                waiting = [f for f in live if f.left_to_read > 0]
                counts = []
                if waiting:
                    lasts = [f.last_key() for f in waiting]
                    # Smallest last key: a lexsort over one row per waiting file.
                    lk = [np.array([k[j] for k in lasts], dtype=object if j == 2 else None)
                          for j in range(5)]
                    limit = lasts[int(merge_order(*lk)[0])]
                    for f in live:
                        code, neg, ids = f.keys
                        part = np.full(len(code), f.index, np.int64)
                        counts.append(int(np.count_nonzero(
                            key_at_most(code, neg, ids, part, f.pos(), limit))))
                else:
                    counts = [len(f.frame) for f in live]
                pieces = [(f, f.pos()[:n], tuple(k[:n] for k in f.keys), f.take(n))
                          for f, n in zip(live, counts) if n > 0]
                code = np.concatenate([p[2][0] for p in pieces])
                neg = np.concatenate([p[2][1] for p in pieces])
                ids = np.concatenate([p[2][2] for p in pieces])
                part = np.concatenate([np.full(len(p[1]), p[0].index, np.int64) for p in pieces])
                pos = np.concatenate([p[1] for p in pieces])
                block = pd.concat([p[3] for p in pieces], ignore_index=True)
                block = block.iloc[merge_order(code, neg, ids, part, pos)].reset_index(drop=True)
                block["rank"] = np.arange(n_done + 1, n_done + len(block) + 1, dtype=np.int64)
                block = block[columns]
                if n_done < head_rows:
                    head.append(block.iloc[:head_rows - n_done])
                n_done += len(block)
                fh.write(_csv_text(block, header=False))
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, out_csv)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    head_frame = pd.concat(head, ignore_index=True) if head else pd.DataFrame(columns=columns)
    return MergeResult(n_rows=n_done, head=head_frame, block_rows=block_rows)


@contextmanager
def spill_dir(out_csv):
    """A temporary folder next to ``out_csv`` for sorted part files, removed afterwards.

    Next to the output so it is on the same file system (and, for a cluster with a shared
    file system, visible to its workers).
    """
    out_csv = Path(out_csv)
    d = tempfile.mkdtemp(prefix=f".{out_csv.name}.parts-", dir=out_csv.parent
                         if str(out_csv.parent) else ".")
    try:
        yield Path(d)
    finally:
        shutil.rmtree(d, ignore_errors=True)
