"""``python -m engine report SITE.json --out summary.html|summary.pdf``: the siting summary.

The output format follows the file name's suffix (``.html``/``.htm`` or ``.pdf``).
``--exports DIR`` also writes the data files (site file, rank JSON, ranking CSV, per-sector
effective climate CSV). ``--record FILE`` hands the climate's own record (the file whose SHA-256
the site file's climate names) to the summary, which then shows the leading option's
time-series yield beside its Weibull yield. For a long-term corrected, averaging-corrected or
logger-height climate the corrected series is rebuilt from the record (and ``--long-term
REFERENCE`` with its options) through the call that built the climate, and used only when the
rebuilt climate equals the site file's. ``--generated-at`` fixes the time stamp so a re-run
reproduces the file byte for byte; without it ``SOURCE_DATE_EPOCH`` is used when set, else the current time.
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


def _corrected(climate, data: bytes) -> bool:
    """Whether the climate's series differs from the record's own valid rows (long-term or
    averaging corrected, or a logger file's chosen height)."""
    from engine.climate.averaging import LONG_AVERAGING_S
    from engine.io import record_columns
    return (climate.source == "long_term" or climate.averaging_s >= LONG_AVERAGING_S
            or len(record_columns.height_columns(record_columns.header_line(data))) > 1)


def _rebuilt_series(args, data: bytes, name: str, assessment):
    """The corrected series, rebuilt with the same call that built the climate and checked
    against it (:func:`engine.climate.site_record.climate_series`)."""
    from engine.cli.long_term import reference_file
    from engine.climate import site_record
    from engine.io import records
    from engine.io.safe_files import read_bounded
    c = assessment.climate
    ref = None
    if getattr(args, "long_term", None):
        ref_bytes = read_bounded(args.long_term, records.MAX_RECORD_BYTES,
                                 "a CSV/TSV record or NetCDF file", "--long-term")
        ref = reference_file(args, ref_bytes, Path(args.long_term).name)
    elif c.source == "long_term":
        raise InputError([("--record", "is the record of a long-term corrected climate: give "
                                       "its reference with --long-term REFERENCE (and the "
                                       "options it was corrected with) so the corrected series "
                                       "is rebuilt and checked, or leave --record out")])
    base = 0.0
    if c.measured_at == "position":
        base = next(assessment.base_height_m(p) for p in assessment.positions
                    if p.id == c.position_id)
    where = {"record": "--record", "reference": "--long-term", "period": "--period-start"}
    try:
        return site_record.climate_series(data, name, c, base_height_m=base, reference=ref)
    except InputError as e:
        raise InputError([(where.get(w, w), m) for w, m in e.problems]) from None


def _record_series(args, assessment):
    """(time_ns, speed_ms, direction_deg) of the climate's own record: its valid rows, or for
    a corrected climate the corrected series rebuilt and checked."""
    import hashlib

    from engine.climate import qc
    from engine.climate.weibull import mixture_mean_ms
    from engine.io import records
    from engine.io.safe_files import read_bounded

    climate = assessment.climate
    path_text = args.record
    data = read_bounded(path_text, records.MAX_RECORD_BYTES, "a CSV/TSV record", "--record")
    if not climate.record_sha256:
        raise InputError([("--record", "the site file's climate names no record "
                                       "(climate.record_sha256 is empty); leave --record out")])
    if hashlib.sha256(data).hexdigest() != climate.record_sha256:
        raise InputError([("--record", f"must be the climate's own record "
                                       f"({climate.record_file or 'unnamed'}, SHA-256 "
                                       f"{climate.record_sha256[:16]}...), got a file whose "
                                       "SHA-256 differs; give that file")])
    if _corrected(climate, data):
        return _rebuilt_series(args, data, Path(path_text).name, assessment)
    rec = records.read_record(data, Path(path_text).name)
    if not rec.has("direction"):
        raise InputError([("--record", "needs a direction column for the series yield")])
    ok = qc.run_qc(rec).valid
    v = rec.si("speed")[ok]
    fitted = float(mixture_mean_ms(climate.frequency, climate.weibull_k, climate.weibull_c_ms))
    if v.size == 0 or not 0.9 * fitted <= float(v.mean()) <= 1.1 * fitted:
        got = float(v.mean()) if v.size else float("nan")
        raise InputError([("--record", f"mean speed must be within 10 % of the climate's "
                                       f"{fitted:.2f} m/s, got {got:.2f} m/s (read with another "
                                       "speed unit or other columns than the climate was?)")])
    return rec.time_ns[ok], v, rec.si("direction")[ok]


def cmd_report(args) -> int:
    """Write the summary (and the data files with ``--exports``); print what was written."""
    from engine.chain import pipeline
    from engine import report
    from engine.io import sitefile

    out, kind, stamp = _check_args(args)
    folder = _exports_folder(args.exports) if args.exports else None
    ev = pipeline.evaluate(sitefile.load(args.site))
    record = _record_series(args, ev.assessment) if getattr(args, "record", "") else None
    summary = report.build_summary(ev, assessor=args.assessor or "", notes=args.notes or "",
                                   generated_at=stamp, record=record)
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
    p.add_argument("--record", default="",
                   help="the climate's own record (CSV/TSV, the file the site file's climate "
                        "names by SHA-256): shows the leading option's time-series yield "
                        "beside its Weibull yield")
    from engine.cli.long_term import add_reference_options
    add_reference_options(p.add_argument_group(
        "reference of a long-term corrected climate (with --record: the corrected series is "
        "rebuilt with these and checked against the site file's climate)"))
    p.add_argument("--generated-at", default="",
                   help="time stamp, ISO 8601 (e.g. 2026-05-01T09:30:00Z); fixes the output")
    p.add_argument("--exports", default="",
                   help="folder for the data files (site file, rank JSON, CSVs)")
    p.set_defaults(func=cmd_report)
