"""Compare saved what-if scenarios side by side, differences highlighted."""
import json

import pandas as pd
import streamlit as st

from dashboard import cache, results_view, state, widgets

ss = st.session_state
st.title("Compare what-ifs")
S, L = state.units_now()
names = list(ss["scenarios"])
if len(names) < 1:
    st.info("No scenario saved yet. On the Results step, set a what-if and press "
            "“Save scenario”; save two or more to compare them here.", icon=":material/info:")
    st.page_link("steps/step_results.py", label="Go to Results", icon=":material/bar_chart:")
    st.stop()

if "compare_pick" not in ss or not set(ss["compare_pick"]) <= set(names):
    ss["compare_pick"] = names[-3:]
pick = st.multiselect("Scenarios to compare", names, default=ss["compare_pick"],
                      key="compare_pick_w")
ss["compare_pick"] = pick
include_current = st.checkbox("Include the current inputs", value=True, key="compare_current")

docs, outcomes = {}, {}
for n in pick:
    text = ss["scenarios"][n]
    docs[n] = json.loads(text)
    outcomes[n] = results_view.scenario_outcome(cache.evaluate_text(text), S, L)
if include_current:
    docs["current"] = json.loads(state.draft_text())
    outcomes["current"] = results_view.scenario_outcome(state.evaluation(), S, L)

if len(docs) < 2:
    st.info("Pick at least two scenarios (or one and the current inputs).", icon=":material/info:")
    st.stop()

sites = results_view.different_sites(docs)
if sites:
    st.warning("These scenarios are of different sites (" + ", ".join(f"“{widgets.plain(s)}”" for s in sites)
               + "): buildings and positions are matched by name, so one site's rows show "
               "empty in the other's column.", icon=":material/warning:")
first = list(docs)[0]
st.subheader("Outcomes")
st.caption(f"Cells that differ from “{widgets.plain(first)}” are highlighted.")
out = pd.DataFrame(outcomes)
out.index.name = "outcome"


def _mark(df):
    ref = df[first]
    styles = pd.DataFrame("", index=df.index, columns=df.columns)
    for c in df.columns[1:]:
        styles[c] = ["background-color: #fde7c2; font-weight: 600" if a != b else ""
                     for a, b in zip(df[c], ref)]
    return styles


st.table(out.astype(str).style.apply(_mark, axis=None), hide_index=False)

st.subheader("Inputs that differ")
diff = results_view.input_differences(docs)
if diff.empty:
    st.success("The inputs are the same in every scenario shown.")
else:
    d = diff.set_index("input")
    st.table(d.style.apply(_mark, axis=None), hide_index=False)

if widgets.editing():
    st.subheader("Manage")
    c1, c2 = st.columns(2)
    which = c1.selectbox("Scenario", names, key="manage_pick")
    if c2.button("Make it the current inputs", key="restore_scenario"):
        state.restore_scenario(which)
        st.rerun()
    if c2.button("Delete it", key="delete_scenario"):
        state.delete_scenario(which)
        st.rerun()
