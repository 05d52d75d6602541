"""Extra columns of a logger file: speeds at several heights and their standard deviations.

The record reader (:mod:`engine.io.records`) reads one speed; loggers write one mean speed,
one standard deviation (and often a direction) per height, e.g. ``ws_10m``, ``ws_10m_sd``,
``wd_10m``. :func:`height_columns` finds them by their headers and :func:`read_heights` reads
each through the record reader itself (the column mapped as its speed), so every height has the
same rows, times, units and unreadable-cell marks as a single-height import.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from engine.core.errors import InputError
from engine.io import records

_HEIGHT = re.compile(r"(?<![a-z])(\d+(?:\.\d+)?)\s*m(?![a-z/])", re.IGNORECASE)
_SD_WORDS = {"sd", "std", "stdev", "sigma", "stddev"}
_SPEED_WORDS = {"ws", "speed", "wspd", "windspeed", "spd", "u"}
_DIR_WORDS = {"wd", "dir", "direction", "wdir", "winddir"}
_SKIP_WORDS = {"min", "max", "gust", "ti", "count", "n", "flag", "qc"}


def _words(header: str) -> set:
    return {w for w in re.split(r"[^a-z]+", header.lower()) if w}


def header_line(data: bytes) -> list:
    """Column headers of a CSV/TSV file: the first line that is not a ``#`` comment."""
    text = data[:65536].decode("utf-8-sig", errors="replace")
    for line in text.splitlines():
        if line.strip() and not line.lstrip().startswith("#"):
            sep = max((",", ";", "\t", "|"), key=line.count)
            return [h.strip().strip('"') for h in line.split(sep)]
    return []


def height_columns(headers) -> dict:
    """height [m] -> {"speed": header, "sd": header or None, "direction": header or None}.

    Only heights with a mean-speed column are kept; min/max/gust columns are never taken.
    """
    out: dict = {}
    for h in headers:
        m = _HEIGHT.search(h)
        if not m:
            continue
        z = float(m.group(1))
        w = _words(_HEIGHT.sub(" ", h))
        if w & _SKIP_WORDS:
            continue
        role = ("sd" if w & _SD_WORDS else "direction" if w & _DIR_WORDS
                else "speed" if w & _SPEED_WORDS else None)
        if role and role not in out.setdefault(z, {}):
            out[z][role] = h
    return {z: {"speed": c["speed"], "sd": c.get("sd"), "direction": c.get("direction")}
            for z, c in sorted(out.items()) if "speed" in c}


@dataclass(frozen=True)
class HeightRecord:
    """The same rows at every logged height.

    Attributes
    ----------
    heights_m : (H,) heights above the logger's base [m], increasing
    records : (H,) :class:`engine.io.records.Record`, speed = that height's mean speed
    sd_ms : (H, N) speed standard deviation [m/s], NaN where the height has none
    columns : per height, the headers used
    """

    heights_m: np.ndarray
    records: tuple
    sd_ms: np.ndarray
    columns: tuple

    @property
    def has_sd(self) -> np.ndarray:
        return np.isfinite(self.sd_ms).any(axis=1)


def read_heights(data: bytes, file_name: str = "record.csv", *, speed_unit=None,
                 utc_offset_h: float = 0.0) -> HeightRecord:
    """Every height's mean speed (and SD, direction) through the record reader.

    A height without its own direction uses the direction of the nearest height that has one.

    Raises
    ------
    InputError
        No speed column with a height in its header (``ws_10m``, ``speed 20 m``...).
    """
    cols = height_columns(header_line(data))
    if not cols:
        raise InputError([(file_name, "has no speed columns with a height in the header "
                                      "(e.g. ws_10m, ws_10m_sd, wd_10m); rename the columns")])
    heights = np.array(sorted(cols))
    with_dir = [z for z in heights if cols[z]["direction"]]
    recs, sds = [], []
    for z in heights:
        c = cols[z]
        dz = cols[min(with_dir, key=lambda h: abs(h - z))]["direction"] if with_dir else None
        mapping = {"speed": c["speed"], **({"direction": dz} if dz else {})}
        recs.append(records.read_record(data, file_name, columns=mapping, speed_unit=speed_unit,
                                        utc_offset_h=utc_offset_h))
        if c["sd"]:
            sd = records.read_record(data, file_name, columns={"speed": c["sd"]},
                                     speed_unit=speed_unit, utc_offset_h=utc_offset_h)
            sds.append(sd.si("speed"))
        else:
            sds.append(np.full(recs[-1].n_rows, np.nan))
    return HeightRecord(heights_m=heights, records=tuple(recs), sd_ms=np.vstack(sds),
                        columns=tuple(cols[z] for z in heights))
