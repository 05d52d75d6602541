"""Import of measured wind records (CSV/TSV) into SI arrays.

A record is a table with a timestamp and a mean wind speed, usually a direction, and optionally
a gust, an air temperature and a pressure. :func:`read_record` finds the column separator and
the columns by their headers (or takes an explicit mapping), converts units to SI and times to
UTC, and returns a :class:`Record`. It never drops a row: cells that cannot be read become NaN
and are marked, so that :mod:`engine.climate.qc` can count and exclude them in its report. Rows out of
time order are sorted (and the import says so); a timestamp that jumps far away from the rows
around it (a logger's 1970 or 2099) is rejected on its own and listed, so it cannot push the
rest of the record out of order.

Times are held as int64 nanoseconds since 1970-01-01 UTC. Timestamps that carry an offset
(``2024-03-01T10:00:00+01:00``, ``...Z``) are converted with it; timestamps without one are
taken in a fixed offset ``utc_offset_h`` from UTC (no daylight-saving shifts: loggers should
log in UTC or standard time).

References
----------
NIST Special Publication 811 (2008), Guide for the Use of the International System of Units,
Appendix B: 1 knot = 1852 m / 3600 s, 1 mile per hour = 0.44704 m/s, 1 km/h = 1/3.6 m/s.
"""
from __future__ import annotations

import hashlib
import io
import re
from dataclasses import dataclass

import numpy as np
import pandas as pd

from engine.core.errors import InputError, Problems
from engine.io import record_checks
from engine.io.record_checks import header_tokens as _tokens

#: Largest record accepted [bytes]. Ten years of 10-minute data is about 25-40 MB.
MAX_RECORD_BYTES = 100 * 1024 * 1024

#: Most columns and header length accepted (a record has a handful of columns).
MAX_COLUMNS = 200
MAX_HEADER_CHARS = 20000
#: Speed units and their factor to m/s (NIST SP 811, Appendix B).
SPEED_UNITS = {"m/s": 1.0, "km/h": 1.0 / 3.6, "mph": 0.44704, "knots": 1852.0 / 3600.0}
#: Pressure units and their factor to Pa.
PRESSURE_UNITS = {"Pa": 1.0, "hPa": 100.0, "kPa": 1000.0}
#: Direction units (converted to degrees).
DIRECTION_UNITS = ("deg", "rad")
#: Temperature units (converted to °C).
TEMPERATURE_UNITS = ("C", "K", "F")

#: Quantities a record may hold; ``speed`` is required.
FIELDS = ("speed", "direction", "gust", "temperature", "pressure")
_SI_UNIT = {"speed": "m/s", "direction": "deg", "gust": "m/s", "temperature": "°C",
            "pressure": "Pa"}

_SEPARATORS = (",", ";", "\t", "|")
_SEP_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "vertical bar"}

_TIME_WORDS = {"timestamp", "time", "datetime", "date", "utc", "ts", "dt", "zeit", "fecha"}
_SPEED_WORDS = {"speed", "ws", "wspd", "windspeed", "spd", "ff", "velocity", "vel", "wind",
                "v", "u", "mean", "avg"}
_GUST_WORDS = {"gust", "gst", "max", "peak", "fx", "wsmax", "gusts"}
_DIR_WORDS = {"dir", "direction", "wd", "wdir", "winddir", "dd", "bearing"}
_TEMP_WORDS = {"temp", "temperature", "t", "tair", "ta", "airtemp", "tc"}
_PRESS_WORDS = {"press", "pressure", "p", "baro", "pres", "slp", "qfe", "bp", "airpressure"}
_NOT_MEAN = {"std", "sd", "sigma", "stdev", "min", "ti", "count", "n", "flag", "qc"}


