"""JSON-ready documents of a ranked assessment, shared by the command line, the summary and the
dashboard's exports.

Part of the chain layer: it reads an :class:`engine.chain.pipeline.Evaluation` and writes plain
dicts and lists; the ``rank`` command prints them, the summary attaches them.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.core import __version__
from engine.io import sitefile

#: Columns of the ``rank`` output that never change name (later fields are appended).
RANK_FIELDS = ("rank", "position_id", "turbine_id", "hub_height_m", "mean_speed_ms", "aep_kwh",
               "capacity_factor", "flags")


def jsonable(v):
    """``v`` as plain JSON values: numpy scalars and arrays to Python, non-finite floats to None."""
    if isinstance(v, (np.floating, float)):
        return None if not np.isfinite(v) else float(v)
    if isinstance(v, (np.integer,)):
        return int(v)
    if isinstance(v, np.bool_):
        return bool(v)
    if isinstance(v, np.ndarray):
        return [jsonable(x) for x in v.tolist()]
    if isinstance(v, (list, tuple)):
        return [jsonable(x) for x in v]
    if isinstance(v, dict):
        return {k: jsonable(x) for k, x in v.items()}
    return v


def rank_records(table: pd.DataFrame) -> list:
    """Rows of a ranked table as JSON-ready dicts, the fixed fields first."""
    cols = list(RANK_FIELDS) + [c for c in table.columns if c not in RANK_FIELDS]
    return [{c: jsonable(row[c]) for c in cols} for row in table[cols].to_dict("records")]


def rank_document(evaluation) -> dict:
    """The ``rank`` JSON document: site summary and ranked positions."""
    a = evaluation.assessment
    return {
        "tool": "perch", "version": __version__,
        "site": {"name": a.site.name, "site_file_sha256": sitefile.content_hash(a),
                 "air_density_kgm3": round(evaluation.climate.air_density_kgm3, 6)},
        "positions": rank_records(evaluation.table),
    }
