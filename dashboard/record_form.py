"""The climate step's measured record: where it was measured, the long-term reference, the result.

Every climate is built by :func:`engine.climate.site_record.record_climate` (through
:func:`dashboard.cache.record_climate`), the call ``engine climate RECORD --long-term
REFERENCE`` makes. Uploaded files are kept in the session (one record and one reference, each at
most :data:`engine.io.records.MAX_RECORD_BYTES`), so a rerun or a page change loses neither.
"""
from __future__ import annotations

import datetime as _dt

import pandas as pd
import streamlit as st

from engine.climate.fit import RECORD_ROUGHNESS_M
from engine.climate.mcp import MCP_METHODS
from engine.climate.site_record import logged_heights_m
from engine.core import units
from engine.core.errors import InputError
from engine.io.records import MAX_RECORD_BYTES

from . import cache, record_view, state, widgets

WHERE = {"reference": "A reference: open terrain (a mast or weather station)",
         "position": "At one of this site's positions (a roof or mast logger)"}
FORM_DEFAULTS = {"height_m": 10.0, "roughness_m": RECORD_ROUGHNESS_M, "n_sectors": 12,
                 "where": "reference", "position_id": "", "lt_on": False,
                 "method": "variance_ratio", "ref_height_m": 10.0, "ref_roughness_m": 0.05,
                 "lat_deg": None, "lon_deg": None, "start": None, "end": None}


#: The engine's line names, as the table shows them.
LINE_WORDS = {"own": "this sector's own line",
              "all-sector": "all sectors' line (too few pairs in this sector)"}

def _form() -> dict:
    form = st.session_state.setdefault("record_form", dict(FORM_DEFAULTS))
    for k, v in FORM_DEFAULTS.items():
        form.setdefault(k, v)
    return form


def _keep_upload(up, slot: str) -> None:
    """Keep an uploaded file's bytes in the session (one per slot, bounded). A file forgotten
    with "Forget it" is not kept again while the uploader still shows it."""
    ss = st.session_state
    if up is None:
        ss.pop(f"{slot}_forgotten", None)
        return
    if ss.get(f"{slot}_forgotten") == (up.name, up.size):
        return
    kept = st.session_state.get(slot)
    if kept and kept["name"] == up.name and kept["size"] == up.size:
        return
    if up.size > MAX_RECORD_BYTES:
        st.error(f"**{widgets.plain(up.name)}:** must be at most "
                 f"{MAX_RECORD_BYTES // 2**20} MiB, got {up.size / 2**20:.0f} MiB",
                 icon=":material/error:")
        return
    st.session_state[slot] = {"name": up.name, "size": up.size, "data": up.getvalue()}


def _kept_line(slot: str, what: str) -> None:
    kept = st.session_state.get(slot)
    gone = st.session_state.get(f"{slot}_forgotten")
    if gone and not kept:
        st.caption(f"{what} {widgets.plain(gone[0])} forgotten: remove it from the box above "
                   "(its ×) to upload it again.")
    if kept:
        c1, c2 = st.columns([4, 1])
        c1.caption(f"{what} kept: **{widgets.plain(kept['name'])}** "
                   f"({kept['size'] / 1024:,.0f} KiB)")
        if c2.button("Forget it", key=f"forget_{slot}"):
            ss = st.session_state
            ss[f"{slot}_forgotten"] = (kept["name"], kept["size"])
            del ss[slot]
            # A failed build's messages were about the files; the climate in use is unchanged.
            state.set_local_problems("climate", [])
            st.rerun()


def _number(label: str, form: dict, name: str, kind: str, fmt: str, help=None):
    """A number input bound to ``form[name]`` (SI), shown in the page's unit."""
    u = state.unit_of(kind) if kind == "length" else ""
    v = form[name]
    now = None if v is None else float(units.length_from_si(v, u) if kind == "length" else v)
    shown = f"{label} ({u})" if u else label
    v = st.number_input(shown, key=f"rf|{name}|{u}", format=fmt, value=now, help=help)
    form[name] = None if v is None else float(units.length_to_si(v, u) if kind == "length"
                                              else v)


