"""Re-rank 50 positions x 6 turbines x 12 sectors with turbulence correction and P90.

Measures, side by side in one run, the vectorised chain (:func:`engine.chain.pipeline.energy_table`
and :func:`engine.chain.ranking.rank`) and a straightforward nested-loop implementation of the same
numbers (density-corrected curve averaged over turbulence, skew, method of bins, losses,
speed sensitivity, P75/P90 secants, LCOE, payback, ranking by P90). The two must agree.
The climate is invented (seeded); targets: vectorised re-rank under 50 ms, at least 100x the
loops. Run: ``python benchmarks/bench_energy.py``.
"""
from __future__ import annotations

import dataclasses
import math
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from engine.climate import air  # noqa: E402
from engine.energy import economics  # noqa: E402
from engine.energy import aep as energy  # noqa: E402
from engine.flow import effective as flow  # noqa: E402
from engine.core import model  # noqa: E402
from engine.chain import pipeline  # noqa: E402
from engine.chain import ranking  # noqa: E402
from engine.io import sitefile  # noqa: E402
from engine.energy import turbines, uncertainty  # noqa: E402

SEED = 20261205
N_POSITIONS = 50


def build_case():
    """The demo site with 50 invented mast positions, 6 library turbines and a varied climate."""
    rng = np.random.default_rng(SEED)
    a = sitefile.load(ROOT / "demo_sites" / "larkspur_yard.json")
    lib = turbines.load_library()[:6]
    positions = tuple(model.Position(f"p{i:02d}", "mast", float(rng.uniform(-80, 80)),
                                     float(rng.uniform(-80, 80)), float(rng.uniform(4, 14)))
                      for i in range(N_POSITIONS))
    a = dataclasses.replace(a, positions=positions, turbines=lib, spot_readings=(),
                            ranking=model.RankingSettings(objective="p90_aep"))
    eff = flow.effective_climate(a, air.site_air_density_kgm3(a.site))
    P, S = eff.frequency.shape
    eff = dataclasses.replace(
        eff, speed_factor=rng.uniform(0.8, 1.3, (P, S)),
        turbulence_intensity=rng.uniform(0.10, 0.40, (P, S)),
        inflow_skew_deg=rng.uniform(0.0, 25.0, (P, S)))
    return a, eff


def vectorised(a, eff):
    return ranking.rank(pipeline.energy_table(a, eff), a.ranking)


def _piece_average(knots, alpha, beta, v, s):
    """E[P(v + X)], X ~ N(0, s²), summed piece by piece with math.erf (the loop version)."""
    if s <= 0:
        for k in range(len(alpha)):
            if knots[k] <= v <= knots[k + 1]:
                return alpha[k] + beta[k] * v
        return 0.0
    total = 0.0
    prev_c = prev_p = None
    for k in range(len(knots)):
        z = (knots[k] - v) / s
        c = 0.5 * (1.0 + math.erf(z / math.sqrt(2.0)))
        p = math.exp(-0.5 * z * z) / math.sqrt(2.0 * math.pi)
        if k > 0:
            dc, dp = c - prev_c, p - prev_p
            total += alpha[k - 1] * dc + beta[k - 1] * (v * dc - s * dp)
        prev_c, prev_p = c, p
    return total


