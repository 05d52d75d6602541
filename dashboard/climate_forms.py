"""The wind-climate step's four ways in; each builds the climate with the engine's functions."""
from __future__ import annotations

import copy
import json

import streamlit as st

from engine.report import charts
from engine.core import units
from engine.climate.fit import RECORD_ROUGHNESS_M
from engine.core.errors import InputError
from engine.climate.weibull import mixture_mean_ms

from . import cache, state, widgets


def _engine_climate():
    try:
        from engine.climate import fit as climate
    except ImportError:
        return None
    return climate


def modes() -> dict:
    out = {"demo": "Demo climate", "table": "Enter a sector table",
           "mean_speed": "Mean speed only"}
    if _engine_climate() is not None and hasattr(_engine_climate(), "climate_from_csv_bytes"):
        out["measured"] = "Upload a measured record"
    return out


def _demo_climate() -> dict:
    return json.loads(cache.demo_text())["climate"]


def _remember(mode: str) -> None:
    """Keep each way's climate, so switching ways and back loses nothing typed."""
    ss = st.session_state
    memory = ss.setdefault("climate_memory", {})
    last = ss.get("climate_mode_shown")
    if last and last != mode:
        memory[last] = copy.deepcopy(state.get_path("climate"))
        if mode in memory:
            state.set_path("climate", copy.deepcopy(memory[mode]))
        elif mode == "demo":
            state.set_path("climate", _demo_climate())
        state.clear_widgets()
        state.validate()
    ss["climate_mode_shown"] = mode


def render(mode: str) -> None:
    _remember(mode)
    if mode == "demo":
        st.info("The built-in demo climate: an invented reference station in open terrain at "
                "10 m. Use it to learn the tool, never for a real decision.",
                icon=":material/info:")
        if state.get_path("climate") != _demo_climate():
            if st.button("Put the demo climate back", key="demo_climate_back"):
                state.set_path("climate", _demo_climate())
                state.clear_widgets()
                state.validate()
                st.rerun()
    elif mode == "table":
        _table_form()
    elif mode == "mean_speed":
        _mean_form()
    elif mode == "measured":
        _record_form()
    _reference_fields(mode)
    _other_problems(mode)


#: The climate fields each way shows with their messages beneath them.
FIELDS_SHOWN = {"measured": ()}
_REFERENCE_FIELDS = ("height_m", "roughness_m", "displacement_m", "label")
#: Site-file climate field -> its name on this page, for a message no field shows.
CLIMATE_LABELS = {"position_id": "Position the record was measured at",
                  "measured_at": "Where the record was measured",
                  "height_m": "Height of the measured climate",
                  "frequency": "Sector frequencies", "weibull_k": "Weibull k",
                  "weibull_c_ms": "Weibull c"}


def _other_problems(mode: str) -> None:
    """The engine's climate messages that no field of this way shows (a measured climate's
    position or height after an edit in step 3, say), so the banner's count is all visible."""
    shown = FIELDS_SHOWN.get(mode, _REFERENCE_FIELDS + (
        ("frequency", "weibull_k", "weibull_c_ms") if mode == "table" else ()))
    for where, msg in st.session_state["problems"]:
        if not where.startswith("climate."):
            continue
        field = where.split(".", 1)[1].split("[")[0]
        if field in shown:
            continue
        hint = (" On this page: choose where the record was measured and build the climate "
                "again." if mode == "measured" and field in ("position_id", "height_m") else "")
        label = CLIMATE_LABELS.get(field, field.replace("_", " "))
        st.error(f"**{label}:** {widgets.plain(msg)}{hint}", icon=":material/error:")


def _reference_fields(mode: str) -> None:
    if mode == "measured":
        return
    c1, c2, c3 = st.columns(3)
    with c1:
        widgets.number("Reference height", "climate.height_m", "length", "%.1f",
                       help="Height above ground the climate describes.")
    with c2:
        widgets.number("Roughness length at the reference", "climate.roughness_m", "length",
                       "%.3f", help="0.03 m for open country around an airfield mast.")
    with c3:
        widgets.number("Displacement at the reference", "climate.displacement_m", "length",
                       "%.1f")
    widgets.text("Label", "climate.label")


