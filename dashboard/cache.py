"""Every cache of the dashboard, in one place.

Keys describe what was computed: the evaluation is keyed on the site-file text itself, so a
what-if change that returns to an earlier state is served from the cache, and the number of
kept entries is bounded so a long client session cannot grow the server's memory.
"""
from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import streamlit as st

from engine.chain import pipeline
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[1]
DEMO_SITE = ROOT / "demo_sites" / "larkspur_yard.json"


@st.cache_data(show_spinner=False)
def demo_text() -> str:
    """Text of the built-in demo site file."""
    return DEMO_SITE.read_text(encoding="utf-8")


@st.cache_data(show_spinner=False, max_entries=8)
def _energy_stage(key: str, _text: str):
    """The chain up to the energy table, keyed on the engine's ``energy_key`` alone: a
    change of prices, costs or ranking settings finds it here (``_text`` is not hashed)."""
    return pipeline.energy_stage(sitefile.loads(_text))


@st.cache_data(show_spinner=False, max_entries=48)
def evaluate_text(text: str, _assessment=None):
    """Run the chain for a site-file text (each caller gets its own copy); the energy part
    comes from :func:`_energy_stage` when only money or ranking settings changed.

    ``_assessment`` (not hashed) is the text already read, when the caller holds it (the
    working copy's last valid assessment, whose text ``text`` is): it spares reading the
    text again. The site file's round trip is exact (``loads(dumps(a)) == a``, tested), so
    either way the result for a text is the same.
    """
    a = sitefile.loads(text) if _assessment is None else _assessment
    return pipeline.priced(a, _energy_stage(pipeline.energy_key(a), text))


@st.cache_data(show_spinner=False, max_entries=48)
def chart_keys(text: str) -> dict:
    """What each chart of the results depends on, as short content keys, so a what-if that
    leaves a chart's content unchanged redraws nothing new: the reference climate and the
    air density for the wind rose; each position's sector frequencies and hub Weibull
    parameters for its speed distribution (``hub``, by position id); the energy stage for
    the other position charts; and the ranked order with exclusions too for the plan and
    the ranking bars."""
    import hashlib

    import pandas as pd
    ev = evaluate_text(text)
    energy = pipeline.energy_key(ev.assessment)
    cols = [c for c in ("rank", "position_id", "turbine_id", "excluded", "aep_kwh",
                        "p50_aep_kwh", "p90_aep_kwh") if c in ev.table]
    order = hashlib.sha256(pd.util.hash_pandas_object(ev.table[cols], index=False)
                           .to_numpy().tobytes()).hexdigest()
    climate = json.dumps([sitefile.assessment_to_dict(ev.assessment)["climate"],
                          float(ev.climate.air_density_kgm3)], sort_keys=True)
    eff = ev.climate
    hub = {pid: hashlib.sha256(b"".join(np.ascontiguousarray(x[i], float).tobytes() for x in
                                        (eff.frequency, eff.weibull_k, eff.weibull_c_ms))
                               ).hexdigest() for i, pid in enumerate(eff.position_ids)}
    return {"energy": energy, "ranked": f"{energy}:{order}",
            "climate": hashlib.sha256(climate.encode("utf-8")).hexdigest(), "hub": hub}


@st.cache_data(show_spinner=False, max_entries=48)
def top_rows(text: str, speed_unit: str, length_unit: str):
    """The five rows of the ranked table as text (allowed first, with verdicts)."""
    from . import results_view
    return results_view.top_rows(evaluate_text(text).table, speed_unit, length_unit, n=5)


@st.cache_data(show_spinner=False, max_entries=16)
def display_table(text: str, speed_unit: str, length_unit: str):
    """Every ranked row, converted and labelled for reading."""
    from . import results_view
    return results_view.display_table(evaluate_text(text).table, speed_unit, length_unit)


@st.cache_data(show_spinner=False)
def turbine_library() -> tuple:
    """The invented generic turbines shipped with the engine (empty if none are shipped)."""
    try:
        from engine.energy import turbines
    except ImportError:
        return ()
    return turbines.load_library()


