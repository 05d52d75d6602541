"""Checks of a measured record's times and directions on import, for :mod:`engine.io.records`.

- :func:`implausible_times` and :func:`order_rows`: a timestamp that jumps far away from the
  rows around it (a logger's 1970 or 2099) is rejected on its own and listed; rows out of time
  order are sorted, and the import says how many and which;
- :func:`date_order`: dates written ``a/b/yyyy`` are read day first or month first only when
  the record shows which (a number above 12) or the person says so;
- :func:`direction_unit`: degrees or radians, from the option or the header, checked against
  the data (values only within 0-2π look like radians).
"""
from __future__ import annotations

import re

import numpy as np
import pandas as pd

from engine.core.errors import Problems

#: Marker for an unreadable time (the int64 view of NaT), as in :mod:`engine.io.records`.
NAT_NS = np.iinfo(np.int64).min


def header_tokens(header: str) -> list:
    """The lower-case words of a column header (``°`` read as ``deg``, ``/`` as a break)."""
    h = header.lower().replace("°", " deg ").replace("/", " ")
    return [t for t in re.split(r"[^a-z0-9]+", h) if t]


def date_order(s: pd.Series, day_first, where: str, problems: Problems, notes: list):
    """Day first (True), month first (False) or undecidable (None, with a problem added).

    Only dates written as numbers ``a/b/yyyy`` (also with ``.`` or ``-``) are ambiguous.
    A first number above 12 shows day first; a second above 12 shows month first.
    """
    parts = s.str.extract(r"^(\d{1,2})[/.\-](\d{1,2})[/.\-]\d{2,4}\b")
    if parts[0].isna().all():
        return bool(day_first)
    a = pd.to_numeric(parts[0], errors="coerce")
    b = pd.to_numeric(parts[1], errors="coerce")
    day1, month1 = bool((a > 12).any()), bool((b > 12).any())
    example = s[parts[0].notna()].iloc[0]
    if day1 and month1:
        problems.add(where, f"mixes day-first and month-first dates (e.g. {example!r}); write "
                            "the timestamps as ISO 8601, e.g. 2024-03-01T10:00:00Z")
        return None
    seen = True if day1 else (False if month1 else None)
    if day_first is None:
        if seen is None:
            problems.add(where, f"dates such as {example!r} read as day/month or month/day and "
                                "the record does not show which; give the date order (day "
                                "first: yes or no)")
            return None
        notes.append(f"dates read {'day' if seen else 'month'} first (a "
                     f"{'first' if seen else 'second'} number above 12 shows it)")
        return seen
    if seen is not None and seen != bool(day_first):
        problems.add(where, f"dates are said to be {'day' if day_first else 'month'} first, "
                            f"but values above 12 in the {'first' if seen else 'second'} place "
                            f"show {'day' if seen else 'month'} first; check the date order")
        return None
    return bool(day_first)


def _direction_unit_from_header(header: str):
    toks = set(header_tokens(header))
    if toks & {"rad", "rads", "radian", "radians"}:
        return "rad"
    if toks & {"deg", "degree", "degrees"} or "°" in header:
        return "deg"
    return None


def direction_unit(header: str, vals: np.ndarray, given, where: str, problems: Problems,
                    notes: list):
    """Unit of the direction column: the option, else the header, checked against the data.

    A column whose values all lie within 0-2π (and reach above 1) is taken to be in radians
    only when the option or the header says so; otherwise the record is refused, because
    reading radians as degrees puts all the wind in the north sector.
    """
    from_header = _direction_unit_from_header(header)
    unit = given or from_header
    finite = vals[np.isfinite(vals)]
    looks_rad = finite.size >= 10 and 1.0 < finite.max() <= 2.0 * np.pi * 1.0001 \
        and finite.min() >= 0.0
    src = f"column {header!r}"
    if unit == "rad" and finite.size and finite.max() > 2.0 * np.pi * 1.0001:
        problems.add(f"{where}: {src}", f"is said to be in radians ({'option' if given else 'header'}"
                     f") but its values reach {finite.max():g}, above 2π; check the unit")
    elif unit is None and looks_rad:
        problems.add(f"{where}: {src}", f"holds directions only within 0-{finite.max():.3g}, "
                     "which looks like radians, not degrees; name the unit in the header "
                     "(e.g. direction_rad or direction_deg) or give the direction unit")
    elif unit == "deg" and looks_rad and not given:
        problems.add(f"{where}: {src}", f"says degrees but its values lie only within "
                     f"0-{finite.max():.3g}, which looks like radians; give the direction unit "
                     "(deg or rad) explicitly")
    elif unit == "deg" and looks_rad:
        notes.append(f"direction column {header!r} lies within 0-2π but was declared degrees")
    if unit is None:
        notes.append(f"direction column {header!r} has no unit in its header; taken as degrees")
    return unit or "deg"


