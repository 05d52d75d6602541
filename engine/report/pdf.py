"""The siting summary as PDF (fpdf2): A4, charts as PNG, data files attached.

Tables are laid out here rather than by fpdf2: column widths follow the content (no column
is narrower than its longest word, so no word is ever broken inside a cell; a wide table
gets a smaller type first), a short table is never split, a long one never starts with
fewer than two rows at the foot of a page, and its last row never stands alone on a new page. The appendix starts on a new page.
"""
from __future__ import annotations

import io
import struct

from engine.report.content import Bullets, FigureBlock, Paragraph, Summary, Table
from engine.report.pdf_fonts import find_font, to_latin1
from engine.report.words import parse_timestamp

#: Size of a CSS pixel [mm] (96 per inch), so a chart prints at its screen size.
MM_PER_CSS_PX = 25.4 / 96.0
#: Tallest a chart may print [mm]: two charts share a page.
MAX_FIGURE_HEIGHT_MM = 112.0
#: Cell padding [mm] and the type sizes [pt] a table may use, largest first.
PAD_MM = 0.8
TABLE_SIZES_PT = (8.0, 7.4, 6.8, 6.2)
#: Room [mm] a section needs below its heading to start on the current page (the cautions
#: and their sign-off stay together; others need a few lines).
KEEP_TOGETHER_MM = {"cautions": 150.0}
#: Tables of up to this many rows are never split across pages.
KEEP_WHOLE_ROWS = 6
#: Longest share of the page width one column of long text takes before it wraps.
MAX_TEXT_SHARE = 0.55
INK, MUTED, ACCENT = (29, 35, 43), (91, 100, 112), (31, 95, 153)


def _doc_class(pdf_text, summary):
    """An FPDF subclass with the summary's running header and footer."""
    from fpdf import FPDF

    s = summary

    class Doc(FPDF):
        def header(doc):
            doc.set_font(doc.body_family, "", 7.5)
            doc.set_text_color(110, 116, 124)
            doc.cell(0, 4, pdf_text.fit(f"Siting summary · {s.site_name}", doc.epw), align="L")
            doc.ln(6)

        def footer(doc):
            doc.set_y(-12)
            doc.set_font(doc.body_family, "", 7.5)
            doc.set_text_color(110, 116, 124)
            doc.cell(0, 4, pdf_text.t(f"perch {s.version} · made {s.generated_at} · site file "
                                      f"{s.site_sha256[:16]}"), align="L")
            doc.cell(0, 4, f"page {doc.page_no()}/{{nb}}", align="R")

    return Doc


