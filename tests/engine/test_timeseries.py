"""Record import (engine.io.records): columns, units, time zones and bad files."""
import hashlib
import time

import numpy as np
import pytest

from engine.io import records as ts
from engine.core.errors import InputError


def _csv(header, rows, sep=","):
    return (sep.join(header) + "\n" + "\n".join(sep.join(r) for r in rows) + "\n").encode()


ROWS = [("2024-03-01T00:00:00Z", "10", "270"), ("2024-03-01T00:10:00Z", "20", "280"),
        ("2024-03-01T00:20:00Z", "30", "290")]


@pytest.mark.parametrize("header,factor", [
    ("speed (m/s)", 1.0),
    ("wind speed km/h", 1 / 3.6),   # NIST SP 811 App. B: 1 km/h = 1/3.6 m/s
    ("ws_mph", 0.44704),            # NIST SP 811 App. B: 1 mph = 0.44704 m/s (exact)
    ("wspd_kn", 0.514444),          # NIST SP 811 App. B: 1 knot = 1852/3600 m/s
])
def test_speed_units_from_header(header, factor):
    """Speed columns in m/s, km/h, mph and knots are found and converted to m/s."""
    r = ts.read_record(_csv(["timestamp", header, "dir"], ROWS))
    np.testing.assert_allclose(r.si("speed"), np.array([10, 20, 30]) * factor, rtol=1e-6)
    np.testing.assert_allclose(r.si("direction"), [270, 280, 290])


def test_explicit_unit_and_mapping():
    """An explicit speed unit and column mapping override the guesses."""
    data = _csv(["when", "a", "b"], ROWS)
    r = ts.read_record(data, columns={"time": "when", "speed": "a", "direction": "b"},
                       speed_unit="knots")
    np.testing.assert_allclose(r.si("speed")[0], 10 * 1852 / 3600)  # NIST SP 811


def test_semicolon_decimal_comma_and_tab():
    """Semicolon tables with decimal commas and tab tables are read."""
    rows = [("2024-03-01 00:00", "5,5", "10,0"), ("2024-03-01 00:10", "6,25", "20,5")]
    r = ts.read_record(_csv(["Zeit", "speed_ms", "direction_deg"], rows, ";"))
    np.testing.assert_allclose(r.si("speed"), [5.5, 6.25])
    r2 = ts.read_record(_csv(["timestamp", "speed_ms", "direction_deg"], ROWS, "\t"))
    np.testing.assert_allclose(r2.si("speed"), [10, 20, 30])


def test_time_offsets_to_utc():
    """Offsets in the text are applied; naive times take the fixed utc_offset_h (ISO 8601)."""
    rows = [("2024-03-01T10:00:00+01:00", "5", "10"), ("2024-03-01T10:10:00+01:00", "5", "10")]
    r = ts.read_record(_csv(["timestamp", "speed_ms", "dir"], rows))
    assert r.time_ns[0] == np.datetime64("2024-03-01T09:00:00", "ns").astype(np.int64)
    rows = [("2024-07-01 12:00", "5", "10"), ("2024-07-01 12:10", "5", "10")]
    r = ts.read_record(_csv(["timestamp", "speed_ms", "dir"], rows), utc_offset_h=2.0)
    assert r.time_ns[0] == np.datetime64("2024-07-01T10:00:00", "ns").astype(np.int64)


def test_date_and_time_columns_and_epoch_seconds():
    """Separate date/time columns are joined; numeric times are Unix seconds (POSIX)."""
    rows = [("2024-03-01", "00:10", "5", "10"), ("2024-03-01", "00:20", "6", "20")]
    r = ts.read_record(_csv(["date", "time", "speed_ms", "dir"], rows))
    assert r.time_ns[1] == np.datetime64("2024-03-01T00:20", "ns").astype(np.int64)
    rows = [("1709251200", "5", "10"), ("1709251800", "6", "20")]
    r = ts.read_record(_csv(["ts", "speed_ms", "dir"], rows))
    # 1709251200 s after 1970-01-01 UTC is 2024-03-01T00:00Z (POSIX time, hand computed)
    assert r.time_ns[0] == np.datetime64("2024-03-01T00:00", "ns").astype(np.int64)


