"""Generate the invented footprint file of a small estate (seeded): GeoJSON in a projected CRS.

The blocks are invented: terraces of pitched houses with eaves and ridge heights, flat-roofed
blocks, an L-shaped block and a courtyard block. The coordinates are in UTM zone 31N
(EPSG:32631) at an arbitrary point offshore, so the estate is nowhere real.

Run: python demo_sites/make_footprints.py  (the output must not change unless this script does)
"""
from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np

SEED = 20261203
OUT = Path(__file__).with_name("footprints") / "quillfield_estate_utm31n.geojson"
CRS = "EPSG:32631"
E0, N0 = 512_340.0, 6_012_870.0  # offshore: an invented place


def rectangle(cx, cy, length, width, bearing_deg):
    b = math.radians(bearing_deg)
    u = np.array([math.sin(b), math.cos(b)])
    v = np.array([math.cos(b), -math.sin(b)])
    c = np.array([cx, cy])
    pts = [c + s * length / 2 * u + t * width / 2 * v
           for s, t in ((-1, -1), (1, -1), (1, 1), (-1, 1))]
    ring = [[round(float(p[0]), 2), round(float(p[1]), 2)] for p in pts]
    return ring + [ring[0]]


def feature(fid, ring, holes=(), **props):
    return {"type": "Feature", "properties": {"ref": fid, **props},
            "geometry": {"type": "Polygon", "coordinates": [ring, *holes]}}


def build(rng):
    feats = []
    for row in range(3):  # three terraces of pitched houses
        bearing = 78.0 + rng.normal(0, 2.0)
        for k in range(4):
            eaves = round(float(rng.uniform(5.0, 5.8)), 1)
            ridge = round(eaves + float(rng.uniform(2.4, 3.2)), 1)
            cx = E0 - 60 + 16.0 * k + float(rng.normal(0, 0.3))
            cy = N0 + 40 - 24.0 * row
            feats.append(feature(f"T{row + 1}-{k + 1}", rectangle(cx, cy, 15.0, 8.5, bearing),
                                 height_m=ridge, eaves_m=eaves, ridge_m=ridge))
    for k, (dx, dy, L, W, h) in enumerate(((40, 30, 38, 13, 12.5), (70, -10, 26, 14, 9.0),
                                           (20, -55, 60, 16, 18.0))):
        feats.append(feature(f"B{k + 1}", rectangle(E0 + dx, N0 + dy, L, W,
                                                    float(rng.uniform(0, 180))),
                             height_m=h))
    x, y = E0 - 20, N0 - 95  # an L-shaped block
    ring = [[x, y], [x + 30, y], [x + 30, y + 10], [x + 12, y + 10], [x + 12, y + 28],
            [x, y + 28], [x, y]]
    feats.append(feature("L1", ring, height_m=10.5))
    x, y = E0 + 60, N0 - 80  # a courtyard block
    outer = [[x, y], [x + 36, y], [x + 36, y + 30], [x, y + 30], [x, y]]
    inner = [[x + 9, y + 8], [x + 9, y + 22], [x + 27, y + 22], [x + 27, y + 8], [x + 9, y + 8]]
    feats.append(feature("C1", outer, holes=(inner,), height_m=15.0))
    return feats


def main() -> None:
    rng = np.random.default_rng(SEED)
    doc = {"type": "FeatureCollection", "name": "Quillfield estate (invented)",
           "crs": {"type": "name", "properties": {"name": CRS}}, "features": build(rng)}
    OUT.parent.mkdir(exist_ok=True)
    OUT.write_text(json.dumps(doc, indent=1) + "\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
