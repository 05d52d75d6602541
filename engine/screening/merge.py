"""Ranking a screening table that does not fit in one process: sorted parts, then a k-way merge.

Each part of a screened table (one Dask partition) is sorted by the ranking key on its own and
spilled to a Parquet file by its worker (:func:`write_sorted_part`), together with each row's
CSV text (every column but ``rank``, formula-like text defused), so the costly text formatting
runs on the workers, in parallel. The calling process then merges the sorted files
(:func:`merge_sorted_parts`): it reads only the key columns and the row text of every file in
blocks of at most ``block_rows`` rows, emits at once every buffered row whose key is at most the
smallest "last buffered key" of the files that still have rows to read, puts its global rank in
front of its text and appends it to the CSV. Only (files x block) rows are ever held, whatever
the table's length.

The ranking key is that of :func:`engine.screening.compute.rank_results`: suitability class ascending,
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

#: Ranking columns and directions, as in :func:`engine.screening.compute.rank_results`.
RANK_KEYS = ("suitability_code", "best_aep_kwh", "id")
RANK_ASCENDING = (True, False, True)
#: Most rows a merge buffers over all its files, when the block size is not given.
MERGE_BUFFER_ROWS = 131_072
#: Largest and smallest block read from one sorted file at a time [rows].
MAX_BLOCK_ROWS = 65_536
MIN_BLOCK_ROWS = 1_024


def ranking_order(code, neg_aep, ids, *later_keys) -> np.ndarray:
    """Indices that sort rows by (code, −AEP, id, *later_keys), stable: the ranking's order.

    Parameters
    ----------
    code : (N,) int class codes; neg_aep : (N,) float, −AEP with NaN as +∞
    (:func:`rank_key_arrays`); ids : (N,) text; later_keys : (N,) int arrays breaking the
    remaining ties, most significant first

    Notes
    -----
    One ``np.lexsort`` over the numbers; the ids, compared as text (code-point order, as
    Python's string order), are ranked only among the rows that tie in class and AEP, which
    are few: sorting text is what costs. Rows that tie in every key keep their order, as with
    a stable sort.
    """
    code = np.asarray(code)
    neg_aep = np.asarray(neg_aep, float)
    order = np.lexsort(tuple(np.asarray(k) for k in reversed(later_keys)) + (neg_aep, code))
    if len(order) < 2:
        return order
    c, a = code[order], neg_aep[order]
    same = (c[1:] == c[:-1]) & (a[1:] == a[:-1])
    if not same.any():
        return order
    run = np.cumsum(np.concatenate([[True], ~same]))  # run number of each sorted place
    tied = np.concatenate([same, [False]]) | np.concatenate([[False], same])
    at = np.flatnonzero(tied)
    sub = order[at]
    id_rank, _ = pd.factorize(np.asarray(ids, dtype=object)[sub], sort=True)
    # Runs stay where they are (run numbers ascend along ``at``); inside one, ids ascend and
    # equal ids keep the order of the later keys (lexsort is stable).
    order[at] = sub[np.lexsort((id_rank, run[at]))]
    return order


def sort_part(table: pd.DataFrame) -> pd.DataFrame:
    """One part sorted by the ranking key (stable), index reset; ``rank`` left as it is.

    Notes
    -----
    The same order as :func:`engine.screening.compute.rank_results` (:func:`ranking_order`), so a
    part sorted here and a whole table ranked there agree row for row.
    """
    return table.take(ranking_order(*rank_key_arrays(table))).reset_index(drop=True)


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


#: Rows formatted as CSV text at once when a part is spilled.
CSV_TEXT_ROWS = 16_384
#: Column of a sorted part file holding each row's CSV text (after ``rank``, with its line end).
LINE_COLUMN = "_csv_line"


def csv_lines(frame: pd.DataFrame):
    """Each row's CSV text with its line end, as one Arrow ``large_string`` array.

    Notes
    -----
    The block is written once (:func:`_csv_text`, as :func:`engine.io.exports.safe_csv`) and cut
    at its record ends: a line feed ends a record where the number of double quotes before it
    is even (a quoted cell may hold a line feed; a quote inside one is doubled), counted by a
    binary search of the line feeds among the quotes, with no loop over rows.
    """
    import pyarrow as pa

    # Formatted in slices: the formatter's per-cell strings of a whole part would cost several
    # times the text itself (the same text: each row is formatted on its own).
    text = b"".join(_csv_text(frame.iloc[a:a + CSV_TEXT_ROWS], header=False).encode("utf-8")
                    for a in range(0, len(frame), CSV_TEXT_ROWS))
    b = np.frombuffer(text, dtype=np.uint8)
    nl = np.flatnonzero(b == 10)
    quotes_before = np.searchsorted(np.flatnonzero(b == 34), nl)  # no per-byte count array
    ends = nl[(quotes_before & 1) == 0]
    if len(ends) != len(frame):
        raise ValueError(f"CSV text of {len(frame)} rows has {len(ends)} record ends")
    offsets = np.concatenate([[0], ends + 1]).astype(np.int64)
    return pa.LargeStringArray.from_buffers(len(frame), pa.py_buffer(offsets),
                                            pa.py_buffer(text))


def write_sorted_part(table: pd.DataFrame, path, block_rows: int = MAX_BLOCK_ROWS) -> int:
    """Sort one part of a screened table by the ranking key and write it as Parquet.

    Parameters
    ----------
    table : unranked result rows of one part (:func:`engine.screening.compute.screen_part`); ``rank``
        is put first (and added when missing), as in the ranked table
    path : file to write (its folder is created if missing)
    block_rows : rows per Parquet row group, so a reader's block never needs a whole file

    Returns
    -------
    Number of rows written.

    Notes
    -----
    The file holds the sorted rows and, in :data:`LINE_COLUMN`, each row's CSV text without
    its rank (:func:`csv_lines`).
    """
    import pyarrow as pa
    import pyarrow.parquet as pq

    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    ranked = sort_part(table)
    if "rank" not in ranked:
        ranked.insert(0, "rank", np.zeros(len(ranked), np.int64))
    ranked = ranked[["rank"] + [c for c in ranked.columns if c != "rank"]]
    arrow = pa.Table.from_pandas(ranked, schema=_arrow_schema(ranked), preserve_index=False)
    arrow = arrow.append_column(LINE_COLUMN, csv_lines(ranked.iloc[:, 1:]))
    pq.write_table(arrow, path, row_group_size=max(int(block_rows), 1))
    return len(ranked)


def block_rows_for(n_files: int, buffer_rows: int = MERGE_BUFFER_ROWS) -> int:
    """Block size [rows] that keeps a merge of ``n_files`` files within ``buffer_rows`` rows."""
    return int(min(MAX_BLOCK_ROWS, max(MIN_BLOCK_ROWS, buffer_rows // max(n_files, 1))))


def descending_aep_key(aep) -> np.ndarray:
    """−AEP, with a missing AEP as +∞: ascending order of it is the ranking's AEP order
    (pandas' ``sort_values`` puts NaN last in either direction)."""
    aep = np.asarray(aep, float)
    return np.where(np.isnan(aep), np.inf, -aep)


def rank_key_arrays(frame: pd.DataFrame):
    """The ranking key as arrays: class code, negated AEP (NaN last) and id.

    Notes
    -----
    Descending AEP is ascending −AEP; a missing AEP sorts after every number, as pandas'
    ``sort_values`` puts NaN last in either direction (net AEP is never negative, so +∞ is a
    free place for it).
    """
    code = frame["suitability_code"].to_numpy(np.int64)
    neg = descending_aep_key(frame["best_aep_kwh"].to_numpy(float))
    ids = frame["id"].to_numpy(object)
    return code, neg, ids


def merge_order(code, neg_aep, ids, part, pos) -> np.ndarray:
    """Indices that sort rows by (code, −AEP, id, part, position) (:func:`ranking_order`)."""
    return ranking_order(code, neg_aep, ids, part, pos)


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
    """CSV text of one block, formula-like text defused as :func:`engine.io.exports.safe_csv`.

    Notes
    -----
    :func:`engine.io.exports.neutralise_cell` runs only on the cells it can change (text starting
    with a formula character or holding a carriage return, and any cell that is not text),
    found with vectorised string tests; every other cell is left as it is, so the text equals
    ``safe_csv`` of the block.
    """
    from engine.io.exports import FORMULA_START, neutralise_cell

    out = frame.copy()
    for c in out.columns:
        if out[c].dtype == object or str(out[c].dtype).startswith("str"):
            col = out[c].astype(object)
            starts = col.str.startswith(FORMULA_START)  # missing for a cell that is not text
            has_cr = col.str.contains("\r", regex=False)
            hit = (starts.isna() | starts.fillna(False).astype(bool)
                   | has_cr.fillna(False).astype(bool)).to_numpy(bool)
            if hit.any():
                vals = col.to_numpy(object).copy()
                idx = np.flatnonzero(hit)
                vals[idx] = [neutralise_cell("; ".join(map(str, v)) if isinstance(v, (list, tuple))
                                             else v) for v in vals[idx]]
                col = pd.Series(vals, index=col.index, dtype=object)
            out[c] = col
    return out.to_csv(index=False, header=header, lineterminator="\n")


def _as_object_text(frame: pd.DataFrame) -> pd.DataFrame:
    """Text columns as object (Arrow strings come back as pandas' string dtype)."""
    for c in frame.columns:
        if not pd.api.types.is_numeric_dtype(frame[c].dtype) and frame[c].dtype != object:
            frame[c] = frame[c].astype(object)
    return frame


def array_bytes(arr) -> memoryview:
    """The bytes of an Arrow (large) string array's values, end to end."""
    if len(arr) == 0:
        return memoryview(b"")
    width = 8 if str(arr.type).startswith("large_") else 4
    offsets = np.frombuffer(arr.buffers()[1], dtype=np.int64 if width == 8 else np.int32,
                            count=len(arr) + 1, offset=arr.offset * width)
    return memoryview(arr.buffers()[2])[int(offsets[0]):int(offsets[-1])]


class _SortedFile:
    """A sorted part file read block by block: its unemitted rows' keys and CSV text."""

    def __init__(self, path, index: int, block_rows: int):
        import pyarrow.parquet as pq

        self.index = index
        # One row group at a time (the parts are written in row groups of the block size):
        # the batch iterator reads ahead over the whole file, so every open part would be held
        # at once.
        self._file = pq.ParquetFile(path, pre_buffer=False)
        self.left_to_read = self._file.metadata.num_rows
        self._next_group = 0
        self._columns = list(RANK_KEYS) + [LINE_COLUMN]
        self._block_rows = max(int(block_rows), 1)
        self._group = None  # the row group being handed out, and how far
        self._group_at = 0
        self.n = 0
        self.first_pos = 0  # position in the file of the buffer's first row
        self.keys = None
        self.lines = None

    @property
    def empty(self) -> bool:
        return self.n == 0

    def refill(self) -> None:
        """Read the next block when the buffer is empty and the file has rows left."""
        if not self.empty or self.left_to_read <= 0:
            return
        while self._group is None or self._group_at >= self._group.num_rows:
            self._group = self._file.read_row_group(self._next_group,
                                                    columns=self._columns).combine_chunks()
            self._next_group += 1
            self._group_at = 0
        batch = self._group.slice(self._group_at, self._block_rows)
        self._group_at += batch.num_rows
        self.lines = batch.column(LINE_COLUMN).combine_chunks()
        self.keys = rank_key_arrays(_as_object_text(batch.select(list(RANK_KEYS)).to_pandas()))
        self.n = batch.num_rows
        self.left_to_read -= self.n

    def pos(self) -> np.ndarray:
        return np.arange(self.first_pos, self.first_pos + self.n, dtype=np.int64)

    def last_key(self) -> tuple:
        code, neg, ids = self.keys
        return (int(code[-1]), float(neg[-1]), ids[-1], self.index, self.first_pos + self.n - 1)

    def take(self, n: int):
        """Remove the first ``n`` buffered rows; return their keys, positions and text."""
        out = (tuple(k[:n] for k in self.keys), self.pos()[:n], self.lines.slice(0, n))
        self.keys = tuple(k[n:] for k in self.keys)
        self.lines = self.lines.slice(n)
        self.first_pos += n
        self.n -= n
        return out


def _read_head(paths, part, pos, columns) -> pd.DataFrame:
    """Full rows (part, pos) of the sorted files, in the order given, ``rank`` from 1."""
    import pyarrow.parquet as pq

    frames = []
    for p in np.unique(part):
        want = pos[part == p]
        need, got = int(want.max()) + 1, []
        for batch in pq.ParquetFile(paths[p]).iter_batches(batch_size=max(need, 1),
                                                            columns=columns):
            got.append(batch.to_pandas())
            if sum(len(g) for g in got) >= need:
                break
        rows = _as_object_text(pd.concat(got, ignore_index=True)).iloc[want]
        frames.append(rows.assign(_order=np.flatnonzero(part == p)))
    head = pd.concat(frames, ignore_index=True).sort_values("_order", kind="stable")
    head = head.drop(columns="_order").reset_index(drop=True)
    head["rank"] = np.arange(1, len(head) + 1, dtype=np.int64)
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
    columns : expected output columns in order, ``rank`` first (checked against the files);
        default: the first file's
    block_rows : rows read from one file at a time; default :func:`block_rows_for`
    head_rows : how many of the first ranked rows to return as a frame

    Returns
    -------
    :class:`MergeResult`

    Raises
    ------
    ValueError
        The files' columns differ from each other or from ``columns``.

    Notes
    -----
    With every file sorted by the key k = (class, −AEP, id, part, position), which is unique
    per row, let L_p be the key of the last buffered row of file p and T = min L_p over the
    files that still have rows to read (or +∞ when none has). Every buffered row with k <= T is
    emitted: an unread row of file p has k > L_p >= T, so nothing later can come before them.
    The emitted rows are a prefix of each buffer; one ``np.lexsort`` orders them. The file
    reaching T is emptied and read again, so each round reads at least one block: at most
    N / block + files rounds, and never more than files x block rows in memory. Ranks run
    1..N in emission order; each emitted line is "rank," + the row's stored CSV text.

    References
    ----------
    Knuth, D. E. (1998), *The Art of Computer Programming*, vol. 3, 2nd ed., section 5.4.1
    (multiway merging).
    """
    import pyarrow.parquet as pq

    paths = [Path(p) for p in paths]
    out_csv = Path(out_csv)
    if block_rows is None:
        block_rows = block_rows_for(len(paths))
    block_rows = max(int(block_rows), 1)
    names = [[c for c in pq.read_schema(p).names if c != LINE_COLUMN] for p in paths]
    if columns is None:
        columns = names[0] if names else ["rank"]
    columns = list(columns)
    if any(n != columns for n in names) or columns[:1] != ["rank"]:
        raise ValueError(f"sorted part files must all have the columns {columns} (rank first)")
    fd, tmp = tempfile.mkstemp(prefix=f".{out_csv.name}.", suffix=".tmp",
                               dir=out_csv.parent if str(out_csv.parent) else ".")
    try:
        os.chmod(tmp, (out_csv.stat().st_mode & 0o777) if out_csv.exists() else 0o644)
        files = [_SortedFile(p, i, block_rows) for i, p in enumerate(paths)]
        with os.fdopen(fd, "wb") as fh:
            fh.write(_csv_text(pd.DataFrame(columns=columns), header=True).encode("utf-8"))
            n_done, head_part, head_pos = _write_merged(fh, files, head_rows)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, out_csv)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    if head_part:
        head = _read_head(paths, np.concatenate(head_part), np.concatenate(head_pos), columns)
    else:
        head = pd.DataFrame(columns=columns)
    return MergeResult(n_rows=n_done, head=head, block_rows=block_rows)


def _emit_counts(live) -> list:
    """How many buffered rows of each live file can be emitted now (see
    :func:`merge_sorted_parts`): those with a key at most the smallest last buffered key of
    the files that still have rows to read, or all of them when none has."""
    waiting = [f for f in live if f.left_to_read > 0]
    if not waiting:
        return [f.n for f in live]
    lasts = [f.last_key() for f in waiting]
    # Smallest last key: a lexsort over one row per waiting file.
    lk = [np.array([k[j] for k in lasts], dtype=object if j == 2 else None) for j in range(5)]
    limit = lasts[int(merge_order(*lk)[0])]
    counts = []
    for f in live:
        code, neg, ids = f.keys
        part = np.full(f.n, f.index, np.int64)
        counts.append(int(np.count_nonzero(key_at_most(code, neg, ids, part, f.pos(), limit))))
    return counts


def _write_merged(fh, files, head_rows: int):
    """The merge's rounds: emit, order and append rows until every file is read.

    Returns (rows written, and the (part, position) arrays of the first ``head_rows``)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    head_part, head_pos, n_done = [], [], 0
    while True:
        for f in files:
            f.refill()
        live = [f for f in files if not f.empty]
        if not live:
            return n_done, head_part, head_pos
        counts = _emit_counts(live)
        pieces = [(f.index, f.take(n)) for f, n in zip(live, counts) if n > 0]
        code = np.concatenate([t[0][0] for _, t in pieces])
        neg = np.concatenate([t[0][1] for _, t in pieces])
        ids = np.concatenate([t[0][2] for _, t in pieces])
        part = np.concatenate([np.full(len(t[1]), i, np.int64) for i, t in pieces])
        pos = np.concatenate([t[1] for _, t in pieces])
        order = merge_order(code, neg, ids, part, pos)
        lines = pa.concat_arrays([t[2] for _, t in pieces]).take(pa.array(order))
        ranks = pa.array(np.arange(n_done + 1, n_done + len(order) + 1).astype(str),
                         type=pa.large_string())
        fh.write(array_bytes(pc.binary_join_element_wise(
            ranks, lines, pa.scalar(",", pa.large_string()))))
        if n_done < head_rows:
            take = order[:head_rows - n_done]
            head_part.append(part[take])
            head_pos.append(pos[take])
        n_done += len(order)


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