def test_pressure_and_temperature_units():
    """hPa and kelvin columns are converted to Pa and °C (SI)."""
    rows = [("2024-03-01T00:00Z", "5", "10", "283.15", "1013.25")]
    r = ts.read_record(_csv(["timestamp", "speed_ms", "dir", "temp_k", "pressure_hpa"], rows))
    assert r.si("temperature")[0] == pytest.approx(10.0)   # 0 °C = 273.15 K (SI brochure)
    assert r.si("pressure")[0] == pytest.approx(101325.0)  # 1 hPa = 100 Pa
    assert r.sha256 == hashlib.sha256(_csv(["timestamp", "speed_ms", "dir", "temp_k",
                                            "pressure_hpa"], rows)).hexdigest()


def _problems(fn):
    with pytest.raises(InputError) as e:
        fn()
    assert e.value.problems and all(w and m for w, m in e.value.problems)
    return " ".join(m for _, m in e.value.problems)


def test_bad_files_give_clear_messages():
    """Empty, binary, wrong separator, no speed column, all NaN, all text: InputError."""
    assert "empty" in _problems(lambda: ts.read_record(b""))
    assert "binary" in _problems(lambda: ts.read_record(bytes(range(256)) * 10))
    semi = _csv(["timestamp", "speed_ms", "dir"], ROWS, ";")
    assert "semicolon" in _problems(lambda: ts.read_record(semi, separator=","))
    no_speed = _csv(["timestamp", "dir", "temp_c"], ROWS)
    assert "speed" in _problems(lambda: ts.read_record(no_speed))
    all_nan = _csv(["timestamp", "speed_ms", "dir"], [(t, "", d) for t, _, d in ROWS])
    assert "no numbers" in _problems(lambda: ts.read_record(all_nan))
    text = _csv(["timestamp", "speed_ms", "dir"], [(t, "calm", d) for t, _, d in ROWS])
    assert "text" in _problems(lambda: ts.read_record(text))
    assert "header" in _problems(lambda: ts.read_record(b"timestamp,speed_ms\n"))


def test_text_cells_are_marked_not_dropped():
    """A few text cells become NaN and are marked unreadable; every row is kept."""
    rows = list(ROWS) + [("2024-03-01T00:30:00Z", "ERR", "300")]
    r = ts.read_record(_csv(["timestamp", "speed_ms", "dir"], rows))
    assert r.n_rows == 4 and r.unreadable["speed"].tolist() == [False, False, False, True]


def test_oversize_upload_refused_quickly():
    """A 200 MB upload is refused at once, naming the limit in MB."""
    data = b" " * (200 * 1024 * 1024)
    t0 = time.perf_counter()
    msg = _problems(lambda: ts.read_record(data, "big.csv"))
    assert time.perf_counter() - t0 < 1.0 and "MiB" in msg


def test_record_from_arrays_checks_lengths():
    """Arrays of different lengths are refused with the field named."""
    with pytest.raises(InputError) as e:
        ts.record_from_arrays(np.arange(3), np.ones(2))
    assert e.value.problems[0][0] == "speed"


def test_large_file_reader_agrees_with_small_file_reader():
    """Files over 1 MB (Arrow reader) give the same values as the C reader on the same rows."""
    import pandas as pd
    n = 40000
    rng = np.random.default_rng(4)
    t = pd.date_range("2024-01-01", periods=n, freq="10min")
    lines = ["timestamp,speed_kn,direction_deg,pressure_hpa"] + [
        f"{a},{s:.1f},{d:.0f},{p:.1f}" for a, s, d, p in zip(
            t.strftime("%Y-%m-%d %H:%M:%S"), rng.uniform(0, 30, n), rng.uniform(0, 360, n),
            rng.uniform(980, 1030, n))]
    big = ("\n".join(lines) + "\n").encode()
    small = ("\n".join(lines[:501]) + "\n").encode()
    assert len(big) > 1_000_000 > len(small)
    rb, rs = ts.read_record(big, utc_offset_h=1.0), ts.read_record(small, utc_offset_h=1.0)
    np.testing.assert_array_equal(rb.time_ns[:500], rs.time_ns)
    for name in ("speed", "direction", "pressure"):
        np.testing.assert_allclose(rb.si(name)[:500], rs.si(name), rtol=1e-12)
    assert rb.units == rs.units == {"speed": "knots", "direction": "deg", "pressure": "hPa"}