class PdfSummary:
    """An fpdf2 document with the summary's header, footer, text and table helpers."""

    def __init__(self, summary: Summary, font):
        s = summary
        self.unicode = font is not None
        pdf = _doc_class(self, s)(orientation="portrait", unit="mm", format="A4")
        if self.unicode:
            pdf.add_font("Body", "", font[0])
            pdf.add_font("Body", "B", font[1])
            pdf.body_family = "Body"
        else:
            pdf.body_family = "Helvetica"
        pdf.set_creation_date(parse_timestamp(s.generated_at))
        pdf.set_title(self.t(s.title))
        pdf.set_author(self.t(s.assessor or "perch"))
        pdf.set_creator(f"perch {s.version}")
        pdf.set_subject(self.t(f"Site file SHA-256 {s.site_sha256}"))
        pdf.set_margins(15, 14, 15)
        pdf.set_auto_page_break(True, margin=16)
        pdf.alias_nb_pages()
        self.pdf = pdf
        self.summary = s
        self._widths = {}

    # ------------------------------------------------------------ text

    def t(self, text) -> str:
        """Text as the chosen font can draw it."""
        text = str(text)
        return text if self.unicode else to_latin1(text)

    def fit(self, text, width_mm) -> str:
        """Text for one line of ``width_mm`` in the current font, cut with an ellipsis."""
        text = self.t(text)
        if self.pdf.get_string_width(text) <= width_mm:
            return text
        dots = "…" if self.unicode else "..."
        while text and self.pdf.get_string_width(text + dots) > width_mm:
            text = text[:-1]
        return text + dots

    def font(self, size, bold=False, colour=INK):
        self.pdf.set_font(self.pdf.body_family, "B" if bold else "", size)
        self.pdf.set_text_color(*colour)

    def para(self, text, tone=""):
        pdf = self.pdf
        if tone == "caution":
            self.font(9, colour=(138, 75, 8))
            pdf.set_fill_color(255, 244, 224)
        elif tone == "note":
            self.font(9, colour=(40, 60, 90))
            pdf.set_fill_color(238, 244, 250)
        else:
            self.font(9.5)
        pdf.multi_cell(0, 4.8, self.t(text), fill=bool(tone), padding=(1.5, 2) if tone else 0,
                       align="L", new_x="LMARGIN", new_y="NEXT")
        pdf.set_fill_color(255, 255, 255)
        pdf.ln(1.5)

    def bullets(self, items):
        self.font(9.5)
        for it in items:
            self.pdf.set_x(self.pdf.l_margin)
            self.pdf.cell(4, 4.8, "-" if not self.unicode else "•")
            self.pdf.multi_cell(0, 4.8, self.t(it), align="L", new_x="LMARGIN", new_y="NEXT")
            self.pdf.ln(0.6)
        self.pdf.ln(1.2)

    def heading(self, text, size=12.5, colour=ACCENT, rule=True):
        pdf = self.pdf
        self.font(size, bold=True, colour=colour)
        pdf.cell(0, 8, self.t(text), new_x="LMARGIN", new_y="NEXT")
        if rule:
            pdf.set_draw_color(213, 217, 222)
            pdf.line(pdf.l_margin, pdf.get_y(), pdf.l_margin + pdf.epw, pdf.get_y())
        pdf.ln(2)

    # ------------------------------------------------------------ tables

    def _width(self, text: str) -> float:
        # Widths of words in the current font, cached: a word's width is the sum of its glyphs.
        key = (self.pdf.font_family, self.pdf.font_style, self.pdf.font_size_pt, text)
        w = self._widths.get(key)
        if w is None:
            w = self._widths[key] = self.pdf.get_string_width(text)
        return w

    def _wrap(self, text: str, avail: float) -> list:
        """Greedy word wrap of ``text`` into lines no wider than ``avail`` [mm].

        Lines break at spaces only; a word wider than ``avail`` (which the column widths
        of :meth:`_layout` rule out) is cut as a last resort.
        """
        out = []
        space = self._width(" ")
        for para in text.split("\n"):
            line, used = "", 0.0
            for word in para.split(" "):
                ww = self._width(word)
                if line and used + space + ww <= avail:
                    line, used = f"{line} {word}", used + space + ww
                    continue
                if line:
                    out.append(line)
                while ww > avail and len(word) > 1:
                    k = 1
                    while k < len(word) and self._width(word[:k + 1]) <= avail:
                        k += 1
                    out.append(word[:k])
                    word = word[k:]
                    ww = self._width(word)
                line, used = word, ww
            out.append(line)
        return out

    def _widths_for(self, cells_by_column) -> tuple | None:
        """Column widths [mm] from the content in the current font, or None when the
        longest words alone do not fit the page."""
        epw = self.pdf.epw
        least, natural = [], []
        for j, cells in enumerate(cells_by_column):
            head, body = cells[0], cells[1:]
            self.font(self.pdf.font_size_pt, bold=True)
            words = [self._width(w) for w in head.split()] or [0.0]
            full = [self._width(head)]
            self.font(self.pdf.font_size_pt, bold=False)
            for c in body:
                words += [self._width(w) for w in c.split()]
                full.append(self._width(c))
            least.append(max(words) + 2 * PAD_MM + 0.2)
            natural.append(min(max(full), MAX_TEXT_SHARE * epw) + 2 * PAD_MM + 0.2)
        natural = [max(n, m) for n, m in zip(natural, least)]
        if sum(least) > epw:
            return None
        if sum(natural) <= epw:
            spare = epw - sum(natural)
            return tuple(n + spare * n / sum(natural) for n in natural)
        give = [n - m for n, m in zip(natural, least)]
        room = epw - sum(least)
        return tuple(m + room * g / sum(give) for m, g in zip(least, give))

    def _layout(self, t: Table) -> tuple[float, tuple]:
        """(type size [pt], column widths [mm]) of a table: the largest size whose longest
        words fit the page width."""
        cells = [[self.t(c)] + [self.t(r[j]) for r in t.rows] for j, c in enumerate(t.columns)]
        first = TABLE_SIZES_PT if len(t.columns) < 7 else TABLE_SIZES_PT[1:]
        for size in first:
            self.font(size)
            widths = self._widths_for(cells)
            if widths is not None:
                return size, widths
        size = TABLE_SIZES_PT[-1]
        self.font(size)
        epw = self.pdf.epw
        return size, tuple(epw / len(t.columns) for _ in t.columns)

    def _row_lines(self, cells, widths, size, bold=False) -> tuple[list, float]:
        """(lines per cell, row height [mm]) of one row."""
        self.font(size, bold=bold)
        lh = size * 0.5
        lines = [self._wrap(text, w - 2 * PAD_MM) for text, w in zip(cells, widths)]
        pdf = self.pdf
        most = max(1, int((pdf.page_break_trigger - pdf.t_margin - 12 - 2 * PAD_MM) // lh))
        lines = [ls if len(ls) <= most else ls[:most - 1] + [ls[most - 1] + " …"]
                 for ls in lines]
        return lines, max(len(ls) for ls in lines) * lh + 2 * PAD_MM

    def _draw_row(self, lines, h, widths, align, size, bold=False):
        pdf = self.pdf
        self.font(size, bold=bold)
        lh = size * 0.5
        y0, x0, total = pdf.get_y(), pdf.l_margin, sum(widths)
        auto = pdf.auto_page_break
        pdf.set_auto_page_break(False)
        if bold:
            pdf.set_fill_color(243, 245, 247)
            pdf.rect(x0, y0, total, h, style="F")
        x = x0
        for ls, w, a in zip(lines, widths, align):
            for k, line in enumerate(ls):
                pdf.set_xy(x + PAD_MM, y0 + PAD_MM + k * lh)
                pdf.cell(w - 2 * PAD_MM, lh, line, align=a)
            x += w
        pdf.set_draw_color(213, 217, 222)
        pdf.set_line_width(0.2)
        pdf.line(x0, y0 + h, x0 + total, y0 + h)
        pdf.set_auto_page_break(auto, margin=16)
        pdf.set_xy(x0, y0 + h)

    def _breaks_before(self, heights, head_h, top, tail_h=0.0) -> set:
        """Row indices that start a new page, keeping two rows with the header and the last
        two rows together with the caption (``tail_h`` [mm]): no orphan row or caption at
        either end of a page."""
        pdf = self.pdf
        bottom, page_top = pdf.page_break_trigger, pdf.t_margin + 6
        n, y, out = len(heights), top + head_h, set()
        for i, h in enumerate(heights):
            need = h + (heights[i + 1] + tail_h if i == n - 2 else 0.0)
            if y + h > bottom or (i == n - 2 and y + need > bottom and i > 0):
                out.add(i)
                y = page_top + head_h
            y += h
        return out

    def table(self, t: Table):
        pdf = self.pdf
        size, widths = self._layout(t)
        align = tuple("R" if a == "r" else "L" for a in t.align)
        head_lines, head_h = self._row_lines(tuple(self.t(c) for c in t.columns), widths, size,
                                             True)
        rows = [self._row_lines(tuple(self.t(v) for v in r), widths, size) for r in t.rows]
        self.font(7.5)
        tail_h = 4.0 + 3.8 * len(self._wrap(self.t(t.caption), pdf.epw - 2)) if t.caption else 0.0
        title_h = 6.0 if t.title else 0.0
        # A short table stays on one page; a long one starts with at least two rows.
        whole = len(rows) <= KEEP_WHOLE_ROWS
        start = head_h + title_h + sum(h for _, h in (rows if whole else rows[:2])) + (
            tail_h if whole else 0.0)
        if pdf.get_y() + start > pdf.page_break_trigger:
            pdf.add_page()
        if t.title:
            self.font(9.5, bold=True, colour=MUTED)
            pdf.cell(0, 6, self.t(t.title), new_x="LMARGIN", new_y="NEXT")
        breaks = self._breaks_before([h for _, h in rows], head_h, pdf.get_y(), tail_h)
        self._draw_row(head_lines, head_h, widths, align, size, bold=True)
        for i, (lines, h) in enumerate(rows):
            if i in breaks:
                pdf.add_page()
                self._draw_row(head_lines, head_h, widths, align, size, bold=True)
            self._draw_row(lines, h, widths, align, size)
        if t.caption:
            pdf.ln(0.8)
            self.font(7.5, colour=MUTED)
            pdf.multi_cell(0, 3.8, self.t(t.caption), align="L", new_x="LMARGIN", new_y="NEXT")
        pdf.ln(2.5)

    # ------------------------------------------------------------ figures

    def figure(self, f):
        from engine.report.static_charts import PNG_SCALE, drawn, figure_png

        pdf = self.pdf
        png, problem = drawn(f, figure_png)
        if png is None:
            self.font(10, bold=True)
            pdf.cell(0, 6, self.t(f.title), new_x="LMARGIN", new_y="NEXT")
            self.para(f"This chart could not be drawn: {problem}", "caution")
            return
        # PNG size from the IHDR chunk: width and height, big-endian, at bytes 16..24.
        w_px, h_px = struct.unpack(">II", png[16:24])
        w = min(pdf.epw, w_px / PNG_SCALE * MM_PER_CSS_PX)
        h = w * h_px / w_px
        if h > MAX_FIGURE_HEIGHT_MM:
            h = MAX_FIGURE_HEIGHT_MM
            w = h * w_px / h_px
        if pdf.get_y() + h + 14 > pdf.page_break_trigger:
            pdf.add_page()
        self.font(10, bold=True)
        pdf.cell(0, 6, self.t(f.title), new_x="LMARGIN", new_y="NEXT")
        pdf.image(io.BytesIO(png), x=pdf.l_margin + (pdf.epw - w) / 2, w=w, h=h)
        self.font(7.5, colour=MUTED)
        pdf.multi_cell(0, 3.8, self.t(f.caption), align="L", new_x="LMARGIN", new_y="NEXT")
        pdf.ln(3)

    def block(self, b):
        if isinstance(b, Paragraph):
            self.para(b.text, b.tone)
        elif isinstance(b, Bullets):
            self.bullets(b.items)
        elif isinstance(b, Table):
            self.table(b)
        elif isinstance(b, FigureBlock):
            self.figure(b.figure)


def _title_page_head(doc: PdfSummary):
    s, pdf = doc.summary, doc.pdf
    pdf.add_page()
    doc.font(17, bold=True)
    pdf.multi_cell(0, 8, doc.t(s.title), align="L", new_x="LMARGIN", new_y="NEXT")
    doc.font(9, colour=MUTED)
    pdf.multi_cell(0, 4.6, doc.t(f"Made {s.generated_at} · assessor: "
                                 f"{s.assessor or '(not given)'} · perch {s.version}"),
                   align="L", new_x="LMARGIN", new_y="NEXT")
    pdf.ln(2)
    for c in s.cautions_short:
        doc.para("Safety: " + c, "caution")


def render_pdf(summary: Summary, font="auto") -> bytes:
    """The summary as PDF bytes (A4, charts as PNG at scale 2, data files attached).

    Parameters
    ----------
    summary : from :func:`engine.report.build.build_summary`
    font : ``"auto"`` to use :func:`engine.report.pdf_fonts.find_font`; a (regular, bold)
        pair of TTF paths; or None for the PDF core fonts with text transliterated by
        :func:`engine.report.pdf_fonts.to_latin1`.
    """
    if font == "auto":
        font = find_font()
    doc = PdfSummary(summary, font)
    pdf, s = doc.pdf, summary
    _title_page_head(doc)
    in_appendix = False
    for sec in s.sections:
        if sec.appendix and not in_appendix:
            in_appendix = True
            pdf.add_page()
            doc.heading("Appendix", size=15, colour=INK)
        elif pdf.get_y() > pdf.page_break_trigger - KEEP_TOGETHER_MM.get(sec.key, 40.0):
            pdf.add_page()
        doc.heading(sec.heading)
        for b in sec.blocks:
            doc.block(b)
    stamp = parse_timestamp(s.generated_at)
    for x in s.attachments:
        pdf.embed_file(bytes=x.data, basename=x.name, desc=doc.t(x.description),
                       creation_date=stamp, modification_date=stamp, mime_type=x.mime)
    return bytes(pdf.output())
