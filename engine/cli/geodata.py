"""``python -m engine footprints`` and ``python -m engine geojson``: sites from GIS footprints,
and the ranked answer back to GIS.

``footprints FOOTPRINTS.geojson --height-field NAME --site BASE.json --out SITE.json`` reads
building polygons with heights (any CRS pyproj knows; longitude/latitude by default), puts them
on a local plan about their centre, and writes a site file with the base site's climate,
turbines and settings, these buildings, and candidate roof positions (the centre of each roof,
or a grid with ``--grid-spacing-m``). Features that cannot be read are listed on stderr, and
the others are still written; a file with none readable exits 2.

``geojson SITE.json --out ranked.geojson [--lon-lat]`` writes the ranked positions (best turbine
each) and the buildings as GeoJSON in the site's CRS, or longitude/latitude.
``geojson FOOTPRINTS.geojson --height-field NAME [--climate SITE.json] --out screened.geojson``
screens the footprints first (as ``screen`` does) and writes every candidate position and
every building with its best position's class, in the file's CRS or longitude/latitude.

Both check ``--out`` before any work, read with :func:`engine.io.safe_files.read_bounded` (the
footprint file at most :data:`engine.io.footprints.MAX_FOOTPRINT_BYTES`, site files their own
limit) and write with :func:`engine.io.safe_files.write_output` (whole or not at all); exit
codes as every command (:mod:`engine.cli.common`).
"""
from __future__ import annotations

import dataclasses
import sys

from engine.chain import pipeline
from engine.cli.common import positive_metres, renamed, write_stdout
from engine.core.errors import InputError
from engine.core.model import Position
from engine.flow.roof_candidates import DEFAULT_SETBACK_M, roof_candidate_points
from engine.io import footprints, sitefile
from engine.io.safe_files import check_output_path, read_bounded, write_output
from engine.report.geodata import ranked_geojson_bytes


def _positions(buildings, spacing_m, setback_m, mast_height_m):
    out = []
    for b in buildings:
        pts = roof_candidate_points(b, spacing_m, setback_m)
        for k, (x, y) in enumerate(pts):
            pid = f"{b.id}-roof" if k == 0 else f"{b.id}-roof-{k}"
            out.append(Position(id=pid, kind="roof", x_m=round(float(x), 3),
                                y_m=round(float(y), 3), mast_height_m=mast_height_m,
                                building_id=b.id))
    return tuple(out)


def cmd_footprints(args) -> int:
    check_output_path(args.out, "--out", "the site file")
    base = sitefile.load(args.site)
    data = read_bounded(args.footprints, footprints.MAX_FOOTPRINT_BYTES,
                        "a GeoJSON footprint file")
    names = {"file": args.footprints, "crs": "--crs", "features": args.footprints}
    try:
        fs = footprints.read_footprints(data, height_field=args.height_field,
                                        id_field=args.id_field, crs=args.crs,
                                        eaves_field=args.eaves_field,
                                        ridge_field=args.ridge_field)
    except InputError as e:
        raise renamed(e, names) from None
    if not fs.buildings:
        raise InputError(list(fs.problems) + [(args.footprints, "no footprint could be used")])
    for where, message in fs.problems:
        print(f"perch footprints: skipped {where}: {message}", file=sys.stderr)
    site = dataclasses.replace(base.site, origin_lat_deg=fs.plan.origin_lat_deg,
                               origin_lon_deg=fs.plan.origin_lon_deg, crs=fs.crs)
    positions = _positions(fs.buildings, args.grid_spacing_m, args.setback_m,
                           args.mast_height_m)
    assessment = dataclasses.replace(base, site=site, buildings=fs.buildings,
                                     positions=positions, spot_readings=(), receptors=())
    # A site file already there is kept as <name>.bak, as every site-file save does.
    write_output(args.out, sitefile.dumps(assessment).encode("utf-8"), "--out",
                 "the site file", keep_previous=True)
    worst = min(fs.area_ratio)
    write_stdout(f"wrote {args.out}: {len(fs.buildings)} buildings, {len(positions)} roof "
                 f"positions; footprint/rectangle area ratio {worst:.2f} at worst\n")
    return 0


