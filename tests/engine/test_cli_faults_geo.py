"""Fault injection for ``footprints``, ``geojson``, ``screen`` with footprint files and
``climate --long-term``, in the style of ``test_cli_faults.py``.

Every case runs the real command in a child process and checks the exit code (2 for a problem
with the input, an argument or a file), a message naming the argument or file, no traceback,
no partial output left, and the time and peak memory of the case. A full disk is made with a
file-size limit (``RLIMIT_FSIZE``: the write then fails with EFBIG as on a full disk).
"""
from __future__ import annotations

import json
import os
import resource
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from engine import cli
from fault_runner import run as run_measured  # the runner beside these tests

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
FOOTPRINTS = ROOT / "demo_sites" / "footprints" / "quillfield_estate_utm31n.geojson"

#: Bounds of one failing case, as in test_cli_faults.py: wall time [s] (twice the 10 s
#: target, the machine being shared) and peak resident memory [bytes].
MAX_SECONDS = 20.0
MAX_RSS_BYTES = 500 * 1024 * 1024
#: Cases that do the whole work (a screening, a ranking) before the fault.
MAX_SECONDS_FULL = 60.0


def run(args, file_size_limit=None, timeout=MAX_SECONDS_FULL):
    """Run ``python -m engine ARGS``; return (code, stdout, stderr, seconds, peak RSS bytes)."""
    return run_measured(args, file_size_limit=file_size_limit, timeout=timeout)


def check_refused(result, *needles, code=2, seconds=MAX_SECONDS):
    rc, _out, err, took, rss = result
    assert rc == code, err
    assert "Traceback" not in err and "internal error" not in err, err
    for n in needles:
        assert n in err, err
    assert took < seconds, f"{took:.1f} s"
    assert rss < MAX_RSS_BYTES, f"{rss / 2**20:.0f} MiB"


def footprints_args(src, out, *more):
    return ["footprints", src, "--height-field", "height_m", "--site", DEMO, "--out", out, *more]


def screen_args(src, out, *more):
    return ["screen", src, "--height-field", "height_m", "--quiet", "--out", out, *more]


def _record(path: Path, n=3000, seed=11) -> Path:
    """A 10-minute record made here from a seeded generator (input only, not a check value)."""
    rng = np.random.default_rng(seed)
    t = pd.date_range("2025-01-01", periods=n, freq="10min")
    pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"),
                  "speed_ms": np.round(1.0 + rng.weibull(2.0, n) * 6.0, 2),
                  "direction_deg": np.round(rng.uniform(0, 359.9, n), 1)}).to_csv(path,
                                                                                 index=False)
    return path


def _deep_feature_file(path: Path, depth: int) -> Path:
    """A FeatureCollection whose one feature's geometry is ``depth`` lists deep: json parses
    it, and reading the geometry recursively then runs out of stack."""
    text = ('{"type": "FeatureCollection", "features": [{"type": "Feature", "properties": '
            '{"height_m": 9}, "geometry": {"type": "Polygon", "coordinates": '
            + "[" * depth + "]" * depth + "}}]}")
    path.write_text(text, encoding="utf-8")
    return path


# --- inputs: special files, oversize, deep nesting --------------------------------------------

def _commands(src, tmp_path):
    rec = _record(tmp_path / "rec.csv")
    return {"footprints": footprints_args(src, tmp_path / "site.json"),
            "screen": screen_args(src, tmp_path / "ranked.csv"),
            "climate --long-term": ["climate", rec, "--long-term", src],
            "geojson": ["geojson", src, "--out", tmp_path / "out.geojson"]}


@pytest.mark.parametrize("command", ["footprints", "screen", "climate --long-term", "geojson"])
def test_a_fifo_is_refused_at_once(tmp_path, command):
    fifo = tmp_path / "in.geojson"
    os.mkfifo(fifo)
    named = f"--long-term {fifo}" if command == "climate --long-term" else str(fifo)
    check_refused(run(_commands(fifo, tmp_path)[command]), named, "pipe (FIFO)")


@pytest.mark.parametrize("command", ["footprints", "screen", "climate --long-term", "geojson"])
def test_dev_zero_is_refused(tmp_path, command):
    check_refused(run(_commands("/dev/zero", tmp_path)[command]), "/dev/zero", "a device")


@pytest.mark.parametrize("command", ["footprints", "screen", "climate --long-term"])
def test_oversize_input_is_refused_on_its_bytes(tmp_path, command):
    p = tmp_path / "big.geojson"
    with open(p, "wb") as fh:
        fh.truncate(101 * 1024 * 1024)  # sparse: 101 MiB of NUL bytes, over the 100 MiB limits
    check_refused(run(_commands(p, tmp_path)[command]), str(p), "100 MiB limit")


