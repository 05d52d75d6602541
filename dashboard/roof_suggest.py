"""The layout step's roof suggestions: candidates from the engine, accepted into the positions.

The candidates and their masts come from
:func:`engine.flow.roof_suggestions.suggest_roof_positions`; this module only shows them, lets
the assessor tick, move, re-mast or delete them, and appends the ticked ones to the working
copy's positions under names no position already uses. The suggestions are kept in the
session (``roof_suggestions``) with every edit, so a rerun or a page change loses nothing.
"""
from __future__ import annotations

import streamlit as st

from dashboard import state, widgets
from engine.core.errors import InputError
from engine.flow import roof_suggestions as rs
from engine.flow.roof_candidates import DEFAULT_SETBACK_M

KEY = "roof_suggestions"


def _columns(L: str) -> list:
    num = st.column_config.NumberColumn
    return [
        ("accept", "accept", "bool", st.column_config.CheckboxColumn(
            help="Tick to add this position to the site's candidate positions")),
        ("id", "name", "text", st.column_config.TextColumn(required=True)),
        ("x_m", f"x east ({L})", "length", num(format="%.1f")),
        ("y_m", f"y north ({L})", "length", num(format="%.1f")),
        ("mast_height_m", f"mast height ({L})", "length", num(
            format="%.1f", help="Suggested: the shortest mast above the roof that keeps the "
                                "largest chosen rotor clear of the roof's turbulence zone, at "
                                "the suggested point (worked out again for a moved point by the button "
                                "below the table)")),
        ("min_clear_mast_m", f"zone top above the roof ({L})", "length",
         num(format="%.1f", disabled=True, help="Height above the roof where the turbulence "
                                                "zone ends at this point; the mast adds the "
                                                "rotor radius so the whole rotor clears it")),
        ("edge_distance_m", f"to the nearest edge ({L})", "length",
         num(format="%.1f", disabled=True)),
        # The engine's words give their lengths in metres; the label says so in feet.
        ("why", "why here" if L == "m" else "why here (lengths in m)", "text",
         st.column_config.TextColumn(disabled=True, width="large")),
    ]


#: The engine's name of a suggestion setting -> the field's label on the page.
SETTING_LABELS = {"spacing": "Grid spacing", "set-back": "Kept from every edge"}


def _suggest(assessment, building: str, spacing_m, setback_m) -> None:
    ss = st.session_state
    try:
        frame = rs.suggest_roof_positions(assessment, building, spacing_m=spacing_m,
                                          setback_m=setback_m)
    except InputError as e:
        note = "" if state.unit_of("length") == "m" else " (checked in metres)"
        ss[KEY] = {"building": building, "rows": [],
                   "error": [f"{SETTING_LABELS.get(where, where)}: {msg}"
                             f"{note if where in SETTING_LABELS else ''}"
                             for where, msg in e.problems]}
        return
    rows = frame.to_dict("records")
    for r in rows:
        r["accept"] = False
    ss[KEY] = {"building": building, "rows": rows, "error": []}
    state.clear_widgets()  # the suggestion table starts again from the new rows


def _measured(assessment, got: dict, rows: list):
    """The engine's masts and edge distances at the rows' points, or None after showing
    its messages (a point off the roof, a cell left empty) by the rows' names."""
    ss = st.session_state
    try:
        return rs.measure_roof_points(assessment, got["building"],
                                      [_number(r.get("x_m")) for r in rows],
                                      [_number(r.get("y_m")) for r in rows])
    except InputError as e:
        names = {f"point {k + 1}": str(r.get("id") or f"row {k + 1}") for k, r in enumerate(rows)}
        ss["roof_suggest_errors"] = [f"{names.get(w, w)}: {m}" for w, m in e.problems]
        return None


def _number(v) -> float:
    return float(v) if isinstance(v, (int, float)) else float("nan")


def _remeasure(assessment, got: dict) -> None:
    """Masts and edge distances worked out again where the rows now stand."""
    found = _measured(assessment, got, got["rows"])
    if found is None:
        return
    for k, r in enumerate(got["rows"]):
        for c in ("mast_height_m", "min_clear_mast_m", "edge_distance_m"):
            r[c] = float(found[c][k])
    st.session_state["roof_suggest_note"] = "Masts worked out again at the points shown."
    state.clear_widgets()


