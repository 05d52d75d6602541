"""What the summary step hands out, as plain functions (testable without a browser)."""
from __future__ import annotations

import json

from engine.chain import documents
from engine.io import sitefile
from engine.core.errors import InputError


def file_stem(assessment) -> str:
    """A safe file name stem from the site name (the engine's one naming scheme)."""
    return documents.file_stem(assessment.site.name)


def export_names(assessment) -> dict:
    """Every download's file name by key (``site``, ``rank_csv``, ``rank_json``,
    ``summary_html``, ``summary_pdf``...): the names the summary attaches and prints."""
    return documents.export_names(assessment.site.name)


def content_sha(assessment) -> str:
    return sitefile.content_hash(assessment)


def site_file_bytes(assessment) -> bytes:
    """The site file, exactly as :func:`engine.io.sitefile.dumps` writes it."""
    return sitefile.dumps(assessment).encode("utf-8")


def rank_csv_bytes(evaluation) -> bytes:
    """Ranked rows as CSV (SI units in the column names, formula-like text neutralised)."""
    return documents.ranking_csv_text(evaluation.table).encode("utf-8")


def rank_json_bytes(evaluation) -> bytes:
    """The same document as ``python -m engine rank --format json``."""
    return (json.dumps(documents.rank_document(evaluation), indent=2, ensure_ascii=False)
            + "\n").encode("utf-8")


def report_builders():
    """The siting summary's builders when the engine has them, else None."""
    try:
        from engine import report
    except ImportError:
        return None
    if all(hasattr(report, n) for n in ("build_summary", "render_html", "render_pdf")):
        return report
    return None


def build_report(evaluation, record=None) -> dict:
    """HTML and PDF bytes of the siting summary, with any problem found on the way; ``record``
    (the climate's series, as ``engine report --record`` reads it) adds the series section."""
    report = report_builders()
    out = {"sha": content_sha(evaluation.assessment), "html": None, "pdf": None, "problems": []}
    try:
        summary = report.build_summary(evaluation, record=record)
        out["html"] = report.render_html(summary).encode("utf-8")
        out["pdf"] = report.render_pdf(summary)
    except InputError as e:
        out["problems"] = list(e.problems)
    return out
