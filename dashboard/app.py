"""Perch dashboard: a guided small-wind siting assessment.

Run with ``streamlit run dashboard/app.py`` from the repository root. The pages read widgets,
build the engine's dataclasses, call :func:`engine.chain.pipeline.evaluate` and draw the results;
no model lives here.
"""
from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import streamlit as st  # noqa: E402

from dashboard import state, widgets  # noqa: E402
from engine.core import units  # noqa: E402

st.set_page_config(page_title="Perch: small wind siting", page_icon=":material/air:", layout="wide")

state.init()
state.sync_widgets()
state.validate()

HERE = Path(__file__).resolve().parent
PAGE_FILES = {
    "site": "steps/step_site.py",
    "climate": "steps/step_climate.py",
    "layout": "steps/step_layout.py",
    "turbines": "steps/step_turbines.py",
    "results": "steps/step_results.py",
    "summary": "steps/step_summary.py",
}


def _title(i: int, key: str, title: str) -> str:
    mark = "✓" if state.complete(key) else "!"
    return f"{i}. {title} {mark}"


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

with st.sidebar:
    st.markdown("### Perch")
    st.caption(f"Working on: **{widgets.plain(state.get_path('site.name', ''))}** "
               f"(from {widgets.plain(st.session_state['loaded_from'])})")
    st.toggle("Presentation mode", key="presentation",
              help="Hide the editing widgets for a client session; switch off to edit again.")
    with st.expander("Display units", expanded=False):
        st.radio("Speeds", list(units.SPEED_UNITS), key="speed_unit", horizontal=True)
        st.radio("Lengths", list(units.LENGTH_UNITS), key="length_unit", horizontal=True,
                 format_func=lambda u: {"m": "metres", "ft": "feet"}[u])
        st.caption("Inside, everything is SI; exports keep SI with the unit in each column "
                   "name.")
    found = st.session_state.get("autosave_found")
    if found:
        st.info(f"Work from an earlier session was autosaved on "
                f"{found[1]:%Y-%m-%d %H:%M} UTC.")
        # One above the other: side by side the sidebar cut the second label short.
        st.button("Restore it", key="autosave_restore", on_click=state.restore_autosave,
                  width="stretch")
        st.button("Keep the demo", key="autosave_dismiss", on_click=state.dismiss_autosave,
                  width="stretch")
    if st.session_state.get("autosave_error"):
        st.warning(widgets.plain(st.session_state["autosave_error"]))
    n_bad = sum(1 for k, _, _ in state.STEPS if not state.complete(k))
    if n_bad:
        st.warning(f"{n_bad} step(s) need attention (marked !).")
    else:
        st.success("All steps complete.")
    widgets.cautions()

nav.run()
