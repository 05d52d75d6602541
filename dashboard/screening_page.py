"""District screening page: which roofs of a whole portfolio are worth a visit?

Upload a buildings table (or take the invented demo district), screen it with the current
assessment's climate, site and turbines (:func:`engine.screening.screen_local`), then look at
the plan, sort the shortlist and open one building in the detailed assessment. The page only
arranges and calls: every number comes from :mod:`engine.screening`.

"Open in detailed assessment" asks first, keeps the working copy as a scenario, then leaves
the building's :class:`engine.core.model.Assessment` in
``st.session_state[engine.screening.SESSION_KEY]`` (``"screening_assessment"``) and makes it
the working copy of the detailed steps.
"""
from __future__ import annotations

import tempfile
from pathlib import Path

import streamlit as st

from dashboard import state, widgets
from dashboard.widgets import plain
from engine import screening
from engine.report import screening_charts
from engine.screening import options as screening_options
from engine.io import sitefile
from engine.core import units
from engine.core.errors import InputError
from engine.io.exports import safe_csv

ROOT = Path(__file__).resolve().parents[1]
DEMO_DISTRICT = ROOT / "demo_sites" / "district_1000.csv"
#: Rows shown in the shortlist table (the download has them all).
SHORTLIST_ROWS = 500
SHORTLIST_COLUMNS = ["rank", "id", "suitability", "best_turbine_id", "best_aep_kwh",
                     "best_capacity_factor", "mast_height_m", "hub_height_m", "mean_speed_ms",
                     "height_m", "roof_type", "plan_area_fraction", "zone", "reasons", "line"]


def _context(turbine_ids):
    return screening.context_from_assessment(st.session_state["valid"], turbine_ids)


#: The option fields' labels on this page, for the engine's messages.
OPTION_LABELS = {"sector_fetch_m": "Upwind fetch", "tile_m": "Tile side",
                 "upwind_shelter": "Upwind neighbours' wakes"}


def _option_problems(problems) -> list:
    """The engine's option messages by the page's labels, the rule's unit said in feet."""
    note = "" if state.unit_of("length") == "m" else " (checked in metres)"
    out = []
    for w, m in problems:
        if w in OPTION_LABELS:
            m = m.replace("transfer.sector_fetch_m", "(Upwind fetch)") + note
        out.append((OPTION_LABELS.get(w, w), m))
    return out


def _run(source_path: Path, turbine_ids, options, show_effect: bool) -> None:
    ss = st.session_state
    ctx = _context(turbine_ids)
    ss["screening_effect"] = None
    try:
        use = screening_options.with_options(ctx, options)
    except InputError as e:
        ss["screening_result"] = None
        ss["screening_error"] = _option_problems(e.problems)
        return
    bar = st.progress(0.0, text="Starting")
    try:
        res = screening_options.screen_with_options(
            source_path, ctx, options,
            progress=lambda f, text: bar.progress(min(f, 1.0), text=text))
        effect = []
        if show_effect:
            for label, opt in screening_options.option_variants(ctx, options):
                bar.progress(1.0, text=f"Screening again: {label}")
                got = res if opt is options else screening_options.screen_with_options(
                    source_path, ctx, opt)
                effect.append({"model": label,
                               **screening_options.class_shares(got.table)})
    except InputError as e:
        bar.empty()
        ss["screening_result"] = None
        ss["screening_error"] = e.problems
        return
    bar.progress(1.0, text="Done")
    ss["screening_result"] = res
    ss["screening_context"] = use
    ss["screening_error"] = None
    # Shown when there is something to compare (the plain model has no simpler one).
    ss["screening_effect"] = effect if len(effect) > 1 else None


def _option_widgets(valid):
    """The model options in the form: (ScreeningOptions, show the effect)."""
    L = state.unit_of("length")
    with st.expander("Model options", expanded=False):
        c1, c2 = st.columns(2)
        sectors = c1.toggle("Per-sector surroundings", key="screening_sectors",
                            value=valid.transfer.sector_morphometry,
                            help="Each building's surroundings seen from each wind direction "
                                 "(the buildings in an upwind wedge), instead of one average "
                                 "over all directions")
        fetch = c2.number_input(f"Upwind fetch ({L})", key=f"screening_fetch|{L}",
                                value=state.to_display(valid.transfer.sector_fetch_m, "length"),
                                format="%.0f", help="Radius of the upwind wedge")
        shelter = c1.toggle("Upwind neighbours' wakes", key="screening_shelter",
                            value=screening.ScreeningSettings().upwind_shelter,
                            help="The wakes of taller buildings upwind slow the wind at the "
                                 "hub (with per-sector surroundings only)")
        tiles = c1.toggle("Screen in tiles", key="screening_tiles", value=False,
                          help="Square tiles, each with a halo of the fetch: the same "
                               "results in less memory (per-sector surroundings only)")
        tile = c2.number_input(f"Tile side ({L})", key=f"screening_tile|{L}",
                               value=state.to_display(2000.0, "length"), format="%.0f")
        effect = st.checkbox("Show the options' effect (screens again with the simpler "
                             "models)", key="screening_show_effect", value=True)
    options = screening_options.ScreeningOptions(
        sector_morphometry=bool(sectors), sector_fetch_m=state.to_si(fetch, "length"),
        upwind_shelter=bool(shelter),
        tile_m=state.to_si(tile, "length") if tiles else None)
    return options, effect