def _position_base(form: dict):
    """(base height above ground [m], position id) of the chosen position, or (0, "")."""
    a = st.session_state["valid"]
    ids = [p.id for p in a.positions if p.id in _draft_position_ids()]
    if not ids:
        st.warning("This site has no positions yet (step 3); the record is taken as a "
                   "reference.", icon=":material/warning:")
        return 0.0, ""
    if form["position_id"] not in ids:
        form["position_id"] = ids[0]
    if st.session_state.get("rf|pos") not in ids:  # unset, or deleted or renamed in step 3
        st.session_state["rf|pos"] = form["position_id"]
    pid = st.selectbox("Position the logger stands at", ids, key="rf|pos")
    form["position_id"] = pid
    pos = next(p for p in a.positions if p.id == pid)
    return float(a.base_height_m(pos)), pid


def _draft_position_ids() -> set:
    """Ids of the working copy's positions (the last valid assessment may still hold one
    deleted or renamed since)."""
    return {str(p.get("id")) for p in state.get_path("positions", []) or []
            if isinstance(p, dict)}


def _settings(form: dict, data: bytes) -> tuple:
    """The record's settings as ``record_climate`` keywords, from the widgets."""
    heights = logged_heights_m(data) if data else ()
    L = state.unit_of("length")
    if "rf|where" not in st.session_state:
        st.session_state["rf|where"] = form["where"]
    form["where"] = st.radio("Where the record was measured", list(WHERE), key="rf|where",
                             format_func=WHERE.get)
    base, pid = _position_base(form) if form["where"] == "position" else (0.0, "")
    c1, c2, c3 = st.columns(3)
    with c1:
        if heights:
            st.markdown(f"Logged heights: {_lengths(heights, L)} {L} above "
                        f"the logger's base; the climate uses the top one, "
                        f"{units.length_from_si(base + heights[-1], L):.1f} {L} above ground.")
        else:
            _number("Sensor height above its base" if pid else "Sensor height", form,
                    "height_m", "length", "%.1f")
    with c2:
        _number("Roughness around the sensor", form, "roughness_m", "length", "%.3f")
    with c3:
        if "rf|n" not in st.session_state:
            st.session_state["rf|n"] = form["n_sectors"]
        form["n_sectors"] = st.selectbox("Sectors", [8, 12, 16, 36], key="rf|n")
    unit = st.selectbox("Speed unit when the header does not say",
                        ["from the header"] + list(units.SPEED_UNITS), key="rf|unit")
    return (("height_m", form["height_m"]), ("base_height_m", base), ("position_id", pid),
            ("roughness_m", form["roughness_m"]), ("n_sectors", int(form["n_sectors"])),
            ("speed_unit", None if unit == "from the header" else unit),
            ("altitude_m", float(state.get_path("site.altitude_m") or 0.0)))


def _lengths(values_m, unit: str) -> str:
    """Lengths [m] as a comma-separated list in ``unit``, to 0.1 (2 m as "2")."""
    return ", ".join(f"{units.length_from_si(z, unit):.1f}".rstrip("0").rstrip(".")
                     for z in values_m)


def _day_ns(day) -> int | None:
    if day is None:
        return None
    return int(pd.Timestamp(_dt.datetime(day.year, day.month, day.day), tz="UTC").value)


