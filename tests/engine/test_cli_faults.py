"""Fault injection for the ``rank``, ``climate``, ``report`` and ``schema`` commands.

Every case runs the real command in a child process and checks the exit code (2 for a problem
with the input, an argument or a file; 1 for an internal fault), a message naming the argument
or file, no traceback, no partial output, and the time and peak memory of the case.
Disk faults are made with ``/dev/full`` and with a file-size limit (``RLIMIT_FSIZE``, the
write then fails with EFBIG as on a full disk).
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
from fault_runner import run  # noqa: E402  (the runner beside these tests)

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"

#: Bounds of one failing case: wall time [s] and peak resident memory [bytes]. The target is
#: 10 s; the bound is twice that because the machine is shared and a loaded run once took
#: just over 10 s for Python's start and imports alone.
MAX_SECONDS = 20.0
MAX_RSS_BYTES = 500 * 1024 * 1024
#: Cases that do the whole work (ranking, the summary with its charts) before the fault.
MAX_SECONDS_FULL = 60.0


def check_refused(result, code: int, *needles, seconds=MAX_SECONDS):
    rc, _out, err, took, rss = result
    assert rc == code, err
    assert "Traceback" not in err, err
    for n in needles:
        assert n in err, err
    assert took < seconds, f"{took:.1f} s"
    assert rss < MAX_RSS_BYTES, f"{rss / 2**20:.0f} MiB"


def _demo() -> dict:
    return json.loads(DEMO.read_text(encoding="utf-8"))


def _site(tmp_path, change, name="site.json") -> Path:
    d = _demo()
    change(d)
    p = tmp_path / name
    p.write_text(json.dumps(d), encoding="utf-8")
    return p


def _record(tmp_path, n=3000, *, direction=None, dates=None, header=None, name="rec.csv",
            encoding="utf-8") -> Path:
    """A 10-minute record made here from a seeded generator (input only, not a check value)."""
    rng = np.random.default_rng(11)
    t = pd.date_range("2025-01-01", periods=n, freq="10min")
    speed = np.round(1.0 + rng.weibull(2.0, n) * 6.0, 2)
    d = np.round(rng.uniform(0, 359.9, n), 1) if direction is None else direction(rng, n)
    stamps = t.strftime("%Y-%m-%dT%H:%M:%SZ") if dates is None else dates(t)
    cols = header or ["timestamp", "speed_ms", "direction_deg"]
    df = pd.DataFrame({cols[0]: stamps, cols[1]: speed, cols[2]: d})
    p = tmp_path / name
    p.write_bytes(df.to_csv(index=False).encode(encoding))
    return p


# --- rank and schema: input files ----------------------------------------------------------------

@pytest.mark.parametrize("path, needle", [("/dev/zero", "device"), ("/dev/null", "device"),
                                          ("/tmp", "folder"), ("/no/such/site.json",
                                                               "no such file")])
def test_rank_refuses_special_and_missing_files(path, needle):
    check_refused(run(["rank", path]), 2, path, needle)


def test_rank_refuses_a_fifo_at_once(tmp_path):
    fifo = tmp_path / "site.json"
    os.mkfifo(fifo)
    check_refused(run(["rank", fifo]), 2, "pipe")


def test_rank_refuses_an_oversize_file_on_its_bytes(tmp_path):
    p = tmp_path / "big.json"
    with open(p, "wb") as fh:
        fh.truncate(21 * 1024 * 1024)  # sparse: 21 MiB of NUL bytes
    check_refused(run(["rank", p]), 2, "20 MiB")


def test_rank_refuses_json_nested_thousands_deep(tmp_path):
    p = tmp_path / "deep.json"
    p.write_text("[" * 100000 + "]" * 100000)
    check_refused(run(["rank", p]), 2, "nested too deeply")


@pytest.mark.parametrize("text, what", [("mill\x01centre", "U+0001"), ("\ufffe", "U+FFFE"),
                                        ("mill\ud800", "U+D800")])
def test_rank_names_the_field_holding_bad_text(tmp_path, text, what):
    """A control character, a non-character or a lone surrogate in an id: exit 2 naming it."""
    def change(d):
        d["positions"][0]["id"] = text
    p = tmp_path / "s.json"
    # json.dumps writes \\ud800 as an escape, as a hostile file would.
    p.write_text(json.dumps(_site_dict(change)), encoding="utf-8")
    check_refused(run(["rank", p, "--format", "json"]), 2, "positions[0].id", what)


def _site_dict(change):
    d = _demo()
    change(d)
    return d


def test_rank_refuses_a_100000_character_id_quickly(tmp_path):
    p = _site(tmp_path, lambda d: d["positions"][0].update(id="p" * 100_000))
    check_refused(run(["rank", p]), 2, "positions[0].id", "at most 200 characters")


def test_lone_surrogate_in_site_name_is_refused_not_a_traceback(tmp_path):
    p = _site(tmp_path, lambda d: d["site"].update(name="Yard \ud800"))
    check_refused(run(["rank", p, "--format", "json"]), 2, "site.name", "surrogate")
    check_refused(run(["report", p, "--out", tmp_path / "s.html"]), 2, "site.name")
    assert not (tmp_path / "s.html").exists()


@pytest.mark.parametrize("field, value", [("v_ref_ms", 1e6), ("rated_speed_ms", 1e6),
                                          ("cut_out_ms", 1e6)])
def test_turbine_speeds_have_upper_bounds(tmp_path, field, value):
    p = _site(tmp_path, lambda d: d["turbines"][0].update({field: value}))
    check_refused(run(["rank", p]), 2, f"turbines[0].{field}")


def test_spot_calibration_refuses_a_145_fold_speed_up(tmp_path):
    def change(d):
        s = d["spot_readings"][0]
        s["position_speed_ms"] = [v * 145 / 60 for v in s["reference_speed_ms"]]
        s["reference_speed_ms"] = [v / 60 for v in s["reference_speed_ms"]]
        s["use_for_calibration"] = True
    p = _site(tmp_path, change)
    check_refused(run(["rank", p]), 2, "spot_readings[0].use_for_calibration", "speed-up",
                  seconds=MAX_SECONDS_FULL)


def test_tiny_discount_rate_ranks(tmp_path):
    """A rate of 1e-17 (1 + r rounds to 1) used to divide by zero."""
    p = _site(tmp_path, lambda d: d["economics"].update(discount_rate=1e-17))
    rc, out, err, _, _ = run(["rank", p, "--format", "json"])
    assert rc == 0, err
    assert json.loads(out)["positions"]


@pytest.mark.parametrize("command", [["schema"], ["rank", str(DEMO), "--format", "json"]])
def test_output_onto_a_full_disk_is_not_success(command):
    with open("/dev/full", "wb") as full:
        check_refused(run(command, stdout=full), 2, "standard output", "No space left",
                      seconds=MAX_SECONDS_FULL)


# --- climate -------------------------------------------------------------------------------------

@pytest.mark.parametrize("path, needle", [("/dev/zero", "device"), ("/tmp", "folder"),
                                          ("/no/such.csv", "no such file")])
def test_climate_refuses_special_and_missing_files(path, needle):
    check_refused(run(["climate", path]), 2, path, needle)


@pytest.mark.parametrize("option, value", [("--utc-offset-h", "nan"), ("--utc-offset-h", "inf"),
                                           ("--utc-offset-h", "1e300"),
                                           ("--altitude-m", "nan"), ("--height-m", "1e999")])
def test_climate_refuses_non_finite_or_absurd_options(tmp_path, option, value):
    rec = _record(tmp_path, 600)
    check_refused(run(["climate", rec, option, value]), 2, option)


def test_climate_radians_need_a_unit(tmp_path):
    rad = _record(tmp_path, direction=lambda rng, n: np.round(rng.uniform(0, 2 * np.pi, n), 4),
                  header=["timestamp", "speed_ms", "wdir"])
    check_refused(run(["climate", rad]), 2, "radians")
    rc, out, err, _, _ = run(["climate", rad, "--direction-unit", "rad", "--format", "json"])
    assert rc == 0, err
    # Uniform directions over the circle: no sector holds more than a fifth of the time.
    assert max(s["frequency"] for s in json.loads(out)["sectors"]) < 0.2


def test_climate_ambiguous_dates_need_the_order(tmp_path):
    # 1 to 12 January 2025 written dd/mm/yyyy: every day number is at most 12, so the file
    # cannot show which field is the day.
    dmy = _record(tmp_path, 12 * 144, dates=lambda t: t.strftime("%d/%m/%Y %H:%M"))
    check_refused(run(["climate", dmy]), 2, "day first")
    rc, out, err, _, _ = run(["climate", dmy, "--day-first", "yes", "--format", "json"])
    assert rc == 0, err
    qc = json.loads(out)["qc"]
    assert qc["valid_rows"] == 12 * 144 and qc["period_start"].startswith("2025-01-01")
    assert qc["period_end"].startswith("2025-01-12")


def test_climate_refuses_a_record_that_loses_most_rows(tmp_path):
    half_bad = _record(tmp_path, direction=lambda rng, n: np.where(np.arange(n) % 3, 400.0,
                                                                   90.0))
    check_refused(run(["climate", half_bad]), 2, "excluded", "more than the 50 %")


def test_climate_reads_utf16(tmp_path):
    rec = _record(tmp_path, 600, encoding="utf-16")
    rc, out, err, _, _ = run(["climate", rec, "--format", "json"])
    assert rc == 0, err
    assert json.loads(out)["qc"]["valid_rows"] == 600


def test_climate_steady_record_refused_in_words(tmp_path):
    p = tmp_path / "steady.csv"
    t = pd.date_range("2025-01-01", periods=3000, freq="10min")
    rng = np.random.default_rng(2)
    pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"),
                  "speed_ms": 5.0 + 0.01 * (np.arange(3000) % 3),
                  "direction_deg": np.round(rng.uniform(0, 359, 3000), 1)}).to_csv(p, index=False)
    check_refused(run(["climate", p]), 2, "barely vary")
    assert "weibull_k[0]" not in run(["climate", p])[2]


# --- report: output paths and disk faults ---------------------------------------------------------

def test_report_out_folder_refused(tmp_path):
    check_refused(run(["report", DEMO, "--out", f"{tmp_path}/"]), 2, "--out")
    (tmp_path / "dir.html").mkdir()
    check_refused(run(["report", DEMO, "--out", tmp_path / "dir.html"]), 2, "--out", "folder")


def test_report_out_under_a_file_refused(tmp_path):
    f = tmp_path / "file"
    f.write_text("x")
    check_refused(run(["report", DEMO, "--out", f / "s.html"]), 2, "--out", "not a folder")


def test_report_out_in_a_missing_folder_refused(tmp_path):
    check_refused(run(["report", DEMO, "--out", tmp_path / "no" / "s.html"]), 2, "--out",
                  "does not exist")
    assert not (tmp_path / "no").exists()


def test_report_out_on_a_fifo_refused(tmp_path):
    fifo = tmp_path / "s.html"
    os.mkfifo(fifo)
    check_refused(run(["report", DEMO, "--out", fifo]), 2, "--out", "pipe")


def test_report_exports_onto_a_file_refused(tmp_path):
    f = tmp_path / "data"
    f.write_text("x")
    check_refused(run(["report", DEMO, "--out", tmp_path / "s.html", "--exports", f]), 2,
                  "--exports", "not a folder")
    assert not (tmp_path / "s.html").exists()  # refused before any work


def test_report_bad_assessor_text_refused(tmp_path):
    check_refused(run(["report", DEMO, "--out", tmp_path / "s.html", "--assessor", "A\x1bB"]),
                  2, "--assessor", "U+001B")


@pytest.mark.parametrize("suffix", [".html", ".pdf"])
def test_report_on_a_full_disk_leaves_nothing(tmp_path, suffix):
    out = tmp_path / f"summary{suffix}"
    check_refused(run(["report", DEMO, "--out", out], file_size_limit=20_000), 2, "--out",
                  "could not be written", seconds=MAX_SECONDS_FULL)
    assert os.listdir(tmp_path) == []


def test_report_exports_stop_cleanly_at_a_file_in_the_way(tmp_path):
    """A folder where an export should go: exit 2 naming it, no temporary file left."""
    out, data = tmp_path / "s.html", tmp_path / "data"
    (data / "larkspur-yard-invented-demo-estate-ranking.json").mkdir(parents=True)
    check_refused(run(["report", DEMO, "--out", out, "--exports", data]), 2, "--exports",
                  "ranking.json", seconds=MAX_SECONDS_FULL)
    assert not [n for n in os.listdir(data) if n.endswith(".tmp")]
    site = data / "larkspur-yard-invented-demo-estate.perch.json"
    assert json.loads(site.read_text(encoding="utf-8")) == _demo()  # written whole


def test_report_with_a_control_character_in_an_id_is_drawn(tmp_path):
    """Text that made the chart renderer abort the process is refused by the site file's check;
    a summary of the demo still draws every chart through the child process."""
    p = _site(tmp_path, lambda d: d["positions"][0].update(id="mill\x00centre"))
    check_refused(run(["report", p, "--out", tmp_path / "s.html"]), 2, "positions[0].id")
    rc, _, err, _, _ = run(["report", DEMO, "--out", tmp_path / "ok.html"])
    assert rc == 0, err
    html = (tmp_path / "ok.html").read_text(encoding="utf-8")
    assert html.count("<svg") >= 4 and "could not be drawn" not in html


# --- internal faults ------------------------------------------------------------------------------

def test_internal_fault_is_one_line_exit_1(monkeypatch, capsys):
    from engine.chain import pipeline

    def broken(_):
        raise RuntimeError("something inside broke\nsecond line")
    monkeypatch.setattr(pipeline, "evaluate", broken)
    assert cli.main(["rank", str(DEMO)]) == 1
    err = capsys.readouterr().err
    assert "internal error (RuntimeError: something inside broke)" in err
    assert "Traceback" not in err and "second line" not in err and len(err.splitlines()) == 1
    with pytest.raises(RuntimeError):
        cli.main(["rank", str(DEMO), "--debug"])


def test_unnamed_os_error_is_exit_2(monkeypatch, capsys):
    from engine.chain import pipeline

    def broken(_):
        raise PermissionError(13, "Permission denied", "/somewhere/file")
    monkeypatch.setattr(pipeline, "evaluate", broken)
    assert cli.main(["rank", str(DEMO)]) == 2
    err = capsys.readouterr().err
    assert "/somewhere/file" in err and "Permission denied" in err

