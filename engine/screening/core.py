"""Portfolio screening: which of many roofs are worth a visit?

One pass over a buildings table (CSV or Parquet, thousands to millions of rows) with the same
engine functions as the detailed assessment, vectorised over buildings:

1. **read and check** the table in parts (:func:`table_parts`, :func:`read_part`,
   :func:`check_part`); bad rows are reported by id and line with the fix, good rows go on;
2. **surroundings** from the table itself: plan and frontal area fractions and mean height of
   the buildings around each one (:func:`cell_sums`, :func:`neighbourhood_lookup`), turned into
   roughness length and displacement by the climate transfer's morphometric model;
3. **one roof position per building**, at the roof's centre, on the shortest mast that keeps
   the largest chosen rotor clear of the roof's high-turbulence zone in the main energy sectors;
4. **yield** of every chosen turbine there, then a **suitability class with reasons**.

Step 3 and 4 are :func:`screen_part`; the detailed assessment of one building
(:func:`assessment_for_building`, run through :func:`engine.chain.pipeline.evaluate`) gives the same
numbers. The same part functions run in a plain loop (:func:`screen_local`) or as Dask
partitions (:func:`screen_dask`), so both engines return identical tables.

Array shapes: N buildings, S sectors, T turbines.
"""
from __future__ import annotations

import io
import math
import os
import re
import warnings
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Optional

import numpy as np
import pandas as pd

from engine.climate import air
from engine.core import model
from engine.flow import profiles
from engine.core.errors import InputError, Problems

# ----------------------------------------------------------------------------------------------
# The buildings table
# ----------------------------------------------------------------------------------------------

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
PART_BYTES = 32 * 1024 * 1024
#: Rows per part of an in-memory table.
PART_ROWS = 250_000
#: Mean Earth radius [m] (IUGG), for latitude/longitude to local metres.
EARTH_RADIUS_M = 6_371_008.8


@dataclass(frozen=True)
class Part:
    """One part of a buildings table: a byte range of a CSV, a Parquet row group or a slice.

    ``first_line`` is the file line (CSV, header = line 1) or row number (Parquet, from 1) of
    the part's first record.
    """

    kind: str  # "csv", "parquet" or "frame"
    source: object
    start: int
    stop: int
    first_line: int
    header: tuple = ()


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
    if not path.is_file():
        raise InputError([(str(path), "no such file; give the path of a CSV or Parquet "
                                      "buildings table")])
    suffix = path.suffix.lower()
    if suffix == ".parquet":
        import pyarrow.parquet as pq
        try:
            meta = pq.ParquetFile(path).metadata
        except Exception as e:  # pyarrow raises several types for a damaged file
            raise InputError([(str(path), f"is not a readable Parquet file ({e})")]) from None
        parts, row = [], 1
        for g in range(meta.num_row_groups):
            n = meta.row_group(g).num_rows
            parts.append(Part("parquet", str(path), g, g + 1, row))
            row += n
        return parts
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
        import pyarrow.parquet as pq
        raw = pq.ParquetFile(part.source).read_row_group(part.start).to_pandas()
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


def _limit_message(name, values, lo, hi, unit, lo_open, hi_open):
    lo_s = f"> {lo:g}" if lo_open else f">= {lo:g}"
    hi_s = f"< {hi:g}" if hi_open else f"<= {hi:g}"
    return [f"{name} must be {lo_s} and {hi_s}, got {v:g} {unit}".rstrip() for v in values]


def header_problems(columns) -> list:
    """Problems with the table's columns as a whole (missing, unknown), as (where, message)."""
    cols = set(columns)
    probs = []
    for c in REQUIRED_COLUMNS:
        if c not in cols:
            probs.append(("columns", f"required column {c!r} is missing (need "
                                     f"{', '.join(REQUIRED_COLUMNS)} and x_m, y_m or "
                                     "latitude_deg, longitude_deg)"))
    has_xy = {"x_m", "y_m"} <= cols
    has_ll = {"latitude_deg", "longitude_deg"} <= cols
    if not has_xy and not has_ll:
        probs.append(("columns", "need plan positions: columns x_m and y_m (local metres) or "
                                 "latitude_deg and longitude_deg"))
    unknown = [c for c in columns if c not in KNOWN_COLUMNS and c not in ("line", LINE_PROBLEM)]
    if unknown:
        probs.append(("columns", f"unknown column(s) {', '.join(map(repr, unknown))}; known: "
                                 f"{', '.join(KNOWN_COLUMNS)}"))
    return probs


def _clean_text(v) -> str:
    """One cell as stripped text; "" for a missing cell (None, NaN, pd.NA)."""
    if isinstance(v, str):
        return v.strip()
    if v is None or v is pd.NA or (isinstance(v, float) and v != v):
        return ""
    return str(v).strip()


def _text_codes(raw: pd.DataFrame, name: str, n: int, case=None):
    """A text column of few distinct values as (codes, cleaned distinct values).

    The cells are cleaned once per distinct value (``pd.factorize``): stripped, "" when
    missing, and lower or upper case with ``case``; code -1 (a missing cell) points at the
    trailing "" of the values. A missing column is all "".
    """
    if name not in raw:
        return np.zeros(n, np.int64), np.array([""], dtype=object)
    codes, uniq = pd.factorize(raw[name])
    clean = [_clean_text(u) for u in uniq]
    if case is not None:
        clean = [getattr(c, case)() for c in clean]
    return codes, np.array(clean + [""], dtype=object)