def _reference(form: dict) -> tuple | None:
    """The long-term expander; the reference's keywords when it is to be used, else None."""
    ss = st.session_state
    with st.expander("Correct to the long term with a reference", expanded=form["lt_on"]):
        st.caption("A long reference (a weather station's CSV, or a NetCDF3 reanalysis grid) "
                   "that overlaps the record. Lines fitted per sector over the concurrent "
                   "period carry the reference's long history to the site.")
        _keep_upload(st.file_uploader("Reference series", type=["csv", "txt", "tsv", "nc"],
                                      key="lt_upload"), "lt_file")
        _kept_line("lt_file", "Reference")
        if "rf|lt_on" not in ss:
            ss["rf|lt_on"] = form["lt_on"]
        form["lt_on"] = st.toggle("Use the long-term correction", key="rf|lt_on")
        if "rf|method" not in ss:
            ss["rf|method"] = form["method"]
        form["method"] = st.selectbox("Method", list(MCP_METHODS), key="rf|method",
                                      format_func=record_view.METHOD_WORDS.get)
        c1, c2 = st.columns(2)
        for col, name, label in ((c1, "start", "Concurrent period from (blank: all)"),
                                 (c2, "end", "Concurrent period until, not including")):
            form[name] = col.date_input(label, key=f"rf|{name}", value=form[name],
                                        min_value=_dt.date(1950, 1, 1))
        c1, c2 = st.columns(2)
        with c1:
            _number("Reference height", form, "ref_height_m", "length", "%.1f")
        with c2:
            _number("Roughness around the reference", form, "ref_roughness_m", "length", "%.3f")
        st.caption("Latitude and longitude pick a NetCDF grid's nearest cell (not used for a "
                   "CSV).")
        c1, c2 = st.columns(2)
        with c1:
            _number("Latitude (°)", form, "lat_deg", "plain", "%.4f")
        with c2:
            _number("Longitude (°)", form, "lon_deg", "plain", "%.4f")
    kept = ss.get("lt_file")
    if form["lt_on"] and not kept:
        st.warning("The long-term correction is switched on but no reference is kept: upload "
                   "one, or the climate is built from the record alone.",
                   icon=":material/warning:")
    if not form["lt_on"] or not kept:
        return None
    return (("data", kept["data"]), ("name", kept["name"]), ("method", form["method"]),
            ("lat_deg", form["lat_deg"]), ("lon_deg", form["lon_deg"]),
            ("height_m", form["ref_height_m"]), ("roughness_m", form["ref_roughness_m"]),
            ("period_start_ns", _day_ns(form["start"])), ("period_end_ns", _day_ns(form["end"])))


def render() -> None:
    """The measured-record form, the build button and what the engine found."""
    ss = st.session_state
    st.caption("A CSV or TSV of time, speed and direction (gust, temperature, pressure "
               "optional), or a logger file with heights in its headers (ws_5m, ws_5m_sd, "
               "wd_5m...), up to 100 MiB. Units are read from the headers; quality control "
               "runs before the fit.")
    _keep_upload(st.file_uploader("Measured record", type=["csv", "txt", "tsv"],
                                  key="record_upload"), "record_file")
    _kept_line("record_file", "Record")
    form = _form()
    kept = ss.get("record_file")
    settings = _settings(form, kept["data"] if kept else b"")
    reference = _reference(form)
    if kept and st.button("Build the climate from this record", key="build_record"):
        _build(kept, settings, reference)
    for where, msg in ss["local_problems"].get("climate", []):
        st.error(f"**{widgets.plain(where)}:** {widgets.plain(msg)}", icon=":material/error:")
    res = ss.get("record_result")
    if kept and not res:
        st.info("The record is kept, but the climate is not built from it yet: the results "
                "use the climate below until you build it.", icon=":material/info:")
    if res:
        if kept and res.get("built_with") != _built_with(kept, settings, reference):
            st.warning("The climate below was built with other settings (or files) than "
                       "those above: the results use it as built. Build the climate again "
                       "to use the settings above.", icon=":material/warning:")
        _show(res)


def _built_with(kept: dict, settings: tuple, reference: tuple | None) -> tuple:
    """What a build depends on, to notice a setting changed since (files by name and size)."""
    ref = tuple((k, v) for k, v in reference if k != "data") if reference else None
    return (kept["name"], kept["size"], settings, ref)


def _build(kept: dict, settings: tuple, reference: tuple | None) -> None:
    ss = st.session_state
    ref_name = dict(reference)["name"] if reference else ""
    pid = dict(settings)["position_id"]
    if pid and pid not in _draft_position_ids():
        state.set_local_problems("climate", [(
            "Position the logger stands at", f"must be one of the site's positions, got "
            f"{pid!r}, which step 3 no longer has; choose another or a reference")])
        return
    try:
        with st.spinner("Reading, checking and fitting the record…"):
            view = cache.record_climate(kept["data"], kept["name"], settings, reference)
    except InputError as e:
        state.set_local_problems("climate", [
            (record_view.field_label(w, kept["name"], ref_name), m) for w, m in e.problems])
        return
    clim = view["climate"]
    state.set_path("climate", clim)
    base = dict(settings)["base_height_m"]
    moved = ""
    if pid:
        i = [p.get("id") for p in state.get_path("positions", [])].index(pid)
        mast = round(clim["height_m"] - base, 3)
        if state.get_path(f"positions.{i}.mast_height_m") != mast:
            state.set_path(f"positions.{i}.mast_height_m", mast)
            moved = (pid, mast)
    ss["record_result"] = dict(view, file=kept["name"], reference_file=ref_name, moved=moved,
                               built_with=_built_with(kept, settings, reference))
    state.set_local_problems("climate", [])
    state.clear_widgets()
    state.validate()


