"""Step 2: the wind climate: the demo, a sector table, a mean speed, or a measured record."""
import streamlit as st

from dashboard import climate_forms, widgets

widgets.step_banner("climate", "2. Wind climate")
st.caption("The reference wind: how often it blows from each sector and how strongly, at a "
           "stated height over a stated roughness.")

MODES = climate_forms.modes()
ss = st.session_state
if widgets.editing():
    if ss.get("climate_mode") not in MODES:
        ss["climate_mode"] = "table"
    if "climate_mode_w" not in ss:
        ss["climate_mode_w"] = ss["climate_mode"]
    mode = st.radio("Where the wind climate comes from", list(MODES), key="climate_mode_w",
                    format_func=MODES.get, horizontal=True)
    ss["climate_mode"] = mode
    climate_forms.render(mode)
climate_forms.summary()