def check_part(raw: pd.DataFrame, zones=None) -> pd.DataFrame:
    """Check and normalise the rows of one part; adds ``problem`` ("" for a good row).

    Parameters
    ----------
    raw : rows as read, with ``line``
    zones : names of the zones that have a climate, or None when one climate serves all

    Returns
    -------
    DataFrame with every known column (defaults filled in), numeric columns as float, text
    columns as object (Python str), and ``problem``: the row's problems joined by "; ", each
    with its fix.

    Notes
    -----
    Vectorised: every rule is one array comparison; messages are written only for bad rows,
    and text columns of few values are checked once per distinct value.
    """
    n = len(raw)
    out = {"line": raw["line"].to_numpy(np.int64)}
    bad_msgs = {}

    def add(mask, messages):
        idx = np.flatnonzero(mask)
        for i, m in zip(idx, messages):
            bad_msgs.setdefault(int(i), []).append(m)

    if "id" in raw:
        ids = raw["id"].to_numpy(dtype=object)
        ids = np.array([v.strip() if type(v) is str else _clean_text(v) for v in ids],
                       dtype=object)
    else:
        ids = np.full(n, "", dtype=object)
    out["id"] = ids
    empty_id = ids == ""
    add(empty_id, ["id is empty; give every building a unique id"] * int(empty_id.sum()))
    use_ll = "x_m" not in raw and "latitude_deg" in raw
    for name, (lo, hi, unit, lo_open, hi_open) in NUMERIC_LIMITS.items():
        if name not in raw:
            out[name] = np.full(n, float(BUILDING_DEFAULTS.get(name, np.nan)))
            continue
        col = raw[name]
        if pd.api.types.is_numeric_dtype(col.dtype) and not pd.api.types.is_bool_dtype(col.dtype):
            vals = col.to_numpy(dtype=float, na_value=np.nan)
            given = ~np.isnan(vals)
        else:
            vals = pd.to_numeric(col, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
            codes, clean = _text_codes(raw, name, n)
            given = (clean != "")[codes]
        required = name in REQUIRED_COLUMNS or (name in ("x_m", "y_m") and not use_ll) or (
            name in ("latitude_deg", "longitude_deg") and use_ll)
        not_number = given & ~np.isfinite(vals)
        add(not_number, [f"{name} must be a number, got {v!r}"
                         for v in col.to_numpy()[not_number]])
        if required:
            missing = ~given
            add(missing, [f"{name} is empty; it is required"] * int(missing.sum()))
        elif name in BUILDING_DEFAULTS:
            vals = np.where(given, vals, BUILDING_DEFAULTS[name])
        ok = np.isfinite(vals)
        with np.errstate(invalid="ignore"):
            low = (vals <= lo) if lo_open else (vals < lo)
            high = (vals >= hi) if hi_open else (vals > hi)
        out_of = ok & (low | high)
        add(out_of, _limit_message(name, vals[out_of], lo, hi, unit, lo_open, hi_open))
        out[name] = vals
    codes, roofs = _text_codes(raw, "roof_type", n, case="lower")
    if "roof_type" not in raw:
        roofs = np.array(["flat"], dtype=object)
    roofs = np.where(roofs == "", "flat", roofs).astype(object)
    roof = roofs[codes]
    bad_roof = np.isin(roofs, list(model.ROOF_TYPES), invert=True)[codes]
    add(bad_roof, [f"roof_type must be one of {', '.join(model.ROOF_TYPES)}, got {v!r}"
                   for v in roof[bad_roof]])
    out["roof_type"] = roof
    codes, zone_values = _text_codes(raw, "zone", n)
    zone = zone_values[codes]
    out["zone"] = zone
    if zones is not None:
        no_clim = np.isin(zone_values, list(zones), invert=True)[codes]
        add(no_clim, [f"zone {v!r} has no climate; give one with --climate {v}=FILE or a "
                      f"default climate" for v in zone[no_clim]])
    codes, cats = _text_codes(raw, "terrain_category", n, case="upper")
    cat = cats[codes]
    bad_cat = ((cats != "") & np.isin(cats, list(profiles.EN1991_TERRAIN), invert=True))[codes]
    add(bad_cat, [f"terrain_category must be one of {', '.join(profiles.EN1991_TERRAIN)} "
                  f"(EN 1991-1-4 Table 4.1) or empty, got {v!r}" for v in cat[bad_cat]])
    out["terrain_category"] = cat
    # Surroundings given by row: both fractions together, or neither.
    lp, lf = out["plan_area_fraction"], out["frontal_area_fraction"]
    half = np.isfinite(lp) != np.isfinite(lf)
    add(half, ["give plan_area_fraction and frontal_area_fraction together, or neither"]
        * int(half.sum()))
    pitched_flat = (roof == "flat") & (out["roof_pitch_deg"] > 0)
    add(pitched_flat, [f"roof_pitch_deg is {v:g} deg on a flat roof; set roof_type to pitched "
                       "or the pitch to 0" for v in out["roof_pitch_deg"][pitched_flat]])
    text = np.full(n, "", dtype=object)
    for i, msgs in bad_msgs.items():
        text[i] = "; ".join(msgs)
    if LINE_PROBLEM in raw:
        # A line that could not be split has no fields to speak of: its own message only.
        lp_text = raw[LINE_PROBLEM].to_numpy(dtype=object, na_value="")
        text = np.where(lp_text != "", lp_text, text).astype(object)
    out["problem"] = text
    # Text stays Python str (object): no conversion here, none when the screening reads it.
    return pd.DataFrame({c: (pd.Series(v, dtype=object, copy=False) if v.dtype == object
                             else v) for c, v in out.items()}, copy=False)


def duplicate_problems(ids: pd.Series, lines: pd.Series) -> pd.DataFrame:
    """Rows whose id appears more than once: (line, id, problem). None of them is screened."""
    values = np.asarray(ids, dtype=object)
    if len(set(values.tolist())) == len(values):  # the usual case, by a set of Python str
        return pd.DataFrame({"line": np.array([], np.int64), "id": [], "problem": []})
    ids = pd.Series(values, dtype=object)
    hit = ids.duplicated(keep=False).to_numpy()  # some id repeats (the set was shorter)
    dup = pd.DataFrame({"id": ids[hit].reset_index(drop=True),
                        "line": np.asarray(lines, np.int64)[hit]})
    lines_of = dup.groupby("id")["line"].apply(lambda s: sorted(s.tolist()))
    listed = lines_of.map(lambda ls: ", ".join(map(str, ls[:10])) + (" ..." if len(ls) > 10 else ""))
    dup = dup.assign(problem=[f"id {i!r} appears on {len(lines_of[i])} lines ({listed[i]}); ids "
                              "must be unique: rename or remove the copies" for i in dup["id"]])
    return dup.sort_values("line").reset_index(drop=True)


def row_problems(bad: pd.DataFrame, where_word: str = "line") -> list:
    """Bad rows as (where, message) items, sorted by line, at most :data:`MAX_LISTED_ROWS`."""
    bad = bad.sort_values("line")
    items = [(f"{where_word} {int(l)} (id {i!r})" if i else f"{where_word} {int(l)}", p)
             for l, i, p in zip(bad["line"], bad["id"], bad["problem"])]
    if len(items) > MAX_LISTED_ROWS:
        rest = len(items) - MAX_LISTED_ROWS
        items = items[:MAX_LISTED_ROWS] + [("table", f"{rest} more bad row(s) not listed")]
    return items


# ----------------------------------------------------------------------------------------------
# Surroundings from the table itself
# ----------------------------------------------------------------------------------------------

#: Side of the plan cells the table is binned into [m].
CELL_M = 20.0
#: The neighbourhood of a building is the square of (2 m + 1) cells centred on its cell:
#: with 20 m cells and m = 5, a 220 m square (a lot of a few hundred metres is the usual
#: source area of morphometric roughness; common practice).
HALF_CELLS = 5
#: Quantum of the summed areas [m²] and area-heights [m³]: sums are kept as whole numbers of
#: this quantum, so they are exact and do not depend on how the table is split into parts.
AREA_QUANTUM = 1e-4
#: Largest number of grid cells held at once while summing neighbourhoods.
MAX_BAND_CELLS = 20_000_000


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
    return _sum_by_cell(cx, cy, {"area": a, "frontal": f, "area_height": ah,
                                 "count": np.ones(len(a), np.int64)})


_CELL_SUM_COLUMNS = ("area", "frontal", "area_height", "count")


def _sum_by_cell(cx, cy, values: dict) -> pd.DataFrame:
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
    return _sum_by_cell(both["cx"].to_numpy(), both["cy"].to_numpy(),
                        {c: both[c].to_numpy() for c in _CELL_SUM_COLUMNS})


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
            g = g.cumsum(axis=0).cumsum(axis=1)  # integral image, zero first row and column
            r = iy[dst] - lo_row  # window rows r - m .. r + m in g's frame -> [r-m, r+m+1)
            c = ix[dst] + m       # window cols ix - m .. ix + m -> [c-m, c+m+1)
            r_a, r_b = np.maximum(r - m, 0), np.minimum(r + m + 1, h)
            c_a, c_b = c - m, c + m + 1
            o[dst] = g[r_b, c_b] - g[r_a, c_b] - g[r_b, c_a] + g[r_a, c_a]
    return Neighbourhood(cx0, cy0, width, keys, out[0], out[1], out[2], lot, tuple(anchor))


# ----------------------------------------------------------------------------------------------
# What every building is screened with
# ----------------------------------------------------------------------------------------------

#: Suitability classes, best first.
CLASSES = ("promising", "worth a visit", "marginal", "unsuitable")


@dataclass(frozen=True)
class ScreeningSettings:
    """Thresholds of the suitability classes and the screening's own choices.

    Capacity factors are net (after losses) of the best chosen turbine.
    """

    #: Below this the roof is unsuitable: the best urban building-mounted turbine in the
    #: Energy Saving Trust field trial (2009) stayed below 3 % load factor.
    cf_unsuitable_below: float = 0.03
    #: Below this the roof is marginal: rural building-mounted turbines reached about 5 % in
    #: that trial; the Warwick Wind Trials (2009) mean was 4.15 % excluding downtime.
    cf_marginal_below: float = 0.05
    #: At or above this the roof is promising; above 10 % is rare for roof mounts in the field
    #: trials, so such rows also carry a reason to measure before relying on it.
    cf_promising_from: float = 0.10
    #: Masts are chosen in steps of this length [m].
    mast_step_m: float = 0.1
    #: Plan area fraction above which the surroundings are called dense in the reasons [-].
    dense_plan_fraction: float = 0.35
    #: Height over the surroundings' mean height from which a building "stands above" them [-].
    tall_ratio: float = 1.5
    #: Buildings evaluated at once (bounds memory: about 50 kB per building and turbine).
    chunk_rows: int = 5000

    def __post_init__(self):
        p = Problems()
        if not (0 <= self.cf_unsuitable_below <= self.cf_marginal_below <= self.cf_promising_from <= 1):
            p.add("screening", "need 0 <= cf_unsuitable_below <= cf_marginal_below <= "
                               f"cf_promising_from <= 1, got {self.cf_unsuitable_below}, "
                               f"{self.cf_marginal_below}, {self.cf_promising_from}")
        if not self.mast_step_m > 0:
            p.add("screening.mast_step_m", f"must be > 0, got {self.mast_step_m}")
        if not int(self.chunk_rows) >= 1:
            p.add("screening.chunk_rows", f"must be >= 1, got {self.chunk_rows}")
        p.raise_if_any()


@dataclass(frozen=True)
class ScreeningContext:
    """Everything a part is screened with, besides its rows (small: shipped to every worker).

    ``climates`` maps a zone name to its climate; the key ``""`` is the climate of rows whose
    zone has none of its own.
    """

    site: model.Site
    climates: dict
    turbines: tuple
    losses: model.Losses = field(default_factory=model.Losses)
    ranking: model.RankingSettings = field(default_factory=model.RankingSettings)
    settings: ScreeningSettings = field(default_factory=ScreeningSettings)
    transfer: model.TransferSettings = field(default_factory=model.TransferSettings)
    #: (latitude, longitude) [deg] of the local origin when the table gives latitude/longitude.
    origin_deg: Optional[tuple] = None

    def __post_init__(self):
        p = Problems()
        if not self.climates:
            p.add("climate", "give at least one wind climate")
        if not self.turbines:
            p.add("turbines", "choose at least one turbine")
        ids = [t.id for t in self.turbines]
        if len(set(ids)) != len(ids):
            p.add("turbines", f"turbine ids must be unique, got {', '.join(ids)}")
        p.raise_if_any()

    def zones(self):
        """Zone names that have a climate, or None when a default climate serves every row."""
        return None if "" in self.climates else tuple(self.climates)

    @property
    def rotor_radius_m(self) -> float:
        """Largest rotor radius of the chosen turbines [m]: one mast serves all of them."""
        return max(float(t.rotor_radius_m) for t in self.turbines)


def context_from_assessment(assessment, turbine_ids=None, zone_climates=None,
                            settings: ScreeningSettings = None) -> ScreeningContext:
    """A screening context from a site file's assessment: its site, climate, turbines, losses.

    Parameters
    ----------
    assessment : :class:`engine.core.model.Assessment`
    turbine_ids : ids of the turbines to screen with (default: all of the assessment's)
    zone_climates : optional {zone: WindClimate}; the assessment's climate serves other zones
    """
    turbines = assessment.turbines
    if turbine_ids:
        by_id = {t.id: t for t in turbines}
        missing = [t for t in turbine_ids if t not in by_id]
        if missing:
            raise InputError([("turbines", f"no turbine {m!r} in the site file (has "
                                           f"{', '.join(by_id)})") for m in missing])
        turbines = tuple(by_id[t] for t in turbine_ids)
    climates = {"": assessment.climate}
    climates.update(zone_climates or {})
    return ScreeningContext(site=assessment.site, climates=climates, turbines=tuple(turbines),
                            losses=assessment.losses, ranking=assessment.ranking,
                            transfer=assessment.transfer, settings=settings or ScreeningSettings())


# ----------------------------------------------------------------------------------------------
# Screening a part
# ----------------------------------------------------------------------------------------------

#: Output columns before the per-turbine ones, in order.
RESULT_COLUMNS = ("rank", "id", "line", "zone", "suitability", "reasons", "best_turbine_id",
                  "best_aep_kwh", "best_capacity_factor", "x_m", "y_m", "length_m", "width_m",
                  "height_m", "orientation_deg", "roof_type", "roof_pitch_deg", "parapet_height_m",
                  "plan_area_fraction", "frontal_area_fraction", "surroundings_height_m",
                  "roughness_m", "displacement_m", "surroundings_from", "min_clear_mast_m",
                  "mast_height_m", "hub_height_m", "mean_speed_ms", "turbulence_intensity")


def local_metres(latitude_deg, longitude_deg, origin_deg):
    """Latitude/longitude to local metres east and north of an origin (equirectangular) [m].

    Notes
    -----
    x = R cos φ0 (λ − λ0), y = R (φ − φ0), R = 6 371 008.8 m (IUGG mean radius); the
    distortion is below 0.1 % within about 50 km of the origin, ample for neighbourhoods.
    """
    lat0, lon0 = origin_deg
    x = EARTH_RADIUS_M * math.cos(math.radians(lat0)) * np.radians(
        np.asarray(longitude_deg, float) - lon0)
    y = EARTH_RADIUS_M * np.radians(np.asarray(latitude_deg, float) - lat0)
    return x, y


def part_bounds(checked: pd.DataFrame):
    """(min lat, max lat, min lon, max lon) of a part's good rows, or None (no lat/lon)."""
    good = checked[checked["problem"] == ""]
    if not len(good) or not np.isfinite(good["latitude_deg"]).any() or np.isfinite(
            good["x_m"]).any():
        return None
    return (float(good["latitude_deg"].min()), float(good["latitude_deg"].max()),
            float(good["longitude_deg"].min()), float(good["longitude_deg"].max()))


def origin_from_bounds(bounds) -> Optional[tuple]:
    """Centre of the parts' latitude/longitude bounds [deg] (exact: a min/max reduction)."""
    bounds = [b for b in bounds if b is not None]
    if not bounds:
        return None
    b = np.array(bounds, float)
    return (float((b[:, 0].min() + b[:, 1].max()) / 2.0),
            float((b[:, 2].min() + b[:, 3].max()) / 2.0))


def with_plan_positions(checked: pd.DataFrame, origin_deg) -> pd.DataFrame:
    """Fill x_m, y_m from latitude/longitude when the table gives those; flag rows off the plan."""
    if origin_deg is None or np.isfinite(checked["x_m"].to_numpy()).any():
        return checked
    out = checked.copy()
    x, y = local_metres(out["latitude_deg"], out["longitude_deg"], origin_deg)
    out["x_m"], out["y_m"] = x, y
    lo, hi = NUMERIC_LIMITS["x_m"][:2]
    far = (out["problem"] == "").to_numpy() & ((np.abs(x) > hi) | (np.abs(y) > hi))
    msg = (f"lies more than {hi / 1000:g} km from the table's centre; screen distant areas "
           "as separate tables")
    out.loc[far, "problem"] = msg
    return out


def good_rows(checked: pd.DataFrame, rejected_lines=()) -> pd.DataFrame:
    """Rows with no problem and not among ``rejected_lines`` (duplicate ids)."""
    ok = (checked["problem"] == "").to_numpy().copy()
    if len(rejected_lines):
        ok &= ~np.isin(checked["line"].to_numpy(), np.asarray(rejected_lines, np.int64))
    return checked[ok]


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
    from engine.flow import transfer

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
                              "table: terrain category", "table: roughness length"],
                             dtype=object)


