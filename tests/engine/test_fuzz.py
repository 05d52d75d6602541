"""Damaged files through every parser: a clear InputError (or a good read), in bounded time and memory."""
from __future__ import annotations

import io
import json
import signal
import time
import tracemalloc
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from engine.io import exports
from engine.io import sitefile
from engine.core.errors import InputError

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
FORMULA = "=cmd|' /C calc'!A0"

#: Loose bounds for one parse of a damaged file of at most a few MB: time [s], traced memory.
#: The time bound is enforced by an interval timer, so a parser that hangs fails, not stalls.
MAX_SECONDS = 10.0
MAX_TRACED_BYTES = 400 * 1024 * 1024


def _seed_site() -> bytes:
    return DEMO.read_bytes()


def _seed_curve() -> bytes:
    a = sitefile.load(DEMO)
    t = a.turbines[0]
    rows = "\n".join(f"{v:g},{p:g}" for v, p in zip(t.curve_speed_ms, t.curve_power_w))
    return ("speed_ms,power_w\n" + rows + "\n").encode()


def _seed_record() -> bytes:
    """A short invented record (seeded), only as a shape to damage; no check value comes from it."""
    rng = np.random.default_rng(9)
    n = 600
    times = pd.date_range("2025-01-01", periods=n, freq="10min").strftime("%Y-%m-%d %H:%M")
    speed = rng.weibull(2.0, n) * 6.0
    direc = rng.uniform(0, 360, n)
    lines = ["timestamp,speed_ms,direction_deg,temperature_c"]
    lines += [f"{t},{s:.2f},{d:.0f},{8.0:.1f}" for t, s, d in zip(times, speed, direc)]
    return ("\n".join(lines) + "\n").encode()


def _seed_buildings() -> bytes:
    a = sitefile.load(DEMO)
    lines = ["id,x_m,y_m,length_m,width_m,height_m,orientation_deg,roof_type,roof_pitch_deg,"
             "parapet_height_m"]
    lines += [f"{b.id},{b.x_m},{b.y_m},{b.length_m},{b.width_m},{b.height_m},{b.orientation_deg},"
              f"{b.roof_type},{b.roof_pitch_deg},{b.parapet_height_m}" for b in a.buildings]
    return ("\n".join(lines) + "\n").encode()


# --- the parsers, each taking bytes --------------------------------------------------------------


def parse_site(data: bytes, tmp_path):
    return sitefile.loads(data)


def parse_curve(data: bytes, tmp_path):
    turbines = pytest.importorskip("engine.energy.turbines")
    return turbines.read_power_curve_csv(data)


def parse_record(data: bytes, tmp_path):
    timeseries = pytest.importorskip("engine.io.records")
    return timeseries.read_record(data, "fuzz.csv")


def parse_climate(data: bytes, tmp_path):
    climate = pytest.importorskip("engine.climate.fit")
    return climate.climate_from_csv_bytes(data, "fuzz.csv", height_m=10.0)


def parse_buildings(data: bytes, tmp_path):
    screening = pytest.importorskip("engine.screening")
    path = tmp_path / "buildings.csv"
    path.write_bytes(data)
    ctx = screening.context_from_assessment(sitefile.load(DEMO))
    return screening.screen_local(path, ctx)


PARSERS = {"site": (parse_site, _seed_site), "curve": (parse_curve, _seed_curve),
           "record": (parse_record, _seed_record), "climate": (parse_climate, _seed_record),
           "buildings": (parse_buildings, _seed_buildings)}


# --- the mutations ------------------------------------------------------------------------------


def _junk(n, seed=1):
    return np.random.default_rng(seed).bytes(n)


MUST_FAIL = {
    "empty": lambda s: b"",
    "whitespace": lambda s: b" \n\t\n",
    "binary junk": lambda s: _junk(4096),
    "nul bytes": lambda s: s[:40] + b"\x00" * 64 + s[40:],
    "one very long line": lambda s: b"9" * 3_000_000,
    "million columns": lambda s: b",".join(b"c%d" % i for i in range(1_000_000)) + b"\n"
                                 + b",".join(b"1" for _ in range(1_000_000)) + b"\n",
}

