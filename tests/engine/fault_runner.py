"""The child-process runner of the command-line fault tests: each case runs the real command
under a small parent that reports the peak resident memory of that one child."""
from __future__ import annotations

import os
import resource
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
#: Cases that do the whole work (ranking, the summary with its charts) before the fault [s].
MAX_SECONDS_FULL = 60.0


#: A small parent for each case: it runs the command and reports the peak resident memory of
#: that one child. (Read in the test process itself, RUSAGE_CHILDREN is the largest of every
#: child the whole test run has had, and a child forked from a large process starts its count
#: at that process's size.)
LAUNCHER = (
    "import resource, subprocess, sys\n"
    "rc = subprocess.call([sys.executable, '-m', 'engine', *sys.argv[1:]])\n"
    "peak = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss\n"
    "sys.stderr.write(f'\\n{MARK}{peak}\\n')\n"
    "sys.exit(rc)\n")
MARK = "@@peak-rss-kib "


def run(args, stdout=subprocess.PIPE, file_size_limit=None, timeout=MAX_SECONDS_FULL):
    """Run ``python -m engine ARGS``; return (code, stdout, stderr, seconds, peak RSS bytes)."""
    def limit():
        if file_size_limit is not None:
            signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
            resource.setrlimit(resource.RLIMIT_FSIZE, (file_size_limit, file_size_limit))
    t0 = time.monotonic()
    proc = subprocess.Popen([sys.executable, "-c", LAUNCHER.replace("{MARK}", MARK),
                             *map(str, args)], cwd=ROOT, stdout=stdout,
                            stderr=subprocess.PIPE, preexec_fn=limit, start_new_session=True)
    try:
        out, err = proc.communicate(timeout=timeout)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, signal.SIGKILL)
        proc.communicate()
        pytest.fail(f"{args} still running after {timeout} s")
    seconds = time.monotonic() - t0
    text = err.decode(errors="replace")
    head, sep, peak = text.rpartition("\n" + MARK)
    rss = int(peak.strip()) * 1024 if sep else 0  # ru_maxrss is in KiB on Linux
    if not sep:
        head = text
        rss = 10 ** 12  # no report: the launcher itself failed, which must not pass
    return proc.returncode, (out or b"").decode(errors="replace"), head, seconds, rss
