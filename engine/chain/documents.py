"""JSON-ready documents of a ranked assessment, shared by the command line, the summary and the
dashboard's exports.

Part of the chain layer: it reads an :class:`engine.chain.pipeline.Evaluation` and writes plain
dicts and lists; the ``rank`` command prints them, the summary attaches them.
"""
from __future__ import annotations

import re
import unicodedata

import numpy as np
import pandas as pd

from engine.chain import columns
from engine.core import __version__
from engine.io import sitefile
from engine.io.exports import safe_csv

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
    """Rows of a ranked table as JSON-ready dicts: the fixed fields first, then the rest in
    the order :mod:`engine.chain.columns` declares."""
    cols = list(RANK_FIELDS) + [c for c in columns.csv_columns(table.columns)
                                if c not in RANK_FIELDS]
    return [{c: jsonable(row[c]) for c in cols} for row in table[cols].to_dict("records")]


def ranking_csv_text(table: pd.DataFrame) -> str:
    """The ranked table as CSV text, columns in the contract's order (formula-like text
    neutralised by :func:`engine.io.exports.safe_csv`)."""
    return safe_csv(table[columns.csv_columns(table.columns)])


def file_stem(site_name: str) -> str:
    """A safe file-name stem from a site name: ASCII, lower case, words joined by ``-``."""
    s = re.sub(r"[^a-z0-9]+", "-", unicodedata.normalize("NFKD", str(site_name)).encode(
        "ascii", "ignore").decode("ascii").lower()).strip("-")
    return (s or "site")[:60]


#: What each exported file is, by key: (name suffix, MIME type).
EXPORT_SUFFIXES = {
    "site": (".perch.json", "application/json"),
    "rank_json": ("-ranking.json", "application/json"),
    "rank_csv": ("-ranking.csv", "text/csv"),
    "effective_climate": ("-effective-climate.csv", "text/csv"),
    "summary_html": ("-summary.html", "text/html"),
    "summary_pdf": ("-summary.pdf", "application/pdf"),
}


def export_names(site_name: str) -> dict:
    """File name of every export of a site, by key (see :data:`EXPORT_SUFFIXES`).

    The one naming scheme of the dashboard's downloads, the summary's attachments and the
    command the summary prints to reproduce itself.
    """
    stem = file_stem(site_name)
    return {key: stem + suffix for key, (suffix, _mime) in EXPORT_SUFFIXES.items()}


def rank_document(evaluation) -> dict:
    """The ``rank`` JSON document: site summary and ranked positions."""
    a = evaluation.assessment
    return {
        "tool": "perch", "version": __version__,
        "site": {"name": a.site.name, "site_file_sha256": sitefile.content_hash(a),
                 "air_density_kgm3": round(evaluation.climate.air_density_kgm3, 6)},
        "positions": rank_records(evaluation.table),
    }
