"""Reading a buildings table in parts: CSV byte ranges, Parquet row groups, frame slices.

The first step of a screening run (:mod:`engine.screening`): :func:`table_parts` splits a table
into parts that every engine reads the same way (:func:`read_part`), each with the file line or
row number of its first record, so that problems are reported where the user can find them.
"""
from __future__ import annotations

import io
import os
import re
import stat
import warnings
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from engine.core.errors import InputError

#: Numeric columns and their limits (lo, hi, unit, lo_open, hi_open); the limits are those of
#: :class:`engine.core.model.Building` and :class:`engine.core.model.Site` (a test holds them equal).
NUMERIC_LIMITS = {
    "x_m": (-1e5, 1e5, "m", False, False),
    "y_m": (-1e5, 1e5, "m", False, False),
    "length_m": (1.0, 1000.0, "m", False, False),
    "width_m": (1.0, 1000.0, "m", False, False),
    "height_m": (2.0, 300.0, "m", False, False),
    "orientation_deg": (0.0, 360.0, "deg", False, True),
    "roof_pitch_deg": (0.0, 60.0, "deg", False, False),
    "parapet_height_m": (0.0, 5.0, "m", False, False),
    "latitude_deg": (-90.0, 90.0, "deg", False, False),
    "longitude_deg": (-180.0, 180.0, "deg", False, False),
    "plan_area_fraction": (0.0, 1.0, "", True, True),
    "frontal_area_fraction": (0.0, 1.0, "", True, True),
    "mean_building_height_m": (0.0, 300.0, "m", True, False),
    "roughness_m": (1e-4, 5.0, "m", False, False),
    "displacement_m": (0.0, 100.0, "m", False, False),
}
#: Defaults of optional building columns (those of :class:`engine.core.model.Building`).
BUILDING_DEFAULTS = {"orientation_deg": 0.0, "roof_type": "flat", "roof_pitch_deg": 0.0,
                     "parapet_height_m": 0.0}
REQUIRED_COLUMNS = ("id", "length_m", "width_m", "height_m")
#: Optional description of the surroundings, by row: fractions, a roughness, or a category.
SURROUNDINGS_COLUMNS = ("plan_area_fraction", "frontal_area_fraction", "mean_building_height_m",
                        "roughness_m", "displacement_m", "terrain_category")
TEXT_COLUMNS = ("id", "roof_type", "zone", "terrain_category")
KNOWN_COLUMNS = tuple(NUMERIC_LIMITS) + TEXT_COLUMNS
#: Column a part carries for lines the CSV parser could not split into the header's fields.
LINE_PROBLEM = "_line_problem"
#: Largest number of row problems listed one by one; the rest are counted.
MAX_LISTED_ROWS = 200
#: Most columns a buildings table may have (it uses a few dozen at most).
MAX_COLUMNS = 1000
#: Target size of one part of a CSV file [bytes] (a Dask partition, or a step of the local loop).
PART_BYTES = 4 * 1024 * 1024
#: Rows per part of an in-memory table.
PART_ROWS = 250_000


@dataclass(frozen=True)
class Part:
    """One part of a buildings table: a byte range of a CSV, a Parquet row group or a slice.

    ``first_line`` is the file line (CSV, header = line 1) or row number (Parquet, from 1) of
    the part's first record.
    """

    kind: str  # "csv", "parquet" or "frame"
    source: object
    start: int  # first byte (CSV), row group (Parquet) or row (frame)
    stop: int   # end byte (CSV), the group's row count (Parquet) or end row (frame)
    first_line: int
    header: tuple = ()
    #: Parquet: rows of the group to read, [first, end), so a large group is read in bounded
    #: batches; (0, 0) for the whole group.
    rows: tuple = (0, 0)


def _csv_parts(path: Path, part_bytes: int) -> list:
    """Split a CSV into byte ranges that end on line ends, with the line number of each start."""
    size = path.stat().st_size
    parts = []
    with open(path, "rb") as fh:
        header_line = fh.readline()
        n_cols = header_line.count(b",") + 1
        if n_cols > MAX_COLUMNS:
            # pandas' header read costs the square of the column count: refuse first.
            raise InputError([(str(path), f"the header has {n_cols} columns; a buildings table "
                                          f"has at most {MAX_COLUMNS} (see docs/screening.md); "
                                          "check the separator and the first line")])
        header = tuple(pd.read_csv(io.BytesIO(header_line), nrows=0).columns)
        pos, line = fh.tell(), 2
        while pos < size:
            fh.seek(min(pos + part_bytes, size))
            if fh.tell() < size:
                fh.readline()  # run on to the end of the line
            end = fh.tell()
            fh.seek(pos)
            # Count lines of this range in blocks, so a large part is never held twice.
            n, left = 0, end - pos
            while left > 0:
                block = fh.read(min(left, 8 * 1024 * 1024))
                n += block.count(b"\n")
                left -= len(block)
            parts.append(Part("csv", str(path), pos, end, line, header))
            line += n
            pos = end
    return parts