def _show_effect(effect) -> None:
    st.subheader("What the model options do")
    st.caption("Share of the screened buildings in each class, with the options as chosen "
               "and with the simpler models beside them. The wakes of upwind neighbours are "
               "the cautious choice: leaving them out credits sheltered roofs with wind they "
               "do not get.")
    pct = st.column_config.NumberColumn
    st.dataframe(effect, hide_index=True, key="screening_effect_table",
                 column_config={"model": st.column_config.TextColumn("model", width="large"),
                                **{c: pct(c, format="percent") for c in screening.CLASSES}})


def _confirm_open(pick, short, table) -> None:
    """Ask before the working copy is replaced; keep it as a scenario when opening."""
    ss = st.session_state
    keep = f"before screening building {pick}"
    current = ss["valid"].site.name
    with st.container(border=True):
        st.warning(f"Opening building {plain(pick)} replaces the working copy "
                   f"(**{plain(current)}**). It is "
                   f"kept first as the scenario “{plain(keep)}” (Compare what-ifs can make it the "
                   "working copy again)."
                   + (" The working copy has problems not yet fixed: the scenario keeps its "
                      "last complete version." if state.any_problems() else ""),
                   icon=":material/warning:")
        c1, c2 = st.columns(2)
        if c1.button(f"Keep it as “{plain(keep)}” and open {plain(pick)}",
                     key="screening_open_yes",
                     type="primary"):
            row = table.loc[short[short["id"] == pick].index[0]]
            try:
                a = screening.assessment_for_building(row, ss["screening_context"])
            except InputError as e:  # e.g. screened with per-sector surroundings
                ss.pop("screening_confirm", None)
                ss["screening_open_error"] = e.problems
                st.rerun()
            used = state.save_scenario(keep)
            ss[screening.SESSION_KEY] = a
            state.replace_draft(sitefile.assessment_to_dict(a), f"screening: building {pick}")
            ss.pop("screening_confirm", None)
            # Run again, so that the sidebar ("Working on ...") and the steps' marks, drawn
            # before this page, show the new working copy; the message waits for that run.
            ss["screening_opened"] = (pick, used)
            st.rerun()
        if c2.button("Cancel", key="screening_open_no"):
            ss.pop("screening_confirm", None)
            st.rerun()


st.title("District screening")
st.caption("A first pass over many buildings: roughness of each building's surroundings from "
           "the table itself, a mast at the roof's centre that clears the roof's turbulence "
           "zone, yield of each chosen turbine with the same engine as the detailed "
           "assessment, and a class with its reasons. It says which roofs are worth a visit, "
           "not which are safe or consented. The yields assume the mast shown for each "
           "building, tall enough to clear the roof's turbulence zone: a turbine on a short "
           "bracket sits inside that zone and gives far less, as most did in the published "
           "field trials.")
widgets.cautions()

valid = st.session_state["valid"]
with st.form("screening_form"):
    upload = st.file_uploader("Buildings table (CSV or Parquet)", type=["csv", "parquet"],
                              key="screening_upload",
                              help="Columns: id, x_m, y_m (or latitude_deg, longitude_deg), "
                                   "length_m, width_m, height_m; optional orientation_deg, "
                                   "roof_type, roof_pitch_deg, parapet_height_m, zone and the "
                                   "surroundings (see docs/screening.md).")
    st.caption("Without an upload, the invented demo district (1000 buildings) is screened.")
    ids = [t.id for t in valid.turbines]
    chosen = st.multiselect("Turbines to screen with", ids, default=ids, key="screening_turbines",
                            help="From the current assessment's turbines step.")
    st.caption(f"Climate, site and losses: those of the current assessment "
               f"(**{plain(valid.site.name)}**, climate "
               f"“{plain(valid.climate.label or 'unnamed')}”).")
    options, show_effect = _option_widgets(valid)
    go = st.form_submit_button("Screen", type="primary")

