"""Step 5: ranked positions, the plan, a position's detail and the what-if controls."""
import numpy as np
import streamlit as st

from dashboard import cache, results_view, state, widgets
from engine.chain.verdict import headline
from engine.core import units

ss = st.session_state
widgets.step_banner("results", "5. Results")
S, L = state.units_now()

bad = [(k, t) for k, t, _ in state.STEPS[:4] if not state.complete(k)]
if bad:
    st.warning("Shown from the last complete inputs. Needs attention: "
               + ", ".join(t for _, t in bad) + ".", icon=":material/warning:")

OBJECTIVE_NAMES = {"net_aep": "net energy", "p90_aep": "P90 energy", "lcoe": "cost per kWh",
                   "payback": "payback time"}


# The what-if controls and the ranking form one fragment: a change there reruns only this
# part, so the new ranking shows at once; the plan and charts follow in a full rerun.
@st.fragment
def whatif_and_ranking():
    S, L = state.units_now()
    a = ss["valid"]
    pos_ids = [p.id for p in a.positions]
    if widgets.editing():
        with st.container(border=True):
            st.markdown("**What if…** change a value and the ranking follows at once.")
            c1, c2, c3, c4 = st.columns(4)
            with c1:
                if ss.get("whatif_position") not in pos_ids:
                    ss["whatif_position"] = pos_ids[0]
                wp = st.selectbox("Position", pos_ids,
                                  index=pos_ids.index(ss["whatif_position"]),
                                  key="whatif_position_w")
                ss["whatif_position"] = wp
                i = next(j for j, p in enumerate(ss["draft"]["positions"])
                         if p.get("id") == wp)
                widgets.number("Mast height", f"positions.{i}.mast_height_m", "length", "%.1f",
                               step=0.5, scope="whatif")
            with c2:
                widgets.choice("Rank by", "ranking.objective", ["net_aep", "p90_aep", "lcoe",
                                                                 "payback"],
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
                if st.button("Save scenario", key="save_scenario",
                             disabled=state.any_problems()):
                    used = state.save_scenario(name)
                    st.toast(f"Saved “{widgets.plain(used)}”.")
                if ss["scenarios"]:
                    st.caption("Saved: " + ", ".join(ss["scenarios"]))
                st.page_link("steps/step_compare.py", label="Compare what-ifs",
                             icon=":material/compare_arrows:")
            t1, t2 = st.columns(2)
            with t1:
                widgets.toggle("Keep the rotor clear of the roof's high-turbulence zone",
                               "ranking.require_clear_of_turbulence_zone", scope="whatif")
            with t2:
                widgets.toggle("Exclude positions louder than a receptor's limit",
                               "ranking.apply_noise_limits", scope="whatif")
        state.validate()
        a = ss["valid"]

    text = state.draft_text()
    ev = cache.evaluate_text(text)
    table = ev.table
    ss["ranking_text"] = text

    # ---------------------------------------------------------------- headline and ranking
    ok = table[~table["excluded"]]
    best = ok.iloc[0] if len(ok) else None
    st.markdown(f"**{headline(table, a.economics)}**")
    c1, c2, c3, c4 = st.columns(4)
    if best is not None:
        c1.metric("Best position", f"{best['position_id']}", f"with {best['turbine_id']}",
                  delta_color="off", delta_arrow="off")
        c2.metric("Net energy, P50", f"{best['aep_kwh']:,.0f} kWh/yr")
        if "p90_one_year_aep_kwh" in best.index:
            c3.metric("P90, a single year", f"{best['p90_one_year_aep_kwh']:,.0f} kWh/yr",
                      help="Exceeded in nine years out of ten. P90 of the average year over "
                           f"the project life: {best['p90_aep_kwh']:,.0f} kWh/yr")
        if "lcoe_per_kwh" in best.index and np.isfinite(best["lcoe_per_kwh"]):
            c4.metric("Cost per kWh", f"{best['lcoe_per_kwh']:.2f} {a.economics.currency}")
    else:
        st.error("Every position is excluded by a constraint; see the reasons in the table.",
                 icon=":material/error:")

    st.subheader("Ranked positions")
    st.table(results_view.top_rows(table, S, L, n=5), hide_index=False)

    if not ss.get("full_run", True) and ss.get("charts_text") != text:
        st.rerun(scope="app")  # bring the plan and charts up to date


ss["full_run"] = True
whatif_and_ranking()
a = ss["valid"]
pos_ids = [p.id for p in a.positions]
tur_ids = [t.id for t in a.turbines]
text = ss["ranking_text"]
ev = cache.evaluate_text(text)
table = ev.table
ok = table[~table["excluded"]]
best = ok.iloc[0] if len(ok) else None
with st.expander(f"All {len(table)} rows with every figure and reason", expanded=False):
    st.dataframe(results_view.display_table(table, S, L), hide_index=True, width="stretch")

# ---------------------------------------------------------------- plan and detail
st.subheader("Plan and position detail")
if ss.get("detail_position") not in pos_ids:
    ss["detail_position"] = str(best["position_id"]) if best is not None else pos_ids[0]
# A position clicked on the plan becomes the one in detail.
try:
    clicked = ss["plan_pick"]["selection"]["pick"][0]["position_id"]
except (KeyError, IndexError, TypeError):
    clicked = None
if clicked in pos_ids and clicked != ss.get("last_clicked"):
    ss["detail_position"] = clicked
    ss["detail_position_w"] = clicked
ss["last_clicked"] = clicked
c1, c2 = st.columns([3, 2])
with c2:
    if ss.get("detail_position_w") not in pos_ids:
        ss["detail_position_w"] = ss["detail_position"]
    dp = st.selectbox("Position", pos_ids, key="detail_position_w")
    ss["detail_position"] = dp
    rows_p = table[table["position_id"] == dp]
    best_t = str(rows_p.iloc[0]["turbine_id"])
    if ss.get("detail_turbine") not in tur_ids:
        ss["detail_turbine"] = best_t
    dt = st.selectbox("Turbine", tur_ids, index=tur_ids.index(ss["detail_turbine"]),
                      key="detail_turbine_w")
    ss["detail_turbine"] = dt
    row = rows_p[rows_p["turbine_id"] == dt].iloc[0]
    m1, m2 = st.columns(2)
    m1.metric("Rank", f"{int(row['rank'])} of {len(table)}")
    m2.metric(f"Hub height ({L})", f"{units.length_from_si(row['hub_height_m'], L):.1f}")
    m1.metric(f"Mean speed at hub ({S})",
              f"{units.speed_from_si(row['mean_speed_ms'], S):.2f}")
    m2.metric("Net energy", f"{row['aep_kwh']:,.0f} kWh/yr")
    if "turbulence_effect" in row.index:
        m1.metric("Turbulence effect", results_view.signed_percent(row["turbulence_effect"]),
                  help="Change of this row's energy from the site's turbulence, against the "
                       "published curve (measured at the curve's own turbulence)")
    if "p90_one_year_aep_kwh" in row.index:
        life = float(row.get("project_life_years", 20))
        m2.metric("P90, single year", f"{row['p90_one_year_aep_kwh']:,.0f} kWh/yr",
                  help="Exceeded in nine years out of ten")
        m1.metric(f"P90 over {life:g}-year life", f"{row['p90_aep_kwh']:,.0f} kWh/yr",
                  help=f"The average year over {life:g} years, exceeded with 90 % probability")
    if "min_clear_mast_m" in row.index and np.isfinite(row["min_clear_mast_m"]):
        st.caption(f"Shortest mast that clears the roof zones: "
                   f"{units.length_from_si(row['min_clear_mast_m'], L):.1f} {L}")
    for f in row["flags"]:
        st.markdown(f"- {widgets.plain(f)}")
with c1:
    st.vega_lite_chart(cache.chart_spec("plan", text, S, L, dp), width="content", theme=None,
                       on_select="rerun", selection_mode="pick", key="plan_pick")
    st.caption("Colour: the position's place in the ranking (dark blue is best); grey: every "
               "turbine there is excluded by a constraint. Ring: the position in detail; "
               "click a position to see its detail.")

VIEWS = {"rose": "Wind rose", "dist": "Speed distribution", "profile": "Vertical profile",
         "curve": "Power curve", "monthly": "Monthly energy", "bars": "Ranking chart"}
if ss.get("detail_view") not in VIEWS:
    ss["detail_view"] = "bars"
view = st.segmented_control("Chart", list(VIEWS), format_func=VIEWS.get,
                            default=ss["detail_view"], key="detail_view_w")
ss["detail_view"] = view or ss["detail_view"]
view = ss["detail_view"]
spec = cache.chart_spec(view, text, S, L, dp, dt)
if spec:
    st.vega_lite_chart(spec, width="content", theme=None)
elif view == "monthly":
    st.info("This climate has no monthly mean speeds, so the year is not split into months. "
            "A measured record gives them.", icon=":material/info:")
if view == "rose":
    st.caption("The reference climate before buildings: share of the time and of the wind's "
               "energy from each sector.")
ss["charts_text"] = text
ss["full_run"] = False
