"""How the summary writes numbers and results cells: one text per value, HTML and PDF alike.

Headers and formats of the results columns come from the result contract
(:mod:`engine.chain.columns`): its ``label``, ``unit``, ``kind`` and ``digits``.
"""
from __future__ import annotations

import math

import numpy as np

from engine.chain import columns as contract
from engine.report.content import Table

DASH = "–"


def finite(v) -> bool:
    """True for a real, finite number (not a bool)."""
    return isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, bool) \
        and math.isfinite(float(v))


def fmt_fixed(v, digits: int) -> str:
    """``v`` with ``digits`` decimals, or a dash for a missing or non-finite value."""
    return f"{float(v):.{digits}f}" if finite(v) else DASH


def fmt_percent(v, digits: int = 1) -> str:
    """A fraction as a percentage with ``digits`` decimals (0.1298 -> ``"13.0 %"``)."""
    return f"{100.0 * float(v):.{digits}f} %" if finite(v) else DASH


def fmt_value(v) -> str:
    """Any table value: booleans as yes/no, numbers to 4 significant digits, lists joined."""
    if v is None:
        return DASH
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    if isinstance(v, (float, np.floating)):
        return f"{float(v):.4g}" if math.isfinite(float(v)) else DASH
    if isinstance(v, (list, tuple)):
        return "; ".join(fmt_value(x) for x in v) if v else DASH
    if isinstance(v, dict):
        return "; ".join(f"{k} {fmt_value(x)}" for k, x in v.items()) if v else DASH
    return str(v)


def _by_kind(col, v) -> str:
    kind, d = col.kind, col.digits
    if kind == "int":
        return str(int(v))
    if kind in ("id", "text"):
        return str(v) if str(v) else DASH
    if kind == "number":
        return fmt_fixed(v, d)
    if kind == "fraction":
        return fmt_percent(v, d)
    if kind == "list":
        items = [fmt_fixed(x, d) if finite(x) else str(x) for x in v]
        return "; ".join(items) if items else DASH
    if kind == "mapping":
        return "; ".join(f"{k} {x if isinstance(x, str) else fmt_fixed(x, d)}"
                         for k, x in v.items()) if v else DASH
    return fmt_value(v)


def format_cell(column: str, value, raw=None) -> str:
    """The summary's text for one cell of the results table (the same in HTML and PDF).

    ``value`` is the rank JSON's value (non-finite numbers are null there); ``raw`` the
    results table's own value, used to say "never" for a payback that never comes (+inf).
    Columns the contract does not declare are written by :func:`fmt_value`.
    """
    if value is None and column == "payback_years" and isinstance(raw, (float, np.floating)) \
            and np.isposinf(raw):
        return "never"
    col = contract.declared(column)
    if col is None:
        return fmt_value(value)
    if value is None:
        return DASH
    return _by_kind(col, value)


def column_header(column: str, currency: str = "") -> str:
    """The summary's header for a results column: the contract's label with its unit."""
    return contract.column_label(column, currency=currency)


def aligned(column: str, values) -> str:
    """``"r"`` for a column of numbers, else ``"l"``."""
    col = contract.declared(column)
    if col is not None and col.kind in ("id", "text", "list", "mapping", "flag"):
        return "l"
    return "r" if all(finite(v) or v is None for v in values) else "l"


def records_table(key, records, columns, caption="", raw=None, currency="",
                  title="") -> Table:
    """A :class:`Table` of ``columns`` of rank-JSON ``records`` (``raw``: the table's rows)."""
    raw = raw if raw is not None else [{}] * len(records)
    rows = tuple(tuple(format_cell(c, r.get(c), w.get(c)) for c in columns)
                 for r, w in zip(records, raw))
    align = tuple(aligned(c, [r.get(c) for r in records]) for c in columns)
    return Table(key=key, columns=tuple(column_header(c, currency) for c in columns), rows=rows,
                 align=align, caption=caption, title=title)
