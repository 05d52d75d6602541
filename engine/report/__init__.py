"""Siting summary and charts: the presentation layer at the top of the chain.

Place in the chain: records -> climate -> flow -> energy -> chain (evaluate, ranking, the
result contract and the JSON/CSV documents) -> **report** (and screening beside it); only the
command line and the dashboard sit above. This package reads an
:class:`engine.chain.pipeline.Evaluation` and never computes physics of its own; nothing
below it imports it. Only presentation packages (this one and the dashboard) may import
altair or vl-convert.

Modules, each named for what it does:

- :mod:`~engine.report.content`: the summary's content object (sections, tables, figures);
- :mod:`~engine.report.build` and :mod:`~engine.report.appendix`: building that content
  (the body a client reads; the appendix of inputs, further results, methods, files);
- :mod:`~engine.report.formats`: cell texts and headers, read from :mod:`engine.chain.columns`;
- :mod:`~engine.report.inputs`: the site file's inputs as labelled tables;
- :mod:`~engine.report.cautions`: the one list of safety cautions (dashboard and summary);
- :mod:`~engine.report.words`: fixed wording, the methods table, time stamps;
- :mod:`~engine.report.html_page` with :mod:`~engine.report.css`: the HTML page;
- :mod:`~engine.report.pdf` with :mod:`~engine.report.pdf_fonts`: the PDF;
- :mod:`~engine.report.exports`: the data files a summary carries, the reproduce command;
- :mod:`~engine.report.downloads`: the summary as bytes in one call;
- :mod:`~engine.report.charts` (Altair builders, shared with the dashboard) and
  :mod:`~engine.report.static_charts` (drawn offline to SVG/PNG for the summary, in the
  child process of :mod:`~engine.report.render`, so a renderer crash is a
  :class:`~engine.report.render.ChartError` in place of the chart, not the end of the program).

Example::

    from engine import report
    summary = report.build_summary(evaluation, assessor="R. Quill")
    html_text = report.render_html(summary)
    pdf_bytes = report.render_pdf(summary)
"""
from engine.report.build import build_summary, recommendation
from engine.report.cautions import CAUTIONS, CAUTIONS_SHORT, caution_lines
from engine.report.content import (APPENDIX_KEYS, BODY_KEYS, SECTION_KEYS, Attachment, Bullets,
                                   FigureBlock, Paragraph, Section, Summary, Table)
from engine.report.downloads import summary_html_bytes, summary_pdf_bytes
from engine.report.exports import (effective_climate_csv, export_files, rank_json, ranking_csv,
                                   reproduce_command, site_file_bytes)
from engine.report.formats import (DASH, column_header, fmt_fixed, fmt_percent, fmt_value,
                                   format_cell)
from engine.report.html_page import render_html
from engine.report.inputs import input_tables
from engine.report.pdf import render_pdf
from engine.report.pdf_fonts import find_font, to_latin1
from engine.report.render import ChartError

__all__ = [
    "APPENDIX_KEYS", "Attachment", "BODY_KEYS", "Bullets", "CAUTIONS", "CAUTIONS_SHORT",
    "ChartError", "DASH",
    "FigureBlock", "Paragraph", "SECTION_KEYS", "Section", "Summary", "Table",
    "build_summary", "caution_lines", "column_header", "effective_climate_csv",
    "export_files", "find_font", "fmt_fixed", "fmt_percent", "fmt_value", "format_cell",
    "input_tables", "rank_json", "ranking_csv", "recommendation", "render_html", "render_pdf",
    "reproduce_command", "site_file_bytes", "summary_html_bytes", "summary_pdf_bytes",
    "to_latin1",
]