@st.cache_data(show_spinner=False, max_entries=4)
def record_climate(data: bytes, file_name: str, settings: tuple, reference: tuple | None):
    """A measured record (and its long-term reference) -> what the climate step shows, through
    :func:`engine.climate.site_record.record_climate`, the call ``engine climate RECORD
    --long-term REFERENCE`` makes. ``settings`` and ``reference`` are tuples of that function's
    and :class:`engine.climate.site_record.ReferenceFile`'s keyword arguments (hashable),
    cached on the files' bytes and them."""
    from dashboard import record_view
    from engine.climate import site_record
    ref = site_record.ReferenceFile(**dict(reference)) if reference else None
    lc = site_record.record_climate(data, file_name, reference=ref, **dict(settings))
    return record_view.shown(lc)


@st.cache_data(show_spinner=False, max_entries=8)
def series_yield(text: str, position_id: str, turbine_id: str, record_key: str, _record):
    """The leading option's series and Weibull yields with its monthly and hour-of-day chart
    specs (:func:`engine.report.series_check.leading_series_yield`), or None; cached on the
    site-file text, the option and the record's key (``_record`` itself is not hashed)."""
    from altair.utils.schemapi import debug_mode

    from engine.report import record_charts, series_check
    best = {"position_id": position_id, "turbine_id": turbine_id}
    r = series_check.leading_series_yield(evaluate_text(text), best, _record)
    if r is None:
        return None
    with debug_mode(False):
        r["monthly_spec"] = record_charts.series_monthly(
            r["monthly_wh"], f"Net energy by month over the record, {turbine_id} at "
                             f"{position_id}").to_dict(validate=False)
        r["hourly_spec"] = record_charts.series_hourly(
            r["hourly_wh"], "Net energy by hour of day (UTC)",
            r["hourly_records"]).to_dict(validate=False)
    return r


RANKED_CHARTS = ("plan", "bars")


def chart_spec(kind: str, text: str, speed_unit: str, length_unit: str,
               position_id: str = "", turbine_id: str = "") -> dict:
    """Vega-Lite spec of one chart of the results, cached on the content it draws
    (:func:`chart_keys`), not on the whole site-file text."""
    keys = chart_keys(text)
    if kind in RANKED_CHARTS:
        key = keys["ranked"]
    elif kind == "rose":
        key, position_id = keys["climate"], ""
    elif kind == "dist" and position_id in keys["hub"]:
        key = keys["hub"][position_id]
    else:
        key = keys["energy"]
    if kind in ("plan", "bars", "rose", "dist"):
        turbine_id = ""  # not drawn: another turbine picked finds the same chart
    if kind == "bars":
        position_id = ""
    return _chart_spec(kind, key, speed_unit, length_unit, position_id, turbine_id, text)


@st.cache_data(show_spinner=False, max_entries=96)
def _chart_spec(kind: str, key: str, speed_unit: str, length_unit: str,
                position_id: str, turbine_id: str, _text: str) -> dict:
    """Vega-Lite spec of one chart of the results, cached on ``key`` (``_text`` is the
    site-file text it is drawn from on a miss, not hashed).

    Built without Altair's per-object schema checks (the builders' specs are checked once by
    the tests), which would otherwise dominate a what-if rerun.
    """
    from altair.utils.schemapi import debug_mode

    from engine.report import charts
    ev = evaluate_text(_text)
    a = ev.assessment
    with debug_mode(False):
        if kind == "plan":
            chart = charts.plan_view(ev, length_unit, selected=position_id or None)
        elif kind == "bars":
            chart = charts.ranking_bars(ev.table)
        elif kind == "rose":
            chart = charts.wind_rose(a.climate, ev.climate.air_density_kgm3)
        elif kind == "dist":
            chart = charts.speed_distribution(ev, position_id, speed_unit)
        elif kind == "profile":
            try:
                from engine.report.static_charts import roof_zone_bands
                zones = roof_zone_bands(ev, position_id)
            except (ImportError, ValueError, KeyError):
                zones = []
            chart = charts.vertical_profile(ev, position_id, turbine_id, length_unit,
                                            speed_unit, zones=zones)
        elif kind == "curve":
            tur = next(t for t in a.turbines if t.id == turbine_id)
            chart = charts.power_curve(tur, speed_unit,
                                       corrected=charts.corrected_curve(ev, position_id,
                                                                        turbine_id),
                                       distribution=charts.hub_distribution(ev, position_id,
                                                                            speed_unit))
        elif kind == "monthly":
            m = charts.monthly_energy_kwh(ev, position_id, turbine_id)
            if m is None:
                return {}
            chart = charts.monthly_energy(m, f"Monthly net energy at {position_id} with "
                                             f"{turbine_id}")
        else:
            raise KeyError(kind)
        return chart.to_dict(validate=False)
