"""Saving never loses the previous site file: kill the writer at each step and reload."""
from __future__ import annotations

import dataclasses
import os
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"

pytestmark = pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs POSIX SIGKILL")


def _versions():
    """Two different valid assessments (the demo under two names)."""
    a = sitefile.load(DEMO)
    old = dataclasses.replace(a, site=dataclasses.replace(a.site, name="version A"))
    new = dataclasses.replace(a, site=dataclasses.replace(a.site, name="version B"))
    return old, new


def _big(a, n_positions=300):
    """The assessment with thousands of mast positions, so writing it takes a while."""
    p0 = next(p for p in a.positions if p.kind == "mast")
    pos = a.positions + tuple(dataclasses.replace(p0, id=f"extra-{i}", note="x" * 10000)
                              for i in range(n_positions))
    return dataclasses.replace(a, positions=pos)


CHILD = textwrap.dedent("""
    import os, sys, time
    sys.path.insert(0, {root!r})
    from engine.io import sitefile
    a = sitefile.loads(open({src!r}, "rb").read())
    stop_at = {stop_at!r}
    real_replace, real_fsync = os.replace, os.fsync

    def hold():
        print("ready", flush=True)
        time.sleep(60)

    def fsync(fd):
        real_fsync(fd)
        if stop_at == "after temp written":
            hold()

    def replace(src, dst):
        if stop_at == "before final rename" and str(dst) == {path!r}:
            hold()
        real_replace(src, dst)

    os.fsync, os.replace = fsync, replace
    if stop_at == "loop":
        print("ready", flush=True)
        while True:
            sitefile.save(a, {path!r})
    else:
        sitefile.save(a, {path!r})
""")


def _start_writer(tmp_path, new, path, stop_at):
    src = tmp_path / "incoming.json"
    src.write_text(sitefile.dumps(new), encoding="utf-8")
    code = CHILD.format(root=str(ROOT), src=str(src), path=str(path), stop_at=stop_at)
    proc = subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True)
    line = proc.stdout.readline().strip()
    assert line == "ready", proc.stderr.read()
    return proc


def _kill(proc):
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait(timeout=10)
    assert proc.returncode == -signal.SIGKILL


@pytest.mark.parametrize("stop_at", ["after temp written", "before final rename"])
def test_writer_killed_mid_save_leaves_a_loadable_site_file(tmp_path, stop_at):
    """SIGKILL at either step of a save leaves the site file whole, holding the previous version."""
    old, new = _versions()
    path = tmp_path / "site.json"
    sitefile.save(old, path)
    proc = _start_writer(tmp_path, new, path, stop_at)
    _kill(proc)
    assert sitefile.load(path) == old
    assert sitefile.loads(path.read_bytes()).site.name == "version A"


@pytest.mark.slow
def test_writer_killed_at_random_moments_never_leaves_a_partial_file(tmp_path):
    """A writer saving a large file in a loop, killed at 8 moments: the file is always old or new."""
    old, new = _versions()
    old, new = _big(old), _big(new)
    path = tmp_path / "site.json"
    sitefile.save(old, path)
    allowed = {sitefile.dumps(old), sitefile.dumps(new)}
    for delay_s in (0.0, 0.01, 0.03, 0.05, 0.08, 0.13, 0.21, 0.34):
        proc = _start_writer(tmp_path, new, path, "loop")
        time.sleep(delay_s)
        _kill(proc)
        assert path.read_text(encoding="utf-8") in allowed
        sitefile.load(path)


def test_save_keeps_the_previous_version_as_bak(tmp_path):
    """Each save moves the version it replaces to <name>.bak; the first save makes none."""
    old, new = _versions()
    path = tmp_path / "site.json"
    sitefile.save(old, path)
    assert not (tmp_path / "site.json.bak").exists()
    sitefile.save(new, path)
    assert sitefile.load(path) == new
    assert sitefile.load(tmp_path / "site.json.bak") == old


def test_failed_write_leaves_previous_file_and_no_temporary(tmp_path, monkeypatch):
    """A save that fails while writing (disk full) keeps the old file and cleans its temp file."""
    old, new = _versions()
    path = tmp_path / "site.json"
    sitefile.save(old, path)

    def full_disk(fd):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", full_disk)
    with pytest.raises(OSError):
        sitefile.save(new, path)
    monkeypatch.undo()
    assert sitefile.load(path) == old
    assert sorted(p.name for p in tmp_path.iterdir()) == ["site.json"]
