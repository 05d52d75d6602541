"""``python -m engine climate DATA.csv``: quality-control summary and per-sector climate of a record.

JSON shape (``--format json``)::

    {"qc": {...}, "sectors": [{"sector_deg", "frequency", "weibull_k", "weibull_c_ms",
     "mean_speed_ms", ...}, ...], "all": {...}}
"""
from __future__ import annotations

import json
from pathlib import Path

import pandas as pd

from . import climate, timeseries
from .errors import InputError

#: Per-sector keys of the JSON output that never change name (later keys are appended).
SECTOR_FIELDS = ("sector_deg", "frequency", "weibull_k", "weibull_c_ms", "mean_speed_ms")


#: Engine parameter -> command-line option, for messages.
OPTION_NAMES = {"height_m": "--height-m", "roughness_m": "--roughness-m",
                "n_sectors": "--sectors", "method": "--method", "speed_unit": "--speed-unit",
                "utc_offset_h": "--utc-offset-h", "altitude_m": "--altitude-m",
                "direction_unit": "--direction-unit",
                "max_excluded_share": "--max-excluded-share"}


def climate_document(summary, report) -> dict:
    """The ``climate`` JSON document: quality control, per-sector table, all-sector figures."""
    from .cli import _jsonable
    table = summary.sectors
    cols = list(SECTOR_FIELDS) + [c for c in table.columns if c not in SECTOR_FIELDS]
    sectors = [{c: _jsonable(row[c]) for c in cols} for row in table[cols].to_dict("records")]
    allsec = summary.all_sectors()
    c = summary.climate
    allsec.update({"height_m": c.height_m, "roughness_m": c.roughness_m,
                   "record_file": c.record_file, "record_sha256": c.record_sha256,
                   "notes": list(summary.notes)})
    return {"qc": _jsonable(report.to_dict()), "sectors": sectors, "all": _jsonable(allsec)}


def _table_text(summary, report) -> str:
    show = summary.sectors[["sector_deg", "records", "frequency", "weibull_k", "weibull_c_ms",
                            "mean_speed_ms", "power_density_wm2", "fit"]]
    a = summary.all_sectors()
    with pd.option_context("display.width", 200, "display.max_columns", 20):
        table = show.to_string(index=False, float_format=lambda x: f"{x:.3f}")
    lines = [report.to_text(), "", f"Climate at {summary.climate.height_m:g} m "
             f"({summary.n_records} records, {summary.fit_method} fit):", table,
             f"all sectors: k {a['weibull_k']:.3f}, c {a['weibull_c_ms']:.3f} m/s, mean "
             f"{a['mean_speed_ms']:.3f} m/s, power density {a['power_density_wm2']:.1f} W/m² "
             f"(air density {a['air_density_kgm3']:.3f} kg/m³)"]
    lines += [f"note: {n}" for n in summary.notes]
    return "\n".join(lines)


def cmd_climate(args) -> int:
    from .cli import write_stdout
    from .safeio import read_bounded
    path = Path(args.data)
    data = read_bounded(path, timeseries.MAX_RECORD_BYTES, "a CSV/TSV record")
    try:
        _, report, diag = climate.climate_from_csv_bytes(
            data, path.name, height_m=args.height_m, roughness_m=args.roughness_m,
            n_sectors=args.sectors, method=args.method, speed_unit=args.speed_unit,
            utc_offset_h=args.utc_offset_h, altitude_m=args.altitude_m,
            direction_unit=args.direction_unit, day_first=args.day_first,
            max_excluded_share=args.max_excluded_share)
    except InputError as e:  # name the options as the user typed them
        raise InputError([(OPTION_NAMES.get(w, w), m) for w, m in e.problems]) from None
    summary = diag["summary"]
    if args.format == "json":
        write_stdout(json.dumps(climate_document(summary, report), indent=2,
                                ensure_ascii=False) + "\n")
    else:
        write_stdout(_table_text(summary, report) + "\n")
    return 0


def _day_first(text: str):
    import argparse
    value = {"yes": True, "no": False, "true": True, "false": False}.get(text.lower())
    if value is None:
        raise argparse.ArgumentTypeError(f"must be yes or no, got {text!r}")
    return value


def register_climate(sub):
    from .cli import finite_float
    p = sub.add_parser("climate", help="quality-control a measured record and fit its "
                                       "per-sector Weibull climate")
    p.add_argument("data", help="CSV/TSV record: timestamp, speed, direction (+ optional gust, "
                                "temperature, pressure)")
    p.add_argument("--height-m", type=finite_float, default=10.0, dest="height_m",
                   help="measurement height above ground [m] (default 10)")
    p.add_argument("--sectors", type=int, default=12, help="direction sectors (default 12)")
    p.add_argument("--format", choices=("table", "json"), default="table")
    p.add_argument("--method", choices=climate.FIT_METHODS, default="mle",
                   help="Weibull fit: maximum likelihood or moments")
    p.add_argument("--roughness-m", type=finite_float, default=0.05, dest="roughness_m",
                   help="roughness length around the mast [m] (default 0.05, open terrain)")
    p.add_argument("--speed-unit", choices=tuple(timeseries.SPEED_UNITS), default=None,
                   dest="speed_unit", help="speed unit when the header does not say")
    p.add_argument("--utc-offset-h", type=finite_float, default=0.0, dest="utc_offset_h",
                   help="offset from UTC of timestamps written without one [h]")
    p.add_argument("--altitude-m", type=finite_float, default=0.0, dest="altitude_m",
                   help="site altitude for ISA pressure when the record has no pressure [m]")
    p.add_argument("--direction-unit", choices=timeseries.DIRECTION_UNITS, default=None,
                   dest="direction_unit",
                   help="direction unit when the header does not say (deg or rad)")
    p.add_argument("--day-first", type=_day_first, default=None, dest="day_first",
                   metavar="yes|no", help="read dates such as 03/04/2024 as 3 April (yes) or "
                                          "4 March (no); needed when the record does not show")
    p.add_argument("--max-excluded-share", type=finite_float,
                   default=climate.MAX_EXCLUDED_SHARE, dest="max_excluded_share",
                   help="refuse the record when quality control excludes more than this "
                        f"share of its rows (default {climate.MAX_EXCLUDED_SHARE:g})")
    p.set_defaults(func=cmd_climate)
