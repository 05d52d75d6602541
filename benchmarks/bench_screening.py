"""Benchmark of the portfolio screening: throughput, growth with size, memory, beyond-memory run.

Prints, from one run, side by side:

* buildings per second for 10^4, 10^5, 10^6 buildings with the local engine (one process, one
  core: numpy's element-wise work is single-threaded) and on a 2-worker local Dask cluster
  (2 process workers x 1 thread, loopback only);
* the growth exponent b of time ~ N^b fitted over the sizes (target <= 1.05);
* building-turbine evaluations per second per core (target >= 200,000 locally);
* the peak memory of the local engine for the largest size (target < 2 GB), measured as the
  maximum resident set size of a fresh child process;
* the yield stage alone (``engine.energy.aep.prepare_bins`` and ``energy_wh``) against the previous
  formulation kept here (the curve gathered for every building, turbine and sector, the
  Weibull powers taken per turbine), on the same arrays, interleaved, best of 3, in chunks of
  the screening's ``chunk_rows`` (``--energy-only`` runs just this);
* with ``--big-csv [MB]``: the command's local engine (streamed in parts) on a buildings CSV
  of that size (default 200 MB), its time and peak resident memory (target <= 1 GB);
* with ``--beyond [N]``: a table of N buildings (default 2,000,000) x 1 turbine screened on 2
  Dask workers allowed less memory in all (default 600 MB each) than the table takes: each
  worker sorts its partitions and spills them to Parquet, a fresh calling process merges them
  into the ranked CSV in bounded blocks (the limit, the table's measured size, the workers'
  and the calling process's peak memory are printed).

Tables are the invented district of ``demo_sites/make_district.py`` (seeded); the climate and
turbines are those of the demo site. Usage::

    python benchmarks/bench_screening.py            # 10^4, 10^5, 10^6
    python benchmarks/bench_screening.py --beyond                 # 2e6 on 2 x 600 MB
    python benchmarks/bench_screening.py --beyond 3000000 --worker-mb 500 --workers 2
    python benchmarks/bench_screening.py --quick    # 10^3, 10^4, 10^5
    python benchmarks/bench_screening.py --big-csv  # 200 MB CSV, command's local engine
    python benchmarks/bench_screening.py --sizes 10000,100000 --compare-local   # before/after
    python benchmarks/bench_screening.py --sizes 1000,3000,10000   # a trial run
"""
from __future__ import annotations

import argparse
import json
import math
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

# One core per process: the yield's matrix products would otherwise use every core.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "demo_sites"))

#: Memory each Dask worker may use in the throughput columns [bytes].
WORKER_MEMORY_LIMIT = 800 * 1024 ** 2
#: Memory each Dask worker may use in the beyond-memory run [bytes] (default of --worker-mb).
BEYOND_WORKER_LIMIT = 600 * 1024 ** 2
#: Buildings of the beyond-memory run when ``--beyond`` gives none (``--beyond 0``).
BEYOND_BUILDINGS = 2_000_000
#: Part size of the Dask runs [bytes of CSV].
SMALL_PART_BYTES = 6 * 1024 * 1024
#: Part size of the beyond-memory run [bytes of CSV]: smaller tasks on tighter workers.
BEYOND_PART_BYTES = 2 * 1024 * 1024


def peak_rss_mb() -> float:
    """Peak resident memory of this process [MB]: VmHWM, which starts afresh at exec (a child's
    ru_maxrss keeps the parent's size at the fork); the climate benchmark's reader."""
    from bench_climate import peak_rss_mb as read
    return read()


def _context():
    from engine import screening
    from engine.io import sitefile
    return screening.context_from_assessment(sitefile.load(ROOT / "demo_sites" / "larkspur_yard.json"))


class _BeforeSetup:
    """Stands in for engine.energy.aep.BinsSetup with the previous formulation (energy only)."""

    def __init__(self, *args):
        self.args = args

    def energy_wh(self, scale=1.0):
        assert scale == 1.0
        return energy_before(*self.args)