def roof_centre_climate(rows, sur: dict, mast_m, climate, air_density_kgm3,
                        transfer_settings, clearance_only: bool = False, geometry=None,
                        main_sector=None):
    """Effective climate of a roof position at each building's centre, one position per row.

    The functions :func:`engine.flow.effective.effective_climate` calls for an assessment of that one
    building with that one roof position (:func:`engine.flow.transfer.weibull_at_hub`,
    :func:`engine.flow.effective.roof_effects`; with no other building there is no upwind wake), with the
    surroundings' roughness and displacement per row instead of one site's.

    Returns
    -------
    :class:`engine.flow.effective.EffectiveClimate` with P = len(rows); diagnostics (P,):
    ``min_clear_mast_m``, ``in_turbulence_zone``, ``in_recirculation_zone``, ``in_roof_wake``.
    With ``clearance_only``, just the (P,) ``min_clear_mast_m`` [m] and the (P, S) main energy
    sectors it was found with (the roof flow is skipped).

    ``rows`` is a DataFrame or a dict of (P,) column arrays; ``geometry`` the
    :func:`roof_centre_geometry` of the same rows (found here when not given), so that the mast
    search and the final climate share it; ``main_sector`` the (P, S) main energy sectors when
    already found at another mast (:func:`choose_mast_m` says when they are the same).
    """
    from engine.flow import effective as flow
    from engine.flow import roofzones
    from engine.flow import transfer

    H = np.asarray(rows["height_m"], float)
    mast = np.asarray(mast_m, float)
    hub = H + mast
    z0, d = sur["roughness_m"], sur["displacement_m"]
    k, free_c = transfer.weibull_at_hub(climate, z0, d, hub, transfer_settings)
    P, S = free_c.shape
    sector_deg = np.asarray(climate.sector_deg, float)
    freq = np.broadcast_to(np.asarray(climate.frequency, float), (P, S)).copy()
    ti0 = np.broadcast_to(profiles.turbulence_intensity_terrain(hub, z0, d)[:, None],
                          (P, S)).copy()
    main = (roofzones.main_energy_sectors(roofzones.sector_energy_share(freq, k, free_c))
            if main_sector is None else np.asarray(main_sector, bool))
    zero = np.zeros(P)
    rf = flow.roof_effects(sector_deg, H, np.asarray(rows["length_m"], float),
                           np.asarray(rows["width_m"], float),
                           np.asarray(rows["orientation_deg"], float),
                           np.asarray(rows["parapet_height_m"], float),
                           np.asarray(rows["roof_type"], object) == "pitched", zero, zero, mast,
                           ti0, main, clearance_only=clearance_only, geometry=geometry)
    min_clear = rf["min_clear_mast_m"]
    if clearance_only:
        return min_clear, main
    clear = rf["clearance"]
    s_roof, ti, skew = rf["speed_factor"], rf["turbulence_intensity"], rf["inflow_skew_deg"]
    diag = {"min_clear_mast_m": min_clear,
            "in_turbulence_zone": ((clear["turbulence"] < 0) & main).any(axis=1),
            "in_recirculation_zone": ((clear["recirculation"] < 0) & main).any(axis=1),
            "in_roof_wake": ((clear["wake"] < 0) & main).any(axis=1)}
    return flow.EffectiveClimate(
        position_ids=tuple(rows["id"]), sector_deg=sector_deg, hub_height_m=hub,
        frequency=freq, weibull_k=k, free_c_ms=free_c, speed_factor=s_roof,
        turbulence_intensity=ti, inflow_skew_deg=skew,
        air_density_kgm3=float(air_density_kgm3), flags=(), diagnostics=diag)


