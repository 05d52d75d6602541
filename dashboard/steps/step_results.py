"""Step 5: ranked positions, the plan, a position's detail and the what-if controls.

Everything below the banner is one fragment, ``results_body``: a what-if change reruns it
alone (the evaluation and the chart specs come from the caches, keyed by content), and the
whole page runs again only when the steps' state changes, so the sidebar's marks and the
banner stay true. Inside it, ``position_detail`` (the plan, one position's figures and its
chart) is a fragment of its own: a position or turbine picked, a click on the plan or another
chart reruns that part alone, not the headline and the tables above it.
"""
import numpy as np
import streamlit as st

from dashboard import cache, results_view, series_view, state, widgets
from engine.chain.verdict import headline
from engine.core import units

ss = st.session_state
widgets.step_banner("results", "5. Results")

OBJECTIVE_NAMES = {"net_aep": "net energy", "p90_aep": "P90 energy", "lcoe": "cost per kWh",
                   "payback": "payback time", "npv": "net present value"}
VIEWS = {"rose": "Wind rose", "dist": "Speed distribution", "profile": "Vertical profile",
         "curve": "Power curve", "monthly": "Monthly energy", "bars": "Ranking chart"}


def _mast_what_if() -> None:
    """The what-if position and its mast, from the working copy (which may differ from the
    last valid assessment: a position deleted or renamed there is not offered here)."""
    draft_pos = [(i, str(p.get("id"))) for i, p in enumerate(ss["draft"].get("positions", []))
                 if isinstance(p, dict) and p.get("id")]
    ids = [pid for _, pid in draft_pos]
    if not ids:
        st.info("The working copy has no positions: add one on Buildings & positions.",
                icon=":material/info:")
        return
    if ss.get("whatif_position") not in ids:
        ss["whatif_position"] = ids[0]
    if ss.get("whatif_position_w") not in ids:
        ss.pop("whatif_position_w", None)
    wp = st.selectbox("Position", ids, index=ids.index(ss["whatif_position"]),
                      key="whatif_position_w")
    ss["whatif_position"] = wp
    i = dict((pid, j) for j, pid in draft_pos)[wp]
    widgets.number("Mast height", f"positions.{i}.mast_height_m", "length", "%.1f",
                   step=0.5, scope="whatif")


def _what_if_controls() -> None:
    with st.container(border=True):
        st.markdown("**What if…** change a value and the ranking follows at once.")
        c1, c2, c3, c4 = st.columns(4)
        with c1:
            _mast_what_if()
        with c2:
            widgets.choice("Rank by", "ranking.objective", list(OBJECTIVE_NAMES),
                           fmt=OBJECTIVE_NAMES.get, scope="whatif")
            widgets.number("Tallest mast allowed", "ranking.max_mast_height_m", "length",
                           "%.1f", step=0.5, scope="whatif")
        with c3:
            widgets.number("Price of a kWh", "economics.tariff_per_kwh", fmt="%.3f",
                           step=0.01, scope="whatif")
            widgets.number("Downtime loss (fraction)", "losses.availability", fmt="%.3f",
                           step=0.01, scope="whatif")
        with c4:
            name = st.text_input("Save as scenario", key="scenario_name",
                                 placeholder=f"Scenario {len(ss['scenarios']) + 1}")
            if st.button("Save scenario", key="save_scenario", disabled=state.any_problems()):
                used = state.save_scenario(name)
                st.toast(f"Saved “{widgets.plain(used)}”.")
            if ss["scenarios"]:
                st.caption("Saved: " + ", ".join(widgets.plain(n) for n in ss["scenarios"]))
            st.page_link("steps/step_compare.py", label="Compare what-ifs",
                         icon=":material/compare_arrows:")
        t1, t2 = st.columns(2)
        with t1:
            widgets.toggle("Keep the rotor clear of the roof's high-turbulence zone",
                           "ranking.require_clear_of_turbulence_zone", scope="whatif")
        with t2:
            widgets.toggle("Exclude positions louder than a receptor's limit",
                           "ranking.apply_noise_limits", scope="whatif")


def _leading(table):
    """The first allowed row of the ranked table, or None when every row is excluded."""
    ok = table[~table["excluded"]]
    return ok.iloc[0] if len(ok) else None


