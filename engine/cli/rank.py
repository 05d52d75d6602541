"""``python -m engine rank SITE.json`` and ``python -m engine schema``.

The table format shows one line per combination with its status (``ranked``, or
``excluded`` with the constraints it fails) and the advice for it, both wrapped to a
readable width; ``--format json`` and ``--format csv`` write every column of the ranked
table as :mod:`engine.chain.columns` declares it. ``--rules FILE`` checks the positions
against a chosen rule-set file (:func:`engine.chain.rules.load_rule_set`) instead of the site
file's own rules.
"""
from __future__ import annotations

import json
import sys
import textwrap
from dataclasses import replace

import numpy as np

from engine.chain import columns, pipeline, rules
from engine.chain.documents import rank_document, ranking_csv_text
from engine.chain.ranking import exclusion_reasons
from engine.chain.verdict import headline_for
from engine.io import sitefile

#: Columns of the table format, written as :mod:`engine.chain.columns` declares them.
TABLE_COLUMNS = ("rank", "position_id", "turbine_id", "hub_height_m", "mean_speed_ms",
                 "aep_kwh", "capacity_factor")
#: Widths [characters] the status and notes columns wrap to.
STATUS_WIDTH = 30
NOTES_WIDTH = 40

FORMAT_HELP = ("output: 'table' (readable, wrapped; the default), 'json' (every column, the "
               "document other tools read) or 'csv' (every column, SI units in the header)")


def status_and_notes(table, settings) -> tuple[list, list]:
    """Per row: the status text and the advice that is not an exclusion reason.

    Status is ``"ranked"`` or ``"excluded: <reasons>"`` with the ranking's own reasons
    (:func:`engine.chain.ranking.exclusion_reasons`); the notes are the remaining flags.
    """
    reasons = exclusion_reasons(table, settings)
    status, notes = [], []
    for rs, flags in zip(reasons, table["flags"]):
        status.append("excluded: " + "; ".join(rs) if rs else "ranked")
        notes.append([f for f in flags if f not in rs])
    return status, notes


def _cell(name, value) -> str:
    col = columns.declared(name)
    if col.kind not in ("number", "fraction"):
        return str(value)
    v = float(value) * (100.0 if col.kind == "fraction" else 1.0)
    return f"{v:.{col.digits}f}" if np.isfinite(v) else "-"


def table_text(table, settings) -> str:
    """The ranked table as wrapped plain text, one block of lines per combination."""
    status, notes = status_and_notes(table, settings)
    heads = [columns.column_label(c, percent=True) for c in TABLE_COLUMNS] + ["Status", "Notes"]
    cells = [[_cell(c, v) for c, v in zip(TABLE_COLUMNS, row)]
             for row in zip(*(table[c].to_numpy() for c in TABLE_COLUMNS))]
    width = [max([len(h) for h in _wrap(head, 12)] + [len(r[i]) for r in cells])
             for i, head in enumerate(heads[:-2])] + [STATUS_WIDTH, NOTES_WIDTH]
    head_lines = [_wrap(h, max(w, 1)) or [""] for h, w in zip(heads, width)]
    out = _block(head_lines, width, len(TABLE_COLUMNS))
    out.append("  ".join("-" * w for w in width))
    for row, st, nt in zip(cells, status, notes):
        wrapped = [[c] for c in row] + [_wrap(st, STATUS_WIDTH),
                                        _wrap("; ".join(nt), NOTES_WIDTH) or ["-"]]
        out += _block(wrapped, width, len(TABLE_COLUMNS))
    return "\n".join(line.rstrip() for line in out)


def _wrap(text: str, width: int) -> list:
    """Lines of at most ``width`` characters, broken only at spaces (ids stay whole)."""
    return textwrap.wrap(text, width, break_long_words=False, break_on_hyphens=False)


def _block(wrapped, width, n_right) -> list:
    """Lines of one row whose cells are lists of lines; the first ``n_right`` right-aligned
    except the ids."""
    lines = []
    for k in range(max(len(w) for w in wrapped)):
        parts = []
        for i, (cell, w) in enumerate(zip(wrapped, width)):
            text = cell[k] if k < len(cell) else ""
            numeric = i < n_right and columns.declared(TABLE_COLUMNS[i]).kind in (
                "int", "number", "fraction")
            parts.append(text.rjust(w) if numeric else text.ljust(w))
        lines.append("  ".join(parts))
    return lines


def cmd_rank(args) -> int:
    assessment = sitefile.load(args.site)
    if getattr(args, "rules", None):
        name, _, chosen = rules.load_rule_set(args.rules)
        assessment = replace(assessment, consent=replace(assessment.consent, rules=chosen,
                                                         rule_set_name=name))
    ev = pipeline.evaluate(assessment)
    if args.format == "json":
        print(json.dumps(rank_document(ev), indent=2, ensure_ascii=False))
    elif args.format == "csv":
        sys.stdout.write(ranking_csv_text(ev.table))
    else:
        print(headline_for(ev) + "\n\n" + table_text(ev.table, ev.assessment.ranking))
    return 0


def cmd_schema(args) -> int:
    print(json.dumps(sitefile.json_schema(), indent=2, ensure_ascii=False))
    return 0


def register_rank(sub):
    p = sub.add_parser("rank", help="rank candidate positions x turbines for a site file")
    p.add_argument("site", help="site file (JSON)")
    p.add_argument("--format", choices=("table", "json", "csv"), default="table",
                   help=FORMAT_HELP)
    p.add_argument("--rules", help="local rule-set file (JSON) replacing the site file's rules")
    p.set_defaults(func=cmd_rank)


def register_schema(sub):
    p = sub.add_parser("schema", help="print the site file's JSON Schema")
    p.set_defaults(func=cmd_schema)
