"""Command line: ``python -m engine <command> ...``.

Exit codes: 0 success; 2 a problem with the input, an argument or a file (a readable list of
every problem on stderr, naming the argument or file); 1 an internal fault (one line on
stderr; the traceback only with ``--debug``); 130 interrupted.
Each command is a ``register_<name>(subparsers)`` function here; modules add theirs to
:data:`COMMANDS`.
"""
from __future__ import annotations

import argparse
import json
import math
import sys

import numpy as np
import pandas as pd

from . import __version__, pipeline, sitefile
from .errors import InputError

#: Columns of the ``rank`` output that never change name (later fields are appended).
RANK_FIELDS = ("rank", "position_id", "turbine_id", "hub_height_m", "mean_speed_ms", "aep_kwh",
               "capacity_factor", "flags")


def _jsonable(v):
    if isinstance(v, (np.floating, float)):
        return None if not np.isfinite(v) else float(v)
    if isinstance(v, (np.integer,)):
        return int(v)
    if isinstance(v, np.bool_):
        return bool(v)
    if isinstance(v, np.ndarray):
        return [_jsonable(x) for x in v.tolist()]
    if isinstance(v, (list, tuple)):
        return [_jsonable(x) for x in v]
    if isinstance(v, dict):
        return {k: _jsonable(x) for k, x in v.items()}
    return v


def rank_records(table: pd.DataFrame) -> list:
    """Rows of a ranked table as JSON-ready dicts, the fixed fields first."""
    cols = list(RANK_FIELDS) + [c for c in table.columns if c not in RANK_FIELDS]
    return [{c: _jsonable(row[c]) for c in cols} for row in table[cols].to_dict("records")]


def rank_document(evaluation) -> dict:
    """The ``rank`` JSON document: site summary and ranked positions."""
    a = evaluation.assessment
    return {
        "tool": "perch", "version": __version__,
        "site": {"name": a.site.name, "site_file_sha256": sitefile.content_hash(a),
                 "air_density_kgm3": round(evaluation.climate.air_density_kgm3, 6)},
        "positions": rank_records(evaluation.table),
    }


def _table_text(table: pd.DataFrame) -> str:
    show = table[["rank", "position_id", "turbine_id", "hub_height_m", "mean_speed_ms",
                  "aep_kwh", "capacity_factor"]].copy()
    show["flags"] = ["; ".join(f) for f in table["flags"]]
    with pd.option_context("display.width", 200, "display.max_columns", 20,
                           "display.max_colwidth", 60):
        return show.to_string(index=False, float_format=lambda x: f"{x:.3f}")


def _drop_stdout() -> None:
    # What is left in the buffer goes nowhere, so the exit does not fail a second time.
    import os
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError):
        pass


def write_stdout(text: str) -> None:
    """Write ``text`` to standard output and flush it; a failed write raises InputError.

    A full disk or a closed pipe behind ``>`` or ``|`` must not end as exit 0.
    """
    try:
        sys.stdout.write(text)
        sys.stdout.flush()
    except BrokenPipeError:
        _drop_stdout()
        raise InputError([("standard output", "was closed before the output was written")]) \
            from None
    except OSError as e:
        _drop_stdout()
        raise InputError([("standard output", f"could not be written ({e.strerror}); "
                                              "nothing complete was written")]) from None


def cmd_rank(args) -> int:
    ev = pipeline.evaluate(sitefile.load(args.site))
    if args.format == "json":
        write_stdout(json.dumps(rank_document(ev), indent=2, ensure_ascii=False) + "\n")
    elif args.format == "csv":
        from .exports import safe_csv
        write_stdout(safe_csv(ev.table))
    else:
        write_stdout(_table_text(ev.table) + "\n")
    return 0


def cmd_schema(args) -> int:
    write_stdout(json.dumps(sitefile.json_schema(), indent=2, ensure_ascii=False) + "\n")
    return 0


def register_rank(sub):
    p = sub.add_parser("rank", help="rank candidate positions x turbines for a site file")
    p.add_argument("site", help="site file (JSON)")
    p.add_argument("--format", choices=("table", "json", "csv"), default="table")
    p.set_defaults(func=cmd_rank)


def register_schema(sub):
    p = sub.add_parser("schema", help="print the site file's JSON Schema")
    p.set_defaults(func=cmd_schema)


COMMANDS = [register_rank, register_schema]

from .cli_report import register_report  # noqa: E402  (the report module imports this one)

COMMANDS.append(register_report)

from .cli_screen import register_screen  # noqa: E402

COMMANDS.append(register_screen)

from .cli_climate import register_climate  # noqa: E402

COMMANDS.append(register_climate)


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="python -m engine",
                                     description="Perch: siting small wind turbines on and "
                                                 "between buildings.")
    parser.add_argument("--version", action="version", version=f"perch {__version__}")
    parser.add_argument("--debug", action="store_true",
                        help="show the traceback of an internal fault")
    sub = parser.add_subparsers(dest="command", required=True)
    for register in COMMANDS:
        register(sub)
    for command in sub.choices.values():  # ``--debug`` after the command works too
        command.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                             help="show the traceback of an internal fault")
    return parser


def finite_float(text: str) -> float:
    """An ``argparse`` type: a finite number (NaN, inf and overflowing values refused)."""
    try:
        v = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"must be a number, got {text!r}") from None
    if not math.isfinite(v):
        raise argparse.ArgumentTypeError(f"must be a finite number, got {text!r}")
    return v


def _os_problem(e: OSError) -> InputError:
    where = e.filename if e.filename is not None else "file"
    return InputError([(str(where), f"cannot be used ({e.strerror or e.__class__.__name__})")])


def main(argv=None) -> int:
    for stream in (sys.stdout, sys.stderr):  # lone surrogates must never stop the output
        if hasattr(stream, "reconfigure"):
            stream.reconfigure(errors="backslashreplace")
    args = build_parser().parse_args(argv)
    try:
        return args.func(args)
    except InputError as e:
        print(f"perch {args.command}: {e.render()}", file=sys.stderr)
        return 2
    except OSError as e:  # a file-system problem the command did not name itself
        print(f"perch {args.command}: {_os_problem(e).render()}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"perch {args.command}: interrupted", file=sys.stderr)
        return 130
    except Exception as e:  # noqa: BLE001 - an internal fault: one line, no traceback
        if getattr(args, "debug", False):
            raise
        from .errors import printable
        text = printable(str(e).splitlines()[0] if str(e) else "")[:300]
        print(f"perch {args.command}: internal error ({e.__class__.__name__}: {text}); "
              "run again with --debug for the traceback and report it", file=sys.stderr)
        return 1
