"""Write an invented city-district buildings table for the screening demo, tests and benchmarks.

Everything here is invented by a seeded random generator: no real place, no survey. The district
is a square of building lots on a street grid, densest and tallest in the centre ("core"),
lower in an "inner" ring and lowest with mostly pitched roofs in the "outer" ring; a few lots
are left empty (yards, parks). Lot spacing 24 m keeps footprints apart.

Usage::

    python demo_sites/make_district.py                      # writes demo_sites/district_1000.csv
    python demo_sites/make_district.py 100000 out.parquet   # any size 10^3..10^6, CSV or Parquet
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

#: Seed of the generator: the same seed and size always give the same table.
SEED = 20261201
#: Spacing of building lots [m]; footprints stay below it so buildings never overlap.
LOT_SPACING_M = 24.0
#: Share of lots left empty [-].
EMPTY_LOT_SHARE = 0.12
SAMPLE_PATH = Path(__file__).with_name("district_1000.csv")

#: zone -> (median height [m], spread of ln height [-], share of pitched roofs [-]), invented.
ZONES = {
    "core": (16.0, 0.45, 0.10),
    "inner": (10.0, 0.35, 0.35),
    "outer": (6.5, 0.20, 0.80),
}


def make_district(n_buildings: int, seed: int = SEED) -> pd.DataFrame:
    """An invented district of ``n_buildings`` rectangular buildings as a DataFrame.

    Columns: id, x_m, y_m, length_m, width_m, height_m, orientation_deg, roof_type,
    roof_pitch_deg, parapet_height_m, zone (local metres, centre of the district at 0, 0).
    """
    n = int(n_buildings)
    if n < 1:
        raise ValueError("n_buildings must be at least 1")
    rng = np.random.default_rng(seed)
    n_lots = int(np.ceil(n / (1.0 - EMPTY_LOT_SHARE)))
    side = int(np.ceil(np.sqrt(n_lots)))
    lots = rng.choice(side * side, size=n, replace=False)
    lots.sort()
    iy, ix = np.divmod(lots, side)
    half = (side - 1) / 2.0
    x = (ix - half) * LOT_SPACING_M + rng.uniform(-1.5, 1.5, n)
    y = (iy - half) * LOT_SPACING_M + rng.uniform(-1.5, 1.5, n)
    r = np.hypot(x, y) / max(half * LOT_SPACING_M, 1.0)
    zone = np.where(r < 0.25, "core", np.where(r < 0.6, "inner", "outer"))
    median = np.select([zone == z for z in ZONES], [v[0] for v in ZONES.values()])
    spread = np.select([zone == z for z in ZONES], [v[1] for v in ZONES.values()])
    pitched_share = np.select([zone == z for z in ZONES], [v[2] for v in ZONES.values()])
    height = np.clip(median * np.exp(spread * rng.standard_normal(n)), 3.0, 80.0)
    length = rng.uniform(9.0, 21.0, n)
    width = np.minimum(rng.uniform(6.0, 14.0, n), length)
    # Street grid with a slight skew per building; bearings of the long side in [0, 180).
    orientation = np.mod(np.where(rng.random(n) < 0.5, 0.0, 90.0) + rng.normal(0.0, 4.0, n), 180.0)
    pitched = rng.random(n) < pitched_share
    pitch = np.where(pitched, rng.uniform(25.0, 45.0, n), 0.0)
    parapet = np.where(pitched, 0.0, np.where(rng.random(n) < 0.5, rng.uniform(0.3, 1.2, n), 0.0))
    return pd.DataFrame({
        "id": [f"B{i:07d}" for i in range(1, n + 1)],
        "x_m": np.round(x, 2), "y_m": np.round(y, 2),
        "length_m": np.round(length, 2), "width_m": np.round(width, 2),
        "height_m": np.round(height, 2), "orientation_deg": np.round(orientation, 1),
        "roof_type": np.where(pitched, "pitched", "flat"),
        "roof_pitch_deg": np.round(pitch, 1), "parapet_height_m": np.round(parapet, 2),
        "zone": zone,
    })


def write_district(n_buildings: int, path, seed: int = SEED) -> Path:
    """Write the invented district to ``path`` (``.csv`` or ``.parquet``)."""
    path = Path(path)
    df = make_district(n_buildings, seed)
    if path.suffix.lower() == ".parquet":
        df.to_parquet(path, index=False, row_group_size=100_000)
    else:
        df.to_csv(path, index=False, lineterminator="\n")
    return path


if __name__ == "__main__":
    import argparse

    ap = argparse.ArgumentParser(description="Write an invented city-district buildings table.")
    ap.add_argument("size", nargs="?", type=int, default=1000, help="number of buildings")
    ap.add_argument("out", nargs="?", default=str(SAMPLE_PATH), help="output .csv or .parquet")
    args = ap.parse_args()
    print(write_district(args.size, args.out))