@dataclass(frozen=True)
class Record:
    """A measured record as read, in SI units; one entry per data row of the file.

    Attributes
    ----------
    time_ns : (N,) int64 UTC time [ns since 1970-01-01]; unreadable times hold ``NAT_NS``
    raw : field -> (N,) float values as written in the file (NaN when blank or unreadable)
    scale, offset : field -> conversion to SI, ``si = raw * scale + offset``
    unreadable : field (and ``"time"``) -> (N,) bool, a non-blank cell that is not a number/time
    columns : field -> header of the column it came from
    units : field -> unit found (or assumed) for the column
    file_name, sha256 : where the bytes came from and their SHA-256
    notes : what the import assumed or noticed, for the report
    file_row : (N,) int64 row of the file each entry came from (rows are sorted by time)
    """

    time_ns: np.ndarray
    raw: dict
    scale: dict
    offset: dict
    unreadable: dict
    columns: dict
    units: dict
    file_name: str = ""
    sha256: str = ""
    notes: tuple = ()
    #: (N,) int64 place of each row in the file (0 = first data row); None for rows made in
    #: memory, which are in their own order.
    file_row: np.ndarray | None = None

    @property
    def n_rows(self) -> int:
        return int(self.time_ns.shape[0])

    def has(self, name: str) -> bool:
        return name in self.raw

    def si(self, name: str) -> np.ndarray:
        """Values of ``name`` in SI units (m/s, deg, °C, Pa); NaN where blank or unreadable."""
        return self.raw[name] * self.scale[name] + self.offset[name]


#: Marker for an unreadable time (the int64 view of NaT).
NAT_NS = np.iinfo(np.int64).min


def _role(header: str):
    """Guess what a column holds from its header; None when unclear."""
    toks = set(_tokens(header))
    joined = re.sub(r"[^a-z]", "", header.lower())
    if toks & _TIME_WORDS or joined in ("timestamp", "datetime", "dateandtime"):
        return "time"
    if toks & _NOT_MEAN:
        return None
    if toks & _DIR_WORDS or "direction" in joined or joined.startswith("winddir"):
        return "direction"
    if toks & _GUST_WORDS or "gust" in joined:
        return "gust"
    if toks & _SPEED_WORDS or "speed" in joined:
        return "speed"
    if toks & _TEMP_WORDS or "temp" in joined:
        return "temperature"
    if toks & _PRESS_WORDS or "press" in joined:
        return "pressure"
    return None


def _speed_unit_from_header(header: str):
    h = header.lower().replace(" ", "")
    toks = set(_tokens(header))
    if "km/h" in h or toks & {"kmh", "kph", "kmph"} or "km_h" in h:
        return "km/h"
    if "mph" in toks or "mph" in h:
        return "mph"
    if toks & {"kn", "kt", "kts", "knot", "knots"}:
        return "knots"
    if "m/s" in h or toks & {"ms", "mps", "m_s"} or "m_s" in h:
        return "m/s"
    return None


def _pressure_unit(header: str, values: np.ndarray, notes: list):
    toks = set(_tokens(header))
    if toks & {"hpa", "mbar", "mb"}:
        return "hPa"
    if "kpa" in toks:
        return "kPa"
    if "pa" in toks:
        return "Pa"
    med = np.nanmedian(values) if np.isfinite(values).any() else np.nan
    unit = "Pa"
    if 500 <= med <= 1100:
        unit = "hPa"
    elif 50 <= med <= 110:
        unit = "kPa"
    notes.append(f"pressure column {header!r} has no unit in its header; taken as {unit} "
                 f"from its median {med:g}")
    return unit


def _temperature_unit(header: str, values: np.ndarray, notes: list):
    toks = set(_tokens(header))
    h = header.lower()
    if "degf" in h.replace(" ", "") or "°f" in h or "f" in toks:
        return "F"
    if toks & {"k", "kelvin"}:
        return "K"
    if "degc" in h.replace(" ", "") or "°c" in h or "c" in toks:
        return "C"
    med = np.nanmedian(values) if np.isfinite(values).any() else np.nan
    if med > 200:
        notes.append(f"temperature column {header!r} has no unit; taken as K from its median "
                     f"{med:g}")
        return "K"
    return "C"


