"""Step 4: turbines with their power curves, energy losses and money."""
import streamlit as st

from dashboard import cache, state, widgets
from engine.report import charts
from engine.core import model
from engine.io import sitefile
from engine.core.errors import InputError

widgets.step_banner("turbines", "4. Turbines & costs")
st.caption("The turbines to try at every position. Power curves are entered as published "
           "(at 1.225 kg/m³); the results correct them for the site's air and turbulence.")

S, L = state.unit_of("speed"), state.unit_of("length")
ss = st.session_state
draft = ss["draft"]
edit = widgets.editing()
num = st.column_config.NumberColumn

T_COLS = [
    ("id", "name", "text", st.column_config.TextColumn(required=True)),
    ("name", "description", "text", None),
    ("axis", "axis", "choice", st.column_config.SelectboxColumn(options=model.AXIS_TYPES)),
    ("rated_power_w", "rated power (W)", "number", num(format="%.0f")),
    ("rotor_diameter_m", f"rotor diameter ({L})", "length", num(format="%.2f")),
    ("rotor_height_m", f"rotor height, vertical axis ({L})", "length", num(format="%.2f")),
    ("cut_in_ms", f"cut-in ({S})", "speed", num(format="%.1f")),
    ("rated_speed_ms", f"rated speed ({S})", "speed", num(format="%.1f")),
    ("cut_out_ms", f"cut-out ({S})", "speed", num(format="%.1f")),
    ("sound_power_db", "sound power (dB(A))", "number", num(format="%.0f")),
    ("installed_cost", "installed cost", "number", num(format="%.0f")),
]
T_LABELS = {f: lab for f, lab, _, _ in T_COLS}
T_LABELS.update(curve_speed_ms="power curve speeds", curve_power_w="power curve powers",
                swept_area_m2="swept area")



def _use_curve_file(i: int, upload_key: str) -> None:
    """Replace turbine ``i``'s curve by an uploaded table (read and checked by the engine)."""
    from engine.energy import turbines
    up = ss.get(upload_key)
    ss["curve_problems"], ss["curve_note"] = [], ""
    if up is None:
        return
    row = ss["draft"]["turbines"][i]
    known = [t for t in ss["valid"].turbines if t.id == row.get("id")]
    area = known[0].area_m2 if known else 0.0  # 0 skips the Betz check for a new turbine
    try:
        curve = turbines.read_power_curve_csv(up.getvalue(), swept_area_m2=area)
    except InputError as e:
        ss["curve_problems"] = list(e.problems)
        return
    row["curve_speed_ms"] = list(curve.speed_ms)
    row["curve_power_w"] = list(curve.power_w)
    ss["curve_note"] = f"Read {len(curve.speed_ms)} points from {up.name}: {curve.unit_note}"
    state.clear_widgets()
    state.validate()


if edit:
    lib = cache.turbine_library()
    have = {t.get("id") for t in draft["turbines"]}
    offer = [t for t in lib if t.id not in have]
    if offer:
        c1, c2 = st.columns([3, 1])
        pick = c1.multiselect("Add turbines from the generic library (invented examples)",
                              [t.id for t in offer],
                              format_func=lambda i: next(t.name for t in offer if t.id == i),
                              key="lib_pick")
        if c2.button("Add", disabled=not pick, key="lib_add"):
            for t in offer:
                if t.id in pick:
                    draft["turbines"].append(sitefile.assessment_to_dict(t))
            state.clear_widgets()
            state.validate()
            st.rerun()

rows = widgets.table("turbines", draft["turbines"], T_COLS, disabled=not edit)
for r in rows:
    r.setdefault("curve_speed_ms", [])
    r.setdefault("curve_power_w", [])
    for f in ("name", "regulation", "iec_class"):
        if r.get(f) is None:
            r[f] = {"name": "", "regulation": "stall", "iec_class": "II"}[f]
changed = rows != draft["turbines"]
draft["turbines"] = rows

