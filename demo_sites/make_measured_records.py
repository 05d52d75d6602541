"""Generate an invented two-height roof logger with SD columns and a small NetCDF reanalysis.

Everything here is invented. One weather history (hourly, first-order autoregressive speed
and direction around a prevailing south-westerly) drives both files:

* ``records/roof_logger_two_heights.csv`` - six months of 10-minute means on a pole on the
  mill's roof (invented), at 2 m and 5 m above the roof: ``ws_2m``, ``ws_2m_sd``, ``wd_2m``,
  ``ws_5m``, ``ws_5m_sd``; speeds m/s, UTC timestamps with ``Z``;
* ``records/reanalysis_grid.nc`` - three years of 3-hourly 100 m wind components ``u100``,
  ``v100`` on a 2 x 2 grid of invented cells (NetCDF3 via xarray's scipy backend).

Run ``python demo_sites/make_measured_records.py``; the seed is fixed, so the same bytes are
written each time.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr
from scipy.signal import lfilter

OUT_DIR = Path(__file__).with_name("records")
SEED = 20261203
START = pd.Timestamp("2023-01-01", tz="UTC")  # the logger ends before today: no row is "in the future"
YEARS = 3
LOGGER_DAYS = 182


def _ar1(rng, n, rho):
    return lfilter([np.sqrt(1 - rho ** 2)], [1, -rho], rng.standard_normal(n))


def weather(rng, n_hours):
    """Hourly speed [m/s] at 100 m and direction [deg] of the invented history."""
    d = np.mod(230.0 + 70.0 * _ar1(rng, n_hours, 0.98), 360.0)
    z = _ar1(rng, n_hours, 0.95)
    u = np.clip(np.exp(np.log(8.5) + 0.45 * z), 0.3, None)
    hour = np.arange(n_hours) % 24
    return u * (1 + 0.08 * np.sin(2 * np.pi * (hour - 9) / 24)), d


def main():
    rng = np.random.default_rng(SEED)
    n_h = YEARS * 8760
    v100, d = weather(rng, n_h)
    OUT_DIR.mkdir(exist_ok=True)
    # Reanalysis: every third hour, cell (51.50 N, -1.25 E) carries the history itself, the
    # others a scaled copy.
    idx = np.arange(0, n_h, 3)
    lat, lon = np.array([51.5, 51.75]), np.array([-1.5, -1.25])
    scale = np.array([[0.93, 1.0], [1.05, 0.97]])
    rad = np.deg2rad(d[idx])
    u = (-v100[idx] * np.sin(rad))[:, None, None] * scale[None]
    v = (-v100[idx] * np.cos(rad))[:, None, None] * scale[None]
    times = (START + pd.to_timedelta(idx, unit="h")).tz_localize(None)
    ds = xr.Dataset({"u100": (("time", "latitude", "longitude"), u.astype("f4"),
                              {"units": "m s-1", "standard_name": "eastward_wind"}),
                     "v100": (("time", "latitude", "longitude"), v.astype("f4"),
                              {"units": "m s-1", "standard_name": "northward_wind"})},
                    coords={"time": times, "latitude": lat, "longitude": lon},
                    attrs={"title": "invented reanalysis for the Perch demo"})
    ds.to_netcdf(OUT_DIR / "reanalysis_grid.nc", engine="scipy")
    # Roof logger: the last LOGGER_DAYS days, 10-minute, interpolated from the hours with
    # 10-minute variation; roof speeds 0.62 x / 0.70 x the 100 m wind, shear between 2 m and 5 m.
    n10 = LOGGER_DAYS * 144
    first_h = n_h - LOGGER_DAYS * 24
    t_h = np.arange(first_h, n_h)
    t10 = first_h + np.arange(n10) / 6.0
    base = np.interp(t10, t_h, v100[first_h:]) * np.exp(0.08 * _ar1(rng, n10, 0.7))
    dd = np.mod(np.interp(t10, t_h, np.unwrap(np.deg2rad(d[first_h:]))) * 180 / np.pi
                + rng.normal(0, 5, n10), 360.0)
    ws2 = 0.62 * base
    ws5 = 0.70 * base * np.exp(rng.normal(0, 0.02, n10))
    ti = 0.24 + 0.04 * np.cos(np.deg2rad(dd - 60))
    df = pd.DataFrame({
        "timestamp": (START + pd.to_timedelta(t10 * 60, unit="min")).strftime("%Y-%m-%dT%H:%MZ"),
        "ws_2m": ws2.round(2), "ws_2m_sd": (ti * ws2 * np.exp(rng.normal(0, 0.1, n10))).round(2),
        "wd_2m": dd.round(0).astype(int), "ws_5m": ws5.round(2),
        "ws_5m_sd": (0.85 * ti * ws5 * np.exp(rng.normal(0, 0.1, n10))).round(2)})
    with open(OUT_DIR / "roof_logger_two_heights.csv", "w", newline="") as fh:
        fh.write("# invented roof logger on the mill (Perch demo), 10-minute means, UTC\n")
        df.to_csv(fh, index=False)


if __name__ == "__main__":
    main()
