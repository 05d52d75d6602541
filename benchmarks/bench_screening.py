"""Benchmark of the portfolio screening: throughput, growth with size, memory, beyond-memory run.

Prints, from one run, side by side:

* buildings per second for 10^4, 10^5, 10^6 buildings with the local engine (one process, one
  core: numpy's element-wise work is single-threaded) and on a 2-worker local Dask cluster
  (2 process workers x 1 thread, loopback only);
* the growth exponent b of time ~ N^b fitted over the sizes (target <= 1.05);
* building-turbine evaluations per second per core (target >= 200,000 locally);
* the peak memory of the local engine for the largest size (target < 2 GB), measured as the
  maximum resident set size of a fresh child process;
* with ``--beyond N``: a table of N buildings screened on a Dask cluster whose workers are
  allowed less memory in all than the table takes, sorted and written straight to CSV by the
  workers (the limit and the table's measured size are printed).

Tables are the invented district of ``demo_sites/make_district.py`` (seeded); the climate and
turbines are those of the demo site. Usage::

    python benchmarks/bench_screening.py            # 10^4, 10^5, 10^6
    python benchmarks/bench_screening.py --beyond 1000000 --worker-mb 700 --workers 1
    python benchmarks/bench_screening.py --quick    # 10^3, 10^4, 10^5
    python benchmarks/bench_screening.py --sizes 1000,3000,10000   # a trial run
"""
from __future__ import annotations

import argparse
import json
import math
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "demo_sites"))

#: Memory each Dask worker may use in the beyond-memory run [bytes].
WORKER_MEMORY_LIMIT = 800 * 1024 ** 2
#: Part size of the beyond-memory run [bytes of CSV].
SMALL_PART_BYTES = 6 * 1024 * 1024


def _context():
    from engine import screening, sitefile
    return screening.context_from_assessment(sitefile.load(ROOT / "demo_sites" / "larkspur_yard.json"))


def child_local(path: str) -> None:
    """Run the local engine once in this (fresh) process; print time, size and peak memory."""
    import pandas as pd

    from engine import screening
    ctx = _context()
    # Warm-up on a few rows: lazy imports and first calls are not the screening's cost.
    screening.screen_local(pd.read_csv(path, nrows=50), ctx)
    t0 = time.perf_counter()
    res = screening.screen_local(path, ctx)
    dt = time.perf_counter() - t0
    table_mb = res.table.memory_usage(deep=True).sum() / 1e6
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    print(json.dumps({"seconds": dt, "n": res.n_screened, "turbines": len(ctx.turbines),
                      "peak_mb": peak_mb, "table_mb": table_mb}))


def run_local(path: Path) -> dict:
    out = subprocess.run([sys.executable, __file__, "--child-local", str(path)],
                         capture_output=True, text=True, check=True, cwd=ROOT)
    return json.loads(out.stdout.strip().splitlines()[-1])


def _cluster(memory_limit=WORKER_MEMORY_LIMIT, n_workers=2):
    from distributed import LocalCluster
    return LocalCluster(n_workers=n_workers, threads_per_worker=1, processes=True,
                        dashboard_address=None, host="127.0.0.1", memory_limit=memory_limit)


def run_dask(paths: dict) -> dict:
    """Seconds per size on a 2-worker local cluster (results gathered to this process)."""
    from distributed import Client

    from engine import screening
    ctx = _context()
    results = {}
    with _cluster() as cluster, Client(cluster) as client:
        screening.screen_dask(paths[min(paths)], ctx, client)  # warm the workers' imports
        for n, path in sorted(paths.items()):
            t0 = time.perf_counter()
            screening.screen_dask(path, ctx, client, part_bytes=SMALL_PART_BYTES)
            results[n] = time.perf_counter() - t0
            print(f"dask  {n:>9,d}: {results[n]:8.1f} s", flush=True)
    return results


