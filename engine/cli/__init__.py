"""Command line: ``python -m engine <command> ...``.

The top of the chain: each command is a module of this package with a ``register_<name>``
function that adds its sub-parser; :data:`COMMANDS` lists them in the order ``--help`` shows.
Exit codes (:func:`engine.cli.common.run_command`): 0 success; 2 a problem with the input, an
argument or a file (a readable list of every problem on stderr, naming the argument or file);
1 an internal fault (one line on stderr; the traceback only with ``--debug``); 130 interrupted.
"""
from __future__ import annotations

import argparse

from engine.cli.climate import register_climate
from engine.cli.common import add_debug_everywhere, run_command, tolerant_streams
from engine.cli.geodata import register_footprints, register_geojson
from engine.cli.rank import register_rank, register_schema
from engine.cli.report import register_report
from engine.cli.screen import register_screen
from engine.core import __version__

COMMANDS = [register_rank, register_schema, register_report, register_screen, register_climate,
            register_footprints, register_geojson]


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="python -m engine",
                                     description="Perch: siting small wind turbines on and "
                                                 "between buildings.")
    parser.add_argument("--version", action="version", version=f"perch {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)
    for register in COMMANDS:
        register(sub)
    add_debug_everywhere(parser, sub)
    return parser


def main(argv=None) -> int:
    tolerant_streams()
    return run_command(build_parser().parse_args(argv))