def cmd_geojson(args) -> int:
    check_output_path(args.out, "--out", "the GeoJSON file")
    if args.height_field:
        return _screened_geojson(args)
    ev = pipeline.evaluate(sitefile.load(args.site))
    write_output(args.out, ranked_geojson_bytes(ev, lon_lat=args.lon_lat), "--out",
                 "the GeoJSON file")
    return 0


def _screened_geojson(args) -> int:
    """``geojson FOOTPRINTS --height-field``: screen the footprints, write the answer."""
    from engine.cli.screen import CAUTION, build_context, screen_footprint_file
    from engine.report.geodata import screened_geojson_bytes
    ctx = build_context(args.climate, args.turbines)
    got = screen_footprint_file(args.site, ctx, args)
    for where, msg in got.problems:
        print(f"perch geojson: {where}: {msg}", file=sys.stderr)
    if not len(got.buildings):
        raise InputError([("footprints", "no footprint could be screened; fix the features "
                                         "listed above")])
    write_output(args.out, screened_geojson_bytes(got, lon_lat=args.lon_lat), "--out",
                 "the GeoJSON file")
    print(f"perch geojson: {len(got.buildings)} buildings and {len(got.positions)} positions "
          f"written to {args.out} ({'EPSG:4326' if args.lon_lat else got.crs})",
          file=sys.stderr)
    print(f"perch geojson: {CAUTION}", file=sys.stderr)
    return 0


def register_footprints(sub):
    p = sub.add_parser("footprints", help="make a site file from GeoJSON building footprints")
    p.add_argument("footprints", help="GeoJSON FeatureCollection of building polygons")
    p.add_argument("--height-field", required=True, help="property holding each height [m]")
    p.add_argument("--id-field", help="property holding each building's id")
    p.add_argument("--crs", help="the coordinates' CRS (e.g. EPSG:27700); default: the file's "
                                 "crs member, else longitude/latitude")
    p.add_argument("--eaves-field", help="property with the eaves height [m] (pitched roofs)")
    p.add_argument("--ridge-field", help="property with the ridge height [m] (pitched roofs)")
    p.add_argument("--site", required=True,
                   help="base site file: its climate, turbines and settings are kept")
    p.add_argument("--out", required=True, help="site file to write (JSON)")
    p.add_argument("--grid-spacing-m", type=positive_metres,
                   help="also place candidates on a grid of this spacing on each roof [m]")
    p.add_argument("--setback-m", type=positive_metres, default=DEFAULT_SETBACK_M,
                   help=f"grid candidates keep this far from roof edges [m] "
                        f"(default {DEFAULT_SETBACK_M})")
    p.add_argument("--mast-height-m", type=positive_metres, default=6.0,
                   help="mast height of every candidate [m] (default 6); the ranking reports "
                        "the mast that clears the roof's turbulence")
    p.set_defaults(func=cmd_footprints)


def register_geojson(sub):
    p = sub.add_parser("geojson", help="write ranked positions and buildings as GeoJSON")
    p.add_argument("site", help="site file (JSON) with a geographic origin; or, with "
                                "--height-field, a GeoJSON footprint file to screen")
    p.add_argument("--height-field", default="",
                   help="footprint files: the attribute holding each height [m]; the file is "
                        "screened and every position and building written")
    p.add_argument("--id-field", default="", help="footprint files: the attribute of the ids")
    p.add_argument("--crs", default="", help="footprint files: their CRS when not stated")
    p.add_argument("--climate", action="append", metavar="[ZONE=]FILE",
                   help="footprint files: site file or climate JSON (as for screen)")
    p.add_argument("--turbines", default="",
                   help="footprint files: comma-separated turbine ids")
    p.add_argument("--grid-spacing-m", type=positive_metres, default=None,
                   help="footprint files: candidate grid spacing on each roof [m] (default: "
                        "the roof centre only)")
    p.add_argument("--setback-m", type=positive_metres, default=DEFAULT_SETBACK_M,
                   help="footprint files: candidates kept this far from every roof edge [m]")
    p.add_argument("--out", required=True, help="GeoJSON file to write")
    p.add_argument("--lon-lat", action="store_true",
                   help="longitude/latitude (EPSG:4326) instead of the site's own CRS")
    p.set_defaults(func=cmd_geojson)
