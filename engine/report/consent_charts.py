"""Altair charts of the neighbour checks: turbine level vs background by wind speed, and
shadow-flicker minutes per day at each window (no streamlit here).

The numbers come from :mod:`engine.chain.neighbours` (``noise_speed_table``,
``flicker_day_table``); this module only draws them.
"""
from __future__ import annotations

import altair as alt
import pandas as pd

from engine.chain import neighbours

TURBINE_COLOUR = "#1f5f99"
BACKGROUND_COLOUR = "#9a9a9a"
LIMIT_COLOUR = "#c97a2b"


def noise_by_speed_chart(evaluation, position_id: str, turbine_id: str) -> alt.Chart:
    """Turbine level, background and criterion [dB(A)] against hub wind speed, one panel per
    receptor; bins over the criterion are marked."""
    tab = neighbours.noise_speed_table(evaluation, position_id, turbine_id)
    long = tab.melt(id_vars=["receptor_id", "speed_ms", "hours", "over_limit"],
                    value_vars=["turbine_db", "background_db", "limit_db"],
                    var_name="series", value_name="level_db")
    long["series"] = long["series"].map({"turbine_db": "turbine", "background_db": "background",
                                         "limit_db": "criterion"})
    colour = alt.Color("series:N", title=None, scale=alt.Scale(
        domain=["turbine", "background", "criterion"],
        range=[TURBINE_COLOUR, BACKGROUND_COLOUR, LIMIT_COLOUR]))
    lines = alt.Chart(long).mark_line(point=True).encode(
        x=alt.X("speed_ms:Q", title="Hub wind speed [m/s]"),
        y=alt.Y("level_db:Q", title="Level [dB(A)]", scale=alt.Scale(zero=False)),
        color=colour, strokeDash=alt.StrokeDash("series:N", legend=None),
        tooltip=["receptor_id", "speed_ms", "series", alt.Tooltip("level_db:Q", format=".1f"),
                 alt.Tooltip("hours:Q", format=".0f", title="hours a year")])
    return lines.properties(width=260, height=180).facet(
        column=alt.Column("receptor_id:N", title=None))


def flicker_calendar_chart(evaluation, position_id: str, turbine_id: str) -> alt.Chart:
    """Worst-case shadow-flicker minutes per day over the year, one row per window."""
    tab = neighbours.flicker_day_table(evaluation, position_id, turbine_id)
    if tab.empty:
        tab = pd.DataFrame({"window_id": ["(no window)"], "day_of_year": [1], "minutes": [0.0]})
    return alt.Chart(tab).mark_bar(color=TURBINE_COLOUR).encode(
        x=alt.X("day_of_year:Q", title="Day of year", scale=alt.Scale(domain=[1, 366])),
        y=alt.Y("minutes:Q", title="Minutes (worst case)"),
        tooltip=["window_id", "day_of_year", alt.Tooltip("minutes:Q", format=".0f")],
    ).properties(width=520, height=120).facet(row=alt.Row("window_id:N", title=None))