def _list_rows(rows: np.ndarray, times=None, k: int = 10) -> str:
    shown = [f"row {int(r) + 1}" + (f" ({_iso_ns(times[i])})" if times is not None else "")
             for i, r in enumerate(rows[:k])]
    return ", ".join(shown) + (f" and {rows.size - k} more" if rows.size > k else "")


def _iso_ns(ns) -> str:
    return str(np.datetime64(int(ns), "ns").astype("datetime64[s]")) + "Z"


def implausible_times(time_ns: np.ndarray, now_ns: int | None = None) -> np.ndarray:
    """Mask of timestamps that jump away from both neighbours in file order, or lie ahead.

    A time is rejected when it differs from the previous and from the next row by more than
    a jump ``J`` while those two rows lie within ``J`` of each other (a single wrong stamp in
    a run of good ones: a logger's 1970 or 2099), or when it lies more than a day after
    ``now_ns``. ``J`` is 1000 nominal steps (the median step in file order), at least a day.
    Unreadable times (``NAT_NS``) are not tested.
    """
    t = np.asarray(time_ns, np.int64)
    n = t.size
    ok = t != NAT_NS
    out = np.zeros(n, bool)
    if now_ns is None:
        now_ns = np.datetime64("now", "ns").astype(np.int64)
    out[ok] = t[ok] > now_ns + 86_400 * 10**9
    idx = np.flatnonzero(ok & ~out)
    if idx.size < 3:
        return out
    tv = t[idx].astype(np.float64)
    d = np.diff(tv)
    step = np.median(np.abs(d[d != 0])) if np.any(d != 0) else 0.0
    jump = max(1000.0 * step, 86_400e9)
    big = np.abs(d) > jump
    spike = np.zeros(idx.size, bool)
    # inner rows: a jump on both sides, neighbours close to each other
    close = np.abs(tv[2:] - tv[:-2]) <= jump
    spike[1:-1] = big[:-1] & big[1:] & close
    # first and last rows: a jump to the neighbour, which is close to its own neighbour
    spike[0] = big[0] and not big[1]
    spike[-1] = big[-1] and not big[-2]
    out[idx[spike]] = True
    return out


def order_rows(time_ns: np.ndarray, where: str, notes: list) -> tuple:
    """Reject implausible times (listed in ``notes``) and sort the rows by time.

    Returns ``(order, time_ns, rejected)``: the row order that sorts the times (stable, so
    repeated stamps keep file order and are caught as duplicates by quality control), the
    times with rejected ones set to ``NAT_NS``, and the mask of rejected rows (file order).
    """
    rejected = implausible_times(time_ns)
    t = time_ns.copy()
    if rejected.any():
        rows = np.flatnonzero(rejected)
        notes.append(f"rejected {rows.size} timestamp(s) that jump away from the rows around "
                     f"them or lie in the future: {_list_rows(rows, time_ns[rows])}")
        t[rejected] = NAT_NS
    good = t != NAT_NS
    tg = t[good]
    if tg.size > 1 and np.any(tg[1:] < tg[:-1]):
        # Unreadable times go last, readable ones in time order.
        key = np.where(good, t, np.iinfo(np.int64).max)
        order = np.argsort(key, kind="stable")
        prev_max = np.maximum.accumulate(tg)
        late = np.flatnonzero(good)[1:][tg[1:] < prev_max[:-1]]
        notes.append(f"{late.size} row(s) were out of time order and were sorted by time "
                     f"(first: {_list_rows(late)})")
        return order, t, rejected
    return None, t, rejected
