"""Checking a buildings table's rows, and placing latitude/longitude on a local plan.

Every rule is one array comparison over a part's rows (:func:`check_part`); messages are
written only for bad rows, by line and id, each with its fix. Duplicate ids are found over the
whole table (:func:`duplicate_problems`); none of the copies is screened.
"""
from __future__ import annotations

import math
from typing import Optional

import numpy as np
import pandas as pd

from engine.core import model
from engine.flow import profiles
from engine.screening.table import (BUILDING_DEFAULTS, KNOWN_COLUMNS, LINE_PROBLEM,
                                    MAX_LISTED_ROWS, NUMERIC_LIMITS, REQUIRED_COLUMNS)

#: Mean Earth radius [m] (IUGG), for latitude/longitude to local metres.
EARTH_RADIUS_M = 6_371_008.8

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


class _RowProblems:
    """Messages of a part's bad rows, collected by row index (only bad rows get text)."""

    def __init__(self, n: int):
        self.n = n
        self.by_row = {}

    def add(self, mask, messages):
        for i, m in zip(np.flatnonzero(mask), messages):
            self.by_row.setdefault(int(i), []).append(m)

    def text(self, raw: pd.DataFrame) -> np.ndarray:
        """Each row's problems joined by "; " ("" for a good row), as object (str)."""
        text = np.full(self.n, "", dtype=object)
        for i, msgs in self.by_row.items():
            text[i] = "; ".join(msgs)
        if LINE_PROBLEM in raw:
            # A line that could not be split has no fields to speak of: its own message only.
            lp_text = raw[LINE_PROBLEM].to_numpy(dtype=object, na_value="")
            text = np.where(lp_text != "", lp_text, text).astype(object)
        return text


def _check_ids(raw: pd.DataFrame, n: int, probs: _RowProblems) -> np.ndarray:
    if "id" in raw:
        ids = raw["id"].to_numpy(dtype=object)
        ids = np.array([v.strip() if type(v) is str else _clean_text(v) for v in ids],
                       dtype=object)
    else:
        ids = np.full(n, "", dtype=object)
    empty_id = ids == ""
    probs.add(empty_id, ["id is empty; give every building a unique id"] * int(empty_id.sum()))
    return ids


def _check_number(raw, name, n, use_ll, probs: _RowProblems) -> np.ndarray:
    """One numeric column as float, default filled in; its bad cells reported."""
    lo, hi, unit, lo_open, hi_open = NUMERIC_LIMITS[name]
    if name not in raw:
        return np.full(n, float(BUILDING_DEFAULTS.get(name, np.nan)))
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
    probs.add(not_number, [f"{name} must be a number, got {v!r}"
                           for v in col.to_numpy()[not_number]])
    if required:
        missing = ~given
        probs.add(missing, [f"{name} is empty; it is required"] * int(missing.sum()))
    elif name in BUILDING_DEFAULTS:
        vals = np.where(given, vals, BUILDING_DEFAULTS[name])
    ok = np.isfinite(vals)
    with np.errstate(invalid="ignore"):
        low = (vals <= lo) if lo_open else (vals < lo)
        high = (vals >= hi) if hi_open else (vals > hi)
    out_of = ok & (low | high)
    probs.add(out_of, _limit_message(name, vals[out_of], lo, hi, unit, lo_open, hi_open))
    return vals


def _check_text(raw, n, zones, probs: _RowProblems) -> dict:
    """roof_type, zone and terrain_category, cleaned once per distinct value and checked."""
    codes, roofs = _text_codes(raw, "roof_type", n, case="lower")
    if "roof_type" not in raw:
        roofs = np.array(["flat"], dtype=object)
    roofs = np.where(roofs == "", "flat", roofs).astype(object)
    roof = roofs[codes]
    bad_roof = np.isin(roofs, list(model.ROOF_TYPES), invert=True)[codes]
    probs.add(bad_roof, [f"roof_type must be one of {', '.join(model.ROOF_TYPES)}, got {v!r}"
                         for v in roof[bad_roof]])
    codes, zone_values = _text_codes(raw, "zone", n)
    zone = zone_values[codes]
    if zones is not None:
        no_clim = np.isin(zone_values, list(zones), invert=True)[codes]
        probs.add(no_clim, [f"zone {v!r} has no climate; give one with --climate {v}=FILE or "
                            "a default climate" for v in zone[no_clim]])
    codes, cats = _text_codes(raw, "terrain_category", n, case="upper")
    cat = cats[codes]
    bad_cat = ((cats != "") & np.isin(cats, list(profiles.EN1991_TERRAIN), invert=True))[codes]
    probs.add(bad_cat, [f"terrain_category must be one of {', '.join(profiles.EN1991_TERRAIN)}"
                        f" (EN 1991-1-4 Table 4.1) or empty, got {v!r}" for v in cat[bad_cat]])
    return {"roof_type": roof, "zone": zone, "terrain_category": cat}


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
    probs = _RowProblems(n)
    out = {"line": raw["line"].to_numpy(np.int64), "id": _check_ids(raw, n, probs)}
    use_ll = "x_m" not in raw and "latitude_deg" in raw
    for name in NUMERIC_LIMITS:
        out[name] = _check_number(raw, name, n, use_ll, probs)
    out.update(_check_text(raw, n, zones, probs))
    # Surroundings given by row: both fractions together, or neither.
    lp, lf = out["plan_area_fraction"], out["frontal_area_fraction"]
    half = np.isfinite(lp) != np.isfinite(lf)
    probs.add(half, ["give plan_area_fraction and frontal_area_fraction together, or neither"]
              * int(half.sum()))
    pitched_flat = (out["roof_type"] == "flat") & (out["roof_pitch_deg"] > 0)
    probs.add(pitched_flat, [f"roof_pitch_deg is {v:g} deg on a flat roof; set roof_type to "
                             "pitched or the pitch to 0"
                             for v in out["roof_pitch_deg"][pitched_flat]])
    out["problem"] = probs.text(raw)
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


def row_problems(bad: pd.DataFrame, where_word: str = "line", n_bad=None) -> list:
    """Bad rows as (where, message) items, sorted by line, at most :data:`MAX_LISTED_ROWS`.

    ``n_bad`` is the number of bad rows in all when ``bad`` holds only the first of them.
    """
    bad = bad.sort_values("line")
    items = [(f"{where_word} {int(l)} (id {i!r})" if i else f"{where_word} {int(l)}", p)
             for l, i, p in zip(bad["line"], bad["id"], bad["problem"])]
    total = len(items) if n_bad is None else max(int(n_bad), len(items))
    if total > MAX_LISTED_ROWS:
        rest = total - MAX_LISTED_ROWS
        items = items[:MAX_LISTED_ROWS] + [("table", f"{rest} more bad row(s) not listed")]
    return items


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


