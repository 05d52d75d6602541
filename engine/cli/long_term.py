"""``python -m engine climate RECORD --long-term REFERENCE``: the long-term corrected climate.

JSON (``--format json``) is the ``climate`` document of the corrected climate plus
``long_term``: ``{"method", "pairs", "overlap_days", "correlation", ..., "sectors": [{"sector_deg",
"pairs", "slope", "offset_ms", "correlation", "veer_deg", "line"}], "uncertainty": {...},
"reference": {...}}``.
"""
from __future__ import annotations

import json
from pathlib import Path

import pandas as pd

from engine.cli.common import finite_float, write_stdout
from engine.climate import site_record
from engine.core.errors import InputError
from engine.io import records as timeseries
from engine.io.safe_files import read_bounded


#: Engine parameter -> command-line option, for messages.
OPTION_NAMES = {"height_m": "--height-m", "roughness_m": "--roughness-m",
                "n_sectors": "--sectors", "method": "--lt-method", "fit_method": "--method",
                "lat_deg": "--lat-deg", "lon_deg": "--lon-deg",
                "reference_height_m": "--ref-height-m",
                "reference_roughness_m": "--ref-roughness-m", "speed_unit": "--speed-unit",
                "base_height_m": "--base-height-m", "position_id": "--position",
                "ref_speed_unit": "--ref-speed-unit", "utc_offset_h": "--utc-offset-h"}


def _where(w: str, ref_name: str, record_name: str) -> str:
    """A problem's place as the user typed it: an option, or the reference file."""
    if w in OPTION_NAMES:
        return OPTION_NAMES[w]
    return f"--long-term {w}" if ref_name != record_name and w.startswith(ref_name) else w


def _time_ns(text, where):
    if text is None:
        return None
    try:
        return int(pd.Timestamp(text, tz="UTC").value)
    except (ValueError, TypeError):
        raise InputError([(where, f"must be a date such as 2025-03-01, got {text!r}")]) from None


def long_term_document(result, base: dict, logger=None) -> dict:
    """The climate document with the correction beside it.

    With ``logger`` (the :class:`engine.climate.logger.LoggerClimate` the correction belongs
    to) the document also holds ``climate``, the climate as the site file stores it (the
    dashboard's climate step puts the same one in its site file), and ``logger``: logged
    heights, the averaging interval and its factor on mean V³ per sector, the notes. The
    ``sectors`` table is the fit of the long-term series before the averaging factor.
    """
    from engine.chain.documents import jsonable
    m = result.mcp
    doc = dict(base)
    if logger is not None:
        from engine.io import sitefile
        doc["climate"] = jsonable(sitefile.assessment_to_dict(logger.climate))
        doc["logger"] = {"heights_m": [float(z) for z in logger.heights_m],
                         "averaging_s": float(logger.climate.averaging_s),
                         "averaging_factor": [float(f) for f in logger.averaging_factor],
                         "notes": list(logger.notes)}
    lt = m.concurrent_stats()
    lt["sectors"] = [{k: jsonable(v) for k, v in row.items()}
                     for row in m.sectors.to_dict("records")]
    lt["uncertainty"] = jsonable(result.uncertainty)
    lt["reference"] = jsonable(result.reference)
    lt["long_term_uncertainty"] = result.climate.long_term_uncertainty
    doc["long_term"] = lt
    return doc


def _text(result) -> str:
    m = result.mcp
    with pd.option_context("display.width", 200):
        table = m.sectors.to_string(index=False, float_format=lambda x: f"{x:.3f}")
    u = result.uncertainty
    ref = result.reference
    lines = [f"Long-term correction ({m.method}) against {ref['file']} ({ref['kind']}, stated "
             f"{ref['height_m']:g} m, z0 {ref['roughness_m']:g} m"
             + (f", cell {ref['cell_lat_deg']:.3f}, {ref['cell_lon_deg']:.3f}, "
                f"{ref['distance_km']:.1f} km away" if ref["kind"] == "netcdf" else "") + "):",
             f"{m.n_pairs} concurrent pairs over {m.overlap_days:.0f} days, r = "
             f"{m.correlation:.3f}; concurrent target mean {m.target_mean_ms:.3f} m/s, "
             f"long-term mean {m.long_term_mean_ms:.3f} m/s", "per-sector lines and "
             "correlation:", table,
             f"uncertainty of the long-term mean: {100 * u['total']:.1f} % (correlation "
             f"{100 * u['correlation_part']:.1f} %, period {100 * u['period_part']:.1f} %, "
             f"short concurrent period {100 * u['season_part']:.1f} %)"]
    lines += [f"warning: {w}" for w in m.warnings]
    return "\n".join(lines)


