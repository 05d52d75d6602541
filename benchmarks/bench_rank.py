"""Rank the demo site many times; compare the vectorised bins sum with a nested-loop version.

Both compute the same IEC 61400-12-1 method-of-bins sum over positions x turbines x sectors x
bins on the demo site's effective climate, side by side in one run, and must agree.
Run: ``python benchmarks/bench_rank.py``.
"""
from __future__ import annotations

import math
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from engine.climate import air  # noqa: E402
from engine.energy import aep as energy  # noqa: E402
from engine.flow import effective as flow  # noqa: E402
from engine.chain import pipeline  # noqa: E402
from engine.io import sitefile  # noqa: E402


def nested_loop_aep_wh(eff, turbines, edges):
    """The same sum written as plain Python loops (reference for speed and value)."""
    out = np.zeros((eff.n_positions, len(turbines)))
    for i in range(eff.n_positions):
        for t, tur in enumerate(turbines):
            pw = [float(energy.power_at_speed_w(v, tur.curve_speed_ms, tur.curve_power_w,
                                                tur.cut_in_ms, tur.cut_out_ms)) for v in edges]
            total = 0.0
            for s in range(len(eff.sector_deg)):
                k, c, f = eff.weibull_k[i, s], eff.weibull_c_ms[i, s], eff.frequency[i, s]
                prev_F = 1.0 - math.exp(-(edges[0] / c) ** k)
                acc = 0.0
                for j in range(1, len(edges)):
                    F = 1.0 - math.exp(-(edges[j] / c) ** k)
                    acc += (F - prev_F) * 0.5 * (pw[j - 1] + pw[j])
                    prev_F = F
                total += f * acc
            out[i, t] = energy.HOURS_PER_YEAR * total
    return out


def timeit(fn, repeat):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return float(np.median(times))


def main():
    a = sitefile.load(ROOT / "demo_sites" / "larkspur_yard.json")
    eff = flow.effective_climate(a, air.site_air_density_kgm3(a.site))
    edges = energy.DEFAULT_EDGES_MS
    pw = energy.curve_on_edges_w(a.turbines, edges)

    def vectorised():
        return energy.aep_method_of_bins_wh(eff.frequency[:, None, :], eff.weibull_k[:, None, :],
                                            eff.weibull_c_ms[:, None, :], pw[None, :, None, :],
                                            edges)

    v = vectorised()
    loop = nested_loop_aep_wh(eff, a.turbines, list(edges))
    assert np.allclose(v, loop, rtol=1e-9), "vectorised and loop sums differ"
    t_vec = timeit(vectorised, 50)
    t_loop = timeit(lambda: nested_loop_aep_wh(eff, a.turbines, list(edges)), 3)
    t_full = timeit(lambda: pipeline.evaluate(a), 20)
    n = eff.n_positions * len(a.turbines)
    print(f"demo site: {eff.n_positions} positions x {len(a.turbines)} turbines x "
          f"{len(eff.sector_deg)} sectors x {len(edges) - 1} bins")
    print(f"{'step':<34}{'median time':>14}")
    print(f"{'bins sum, vectorised':<34}{t_vec * 1e3:>11.3f} ms")
    print(f"{'bins sum, nested loops':<34}{t_loop * 1e3:>11.3f} ms")
    print(f"{'full ranking (evaluate)':<34}{t_full * 1e3:>11.3f} ms")
    print(f"ratio nested-loop / vectorised: {t_loop / t_vec:,.0f}x  ({n} position-turbine rows)")


if __name__ == "__main__":
    main()