def nested_loops(a, eff):
    """The same re-rank written as plain loops over positions, turbines, sectors and bins."""
    edges = [float(e) for e in energy.DEFAULT_EDGES_MS]
    rho = eff.air_density_kgm3
    keep = energy.net_fraction(a.losses)
    sv = uncertainty.combined_speed_uncertainty(a.uncertainty)
    upc = a.uncertainty.energy_power_curve
    z75, z90 = uncertainty.exceedance_z(75), uncertainty.exceedance_z(90)
    e = a.economics
    crf = economics.capital_recovery_factor(e.discount_rate, e.lifetime_years)
    rows = []
    for i in range(eff.n_positions):
        for tur in a.turbines:
            knots, alpha, beta = (list(x) for x in energy.curve_segments(tur, rho))
            n = energy.SKEW_POWER_EXPONENT[tur.axis]
            sectors = []
            for s in range(len(eff.sector_deg)):
                ti = float(eff.turbulence_intensity[i, s])
                curve = [_piece_average(knots, alpha, beta, v, ti * v) for v in edges]
                skew = math.radians(min(abs(float(eff.inflow_skew_deg[i, s])), 90.0))
                c = float(eff.weibull_c_ms[i, s]) * math.cos(skew) ** (n / 3.0)
                sectors.append((float(eff.frequency[i, s]), float(eff.weibull_k[i, s]), c, curve))

            def aep(scale):
                total = 0.0
                for f, k, c, curve in sectors:
                    cc = max(c * scale, 1e-9)
                    prev = 0.0
                    acc = 0.0
                    for j in range(1, len(edges)):
                        F = 1.0 - math.exp(-(edges[j] / cc) ** k)
                        acc += (F - prev) * 0.5 * (curve[j - 1] + curve[j])
                        prev = F
                    total += f * acc
                return energy.HOURS_PER_YEAR * total

            gross = aep(1.0)
            h = energy.SENSITIVITY_STEP
            up, down = aep(math.exp(h)), aep(math.exp(-h))
            local = (math.log(up) - math.log(down)) / (2 * h) if up > 0 and down > 0 else 0.0
            pv = {}
            for lv, z in ((75, z75), (90, z90)):
                low = aep(math.exp(-z * sv))
                sens = (math.log(gross) - math.log(low)) / (z * sv) if gross > 0 and low > 0 \
                    else local
                pv[lv] = gross * keep * math.exp(-z * math.sqrt((sens * sv) ** 2 + upc ** 2))
            net_kwh = gross * keep / 1000.0
            lcoe = (tur.installed_cost * crf + e.om_cost_per_year) / net_kwh if net_kwh > 0 \
                else math.inf
            saving = net_kwh * e.tariff_per_kwh - e.om_cost_per_year
            payback = tur.installed_cost / saving if saving > 0 else math.inf
            rows.append((a.positions[i].id, tur.id, gross / 1000.0, pv[90] / 1000.0, lcoe, payback))
    rows.sort(key=lambda r: (-r[3], r[0], r[1]))
    return rows


def timeit(fn, repeat, clock=time.perf_counter):
    """Median and best of ``repeat`` runs on ``clock`` [s]."""
    times = []
    for _ in range(repeat):
        t0 = clock()
        fn()
        times.append(clock() - t0)
    return float(np.median(times)), float(np.min(times))


def main():
    a, eff = build_case()
    vec = vectorised(a, eff)
    t0, c0 = time.perf_counter(), time.process_time()
    loop = nested_loops(a, eff)
    t_loop, c_loop = time.perf_counter() - t0, time.process_time() - c0
    by_key = vec.set_index(["position_id", "turbine_id"])
    gross = np.array([by_key.loc[(p, t), "gross_aep_kwh"] for p, t, *_ in loop])
    p90 = np.array([by_key.loc[(p, t), "p90_aep_kwh"] for p, t, *_ in loop])
    d_gross = float(np.max(np.abs(gross / np.array([r[2] for r in loop]) - 1)))
    d_p90 = float(np.max(np.abs(p90 / np.array([r[3] for r in loop]) - 1)))
    assert d_gross < 2e-3 and d_p90 < 2e-3, "vectorised and loop results differ"
    t_med, t_min = timeit(lambda: vectorised(a, eff), 30)
    # CPU time of this process: on a shared machine wall time also counts other work.
    c_med, c_min = timeit(lambda: vectorised(a, eff), 30, time.process_time)
    t_core, _ = timeit(lambda: energy.yield_arrays(
        eff.frequency, eff.weibull_k, eff.weibull_c_ms, eff.turbulence_intensity,
        eff.inflow_skew_deg, a.turbines, eff.air_density_kgm3, a.losses), 30, time.process_time)
    P, T, S = eff.n_positions, len(a.turbines), len(eff.sector_deg)
    print(f"case: {P} positions x {T} turbines x {S} sectors x "
          f"{len(energy.DEFAULT_EDGES_MS) - 1} bins; turbulence correction, skew, P75/P90")
    print(f"{'step':<46}{'wall':>11}{'CPU':>11}")
    print(f"{'re-rank, vectorised (median of 30)':<46}{t_med * 1e3:>8.1f} ms{c_med * 1e3:>8.1f} ms")
    print(f"{'re-rank, vectorised (best of 30)':<46}{t_min * 1e3:>8.1f} ms{c_min * 1e3:>8.1f} ms")
    print(f"{'  of which yield + sensitivity (median)':<46}{'':>11}{t_core * 1e3:>8.1f} ms")
    print(f"{'re-rank, nested loops (one run)':<46}{t_loop * 1e3:>8.0f} ms{c_loop * 1e3:>8.0f} ms")
    print(f"largest relative difference: gross {d_gross:.1e}, P90 {d_p90:.1e} "
          "(TI table interpolation)")
    print(f"ratio nested-loop / vectorised (median): {t_loop / t_med:,.0f}x wall, "
          f"{c_loop / c_med:,.0f}x CPU; target >= 100x")
    print(f"target < 50 ms: {'met' if c_med < 0.05 else 'NOT met'} on CPU time "
          f"(median {c_med * 1e3:.1f} ms; wall {t_med * 1e3:.1f} ms)")


if __name__ == "__main__":
    main()