def roof_centre_geometry(rows, sector_deg) -> dict:
    """:func:`engine.flow.effective.roof_geometry` of a position at each roof's centre, (P, S) arrays."""
    from engine.flow import effective as flow

    zero = np.zeros(len(rows["height_m"]))
    return flow.roof_geometry(sector_deg, np.asarray(rows["height_m"], float),
                              np.asarray(rows["length_m"], float),
                              np.asarray(rows["width_m"], float),
                              np.asarray(rows["orientation_deg"], float),
                              np.asarray(rows["parapet_height_m"], float), zero, zero)


def choose_mast_m(rows, sur: dict, climate, air_density_kgm3, ctx, geometry=None,
                  return_main: bool = False):
    """Mast for each roof centre: clear of the turbulence zone with the largest chosen rotor [m].

    The hub at the zone's top plus the largest rotor radius, rounded up to the settings' step,
    at least the 0.5 m a position allows and at most 60 m. With ``return_main``, also the
    (P, S) main energy sectors, or None when they depend on the mast.

    Notes
    -----
    The main energy sectors are found at a first mast (rotor radius + 1 m). When the Weibull
    shape changes with height they depend on the hub height, so the clearance is found once
    more at the mast the first pass gives; otherwise every sector's scale changes by the same
    factor with height and the sectors stay the same, at this mast and at any other.
    """
    r = ctx.rotor_radius_m
    step = ctx.settings.mast_step_m
    mast = np.full(len(rows["height_m"]), r + 1.0)
    if geometry is None:
        geometry = roof_centre_geometry(rows, np.asarray(climate.sector_deg, float))
    varies = ctx.transfer.adjust_shape_with_height
    for _ in range(2 if varies else 1):
        need, main = roof_centre_climate(rows, sur, mast, climate, air_density_kgm3,
                                         ctx.transfer, clearance_only=True, geometry=geometry)
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


