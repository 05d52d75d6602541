"""Footprint screening on each engine, side by side in one run: local, tiles of two sizes,
and a two-worker loopback Dask cluster (threads in this process), wall and CPU seconds and
the ratio to the local run; the tables are checked equal.

A seeded invented estate of N rectangular blocks on a jittered grid 60 m apart (UTM zone
31N offshore, nowhere real), per-sector surroundings with a 150 m fetch and the upwind wakes
on, candidates every 5 m on each roof.

Run: ``python benchmarks/bench_footprints.py [N]`` (default 900 blocks).
"""
from __future__ import annotations

import json
import math
import sys
import time
from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from engine import screening  # noqa: E402
from engine.io import sitefile  # noqa: E402
from engine.screening import positions as sp  # noqa: E402


def estate(n: int, seed: int = 7) -> bytes:
    """GeoJSON of ``n`` invented blocks (seeded)."""
    rng = np.random.default_rng(seed)
    side = int(math.ceil(math.sqrt(n)))
    feats = []
    for k in range(n):
        i, j = divmod(k, side)
        cx, cy = 500000.0 + 60.0 * i + rng.uniform(-8, 8), 6000000.0 + 60.0 * j + rng.uniform(-8, 8)
        L, W, t = rng.uniform(16, 40), rng.uniform(10, 18), math.radians(rng.uniform(0, 180))
        u = np.array([math.sin(t), math.cos(t)]) * L / 2
        v = np.array([math.cos(t), -math.sin(t)]) * W / 2
        c = np.array([cx, cy])
        ring = [c + u + v, c + u - v, c - u - v, c - u + v]
        feats.append({"type": "Feature", "properties": {"ref": f"b{k}", "h": round(
            rng.uniform(6, 30), 1)}, "geometry": {"type": "Polygon", "coordinates": [
                [[float(p[0]), float(p[1])] for p in ring + [ring[0]]]]}})
    return json.dumps({"type": "FeatureCollection",
                       "crs": {"type": "name", "properties": {"name": "EPSG:32631"}},
                       "features": feats}).encode()


def timed(fn):
    w0, c0 = time.perf_counter(), time.process_time()
    out = fn()
    return time.perf_counter() - w0, time.process_time() - c0, out


def main(n: int) -> None:
    from distributed import Client, LocalCluster

    data = estate(n)
    c = screening.context_from_assessment(sitefile.load(ROOT / "demo_sites" /
                                                        "larkspur_yard.json"))
    ctx = replace(c, transfer=replace(c.transfer, sector_morphometry=True, sector_fetch_m=150.0),
                  settings=replace(c.settings, upwind_shelter=True, chunk_rows=2000))
    run = lambda **kw: sp.screen_footprints(data, ctx, height_field="h",  # noqa: E731
                                            id_field="ref", spacing_m=5.0, **kw)
    rows = [("local", *timed(run))]
    for tile in (300.0, 900.0):
        rows.append((f"tiles of {tile:g} m", *timed(lambda: run(tile_m=tile))))
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=False, protocol="tcp",
                      host="127.0.0.1", dashboard_address=None) as cluster, \
            Client(cluster) as client:
        rows.append(("Dask, 2 thread workers", *timed(lambda: run(client=client))))
    base = rows[0]
    print(f"{n} blocks, {len(base[3].positions)} candidate positions")
    print(f"{'engine':<26}{'wall s':>9}{'CPU s':>9}{'wall / local':>14}{'same table':>12}")
    for name, wall, cpu_s, got in rows:
        same = (got.positions.equals(base[3].positions)
                and got.buildings.equals(base[3].buildings))
        print(f"{name:<26}{wall:9.2f}{cpu_s:9.2f}{wall / base[1]:14.2f}{str(same):>12}")
    print("(no speed target: the Dask and tiled engines are there for tables one process "
          "cannot hold; on a shared 2-core machine compare CPU seconds)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 900)
