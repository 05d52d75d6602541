"""Step 3: buildings, candidate positions and the places where noise matters."""
import streamlit as st

from dashboard import (cache, consent_inputs, neighbour_settings, results_view, roof_suggest,
                       state, widgets)
from engine.core import model

widgets.step_banner("layout", "3. Buildings & positions")
st.caption("Local plan coordinates: x east, y north, from any fixed point on the site. "
           "Buildings are rectangular blocks; a roof position stands on a building, a passage "
           "position between two, a mast position on the ground.")

L = state.unit_of("length")
ss = st.session_state
draft = ss["draft"]
edit = widgets.editing()
num = st.column_config.NumberColumn

B_COLS = [
    ("id", "name", "text", st.column_config.TextColumn(required=True)),
    ("x_m", f"x east ({L})", "length", num(format="%.1f")),
    ("y_m", f"y north ({L})", "length", num(format="%.1f")),
    ("length_m", f"length ({L})", "length", num(format="%.1f")),
    ("width_m", f"width ({L})", "length", num(format="%.1f")),
    ("height_m", f"height ({L})", "length", num(format="%.1f")),
    ("orientation_deg", "length side bearing (°)", "number", num(format="%.0f")),
    ("roof_type", "roof", "choice", st.column_config.SelectboxColumn(options=model.ROOF_TYPES)),
    ("roof_pitch_deg", "roof pitch (°)", "number", num(format="%.0f")),
    ("parapet_height_m", f"parapet ({L})", "length", num(format="%.2f")),
]
B_LABELS = {f: lab for f, lab, _, _ in B_COLS}

st.subheader("Buildings")
rows = widgets.table("buildings", draft["buildings"], B_COLS, disabled=not edit)
changed = rows != draft["buildings"]
renamed_b = state.renamed_ids(draft["buildings"], rows)
draft["buildings"] = rows

building_ids = [str(r.get("id")) for r in rows if r.get("id")]
P_COLS = [
    ("id", "name", "text", st.column_config.TextColumn(required=True)),
    ("kind", "kind", "choice", st.column_config.SelectboxColumn(
        options=model.POSITION_KINDS, required=True,
        format_func=lambda k: results_view.KIND_LABELS.get(k, k))),
    ("x_m", f"x east ({L})", "length", num(format="%.1f")),
    ("y_m", f"y north ({L})", "length", num(format="%.1f")),
    ("mast_height_m", f"mast height ({L})", "length",
     num(format="%.1f", help="Hub height above the roof (roof positions) or the ground")),
    ("building_id", "on building", "choice",
     st.column_config.SelectboxColumn(options=[""] + building_ids)),
    ("gap_buildings", "passage between (two names, comma)", "list", None),
    ("note", "note", "text", None),
]
P_LABELS = {f: lab for f, lab, _, _ in P_COLS}
st.subheader("Candidate positions")
prow = widgets.table("positions", draft["positions"], P_COLS, disabled=not edit)
for r in prow:
    if r.get("building_id") is None:
        r["building_id"] = ""
    if r.get("note") is None:
        r["note"] = ""
    if r.get("gap_buildings") is None:
        r["gap_buildings"] = []
changed |= prow != draft["positions"]
renamed_p = state.renamed_ids(draft["positions"], prow)
draft["positions"] = prow
suggested = ss.get(roof_suggest.KEY)
if suggested and suggested.get("building") in renamed_b:  # suggestions follow their roof
    suggested["building"] = renamed_b[suggested["building"]]
    ss["suggest_building"] = suggested["building"]
if (renamed_b or renamed_p) and state.carry_renames(
        draft, renamed_p, renamed_b, ss.get("climate_memory", {}).values()):
    # The rows naming a renamed position or building follow the new name; the tables start
    # again from the working copy, which holds every edit so far.
    state.clear_widgets()
    state.validate()
    st.rerun()