def _empty_result(ctx: ScreeningContext) -> pd.DataFrame:
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


def suitability(best_cf, mast_m, hub_m, sur: dict, rows, ctx: ScreeningContext):
    """Suitability class code (index into :data:`CLASSES`) and reasons text per building.

    Notes
    -----
    By the best turbine's net capacity factor against the settings' thresholds; a building is
    unsuitable whatever its yield when the mast it needs is above the ranking's mast limit, or
    when the hub would sit at or below the surroundings' displacement height.
    """
    st = ctx.settings
    limit = ctx.ranking.max_mast_height_m
    code = np.where(best_cf >= st.cf_promising_from, 0,
                    np.where(best_cf >= st.cf_marginal_below, 1,
                             np.where(best_cf >= st.cf_unsuitable_below, 2, 3)))
    mast_over = mast_m > limit + 1e-9
    hub_low = hub_m <= sur["displacement_m"]
    code = np.where(mast_over | hub_low, 3, code)
    pct = lambda v: f"{v * 100:g} %"  # noqa: E731 - a label, formatted once per run
    by_cf = np.array([
        f"capacity factor {pct(st.cf_promising_from)} or more: rare for roof mounts in field "
        "trials; measure on the roof before relying on it",
        f"capacity factor {pct(st.cf_marginal_below)} to {pct(st.cf_promising_from)}: worth a "
        "visit and a measurement",
        f"capacity factor {pct(st.cf_unsuitable_below)} to {pct(st.cf_marginal_below)}: typical "
        "of building-mounted turbines in field trials",
        f"capacity factor below {pct(st.cf_unsuitable_below)}: less than the best urban roof "
        "mounts in field trials"], dtype=object)
    cf_code = np.where(best_cf >= st.cf_promising_from, 0,
                       np.where(best_cf >= st.cf_marginal_below, 1,
                                np.where(best_cf >= st.cf_unsuitable_below, 2, 3)))
    extra = [
        (mast_over, f"needs a mast above the {limit:g} m limit to clear the roof's "
                    "turbulence zone"),
        (hub_low, "hub at or below the displacement height of the surroundings: deep in "
                  "their wake, the profile there is only held at its lowest value"),
        (sur["plan_area_fraction"] > st.dense_plan_fraction,
         "dense surroundings slow the wind"),
        (np.asarray(rows["height_m"], float) >= st.tall_ratio * sur["surroundings_height_m"],
         "stands above its neighbours"),
        (np.asarray(rows["roof_type"], object) == "pitched",
         "pitched roof: the flow over it depends strongly on direction"),
    ]
    # Each row's reasons are one combination of a few fixed phrases: write each combination
    # present once and let the rows share it (no text work per row).
    combo = cf_code.astype(np.int64)
    for bit, (mask, _) in enumerate(extra):
        combo = combo + (np.asarray(mask, bool).astype(np.int64) << (2 + bit))
    # The combinations present, by counting (codes < 2^7; no sort of every row's code).
    uniq = np.flatnonzero(np.bincount(combo, minlength=1))
    where = np.zeros(int(uniq[-1]) + 1 if len(uniq) else 1, np.int64)
    where[uniq] = np.arange(len(uniq))
    inverse = where[combo]
    phrases = np.empty(len(uniq), dtype=object)
    for i, u in enumerate(uniq):
        parts = [by_cf[u & 3]] + [w for bit, (_, w) in enumerate(extra) if u >> (2 + bit) & 1]
        phrases[i] = "; ".join(parts)
    return code.astype(np.int64), phrases[inverse.ravel()]


def screen_part(checked: pd.DataFrame, ctx: ScreeningContext, nb: Neighbourhood,
                rejected_lines=()) -> pd.DataFrame:
    """Screen the good rows of one checked part: one result row per building (unranked).

    The frame of :func:`screen_columns`, with the columns of :func:`result_columns` and text
    columns as object (as in the Dask meta).
    """
    return _result_frame(screen_columns(checked, ctx, nb, rejected_lines), ctx)


def _result_frame(cols, ctx: ScreeningContext) -> pd.DataFrame:
    """The result frame of :func:`screen_columns`' arrays; None gives the empty result."""
    if cols is None:
        return _empty_result(ctx)
    # Text columns stay object (as in _empty_result, the Dask meta): no conversion per part.
    # The arrays are the frame's own (copy=False): no copy into 2-D blocks.
    return pd.DataFrame({c: (pd.Series(cols[c], dtype=object, copy=False)
                             if cols[c].dtype == object else cols[c])
                         for c in result_columns(ctx.turbines)}, copy=False)


