"""Perch dashboard: a guided small-wind siting assessment.

Start it with ``python -m dashboard`` (loopback only, no usage statistics, from any folder).
The pages read widgets, build the engine's dataclasses, call
:func:`engine.chain.pipeline.evaluate` and draw the results; no model lives here.
"""
from __future__ import annotations

import os
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import streamlit as st  # noqa: E402

from dashboard import memory, serving, state, widgets  # noqa: E402
from engine.core import units  # noqa: E402

HERE = Path(__file__).resolve().parent
# A local icon: a named Material icon as page icon makes the browser fetch it from a font
# server on every load.
st.set_page_config(page_title="Perch: small wind siting", page_icon=str(HERE / "perch-icon.png"),
                   layout="wide")

level, message = serving.exposure(st.get_option("server.address"), os.environ)
if level == "refuse":
    st.error(message, icon=":material/block:")
    st.stop()
elif level == "warn":
    st.warning(message, icon=":material/warning:")

state.init()
state.sync_widgets()
state.validate()

PAGE_FILES = {
    "site": "steps/step_site.py",
    "climate": "steps/step_climate.py",
    "layout": "steps/step_layout.py",
    "turbines": "steps/step_turbines.py",
    "results": "steps/step_results.py",
    "summary": "steps/step_summary.py",
}


def _title(i: int, key: str, title: str) -> str:
    if key == "summary" or not widgets.editing():
        return f"{i}. {title}"
    return f"{i}. {title} {'✓' if state.complete(key) else '!'}"


pages = [st.Page(HERE / PAGE_FILES[key], title=_title(i + 1, key, title), url_path=key,
                 default=(key == "site"))
         for i, (key, title, _) in enumerate(state.STEPS)]
pages.append(st.Page(HERE / "steps" / "step_compare.py", title="Compare what-ifs",
                     url_path="compare"))
extra = []
if (HERE / "screening_page.py").exists():
    extra.append(st.Page(HERE / "screening_page.py", title="District screening",
                         url_path="screening"))
nav = st.navigation({"Assessment": pages, **({"More": extra} if extra else {})})


def _sidebar() -> None:
    st.markdown("### Perch")
    st.caption(f"Working on: **{widgets.plain(state.get_path('site.name', ''))}** "
               f"(from {widgets.plain(st.session_state['loaded_from'])})")
    st.toggle("Presentation mode", key="presentation",
              help="Hide the editing widgets, step marks and settings for a client session; "
                   "switch off to edit again.")
    if widgets.editing():
        with st.expander("Display units", expanded=False):
            st.radio("Speeds", list(units.SPEED_UNITS), key="speed_unit", horizontal=True)
            st.radio("Lengths", list(units.LENGTH_UNITS), key="length_unit", horizontal=True,
                     format_func=lambda u: {"m": "metres", "ft": "feet"}[u])
            st.caption("Inside, everything is SI; exports keep SI with the unit in each "
                       "column name.")
    found = state.earlier_work()
    if found:
        st.info(found)
        # One above the other: side by side the sidebar cut the second label short.
        st.button("Restore it", key="autosave_restore", on_click=state.restore_autosave,
                  width="stretch")
        st.button("Keep the demo", key="autosave_dismiss", on_click=state.dismiss_autosave,
                  width="stretch")
    if st.session_state.get("autosave_error"):
        st.warning(widgets.plain(st.session_state["autosave_error"]))
    if widgets.editing():
        n_bad = len(state.steps_needing_attention())
        if n_bad:
            st.warning(f"{n_bad} step(s) need attention (marked !).")
        else:
            st.success("All steps complete.")
    widgets.cautions()


with st.sidebar:
    _sidebar()
drawn = st.session_state["drawn_status"] = state.status_signature()
try:
    nav.run()
finally:
    state.flush_autosave()  # also when a page stops or reruns early
# A page's action (a table edit, a button) can change the steps' state after the sidebar, the
# marks and the banner were drawn: draw once more so the status says what is true now.
if state.status_signature() != drawn and not st.session_state.get("status_rerun"):
    st.session_state["status_rerun"] = True
    st.rerun()
st.session_state["status_rerun"] = False
# A page's first whole run has imported what it needs and filled its caches once: set those
# objects aside from the collector's scans (dashboard/memory.py), so later runs end at once.
memory.freeze_after_first_run(str(getattr(nav, "url_path", "")))
