"""What the climate step shows of a measured record's climate, as plain data (cacheable).

:func:`shown` turns an :class:`engine.climate.logger.LoggerClimate` into the numbers, tables,
chart specs and series the page draws; it picks values out and labels them, nothing more.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.io import sitefile

#: Long-term method -> the words the page shows (published names kept in brackets).
METHOD_WORDS = {"variance_ratio": "Straight line keeping the reference's spread (variance ratio)",
                "linear": "Straight line of least squares (linear regression)",
                "speed_ratio": "Ratio of the mean speeds in each sector"}

#: Engine field of a problem -> the field's label on the page.
FIELD_LABELS = {"height_m": "Sensor height", "roughness_m": "Roughness around the sensor",
                "base_height_m": "Height of the logger's base",
                "altitude_m": "Site altitude (Site step)",
                "reference_height_m": "Reference height",
                "reference_roughness_m": "Roughness around the reference",
                "lat_deg": "Latitude", "lon_deg": "Longitude",
                "period": "Concurrent period", "method": "Method",
                "target": "Measured record", "reference": "Reference file"}


def field_label(where: str, record_name: str, reference_name: str) -> str:
    """The page's name for where an engine problem lies."""
    if where in FIELD_LABELS:
        return FIELD_LABELS[where]
    head = where.split(".")[0]
    if reference_name and head.startswith(reference_name):
        return f"Reference file {where}"
    if head in ("target", "reference"):
        return f"{FIELD_LABELS[head]} ({where.split('.', 1)[-1]})"
    if record_name and head.startswith(record_name):
        return f"Measured record {where}"
    return where


def _sector_frame(n: int, **cols) -> pd.DataFrame:
    return pd.DataFrame({"sector (°)": np.arange(n) * 360.0 / n, **cols})


def shown(lc) -> dict:
    """The page's view of a logger climate.

    Returns
    -------
    dict: ``climate`` (site-file dict), ``qc`` (text), ``notes``, ``heights_m``, ``height_m``,
    ``measured`` (DataFrame of measured TI and shear per sector, or None), ``shear_all``,
    ``averaging_s``, ``long_term`` (None or dict of ``stats``, ``sectors``, ``uncertainty``,
    ``reference``, ``adjustment``, ``scatter`` Vega-Lite spec) and ``series`` (time_ns,
    speed_ms, direction_deg) of the climate's (long-term) series at its height
    """
    from altair.utils.schemapi import debug_mode

    from engine.report import record_charts
    c = lc.climate
    n = c.n_sectors
    cols = {}
    if c.turbulence_intensity:
        cols["measured TI"] = np.asarray(c.turbulence_intensity)
    if lc.shear_table is not None:
        cols["shear exponent"] = lc.shear_table["shear_exponent"].to_numpy()[:n]
    shear_all = (float(lc.shear_table["shear_exponent"].to_numpy()[-1])
                 if lc.shear_table is not None else None)
    out = {"climate": sitefile.assessment_to_dict(c), "qc": lc.qc.to_text(),
           "notes": list(dict.fromkeys(list(lc.notes) + list(lc.summary.notes))),
           "heights_m": [float(z) for z in lc.heights_m], "height_m": float(c.height_m),
           "measured": _sector_frame(n, **cols) if cols else None, "shear_all": shear_all,
           "averaging_s": float(c.averaging_s), "long_term": None,
           "series": tuple(np.asarray(a) for a in lc.series)}
    lt = lc.long_term
    if lt is not None:
        with debug_mode(False):
            spec = record_charts.concurrent_scatter(lt.mcp).to_dict(validate=False)
        out["long_term"] = {"stats": lt.mcp.concurrent_stats(), "sectors": lt.mcp.sectors,
                            "uncertainty": dict(lt.uncertainty),
                            "reference": dict(lt.reference), "adjustment": lt.mcp.adjustment,
                            "scatter": spec}
    return out
