"""Every cache of the dashboard, in one place.

Keys describe what was computed: the evaluation is keyed on the site-file text itself, so a
what-if change that returns to an earlier state is served from the cache, and the number of
kept entries is bounded so a long client session cannot grow the server's memory.
"""
from __future__ import annotations

from pathlib import Path

import streamlit as st

from engine.chain import pipeline
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[1]
DEMO_SITE = ROOT / "demo_sites" / "larkspur_yard.json"


@st.cache_data(show_spinner=False)
def demo_text() -> str:
    """Text of the built-in demo site file."""
    return DEMO_SITE.read_text(encoding="utf-8")


@st.cache_data(show_spinner=False, max_entries=48)
def evaluate_text(text: str):
    """Run the chain for a site-file text (each caller gets its own copy)."""
    return pipeline.evaluate(sitefile.loads(text))


@st.cache_data(show_spinner=False, max_entries=48)
def top_rows(text: str, speed_unit: str, length_unit: str):
    """The five best rows as text for the ranked table."""
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
def climate_from_upload(data: bytes, file_name: str, height_m: float, roughness_m: float,
                        displacement_m: float, n_sectors: int, speed_unit: str | None,
                        altitude_m: float):
    """Measured record -> (climate dict, quality-control text, import notes), cached on the
    file's bytes and the settings."""
    from engine.climate import fit as climate
    from engine.io import sitefile
    clim, report, diag = climate.climate_from_csv_bytes(
        data, file_name, height_m=height_m, roughness_m=roughness_m,
        displacement_m=displacement_m, n_sectors=n_sectors, speed_unit=speed_unit,
        altitude_m=altitude_m)
    return sitefile.assessment_to_dict(clim), report.to_text(), list(diag.get("import_notes", ()))


@st.cache_data(show_spinner=False, max_entries=96)
def chart_spec(kind: str, text: str, speed_unit: str, length_unit: str,
               position_id: str = "", turbine_id: str = "") -> dict:
    """Vega-Lite spec of one chart of the results, cached on everything it depends on.

    Built without Altair's per-object schema checks (the builders' specs are checked once by
    the tests), which would otherwise dominate a what-if rerun.
    """
    from altair.utils.schemapi import debug_mode

    from engine.report import charts
    ev = evaluate_text(text)
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