def _accept(draft: dict, got: dict, assessment) -> None:
    """Append the ticked rows to the draft's positions; the rest stay suggested."""
    ss = st.session_state
    ticked = [r for r in got["rows"] if r.get("accept")]
    if not ticked:
        ss["roof_suggest_note"] = "Tick at least one suggestion to add it."
        return
    if _measured(assessment, got, ticked) is None:  # each must stand on the roof
        return
    taken = [str(p.get("id")) for p in draft["positions"] if p.get("id")]
    names = rs.free_ids([str(r.get("id") or f"{got['building']}-s") for r in ticked], taken)
    for r, name in zip(ticked, names):
        draft["positions"].append({
            "id": name, "kind": "roof", "x_m": r.get("x_m"), "y_m": r.get("y_m"),
            "mast_height_m": r.get("mast_height_m"), "building_id": got["building"],
            "gap_buildings": [], "note": f"suggested: {r.get('why') or 'by hand'}"})
    got["rows"] = [r for r in got["rows"] if not r.get("accept")]
    renamed = [f"{r.get('id')} as {n}" for r, n in zip(ticked, names) if r.get("id") != n]
    ss["roof_suggest_note"] = (f"Added {len(names)} position(s) on {got['building']}: "
                               + ", ".join(names)
                               + (f" (names in use: added {', '.join(renamed)})"
                                  if renamed else "")
                               + ". Move, re-mast or delete them in the positions table.")
    state.clear_widgets()
    state.validate()


def section(draft: dict, edit: bool, L: str) -> None:
    """The "Suggest positions on this roof" panel of the layout step."""
    ss = st.session_state
    st.subheader("Suggest positions on a roof")
    if not edit:
        return
    if state.any_problems():
        st.info("Suggestions are worked out from complete inputs: fix the problems the "
                "sidebar marks first.", icon=":material/info:")
        return
    a = ss["valid"]
    ids = [b.id for b in a.buildings]
    if not ids:
        st.info("Enter a building first.", icon=":material/info:")
        return
    c1, c2, c3 = st.columns(3)
    building = c1.selectbox("Building", ids, key="suggest_building")
    # Kept in SI, so a change of units shows what was typed, converted, not the default.
    kept = ss.setdefault("suggest_settings_m", {"spacing": rs.DEFAULT_SPACING_M,
                                                "setback": DEFAULT_SETBACK_M})
    spacing = c2.number_input(f"Grid spacing ({L})", key=f"suggest_spacing|{L}",
                              value=state.to_display(kept["spacing"], "length"),
                              format="%.1f")
    setback = c3.number_input(f"Kept from every edge ({L})", key=f"suggest_setback|{L}",
                              value=state.to_display(kept["setback"], "length"),
                              format="%.1f")
    for name, v in (("spacing", spacing), ("setback", setback)):
        if v is not None:
            kept[name] = state.to_si(float(v), "length")
    st.caption("Candidates at the roof's centre and on a grid kept away from its edges, each "
               "with the shortest mast that keeps the largest chosen rotor clear of the roof's "
               "turbulence zone. A suggestion is where to look, not a verdict: the ranked "
               "results assess the accepted ones. Whether the roof can carry a mast and its "
               "loads is for a structural engineer; mounting it is work at height.")
    if st.button("Suggest positions on this roof", key="suggest_go"):
        _suggest(a, building, state.to_si(spacing, "length"), state.to_si(setback, "length"))
        st.rerun()
    got = ss.get(KEY)
    note = ss.pop("roof_suggest_note", "")
    if note:
        st.success(note, icon=":material/check_circle:")
    for msg in ss.pop("roof_suggest_errors", []):
        st.error(f"**Suggestions:** {widgets.plain(msg)}", icon=":material/error:")
    if not got:
        return
    for msg in got["error"]:
        st.error(f"**Suggestions on {widgets.plain(got['building'])}:** {widgets.plain(msg)}",
                 icon=":material/error:")
    if got["building"] not in ids:
        st.warning(f"Building {widgets.plain(got['building'])} is no longer on the site.")
        return
    if not got["rows"]:
        return
    st.caption(f"Suggested on **{widgets.plain(got['building'])}**: tick the ones to add; "
               "change a name, a place or a mast, or delete a row, as in any table.")
    got["rows"] = widgets.table(KEY, got["rows"], _columns(L))
    c1, c2 = st.columns(2)
    if c1.button("Add the ticked positions to the site", key="suggest_accept"):
        _accept(draft, got, a)
        st.rerun()
    if c2.button("Work out the masts again where the points now stand",
                 key="suggest_remeasure"):
        _remeasure(a, got)
        st.rerun()
    _plan(a, got, L)


def _plan(a, got: dict, L: str) -> None:
    import pandas as pd
    from engine.report import charts
    rows = [r for r in got["rows"] if all(isinstance(r.get(k), (int, float))
                                          for k in ("x_m", "y_m", "mast_height_m"))]
    frame = pd.DataFrame(rows, columns=["id", "x_m", "y_m", "mast_height_m"])
    st.vega_lite_chart(charts.suggestion_plan(a, got["building"], frame, L).to_dict(),
                       width="stretch", theme=None)
