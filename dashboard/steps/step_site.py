"""Step 1: the site as a whole, and loading or starting a site file."""
import json

import streamlit as st

from dashboard import state, widgets
from engine.io import sitefile
from engine.core.errors import InputError

#: Heading of the message for a site file that could not be opened.
FILE_NOT_OPENED = ("**{name} was not opened**; the working copy is unchanged. Fix the file "
                   "and open it again:")

widgets.step_banner("site", "1. Site")
if st.session_state["loaded_from"] == "built-in demo site":
    st.info("**The built-in demo is open and complete**: an invented estate with its wind "
            "climate, buildings, candidate positions and turbines already entered. Look at "
            "**5. Results** first for the ranked positions, the plan and each position's "
            "detail; change anything on the steps and the results follow. Open your own site "
            "file below to start a real assessment.", icon=":material/waving_hand:")
    st.page_link("steps/step_results.py", label="Go to 5. Results", icon=":material/bar_chart:")
st.caption("Where the site is and what surrounds it. Heights and roughness set how the "
           "reference wind is carried to each rotor.")

if widgets.editing():
    with st.container(border=True):
        st.markdown("**Open or start a site file**")
        up = st.file_uploader(
            "Open a site file (Perch JSON, up to 20 MB)", type=["json"], key="site_upload",
            max_upload_size=20,
            help="Everything a result depends on is in the site file.")
        c1, c2 = st.columns(2)
        if c1.button("Open this file", disabled=up is None, key="open_site"):
            try:
                raw = up.getvalue()
                try:
                    a, notes = sitefile.loads_with_notes(raw)
                except AttributeError:
                    a, notes = sitefile.loads(raw), []
                state.replace_draft(sitefile.assessment_to_dict(a), up.name, notes)
                st.session_state["climate_mode"] = (
                    a.climate.source if a.climate.source in ("mean_speed", "measured")
                    else "table")
                st.rerun()
            except InputError as e:
                st.session_state["open_problems"] = e.problems
                st.session_state["open_problems_file"] = up.name
        if c2.button("Start again from the demo site", key="reset_demo"):
            from dashboard import cache
            state.replace_draft(json.loads(cache.demo_text()), "built-in demo site")
            st.session_state["climate_mode"] = "demo"
            st.rerun()
        bad = st.session_state.get("open_problems", [])
        if bad:
            # One message for the file (not for this step's inputs, which are unchanged).
            name = st.session_state.get("open_problems_file", "the file")
            st.error(f"{FILE_NOT_OPENED.format(name=name)}\n\n"
                     + "\n".join(f"- **{where}:** {msg}" for where, msg in bad),
                     icon=":material/error:")
        if up is None and "open_problems" in st.session_state:
            del st.session_state["open_problems"]
    for n in st.session_state.get("notes", []):
        st.info(f"{n}", icon=":material/info:")

disabled = not widgets.editing()
c1, c2 = st.columns(2)
with c1:
    widgets.text("Site name", "site.name")
    widgets.text("Assessor", "site.assessor")
    widgets.number("Altitude above sea level", "site.altitude_m", "length", "%.1f",
                   help="Sets the air density with the standard atmosphere.")
    widgets.number("Mean air temperature (°C)", "site.air_temperature_c", fmt="%.1f")
    widgets.number("Mean air pressure (Pa), if measured", "site.air_pressure_pa", fmt="%.0f",
                   optional=True, help="Leave empty to use the standard atmosphere.")
with c2:
    widgets.number("Roughness length of the surroundings", "site.terrain_roughness_m",
                   "length", "%.3f",
                   help="About 0.3 m for suburbs, 1 m for town centres (EN 1991-1-4, Table 4.1).")
    widgets.number("Displacement height of the surroundings", "site.displacement_m", "length",
                   "%.1f", help="Height where the wind profile starts among buildings; 0 in "
                                "open country.")
    widgets.number("Mean building height around the site", "site.mean_building_height_m",
                   "length", "%.1f", optional=True)
    widgets.number("Plan area fraction of buildings (0–1)", "site.plan_area_fraction",
                   fmt="%.2f", optional=True)
    widgets.number("Frontal area fraction of buildings (0–1)", "site.frontal_area_fraction",
                   fmt="%.2f", optional=True)
widgets.text("Notes", "site.notes", area=True)
