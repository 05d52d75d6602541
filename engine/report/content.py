"""The siting summary's content object: sections of paragraphs, bullets, tables and figures.

:func:`engine.report.build.build_summary` fills a :class:`Summary` with every number already
formatted; :mod:`engine.report.html_page` and :mod:`engine.report.pdf` only lay it out, so the
HTML and the PDF show the same words and numbers.
"""
from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class Paragraph:
    """A paragraph of plain text; ``tone`` is ``""``, ``"note"`` or ``"caution"``."""

    text: str
    tone: str = ""


@dataclass(frozen=True)
class Bullets:
    """A bullet list of plain-text items."""

    items: tuple


@dataclass(frozen=True)
class Table:
    """A table of already formatted cells; ``align`` is ``"l"`` or ``"r"`` per column.

    ``title`` is a short heading shown above the table (empty for none).
    """

    key: str
    columns: tuple
    rows: tuple
    align: tuple
    caption: str = ""
    title: str = ""


@dataclass(frozen=True)
class FigureBlock:
    """A chart (see :class:`engine.report.static_charts.Figure`)."""

    figure: object


@dataclass(frozen=True)
class Section:
    """One section of the summary; ``number`` is ``"1"``, ``"2"``... or ``"A"``, ``"B"``... in
    the appendix."""

    key: str
    title: str
    blocks: tuple
    number: str = ""

    @property
    def heading(self) -> str:
        """The heading as printed: ``"3. Ranked positions"``, ``"A. Positions, ..."``."""
        return f"{self.number}. {self.title}" if self.number else self.title

    @property
    def appendix(self) -> bool:
        """True for a section of the appendix (lettered)."""
        return self.number.isalpha()


@dataclass(frozen=True)
class Attachment:
    """A data file carried inside the summary (data: link in HTML, embedded file in PDF)."""

    name: str
    mime: str
    data: bytes
    description: str


@dataclass(frozen=True)
class Summary:
    """The siting summary's content, shared by the HTML and the PDF renderers."""

    title: str
    site_name: str
    generated_at: str
    assessor: str
    site_sha256: str
    version: str
    cautions_short: tuple
    sections: tuple
    attachments: tuple = ()
    rank_document: dict = field(default_factory=dict)

    def section(self, key: str) -> Section:
        """The section with ``key``."""
        for s in self.sections:
            if s.key == key:
                return s
        raise KeyError(key)

    def table(self, key: str) -> Table:
        """The first table with ``key`` in any section."""
        for s in self.sections:
            for b in s.blocks:
                if isinstance(b, Table) and b.key == key:
                    return b
        raise KeyError(key)

    def tables(self):
        """Every table of the summary, in order."""
        return [b for s in self.sections for b in s.blocks if isinstance(b, Table)]


#: Section keys of the body (numbered), in order; the client reads these.
BODY_KEYS = ("answer", "question", "recommendation", "ranking", "costs", "charts", "quality", "cautions")
#: Section keys of the appendix (lettered), in order: inputs and records for checking.
APPENDIX_KEYS = ("positions", "further", "methods", "inputs", "reproducibility", "data")
#: Section keys in order; every summary has all of them.
SECTION_KEYS = BODY_KEYS + APPENDIX_KEYS


def numbered(sections) -> tuple:
    """``sections`` with their numbers: 1, 2, ... in the body, A, B, ... in the appendix."""
    out, n, letter = [], 0, 0
    for s in sections:
        if s.key in APPENDIX_KEYS:
            number = chr(ord("A") + letter)
            letter += 1
        else:
            n += 1
            number = str(n)
        out.append(Section(s.key, s.title, s.blocks, number))
    return tuple(out)