def run_long_term(args, climate_document, table_text) -> int:
    """The ``--long-term`` branch of ``engine climate``."""
    path, ref_path = Path(args.data), Path(args.long_term)
    ref_where = f"--long-term {args.long_term}"
    problems, got = [], []
    for p, what, where in ((path, "a CSV/TSV record", str(path)),
                           (ref_path, "a CSV/TSV record or NetCDF file", ref_where)):
        try:
            got.append(read_bounded(p, timeseries.MAX_RECORD_BYTES, what, where))
        except InputError as e:  # both files' problems at once
            problems.extend(e.problems)
    if problems:
        raise InputError(problems)
    try:
        logger = _correct(args, got[0], path.name, got[1], ref_path.name)
    except InputError as e:
        raise InputError([(_where(w, ref_path.name, path.name), m)
                          for w, m in e.problems]) from None
    result = logger.long_term
    if args.format == "json":
        doc = long_term_document(result, climate_document(result.summary, result.target_qc),
                                 logger)
        write_stdout(json.dumps(doc, indent=2, ensure_ascii=False) + "\n")
    else:
        write_stdout(table_text(result.summary, result.target_qc) + "\n\n" + _text(result)
                     + "".join(f"\nnote: {n}" for n in logger.notes
                               if n not in result.mcp.warnings) + "\n")
    return 0


def _correct(args, data, name, ref_bytes, ref_name):
    """:func:`engine.climate.site_record.record_climate` with the command's options (the
    dashboard's climate step makes the same call)."""
    ref = reference_file(args, ref_bytes, ref_name)
    return site_record.record_climate(
        data, name, height_m=args.height_m, base_height_m=args.base_height_m,
        position_id=args.position_id, roughness_m=args.roughness_m, n_sectors=args.sectors,
        fit_method=args.method, speed_unit=args.speed_unit, utc_offset_h=args.utc_offset_h,
        altitude_m=args.altitude_m, reference=ref,
        max_excluded_share=args.max_excluded_share)


def reference_file(args, ref_bytes, ref_name):
    """The ``--long-term`` reference with its options, as the engine takes it."""
    return site_record.ReferenceFile(
        ref_bytes, ref_name, method=args.lt_method, lat_deg=args.lat_deg, lon_deg=args.lon_deg,
        height_m=args.ref_height_m, roughness_m=args.ref_roughness_m,
        speed_unit=args.ref_speed_unit,
        period_start_ns=_time_ns(args.period_start, "--period-start"),
        period_end_ns=_time_ns(args.period_end, "--period-end"))


def add_reference_options(g) -> None:
    """The reference's options (``engine climate`` and ``engine report``)."""
    from engine.climate.mcp import MCP_METHODS
    g.add_argument("--long-term", default=None, dest="long_term", metavar="REFERENCE",
                   help="reference series (CSV/TSV, or NetCDF3 reanalysis with --lat-deg/"
                        "--lon-deg) to long-term correct the record against")
    g.add_argument("--lt-method", choices=MCP_METHODS, default="variance_ratio",
                   dest="lt_method", help="correction method (default variance_ratio)")
    g.add_argument("--lat-deg", type=finite_float, default=None, dest="lat_deg",
                   help="site latitude for a gridded reference [deg]")
    g.add_argument("--lon-deg", type=finite_float, default=None, dest="lon_deg",
                   help="site longitude for a gridded reference [deg]")
    g.add_argument("--ref-height-m", type=finite_float, default=10.0, dest="ref_height_m",
                   help="height of the reference series above ground [m] (default 10)")
    g.add_argument("--ref-roughness-m", type=finite_float, default=0.05, dest="ref_roughness_m",
                   help="roughness length around the reference [m] (default 0.05)")
    g.add_argument("--ref-speed-unit", choices=tuple(timeseries.SPEED_UNITS), default=None,
                   dest="ref_speed_unit", help="reference speed unit when its header does not say")
    g.add_argument("--period-start", default=None, dest="period_start",
                   help="first day of the concurrent period to use (UTC date)")
    g.add_argument("--period-end", default=None, dest="period_end",
                   help="day after the concurrent period to use (UTC date)")


def register_long_term_options(p) -> None:
    """The ``--long-term`` options of ``engine climate``."""
    g = p.add_argument_group("long-term correction")
    add_reference_options(g)
    g.add_argument("--base-height-m", type=finite_float, default=0.0, dest="base_height_m",
                   help="height of the logger's base above ground (its roof) [m]; a logger "
                        "file's header heights (ws_5m...) are above it (default 0)")
    g.add_argument("--position", default="", dest="position_id", metavar="POSITION_ID",
                   help="the candidate position the record was measured at (default: a "
                        "reference)")
