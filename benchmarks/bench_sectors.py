"""Per-sector surroundings: cost beside the square neighbourhood, and the array forms beside
plain loops, side by side in one run.

1. The screening of a seeded district (``demo_sites/make_district.py``) with the square
   neighbourhood, then with per-sector surroundings (fetch 150 m and 300 m, without and with
   the upwind neighbours' wakes), and tiled with a halo (300 m): CPU seconds and the ratio to
   the square.
2. ``sector_morphometry_points`` (whole blocks by their centres, numpy) beside the
   footprint-clipping form (shapely, one wedge at a time) on one point and 2,000 blocks.
3. ``roof_candidate_arrays`` beside ``roof_candidate_points`` called roof by roof.

Run: ``python benchmarks/bench_sectors.py [N]`` (N buildings, default 10,000).
"""
from __future__ import annotations

import sys
import time
from dataclasses import replace
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "demo_sites"))

from engine import screening  # noqa: E402
from engine.core.model import Building  # noqa: E402
from engine.flow import buildings as geom  # noqa: E402
from engine.flow import roof_candidates as rc  # noqa: E402
from engine.flow import sector_roughness as sr  # noqa: E402
from engine.io import sitefile  # noqa: E402
from engine.screening import tiled  # noqa: E402
import make_district  # noqa: E402


def cpu(fn):
    t0 = time.process_time()
    out = fn()
    return time.process_time() - t0, out


def screening_costs(n: int) -> None:
    ctx = screening.context_from_assessment(sitefile.load(ROOT / "demo_sites" / "larkspur_yard.json"))
    frame = make_district.make_district(n)
    base, _ = cpu(lambda: screening.screen_local(frame, ctx))
    print(f"screening {n:,} buildings (CPU s, ratio to the square neighbourhood)")
    print(f"  square 220 m          {base:7.2f} s  1.00")
    for fetch in (150.0, 300.0):
        for shelter in (False, True):
            c = replace(ctx, transfer=replace(ctx.transfer, sector_morphometry=True,
                                              sector_fetch_m=fetch),
                        settings=replace(ctx.settings, upwind_shelter=shelter))
            t, res = cpu(lambda: screening.screen_local(frame, c))
            share = (res.table["suitability"] == "worth a visit").mean()
            label = "+ wakes" if shelter else "no wakes"
            print(f"  sectors, fetch {fetch:3.0f} m, {label:8s} {t:7.2f} s  {t / base:4.2f}   "
                  f"worth a visit {share * 100:.1f} %")
    c = replace(ctx, transfer=replace(ctx.transfer, sector_morphometry=True))
    for tile in (500.0, 2000.0):
        t, _ = cpu(lambda: tiled.screen_tiled(frame, c, tile_m=tile))
        print(f"  tiled {tile:4.0f} m + 300 m halo {t:6.2f} s  {t / base:4.2f}  (halo rows "
              f"read and checked, not screened: ((L + 600)/L)² = {((tile + 600) / tile) ** 2:.2f}"
              "x the rows)")


def morphometry_costs() -> None:
    rng = np.random.default_rng(7)
    r, t = rng.uniform(40, 280, 2000), rng.uniform(0, 2 * np.pi, 2000)
    blocks = [Building(f"b{i}", r[i] * np.sin(t[i]), r[i] * np.cos(t[i]), 4.0, 3.0, 8.0)
              for i in range(2000)]
    arr = geom.building_arrays(blocks)
    ta, got = cpu(lambda: sr.sector_morphometry_points([0.0], [0.0], arr, 12, 300.0))
    tb, ref = cpu(lambda: sr.sector_morphometry(blocks, 12, fetch_m=300.0))
    diff = np.max(np.abs(got[0][0] - ref[0]) / ref[0])
    print(f"morphometry, 1 point x 2,000 blocks x 12 sectors: arrays {ta * 1e3:.1f} ms, "
          f"shapely clipping {tb * 1e3:.1f} ms ({tb / max(ta, 1e-9):.0f}x); largest λp "
          f"difference {diff * 100:.2f} %")


def candidate_costs() -> None:
    rng = np.random.default_rng(3)
    n = 5000
    L, W = rng.uniform(8, 60, n), rng.uniform(6, 30, n)
    bs = [Building(f"b{i}", 0.0, 0.0, float(L[i]), float(W[i]), 10.0) for i in range(n)]
    ta, (blk, _, _) = cpu(lambda: rc.roof_candidate_arrays(L, W, 4.0, 2.0))
    tb, pts = cpu(lambda: [rc.roof_candidate_points(b, 4.0, 2.0) for b in bs])
    same = len(blk) == sum(len(p) for p in pts)
    print(f"candidates on {n:,} roofs ({len(blk):,} points): arrays {ta * 1e3:.1f} ms, roof "
          f"by roof {tb * 1e3:.1f} ms ({tb / max(ta, 1e-9):.0f}x); same count: {same}")


if __name__ == "__main__":
    screening_costs(int(sys.argv[1]) if len(sys.argv) > 1 else 10_000)
    morphometry_costs()
    candidate_costs()
