"""The siting summary as one self-contained HTML page: inline CSS and SVG, no external URL.

User text is escaped; the page's Content-Security-Policy forbids loading anything.
"""
from __future__ import annotations

import base64
import html

from engine.report.content import Bullets, FigureBlock, Paragraph, Summary, Table
from engine.report.css import CSP, CSS


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _cell_class(value: str, align: str) -> str:
    # Short words (ids, numbers) stay on one line; long text wraps.
    return align + (" n" if len(value) <= 24 and " " not in value else "")


def _html_table(t: Table) -> str:
    kv = t.columns in (("Item", "Value"), ("Setting", "Value"))
    out = [f"<h4>{_e(t.title)}</h4>"] if t.title else []
    out.append(f'<table id="table-{_e(t.key)}"' + (' class="kv"' if kv else "") + ">")
    if t.caption:
        out.append(f"<caption>{_e(t.caption)}</caption>")
    out.append("<thead><tr>" + "".join(
        f'<th class="{a}">{_e(c)}</th>' for c, a in zip(t.columns, t.align)) + "</tr></thead>")
    out.append("<tbody>")
    for row in t.rows:
        out.append("<tr>" + "".join(f'<td class="{_cell_class(v, a)}">{_e(v)}</td>'
                                    for v, a in zip(row, t.align)) + "</tr>")
    out.append("</tbody></table>")
    return '<div class="wide">' + "\n".join(out) + "</div>"


def _html_files(t: Table, attachments) -> str:
    rows = []
    for x in attachments:
        uri = f"data:{x.mime};base64," + base64.b64encode(x.data).decode("ascii")
        rows.append(f'<tr><td><a download="{_e(x.name)}" href="{uri}">{_e(x.name)}</a></td>'
                    f'<td>{_e(x.description)}</td><td class="r">{len(x.data)}</td></tr>')
    head = "".join(f'<th class="{a}">{_e(c)}</th>' for c, a in zip(t.columns, t.align))
    return (f'<table id="table-files"><caption>{_e(t.caption)}</caption><thead><tr>{head}'
            f"</tr></thead><tbody>{''.join(rows)}</tbody></table>")


def _html_figure(f) -> str:
    from engine.report.static_charts import drawn, figure_svg

    svg, problem = drawn(f, figure_svg)
    if svg is None:
        return (f'<figure id="figure-{_e(f.key)}" class="missing"><h3>{_e(f.title)}</h3>'
                f'<p class="caution">This chart could not be drawn: {_e(problem)}</p>'
                "</figure>")
    return (f'<figure id="figure-{_e(f.key)}"><h3>{_e(f.title)}</h3>\n{svg}\n'
            f"<figcaption>{_e(f.caption)}</figcaption></figure>")


def _html_block(b, attachments) -> str:
    if isinstance(b, Paragraph):
        cls = f' class="{b.tone}"' if b.tone else ""
        return f"<p{cls}>{_e(b.text)}</p>"
    if isinstance(b, Bullets):
        return "<ul>" + "".join(f"<li>{_e(i)}</li>" for i in b.items) + "</ul>"
    if isinstance(b, Table):
        return _html_files(b, attachments) if b.key == "files" else _html_table(b)
    if isinstance(b, FigureBlock):
        return _html_figure(b.figure)
    raise TypeError(f"unknown block {type(b).__name__}")


def _head(s: Summary) -> list:
    return ["<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
            f'<meta http-equiv="Content-Security-Policy" content="{CSP}">',
            '<meta name="viewport" content="width=device-width, initial-scale=1">',
            f'<meta name="generator" content="perch {_e(s.version)}">',
            f"<title>{_e(s.title)}</title>", f"<style>{CSS}</style>", "</head>",
            "<body>", "<header>", f"<h1>{_e(s.title)}</h1>",
            f'<p class="meta">Made {_e(s.generated_at)} · assessor: '
            f'{_e(s.assessor or "(not given)")} · perch {_e(s.version)} · '
            f"site file SHA-256 {_e(s.site_sha256[:16])}…</p>", "</header>"]


def render_html(summary: Summary) -> str:
    """The summary as one self-contained HTML page (inline CSS and SVG, no external URL)."""
    s = summary
    parts = _head(s)
    parts += [f'<p class="caution"><strong>Safety:</strong> {_e(c)}</p>'
              for c in s.cautions_short]
    parts.append('<nav aria-label="Contents"><strong>Contents</strong><ul>')
    parts += [f'<li><a href="#{_e(x.key)}">{_e(x.heading)}</a></li>' for x in s.sections]
    parts.append("</ul></nav>")
    in_appendix = False
    for x in s.sections:
        if x.appendix and not in_appendix:
            in_appendix = True
            parts.append('<h2 class="appendix-start" id="appendix">Appendix</h2>')
        parts.append(f'<section id="{_e(x.key)}"><h2>{_e(x.heading)}</h2>')
        parts += [_html_block(b, s.attachments) for b in x.blocks]
        parts.append("</section>")
    parts.append(f"<footer>Perch {_e(s.version)} · {_e(s.site_name)} · made "
                 f"{_e(s.generated_at)} · site file SHA-256 {_e(s.site_sha256)}"
                 "</footer>")
    parts += ["</body>", "</html>", ""]
    return "\n".join(parts)