def screen_columns(checked: pd.DataFrame, ctx: ScreeningContext, nb: Neighbourhood,
                   rejected_lines=()):
    """The results of :func:`screen_part` as a dict of (n,) arrays, or None with no good row.

    Per zone (its climate) and per chunk of ``ctx.settings.chunk_rows`` buildings: the
    surroundings (:func:`surroundings`), the mast (:func:`choose_mast_m`), the effective climate
    at the roof's centre (:func:`roof_centre_climate`), the yield of every turbine
    (:func:`engine.energy.aep.prepare_bins`, the method of bins of the detailed assessment's
    :func:`engine.energy.aep.yield_arrays`) and the
    class (:func:`suitability`). ``rank`` is 0 until :func:`rank_results`.
    """
    from engine.energy import aep as energy
    from engine.climate.weibull import mixture_mean_ms

    rows = good_rows(checked, rejected_lines)
    if len(rows) == 0:
        return None
    # The columns as plain arrays once: a chunk is then a slice of each, with no frame work.
    rows = {c: (rows[c].to_numpy() if pd.api.types.is_numeric_dtype(rows[c].dtype)
                else rows[c].to_numpy(object)) for c in rows.columns}
    n, T = len(rows["id"]), len(ctx.turbines)
    sur = surroundings(rows, nb, ctx.transfer.morphometry_layout)
    rho = air.site_air_density_kgm3(ctx.site)
    zone = np.asarray(rows["zone"], object)
    zkey = np.where(np.isin(zone, [z for z in ctx.climates if z]), zone, "")
    need = np.empty(n)
    mast = np.empty(n)
    hub = np.empty(n)
    mean_ms = np.empty(n)
    ti_mean = np.empty(n)
    net_kwh = np.empty((n, T))
    cf = np.empty((n, T))
    step = int(ctx.settings.chunk_rows)
    keep = energy.net_fraction(ctx.losses)
    rated_w = np.array([t.rated_power_w for t in ctx.turbines], float)[None, :]
    for zk in sorted(set(zkey)):
        clim = ctx.climates[zk]
        idx_zone = np.flatnonzero(zkey == zk)
        # One zone's rows in one run (the usual case): chunks are slices, views without copies.
        run = len(idx_zone) and idx_zone[-1] - idx_zone[0] + 1 == len(idx_zone)
        for a in range(0, len(idx_zone), step):
            sel = (slice(int(idx_zone[a]), int(idx_zone[min(a + step, len(idx_zone)) - 1]) + 1)
                   if run else idx_zone[a:a + step])
            r = {k: v[sel] for k, v in rows.items()}
            s = {k: v[sel] for k, v in sur.items()}
            geo = roof_centre_geometry(r, np.asarray(clim.sector_deg, float))
            mast[sel], main = choose_mast_m(r, s, clim, rho, ctx, geometry=geo,
                                            return_main=True)
            eff = roof_centre_climate(r, s, mast[sel], clim, rho, ctx.transfer, geometry=geo,
                                      main_sector=main)
            need[sel] = eff.diagnostics["min_clear_mast_m"]
            # The gross energy of engine.energy.aep.yield_arrays (its first step); the screening
            # leaves out the speed sensitivity behind P90, which costs twice as much again.
            bins = energy.prepare_bins(eff.frequency, eff.weibull_k, eff.weibull_c_ms,
                                       eff.turbulence_intensity, eff.inflow_skew_deg,
                                       ctx.turbines, rho)
            net_wh = bins.energy_wh(1.0) * keep
            hub[sel] = eff.hub_height_m
            mean_ms[sel] = mixture_mean_ms(eff.frequency, eff.weibull_k, eff.weibull_c_ms)
            ti_mean[sel] = np.sum(eff.frequency * eff.turbulence_intensity, axis=-1)
            net_kwh[sel] = net_wh / 1000.0
            cf[sel] = net_wh / (rated_w * energy.HOURS_PER_YEAR)
    best = np.argmax(net_kwh, axis=1)
    take = np.arange(n)
    best_aep, best_cf = net_kwh[take, best], cf[take, best]
    code, reasons = suitability(best_cf, mast, hub, sur, rows, ctx)
    out = {
        "rank": np.zeros(n, np.int64), "id": np.asarray(rows["id"], object),
        "line": np.asarray(rows["line"], np.int64), "zone": zone,
        "suitability": np.asarray(CLASSES, dtype=object)[code], "reasons": reasons,
        "best_turbine_id": np.asarray([t.id for t in ctx.turbines], dtype=object)[best],
        "best_aep_kwh": best_aep, "best_capacity_factor": best_cf,
        "x_m": np.asarray(rows["x_m"], float), "y_m": np.asarray(rows["y_m"], float),
        "length_m": np.asarray(rows["length_m"], float),
        "width_m": np.asarray(rows["width_m"], float),
        "height_m": np.asarray(rows["height_m"], float),
        "orientation_deg": np.asarray(rows["orientation_deg"], float),
        "roof_type": np.asarray(rows["roof_type"], object),
        "roof_pitch_deg": np.asarray(rows["roof_pitch_deg"], float),
        "parapet_height_m": np.asarray(rows["parapet_height_m"], float),
        "plan_area_fraction": sur["plan_area_fraction"],
        "frontal_area_fraction": sur["frontal_area_fraction"],
        "surroundings_height_m": sur["surroundings_height_m"],
        "roughness_m": sur["roughness_m"], "displacement_m": sur["displacement_m"],
        "surroundings_from": sur["surroundings_from"], "min_clear_mast_m": need,
        "mast_height_m": mast, "hub_height_m": hub, "mean_speed_ms": mean_ms,
        "turbulence_intensity": ti_mean, "suitability_code": code,
    }
    for j, t in enumerate(ctx.turbines):
        out[f"aep_kwh_{t.id}"] = net_kwh[:, j]
        out[f"capacity_factor_{t.id}"] = cf[:, j]
    return out


def rank_results(table: pd.DataFrame) -> pd.DataFrame:
    """Rank buildings: best class first, then larger best net AEP, then id; ``rank`` from 1."""
    from engine.screening.merge import rank_key_arrays, ranking_order

    out = table.take(ranking_order(*rank_key_arrays(table))).reset_index(drop=True)
    out["rank"] = np.arange(1, len(out) + 1, dtype=np.int64)
    return out


# ----------------------------------------------------------------------------------------------
# Engines
# ----------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ScreeningResult:
    """A ranked table (one row per screened building) and the rows that were not screened."""

    table: pd.DataFrame
    problems: list  # (where, message) items: bad rows by line and id, with the fix
    n_rows: int     # rows read
    bad_rows: pd.DataFrame  # line, id, problem of every row left out

    @property
    def n_screened(self) -> int:
        return len(self.table)


def _check_header(parts):
    cols = parts[0].header if parts and parts[0].kind == "csv" else None
    if parts and parts[0].kind == "frame":
        cols = tuple(parts[0].source.columns)
    if parts and parts[0].kind == "parquet":
        import pyarrow.parquet as pq
        cols = tuple(pq.ParquetFile(parts[0].source).schema_arrow.names)
    probs = header_problems(cols or ())
    if probs:
        raise InputError(probs)


def _bad_rows(checked_list, dups: pd.DataFrame) -> pd.DataFrame:
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


def screen_local(source, ctx: ScreeningContext, progress=None, part_bytes: int = PART_BYTES,
                 part_rows: int = PART_ROWS) -> ScreeningResult:
    """Screen a buildings table with pandas/numpy in this process.

    Parameters
    ----------
    source : path of a CSV or Parquet table, or a DataFrame
    ctx : the climate(s), turbines and settings
    progress : optional callable(fraction done 0..1, text)

    Raises
    ------
    InputError
        The table cannot be read, or its columns are unusable (bad rows do not raise).
    """
    def tell(f, text):
        if progress is not None:
            progress(float(f), text)

    parts = table_parts(source, part_bytes, part_rows)
    _check_header(parts)
    zones = ctx.zones()
    checked = []
    for i, p in enumerate(parts):
        checked.append(check_part(read_part(p), zones))
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
    tell(0.3, "surroundings summed")
    results = []
    for i, c in enumerate(checked):
        cols = screen_columns(c, ctx, nb, rejected)
        if cols is not None:
            results.append(cols)
        tell(0.3 + 0.7 * (i + 1) / len(checked), f"screened part {i + 1} of {len(checked)}")
    table = _ranked_frame(results, ctx)
    del results
    bad = _bad_rows(checked, dups)
    word = "row" if parts and parts[0].kind == "parquet" else "line"
    return ScreeningResult(table=finish_table(table, ctx.turbines),
                           problems=row_problems(bad, word), n_rows=int(len(all_ids)),
                           bad_rows=bad)


def _ranked_frame(results: list, ctx: ScreeningContext) -> pd.DataFrame:
    """Parts' result arrays joined, put in ranking order and made one frame (as
    :func:`rank_results` of the parts' frames, without sorting a frame). The parts' dicts
    are emptied on the way."""
    from engine.screening.merge import descending_aep_key, ranking_order

    if not results:
        return rank_results(_empty_result(ctx))
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
    return _result_frame(cols, ctx)


def _read_check(part: Part, zones=None, origin=None) -> pd.DataFrame:
    """One Dask partition: read a part, check its rows, place latitude/longitude on the plan."""
    checked = check_part(read_part(part), zones)
    return with_plan_positions(checked, origin) if origin is not None else checked


