"""``python -m engine screen BUILDINGS --out ranked.csv``: screen a portfolio of buildings.

Runs :func:`engine.screening.screen_local` (pandas/numpy, the default; the table is streamed in
parts with a fixed memory ceiling and the ranked CSV merged from sorted parts) or, with
``--workers N`` or ``--scheduler ADDRESS``, :func:`engine.screening.screen_dask` (identical
results), which streams ``--out`` the same way on a Dask cluster. Bad rows are listed on stderr
by line and id with the fix; the good rows are screened. A GeoJSON footprint file
(``--height-field``) is screened on the same engines: locally, on the cluster of ``--workers``
or ``--scheduler``, and in tiles with ``--tile-m``, all with the same results.

Exit codes: 0 when at least one building was screened; 2 when an input, file or network problem
stops the run (one message naming the argument, no traceback); 1 for an internal fault (one
line; ``--debug`` shows the traceback).

A Dask scheduler can make its clients run code: ``--scheduler`` is accepted only with a sign of
trust, a ``tls://`` address with the cluster's certificates in the Dask configuration, or
``--trust-scheduler`` for a cluster the user runs themselves.
"""
from __future__ import annotations

import ipaddress
import re
import sys
import time
from contextlib import contextmanager
from pathlib import Path

from engine import screening
from engine.cli.common import finite_float, positive_metres, renamed
from engine.core import model
from engine.core.errors import InputError, Problems
from engine.io import sitefile
from engine.io.safe_files import check_output_path, load_json, read_bounded, write_output
from engine.screening.passes import OutputWriteError

#: Site file used for climate and turbines when ``--climate`` is not given (invented demo).
DEMO_SITE = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"

CAUTION = ("Screening only: roof structure, mast loads, electrical connection and noise for "
           "neighbours must be checked by a structural engineer and licensed installers under "
           "local codes before anything is mounted.")
#: Largest climate or site file read for ``--climate`` [bytes] (the site file's own limit).
MAX_CLIMATE_BYTES = sitefile.MAX_SITE_FILE_BYTES
#: Most local Dask workers ``--workers`` starts.
MAX_WORKERS = 64
#: How long to wait for a scheduler to answer [s].
CONNECT_TIMEOUT_S = 4
#: Scheduler address schemes a TCP/TLS connection is made with.
SCHEMES = ("tcp", "tls")
TRUST_HELP = ("a Dask scheduler can make this process run any code it sends: connect only to a "
              "cluster you trust")


def load_climate_or_site(path):
    """A site file (-> Assessment) or a climate JSON object (-> WindClimate) from ``path``."""
    data = load_json(path, MAX_CLIMATE_BYTES, "a site file or climate JSON object")
    try:
        if isinstance(data, dict) and "site" in data and "climate" in data:
            return sitefile.assessment_from_dict(data)
        if isinstance(data, dict) and "climate" in data and isinstance(data["climate"], dict):
            data = data["climate"]
        return sitefile.dataclass_from_dict(model.WindClimate, data, str(path))
    except RecursionError:
        raise InputError([(str(path), "is nested too deeply to be a site file or climate")]) \
            from None


