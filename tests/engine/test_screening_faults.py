"""Fault injection for ``python -m engine screen``: hostile or careless input, full disks, bad
scheduler addresses, untrusted schedulers.

Each case runs the command in a fresh process with its address space limited to 500 MB and a
10 s wall-clock limit; it must exit with the right code and a message naming the argument, with
no traceback and no partial output.
"""
from __future__ import annotations

import os
import resource
import socket
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
DISTRICT = ROOT / "demo_sites" / "district_1000.csv"
#: Bounds of every case (issue: each within 10 s and 500 MB).
TIME_LIMIT_S = 10.0
MEMORY_LIMIT_BYTES = 500 * 1024 ** 2


def _limits(fsize=None):
    def apply():
        resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT_BYTES, MEMORY_LIMIT_BYTES))
        if fsize is not None:
            resource.setrlimit(resource.RLIMIT_FSIZE, (fsize, fsize))
    return apply


def run_cli(args, fsize=None, code=None, timeout=TIME_LIMIT_S):
    """Run the screen command (or ``code``) bounded in memory and time; (rc, stderr)."""
    # RLIMIT_AS bounds the address space, not the memory used: Arrow's default allocator
    # reserves about 1 GB of address space it never touches, and each malloc arena 64 MB.
    # The system allocator and one arena keep what is reserved close to what is used
    # (a screening of the 1,000-building district then peaks at about 450 MB of address
    # space and 185 MB resident).
    env = dict(os.environ, OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1",
               ARROW_DEFAULT_MEMORY_POOL="system", MALLOC_ARENA_MAX="1")
    cmd = ([sys.executable, "-c", code] if code else
           [sys.executable, "-m", "engine", "screen"]) + [str(a) for a in args]
    out = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT, env=env,
                         timeout=timeout, preexec_fn=_limits(fsize))
    return out.returncode, out.stderr


def assert_refused(rc, err, name, *words):
    assert rc == 2, err
    assert "Traceback" not in err
    assert name in err
    for w in words:
        assert w in err, err


def _folder_is_empty(folder: Path):
    assert sorted(p.name for p in folder.iterdir()) == []


# --- the output ----------------------------------------------------------------------------


def test_out_in_missing_folder(tmp_path):
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "no" / "ranked.csv", "--quiet"])
    assert_refused(rc, err, "--out", "does not exist")


def test_out_is_a_folder(tmp_path):
    rc, err = run_cli([DISTRICT, "--out", tmp_path, "--quiet"])
    assert_refused(rc, err, "--out", "is a folder")
    _folder_is_empty(tmp_path)


def test_out_is_a_device():
    rc, err = run_cli([DISTRICT, "--out", "/dev/full", "--quiet"])
    assert_refused(rc, err, "--out", "device")


def test_full_disk_leaves_no_partial_file(tmp_path):
    """A write that fails part-way (file size limit: the disk is 'full' after 64 kB) exits 2,
    names --out and leaves neither the table nor a temporary file."""
    out = tmp_path / "ranked.csv"
    rc, err = run_cli([DISTRICT, "--out", out, "--quiet"], fsize=64 * 1024)
    assert_refused(rc, err, "--out", "cannot be written")
    _folder_is_empty(tmp_path)


def test_full_disk_while_streaming_parts(tmp_path):
    """The same on the streamed path (the table in several parts, sorted parts spilled next to
    --out and merged): no part files and no partial table are left."""
    out = tmp_path / "ranked.csv"
    code = ("import sys; import engine.screening.table as t; t.PART_BYTES = 20_000; "
            "from engine import cli; sys.exit(cli.main(['screen'] + sys.argv[1:]))")
    rc, err = run_cli([DISTRICT, "--out", out, "--quiet"], fsize=48 * 1024, code=code)
    assert_refused(rc, err, "--out", "cannot be written")
    _folder_is_empty(tmp_path)


def test_previous_table_kept_when_write_fails(tmp_path):
    out = tmp_path / "ranked.csv"
    out.write_text("previous table\n")
    rc, err = run_cli([DISTRICT, "--out", out, "--quiet"], fsize=64 * 1024)
    assert_refused(rc, err, "--out")
    assert out.read_text() == "previous table\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["ranked.csv"]


# --- the climate and the buildings ---------------------------------------------------------


def test_climate_nested_thousands_deep(tmp_path):
    deep = tmp_path / "deep.json"
    deep.write_text("[" * 100_000 + "]" * 100_000)
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--climate", deep, "--quiet"])
    assert_refused(rc, err, "--climate", "nested too deeply")
    assert not (tmp_path / "r.csv").exists()


