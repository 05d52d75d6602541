"""Step 6: the siting summary and everything to take away."""
import json

import streamlit as st

from dashboard import exports, results_view, series_view, state, widgets
from engine.chain.verdict import headline_for

ss = st.session_state
widgets.step_banner("summary", "6. Summary")
S, L = state.units_now()
a = ss["valid"]
ev = state.evaluation()

if widgets.editing():
    st.markdown("**Steps**")
    for i, (key, title, _) in enumerate(state.STEPS):
        if key == "summary":
            continue  # this page sums the others up; it is not a step of its own
        ok = state.complete(key)
        mark = ":material/check_circle:" if ok else ":material/warning:"
        st.markdown(f"{mark} {i + 1}. {title}: {'complete' if ok else 'needs attention'}")

st.subheader("Ranked options")
st.markdown(f"**{widgets.plain(headline_for(ev))}**")  # it quotes ids and names
st.table(results_view.top_rows(ev.table, S, L, n=5), hide_index=False)

st.subheader("Take away")
st.caption("Exports keep SI units, named in every column (``hub_height_m``, ``aep_kwh``). "
           "The site file reproduces these results exactly.")
base = exports.file_stem(a)
c1, c2, c3 = st.columns(3)
c1.download_button("Site file (JSON)", exports.site_file_bytes(a), f"{base}.perch.json",
                   "application/json", key="dl_site")
c2.download_button("Ranking (CSV)", exports.rank_csv_bytes(ev), f"{base}-ranking.csv",
                   "text/csv", key="dl_csv")
c3.download_button("Ranking (JSON)", exports.rank_json_bytes(ev), f"{base}-ranking.json",
                   "application/json", key="dl_json")
report = exports.report_builders()
if report:
    c1, c2 = st.columns(2)
    if st.button("Prepare the siting summary (HTML and PDF)", key="make_report"):
        with st.spinner("Drawing the summary…"):
            ss["report_files"] = exports.build_report(ev, series_view.record_series(a.climate))
    files = ss.get("report_files")
    if files and files.get("sha") == exports.content_sha(a):
        if files.get("html") is not None:
            c1.download_button("Siting summary (HTML)", files["html"], f"{base}-summary.html",
                               "text/html", key="dl_html")
        if files.get("pdf") is not None:
            c2.download_button("Siting summary (PDF)", files["pdf"], f"{base}-summary.pdf",
                               "application/pdf", key="dl_pdf")
        for where, msg in files.get("problems", []):
            st.error(f"**{widgets.plain(where)}:** {widgets.plain(msg)}",
                     icon=":material/error:")

st.subheader("Safety cautions")
for title, text in widgets.CAUTIONS:
    st.markdown(f"**{title}.** {text}")
st.caption(widgets.CAUTION_FOOTER)
