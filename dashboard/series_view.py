"""Results: the leading option's time-series yield beside its Weibull yield, where the climate
came from a record uploaded in this session.

The series is the one the climate step kept (:func:`record_series`: the record's valid rows at
the climate's height, or the long-term predicted series); the yields and the charts come from
the engine (:func:`engine.report.series_check.leading_series_yield`,
:mod:`engine.report.record_charts`), the same figures the siting summary prints when the
record is handed to it.
"""
from __future__ import annotations

import streamlit as st

from . import cache, state, widgets


def record_series(climate):
    """(time_ns, speed_ms, direction_deg) of the climate's own record as built on the climate
    step in this session, or None (another climate, or a site file opened without it)."""
    res = st.session_state.get("record_result")
    if not res or not climate.record_sha256:
        return None
    kept = res["climate"]
    same = (kept.get("record_sha256") == climate.record_sha256
            and tuple(kept.get("weibull_c_ms", ())) == tuple(climate.weibull_c_ms)
            and tuple(kept.get("frequency", ())) == tuple(climate.frequency))
    return res["series"] if same else None


def render(evaluation, best) -> None:
    """The series section of Results for the leading row ``best`` (nothing without a record)."""
    clim = evaluation.assessment.climate
    if best is None or not clim.record_file:
        return
    record = record_series(clim)
    st.subheader("Time-series yield of the leading option")
    if record is None:
        st.caption("The climate names a record, but it was not built on the climate step in "
                   "this session: build it there to compare its series with the fit.")
        return
    r = cache.series_yield(state.draft_text(), str(best["position_id"]),
                           str(best["turbine_id"]), clim.record_sha256, record)
    if r is None:
        return
    name = f"{best['turbine_id']} at {best['position_id']}"
    c1, c2, c3 = st.columns(3)
    c1.metric("Weibull fit, net (kWh/yr)", f"{r['weibull_net_wh'] / 1000:,.0f}",
              help="The figure the ranking and the P-values use")
    c2.metric("Over the record, net (kWh/yr)", f"{r['series_net_wh'] / 1000:,.0f}",
              f"{r['records']:,} records, {r['days']:.0f} days", delta_color="off",
              delta_arrow="off")
    c3.metric("Series against fit", f"{r['difference']:+.1%}")
    words = (f"For {name}: the same curves, losses and effective climate, with the wind of the "
             "record itself in place of the fitted Weibull distributions.")
    if clim.source == "long_term":
        words += " The series is the long-term predicted one, at the reference's interval."
    if clim.averaging_s >= 3000.0:
        words += (f" The climate's scale was raised for {clim.averaging_s / 60:.0f}-minute "
                  "means (the averaging correction); the series holds those means as they "
                  "are, so the difference includes that correction.")
    if r["days"] < 365.0:
        words += f" The record spans {r['days']:.0f} days, so it weights the seasons it covers."
    st.caption(widgets.plain(words))  # it quotes position and turbine ids
    c1, c2 = st.columns(2)
    c1.vega_lite_chart(r["monthly_spec"], width="stretch", theme=None)
    c2.vega_lite_chart(r["hourly_spec"], width="stretch", theme=None)