def test_climate_object_nested_deep_inside(tmp_path):
    deep = tmp_path / "deep.json"
    deep.write_text('{"climate": {"frequency": ' + "[" * 50_000 + "]" * 50_000 + "}}")
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--climate", deep, "--quiet"])
    assert_refused(rc, err, "--climate")


def test_climate_from_dev_zero(tmp_path):
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--climate", "/dev/zero",
                       "--quiet"])
    assert_refused(rc, err, "--climate", "not a regular file")


def test_climate_fifo_is_refused_without_blocking(tmp_path):
    fifo = tmp_path / "climate.json"
    os.mkfifo(fifo)
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--climate", fifo, "--quiet"])
    assert_refused(rc, err, "--climate", "FIFO")


def test_climate_of_200_mb_is_refused(tmp_path):
    big = tmp_path / "big.json"
    with open(big, "wb") as fh:  # sparse: 200 MB long, no disk used
        fh.truncate(200 * 1024 ** 2)
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--climate", big, "--quiet"])
    assert_refused(rc, err, "--climate", "larger than")


def test_buildings_from_a_device_or_fifo(tmp_path):
    rc, err = run_cli(["/dev/zero", "--out", tmp_path / "r.csv", "--quiet"])
    assert_refused(rc, err, "/dev/zero", "not a regular file")
    fifo = tmp_path / "b.csv"
    os.mkfifo(fifo)
    rc, err = run_cli([fifo, "--out", tmp_path / "r.csv", "--quiet"])
    assert_refused(rc, err, str(fifo), "FIFO")


# --- workers and schedulers ----------------------------------------------------------------


@pytest.mark.parametrize("n", ["-1", "0", "100000"])
def test_workers_out_of_range(tmp_path, n):
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--workers", n, "--quiet"])
    assert_refused(rc, err, "--workers", "between 1 and")


@pytest.mark.parametrize("address, why", [
    ("garbage", "scheme"), ("http://127.0.0.1:8786", "scheme"), ("file:///etc/passwd", "scheme"),
    ("inproc://x", "scheme"), ("tcp://127.0.0.1", "HOST:PORT"), ("tcp://127.0.0.1:0", "port"),
    ("tcp://127.0.0.1:99999", "port"), ("tcp://127.0.0.1:8786/x", "HOST:PORT"),
    ("tcp://[::1:8786", "HOST:PORT"), ("tcp://bad_host!:8786", "host"),
    ("tcp://" + "a" * 300 + ":8786", "host"),
])
def test_bad_scheduler_address_checked_before_connecting(tmp_path, address, why):
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--scheduler", address,
                       "--trust-scheduler", "--quiet"])
    assert_refused(rc, err, "--scheduler", why)


def _closed_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def test_scheduler_without_trust_is_refused(tmp_path):
    """A plain tcp:// scheduler without --trust-scheduler: exit 2 saying why, no connection."""
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--scheduler",
                       f"tcp://127.0.0.1:{_closed_port()}", "--quiet"])
    assert_refused(rc, err, "--scheduler", "not trusted", "run any code", "--trust-scheduler")
    _folder_is_empty(tmp_path)


def test_tls_scheduler_without_certificates_is_refused(tmp_path):
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--scheduler",
                       f"tls://127.0.0.1:{_closed_port()}", "--quiet"])
    assert_refused(rc, err, "--scheduler", "not trusted", "ca-file")


def test_unreachable_scheduler_times_out_with_a_message(tmp_path):
    rc, err = run_cli([DISTRICT, "--out", tmp_path / "r.csv", "--scheduler",
                       f"tcp://127.0.0.1:{_closed_port()}", "--trust-scheduler", "--quiet"])
    assert_refused(rc, err, "--scheduler", "no Dask scheduler answered", "within 4 s")
    _folder_is_empty(tmp_path)


def test_trusted_local_cluster_gives_the_local_engine_table(tmp_path):
    """With --trust-scheduler, a loopback in-process cluster (processes=False, no dashboard)
    gives the ranked CSV of the local engine, byte for byte."""
    distributed = pytest.importorskip("distributed")
    local = tmp_path / "local.csv"
    rc, err = run_cli([DISTRICT, "--out", local, "--quiet"], timeout=120)
    assert rc == 0, err
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False,
                                  protocol="tcp", host="127.0.0.1",
                                  dashboard_address=None) as cluster:
        remote = tmp_path / "remote.csv"
        env = dict(os.environ, OPENBLAS_NUM_THREADS="1")
        out = subprocess.run([sys.executable, "-m", "engine", "screen", str(DISTRICT), "--out",
                              str(remote), "--scheduler", cluster.scheduler_address,
                              "--trust-scheduler", "--quiet"], capture_output=True, text=True,
                             cwd=ROOT, env=env, timeout=120)
        assert out.returncode == 0, out.stderr
    assert remote.read_bytes() == local.read_bytes()