def _table_form() -> None:
    s_unit = state.unit_of("speed")
    clim = state.get_path("climate") or {}
    n = len(clim.get("frequency", []))
    rows = [{"frequency": clim["frequency"][i],
             "weibull_k": clim["weibull_k"][i] if i < len(clim.get("weibull_k", [])) else None,
             "weibull_c_ms": (clim["weibull_c_ms"][i]
                              if i < len(clim.get("weibull_c_ms", [])) else None)}
            for i in range(n)]
    st.caption("One row per direction sector, the first centred on north, going clockwise. "
               "Frequencies are shares of the time (fractions summing to 1, or percent "
               "summing to 100).")
    cols = [("frequency", "frequency", "number",
             st.column_config.NumberColumn(format="%.4f")),
            ("weibull_k", "Weibull k", "number", st.column_config.NumberColumn(format="%.3f")),
            ("weibull_c_ms", f"Weibull c ({s_unit})", "speed",
             st.column_config.NumberColumn(format="%.3f"))]
    edited = widgets.table("climate_table", rows, cols)
    freq = [r.get("frequency") for r in edited]
    ks = [r.get("weibull_k") for r in edited]
    cs = [r.get("weibull_c_ms") for r in edited]
    eng = _engine_climate()
    new = dict(clim, frequency=freq, weibull_k=ks, weibull_c_ms=cs, source="table")
    if eng is not None and all(isinstance(v, float) for v in freq):
        try:
            built = eng.climate_from_table(
                freq, ks, cs, height_m=float(clim.get("height_m") or 10.0),
                roughness_m=float(clim.get("roughness_m") or RECORD_ROUGHNESS_M),
                displacement_m=float(clim.get("displacement_m") or 0.0),
                label=clim.get("label", ""))
            new["frequency"] = list(built.frequency)
        except (InputError, TypeError, ValueError):
            pass
    if new != clim:
        state.set_path("climate", new)
        state.validate()
    widgets.row_messages("climate", [{} for _ in edited], {})
    _table_messages({f: lab for f, lab, _, _ in cols}, s_unit)


def _table_messages(labels: dict, s_unit: str) -> None:
    """The engine's messages on the sector table, by row and column as the table shows them
    (``climate.weibull_c_ms[2]`` is "Sector 3, Weibull c (mph)")."""
    for where, msg in st.session_state["problems"]:
        if not where.startswith("climate."):
            continue
        field, _, index = where.split(".", 1)[1].partition("[")
        if field not in labels:
            continue
        row = f"Sector {int(index.rstrip(']')) + 1}, " if index.rstrip("]").isdigit() else ""
        note = " (checked in m/s)" if field == "weibull_c_ms" and s_unit != "m/s" else ""
        st.error(f"**{row}{labels[field]}:** {widgets.plain(msg)}{note}",
                 icon=":material/error:")


def _mean_form() -> None:
    ss = st.session_state
    form = ss.setdefault("mean_form", {"mean_ms": 4.5})
    s_unit = state.unit_of("speed")
    key = f"mf|mean|{s_unit}"
    if key not in ss:
        ss[key] = float(units.speed_from_si(form["mean_ms"], s_unit))
    st.caption("A screening estimate from one long-term mean speed at the reference height: "
               "equal sector shares and a Rayleigh shape. Lower confidence than a table or a "
               "measured record.")
    v = st.number_input(f"Long-term mean wind speed ({s_unit})", key=key, format="%.2f")
    form["mean_ms"] = None if v is None else float(units.speed_to_si(v, s_unit))
    eng = _engine_climate()
    clim = state.get_path("climate") or {}
    try:
        # The reference fields as typed (a 0 or a blank is named beside its field by the
        # working copy's check, never replaced by a default here).
        built = eng.climate_from_mean_speed(
            form["mean_ms"] if form["mean_ms"] is not None else float("nan"),
            height_m=clim.get("height_m"), roughness_m=clim.get("roughness_m"),
            displacement_m=clim.get("displacement_m"))
        from engine.io import sitefile
        new = sitefile.assessment_to_dict(built)
        if new != clim:
            state.set_path("climate", new)
            state.validate()
    except (InputError, TypeError, ValueError) as e:
        # Only the mean speed is this form's own field; the others' problems are the working
        # copy's and shown beside them.
        own = [m for w, m in getattr(e, "problems", ()) if w == "mean_speed_ms"]
        for msg in own:
            st.error(f"**Long-term mean wind speed ({s_unit})** {widgets.plain(msg)} "
                     "(checked in m/s)",
                     icon=":material/error:")
        state.set_local_problems("climate", [("climate.mean_speed", m) for m in own])
        return
    state.set_local_problems("climate", [])


def _record_form() -> None:
    from . import record_form
    record_form.render()


def summary() -> None:
    """The climate the results use, as numbers and a rose."""
    a = st.session_state["valid"]
    clim = a.climate
    s_unit = state.unit_of("speed")
    mean = float(mixture_mean_ms(clim.frequency, clim.weibull_k, clim.weibull_c_ms))
    deg, f = charts.prevailing_sector(clim)
    c1, c2, c3 = st.columns(3)
    c1.metric(f"Mean speed at {units.length_from_si(clim.height_m, state.unit_of('length')):.0f}"
              f" {state.unit_of('length')}", f"{units.speed_from_si(mean, s_unit):.2f} {s_unit}")
    c2.metric("Prevailing sector", f"{charts.compass_name(deg)} ({deg:.0f}°)",
              f"{f:.0%} of the time",
              delta_color="off", delta_arrow="off")
    c3.metric("Sectors", f"{clim.n_sectors}", clim.source.replace("_", " "), delta_color="off",
              delta_arrow="off")
    s_, l_ = state.units_now()
    st.vega_lite_chart(cache.chart_spec("rose", state.draft_text(), s_, l_), width="content",
                       theme=None)
