"""Print what the measured-climate choices do to the energy at the invented demo's roof logger.

Everything here is invented demo data (``records/roof_logger_two_heights.csv`` on the mill
roof of ``larkspur_yard.json``); the figures size the model choices documented in
docs/climate.md and are never check values. The position ``mill-centre`` gets its mast set
to the logger's top height so the logger's climate is used there as measured.

Run ``python demo_sites/show_measured_effects.py`` from the repository's root.
"""
from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from engine.chain import pipeline  # noqa: E402
from engine.climate import site_record  # noqa: E402
from engine.climate.logger import logger_climate  # noqa: E402
from engine.energy import series_yield as sy  # noqa: E402
from engine.energy import uncertainty  # noqa: E402
from engine.io import sitefile  # noqa: E402

LOGGER = ROOT / "demo_sites" / "records" / "roof_logger_two_heights.csv"
SITE = ROOT / "demo_sites" / "larkspur_yard.json"
GRID = ROOT / "demo_sites" / "records" / "reanalysis_grid.nc"
POSITION = "mill-centre"


def logger_assessment(distance_constant_m):
    """The demo assessment with the logger's climate, measured at ``POSITION``."""
    a = sitefile.load(SITE)
    pos = next(p for p in a.positions if p.id == POSITION)
    roof = next(b for b in a.buildings if b.id == pos.building_id)
    lc = logger_climate(LOGGER.read_bytes(), LOGGER.name, base_height_m=roof.height_m,
                        position_id=POSITION, roughness_m=a.site.terrain_roughness_m,
                        distance_constant_m=distance_constant_m)
    moved = dataclasses.replace(pos, mast_height_m=lc.climate.height_m - roof.height_m)
    positions = tuple(moved if p.id == POSITION else p for p in a.positions)
    return dataclasses.replace(a, climate=lc.climate, positions=positions), lc


def gross_at_logger(a):
    """Gross energy per turbine at the logger [kWh/yr] and the evaluation."""
    ev = pipeline.evaluate(a)
    t = ev.table[ev.table.position_id == POSITION].set_index("turbine_id")
    return t.gross_aep_kwh, ev


def main():
    a, lc = logger_assessment(2.5)
    a0, lc0 = logger_assessment(0.0)
    g, ev = gross_at_logger(a)
    g0, _ = gross_at_logger(a0)
    model_ti = dataclasses.replace(a, climate=dataclasses.replace(a.climate,
                                                                  turbulence_intensity=()))
    gm, evm = gross_at_logger(model_ti)
    i = list(ev.climate.position_ids).index(POSITION)
    freq = ev.climate.frequency[i]
    print(f"measured TI (sector mean): with the cup correction "
          f"{np.mean(lc.climate.turbulence_intensity):.3f}, without "
          f"{np.mean(lc0.climate.turbulence_intensity):.3f}; frequency-weighted at the logger "
          f"{np.sum(freq * ev.climate.turbulence_intensity[i]):.3f}, the model's "
          f"{np.sum(freq * evm.climate.turbulence_intensity[i]):.3f}")
    print("cup correction, gross change:", (g / g0 - 1).round(4).to_dict())
    print("measured TI vs model TI, gross change:", (g / gm - 1).round(4).to_dict())
    t, v, d = lc.series
    out = sy.series_yield(t, v, d, a.climate, ev.climate, a.turbines, a.losses,
                          energy_settings=a.energy)
    print("series / exact Weibull - 1 at the logger:",
          {tb.id: round(float(x), 4) for tb, x in zip(a.turbines, out.difference[i])})
    # Long-term corrected against the grid: the logger's P90 without (as used) and with the
    # transfer and building-flow terms.
    ac = corrected_assessment(a)
    evc = pipeline.evaluate(ac)
    t_used = evc.table[evc.table.position_id == POSITION].set_index("turbine_id")
    full = uncertainty.exceedance_table(
        *_setup_and_p50(evc), uncertainty.with_climate(ac.uncertainty, ac.climate),
        ac.economics.lifetime_years)
    print("long-term corrected: life P90 at the logger [kWh], as used vs with the transfer "
          "and building terms kept:",
          {tb.id: (round(float(t_used.loc[tb.id, "p90_aep_kwh"])),
                   round(float(full["p90_life"][i, j]) / 1000.0))
           for j, tb in enumerate(ac.turbines)})


def corrected_assessment(a):
    """The logger assessment with the logger long-term corrected against the invented grid."""
    pos = next(p for p in a.positions if p.id == POSITION)
    roof = next(b for b in a.buildings if b.id == pos.building_id)
    ref = site_record.ReferenceFile(GRID.read_bytes(), GRID.name, lat_deg=51.5,
                                    lon_deg=-1.25, height_m=100.0, roughness_m=0.03)
    lc = site_record.record_climate(LOGGER.read_bytes(), LOGGER.name,
                                    base_height_m=roof.height_m, position_id=POSITION,
                                    roughness_m=a.site.terrain_roughness_m, reference=ref)
    return dataclasses.replace(a, climate=lc.climate)


def _setup_and_p50(ev):
    """The bins setup and net energy [Wh] of every row, recomputed through the chain's step."""
    from engine.chain import arrays
    a = ev.assessment
    at_hub = arrays.position_yields(ev.climate, a.turbines, a.losses, a.energy)
    y = at_hub.yields
    return y.setup, y.net_wh


if __name__ == "__main__":
    main()