if go:
    if not chosen:
        st.error("Choose at least one turbine.")
    elif upload is not None:
        suffix = Path(upload.name).suffix.lower() or ".csv"
        with tempfile.TemporaryDirectory() as tmp:
            path = Path(tmp) / f"buildings{suffix}"
            path.write_bytes(upload.getvalue())
            _run(path, chosen, options, show_effect)
    else:
        _run(DEMO_DISTRICT, chosen, options, show_effect)

err = st.session_state.get("screening_error")
if err:
    st.error("The table cannot be screened:\n\n"
             + "\n".join(f"- **{plain(w)}**: {plain(m)}" for w, m in err))

res = st.session_state.get("screening_result")
if res is not None:
    table = res.table
    counts = table["suitability"].value_counts()
    cols = st.columns(len(screening.CLASSES) + 1)
    # The number alone as the value (a long "n of m" value is cut off in a narrow column).
    cols[0].metric(f"Screened, of {res.n_rows:,d} rows", f"{res.n_screened:,d}")
    for c, name in zip(cols[1:], screening.CLASSES):
        c.metric(name.capitalize(), f"{int(counts.get(name, 0)):,d}")
    if res.problems:
        with st.expander(f"{len(res.bad_rows):,d} row(s) left out: fix them and screen again",
                         expanded=True):
            st.table([{"where": w, "problem and fix": m} for w, m in res.problems])
    if st.session_state.get("screening_effect"):
        _show_effect(st.session_state["screening_effect"])
    st.altair_chart(screening_charts.plan_scatter_chart(table), width="content")

    st.subheader("Shortlist")
    show = st.multiselect("Classes", list(screening.CLASSES),
                          default=[c for c in screening.CLASSES if c != "unsuitable"],
                          key="screening_classes")
    short = table[table["suitability"].isin(show)][SHORTLIST_COLUMNS].head(SHORTLIST_ROWS)
    st.caption(f"First {len(short):,d} rows of the chosen classes, ranked; click a column header "
               "to sort, scroll the table sideways for the roof, surroundings, zone, reasons "
               "and line. The download holds every row and every turbine.")
    # Every column labelled with its unit (no raw field names); rank and id stay in view while
    # the wide table scrolls sideways.
    num = st.column_config.NumberColumn
    text = st.column_config.TextColumn
    S, L = state.units_now()  # lengths and speeds in the display units, like every step
    st.dataframe(units.convert_columns(short, S, L), hide_index=True, key="screening_shortlist",
                 column_config={
                     "rank": num("rank", format="%d", pinned=True),
                     "id": text("building", pinned=True),
                     "suitability": text("class"),
                     "best_turbine_id": text("turbine with the most energy"),
                     "best_aep_kwh": num("net energy (kWh/yr)", format="%.0f"),
                     "best_capacity_factor": num("capacity factor", format="%.3f"),
                     "mast_height_m": num(f"mast ({L})", format="%.1f"),
                     "hub_height_m": num(f"hub ({L})", format="%.1f"),
                     "mean_speed_ms": num(f"mean speed ({S})", format="%.2f"),
                     "height_m": num(f"building height ({L})", format="%.1f"),
                     "roof_type": text("roof"),
                     "plan_area_fraction": num("plan area fraction", format="%.2f",
                                               help="Share of the ground around the building "
                                                    "that buildings cover"),
                     "zone": text("zone"),
                     "reasons": text("reasons", width="large"),
                     "line": num("line in the table", format="%d"),
                 })
    st.download_button("Download the ranked table (CSV)", safe_csv(table).encode("utf-8"),
                       file_name="screening_ranked.csv", mime="text/csv",
                       key="screening_download")

    st.subheader("Open one building in the detailed assessment")
    if len(short):
        rank_of = dict(zip(short["id"], short["rank"]))
        pick = st.selectbox("Building", list(rank_of), key="screening_pick",
                            format_func=lambda i: f"{i} (rank {int(rank_of[i])})")
        if st.button("Open in detailed assessment", key="screening_open"):
            st.session_state["screening_confirm"] = pick
        if st.session_state.get("screening_confirm") == pick:
            _confirm_open(pick, short, table)
        for w, m in st.session_state.pop("screening_open_error", None) or ():
            st.error(f"Building {plain(pick)} cannot be opened: **{plain(w)}** {plain(m)}")
        opened = st.session_state.pop("screening_opened", None)
        if opened is not None:
            st.success(f"Building {plain(opened[0])} is now the working assessment: one roof "
                       f"position at its centre on the screening's mast. Go to the steps to "
                       f"refine it. The previous working copy is kept as the scenario "
                       f"“{plain(opened[1])}”.")
    else:
        st.info("No building in the chosen classes.")
