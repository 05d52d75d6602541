"""Charts of a measured record: the long-term correction's concurrent pairs, and the series yield.

Altair builders for the dashboard's climate and results steps (and any page that shows a
record): :func:`concurrent_scatter` of the pairs a long-term correction was fitted on
(:class:`engine.climate.mcp.MCPResult`), :func:`series_monthly` and :func:`series_hourly` of
the leading option's energy summed over the record
(:func:`engine.report.series_check.leading_series_yield`). They draw what the engine computed;
nothing is computed here but the thinning of the points drawn.
"""
from __future__ import annotations

import altair as alt
import numpy as np
import pandas as pd

from engine.report.charts import ACCENT, MONTHS, monthly_energy

#: Most points a scatter draws; more are thinned by an even stride (every n-th pair).
MAX_SCATTER_POINTS = 2500
LINE_COLOUR = "#7a7a7a"


def concurrent_scatter(mcp_result, max_points: int = MAX_SCATTER_POINTS) -> alt.LayerChart:
    """Target against reference speed over the concurrent period, with the 1:1 line.

    Parameters
    ----------
    mcp_result : :class:`engine.climate.mcp.MCPResult` (its ``pair_*`` arrays)
    max_points : points drawn at most (an even stride through the pairs)
    """
    x = np.asarray(mcp_result.pair_reference_ms, float)
    y = np.asarray(mcp_result.pair_target_ms, float)
    n_sec = max(len(mcp_result.sectors), 1)
    stride = max(int(np.ceil(x.size / max(int(max_points), 1))), 1)
    sec = np.asarray(mcp_result.pair_sector, np.intp)[::stride]
    df = pd.DataFrame({"reference_ms": x[::stride], "target_ms": y[::stride],
                       "sector_deg": sec * 360.0 / n_sec}, copy=False)
    top = float(max(np.nanmax(x, initial=1.0), np.nanmax(y, initial=1.0))) * 1.05
    diag = pd.DataFrame({"reference_ms": [0.0, top], "target_ms": [0.0, top]})
    points = alt.Chart(df).mark_circle(size=12, opacity=0.35, color=ACCENT).encode(
        x=alt.X("reference_ms:Q", title="reference speed (m/s)",
                scale=alt.Scale(domain=[0, top])),
        y=alt.Y("target_ms:Q", title="site speed, same interval (m/s)",
                scale=alt.Scale(domain=[0, top])),
        tooltip=[alt.Tooltip("reference_ms:Q", format=".2f"),
                 alt.Tooltip("target_ms:Q", format=".2f"),
                 alt.Tooltip("sector_deg:Q", title="reference sector (°)", format=".0f")])
    line = alt.Chart(diag).mark_line(color=LINE_COLOUR, strokeDash=[4, 3]).encode(
        x="reference_ms:Q", y="target_ms:Q")
    shown = f", {df.shape[0]:,} drawn" if stride > 1 else ""
    return alt.layer(points, line).properties(
        width=420, height=320,
        title=alt.TitleParams(f"Concurrent pairs: {mcp_result.n_pairs:,}{shown}, r = "
                              f"{mcp_result.correlation:.2f}",
                              subtitle="dashed line: equal speeds"))


def series_monthly(monthly_wh, title: str) -> alt.Chart:
    """Bar chart of net energy per calendar month over the record [Wh in, kWh shown]."""
    frame = pd.DataFrame({"month": list(MONTHS),
                          "energy_kwh": np.asarray(monthly_wh, float) / 1000.0})
    return monthly_energy(frame, title)


def series_hourly(hourly_wh, title: str, hourly_records=None) -> alt.Chart:
    """Bar chart of net energy a year per UTC hour of day over the record [Wh in, kWh shown].

    Hours without a record (``hourly_records`` 0, e.g. a 3-hourly series) are left out, not
    drawn as no energy; the title then says how many hours hold records.
    """
    frame = pd.DataFrame({"hour_utc": np.arange(24),
                          "energy_kwh": np.asarray(hourly_wh, float) / 1000.0})
    if hourly_records is not None:
        keep = np.asarray(hourly_records) > 0
        frame = frame[keep]
        if not keep.all():
            title = f"{title}; {int(keep.sum())} of 24 hours hold records"
    return alt.Chart(frame).mark_bar(color=ACCENT).encode(
        x=alt.X("hour_utc:O", title="hour of day (UTC)", scale=alt.Scale(domain=list(range(24)))),
        y=alt.Y("energy_kwh:Q", title="net energy a year (kWh)"),
        tooltip=[alt.Tooltip("hour_utc:O", title="hour (UTC)"),
                 alt.Tooltip("energy_kwh:Q", format=",.0f")],
    ).properties(width=460, height=240, title=title)
