"""Money of 50 positions x 6 turbines: hourly self-consumption, cost parts, NPV, payback.

Measures, side by side in one run, :func:`engine.energy.economics.position_money` (vectorised,
in place over hours and positions) and a plain-loop version of the self-consumed share (a
Python loop over rows and hours on the same synthetic series), and checks they agree. The case
is bench_energy's invented, seeded one. Target: money under 30 ms CPU for 300 rows, at least
50x the loops. Run: ``python benchmarks/bench_money.py``.
"""
from __future__ import annotations

import bisect
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

from bench_energy import build_case, timeit  # noqa: E402
from engine.climate.weibull import mixture_mean_ms  # noqa: E402
from engine.energy import aep as energy  # noqa: E402
from engine.energy import economics, selfuse  # noqa: E402


def inputs(a, eff):
    y = energy.yield_arrays(eff.frequency, eff.weibull_k, eff.weibull_c_ms,
                            eff.turbulence_intensity, eff.inflow_skew_deg, a.turbines,
                            eff.air_density_kgm3, a.losses)
    mean = mixture_mean_ms(eff.frequency, eff.weibull_k, eff.weibull_c_ms)
    k = np.sum(eff.frequency * eff.weibull_k, axis=-1)
    return y.net_wh / 1000.0, mean, k


def vectorised(a, eff, net, mean, k):
    pos = a.positions
    return economics.position_money(net, mean, k, [p.kind for p in pos],
                                    [p.mast_height_m for p in pos], a.turbines, a.economics,
                                    a.climate.monthly_mean_ms)


def loop_shares(a, net, mean, k):
    """Self-consumed share row by row, hour by hour (plain Python)."""
    e = a.economics
    load = selfuse.typical_load_kwh(e.load_profile, e.annual_load_kwh, e.load_hourly_kwh).tolist()
    months = a.climate.monthly_mean_ms if len(a.climate.monthly_mean_ms) == 12 else None
    out = np.zeros(net.shape)
    for i in range(net.shape[0]):
        unit = selfuse.unit_speed_series([k[i]], months)[0].tolist()
        for j, tur in enumerate(a.turbines):
            xs, ps = list(tur.curve_speed_ms), list(tur.curve_power_w)
            power = []
            for u in unit:
                v = mean[i] * u
                if v <= xs[0] or v >= xs[-1]:
                    power.append(0.0)
                    continue
                m = bisect.bisect_right(xs, v)
                w = (v - xs[m - 1]) / (xs[m] - xs[m - 1])
                power.append(ps[m - 1] + w * (ps[m] - ps[m - 1]))
            total = sum(power)
            if total <= 0 or net[i, j] <= 1e-9:
                continue
            used = sum(min(p * net[i, j] / total, ld) for p, ld in zip(power, load))
            out[i, j] = used / net[i, j]
    return out


def main():
    a, eff = build_case()
    net, mean, k = inputs(a, eff)
    vec = vectorised(a, eff, net, mean, k)
    t0, c0 = time.perf_counter(), time.process_time()
    ref = loop_shares(a, net, mean, k)
    t_loop, c_loop = time.perf_counter() - t0, time.process_time() - c0
    diff = float(np.max(np.abs(vec["self_consumed_share"] - ref)))
    assert diff < 1e-3, f"vectorised and loop shares differ by {diff}"
    t_med, _ = timeit(lambda: vectorised(a, eff, net, mean, k), 20)
    c_med, _ = timeit(lambda: vectorised(a, eff, net, mean, k), 20, time.process_time)
    c_share, _ = timeit(lambda: selfuse.self_consumed_share(
        mean, k, net, a.turbines, a.economics, a.climate.monthly_mean_ms), 20, time.process_time)
    P, T = net.shape
    print(f"case: {P} positions x {T} turbines x 8760 hours")
    print(f"{'step':<46}{'wall':>11}{'CPU':>11}")
    print(f"{'money, vectorised (median of 20)':<46}{t_med * 1e3:>8.1f} ms{c_med * 1e3:>8.1f} ms")
    print(f"{'  of which self-consumption (median)':<46}{'':>11}{c_share * 1e3:>8.1f} ms")
    print(f"{'self-consumption, plain loops (one run)':<46}{t_loop * 1e3:>8.0f} ms"
          f"{c_loop * 1e3:>8.0f} ms")
    print(f"largest difference of the shares: {diff:.1e} (0.01 m/s curve table, float32)")
    print(f"ratio loop / vectorised self-consumption: {c_loop / c_share:,.0f}x CPU; "
          "target >= 50x")
    print(f"target < 30 ms: {'met' if c_med < 0.03 else 'NOT met'} on CPU time "
          f"(median {c_med * 1e3:.1f} ms)")


if __name__ == "__main__":
    main()