MAY_READ = {
    # UTF-16 text (with its byte-order mark) is decoded, not called binary.
    "utf-16": lambda s: s.decode("utf-8").encode("utf-16"),
    "truncated 10%": lambda s: s[: len(s) // 10],
    "truncated 50%": lambda s: s[: len(s) // 2],
    "truncated minus one": lambda s: s[:-1],
    "latin-1 after a utf-8 bom": lambda s: b"\xef\xbb\xbf" + s.replace(b"\n", "\u00b0\n".encode(
        "latin-1"), 2),
    "latin-1 degree sign": lambda s: s.replace(b"\n", b" \xb0C\n", 1),
    "crlf": lambda s: s.replace(b"\n", b"\r\n"),
    "cr only": lambda s: s.replace(b"\n", b"\r"),
    "huge numbers": lambda s: _replace_numbers(s, b"1e999"),
    "long integers": lambda s: _replace_numbers(s, b"9" * 5000),
    "negative numbers": lambda s: _replace_numbers(s, b"-1e308"),
    "nan words": lambda s: _replace_numbers(s, b"NaN"),
    "formula cells": lambda s: _replace_numbers(s, FORMULA.encode()),
    "junk in the middle": lambda s: s[: len(s) // 2] + _junk(200, 2) + s[len(s) // 2:],
    "very long line inside": lambda s: s.replace(b"\n", b"\n" + b"x" * 2_000_000 + b"\n", 1),
}


def _replace_numbers(s: bytes, token: bytes) -> bytes:
    """Replace every third number-like field by ``token``."""
    out, count = [], 0
    for piece in s.split(b","):
        stripped = piece.strip().rstrip(b"}]\n\r")
        try:
            float(stripped)
            count += 1
            if count % 3 == 0:
                piece = piece.replace(stripped, token, 1)
        except ValueError:
            pass
        out.append(piece)
    return b",".join(out)


class ParseTooSlow(Exception):
    """Raised by the interval timer when one parse runs past MAX_SECONDS."""


def _on_alarm(signum, frame):
    raise ParseTooSlow(f"parse still running after {MAX_SECONDS:g} s")


def _bounded(fn, data, tmp_path):
    """Run fn(data) under a timer; return (result or InputError, seconds, peak traced bytes)."""
    previous = signal.signal(signal.SIGALRM, _on_alarm)
    signal.setitimer(signal.ITIMER_REAL, MAX_SECONDS)
    tracemalloc.start()
    t0 = time.perf_counter()
    try:
        result = fn(data, tmp_path)
    except InputError as e:
        result = e
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)
        seconds = time.perf_counter() - t0
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
    return result, seconds, peak


def _check_error(err: InputError):
    assert err.problems, "an InputError must list its problems"
    for where, message in err.problems:
        assert where.strip() and message.strip()
        assert len(message) < 2000, "a message must stay readable"


#: Known defects, each reported to the module's owner; strict, so a fix shows up as XPASS.
KNOWN = {}


@pytest.fixture(scope="module", autouse=True)
def _warm_up(tmp_path_factory):
    """Run each parser once on its good seed, so first-call imports are not timed."""
    tmp = tmp_path_factory.mktemp("warm")
    for fn, seed in PARSERS.values():
        try:
            fn(seed(), tmp)
        except pytest.skip.Exception:
            pass


#: Mutations of several MB each: slow-marked.
HEAVY = {"million columns", "one very long line", "very long line inside"}


def _cases(mutations):
    out = []
    for m in mutations:
        for p in PARSERS:
            marks = [pytest.mark.slow] if m in HEAVY else []
            if (m, p) in KNOWN:
                marks.append(pytest.mark.xfail(strict=True, reason=KNOWN[(m, p)]))
            out.append(pytest.param(m, p, marks=marks))
    return out


@pytest.mark.parametrize("mutation,parser", _cases(MUST_FAIL))
def test_unusable_input_gives_input_error(parser, mutation, tmp_path):
    """Empty, binary, UTF-16, one-line and million-column input: InputError, bounded cost."""
    fn, seed = PARSERS[parser]
    data = MUST_FAIL[mutation](seed())
    result, seconds, peak = _bounded(fn, data, tmp_path)
    assert isinstance(result, InputError), f"{parser} read {mutation!r} input without complaint"
    _check_error(result)
    assert seconds < MAX_SECONDS, f"{seconds:.1f} s"
    assert peak < MAX_TRACED_BYTES, f"{peak / 1e6:.0f} MB traced"


@pytest.mark.parametrize("mutation,parser", _cases(MAY_READ))
def test_damaged_input_read_or_refused_clearly(parser, mutation, tmp_path):
    """Truncated, re-encoded, huge-number or formula input: a good read or a clear InputError."""
    fn, seed = PARSERS[parser]
    data = MAY_READ[mutation](seed())
    result, seconds, peak = _bounded(fn, data, tmp_path)
    if isinstance(result, InputError):
        _check_error(result)
    assert seconds < MAX_SECONDS, f"{seconds:.1f} s"
    assert peak < MAX_TRACED_BYTES, f"{peak / 1e6:.0f} MB traced"


def test_site_file_size_limit_is_checked_before_parsing(tmp_path):
    """A site file over the limit is refused at once, naming the limit in MiB (as the docs)."""
    data = b" " * (sitefile.MAX_SITE_FILE_BYTES + 1)
    result, seconds, _ = _bounded(parse_site, data, tmp_path)
    assert isinstance(result, InputError) and "20 MiB" in result.problems[0][1]
    assert seconds < 1.0
    path = tmp_path / "big.json"
    path.write_bytes(data)
    with pytest.raises(InputError, match="20 MiB"):
        sitefile.load(path)


def test_record_size_limit_is_checked_before_parsing(tmp_path):
    """A measured record over its byte limit is refused at once with the limit."""
    timeseries = pytest.importorskip("engine.io.records")
    with pytest.raises(InputError, match="limit"):
        timeseries.read_record(b"x" * 2_000_001, "big.csv", max_bytes=2_000_000)


def test_curve_size_limit_is_checked_before_parsing():
    """A power-curve table over its byte limit is refused with the limit in MiB."""
    turbines = pytest.importorskip("engine.energy.turbines")
    with pytest.raises(InputError, match="1 MiB"):
        turbines.read_power_curve_csv(b"1,1\n" * (turbines.MAX_CURVE_FILE_BYTES // 4 + 1))


def test_formula_text_in_site_file_is_kept_and_exported_inert():
    """A formula-like name survives loading as text and leaves the CSV export neutralised."""
    data = json.loads(_seed_site())
    spot = {s["position_id"] for s in data["spot_readings"]}
    i = next(i for i, p in enumerate(data["positions"]) if p["id"] not in spot)
    data["positions"][i]["id"] = FORMULA
    data["site"]["name"] = "+SUM(A1:A9)"
    a = sitefile.loads(json.dumps(data))
    assert a.positions[i].id == FORMULA
    from engine.chain import pipeline
    text = exports.safe_csv(pipeline.evaluate(a).table)
    cells = [c for row in pd.read_csv(io.StringIO(text), dtype=str).to_numpy() for c in row
             if isinstance(c, str)]
    assert "'" + FORMULA in cells
    # OWASP CSV injection: no cell may start with = + - @ tab or CR unless it is a number.
    for c in cells:
        if c[:1] in ("=", "+", "@", "\t", "\r") or (c[:1] == "-" and not _is_number(c)):
            pytest.fail(f"formula-like cell left active: {c!r}")


def _is_number(text: str) -> bool:
    try:
        float(text)
        return True
    except ValueError:
        return False


def test_many_problems_are_all_listed_without_flooding():
    """A site file with hundreds of bad rows lists each problem, every message short."""
    data = json.loads(_seed_site())
    p0 = data["positions"][0]
    data["positions"] = [dict(p0, id=f"p{i}", mast_height_m=-1.0) for i in range(500)]
    with pytest.raises(InputError) as e:
        sitefile.loads(json.dumps(data))
    where = [w for w, _ in e.value.problems]
    assert len([w for w in where if w.endswith("mast_height_m")]) == 500
    _check_error(e.value)