@pytest.mark.parametrize("command", ["footprints", "screen"])
def test_geojson_nested_thousands_deep_is_refused(tmp_path, command):
    p = tmp_path / "deep.geojson"
    p.write_text("[" * 100_000 + "]" * 100_000)
    check_refused(run(_commands(p, tmp_path)[command]), str(p), "nested too deeply")


@pytest.mark.parametrize("command", ["footprints", "screen"])
def test_a_feature_nested_hundreds_deep_is_named(tmp_path, command):
    """Shallow enough for json, deep enough for shapely's recursive reading: the feature is
    named and the command ends with exit 2 (it used to be an internal error, exit 1)."""
    p = _deep_feature_file(tmp_path / "deep.geojson", 950)
    check_refused(run(_commands(p, tmp_path)[command]), "features[0]", "nested too deeply")


def test_screen_climate_nested_thousands_deep_is_refused(tmp_path):
    deep = tmp_path / "climate.json"
    deep.write_text("{\"a\": " * 50_000 + "1" + "}" * 50_000)
    check_refused(run(screen_args(FOOTPRINTS, tmp_path / "r.csv", "--climate", deep)),
                  f"--climate {deep}", "nested too deeply")


# --- outputs: in the way, read-only, full disk ---------------------------------------------------

@pytest.mark.parametrize("command, option", [("footprints", "--out"), ("screen", "--out"),
                                             ("screen", "--positions-out"),
                                             ("geojson", "--out")])
def test_a_folder_in_the_way_of_the_output_is_refused_before_work(tmp_path, command, option):
    (tmp_path / "taken").mkdir()
    out = tmp_path / "taken"
    if command == "footprints":
        args = footprints_args(FOOTPRINTS, out)
    elif command == "geojson":
        args = ["geojson", DEMO, "--out", out]
    elif option == "--out":
        args = screen_args(FOOTPRINTS, out)
    else:
        args = screen_args(FOOTPRINTS, tmp_path / "r.csv", "--positions-out", out)
    check_refused(run(args), option, "is a folder")
    assert os.listdir(tmp_path) == ["taken"]


@pytest.mark.parametrize("command", ["footprints", "screen"])
def test_output_under_a_file_is_refused(tmp_path, command):
    f = tmp_path / "file"
    f.write_text("x")
    args = _commands(FOOTPRINTS, tmp_path)[command]
    args[args.index("--out") + 1] = f / "out"
    check_refused(run(args), "--out", "not a folder")


@pytest.mark.skipif(os.geteuid() == 0, reason="root writes into a folder without write "
                    "permission; the in-process case below stands in")
@pytest.mark.parametrize("command", ["footprints", "screen"])
def test_read_only_output_folder_is_refused(tmp_path, command):
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o555)
    args = _commands(FOOTPRINTS, tmp_path)[command]
    args[args.index("--out") + 1] = ro / "out"
    try:
        check_refused(run(args), "--out", "not writable")
        assert os.listdir(ro) == []
    finally:
        ro.chmod(0o755)


@pytest.mark.parametrize("command", ["footprints", "screen"])
def test_permission_refused_at_the_write_is_exit_2_and_leaves_nothing(tmp_path, monkeypatch,
                                                                      capsys, command):
    """What a read-only folder does to any user, root included: the temporary file cannot be
    made (EACCES). Run in this process with ``tempfile.mkstemp`` refusing."""
    import tempfile

    def refuse(*a, **k):
        raise PermissionError(13, "Permission denied")
    monkeypatch.setattr(tempfile, "mkstemp", refuse)
    args = _commands(FOOTPRINTS, tmp_path)[command]
    assert cli.main([str(a) for a in args]) == 2
    err = capsys.readouterr().err
    assert "--out" in err and "Permission denied" in err and "Traceback" not in err
    assert not (tmp_path / "site.json").exists() and not (tmp_path / "ranked.csv").exists()


@pytest.mark.parametrize("command, option", [("footprints", "--out"), ("screen", "--out"),
                                             ("screen", "--positions-out")])