def regular_file_or_raise(path: Path, what: str) -> None:
    """Raise :class:`InputError` unless ``path`` is a regular file (not a folder, device or
    FIFO, which could block or never end), before anything opens it."""
    try:
        st = os.stat(path)
    except OSError as e:
        why = "no such file" if isinstance(e, FileNotFoundError) else f"cannot be read: {e.strerror}"
        raise InputError([(str(path), f"{why}; give the path of {what}")]) from None
    if not stat.S_ISREG(st.st_mode):
        kind = ("a folder" if stat.S_ISDIR(st.st_mode) else "a FIFO" if stat.S_ISFIFO(st.st_mode)
                else "a device or special file")
        raise InputError([(str(path), f"is {kind}, not a regular file; give the path of "
                                      f"{what}")])


def _parquet_parts(path: Path, part_rows: int) -> list:
    """Row groups of a Parquet file, each in batches of at most ``part_rows`` rows."""
    import pyarrow.parquet as pq
    try:
        meta = pq.ParquetFile(path).metadata
    except Exception as e:  # pyarrow raises several types for a damaged file
        raise InputError([(str(path), f"is not a readable Parquet file ({e})")]) from None
    parts, row, step = [], 1, max(int(part_rows), 1)
    for g in range(meta.num_row_groups):
        n = meta.row_group(g).num_rows
        if n <= step:
            parts.append(Part("parquet", str(path), g, n, row))
        else:
            parts += [Part("parquet", str(path), g, n, row + a, rows=(a, min(a + step, n)))
                      for a in range(0, n, step)]
        row += n
    return parts


def _read_parquet_rows(part: Part) -> pd.DataFrame:
    """One Parquet part: its whole row group, or rows [a, b) of it read batch by batch (a
    large group is never held whole)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    pf = pq.ParquetFile(part.source)
    a, b = part.rows
    if (a, b) == (0, 0):
        return pf.read_row_group(part.start).to_pandas()
    got, at = [], 0
    for batch in pf.iter_batches(batch_size=min(b - a, 65_536), row_groups=[part.start]):
        lo, hi = max(a - at, 0), min(b - at, batch.num_rows)
        if hi > lo:
            got.append(batch.slice(lo, hi - lo))
        at += batch.num_rows
        if at >= b:
            break
    return pa.Table.from_batches(got, schema=pf.schema_arrow).to_pandas()


def table_parts(source, part_bytes: int = PART_BYTES, part_rows: int = PART_ROWS) -> list:
    """The parts of a buildings table: a CSV or Parquet path, or a DataFrame.

    Raises
    ------
    InputError
        The file cannot be read, or its type is neither CSV nor Parquet.
    """
    if isinstance(source, pd.DataFrame):
        n = len(source)
        return [Part("frame", source, a, min(a + part_rows, n), a + 2)
                for a in range(0, max(n, 1), part_rows)]
    path = Path(source)
    regular_file_or_raise(path, "a CSV or Parquet buildings table")
    suffix = path.suffix.lower()
    if suffix == ".parquet":
        return _parquet_parts(path, part_rows)
    if suffix in (".csv", ".txt"):
        try:
            return _csv_parts(path, part_bytes)
        except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError) as e:
            raise InputError([(str(path), f"header cannot be read as CSV ({e}); the first line "
                                          "must name the columns")]) from None
    raise InputError([(str(path), f"unknown table type {suffix!r}; use .csv or .parquet")])


def read_part(part: Part) -> pd.DataFrame:
    """The raw rows of one part, with their ``line`` (file line or row number)."""
    if part.kind == "frame":
        raw = part.source.iloc[part.start:part.stop].reset_index(drop=True)
    elif part.kind == "parquet":
        raw = _read_parquet_rows(part)
    else:
        with open(part.source, "rb") as fh:
            fh.seek(part.start)
            data = fh.read(part.stop - part.start)
        skipped = {}
        try:
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always", pd.errors.ParserWarning)
                raw = pd.read_csv(io.BytesIO(data), header=None, names=list(part.header),
                                  dtype={c: object for c in TEXT_COLUMNS if c in part.header},
                                  skip_blank_lines=False, on_bad_lines="warn", engine="c",
                                  # A non-UTF-8 byte in a row must not stop the table: the
                                  # row's cells then fail their own checks, by line.
                                  encoding_errors="replace")
            # Lines with too many fields are skipped by the parser, which says which ones.
            for w in caught:
                if issubclass(w.category, pd.errors.ParserWarning):
                    for rel, why in re.findall(r"Skipping line (\d+): ([^\n]*)", str(w.message)):
                        skipped[part.first_line + int(rel) - 1] = why
        except pd.errors.EmptyDataError:
            raw = pd.DataFrame(columns=list(part.header))
        lines = np.arange(part.first_line, part.first_line + len(raw) + len(skipped),
                          dtype=np.int64)
        lines = lines[~np.isin(lines, np.fromiter(skipped, np.int64, len(skipped)))]
        raw["line"] = lines  # raw is the parser's own new frame
        raw[LINE_PROBLEM] = ""
        if skipped:
            extra = pd.DataFrame({"line": np.fromiter(skipped, np.int64, len(skipped)),
                                  LINE_PROBLEM: [f"{why} (the header has {len(part.header)} "
                                                 "columns); check commas and quotes"
                                                 for why in skipped.values()]})
            raw = pd.concat([raw, extra], ignore_index=True).sort_values(
                "line", kind="mergesort").reset_index(drop=True)
        return raw
    raw = raw.copy()
    raw["line"] = np.arange(part.first_line, part.first_line + len(raw), dtype=np.int64)
    return raw