def _show(res: dict) -> None:
    """What the engine found: quality control, notes, measured TI and shear, the correction."""
    st.markdown(f"**Quality control of {widgets.plain(res['file'])}**")
    st.code(res["qc"], language=None)
    L, S = state.unit_of("length"), state.unit_of("speed")
    if res.get("moved"):
        pid, mast = res["moved"]
        st.info(widgets.plain(f"Position {pid}'s mast set to the logger's height above its "
                              f"base, {_lengths([mast], L)} {L}, so the climate stands at its "
                              "hub."), icon=":material/info:")
    for note in res["notes"]:
        st.warning(widgets.plain(note), icon=":material/warning:")
    if res["measured"] is not None:
        st.markdown(f"**Measured at {_lengths([res['height_m']], L)} {L}** (logged heights "
                    f"{_lengths(res['heights_m'], L)} {L} above the base)")
        if res["shear_all"] is not None:
            st.caption(f"Shear exponent over all sectors: {res['shear_all']:.3f} (power law "
                       "between the logged heights)")
        st.dataframe(res["measured"], hide_index=True,
                     column_config={c: st.column_config.NumberColumn(format="%.3f")
                                    for c in ("measured TI", "shear exponent")})
    lt = res.get("long_term")
    if lt:
        _show_long_term(lt, res.get("reference_file", ""), S)


def _show_long_term(lt: dict, name: str, S: str) -> None:
    s, u = lt["stats"], lt["uncertainty"]
    st.markdown(f"**Long-term correction against {widgets.plain(name)}** "
                f"({widgets.plain(record_view.METHOD_WORDS.get(s['method'], s['method']))})")
    c1, c2, c3, c4 = st.columns(4)
    c1.metric("Concurrent period", f"{s['overlap_days']:.0f} days", f"{s['pairs']:,} pairs",
              delta_color="off", delta_arrow="off")
    c2.metric("Correlation r", f"{s['correlation']:.2f}")
    c3.metric("Long-term adjustment", f"{lt['adjustment']:+.1%}",
              f"{units.speed_from_si(s['target_mean_ms'], S):.2f} → "
              f"{units.speed_from_si(s['long_term_mean_ms'], S):.2f} {S}",
              delta_color="off", delta_arrow="off",
              help="Long-term mean speed at the site against the mean measured over the "
                   "concurrent period")
    c4.metric("Its uncertainty (1σ)", f"{u['total']:.1%}")
    st.caption(f"Uncertainty parts: correlation {u['correlation_part']:.1%}, length of the "
               f"reference {u['period_part']:.1%}, short concurrent period "
               f"{u['season_part']:.1%}; year-to-year variability "
               f"{u['interannual_variability']:.1%} ({widgets.plain(u['interannual_from'])}).")
    st.vega_lite_chart(lt["scatter"], width="content", theme=None)
    table = lt["sectors"].assign(line=lt["sectors"]["line"].map(LINE_WORDS).fillna(
        lt["sectors"]["line"]))
    st.dataframe(table, hide_index=True, column_config={
        "line": st.column_config.TextColumn("line used"),
        "sector_deg": st.column_config.NumberColumn("sector (°)", format="%.0f"),
        "slope": st.column_config.NumberColumn(format="%.3f"),
        "offset_ms": st.column_config.NumberColumn("offset (m/s)", format="%.3f"),
        "correlation": st.column_config.NumberColumn(format="%.3f"),
        "veer_deg": st.column_config.NumberColumn("veer (°)", format="%.1f")})