def test_full_disk_leaves_no_partial_output(tmp_path, command, option):
    out = tmp_path / "out"
    out.mkdir()
    if command == "footprints":
        args, limit = footprints_args(FOOTPRINTS, out / "site.json"), 20_000
    elif option == "--out":
        args, limit = screen_args(FOOTPRINTS, out / "ranked.csv"), 2_000
    else:
        # --out is one row per building, --positions-out a row per candidate on a 3 m grid:
        # the limit lets the first through and stops the second.
        args = screen_args(FOOTPRINTS, out / "ranked.csv", "--grid-spacing-m", "3",
                           "--positions-out", out / "positions.csv")
        rc, _, err, _, _ = run(args[:-2])
        assert rc == 0, err
        limit = (out / "ranked.csv").stat().st_size + 1000
        (out / "ranked.csv").unlink()
    check_refused(run(args, file_size_limit=limit), option, "could not be written",
                  seconds=MAX_SECONDS_FULL)
    left = os.listdir(out)
    assert not [n for n in left if n.endswith(".tmp")], left
    if option == "--positions-out":
        assert left == ["ranked.csv"]  # the first file is whole; the second is not there
    else:
        assert left == []


def test_geojson_full_disk_leaves_nothing(tmp_path):
    site = tmp_path / "site.json"
    rc, _, err, _, _ = run(footprints_args(FOOTPRINTS, site))
    assert rc == 0, err
    out = tmp_path / "out"
    out.mkdir()
    check_refused(run(["geojson", site, "--out", out / "r.geojson"], file_size_limit=2_000),
                  "--out", "could not be written", seconds=MAX_SECONDS_FULL)
    assert os.listdir(out) == []


def test_footprints_over_a_site_file_keeps_the_previous_one(tmp_path):
    site = tmp_path / "site.json"
    site.write_text(DEMO.read_text(encoding="utf-8"), encoding="utf-8")
    rc, out, err, _, _ = run(footprints_args(FOOTPRINTS, site))
    assert rc == 0, err and "wrote" in out
    assert json.loads((tmp_path / "site.json.bak").read_text(encoding="utf-8")) == \
        json.loads(DEMO.read_text(encoding="utf-8"))
    assert len(json.loads(site.read_text(encoding="utf-8"))["buildings"]) == 17


# --- options -------------------------------------------------------------------------------------

@pytest.mark.parametrize("option, value", [("--grid-spacing-m", "nan"), ("--grid-spacing-m", "inf"),
                                           ("--setback-m", "nan"), ("--setback-m", "-inf"),
                                           ("--mast-height-m", "1e999"),
                                           ("--mast-height-m", "0")])
def test_footprints_refuses_non_finite_options(tmp_path, option, value):
    check_refused(run(footprints_args(FOOTPRINTS, tmp_path / "s.json", option, value)), option)
    assert not (tmp_path / "s.json").exists()


@pytest.mark.parametrize("option, value", [("--grid-spacing-m", "nan"), ("--grid-spacing-m", "0"),
                                           ("--setback-m", "inf"), ("--setback-m", "nan")])
def test_screen_refuses_non_finite_options(tmp_path, option, value):
    check_refused(run(screen_args(FOOTPRINTS, tmp_path / "r.csv", option, value)), option)


@pytest.mark.parametrize("option, value", [("--lat-deg", "nan"), ("--lon-deg", "inf"),
                                           ("--ref-height-m", "1e999"),
                                           ("--ref-roughness-m", "-inf")])
def test_long_term_refuses_non_finite_options(tmp_path, option, value):
    rec = _record(tmp_path / "rec.csv")
    check_refused(run(["climate", rec, "--long-term", rec, option, value]), option)


def test_long_term_names_the_option_the_engine_refuses(tmp_path):
    rec = _record(tmp_path / "rec.csv")
    check_refused(run(["climate", rec, "--long-term", rec, "--ref-height-m", "-5"]),
                  "--ref-height-m", seconds=MAX_SECONDS_FULL)


def test_long_term_names_a_damaged_reference_as_the_option(tmp_path):
    rec = _record(tmp_path / "rec.csv")
    bad = tmp_path / "ref.nc"
    bad.write_bytes(b"CDF\x01" + bytes(range(256)) * 50)  # a NetCDF3 magic, then junk
    check_refused(run(["climate", rec, "--long-term", bad, "--lat-deg", "52", "--lon-deg", "0"]),
                  "--long-term ref.nc", "NetCDF")


def test_long_term_output_to_a_full_disk_is_not_success(tmp_path):
    rec = _record(tmp_path / "rec.csv")
    with open("/dev/full", "wb") as full:
        proc = subprocess.run([sys.executable, "-m", "engine", "climate", str(rec),
                               "--long-term", str(rec), "--format", "json"], cwd=ROOT,
                              stdout=full, stderr=subprocess.PIPE, timeout=MAX_SECONDS_FULL)
    err = proc.stderr.decode()
    assert proc.returncode == 2, err
    assert "standard output" in err and "No space left" in err and "Traceback" not in err