def child_local(path: str, before: bool = False, library: bool = False) -> None:
    """Run the local engine once in this (fresh) process; print time, size and peak memory.

    With ``before``, the screening's yield stage uses the previous formulation
    (:func:`energy_before`), for a side-by-side run of the whole screening. With ``library``,
    every turbine of the built-in library is screened instead of the demo site's three.
    """
    import pandas as pd

    from engine.energy import aep as energy
    from engine import screening
    if before:
        energy.prepare_bins = lambda f, k, c, ti, skew, turbs, rho: _BeforeSetup(
            f, k, c, ti, skew, turbs, rho)
    ctx = _context()
    if library:
        from dataclasses import replace

        from engine.energy import turbines
        ctx = replace(ctx, turbines=tuple(turbines.load_library()))
    # Warm-up on a few rows: lazy imports and first calls are not the screening's cost.
    screening.screen_local(pd.read_csv(path, nrows=50), ctx)
    c0 = time.process_time()
    t0 = time.perf_counter()
    res = screening.screen_local(path, ctx)
    dt = time.perf_counter() - t0
    cpu = time.process_time() - c0
    table_mb = res.table.memory_usage(deep=True).sum() / 1e6
    peak_mb = peak_rss_mb()
    print(json.dumps({"seconds": dt, "cpu_seconds": cpu, "n": res.n_screened,
                      "turbines": len(ctx.turbines), "peak_mb": peak_mb, "table_mb": table_mb}))


def run_local(path: Path, before: bool = False, library: bool = False) -> dict:
    out = subprocess.run([sys.executable, __file__, "--child-local", str(path)]
                         + (["--before"] if before else [])
                         + (["--library"] if library else []),
                         capture_output=True, text=True, check=True, cwd=ROOT)
    return json.loads(out.stdout.strip().splitlines()[-1])


def _cluster(memory_limit=WORKER_MEMORY_LIMIT, n_workers=2):
    from distributed import LocalCluster
    return LocalCluster(n_workers=n_workers, threads_per_worker=1, processes=True,
                        dashboard_address=None, host="127.0.0.1", memory_limit=memory_limit)


class WorkerWatch:
    """Peak process memory of each Dask worker (from the scheduler's heartbeats, every 0.3 s)
    and the workers that came and went (a restarted worker has a new address)."""

    def __init__(self, client):
        import threading
        self.client, self.peak, self._stop = client, {}, False
        self.start_workers = set(client.scheduler_info()["workers"])
        self._thread = threading.Thread(target=self._run, daemon=True)

    def _run(self):
        while not self._stop:
            try:
                for addr, w in self.client.scheduler_info()["workers"].items():
                    self.peak[addr] = max(self.peak.get(addr, 0), w["metrics"]["memory"])
            except Exception:  # the scheduler is busy or a worker is restarting: look again
                pass
            time.sleep(0.3)

    def __enter__(self):
        self._thread.start()
        return self

    def __exit__(self, *exc):
        self._stop = True
        self._thread.join()

    def summary(self) -> dict:
        seen = set(self.peak) | self.start_workers
        return {"worker_peak_mb": max(self.peak.values(), default=0) / 1024 ** 2,
                "restarts": len(seen) - len(self.start_workers)}


def run_dask(paths: dict) -> dict:
    """Seconds, workers' peak memory and restarts per size on a 2-worker local cluster
    (results gathered to this process, partition by partition)."""
    from distributed import Client

    from engine import screening
    ctx = _context()
    results = {}
    with _cluster() as cluster, Client(cluster) as client:
        screening.screen_dask(paths[min(paths)], ctx, client)  # warm the workers' imports
        for n, path in sorted(paths.items()):
            with WorkerWatch(client) as watch:
                t0 = time.perf_counter()
                screening.screen_dask(path, ctx, client, part_bytes=SMALL_PART_BYTES)
                dt = time.perf_counter() - t0
            results[n] = dict(seconds=dt, **watch.summary())
            print(f"dask  {n:>9,d}: {dt:8.1f} s, workers' peak "
                  f"{results[n]['worker_peak_mb']:5.0f} MB of {WORKER_MEMORY_LIMIT / 1024 ** 2:.0f}"
                  f", {results[n]['restarts']} restart(s), load average "
                  f"{os.getloadavg()[0]:.1f}", flush=True)
    return results