R_COLS = [
    ("id", "name", "text", st.column_config.TextColumn(required=True)),
    ("x_m", f"x east ({L})", "length", num(format="%.1f")),
    ("y_m", f"y north ({L})", "length", num(format="%.1f")),
    ("height_m", f"height ({L})", "length", num(format="%.1f")),
    ("limit_db", "noise criterion (dB(A))", "number",
     num(format="%.0f", help="The level not to exceed at this place, as the local authority "
                             "sets it (with the margin above background in the noise "
                             "settings)")),
    ("facing_deg", "window faces (°)", "number",
     num(format="%.0f", min_value=0.0, max_value=359.9,
         help="Bearing the window looks out to, degrees clockwise from north; leave empty "
              "for a garden or a place that is not a window (no shadow flicker counted)")),
    ("window_height_m", f"window height ({L})", "length",
     num(format="%.1f", help="Height of the window's centre above the ground")),
    ("dwelling", "dwelling", "bool",
     st.column_config.CheckboxColumn(default=True,
                                     help="A home: distance rules to dwellings apply here")),
]
with st.expander("Places where noise matters (windows, gardens)", expanded=False):
    rrow = widgets.table("receptors", draft.get("receptors", []), R_COLS, disabled=not edit)
    changed |= rrow != draft.get("receptors", [])
    draft["receptors"] = rrow
changed |= neighbour_settings.background_section(rrow, edit)
changed |= neighbour_settings.criteria_section(draft)
changed |= consent_inputs.rule_set_section(draft, edit)

S = state.unit_of("speed")
position_ids = [str(r.get("id")) for r in prow if r.get("id")]
SP_COLS = [
    ("position_id", "position", "choice",
     st.column_config.SelectboxColumn(options=position_ids, required=True)),
    ("direction_deg", "wind from (°)", "number",
     num(format="%.0f", help="Direction the wind came from during the readings, degrees "
                             "clockwise from north")),
    ("position_speed_ms", f"position readings ({S})", "speedlist",
     st.column_config.TextColumn(help="Handheld readings at the position's hub height, "
                                      "comma-separated, in the order taken")),
    ("reference_speed_ms", f"reference readings ({S})", "speedlist",
     st.column_config.TextColumn(help="The reference's readings at the same moments, one per "
                                      "position reading, in the same order")),
    ("reference_height_m", f"ref. height ({L})", "length",
     num(format="%.1f", help="Height of the reference reading above the ground")),
    ("use_for_calibration", "use for calibration", "bool",
     st.column_config.CheckboxColumn(help="Put the measured speed-up in place of the model's "
                                          "for this position and the sector of the reading")),
    ("note", "note", "text", None),
]
SP_LABELS = {f: lab for f, lab, _, _ in SP_COLS}
with st.expander("Spot readings (handheld beside a reference)", expanded=False):
    st.caption("Short paired readings: a handheld anemometer at a candidate position, taken "
               "at its hub height, and at the same moments the reference the climate "
               "describes (its station, or a sensor standing in for it). The results set the "
               "measured speed-up beside the model's for the sector the wind came from; a row "
               "marked for calibration replaces the model's speed-up there. At least 3 pairs "
               "a row, one reference reading per position reading, in the order taken. A few "
               "minutes of one weather situation are indicative only: the interval states "
               "sampling error, not how representative the minutes were.")
    st.caption("Reading on a roof is work at height: see the safety cautions.")
    srow = widgets.table("spot_readings", draft.get("spot_readings", []), SP_COLS,
                         disabled=not edit)
    for r in srow:
        if r.get("position_id") is None:
            r["position_id"] = ""
        if r.get("note") is None:
            r["note"] = ""
    changed |= srow != draft.get("spot_readings", [])
    draft["spot_readings"] = srow

if changed:
    before = state.complete("layout")
    state.validate()
    if state.complete("layout") != before:
        st.rerun()

widgets.row_messages("buildings", rows, B_LABELS)
widgets.row_messages("positions", prow, P_LABELS)
widgets.row_messages("receptors", rrow, {f: lab for f, lab, _, _ in R_COLS})
widgets.row_messages("spot_readings", srow, SP_LABELS, id_field="position_id")

if not state.step_problems("layout"):
    st.vega_lite_chart(cache.chart_spec("plan", state.draft_text(), state.unit_of("speed"), L),
                       width="stretch", theme=None)
else:
    st.info("The plan is drawn again once the tables above have no problems.",
            icon=":material/info:")

roof_suggest.section(draft, edit, L)