def _decode(data: bytes, where: str):
    """Check the head of the file is text; return (decoded head, encoding for the whole)."""
    head = data[:200000]
    if b"\x00" in head[:65536]:
        raise InputError([(where, "looks like a binary file (it contains NUL bytes), not a "
                                  "CSV/TSV text table; export the record as CSV and try again")])
    try:
        text = head.decode("utf-8-sig")
        encoding = "utf-8-sig"
    except UnicodeDecodeError as e:
        if e.start >= len(head) - 4:  # a character cut at the end of the head
            text, encoding = head[:e.start].decode("utf-8-sig"), "utf-8-sig"
        else:
            text, encoding = head.decode("latin-1"), "latin-1"
    sample = text[:65536]
    ctrl = sum(1 for ch in sample if ord(ch) < 32 and ch not in "\r\n\t")
    if sample and ctrl > 0.01 * len(sample):
        raise InputError([(where, "looks like a binary file (many control characters), not a "
                                  "CSV/TSV text table; export the record as CSV and try again")])
    return text, encoding


def _find_separator(lines: list, where: str, separator):
    header = lines[0]
    counts = {s: [ln.count(s) for ln in lines] for s in _SEPARATORS}
    consistent = [s for s in _SEPARATORS if counts[s][0] >= 1 and len(set(counts[s])) == 1]
    if separator is not None:
        if counts.get(separator, [0])[0] >= 1:
            return separator
        better = max(_SEPARATORS, key=lambda s: counts[s][0])
        hint = (f"; the file seems separated by {_SEP_NAMES[better]} ({better!r}) - choose that "
                "separator or leave it to auto-detection") if counts[better][0] else ""
        raise InputError([(where, f"wrong separator: the header has no "
                                  f"{_SEP_NAMES.get(separator, repr(separator))} "
                                  f"({separator!r}){hint}")])
    if consistent:
        return max(consistent, key=lambda s: counts[s][0])
    loose = [s for s in _SEPARATORS if counts[s][0] >= 1]
    if loose:
        return max(loose, key=lambda s: counts[s][0])
    raise InputError([(where, "found only one column: no comma, semicolon, tab or | separator "
                              "in the header line; the record needs at least a timestamp and a "
                              "speed column")])


def _read_arrow(data: bytes, sep: str, skip: int) -> pd.DataFrame:
    """Read with the Arrow CSV reader into plain memory (freed at once, unlike a pool)."""
    import pyarrow as pa
    from pyarrow import csv as pacsv
    pool = pa.system_memory_pool()
    table = pacsv.read_csv(io.BytesIO(data), read_options=pacsv.ReadOptions(skip_rows=skip),
                           parse_options=pacsv.ParseOptions(delimiter=sep),
                           memory_pool=pool)
    try:
        return table.to_pandas(memory_pool=pool, self_destruct=True, split_blocks=True)
    finally:
        del table


def _to_utc_ns(t, has_offset: bool, utc_offset_h: float, notes: list):
    """Parsed timestamps as int64 UTC ns (NAT_NS where unreadable) and the unreadable mask.

    Times that carry an offset are already UTC; others are shifted by the fixed
    ``utc_offset_h`` (no daylight saving). The rule applied is added to ``notes``.
    """
    ns = t.to_numpy(dtype="datetime64[ns]").view(np.int64).copy()
    bad = t.isna().to_numpy()
    if has_offset:
        notes.append("timestamps carry a UTC offset; converted to UTC with it")
    elif utc_offset_h:
        ns[~bad] -= np.int64(round(utc_offset_h * 3600e9))
        notes.append(f"timestamps without offset taken as UTC{utc_offset_h:+g} h (fixed, no DST)")
    else:
        notes.append("timestamps without offset taken as UTC")
    ns[bad] = NAT_NS
    return ns, bad


