"""Invented footprint shapes for the geodata tests (not check values)."""
import math

import numpy as np


def rectangle_ring(cx, cy, length, width, bearing_deg):
    """Closed GeoJSON ring of an L x W rectangle centred on (cx, cy), its length along the
    bearing (clockwise from north) [m]."""
    t = math.radians(bearing_deg)
    u = np.array([math.sin(t), math.cos(t)]) * length / 2
    v = np.array([math.cos(t), -math.sin(t)]) * width / 2
    c = np.array([cx, cy])
    ring = [c + u + v, c + u - v, c - u - v, c - u + v]
    return [[float(p[0]), float(p[1])] for p in ring + [ring[0]]]
