"""Benchmark of the portfolio screening: throughput, growth with size, memory, beyond-memory run.

Prints, from one run, side by side:

* buildings per second for 10^4, 10^5, 10^6 buildings with the local engine (one process, one
  core: numpy's element-wise work is single-threaded) and on a 2-worker local Dask cluster
  (2 process workers x 1 thread, loopback only);
* the growth exponent b of time ~ N^b fitted over the sizes (target <= 1.05);
* building-turbine evaluations per second per core (target >= 200,000 locally);
* the peak memory of the local engine for the largest size (target < 2 GB), measured as the
  maximum resident set size of a fresh child process;
* the largest table screened on a Dask cluster whose workers are each allowed less memory than
  the table takes, written straight to CSV by the workers (the limit is printed).

Tables are the invented district of ``demo_sites/make_district.py`` (seeded); the climate and
turbines are those of the demo site. Usage::

    python benchmarks/bench_screening.py            # 10^4, 10^5, 10^6
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
    from engine import screening
    ctx = _context()
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


def run_dask(paths: dict, big: Path) -> tuple:
    from distributed import Client, LocalCluster

    from engine import screening
    ctx = _context()
    results = {}
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                      dashboard_address=None, host="127.0.0.1",
                      memory_limit=WORKER_MEMORY_LIMIT) as cluster, Client(cluster) as client:
        screening.screen_dask(paths[min(paths)], ctx, client)  # warm the workers' imports
        for n, path in sorted(paths.items()):
            t0 = time.perf_counter()
            screening.screen_dask(path, ctx, client, part_bytes=SMALL_PART_BYTES)
            results[n] = time.perf_counter() - t0
            print(f"dask  {n:>9,d}: {results[n]:8.1f} s", flush=True)
        t0 = time.perf_counter()
        res = screening.screen_dask(big, ctx, client, out_csv=big.with_suffix(".out.csv"),
                                    part_bytes=SMALL_PART_BYTES)
        big_s = time.perf_counter() - t0
        big_n = res.n_rows
        worker_mem = [w["memory_limit"] for w in client.scheduler_info()["workers"].values()]
    return results, (big_n, big_s, worker_mem)


def exponent(sizes, seconds) -> float:
    """Slope b of log t = a + b log N (least squares)."""
    import numpy as np
    return float(np.polyfit(np.log(sizes), np.log(seconds), 1)[0])


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--sizes", default="", help="comma-separated sizes instead (a trial run)")
    ap.add_argument("--child-local")
    args = ap.parse_args()
    if args.child_local:
        child_local(args.child_local)
        return
    import make_district

    sizes = [10 ** 3, 10 ** 4, 10 ** 5] if args.quick else [10 ** 4, 10 ** 5, 10 ** 6]
    if args.sizes:
        sizes = sorted(int(x) for x in args.sizes.split(","))
    tmp = Path(tempfile.mkdtemp(prefix="perch-bench-"))
    paths = {n: make_district.write_district(n, tmp / f"district_{n}.csv") for n in sizes}
    big_n = 2 * sizes[-1]
    big = make_district.write_district(big_n, tmp / f"district_{big_n}.csv")
    print(f"machine: {os.cpu_count()} logical cores; load average at start "
          f"{os.getloadavg()[0]:.1f}; tables in {tmp}", flush=True)
    local = {}
    for n in sizes:
        local[n] = run_local(paths[n])
        print(f"local {n:>9,d}: {local[n]['seconds']:8.1f} s, peak {local[n]['peak_mb']:7.0f} MB",
              flush=True)
    dask_s, (bn, bs, wmem) = run_dask(paths, big)
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
    print(f"building-turbine evaluations per second per core, local: {best:,.0f} "
          f"(target >= 200,000; ratio {best / 200000:.3f})")
    top = sizes[-1]
    print(f"peak memory, local, {top:,d} buildings: {local[top]['peak_mb']:.0f} MB "
          f"(target < 2048 MB; result table alone {local[top]['table_mb']:.0f} MB)")
    table_mb = local[top]["table_mb"] * bn / top
    print(f"beyond memory: {bn:,d} buildings on 2 Dask workers limited to "
          f"{wmem[0] / 1024 ** 2:.0f} MB each ({sum(wmem) / 1024 ** 2:.0f} MB in all; the result "
          f"table alone is about {table_mb:.0f} MB in memory), {SMALL_PART_BYTES / 1024 ** 2:.0f} "
          f"MB CSV parts, sorted and written by the workers: {bs:.1f} s, {bn / bs:.0f} bldg/s")
    print(f"load average at the end {os.getloadavg()[0]:.1f} (other work on the machine slows "
          "every figure alike; ratios are from this one run)")


if __name__ == "__main__":
    main()
