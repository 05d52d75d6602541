"""Generate invented measured wind records from fixed seeds, with a few faults injected.

Everything here is invented. The records look like real ones: speeds follow a Weibull
distribution whose scale and shape depend on direction, with a diurnal cycle and hour-to-hour
persistence (first-order autoregressive processes); directions wander around a prevailing
south-westerly. Two records share one weather history so that they correlate:

* ``records/reference_station_hourly.csv`` - an open-terrain station at 10 m, hourly, two years,
  speeds in knots and pressure in hPa, timestamps with a ``Z``;
* ``records/roof_logger_10min.csv`` - a temporary logger on a roof, 10-minute, the last three
  months of that period, speeds in m/s, timestamps without offset (UTC).

Faults injected into the roof logger (sentinels, a stuck anemometer, a spike, an impossible
direction, a repeated and an out-of-order row, a text cell and a gap) are listed in
``ROOF_FAULTS`` so the demo shows what quality control reports.

Run ``python demo_sites/make_records.py`` to rewrite both files; the benchmark calls
:func:`long_record_csv` for a ten-year record made on the fly.
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.signal import lfilter
from scipy.special import ndtr

OUT_DIR = Path(__file__).with_name("records")
SEED = 20261202
PREVAILING_DEG = 235.0
START = "2024-09-01T00:00:00"

#: Faults injected into the roof logger: kind -> how many rows carry it.
ROOF_FAULTS = {"sentinel": 3, "stuck_speed": 12, "speed_out_of_range": 1,
               "impossible_direction": 2, "duplicate_timestamp": 1, "out_of_order": 1,
               "unreadable": 1}


def _ar1(rng, n, step_s, tau_s, size=None):
    """Unit-variance first-order autoregressive series with time constant ``tau_s``."""
    a = np.exp(-step_s / tau_s)
    e = rng.standard_normal(n if size is None else (size, n)) * np.sqrt(1 - a * a)
    x = lfilter([1.0], [1.0, -a], e, axis=-1)
    return x


def weather(n, step_s, seed, start=START):
    """An invented weather history at a 10 m open-terrain reference (SI units).

    Returns a DataFrame with ``time`` (UTC), ``speed_ms``, ``direction_deg``,
    ``temperature_c``, ``pressure_pa``.
    """
    rng = np.random.default_rng(seed)
    t = pd.date_range(start, periods=n, freq=pd.Timedelta(seconds=step_s), tz="UTC")
    # Direction: a two-component process pulled towards the prevailing direction.
    vec = _ar1(rng, n, step_s, 18 * 3600.0, size=2)
    pr = np.deg2rad(PREVAILING_DEG)
    ex, ny = 0.9 * np.sin(pr) + vec[0], 0.9 * np.cos(pr) + vec[1]
    direction = np.mod(np.rad2deg(np.arctan2(ex, ny)), 360.0)
    # Speed: persistent Gaussian -> uniform -> Weibull with direction-dependent k and c.
    z = _ar1(rng, n, step_s, 8 * 3600.0)
    u = np.clip(ndtr(z), 1e-12, 1 - 1e-12)
    rel = np.deg2rad(direction - PREVAILING_DEG)
    c = 5.6 * (1.0 + 0.22 * np.cos(rel))
    k = 1.9 + 0.25 * np.cos(rel)
    hour = t.hour.to_numpy() + t.minute.to_numpy() / 60.0
    diurnal = 1.0 + 0.12 * np.sin(2 * np.pi * (hour - 9.0) / 24.0)
    speed = c * (-np.log1p(-u)) ** (1.0 / k) * diurnal
    speed *= 1.0 + 0.04 * rng.standard_normal(n)
    speed = np.maximum(speed, 0.0)
    doy = t.day_of_year.to_numpy()
    temp = (10.0 - 7.0 * np.cos(2 * np.pi * (doy - 20) / 365.25)
            + 3.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0) + 1.5 * _ar1(rng, n, step_s, 86400.0))
    press = 100900.0 + 900.0 * _ar1(rng, n, step_s, 2 * 86400.0)
    return pd.DataFrame({"time": t, "speed_ms": speed, "direction_deg": direction,
                         "temperature_c": temp, "pressure_pa": press})


def station_frame(w: pd.DataFrame, hours: int) -> pd.DataFrame:
    """Hourly means of a 10-minute weather history, written as a station would (knots, hPa)."""
    w = w.iloc[:hours * 6]
    g = np.arange(len(w)) // 6
    rad = np.deg2rad(w["direction_deg"].to_numpy())
    ss = np.bincount(g, np.sin(rad))
    cc = np.bincount(g, np.cos(rad))
    mean = {c: np.bincount(g, w[c].to_numpy()) / 6.0 for c in
            ("speed_ms", "temperature_c", "pressure_pa")}
    t = w["time"].to_numpy()[::6]
    return pd.DataFrame({
        "time": pd.DatetimeIndex(t).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "wspd_kn": np.round(mean["speed_ms"] / (1852.0 / 3600.0), 1),
        "wdir": np.round(np.mod(np.rad2deg(np.arctan2(ss, cc)), 360.0)).astype(int),
        "temp_c": np.round(mean["temperature_c"], 1),
        "pres_hpa": np.round(mean["pressure_pa"] / 100.0, 1)})


def roof_frame(w: pd.DataFrame, seed: int) -> pd.DataFrame:
    """A roof logger's 10-minute record from the same weather: sheltered from the north-east,
    veered by a few degrees, with its own small-scale noise (m/s, UTC without offset)."""
    rng = np.random.default_rng(seed + 1)
    d = w["direction_deg"].to_numpy()
    factor = 0.92 - 0.18 * np.exp(-0.5 * ((np.mod(d - 45.0 + 180, 360) - 180) / 50.0) ** 2)
    local = 0.12 * _ar1(rng, len(d), 600.0, 3 * 3600.0) + 0.08 * rng.standard_normal(len(d))
    speed = np.maximum(w["speed_ms"].to_numpy() * factor * (1 + local), 0.0)
    direction = np.mod(d + 8.0 + 6.0 * rng.standard_normal(len(d)), 360.0)
    gust = speed * (1.0 + 0.6 + 0.15 * rng.standard_normal(len(d)))
    return pd.DataFrame({
        "timestamp_utc": pd.DatetimeIndex(w["time"]).strftime("%Y-%m-%d %H:%M:%S"),
        "wind_speed_m_s": np.round(speed, 2),
        "wind_dir_deg": np.round(direction, 1),
        "gust_m_s": np.round(np.maximum(gust, speed), 2),
        "air_temp_c": np.round(w["temperature_c"].to_numpy() + 1.0, 1)})


def inject_roof_faults(df: pd.DataFrame, seed: int) -> pd.DataFrame:
    """Inject the faults of :data:`ROOF_FAULTS` and one 6-hour gap at fixed, well-separated rows."""
    rng = np.random.default_rng(seed + 2)
    df = df.copy()
    df["wind_speed_m_s"] = df["wind_speed_m_s"].astype(object)
    n = len(df)
    rows = np.sort(rng.choice(np.arange(200, n - 200, 40), size=12, replace=False))
    speed_col, dir_col = "wind_speed_m_s", "wind_dir_deg"
    for r in rows[:3]:
        df.loc[r, speed_col] = -999.0
    stuck = rows[3]
    df.loc[stuck:stuck + 11, speed_col] = 4.37
    df.loc[rows[4], speed_col] = 65.3
    df.loc[rows[5], dir_col] = 412.0
    df.loc[rows[6], dir_col] = -20.0
    df.loc[rows[7], speed_col] = "ERR"
    a = rows[8]
    df.iloc[[a, a + 1]] = df.iloc[[a + 1, a]].to_numpy()
    dup = rows[9]
    df = pd.concat([df.iloc[:dup + 1], df.iloc[[dup]], df.iloc[dup + 1:]], ignore_index=True)
    gap = rows[10] + 1
    df = df.drop(index=range(gap, gap + 36)).reset_index(drop=True)
    return df


def sample_records(seed: int = SEED):
    """The two committed demo records as DataFrames (station, roof), faults included."""
    hours = 2 * 8760
    w = weather(hours * 6, 600.0, seed)
    station = station_frame(w, hours)
    roof_steps = 92 * 144
    roof = roof_frame(w.iloc[-roof_steps:].reset_index(drop=True), seed)
    return station, inject_roof_faults(roof, seed)


def long_record_csv(years: float = 10.0, seed: int = SEED) -> bytes:
    """A long invented 10-minute record as CSV bytes (for the benchmark); no faults."""
    n = int(round(years * 365 * 144))
    w = weather(n, 600.0, seed, start="2015-01-01T00:00:00")
    df = pd.DataFrame({"timestamp": pd.DatetimeIndex(w["time"]).strftime("%Y-%m-%dT%H:%M:%SZ"),
                       "speed_ms": np.round(w["speed_ms"], 2),
                       "direction_deg": np.round(w["direction_deg"], 1),
                       "temperature_c": np.round(w["temperature_c"], 1),
                       "pressure_hpa": np.round(w["pressure_pa"] / 100.0, 1)})
    return df.to_csv(index=False).encode()


def main(argv=None) -> int:
    OUT_DIR.mkdir(exist_ok=True)
    station, roof = sample_records()
    station.to_csv(OUT_DIR / "reference_station_hourly.csv", index=False, lineterminator="\n")
    roof.to_csv(OUT_DIR / "roof_logger_10min.csv", index=False, lineterminator="\n")
    for name in ("reference_station_hourly.csv", "roof_logger_10min.csv"):
        print(f"wrote {OUT_DIR / name} ({(OUT_DIR / name).stat().st_size / 1e6:.2f} MB)")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
