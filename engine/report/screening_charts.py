"""Charts of a portfolio screening: the plan of screened buildings coloured by class.

Presentation only (Altair): the numbers come from :mod:`engine.screening`, which never imports
a charting library.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.screening import CLASSES

#: Colour of each suitability class on the plan (a sequential green-to-grey scale of our own).
CLASS_COLOURS = ("#1b7837", "#7fbf7b", "#d9c37a", "#9e9e9e")
#: Most points drawn on the plan; beyond it the lower classes are thinned (seeded).
MAX_PLAN_POINTS = 20_000


def plan_points(table: pd.DataFrame, max_points: int = MAX_PLAN_POINTS, seed: int = 1):
    """Rows to draw on the plan: every building of the two best classes first, then a seeded
    sample of the others up to ``max_points`` (a browser chart slows down far beyond that)."""
    if len(table) <= max_points:
        return table
    top = table[table["suitability_code"] <= 1]
    if len(top) >= max_points:
        return top.iloc[:max_points]
    rest = table[table["suitability_code"] > 1]
    return pd.concat([top, rest.sample(max_points - len(top), random_state=seed)])


def plan_scatter_chart(table: pd.DataFrame, max_points: int = MAX_PLAN_POINTS):
    """Altair plan of the screened buildings, one point per building coloured by class.

    Point size follows the footprint; the tooltip gives id, class, best turbine, net AEP and
    capacity factor, mast and reasons. Axes are local metres, equal scale.
    """
    import altair as alt

    pts = plan_points(table, max_points)
    data = pts[["id", "x_m", "y_m", "suitability", "suitability_code", "best_turbine_id",
                "best_aep_kwh", "best_capacity_factor", "mast_height_m", "height_m",
                "reasons"]].copy()
    data["footprint_m2"] = (pts["length_m"] * pts["width_m"]).to_numpy()
    data["capacity_factor_pct"] = 100.0 * data.pop("best_capacity_factor")
    span = max(float(np.ptp(data["x_m"])) if len(data) else 1.0,
               float(np.ptp(data["y_m"])) if len(data) else 1.0, 1.0)
    x0 = float(data["x_m"].min()) if len(data) else 0.0
    y0 = float(data["y_m"].min()) if len(data) else 0.0
    title = "Screened buildings by suitability"
    if len(pts) < len(table):
        title += f" ({len(pts):,d} of {len(table):,d} drawn; lower classes thinned)"
    return alt.Chart(data, title=title).mark_circle(opacity=0.8).encode(
        x=alt.X("x_m:Q", title="x east [m]", scale=alt.Scale(domain=[x0, x0 + span])),
        y=alt.Y("y_m:Q", title="y north [m]", scale=alt.Scale(domain=[y0, y0 + span])),
        color=alt.Color("suitability:N", title="suitability",
                        scale=alt.Scale(domain=list(CLASSES), range=list(CLASS_COLOURS))),
        size=alt.Size("footprint_m2:Q", title="footprint [m²]", legend=None,
                      scale=alt.Scale(range=[8, 120])),
        order=alt.Order("suitability_code:Q", sort="descending"),
        tooltip=[alt.Tooltip("id:N"), alt.Tooltip("suitability:N"),
                 alt.Tooltip("best_turbine_id:N", title="best turbine"),
                 alt.Tooltip("best_aep_kwh:Q", title="net AEP [kWh/yr]", format=",.0f"),
                 alt.Tooltip("capacity_factor_pct:Q", title="capacity factor [%]", format=".1f"),
                 alt.Tooltip("mast_height_m:Q", title="mast [m]", format=".1f"),
                 alt.Tooltip("height_m:Q", title="building height [m]", format=".1f"),
                 alt.Tooltip("reasons:N")],
    ).properties(width=620, height=620)
