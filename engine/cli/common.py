"""What every command of the command line shares: checked output, option types, fault handling.

- :func:`write_stdout` writes and flushes standard output and turns a failed write (a full
  disk behind ``>``, a closed pipe behind ``|``) into an :class:`~engine.core.errors.InputError`,
  so it never ends as exit 0;
- :func:`finite_float` is an ``argparse`` type refusing NaN, infinities and overflowing
  numbers, with the option named by ``argparse`` (:func:`positive_metres` also refuses zero
  and below); :func:`renamed` names an engine's problems as the user typed them;
- :func:`run_command` runs a command's function and maps what it raises to the exit codes:
  0 success; 2 a problem with the input, an argument or a file (every problem listed on
  stderr, naming the argument or file); 1 an internal fault (one line on stderr, the
  traceback only with ``--debug``); 130 interrupted.
"""
from __future__ import annotations

import argparse
import math
import os
import sys

from engine.core.errors import InputError, printable

#: Help text of the ``--debug`` option.
DEBUG_HELP = "show the traceback of an internal fault"


def _drop_stdout() -> None:
    """Point standard output at the null device, so what is left in its buffer goes nowhere
    and the exit does not fail a second time."""
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


def finite_float(text: str) -> float:
    """An ``argparse`` type: a finite number (NaN, inf and overflowing values refused)."""
    try:
        v = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"must be a number, got {text!r}") from None
    if not math.isfinite(v):
        raise argparse.ArgumentTypeError(f"must be a finite number, got {text!r}")
    return v


def positive_metres(text: str) -> float:
    """An ``argparse`` type: a finite length above zero [m]."""
    v = finite_float(text)
    if not v > 0:
        raise argparse.ArgumentTypeError(f"must be a positive number of metres, got {text!r}")
    return v


def renamed(error: InputError, names: dict) -> InputError:
    """``error`` with each ``where`` found in ``names`` replaced by the name the user typed
    (an engine's ``"file"`` becomes the path, ``"crs"`` becomes ``--crs``)."""
    return InputError([(names.get(w, w), m) for w, m in error.problems])


def os_problem(e: OSError) -> InputError:
    """A file-system error a command did not name itself, as an InputError naming the file."""
    where = e.filename if e.filename is not None else "file"
    return InputError([(str(where), f"cannot be used ({e.strerror or e.__class__.__name__})")])


def add_debug_everywhere(parser: argparse.ArgumentParser, sub) -> None:
    """``--debug`` before the command, and after it for every command without its own."""
    parser.add_argument("--debug", action="store_true", dest="debug_first", help=DEBUG_HELP)
    for command in sub.choices.values():
        if not any("--debug" in a.option_strings for a in command._actions):
            command.add_argument("--debug", action="store_true", default=False,
                                 help=DEBUG_HELP)


def tolerant_streams() -> None:
    """Write what cannot be encoded (a lone surrogate) as an escape instead of failing."""
    for stream in (sys.stdout, sys.stderr):
        if hasattr(stream, "reconfigure"):
            stream.reconfigure(errors="backslashreplace")


def run_command(args) -> int:
    """Run ``args.func(args)`` and map what it raises to an exit code and one message."""
    if getattr(args, "debug_first", False):
        args.debug = True
    try:
        return args.func(args)
    except InputError as e:
        print(f"perch {args.command}: {e.render()}", file=sys.stderr)
        return 2
    except OSError as e:
        print(f"perch {args.command}: {os_problem(e).render()}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"perch {args.command}: interrupted", file=sys.stderr)
        return 130
    except Exception as e:  # noqa: BLE001 - an internal fault: one line, no traceback
        if getattr(args, "debug", False):
            raise
        text = printable(str(e).splitlines()[0] if str(e) else "")[:300]
        print(f"perch {args.command}: internal error ({e.__class__.__name__}: {text}); "
              "run again with --debug for the traceback and report it", file=sys.stderr)
        return 1