ids = [str(r.get("id")) for r in rows if r.get("id")]
if ids:
    st.subheader("Power curve")
    if ss.get("curve_turbine") not in ids:
        ss["curve_turbine"] = ids[0]
    tid = st.selectbox("Turbine", ids, key="curve_turbine_w",
                       index=ids.index(ss["curve_turbine"]))
    ss["curve_turbine"] = tid
    i = next(j for j, r in enumerate(rows) if str(r.get("id")) == tid)
    t = rows[i]
    crow = [{"speed_ms": v, "power_w": p}
            for v, p in zip(t.get("curve_speed_ms", []), t.get("curve_power_w", []))]
    c1, c2 = st.columns([2, 3])
    with c1:
        cur = widgets.table(f"curve_{i}", crow,
                            [("speed_ms", f"wind speed ({S})", "speed", num(format="%.2f")),
                             ("power_w", "power (W)", "number", num(format="%.1f"))],
                            disabled=not edit, height=360)
        if edit:
            st.file_uploader("Or read this turbine's curve from a CSV (speed, power; W or "
                             "kW; up to 1 MiB)", type=["csv", "txt", "tsv"], max_upload_size=1,
                             key=f"curve_upload_{ss['gen']}")
            st.button("Use the file's curve", key="curve_use", on_click=_use_curve_file,
                      args=(i, f"curve_upload_{ss['gen']}"),
                      disabled=ss.get(f"curve_upload_{ss['gen']}") is None)
            for where, msg in ss.get("curve_problems", []):
                st.error(f"**{widgets.plain(where)}:** {widgets.plain(msg)}",
                         icon=":material/error:")
            if ss.get("curve_note"):
                st.info(ss["curve_note"], icon=":material/info:")
        new_s = [r.get("speed_ms") for r in cur]
        new_p = [r.get("power_w") for r in cur]
        if new_s != t.get("curve_speed_ms") or new_p != t.get("curve_power_w"):
            t["curve_speed_ms"], t["curve_power_w"] = new_s, new_p
            changed = True
    with c2:
        valid = ss["valid"]
        vt = next((x for x in valid.turbines if x.id == tid), None)
        if vt is not None:
            st.altair_chart(charts.power_curve(vt, S).properties(width=420), width="content",
                            theme=None)

if changed:
    before = state.complete("turbines")
    state.validate()
    if state.complete("turbines") != before:
        st.rerun()
widgets.row_messages("turbines", rows, T_LABELS)

st.subheader("Energy losses (fractions of the gross energy, 0 to 0.9)")
c = st.columns(5)
for col, (f, lab) in zip(c, [("availability", "Downtime"), ("electrical", "Electrical"),
                             ("icing", "Icing"), ("cut_out_hysteresis", "Cut-out hysteresis"),
                             ("other", "Other")]):
    with col:
        widgets.number(lab, f"losses.{f}", fmt="%.3f", step=0.01, disabled=not edit)

st.subheader("Money")
c1, c2, c3 = st.columns(3)
with c1:
    widgets.text("Currency", "economics.currency")
    widgets.number("Price of a kWh (tariff or saved import)", "economics.tariff_per_kwh",
                   fmt="%.3f", step=0.01, disabled=not edit)
with c2:
    widgets.number("Upkeep per year", "economics.om_cost_per_year", fmt="%.0f",
                   disabled=not edit)
    widgets.number("Discount rate (fraction)", "economics.discount_rate", fmt="%.3f",
                   step=0.005, disabled=not edit)
with c3:
    widgets.number("Lifetime (years)", "economics.lifetime_years", fmt="%.0f",
                   disabled=not edit)
    widgets.number("Grid emission factor (kg CO₂ per kWh)",
                   "economics.emission_factor_kg_per_kwh", fmt="%.3f", disabled=not edit)

with st.expander("Uncertainty behind P50 and P90 (one standard deviation, as fractions)"):
    st.caption("Speed uncertainties are fractions of the mean wind speed; the power-curve "
               "uncertainty is a fraction of the energy.")
    c = st.columns(5)
    for col, (f, lab) in zip(c, [("speed_data", "Wind data"),
                                 ("speed_long_term", "Long-term period"),
                                 ("speed_transfer", "Transfer to the site"),
                                 ("speed_building_model", "Building flow model"),
                                 ("energy_power_curve", "Power curve")]):
        with col:
            widgets.number(lab, f"uncertainty.{f}", fmt="%.3f", step=0.01)