def build_context(climate_args, turbine_arg, stderr=sys.stderr) -> screening.ScreeningContext:
    """The screening context from ``--climate`` items (FILE or ZONE=FILE) and ``--turbines``."""
    base, zone_climates, problems = None, {}, Problems()
    for item in climate_args or []:
        zone, _, file = item.rpartition("=") if "=" in item else ("", "", item)
        try:
            got = load_climate_or_site(file)
        except InputError as e:
            problems.extend([(f"--climate {w}", m) for w, m in e.problems])
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
            print("perch screen: results with the invented demo climate are for trying the tool only, never for a decision",
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


_HOST_LABEL = re.compile(r"^(?!-)[A-Za-z0-9-]{1,63}(?<!-)$")


def parse_scheduler(address: str) -> tuple:
    """(scheme, host, port) of a scheduler address ``tcp://HOST:PORT`` or ``tls://HOST:PORT``.

    Checked before any connection: the scheme, a host name (RFC 1123 labels) or an IP address
    (IPv6 in brackets), and a port 1-65535.
    """
    def bad(why):
        return InputError([("--scheduler", f"{why}, got {address[:200]!r}; give "
                                           "tcp://HOST:PORT or tls://HOST:PORT")])

    scheme, sep, rest = address.partition("://")
    if not sep or scheme.lower() not in SCHEMES:
        raise bad(f"the scheme must be {' or '.join(SCHEMES)}")
    m = re.fullmatch(r"(\[[0-9A-Fa-f:.]+\]|[^:/\[\]]+):(\d{1,5})", rest)
    if m is None:
        raise bad("the address must be HOST:PORT with nothing after the port")
    host, port = m.group(1), int(m.group(2))
    if not 1 <= port <= 65535:
        raise bad(f"the port must be 1-65535 ({port})")
    try:
        ipaddress.ip_address(host.strip("[]"))
    except ValueError:
        if host.startswith("[") or len(host) > 253 or not all(
                _HOST_LABEL.match(lab) for lab in host.rstrip(".").split(".")):
            raise bad("the host must be a host name or an IP address") from None
    return scheme.lower(), host, port


def trusted_security(scheme: str, address: str, trust_flag: bool):
    """The ``distributed.security.Security`` to connect with, or :class:`InputError` when the
    scheduler has no sign of trust (a TLS address with the cluster's certificate authority in
    the Dask configuration, or ``--trust-scheduler``)."""
    from distributed.security import Security

    sec = Security()  # from the Dask configuration (distributed.comm.tls.*)
    if scheme == "tls" and sec.tls_ca_file:
        return sec
    if trust_flag:
        return sec if scheme == "tls" else None
    why = ("a tls:// address needs the cluster's certificate authority in the Dask "
           "configuration (distributed.comm.tls.ca-file)" if scheme == "tls"
           else "a tcp:// address is neither encrypted nor authenticated")
    raise InputError([("--scheduler", f"{address} is not trusted: {TRUST_HELP}; {why}. Use a "
                                      "tls:// address with the cluster's certificates, or add "
                                      "--trust-scheduler for a cluster you run yourself")])


def connect(address: str, security):
    """A ``distributed.Client`` of the scheduler, or :class:`InputError` after
    :data:`CONNECT_TIMEOUT_S` seconds without an answer."""
    from distributed import Client
    try:
        return Client(address, timeout=CONNECT_TIMEOUT_S, security=security)
    except (OSError, TimeoutError) as e:
        raise InputError([("--scheduler", f"no Dask scheduler answered at {address} within "
                                          f"{CONNECT_TIMEOUT_S} s ({type(e).__name__}); check "
                                          "the address and that the cluster is running")]) \
            from None


def check_arguments(args) -> None:
    """Argument checks made before any file is read or connection made."""
    p = Problems()
    if args.workers is not None and not 1 <= args.workers <= MAX_WORKERS:
        p.add("--workers", f"must be between 1 and {MAX_WORKERS}, got {args.workers}")
    if args.workers is not None and args.scheduler:
        p.add("--workers", "give --workers (a local cluster) or --scheduler, not both")
    p.raise_if_any()
    check_output_path(args.out, "--out", "the ranked CSV")
    if args.positions_out:
        check_output_path(args.positions_out, "--positions-out", "the positions CSV")
    if args.scheduler:
        scheme, _, _ = parse_scheduler(args.scheduler)
        trusted_security(scheme, args.scheduler, args.trust_scheduler)


@contextmanager
def _client(args):
    """The Dask client the arguments ask for (``--scheduler`` or ``--workers``), else None."""
    if args.scheduler:
        scheme, _, _ = parse_scheduler(args.scheduler)
        client = connect(args.scheduler,
                         trusted_security(scheme, args.scheduler, args.trust_scheduler))
        with client:
            yield client
    elif args.workers:
        from distributed import Client, LocalCluster
        # Thread workers in this process (process workers would re-run this command when
        # they start). TCP on 127.0.0.1: without a host the in-process cluster still opens
        # its HTTP ports on every interface.
        with LocalCluster(n_workers=args.workers, threads_per_worker=1, processes=False,
                          protocol="tcp", host="127.0.0.1",
                          dashboard_address=None) as cluster, Client(cluster) as client:
            yield client
    else:
        yield None


def _run(args, ctx):
    """The screening on the engine the arguments choose; the ranked table streamed to --out."""
    if args.tile_m is not None:
        return _run_tiled(args, ctx)
    if args.scheduler or args.workers:
        with _client(args) as client:
            return screening.screen_dask(args.buildings, ctx, client, out_csv=args.out)

    def progress(f, text):
        if not args.quiet:
            print(f"\r{f * 100:5.1f} %  {text:<40}", end="", file=sys.stderr, flush=True)
    res = screening.screen_local(args.buildings, ctx, progress=progress, out_csv=args.out)
    if not args.quiet:
        print(file=sys.stderr)
    return res


def _run_tiled(args, ctx):
    """``--tile-m``: the tiled screening (:func:`engine.screening.tiled.screen_tiled`) with
    the halo set to the sector fetch, locally or one task per tile on the Dask client."""
    from engine.screening.local import write_ranked_csv
    from engine.screening.tiled import check_tile_size, read_table_frame, screen_tiled
    if not ctx.transfer.sector_morphometry:
        raise InputError([("--tile-m", "must be given with per-sector surroundings (the halo "
                                       "is the sector fetch), got transfer.sector_morphometry "
                                       "off; set it to true in the --climate site file or "
                                       "leave --tile-m out")])
    tile_m = check_tile_size(args.tile_m, ctx.transfer.sector_fetch_m, "--tile-m")
    frame, first_line = read_table_frame(args.buildings)
    with _client(args) as client:
        res = screen_tiled(frame, ctx, tile_m=tile_m, client=client, first_line=first_line)
    write_ranked_csv(res.table, args.out)
    print(f"perch screen: tiles of {tile_m:g} m with a halo of "
          f"{ctx.transfer.sector_fetch_m:g} m (the sector fetch)", file=sys.stderr)
    return res


#: File endings read as GeoJSON footprints rather than a buildings table.
FOOTPRINT_SUFFIXES = (".geojson", ".json")


def screen_footprint_file(path, ctx, args, client=None):
    """:func:`engine.screening.positions.screen_footprints` of a GeoJSON file, with the
    footprint options of ``args`` (``height_field``, ``id_field``, ``crs``,
    ``grid_spacing_m``, ``setback_m``, ``tile_m``) on ``client`` (a Dask client, or None for
    this process); the file read bounded, problems named by option."""
    from engine.io.footprints import MAX_FOOTPRINT_BYTES
    from engine.screening.positions import screen_footprints
    if not args.height_field:
        raise InputError([("--height-field", "must name the footprints' height attribute "
                                             "(e.g. --height-field height_m), got nothing")])
    data = read_bounded(path, MAX_FOOTPRINT_BYTES, "a GeoJSON footprint file")
    try:
        return screen_footprints(data, ctx, height_field=args.height_field,
                                 id_field=args.id_field or None, crs=args.crs or None,
                                 spacing_m=args.grid_spacing_m, setback_m=args.setback_m,
                                 client=client, tile_m=getattr(args, "tile_m", None))
    except InputError as e:
        raise renamed(e, {"file": str(path), "features": str(path), "crs": "--crs",
                          "tile_m": "--tile-m"}) from None


def _run_footprints(args, ctx) -> int:
    """A footprint file: every building's best position to --out, every position to
    --positions-out (both written whole or not at all); on the Dask cluster of --workers or
    --scheduler, in tiles with --tile-m."""
    from engine.io.exports import safe_csv
    t0 = time.perf_counter()
    with _client(args) as client:
        got = screen_footprint_file(args.buildings, ctx, args, client)
    for where, msg in got.problems:
        print(f"perch screen: {where}: {msg}", file=sys.stderr)
    write_output(args.out, safe_csv(got.buildings).encode("utf-8"), "--out", "the ranked CSV")
    if args.positions_out:
        write_output(args.positions_out, safe_csv(got.positions).encode("utf-8"),
                     "--positions-out", "the positions CSV")
    print(f"perch screen: {len(got.buildings)} of {got.n_features} footprints screened at "
          f"{len(got.positions)} positions in {time.perf_counter() - t0:.1f} s; best position "
          f"per building written to {args.out}"
          f"{f', every position to {args.positions_out}' if args.positions_out else ''}",
          file=sys.stderr)
    print(f"perch screen: {CAUTION}", file=sys.stderr)
    return 0 if len(got.buildings) else 2


def _report(args, res, seconds: float) -> int:
    for where, msg in res.problems:
        print(f"perch screen: {where}: {msg}", file=sys.stderr)
    n_bad = res.n_left_out
    screened = res.n_rows - n_bad
    print(f"perch screen: {screened} of {res.n_rows} buildings screened in {seconds:.1f} s"
          f"{f'; {n_bad} bad row(s) left out (listed above)' if n_bad else ''}; ranked table "
          f"written to {args.out}", file=sys.stderr)
    print(f"perch screen: {CAUTION}", file=sys.stderr)
    if screened == 0:
        print("perch screen: no row could be screened; fix the rows listed above", file=sys.stderr)
        return 2
    return 0


def cmd_screen(args) -> int:
    try:
        check_arguments(args)
        ctx = build_context(args.climate, args.turbines)
        if Path(args.buildings).suffix.lower() in FOOTPRINT_SUFFIXES:
            return _run_footprints(args, ctx)
        t0 = time.perf_counter()
        res = _run(args, ctx)
        return _report(args, res, time.perf_counter() - t0)
    except OutputWriteError as e:
        raise InputError([("--out", f"{e.path}: {m}") for _, m in e.problems]) from None
    except InputError:
        raise
    except OSError as e:  # the output's own errors are OutputWriteError: this is a read
        raise InputError([(str(args.buildings), f"cannot be read ({e.strerror or e}); check "
                                                "the file and its folder")]) from None
    except MemoryError:
        if args.debug:
            raise
        print("perch screen: out of memory; screen the table in smaller files or on a Dask "
              "cluster (--workers N)", file=sys.stderr)
        return 1
    except Exception as e:  # an internal fault: one line, the traceback with --debug
        if args.debug:
            raise
        text = " ".join(str(e).split())[:300]
        print(f"perch screen: internal error: {type(e).__name__}: {text} (run again "
              "with --debug for the traceback)", file=sys.stderr)
        return 1


def register_screen(sub):
    p = sub.add_parser("screen", help="screen a buildings table (CSV or Parquet) for roofs "
                                      "worth a visit")
    p.add_argument("buildings", help="buildings table: CSV or Parquet, or GeoJSON footprints "
                                     "(.geojson; see docs/screening.md)")
    p.add_argument("--out", required=True, help="ranked table to write (CSV), written whole "
                                                "or not at all")
    p.add_argument("--workers", type=int, default=None,
                   help=f"run on a local Dask cluster of N (1-{MAX_WORKERS}) thread workers in "
                        "this process (loopback only)")
    p.add_argument("--scheduler", default="",
                   help="run on an existing Dask cluster at tcp://HOST:PORT or tls://HOST:PORT. "
                        f"Warning: {TRUST_HELP}. Accepted only with a tls:// address and the "
                        "cluster's certificates in the Dask configuration, or with "
                        "--trust-scheduler")
    p.add_argument("--trust-scheduler", action="store_true",
                   help="connect to --scheduler although its identity is not proven by TLS (a "
                        "cluster you run yourself); its scheduler can run code in this process")
    p.add_argument("--turbines", default="",
                   help="comma-separated turbine ids (site file or turbine library)")
    p.add_argument("--climate", action="append", metavar="[ZONE=]FILE",
                   help="site file or climate JSON; ZONE=FILE for the rows of one zone "
                        "(repeatable)")
    p.add_argument("--height-field", default="",
                   help="footprint files (.geojson): the attribute holding each height [m]")
    p.add_argument("--id-field", default="", help="footprint files: the attribute of the ids")
    p.add_argument("--crs", default="", help="footprint files: their CRS when not stated")
    p.add_argument("--grid-spacing-m", type=positive_metres, default=None,
                   help="footprint files: candidate grid spacing on each roof [m] (default: "
                        "the roof centre only)")
    p.add_argument("--setback-m", type=finite_float, default=2.0,
                   help="footprint files: candidates kept this far from every roof edge [m]")
    p.add_argument("--positions-out", default="",
                   help="footprint files: also write every candidate position (CSV)")
    p.add_argument("--tile-m", type=finite_float, default=None, metavar="M",
                   help="screen the table in square tiles of side M [m], each with a halo of "
                        "the sector fetch (needs transfer.sector_morphometry on in the "
                        "--climate site file; M at least the fetch); locally, or one task per "
                        "tile with --workers or --scheduler")
    p.add_argument("--quiet", action="store_true", help="no progress line")
    p.add_argument("--debug", action="store_true", help="show the traceback of an internal error")
    p.set_defaults(func=cmd_screen)