def _summary(checked: pd.DataFrame) -> dict:
    """Small facts of one checked part: its size, bad rows, lat/lon bounds, id hashes by line."""
    ok = (checked["problem"] == "").to_numpy()
    good = checked[ok]
    return {"n": len(checked), "bounds": part_bounds(checked),
            "bad": checked.loc[~ok, ["line", "id", "problem"]],
            "hash": pd.util.hash_array(good["id"].to_numpy(object)),
            "line": good["line"].to_numpy(np.int64), "anchor": part_anchor(checked)}


def _cells_and_ids(checked: pd.DataFrame, rejected_lines, anchor) -> tuple:
    """Cell sums of a part's good rows, and (id, line) of its rows among ``rejected_lines``."""
    hit = np.isin(checked["line"].to_numpy(), rejected_lines)
    return part_cells(checked, rejected_lines, anchor), checked.loc[hit, ["id", "line"]]


def _spill_sorted(table: pd.DataFrame, folder: str, block_rows: int,
                  partition_info=None) -> pd.DataFrame:
    """One Dask partition's results sorted by the ranking key and written to its file in
    ``folder``, in row groups of the merge's block size; returns its row count as a frame."""
    from engine.screening.merge import write_sorted_part
    i = partition_info["number"] if partition_info else 0
    n = write_sorted_part(table, os.path.join(folder, f"part-{i:06d}.parquet"), block_rows)
    return pd.DataFrame({"part": [i], "rows": [n]})


def screen_dask(source, ctx: ScreeningContext, client, part_bytes: int = PART_BYTES,
                part_rows: int = PART_ROWS, out_csv=None) -> ScreeningResult:
    """Screen a buildings table as Dask partitions on ``client``'s cluster.

    The partitions (``dask.dataframe.from_map`` over the table's parts) run the same functions
    as :func:`screen_local` (:func:`check_part`, :func:`part_cells`, :func:`screen_part`); the
    neighbourhood sums are whole numbers, so the table is identical. Only small facts come back
    to this process before the screening pass: bad rows, 64-bit hashes of the ids (to find
    duplicates) and the cell sums.

    Parameters
    ----------
    client : a ``distributed.Client`` (its cluster does the work)
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

    Notes
    -----
    Without ``out_csv`` the checked partitions are held on the workers between the passes and
    each partition's results are gathered as soon as it finishes, which frees it and its
    checked rows on the worker; the ranked table is assembled here.
    """
    import dask
    import dask.dataframe as dd
    from distributed import as_completed

    from engine.screening.merge import block_rows_for, merge_sorted_parts, spill_dir

    parts = table_parts(source, part_bytes, part_rows)
    _check_header(parts)
    zones = ctx.zones()
    hold = out_csv is None

    def checked_partitions(origin=None):
        frame = dd.from_map(_read_check, parts, zones=zones, origin=origin, meta=meta,
                            enforce_metadata=False)
        if not hold:
            return frame, []
        # One future per partition (not a persisted collection), so that each can be let go
        # on its own once its results are back.
        held = client.compute(frame.to_delayed())
        return dd.from_delayed(held, meta=meta, verify_meta=False), held

    with dask.config.set({"dataframe.convert-string": False}):
        meta = check_part(read_part(parts[0]).iloc[:0], zones)
        checked, held = checked_partitions()
        facts = dask.compute(*[dask.delayed(_summary)(d) for d in checked.to_delayed()])
        origin = origin_from_bounds([f["bounds"] for f in facts])
        if origin is not None:
            ctx = replace(ctx, origin_deg=origin)
            del checked, held
            checked, held = checked_partitions(origin)
            facts = dask.compute(*[dask.delayed(_summary)(d) for d in checked.to_delayed()])
        hashes = np.concatenate([f["hash"] for f in facts] or [np.zeros(0, np.uint64)])
        lines = np.concatenate([f["line"] for f in facts] or [np.zeros(0, np.int64)])
        uniq, inverse, counts = np.unique(hashes, return_inverse=True, return_counts=True)
        rejected = np.sort(lines[counts[inverse] > 1])
        del hashes, lines, uniq, inverse, counts
        rejected_d = dask.delayed(rejected, traverse=False)
        anchor = combine_anchors([f["anchor"] for f in facts])
        # The cell sums are added up as the parts' sums arrive (a few at a time), so this
        # process never holds every part's cells at once; whole numbers, so the order of the
        # additions does not change the sums.
        cell_futures = client.compute([dask.delayed(_cells_and_ids)(d, rejected_d, anchor)
                                       for d in checked.to_delayed()])
        cells, waiting, dup_parts = None, [], []
        for fut, (part_cells_, part_dups) in as_completed(cell_futures, with_results=True):
            waiting.append(part_cells_)
            dup_parts.append(part_dups)
            fut.release()
            if len(waiting) >= 8:
                cells = combine_cell_sums(([cells] if cells is not None else []) + waiting)
                waiting = []
        del cell_futures
        cells = combine_cell_sums(([cells] if cells is not None else []) + waiting)
        nb = neighbourhood_lookup(cells, anchor=anchor)
        dup_rows = pd.concat(dup_parts, ignore_index=True)
        del cells, waiting, dup_parts
        dups = duplicate_problems(dup_rows["id"], dup_rows["line"])
        bad = _bad_rows([f["bad"] for f in facts], dups)
        n_rows = int(sum(f["n"] for f in facts))
        del facts
        empty = _empty_result(ctx)
        # The neighbourhood table goes into the graph once, not once per partition (and not
        # scattered: scattered data is lost for good when a worker is restarted).
        shared = [dask.delayed(v, traverse=False) for v in (ctx, nb, rejected)]
        results = checked.map_partitions(screen_part, *shared, meta=empty)
        word = "row" if parts[0].kind == "parquet" else "line"
        if out_csv is None:
            futures = client.compute(results.to_delayed())
            # Only the result futures keep the checked partitions alive from here on.
            del results, checked, held
            where = {f.key: i for i, f in enumerate(futures)}
            tables = [None] * len(futures)
            for fut, part_table in as_completed(futures, with_results=True):
                i = where[fut.key]
                tables[i] = part_table
                futures[i] = None  # let the worker free this partition now
            fut = part_table = None
            table = rank_results(pd.concat(tables, ignore_index=True) if tables else empty)
            del tables
        else:
            out_csv = Path(out_csv)
            with spill_dir(out_csv) as spill:
                paths = [str(spill / f"part-{i:06d}.parquet") for i in range(results.npartitions)]
                block = block_rows_for(len(paths))
                try:
                    # One task per partition reads, checks, screens, sorts and writes it, so no
                    # partition's results wait in a worker's memory for a separate write task.
                    results.map_partitions(
                        _spill_sorted, str(spill), block,
                        meta=pd.DataFrame({"part": pd.Series([], dtype=np.int64),
                                           "rows": pd.Series([], dtype=np.int64)})).compute()
                except OSError as e:
                    raise InputError([(str(out_csv), f"the Dask workers could not write the "
                                                     f"sorted parts next to it ({e}); give an "
                                                     "--out folder the workers can write")]) \
                        from None
                missing = [p for p in paths if not os.path.isfile(p)]
                if missing:
                    raise InputError([(str(out_csv), f"{len(missing)} sorted part(s) written by "
                                                     "the Dask workers are not visible here; "
                                                     "the workers must share this file system "
                                                     "(or use --workers N for a local "
                                                     "cluster)")])
                table = merge_sorted_parts(paths, out_csv, columns=result_columns(ctx.turbines),
                                           block_rows=block, head_rows=1000).head
    return ScreeningResult(table=finish_table(table, ctx.turbines),
                           problems=row_problems(bad, word), n_rows=n_rows, bad_rows=bad)