def _headline(text: str, table, economics, S: str, L: str):
    """The verdict, the leading allowed row as metrics (named with its verdict, never
    "best"), then the top five; returns that row (None when every row is excluded)."""
    best = _leading(table)
    st.markdown(f"**{widgets.plain(headline(table, economics))}**")  # it quotes ids and names
    # the first column wider: its label carries the verdict, which must not be cut short
    c1, c2, c3, c4 = st.columns([1.5, 1, 1, 1])
    if best is not None:
        c1.metric(results_view.leading_label(best), f"{best['position_id']}",
                  f"with {best['turbine_id']}", delta_color="off", delta_arrow="off")
        # Units in the labels: a value with its unit is cut short in a narrow column.
        c2.metric("Net energy, P50 (kWh/yr)", f"{best['aep_kwh']:,.0f}")
        if "p90_one_year_aep_kwh" in best.index:
            c3.metric("P90, a single year (kWh/yr)", f"{best['p90_one_year_aep_kwh']:,.0f}",
                      help="Exceeded in nine years out of ten. P90 of the average year over "
                           f"the project life: {best['p90_aep_kwh']:,.0f} kWh/yr")
        if "lcoe_per_kwh" in best.index and np.isfinite(best["lcoe_per_kwh"]):
            c4.metric(f"Cost per kWh ({economics.currency})", f"{best['lcoe_per_kwh']:.2f}")
    else:
        st.error("Every position is excluded by a constraint; see the reasons in the table.",
                 icon=":material/error:")
    st.subheader("Ranked positions")
    st.table(cache.top_rows(text, S, L), hide_index=False)
    return best


def _all_rows(text: str, table, S: str, L: str) -> None:
    with st.expander(f"All {len(table)} rows with every figure and reason", expanded=False):
        kinds = {"number": st.column_config.NumberColumn, "text": st.column_config.TextColumn}
        config = {h: kinds[k](h, **opts)
                  for h, (k, opts) in results_view.display_config(table, S, L).items()}
        st.dataframe(cache.display_table(text, S, L), hide_index=True, width="stretch",
                     column_config=config)


def _pick_detail(pos_ids, best) -> None:
    """The position in detail: kept, else the leading one; a position clicked on the plan
    wins."""
    if ss.get("detail_position") not in pos_ids:
        ss["detail_position"] = str(best["position_id"]) if best is not None else pos_ids[0]
    try:
        clicked = ss["plan_pick"]["selection"]["pick"][0]["position_id"]
    except (KeyError, IndexError, TypeError):
        clicked = None
    if clicked in pos_ids and clicked != ss.get("last_clicked"):
        ss["detail_position"] = clicked
        ss["detail_position_w"] = clicked
    ss["last_clicked"] = clicked
    if ss.get("detail_position_w") not in pos_ids:
        ss["detail_position_w"] = ss["detail_position"]


def _uncertainty_metrics(row, m1, m2) -> None:
    """The turbulence effect and the two P90s of the row in detail, named apart."""
    if "turbulence_effect" in row.index:
        m1.metric("Turbulence effect", results_view.signed_percent(row["turbulence_effect"]),
                  help="Change of this row's energy from the site's turbulence, against the "
                       "published curve (measured at the curve's own turbulence)")
    if "p90_one_year_aep_kwh" in row.index:
        life = float(row.get("project_life_years", 20))
        m2.metric("P90, single year (kWh/yr)", f"{row['p90_one_year_aep_kwh']:,.0f}",
                  help="Exceeded in nine years out of ten")
        m1.metric(f"P90, {life:g}-year life (kWh/yr)", f"{row['p90_aep_kwh']:,.0f}",
                  help=f"The average year over {life:g} years, exceeded with 90 % probability")


def _mast_caption(row, L: str) -> None:
    """One minimum mast, the one the ranking uses: the whole rotor clear of the zones for
    this turbine (the hub-only figure is lower and would still be excluded); the hub-only
    figure, said as such, only where the chain gives no rotor figure."""
    for col, what in (("mast_to_clear_turbulence_m", "keeps the whole rotor"),
                      ("min_clear_mast_m", "puts the hub")):
        if col in row.index and np.isfinite(row[col]):
            st.caption(f"Shortest mast that {what} clear of the roof's high-turbulence zone: "
                       f"{units.length_from_si(row[col], L):.1f} {L}")
            return


