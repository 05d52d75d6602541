"""``python -m engine screen BUILDINGS --out ranked.csv``: screen a portfolio of buildings.

Runs :func:`engine.screening.screen_local` (pandas/numpy, the default) or, with ``--workers N``
or ``--scheduler ADDRESS``, :func:`engine.screening.screen_dask` (identical results), which
streams ``--out``: the workers sort and spill their partitions next to it and this process
merges them in bounded blocks (:mod:`engine.screening.merge`), so the table never has to fit
in one process's memory. Bad rows are listed on stderr by line and id with the fix; the good
rows are screened. Exit code 0 when at least one building was screened, 2 when the input
cannot be used at all.
"""
from __future__ import annotations

import json
import sys
import time
from pathlib import Path

from engine.core import model
from engine import screening
from engine.io import sitefile
from engine.core.errors import InputError, Problems

#: Site file used for climate and turbines when ``--climate`` is not given (invented demo).
DEMO_SITE = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"

CAUTION = ("Screening only: roof structure, mast loads, electrical connection and noise for "
           "neighbours must be checked by a structural engineer and licensed installers under "
           "local codes before anything is mounted.")


def load_climate_or_site(path):
    """A site file (-> Assessment) or a climate JSON object (-> WindClimate) from ``path``."""
    path = Path(path)
    try:
        data = json.loads(path.read_bytes().decode("utf-8-sig"))
    except OSError as e:
        raise InputError([(str(path), f"cannot be read: {e.strerror}")]) from None
    except (UnicodeDecodeError, json.JSONDecodeError) as e:
        raise InputError([(str(path), f"is not JSON text ({e}); give a site file or a climate "
                                      "JSON object")]) from None
    if isinstance(data, dict) and "site" in data and "climate" in data:
        return sitefile.assessment_from_dict(data)
    if isinstance(data, dict) and "climate" in data and isinstance(data["climate"], dict):
        data = data["climate"]
    p = Problems()
    clim = sitefile._build(model.WindClimate, data, str(path), p)
    p.raise_if_any()
    return clim


def build_context(climate_args, turbine_arg, stderr=sys.stderr) -> screening.ScreeningContext:
    """The screening context from ``--climate`` items (FILE or ZONE=FILE) and ``--turbines``."""
    base, zone_climates, problems = None, {}, Problems()
    for item in climate_args or []:
        zone, _, file = item.rpartition("=") if "=" in item else ("", "", item)
        try:
            got = load_climate_or_site(file)
        except InputError as e:
            problems.extend(e.problems)
            continue
        if isinstance(got, model.Assessment):
            if zone:
                zone_climates[zone] = got.climate
            elif base is None:
                base = got
            else:
                problems.add("--climate", "give one default site file or climate; more than one "
                                          "was given")
        elif zone:
            zone_climates[zone] = got
        else:
            zone_climates[""] = got
    problems.raise_if_any()
    demo_climate = base is None and not zone_climates
    zones_only = base is None and zone_climates and "" not in zone_climates
    if base is None:
        what = "climate, turbines and site" if demo_climate else "turbines and site"
        print(f"perch screen: no site file given: using the {what} of the invented demo "
              f"{DEMO_SITE.name}", file=stderr)
        if demo_climate:
            print("perch screen: results with the demo climate are for demonstration only",
                  file=stderr)
        base = sitefile.load(DEMO_SITE)
    turbine_ids = [t.strip() for t in (turbine_arg or "").split(",") if t.strip()]
    turbines = base.turbines
    if turbine_ids:
        from engine.energy.turbines import library_by_id
        known = {t.id: t for t in base.turbines}
        known.update({k: v for k, v in library_by_id().items() if k not in known})
        missing = [t for t in turbine_ids if t not in known]
        if missing:
            raise InputError([("--turbines", f"no turbine {m!r} in the site file or the turbine "
                                             f"library (known: {', '.join(sorted(known))})")
                              for m in missing])
        turbines = tuple(known[t] for t in turbine_ids)
    base_clim = zone_climates.pop("", None)
    ctx = screening.context_from_assessment(base, zone_climates=zone_climates)
    climates = dict(ctx.climates)
    if base_clim is not None:
        climates[""] = base_clim
    elif zones_only:
        del climates[""]  # rows of other zones are reported, not screened with the demo
    return screening.ScreeningContext(
        site=ctx.site, climates=climates, turbines=tuple(turbines), losses=ctx.losses,
        ranking=ctx.ranking, transfer=ctx.transfer, settings=ctx.settings)


def cmd_screen(args) -> int:
    ctx = build_context(args.climate, args.turbines)
    t0 = time.perf_counter()
    if args.workers or args.scheduler:
        from distributed import Client, LocalCluster
        if args.scheduler:
            with Client(args.scheduler) as client:
                res = screening.screen_dask(args.buildings, ctx, client, out_csv=args.out)
        else:
            # Thread workers in this process (process workers would re-run this command when
            # they start). TCP on 127.0.0.1: without a host the in-process cluster still opens
            # its HTTP ports on every interface.
            with LocalCluster(n_workers=args.workers, threads_per_worker=1, processes=False,
                              protocol="tcp", host="127.0.0.1",
                              dashboard_address=None) as cluster, \
                    Client(cluster) as client:
                res = screening.screen_dask(args.buildings, ctx, client, out_csv=args.out)
    else:
        def progress(f, text):
            if not args.quiet:
                print(f"\r{f * 100:5.1f} %  {text:<40}", end="", file=sys.stderr, flush=True)
        res = screening.screen_local(args.buildings, ctx, progress=progress)
        if not args.quiet:
            print(file=sys.stderr)
        screening.write_ranked_csv(res.table, args.out)
    dt = time.perf_counter() - t0
    for where, msg in res.problems:
        print(f"perch screen: {where}: {msg}", file=sys.stderr)
    n_bad = len(res.bad_rows)
    screened = res.n_rows - n_bad
    print(f"perch screen: {screened} of {res.n_rows} buildings screened in {dt:.1f} s"
          f"{f'; {n_bad} bad row(s) left out (listed above)' if n_bad else ''}; ranked table "
          f"written to {args.out}", file=sys.stderr)
    print(f"perch screen: {CAUTION}", file=sys.stderr)
    if screened == 0:
        print("perch screen: no row could be screened; fix the rows listed above", file=sys.stderr)
        return 2
    return 0


def register_screen(sub):
    p = sub.add_parser("screen", help="screen a buildings table (CSV or Parquet) for roofs "
                                      "worth a visit")
    p.add_argument("buildings", help="buildings table: CSV or Parquet (see docs/screening.md)")
    p.add_argument("--out", required=True, help="ranked table to write (CSV)")
    p.add_argument("--workers", type=int, default=0,
                   help="run on a local Dask cluster of N workers (loopback only)")
    p.add_argument("--scheduler", default="",
                   help="run on an existing Dask cluster at this scheduler address")
    p.add_argument("--turbines", default="",
                   help="comma-separated turbine ids (site file or turbine library)")
    p.add_argument("--climate", action="append", metavar="[ZONE=]FILE",
                   help="site file or climate JSON; ZONE=FILE for the rows of one zone "
                        "(repeatable)")
    p.add_argument("--quiet", action="store_true", help="no progress line")
    p.set_defaults(func=cmd_screen)