def write_ranked_csv(table: pd.DataFrame, path) -> Path:
    """Write a ranked table as CSV, atomically; formula-like text cells are defused
    (:func:`engine.io.exports.safe_csv`)."""
    from engine.io.exports import safe_csv

    path = Path(path)
    tmp = path.with_name(f".{path.name}.tmp")
    tmp.write_text(safe_csv(table), encoding="utf-8")
    os.replace(tmp, path)
    return path


# ----------------------------------------------------------------------------------------------
# One building in detail
# ----------------------------------------------------------------------------------------------

#: ``st.session_state`` key under which the screening page leaves an Assessment for the
#: detailed pages (documented in docs/screening.md).
SESSION_KEY = "screening_assessment"


def assessment_for_building(row, ctx: ScreeningContext) -> model.Assessment:
    """The detailed assessment of one screened building: that building, one roof position.

    Parameters
    ----------
    row : one row of a screening table (a mapping or a pandas Series)
    ctx : the context it was screened with

    Returns
    -------
    :class:`engine.core.model.Assessment` whose :func:`engine.chain.pipeline.evaluate` gives the
    screening's numbers for that building: the surroundings' roughness and displacement (and
    the area fractions they came from) as the site's, the building alone, a roof position at its
    centre on the screening's mast, the same climate, turbines, losses and settings.
    """
    from_fractions = str(row["surroundings_from"]) in ("neighbours in the table",
                                                       "table: area fractions")
    site = replace(
        ctx.site, name=f"{ctx.site.name}: building {row['id']}"[:200],
        terrain_roughness_m=float(row["roughness_m"]), displacement_m=float(row["displacement_m"]),
        plan_area_fraction=float(row["plan_area_fraction"]) if from_fractions else None,
        frontal_area_fraction=float(row["frontal_area_fraction"]) if from_fractions else None,
        mean_building_height_m=float(row["surroundings_height_m"]) if from_fractions else None)
    transfer = ctx.transfer if from_fractions else replace(ctx.transfer, use_morphometry=False)
    zone = str(row["zone"]) if str(row["zone"]) in ctx.climates else ""
    b = model.Building(id=str(row["id"]), x_m=float(row["x_m"]), y_m=float(row["y_m"]),
                       length_m=float(row["length_m"]), width_m=float(row["width_m"]),
                       height_m=float(row["height_m"]),
                       orientation_deg=float(row["orientation_deg"]),
                       roof_type=str(row["roof_type"]),
                       roof_pitch_deg=float(row["roof_pitch_deg"]),
                       parapet_height_m=float(row["parapet_height_m"]))
    pos = model.Position(id=f"{b.id}-roof-centre", kind="roof", x_m=b.x_m, y_m=b.y_m,
                         mast_height_m=float(row["mast_height_m"]), building_id=b.id,
                         note="roof centre, mast chosen by the screening")
    return model.Assessment(site=site, climate=ctx.climates[zone], buildings=(b,),
                            positions=(pos,), turbines=ctx.turbines, losses=ctx.losses,
                            ranking=ctx.ranking, transfer=transfer)


# ----------------------------------------------------------------------------------------------
# Chart
# ----------------------------------------------------------------------------------------------

#: Colour of each suitability class on the plan (a sequential green-to-grey scale of our own).
CLASS_COLOURS = ("#1b7837", "#7fbf7b", "#d9c37a", "#9e9e9e")
#: Most points drawn on the plan; beyond it the lower classes are thinned (seeded).
MAX_PLAN_POINTS = 20_000


def plan_points(table: pd.DataFrame, max_points: int = MAX_PLAN_POINTS, seed: int = 1):
    """Rows to draw on the plan: every building of the two best classes first, then a seeded
    sample of the others up to ``max_points`` (a browser chart slows down far beyond that)."""
    if len(table) <= max_points:
        return table
    top = table[table["suitability_code"] <= 1]
    if len(top) >= max_points:
        return top.iloc[:max_points]
    rest = table[table["suitability_code"] > 1]
    return pd.concat([top, rest.sample(max_points - len(top), random_state=seed)])


def plan_scatter_chart(table: pd.DataFrame, max_points: int = MAX_PLAN_POINTS):
    """Altair plan of the screened buildings, one point per building coloured by class.

    Point size follows the footprint; the tooltip gives id, class, best turbine, net AEP and
    capacity factor, mast and reasons. Axes are local metres, equal scale.
    """
    import altair as alt

    pts = plan_points(table, max_points)
    data = pts[["id", "x_m", "y_m", "suitability", "suitability_code", "best_turbine_id",
                "best_aep_kwh", "best_capacity_factor", "mast_height_m", "height_m",
                "reasons"]].copy()
    data["footprint_m2"] = (pts["length_m"] * pts["width_m"]).to_numpy()
    data["capacity_factor_pct"] = 100.0 * data.pop("best_capacity_factor")
    span = max(float(np.ptp(data["x_m"])) if len(data) else 1.0,
               float(np.ptp(data["y_m"])) if len(data) else 1.0, 1.0)
    x0 = float(data["x_m"].min()) if len(data) else 0.0
    y0 = float(data["y_m"].min()) if len(data) else 0.0
    title = "Screened buildings by suitability"
    if len(pts) < len(table):
        title += f" ({len(pts):,d} of {len(table):,d} drawn; lower classes thinned)"
    return alt.Chart(data, title=title).mark_circle(opacity=0.8).encode(
        x=alt.X("x_m:Q", title="x east [m]", scale=alt.Scale(domain=[x0, x0 + span])),
        y=alt.Y("y_m:Q", title="y north [m]", scale=alt.Scale(domain=[y0, y0 + span])),
        color=alt.Color("suitability:N", title="suitability",
                        scale=alt.Scale(domain=list(CLASSES), range=list(CLASS_COLOURS))),
        size=alt.Size("footprint_m2:Q", title="footprint [m²]", legend=None,
                      scale=alt.Scale(range=[8, 120])),
        order=alt.Order("suitability_code:Q", sort="descending"),
        tooltip=[alt.Tooltip("id:N"), alt.Tooltip("suitability:N"),
                 alt.Tooltip("best_turbine_id:N", title="best turbine"),
                 alt.Tooltip("best_aep_kwh:Q", title="net AEP [kWh/yr]", format=",.0f"),
                 alt.Tooltip("capacity_factor_pct:Q", title="capacity factor [%]", format=".1f"),
                 alt.Tooltip("mast_height_m:Q", title="mast [m]", format=".1f"),
                 alt.Tooltip("height_m:Q", title="building height [m]", format=".1f"),
                 alt.Tooltip("reasons:N")],
    ).properties(width=620, height=620)