def _detail(a, table, text: str, best, S: str, L: str) -> tuple:
    """Plan and one position's figures; returns the (position, turbine) in detail."""
    pos_ids = [p.id for p in a.positions]
    tur_ids = [t.id for t in a.turbines]
    st.subheader("Plan and position detail")
    _pick_detail(pos_ids, best)
    c1, c2 = st.columns([3, 2])
    with c2:
        dp = st.selectbox("Position", pos_ids, key="detail_position_w")
        ss["detail_position"] = dp
        rows_p = table[table["position_id"] == dp]
        if ss.get("detail_turbine") not in tur_ids:
            ss["detail_turbine"] = str(rows_p.iloc[0]["turbine_id"])
        dt = st.selectbox("Turbine", tur_ids, index=tur_ids.index(ss["detail_turbine"]),
                          key="detail_turbine_w")
        ss["detail_turbine"] = dt
        row = rows_p[rows_p["turbine_id"] == dt].iloc[0]
        m1, m2 = st.columns(2)
        m1.metric("Rank", f"{int(row['rank'])} of {len(table)}")
        m2.metric(f"Hub height ({L})", f"{units.length_from_si(row['hub_height_m'], L):.1f}")
        m1.metric(f"Mean speed at hub ({S})",
                  f"{units.speed_from_si(row['mean_speed_ms'], S):.2f}")
        m2.metric("Net energy (kWh/yr)", f"{row['aep_kwh']:,.0f}")
        _uncertainty_metrics(row, m1, m2)
        _mast_caption(row, L)
        for f in row["flags"]:
            st.markdown(f"- {widgets.plain(f)}")
    with c1:
        st.vega_lite_chart(cache.chart_spec("plan", text, S, L, dp), width="stretch",
                           theme=None, on_select="rerun", selection_mode="pick",
                           key="plan_pick")
        st.caption("Colour: the position's place in the ranking (dark blue ranks first); grey: "
                   "every turbine there is excluded by a constraint. Ring: the position in "
                   "detail; click a position to see its detail.")
    return dp, dt


def _chart(text: str, dp: str, dt: str, S: str, L: str) -> None:
    if ss.get("detail_view") not in VIEWS:
        ss["detail_view"] = "bars"
    view = st.segmented_control("Chart", list(VIEWS), format_func=VIEWS.get,
                                default=ss["detail_view"], key="detail_view_w")
    ss["detail_view"] = view or ss["detail_view"]
    view = ss["detail_view"]
    spec = cache.chart_spec(view, text, S, L, dp, dt)
    if spec:
        st.vega_lite_chart(spec, width="stretch", theme=None)
    elif view == "monthly":
        st.info("This climate has no monthly mean speeds, so the year is not split into "
                "months. A measured record gives them.", icon=":material/info:")
    if view == "rose":
        st.caption("The reference climate before buildings: share of the time and of the "
                   "wind's energy from each sector.")


@st.fragment
def position_detail() -> None:
    """The plan, one position's figures and a chart of it, from the cached evaluation of
    the working copy (the same one the headline above was drawn from)."""
    S, L = state.units_now()
    a = ss["valid"]
    text = state.draft_text()
    table = cache.evaluate_text(text, a).table
    dp, dt = _detail(a, table, text, _leading(table), S, L)
    _chart(text, dp, dt, S, L)


@st.fragment
def results_body() -> None:
    S, L = state.units_now()
    if not ss.get("full_run", True):
        # A rerun of this part alone: take the new values in before drawing, so each
        # field's message shows beneath it at once.
        state.sync_widgets()
        state.validate()
    # The what-if controls stay on top but are drawn after the verdict: their values are in
    # the working copy already (synced above, or by the app on a whole run), so the answer
    # reaches the page first.
    controls = st.container() if widgets.editing() else None
    a = ss["valid"]
    text = state.draft_text()
    ev = cache.evaluate_text(text, a)
    best = _headline(text, ev.table, a.economics, S, L)
    if controls is not None:
        with controls:
            _what_if_controls()
    _all_rows(text, ev.table, S, L)
    position_detail()
    series_view.render(ev, best)
    state.flush_autosave()
    if not ss.get("full_run", True) and state.status_signature() != ss.get("drawn_status"):
        st.rerun(scope="app")  # the step marks and the banner follow the new state


ss["full_run"] = True
results_body()
ss["full_run"] = False
