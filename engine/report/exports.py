"""The data files a summary carries (and ``report --exports`` writes), and how to redo it.

File names come from :func:`engine.chain.documents.export_names`, the one naming scheme the
dashboard's downloads use too, and so does the command the summary prints to reproduce
itself.
"""
from __future__ import annotations

import importlib
import json
import shlex

from engine.chain import documents
from engine.flow import sector_table
from engine.io import exports
from engine.io import sitefile


def ranking_csv(evaluation) -> bytes:
    """The ranked results table as CSV (contract order, formula-like text neutralised)."""
    return documents.ranking_csv_text(evaluation.table).encode("utf-8")


def rank_json(evaluation) -> bytes:
    """The ``rank`` JSON document, the same bytes as ``python -m engine rank --format json``."""
    return (json.dumps(documents.rank_document(evaluation), indent=2, ensure_ascii=False)
            + "\n").encode("utf-8")


def site_file_bytes(evaluation) -> bytes:
    """The site file in canonical form (its SHA-256 is the one the summary records)."""
    return sitefile.dumps(evaluation.assessment).encode("utf-8")


def effective_climate_csv(evaluation) -> bytes:
    """Per-sector effective climate of every position as CSV (one row per position x sector)."""
    return exports.safe_csv(sector_table.effective_climate_table(evaluation.climate)).encode("utf-8")


def export_files(evaluation) -> dict:
    """File name -> (MIME type, bytes, description) of every data export of a site."""
    names = documents.export_names(evaluation.assessment.site.name)
    mime = {k: m for k, (_s, m) in documents.EXPORT_SUFFIXES.items()}
    return {
        names["site"]: (mime["site"], site_file_bytes(evaluation),
                        "the site file (re-run it to reproduce this summary)"),
        names["rank_json"]: (mime["rank_json"], rank_json(evaluation),
                             "ranked positions as JSON (the rank command's document)"),
        names["rank_csv"]: (mime["rank_csv"], ranking_csv(evaluation),
                            "ranked positions as CSV"),
        names["effective_climate"]: (mime["effective_climate"],
                                     effective_climate_csv(evaluation),
                                     "per-sector effective climate of every position"),
    }


def reproduce_command(site_name, stamp, assessor, file_assessor, notes) -> str:
    """The command line that rebuilds this summary from its attached site file."""
    names = documents.export_names(site_name)
    parts = ["python", "-m", "engine", "report", names["site"], "--out", names["summary_html"],
             "--generated-at", stamp.replace(" UTC", "Z").replace(" ", "T")]
    if assessor and assessor != (file_assessor or "").strip():
        parts += ["--assessor", assessor]
    if notes.strip():
        parts += ["--notes", notes]
    return shlex.join(parts)


def library_versions() -> str:
    """Versions of the libraries the numbers and the documents depend on."""
    parts = []
    for name, dist in (("numpy", "numpy"), ("scipy", "scipy"), ("pandas", "pandas"),
                       ("vl-convert", "vl_convert"), ("fpdf2", "fpdf")):
        try:
            mod = importlib.import_module(dist)
            parts.append(f"{name} {getattr(mod, '__version__', '?')}")
        except ImportError:
            continue
    return ", ".join(parts)
