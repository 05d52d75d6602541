"""``python -m engine climate DATA.csv``: quality-control summary and per-sector climate of a record.

JSON shape (``--format json``)::

    {"qc": {...}, "sectors": [{"sector_deg", "frequency", "weibull_k", "weibull_c_ms",
     "mean_speed_ms", ...}, ...], "all": {...}}
"""
from __future__ import annotations

import json
from pathlib import Path

import pandas as pd

from engine.cli.common import finite_float, write_stdout
from engine.climate import fit as climate
from engine.cli.long_term import register_long_term_options, run_long_term
from engine.core.errors import InputError
from engine.io import records as timeseries
from engine.io.safe_files import read_bounded

#: Per-sector keys of the JSON output that never change name (later keys are appended).
SECTOR_FIELDS = ("sector_deg", "frequency", "weibull_k", "weibull_c_ms", "mean_speed_ms")

#: What each value of a sector's ``fit`` means, in words (also in the JSON's ``all``).
FIT_MEANINGS = {
    "own": "shape k and scale c fitted to this sector's own records",
    "all-sector shape": (f"too few records (under {climate.MIN_SECTOR_RECORDS}) for a fit of "
                         "its own: shape k of all sectors, scale c from this sector's mean "
                         "speed"),
}
#: Short words for the table's ``fit`` column.
FIT_WORDS = {"own": "own fit", "all-sector shape": "k of all sectors"}

#: Table columns: (column, header, text of a value).
TABLE_COLUMNS = (("sector_deg", "Sector (°)", "{:.0f}".format),
                 ("records", "Records", "{:d}".format),
                 ("frequency", "Frequency (%)", lambda v: f"{100.0 * v:.1f}"),
                 ("weibull_k", "Weibull k", "{:.3f}".format),
                 ("weibull_c_ms", "Weibull c (m/s)", "{:.3f}".format),
                 ("mean_speed_ms", "Mean speed (m/s)", "{:.3f}".format),
                 ("power_density_wm2", "Power density (W/m²)", "{:.1f}".format),
                 ("fit", "Weibull fit", lambda v: FIT_WORDS.get(v, str(v))))

FORMAT_HELP = ("output: 'table' (readable; the default) or 'json' (quality control, "
               "per-sector table and all-sector figures, for other tools)")

#: Engine parameter -> command-line option, for messages.
OPTION_NAMES = {"height_m": "--height-m", "roughness_m": "--roughness-m",
                "n_sectors": "--sectors", "method": "--method", "speed_unit": "--speed-unit",
                "utc_offset_h": "--utc-offset-h", "altitude_m": "--altitude-m",
                "direction_unit": "--direction-unit",
                "max_excluded_share": "--max-excluded-share"}


def climate_document(summary, report) -> dict:
    """The ``climate`` JSON document: quality control, per-sector table, all-sector figures."""
    from engine.chain.documents import jsonable as _jsonable
    table = summary.sectors
    cols = list(SECTOR_FIELDS) + [c for c in table.columns if c not in SECTOR_FIELDS]
    sectors = [{c: _jsonable(row[c]) for c in cols} for row in table[cols].to_dict("records")]
    allsec = summary.all_sectors()
    c = summary.climate
    allsec.update({"height_m": c.height_m, "roughness_m": c.roughness_m,
                   "record_file": c.record_file, "record_sha256": c.record_sha256,
                   "notes": list(summary.notes), "fit_meanings": dict(FIT_MEANINGS)})
    return {"qc": _jsonable(report.to_dict()), "sectors": sectors, "all": _jsonable(allsec)}


def _sector_table(sectors) -> str:
    """The per-sector table as aligned text with readable headers and fit words."""
    show = pd.DataFrame({head: [text(v) for v in sectors[col].tolist()]
                         for col, head, text in TABLE_COLUMNS})
    return show.to_string(index=False)


def _table_text(summary, report) -> str:
    a = summary.all_sectors()
    table = _sector_table(summary.sectors)
    lines = [report.to_text(), "", f"Climate at {summary.climate.height_m:g} m "
             f"({summary.n_records} records, {summary.fit_method} fit):", table,
             f"all sectors: k {a['weibull_k']:.3f}, c {a['weibull_c_ms']:.3f} m/s, mean "
             f"{a['mean_speed_ms']:.3f} m/s, power density {a['power_density_wm2']:.1f} W/m² "
             f"(air density {a['air_density_kgm3']:.3f} kg/m³)"]
    used = [v for v in FIT_MEANINGS if v in set(summary.sectors["fit"])]
    lines += [f"Weibull fit '{FIT_WORDS[v]}': {FIT_MEANINGS[v]}" for v in used]
    lines += [f"note: {n}" for n in summary.notes]
    return "\n".join(lines)


def cmd_climate(args) -> int:
    path = Path(args.data)
    if getattr(args, "long_term", None):
        return run_long_term(args, climate_document, _table_text)
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
    p = sub.add_parser("climate", help="quality-control a measured record and fit its "
                                       "per-sector Weibull climate")
    p.add_argument("data", help="CSV/TSV record: timestamp, speed, direction (+ optional gust, "
                                "temperature, pressure)")
    p.add_argument("--height-m", type=finite_float, default=10.0, dest="height_m",
                   help="measurement height above ground [m] (default 10)")
    p.add_argument("--sectors", type=int, default=12, help="direction sectors (default 12)")
    p.add_argument("--format", choices=("table", "json"), default="table", help=FORMAT_HELP)
    p.add_argument("--method", choices=climate.FIT_METHODS, default="mle",
                   help="Weibull fit: maximum likelihood or moments")
    p.add_argument("--roughness-m", type=finite_float, default=climate.RECORD_ROUGHNESS_M,
                   dest="roughness_m", help="roughness length around the mast [m] (default "
                   f"{climate.RECORD_ROUGHNESS_M:g}, open terrain)")
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
    register_long_term_options(p)
    p.set_defaults(func=cmd_climate)