def _one_turbine_context():
    from dataclasses import replace
    ctx = _context()
    return replace(ctx, turbines=ctx.turbines[:1])


def child_beyond(path: str, memory_limit: int, n_workers: int) -> None:
    """Screen ``path`` with one turbine on memory-limited workers that sort and spill their
    partitions; this (fresh) process merges them into the ranked CSV. Prints one JSON line."""
    from distributed import Client

    from engine import screening
    ctx1 = _one_turbine_context()
    out = Path(path).with_suffix(".out.csv")
    with _cluster(memory_limit, n_workers) as cluster, Client(cluster) as client:
        with WorkerWatch(client) as watch:
            t0 = time.perf_counter()
            res = screening.screen_dask(path, ctx1, client, out_csv=out,
                                        part_bytes=BEYOND_PART_BYTES)
            dt = time.perf_counter() - t0
        limits = [w["memory_limit"] for w in client.scheduler_info()["workers"].values()]
    with open(out, "rb") as fh:
        rows = sum(block.count(b"\n") for block in iter(lambda: fh.read(1 << 24), b"")) - 1
    peak_mb = peak_rss_mb()
    print(json.dumps(dict(seconds=dt, rows_written=rows, rows_read=res.n_rows, limits=limits,
                          caller_peak_mb=peak_mb, **watch.summary())))