def run_beyond(n: int, tmp: Path, memory_limit=WORKER_MEMORY_LIMIT, n_workers=2) -> None:
    """Screen ``n`` buildings with one turbine on memory-limited workers, written by them."""
    import pandas as pd
    from distributed import Client

    import make_district
    from engine import screening
    ctx = _context()
    ctx1 = screening.ScreeningContext(site=ctx.site, climates=ctx.climates,
                                      turbines=ctx.turbines[:1], losses=ctx.losses,
                                      ranking=ctx.ranking, transfer=ctx.transfer)
    path = make_district.write_district(n, tmp / f"district_{n}.csv")
    sample = screening.screen_local(pd.read_csv(path, nrows=20_000), ctx1)
    per_row = (sample.table.memory_usage(deep=True).sum()
               + screening.check_part(pd.read_csv(path, nrows=20_000).assign(line=0))
               .memory_usage(deep=True).sum()) / len(sample.table)
    out = path.with_suffix(".out.csv")
    with _cluster(memory_limit, n_workers) as cluster, Client(cluster) as client:
        t0 = time.perf_counter()
        res = screening.screen_dask(path, ctx1, client, out_csv=out, part_bytes=SMALL_PART_BYTES)
        dt = time.perf_counter() - t0
        limits = [w["memory_limit"] for w in client.scheduler_info()["workers"].values()]
    rows = sum(1 for _ in open(out, "rb")) - 1
    print(f"beyond memory: {n:,d} buildings x 1 turbine; in memory they take about "
          f"{per_row * n / 1e6:,.0f} MB (checked rows + results, {per_row:.0f} B per building, "
          f"measured on 20,000); {len(limits)} Dask worker(s) allowed "
          f"{limits[0] / 1024 ** 2:.0f} MB each "
          f"({sum(limits) / 1024 ** 2:.0f} MB in all), {SMALL_PART_BYTES / 1024 ** 2:.0f} MB "
          f"CSV parts; sorted and written by the workers in {dt:.1f} s ({n / dt:.0f} bldg/s); "
          f"{rows:,d} ranked rows written, {res.n_rows:,d} read")


def exponent(sizes, seconds) -> float:
    """Slope b of log t = a + b log N (least squares)."""
    import numpy as np
    return float(np.polyfit(np.log(sizes), np.log(seconds), 1)[0])


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--sizes", default="", help="comma-separated sizes instead (a trial run)")
    ap.add_argument("--child-local")
    ap.add_argument("--beyond", type=int, default=0,
                    help="only the beyond-memory run, with this many buildings")
    ap.add_argument("--worker-mb", type=int, default=WORKER_MEMORY_LIMIT // 1024 ** 2,
                    help="memory limit of each Dask worker in the beyond-memory run [MB]")
    ap.add_argument("--workers", type=int, default=2,
                    help="Dask workers in the beyond-memory run")
    args = ap.parse_args()
    if args.child_local:
        child_local(args.child_local)
        return
    import make_district

    tmp = Path(tempfile.mkdtemp(prefix="perch-bench-"))
    print(f"machine: {os.cpu_count()} logical cores; load average at start "
          f"{os.getloadavg()[0]:.1f}; tables in {tmp}", flush=True)
    if args.beyond:
        run_beyond(args.beyond, tmp, args.worker_mb * 1024 ** 2, args.workers)
        print(f"load average at the end {os.getloadavg()[0]:.1f}")
        return
    sizes = [10 ** 3, 10 ** 4, 10 ** 5] if args.quick else [10 ** 4, 10 ** 5, 10 ** 6]
    if args.sizes:
        sizes = sorted(int(x) for x in args.sizes.split(","))
    paths = {n: make_district.write_district(n, tmp / f"district_{n}.csv") for n in sizes}
    local = {}
    for n in sizes:
        local[n] = run_local(paths[n])
        print(f"local {n:>9,d}: {local[n]['seconds']:8.1f} s, peak {local[n]['peak_mb']:7.0f} MB",
              flush=True)
    dask_s = run_dask(paths)
    T = local[sizes[0]]["turbines"]
    print()
    print(f"{'buildings':>10} | {'local s':>8} {'bldg/s':>9} {'eval/s/core':>12} | "
          f"{'dask-2 s':>8} {'bldg/s':>9} {'eval/s/core':>12} | {'dask/local':>10}")
    for n in sizes:
        ls, ds = local[n]["seconds"], dask_s[n]
        print(f"{n:>10,d} | {ls:8.1f} {n / ls:9.0f} {n * T / ls:12.0f} | "
              f"{ds:8.1f} {n / ds:9.0f} {n * T / ds / 2:12.0f} | {ls / ds:10.2f}")
    b_local = exponent(sizes, [local[n]["seconds"] for n in sizes])
    b_dask = exponent(sizes, [dask_s[n] for n in sizes])
    print(f"growth exponent of time with size: local {b_local:.3f}, dask {b_dask:.3f} "
          f"(target <= 1.05)")
    best = max(n * T / local[n]["seconds"] for n in sizes)
    print(f"building-turbine evaluations per second per core, local ({T} turbines): {best:,.0f} "
          f"(target >= 200,000; ratio {best / 200000:.3f})")
    top = sizes[-1]
    print(f"peak memory, local, {top:,d} buildings: {local[top]['peak_mb']:.0f} MB "
          f"(target < 2048 MB; result table alone {local[top]['table_mb']:.0f} MB)")
    print(f"load average at the end {os.getloadavg()[0]:.1f} (other work on the machine slows "
          "every figure alike; ratios are from this one run)")


if __name__ == "__main__":
    main()