def _parse_times(col: pd.Series, utc_offset_h: float, day_first, notes: list,
                 where: str = "time", problems: Problems | None = None):
    """Parse a column of timestamps to int64 UTC ns; unreadable -> NAT_NS (and a mask).

    Returns None when the column holds no timestamps, or when the date order cannot be
    decided (then a problem is added to ``problems``).
    """
    problems = problems if problems is not None else Problems()
    blank = col.isna().to_numpy()
    if isinstance(col.dtype, pd.DatetimeTZDtype) or pd.api.types.is_datetime64_dtype(col):
        aware = isinstance(col.dtype, pd.DatetimeTZDtype)
        t = col.dt.tz_convert("UTC") if aware else col
        ns, _ = _to_utc_ns(t, aware, utc_offset_h, notes)
        return ns, np.zeros(ns.shape, bool)
    if pd.api.types.is_numeric_dtype(col):
        v = col.to_numpy(dtype=float)
        med = np.nanmedian(v) if np.isfinite(v).any() else np.nan
        if not (1e8 < med < 1e10):
            return None
        notes.append("timestamps are numbers; read as seconds since 1970-01-01 UTC")
        ns = np.where(np.isfinite(v), v * 1e9, np.nan)
        out = np.full(v.shape, NAT_NS, dtype=np.int64)
        ok = np.isfinite(ns)
        out[ok] = np.round(ns[ok]).astype(np.int64)
        return out, ~ok & ~blank
    s = col.astype("string")
    if s.str.startswith(" ").any() or s.str.endswith(" ").any():
        s = s.str.strip()
    first = s.dropna()
    first = first.iloc[0] if len(first) else ""
    has_offset = bool(re.search(r"(Z|[+-]\d\d:?\d\d)$", first))
    t = pd.to_datetime(s, format="ISO8601", utc=True, errors="coerce")
    if t.isna().mean() > 0.5:
        order = record_checks.date_order(s, day_first, where, problems, notes)
        if order is None:
            return None
        t = pd.to_datetime(s, utc=True, errors="coerce", dayfirst=order)
    ns, bad = _to_utc_ns(t, has_offset, utc_offset_h, notes)
    return ns, bad & ~blank