def run_beyond(n: int, tmp: Path, memory_limit=BEYOND_WORKER_LIMIT, n_workers=2) -> None:
    """Screen ``n`` buildings with one turbine on workers allowed less memory in all than the
    table takes in memory (checked rows + results, measured on a sample), written by them."""
    import pandas as pd

    import make_district
    from engine import screening
    ctx1 = _one_turbine_context()
    path = make_district.write_district(n, tmp / f"district_{n}.csv")
    sample_rows = pd.read_csv(path, nrows=20_000)
    sample = screening.screen_local(sample_rows, ctx1)
    checked = screening.check_part(sample_rows.assign(line=0))
    per_row = (sample.table.memory_usage(deep=True).sum()
               + checked.memory_usage(deep=True).sum()) / len(sample.table)
    del sample, checked, sample_rows
    out = subprocess.run([sys.executable, __file__, "--child-beyond", str(path),
                          "--worker-mb", str(memory_limit // 1024 ** 2),
                          "--workers", str(n_workers)],
                         capture_output=True, text=True, cwd=ROOT)
    if out.returncode != 0:
        print(out.stderr[-4000:])
        raise SystemExit("beyond-memory run failed")
    r = json.loads(out.stdout.strip().splitlines()[-1])
    table_mb, allowed_mb = per_row * n / 1024 ** 2, sum(r["limits"]) / 1024 ** 2
    print(f"beyond memory: {n:,d} buildings x 1 turbine; in memory they take about "
          f"{table_mb:,.0f} MB (checked rows + results, {per_row:.0f} B per building, measured "
          f"on 20,000); {len(r['limits'])} Dask worker(s) allowed "
          f"{r['limits'][0] / 1024 ** 2:.0f} MB each ({allowed_mb:,.0f} MB in all: the table "
          f"is {table_mb / allowed_mb:.2f} x that); {BEYOND_PART_BYTES / 1024 ** 2:.0f} MB CSV "
          f"parts sorted and spilled by the workers, merged by the calling process")
    print(f"  {r['seconds']:.1f} s ({n / r['seconds']:,.0f} bldg/s); {r['rows_written']:,d} "
          f"ranked rows written of {r['rows_read']:,d} read; workers' peak "
          f"{r['worker_peak_mb']:.0f} MB, {r['restarts']} restart(s); calling process peak "
          f"RSS {r['caller_peak_mb']:.0f} MB (it also runs the scheduler); load average "
          f"{os.getloadavg()[0]:.1f}", flush=True)


def child_cli(path: str, out: str) -> None:
    """Run ``python -m engine screen PATH --out OUT`` (the local engine, streamed) in this
    fresh process; print seconds, rows and the peak resident memory (VmHWM) as one JSON line."""
    from engine import cli
    t0 = time.perf_counter()
    c0 = time.process_time()
    rc = cli.main(["screen", path, "--out", out, "--quiet"])
    dt, cpu = time.perf_counter() - t0, time.process_time() - c0
    with open(out, "rb") as fh:
        rows = sum(block.count(b"\n") for block in iter(lambda: fh.read(1 << 24), b"")) - 1
    print(json.dumps({"rc": rc, "seconds": dt, "cpu_seconds": cpu, "rows_written": rows,
                      "peak_mb": peak_rss_mb()}))


def run_big_csv(megabytes: float, tmp: Path) -> None:
    """A buildings CSV of about ``megabytes`` MB screened by the command's local engine in a
    fresh process: peak resident memory against the 1 GB target, time, rows written."""
    import make_district
    per_row = os.path.getsize(make_district.write_district(20_000, tmp / "probe.csv")) / 20_000
    n = int(megabytes * 1024 ** 2 / per_row)
    t0 = time.perf_counter()
    path = make_district.write_district(n, tmp / f"district_{n}.csv")
    size_mb = os.path.getsize(path) / 1024 ** 2
    print(f"big CSV: {n:,d} buildings, {size_mb:,.0f} MB, written in "
          f"{time.perf_counter() - t0:.0f} s", flush=True)
    out = subprocess.run([sys.executable, __file__, "--child-cli", str(path),
                          str(tmp / "big.out.csv")], capture_output=True, text=True, cwd=ROOT)
    if out.returncode != 0:
        print(out.stderr[-4000:])
        raise SystemExit("big-CSV run failed")
    r = json.loads(out.stdout.strip().splitlines()[-1])
    print(f"  local engine (streamed), 3 demo turbines: {r['seconds']:.1f} s wall, "
          f"{r['cpu_seconds']:.1f} s CPU ({n / r['seconds']:,.0f} bldg/s, "
          f"{3 * n / r['cpu_seconds']:,.0f} eval/s CPU); {r['rows_written']:,d} ranked rows "
          f"written; exit code {r['rc']}; peak RSS {r['peak_mb']:.0f} MB (target <= 1024 MB: "
          f"{'met' if r['peak_mb'] <= 1024 else 'NOT met'}); load average "
          f"{os.getloadavg()[0]:.1f}", flush=True)


def energy_before(f, k, c, ti, skew, turbs, rho):
    """Net-free energy [Wh] by the previous formulation: (P, T, S, J) curves gathered per row."""
    import numpy as np

    from engine.energy import aep as energy
    edges = energy.DEFAULT_EDGES_MS
    skew_f = np.stack([energy.skew_speed_factor(skew, t.axis) for t in turbs], axis=1)
    grid = energy.ti_grid_for(ti)
    table = energy.turbulent_curve_table_w(turbs, rho, grid, edges)
    w = energy.lookup_turbulent_curve_w(energy.bin_weights_w(table), grid, ti)
    k_b = np.ascontiguousarray(np.broadcast_to(k[:, None, :], skew_f.shape))
    g = np.exp(-energy.weibull_x(edges, k_b, c[:, None, :] * skew_f))
    per = np.einsum("...j,...j->...", g, w)
    return np.maximum(energy.HOURS_PER_YEAR * np.sum(f[:, None, :] * per, axis=-1), 0.0)


def energy_after(f, k, c, ti, skew, turbs, rho):
    """Energy [Wh] as the engine now computes it (the detailed assessment's function)."""
    from engine.energy import aep as energy
    return energy.prepare_bins(f, k, c, ti, skew, turbs, rho).energy_wh(1.0)


def run_energy(sizes) -> None:
    """Yield stage, previous and current formulation side by side on the same seeded arrays."""
    import numpy as np

    ctx = _context()
    turbs, chunk, S = ctx.turbines, int(ctx.settings.chunk_rows), 12
    print(f"yield stage, {len(turbs)} turbines, {S} sectors, chunks of {chunk} buildings "
          "(best of 3, interleaved):")
    print(f"{'buildings':>10} | {'before s':>8} {'eval/s':>10} | {'after s':>8} {'eval/s':>10} | "
          f"{'speed-up':>8} | {'max rel diff':>12}")
    for n in sizes:
        rng = np.random.default_rng(n)
        # Timing inputs only (seeded, in the ranges roof positions see).
        arrs = (rng.dirichlet(np.ones(S), n), rng.uniform(1.5, 2.6, (n, S)),
                rng.uniform(2.5, 8.0, (n, S)), rng.uniform(0.1, 0.45, (n, S)),
                rng.uniform(0.0, 25.0, (n, S)))
        best = {"before": math.inf, "after": math.inf}
        out = {}
        for _ in range(3):
            for name, fn in (("before", energy_before), ("after", energy_after)):
                t0 = time.perf_counter()
                out[name] = np.concatenate([fn(*(a[i:i + chunk] for a in arrs), turbs, 1.2)
                                            for i in range(0, n, chunk)])
                best[name] = min(best[name], time.perf_counter() - t0)
        diff = float(np.max(np.abs(out["after"] - out["before"])
                            / np.maximum(np.abs(out["before"]), 1e-300)))
        b, a = best["before"], best["after"]
        print(f"{n:>10,d} | {b:8.2f} {n * len(turbs) / b:10.0f} | {a:8.2f} "
              f"{n * len(turbs) / a:10.0f} | {b / a:8.2f} | {diff:12.1e}", flush=True)


def exponent(sizes, seconds) -> float:
    """Slope b of log t = a + b log N (least squares)."""
    import numpy as np
    return float(np.polyfit(np.log(sizes), np.log(seconds), 1)[0])


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--sizes", default="", help="comma-separated sizes instead (a trial run)")
    ap.add_argument("--child-local")
    ap.add_argument("--child-beyond", help=argparse.SUPPRESS)
    ap.add_argument("--child-cli", nargs=2, help=argparse.SUPPRESS)
    ap.add_argument("--big-csv", type=float, default=None, nargs="?", const=200.0,
                    help="only the command's local engine on a buildings CSV of this many MB "
                         "(default 200), with its peak memory")
    ap.add_argument("--before", action="store_true", help=argparse.SUPPRESS)
    ap.add_argument("--library", action="store_true", help=argparse.SUPPRESS)
    ap.add_argument("--compare-local", action="store_true",
                    help="only the local engine, previous and current yield stage side by side")
    ap.add_argument("--energy-only", action="store_true",
                    help="only the yield stage, previous and current formulation")
    ap.add_argument("--beyond", type=int, default=None, nargs="?", const=BEYOND_BUILDINGS,
                    help="only the beyond-memory run, with this many buildings (default "
                         f"{BEYOND_BUILDINGS:,d})")
    ap.add_argument("--worker-mb", type=int, default=BEYOND_WORKER_LIMIT // 1024 ** 2,
                    help="memory limit of each Dask worker in the beyond-memory run [MB]")
    ap.add_argument("--workers", type=int, default=2,
                    help="Dask workers in the beyond-memory run")
    args = ap.parse_args()
    if args.child_local:
        child_local(args.child_local, args.before, args.library)
        return
    if args.child_cli:
        child_cli(*args.child_cli)
        return
    if args.child_beyond:
        child_beyond(args.child_beyond, args.worker_mb * 1024 ** 2, args.workers)
        return
    import make_district

    tmp = Path(tempfile.mkdtemp(prefix="perch-bench-"))
    print(f"machine: {os.cpu_count()} logical cores; load average at start "
          f"{os.getloadavg()[0]:.1f}; tables in {tmp}", flush=True)
    if args.big_csv is not None:
        run_big_csv(args.big_csv, tmp)
        print(f"load average at the end {os.getloadavg()[0]:.1f}")
        return
    if args.beyond is not None:
        run_beyond(args.beyond, tmp, args.worker_mb * 1024 ** 2, args.workers)
        print(f"load average at the end {os.getloadavg()[0]:.1f}")
        return
    sizes = [10 ** 3, 10 ** 4, 10 ** 5] if args.quick else [10 ** 4, 10 ** 5, 10 ** 6]
    if args.sizes:
        sizes = sorted(int(x) for x in args.sizes.split(","))
    run_energy([n for n in sizes if n <= 10 ** 5])
    if args.energy_only:
        print(f"load average at the end {os.getloadavg()[0]:.1f}")
        return
    paths = {n: make_district.write_district(n, tmp / f"district_{n}.csv") for n in sizes}
    if args.compare_local:
        print(f"{'buildings':>10} | {'before s':>8} {'eval/s':>9} | {'after s':>8} {'eval/s':>9} "
              f"| {'speed-up':>8}   (whole local screening, fresh process each)")
        for n in sizes:
            b, a = run_local(paths[n], before=True), run_local(paths[n])
            T = a["turbines"]
            print(f"{n:>10,d} | {b['seconds']:8.2f} {n * T / b['seconds']:9.0f} | "
                  f"{a['seconds']:8.2f} {n * T / a['seconds']:9.0f} | "
                  f"{b['seconds'] / a['seconds']:8.2f}", flush=True)
        print(f"load average at the end {os.getloadavg()[0]:.1f}")
        return
    local = {}
    for n in sizes:
        local[n] = run_local(paths[n])
        print(f"local {n:>9,d}: {local[n]['seconds']:8.1f} s, peak {local[n]['peak_mb']:7.0f} MB",
              flush=True)
    # The whole library right after the local runs, before the Dask cluster starts (its
    # workers' start and teardown would share the cores with this run).
    mid = max(n for n in sizes if n <= 10 ** 5) if min(sizes) <= 10 ** 5 else sizes[0]
    lib = run_local(paths[mid], library=True)
    dask_s = run_dask(paths)
    T = local[sizes[0]]["turbines"]
    print()
    print(f"{'buildings':>10} | {'local s':>8} {'bldg/s':>9} {'eval/s/core':>12} | "
          f"{'dask-2 s':>8} {'bldg/s':>9} {'eval/s/core':>12} {'wkr MB':>7} | {'dask/local':>10}")
    for n in sizes:
        ls, ds = local[n]["seconds"], dask_s[n]["seconds"]
        print(f"{n:>10,d} | {ls:8.1f} {n / ls:9.0f} {n * T / ls:12.0f} | "
              f"{ds:8.1f} {n / ds:9.0f} {n * T / ds / 2:12.0f} "
              f"{dask_s[n]['worker_peak_mb']:7.0f} | {ls / ds:10.2f}")
    print(f"(dask-2: 2 process workers x 1 thread, {WORKER_MEMORY_LIMIT / 1024 ** 2:.0f} MB each, "
          f"loopback; results gathered partition by partition; wkr MB = the workers' peak; "
          f"restarts: {sum(d['restarts'] for d in dask_s.values())})")
    b_local = exponent(sizes, [local[n]["seconds"] for n in sizes])
    b_dask = exponent(sizes, [dask_s[n]["seconds"] for n in sizes])
    print(f"growth exponent of time with size: local {b_local:.3f}, dask {b_dask:.3f} "
          f"(target <= 1.05)")
    best = max(n * T / local[n]["seconds"] for n in sizes)
    best_cpu = max(n * T / local[n]["cpu_seconds"] for n in sizes)
    print(f"building-turbine evaluations per second per core, local ({T} demo turbines, two "
          f"rotor-axis types): {best:,.0f} wall, {best_cpu:,.0f} CPU "
          f"(target >= 200,000; ratio {best / 200000:.3f} wall, {best_cpu / 200000:.3f} CPU)")
    TL = lib["turbines"]
    print(f"  the same with all {TL} library turbines, {mid:,d} buildings: "
          f"{lib['seconds']:.2f} s, {mid * TL / lib['seconds']:,.0f} wall, "
          f"{mid * TL / lib['cpu_seconds']:,.0f} CPU evaluations per second (the yield's "
          "exponentials are shared by the turbines of one axis type, so more turbines cost "
          "little more)")
    top = sizes[-1]
    print(f"peak memory, local, {top:,d} buildings: {local[top]['peak_mb']:.0f} MB "
          f"(target < 2048 MB; result table alone {local[top]['table_mb']:.0f} MB)")
    print(f"load average at the end {os.getloadavg()[0]:.1f} (other work on the machine slows "
          "every figure alike; ratios are from this one run)")


if __name__ == "__main__":
    main()
