"""``python -m engine report SITE.json --out summary.html|summary.pdf``: the siting summary.

The output format follows the file name's suffix (``.html``/``.htm`` or ``.pdf``).
``--exports DIR`` also writes the data files (site file, rank JSON, ranking CSV, per-sector
effective climate CSV). ``--generated-at`` fixes the time stamp so a re-run reproduces the
file byte for byte; without it ``SOURCE_DATE_EPOCH`` is used when set, else the current time.
"""
from __future__ import annotations

import datetime as _dt
from pathlib import Path

from engine.cli.common import write_stdout
from engine.core.errors import InputError
from engine.io.safe_files import check_output_path, text_problem, write_output

SUFFIXES = {".html": "html", ".htm": "html", ".pdf": "pdf"}


def _exports_folder(text: str) -> Path:
    """The ``--exports`` folder, created when missing (its parent must exist)."""
    folder = Path(text)
    if folder.is_dir():
        check_output_path(folder / "x", "--exports", "the data files")
        return folder
    if folder.exists() or folder.is_symlink():
        raise InputError([("--exports", f"{text!r} is a file, not a folder; give a folder for "
                                        "the data files")])
    check_output_path(folder, "--exports", "the data files")
    try:
        folder.mkdir()
    except OSError as e:
        raise InputError([("--exports", f"folder {text!r} could not be created "
                                        f"({e.strerror})")]) from None
    return folder


def _check_args(args) -> tuple[Path, str, object]:
    problems = []
    out = Path(args.out)
    kind = SUFFIXES.get(out.suffix.lower())
    if kind is None:
        problems.append(("--out", f"must end in .html, .htm or .pdf, got {out.name!r}"))
    stamp = None
    if args.generated_at:
        try:
            stamp = _dt.datetime.fromisoformat(args.generated_at.replace("Z", "+00:00"))
        except ValueError:
            problems.append(("--generated-at", f"must be an ISO 8601 time such as "
                                               f"2026-05-01T09:30:00Z, got {args.generated_at!r}"))
    for name, text, multiline in (("--assessor", args.assessor or "", False),
                                  ("--notes", args.notes or "", True)):
        bad = text_problem(text, multiline=multiline)
        if bad is not None:
            problems.append((name, bad))
    if not problems:
        try:
            check_output_path(out, "--out", "the summary")
        except InputError as e:
            problems += e.problems
    if problems:
        raise InputError(problems)
    return out, kind, stamp


def cmd_report(args) -> int:
    """Write the summary (and the data files with ``--exports``); print what was written."""
    from engine.chain import pipeline
    from engine import report
    from engine.io import sitefile

    out, kind, stamp = _check_args(args)
    folder = _exports_folder(args.exports) if args.exports else None
    ev = pipeline.evaluate(sitefile.load(args.site))
    summary = report.build_summary(ev, assessor=args.assessor or "", notes=args.notes or "",
                                   generated_at=stamp)
    data = (report.render_html(summary).encode("utf-8") if kind == "html"
            else report.render_pdf(summary))
    write_output(out, data, "--out", "the summary")
    write_stdout(f"wrote {out} ({len(data)} bytes, site file SHA-256 "
                 f"{summary.site_sha256[:16]}, made {summary.generated_at})\n")
    if folder is not None:
        for name, (_mime, blob, _desc) in report.export_files(ev).items():
            write_output(folder / name, blob, "--exports", "the data files")
            write_stdout(f"wrote {folder / name} ({len(blob)} bytes)\n")
    return 0


def register_report(sub):
    """Add the ``report`` command."""
    p = sub.add_parser("report", help="write the siting summary as HTML or PDF")
    p.add_argument("site", help="site file (JSON)")
    p.add_argument("--out", required=True, help="summary file: NAME.html or NAME.pdf")
    p.add_argument("--assessor", default="", help="name of the person responsible")
    p.add_argument("--notes", default="", help="notes to print in the summary")
    p.add_argument("--generated-at", default="",
                   help="time stamp, ISO 8601 (e.g. 2026-05-01T09:30:00Z); fixes the output")
    p.add_argument("--exports", default="",
                   help="folder for the data files (site file, rank JSON, CSVs)")
    p.set_defaults(func=cmd_report)
