"""Data exports shared by the command line, the dashboard and the summary."""
from __future__ import annotations

import numpy as np
import pandas as pd

#: First characters a spreadsheet would run as a formula.
FORMULA_START = ("=", "+", "-", "@", "\t", "\r", "\n")


def neutralise_cell(value):
    """Prefix text a spreadsheet would treat as a formula with an apostrophe (OWASP CSV injection)."""
    if isinstance(value, str):
        # The CSV writer quotes a cell holding LF (its line end) but not a bare CR, at which a
        # spreadsheet starts a new row, so "x\r=cmd" would become a formula cell. As LF the
        # cell is quoted and stays one cell.
        value = value.replace("\r\n", "\n").replace("\r", "\n")
        if value.startswith(FORMULA_START):
            return "'" + value
    return value


def safe_csv(table: pd.DataFrame) -> str:
    """CSV text with list cells joined by '; ' and formula-like text neutralised."""
    out = table.copy()
    for col in out.columns:
        if out[col].dtype == object or str(out[col].dtype).startswith("str"):
            out[col] = [neutralise_cell("; ".join(map(str, v)) if isinstance(v, (list, tuple)) else v)
                        for v in out[col]]
    return out.to_csv(index=False, lineterminator="\n")
