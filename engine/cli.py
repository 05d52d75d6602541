"""Command line: ``python -m engine <command> ...``.

Exit codes: 0 success, 2 input problem (a readable list of every problem on stderr).
Each command is a ``register_<name>(subparsers)`` function here; modules add theirs to
:data:`COMMANDS`.
"""
from __future__ import annotations

import argparse
import json
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


def cmd_rank(args) -> int:
    ev = pipeline.evaluate(sitefile.load(args.site))
    if args.format == "json":
        print(json.dumps(rank_document(ev), indent=2, ensure_ascii=False))
    elif args.format == "csv":
        from .exports import safe_csv
        sys.stdout.write(safe_csv(ev.table))
    else:
        print(_table_text(ev.table))
    return 0


def cmd_schema(args) -> int:
    print(json.dumps(sitefile.json_schema(), indent=2, ensure_ascii=False))
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
    sub = parser.add_subparsers(dest="command", required=True)
    for register in COMMANDS:
        register(sub)
    return parser


def main(argv=None) -> int:
    args = build_parser().parse_args(argv)
    try:
        return args.func(args)
    except InputError as e:
        print(f"perch {args.command}: {e.render()}", file=sys.stderr)
        return 2