def _input_bytes(data, where: str, max_bytes: int, notes: list) -> tuple:
    """The record's bytes (from bytes, a file object or a path) and their SHA-256.

    A path is read with :func:`engine.io.safe_files.read_bounded` (devices and FIFOs refused, the
    limit checked on the bytes read). UTF-16 text (with a byte-order mark, or NUL bytes in
    every second place) is decoded and re-encoded as UTF-8 and says so in ``notes``.
    """
    from engine.io.safe_files import format_size, read_bounded
    if not isinstance(data, (str, bytes)) and hasattr(data, "read"):
        data = data.read(max_bytes + 1)
    if not isinstance(data, (bytes, bytearray, memoryview)):
        data = read_bounded(data, max_bytes, "a CSV/TSV record", where)
    if len(data) > max_bytes:
        raise InputError([(where, f"is larger than the {format_size(max_bytes)} limit; split "
                                  "the record into shorter periods or thin it to 10-minute "
                                  "means")])
    data = bytes(data)
    sha = hashlib.sha256(data).hexdigest()
    head = data[:4096]
    bom16 = head[:2] in (b"\xff\xfe", b"\xfe\xff")
    odd_nul = len(head) >= 8 and (head[1::2].count(0) > 0.9 * (len(head) // 2)
                                  or head[0::2].count(0) > 0.9 * (len(head) // 2))
    if bom16 or odd_nul:
        enc = "utf-16" if bom16 else ("utf-16-le" if head[1::2].count(0) else "utf-16-be")
        try:
            data = data.decode(enc).encode("utf-8")
        except UnicodeDecodeError:
            raise InputError([(where, "looks like UTF-16 text but does not decode as UTF-16; "
                                      "save the record as UTF-8 CSV")]) from None
        notes.append("the file is UTF-16 text; decoded as UTF-16")
    return data, sha


def _table_lines(data: bytes, where: str) -> tuple:
    """First lines of the table after comments and blank lines: (lines, skip, encoding)."""
    if not data.strip():
        raise InputError([(where, "is empty; choose a CSV/TSV file with a header line and "
                                  "one row per time step")])
    head_text, encoding = _decode(data, where)
    all_lines = head_text.splitlines()
    if len(data) > len(head_text) and all_lines:
        all_lines = all_lines[:-1]  # the last line of the head may be cut short
    skip = 0
    while skip < len(all_lines) and (not all_lines[skip].strip()
                                     or all_lines[skip].lstrip().startswith("#")):
        skip += 1
    lines = [ln for ln in all_lines[skip:skip + 60] if ln.strip()]
    if not lines:
        raise InputError([(where, "holds no table (only comments or blank lines)")])
    return lines, skip, encoding


def _check_header(lines: list, skip: int, where: str, separator) -> tuple:
    """The separator and the decimal mark, after checking the header line."""
    if len(lines[0]) > MAX_HEADER_CHARS:
        raise InputError([(f"{where}: line {skip + 1}", f"the header line is "
                           f"{len(lines[0])} characters long; a record's header names a few "
                           "columns (timestamp, speed, direction, ...). Check the file")])
    sep = _find_separator(lines, where, separator)
    header = [h.strip().strip('"') for h in lines[0].split(sep)]
    if len(header) > MAX_COLUMNS:
        raise InputError([(f"{where}: line {skip + 1}", f"has {len(header)} columns, more than "
                           f"{MAX_COLUMNS}; keep the timestamp, speed, direction and the few "
                           "optional columns")])
    if not any(re.search(r"[A-Za-z]", h) for h in header):
        raise InputError([(f"{where}: line {skip + 1}", "has no column names; the first line "
                           "must name the columns, e.g. timestamp,speed_ms,direction_deg")])
    decimal = "."
    if sep != "," and any(re.search(r"\d,\d", ln) for ln in lines[1:]):
        decimal = ","
    return sep, decimal


def _read_frame(data: bytes, where: str, sep: str, skip: int, decimal: str,
                encoding: str) -> pd.DataFrame:
    """The table as a DataFrame (Arrow reader for large plain files, else the C reader)."""
    def _read(enc):
        return pd.read_csv(io.BytesIO(data), sep=sep, skiprows=skip, decimal=decimal,
                           skipinitialspace=True, engine="c", on_bad_lines="error",
                           encoding=enc, encoding_errors="strict")
    df = None
    if decimal == "." and encoding == "utf-8-sig" and len(data) > 1_000_000:
        # Large files: the Arrow reader parses ISO timestamps natively, about twice as fast.
        # Anything it does not take (odd rows, encodings) goes to the C reader below.
        try:
            df = _read_arrow(data, sep, skip)
            if list(df.columns) != [str(c).strip() for c in df.columns]:
                df = None
        except Exception:  # noqa: BLE001 - any refusal falls back to the strict reader
            df = None
    try:
        if df is None:
            try:
                df = _read(encoding)
            except UnicodeDecodeError:
                df = _read("latin-1")  # not UTF-8 after all: every byte is a Latin-1 character
    except (pd.errors.ParserError, ValueError) as e:
        msg = str(e).split("\n")[0]
        raise InputError([(where, f"could not be read as a {_SEP_NAMES[sep]}-separated table "
                                  f"({msg}); check that every row has the same number of "
                                  "columns as the header")]) from None
    df.columns = [str(c).strip() for c in df.columns]
    if len(df) == 0:
        raise InputError([(where, "has a header but no data rows")])
    return df


def _map_columns(df: pd.DataFrame, columns, problems: Problems, notes: list) -> dict:
    """Field -> column: the explicit mapping first, then columns recognised by their headers."""
    mapping = {}
    for name, col in (columns or {}).items():
        if name not in ("time",) + FIELDS:
            problems.add(f"columns.{name}", f"unknown field; use one of time, {', '.join(FIELDS)}")
        elif col not in df.columns:
            problems.add(f"columns.{name}", f"no column {col!r} in the file (columns: "
                                            f"{', '.join(df.columns)})")
        else:
            mapping[name] = col
    taken = set(mapping.values())
    for col in df.columns:
        role = _role(col)
        if role is None or col in taken:
            continue
        if role in mapping:
            if role in ("speed", "direction"):
                notes.append(f"more than one {role} column; used {mapping[role]!r}, not {col!r} "
                             "(map the column explicitly to choose)")
            continue
        mapping[role] = col
        taken.add(col)
    if "time" in mapping and _role(mapping["time"]) == "time" and mapping["time"].lower() == "date" \
            and "time" not in (columns or {}):
        other = [c for c in df.columns if c.lower() == "time"]
        if other:
            df["__datetime__"] = df[mapping["time"]].astype("string") + " " + \
                df[other[0]].astype("string")
            mapping["time"] = "__datetime__"
            notes.append(f"joined columns 'date' and {other[0]!r} into timestamps")
    if "time" not in mapping:
        problems.add("columns.time", f"no timestamp column found among {', '.join(df.columns)}; "
                                     "name it 'timestamp' or map it explicitly")
    if "speed" not in mapping:
        problems.add("columns.speed", f"no wind speed column found among {', '.join(df.columns)};"
                                      " name it e.g. 'speed_ms' or map it explicitly")
    return mapping


def _numbers(col: pd.Series) -> tuple:
    """(values as float, mask of non-blank cells that are not numbers)."""
    if pd.api.types.is_numeric_dtype(col) and not pd.api.types.is_bool_dtype(col):
        vals = col.to_numpy(dtype=float, na_value=np.nan)
        return vals, np.zeros(vals.shape, bool)
    conv = pd.to_numeric(col.astype("string").str.strip(), errors="coerce")
    vals = conv.to_numpy(dtype=float, na_value=np.nan)
    return vals, col.notna().to_numpy() & ~np.isfinite(vals)


def _convert_fields(df, mapping, units_given: dict, where: str, problems: Problems,
                    notes: list) -> tuple:
    """Each mapped quantity as raw values, unreadable mask, SI conversion and unit."""
    raw, unread, scale, offset, units = {}, {}, {}, {}, {}
    for name in FIELDS:
        if name not in mapping:
            continue
        vals, bad = _numbers(df[mapping[name]])
        if not np.isfinite(vals).any():
            why = "text, not numbers" if bad.any() else "blank"
            problems.add(f"{where}: column {mapping[name]!r}",
                         f"has no numbers ({name}); all {len(vals)} cells are {why}. "
                         + ("Fix or map another column" if name in ("speed",)
                            else "Remove the column or map another one"))
            continue
        raw[name], unread[name] = vals, bad
        if name in ("speed", "gust"):
            given = units_given["speed"] if name == "speed" else (units_given["gust"]
                                                                   or units_given["speed"])
            unit = given or _speed_unit_from_header(mapping[name]) or "m/s"
            if given is None and _speed_unit_from_header(mapping[name]) is None:
                notes.append(f"{name} column {mapping[name]!r} has no unit in its header; "
                             "taken as m/s")
            scale[name], offset[name] = SPEED_UNITS[unit], 0.0
            with np.errstate(over="ignore", invalid="ignore"):
                mean_si = np.nanmean(vals) * scale[name]
            if name == "speed" and unit == "m/s" and mean_si > 25:
                notes.append(f"mean speed {mean_si:.1f} m/s is implausibly high for m/s; "
                             "is the column in km/h or knots?")
        elif name == "direction":
            unit = record_checks.direction_unit(mapping[name], vals, units_given["direction"],
                                                where, problems, notes)
            scale[name], offset[name] = (1.0 if unit == "deg" else 180.0 / np.pi), 0.0
        elif name == "temperature":
            unit = _temperature_unit(mapping[name], vals, notes)
            scale[name], offset[name] = {"C": (1.0, 0.0), "K": (1.0, -273.15),
                                         "F": (5.0 / 9.0, -32.0 * 5.0 / 9.0)}[unit]
        else:
            unit = _pressure_unit(mapping[name], vals, notes)
            scale[name], offset[name] = PRESSURE_UNITS[unit], 0.0
        units[name] = unit
    return raw, unread, scale, offset, units


def read_record(data, file_name: str = "record.csv", *, columns=None, speed_unit=None,
                gust_unit=None, utc_offset_h: float = 0.0, separator=None,
                day_first: bool | None = None, direction_unit=None,
                max_bytes: int = MAX_RECORD_BYTES) -> Record:
    """Read a measured wind record from CSV/TSV bytes (or a path) into a :class:`Record`.

    Parameters
    ----------
    data : bytes, or a path to the file
    file_name : name shown in messages and kept with the climate
    columns : optional mapping field -> header, for fields ``time``, ``speed``, ``direction``,
        ``gust``, ``temperature``, ``pressure``; unmapped fields are found by their headers
    speed_unit, gust_unit : one of :data:`SPEED_UNITS`; when None, from the header (m/s if
        the header says nothing)
    utc_offset_h : offset from UTC [h] of timestamps written without one (fixed; no DST)
    separator : column separator; found from the first lines when None
    day_first : read dates such as 03/04/2024 as 3 April (True) or 4 March (False); when
        None the dates must show their order (a first field above 12 means day first, a
        second field above 12 month first), else the record is refused
    direction_unit : ``"deg"`` or ``"rad"``; when None, from the header, checked against
        the data (values only within 0-2π are refused unless the unit is given)
    max_bytes : largest accepted input [bytes]

    Returns
    -------
    Record
        Every data row kept, sorted by time (``file_row`` gives each row's place in the
        file); unreadable cells NaN and marked; implausible times rejected (``NAT_NS``) and
        listed in ``notes``, as are the rows that had to be sorted.

    Raises
    ------
    InputError
        Empty, binary or oversize input, no header, no time or speed column, a column with no
        numbers at all, an unknown unit, an undecidable date order, directions that look
        like radians without a unit; every problem found is listed.
    """
    where = file_name or "record"
    notes = []
    data, sha = _input_bytes(data, where, max_bytes, notes)
    problems = Problems()
    for name, unit, allowed in (("speed_unit", speed_unit, SPEED_UNITS),
                                ("gust_unit", gust_unit, SPEED_UNITS),
                                ("direction_unit", direction_unit, DIRECTION_UNITS)):
        if unit is not None and unit not in allowed:
            problems.add(name, f"must be one of {', '.join(allowed)}, got {unit!r}")
    problems.raise_if_any()
    lines, skip, encoding = _table_lines(data, where)
    sep, decimal = _check_header(lines, skip, where, separator)
    df = _read_frame(data, where, sep, skip, decimal, encoding)
    mapping = _map_columns(df, columns, problems, notes)
    problems.raise_if_any()
    raw, unread, scale, offset, units = _convert_fields(
        df, mapping, {"speed": speed_unit, "gust": gust_unit, "direction": direction_unit},
        where, problems, notes)
    parsed = _parse_times(df[mapping["time"]], utc_offset_h, day_first, notes,
                          f"{where}: column {mapping['time']!r}", problems)
    if not problems and (parsed is None or (parsed[0] == NAT_NS).all()):
        problems.add(f"{where}: column {mapping['time']!r}",
                     "holds no readable timestamps; write them as ISO 8601, e.g. "
                     "2024-03-01T10:00:00Z, or map the right column")
    problems.raise_if_any()
    time_ns, bad_t = parsed
    order, time_ns, rejected = record_checks.order_rows(time_ns, where, notes)
    unread["time"] = bad_t | rejected
    file_row = np.arange(time_ns.size, dtype=np.int64)
    if order is not None:
        time_ns, file_row = time_ns[order], file_row[order]
        raw = {k: v[order] for k, v in raw.items()}
        unread = {k: v[order] for k, v in unread.items()}
    return Record(time_ns=time_ns, raw=raw, scale=scale, offset=offset, unreadable=unread,
                  columns={k: v for k, v in mapping.items()}, units=units, file_name=file_name,
                  sha256=sha, notes=tuple(notes), file_row=file_row)


def record_from_arrays(time_ns, speed_ms, direction_deg=None, *, temperature_c=None,
                       pressure_pa=None, gust_ms=None, file_name: str = "") -> Record:
    """A :class:`Record` from arrays already in SI units (for generated or derived series)."""
    t = np.asarray(time_ns, dtype=np.int64)
    raw = {"speed": np.asarray(speed_ms, float)}
    for name, v in (("direction", direction_deg), ("gust", gust_ms),
                    ("temperature", temperature_c), ("pressure", pressure_pa)):
        if v is not None:
            raw[name] = np.asarray(v, float)
    p = Problems()
    for name, v in raw.items():
        if v.shape != t.shape:
            p.add(name, f"must have one value per time ({t.shape[0]}), got {v.shape[0]}")
    p.raise_if_any()
    return Record(time_ns=t, raw=raw, scale={k: 1.0 for k in raw}, offset={k: 0.0 for k in raw},
                  unreadable={**{k: np.zeros(t.shape, bool) for k in raw},
                              "time": np.zeros(t.shape, bool)},
                  columns={k: k for k in raw}, units={k: _SI_UNIT[k] for k in raw},
                  file_name=file_name)
