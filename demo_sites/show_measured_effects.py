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
from engine.climate.logger import logger_climate  # noqa: E402
from engine.energy import series_yield as sy  # noqa: E402
from engine.io import sitefile  # noqa: E402

LOGGER = ROOT / "demo_sites" / "records" / "roof_logger_two_heights.csv"
SITE = ROOT / "demo_sites" / "larkspur_yard.json"
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


if __name__ == "__main__":
    main()
