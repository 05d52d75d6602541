"""The siting summary as bytes, in one call each (for a download button or a file)."""
from __future__ import annotations

from engine.report.build import build_summary
from engine.report.html_page import render_html
from engine.report.pdf import render_pdf


def summary_html_bytes(evaluation, assessor: str = "", notes: str = "",
                       generated_at=None) -> bytes:
    """The siting summary as UTF-8 HTML bytes."""
    return render_html(build_summary(evaluation, assessor, notes, generated_at)).encode("utf-8")


def summary_pdf_bytes(evaluation, assessor: str = "", notes: str = "",
                      generated_at=None) -> bytes:
    """The siting summary as PDF bytes."""
    return render_pdf(build_summary(evaluation, assessor, notes, generated_at))
