"""Altair chart builders for the dashboard and the siting summary (no streamlit here).

Each builder takes engine objects (an :class:`~engine.core.model.Assessment`, an
:class:`~engine.chain.pipeline.Evaluation`) plus the display units and returns an Altair chart. The
numbers drawn come from engine functions; this module only arranges them. Charts are plain
Vega-Lite specs: they draw offline (no tiles, no remote fonts).

Colours are our own: a blue-to-amber sequential scale for rank (best is dark blue), grey for
excluded positions, sand for buildings.
"""
from __future__ import annotations

import math

import altair as alt
import numpy as np
import pandas as pd

from engine.energy import aep as energy
from engine.flow import effective as flow
from engine.core import units
from engine.flow.buildings import building_outline_m
from engine.climate.weibull import mixture_mean_ms, weibull_cdf, weibull_pdf, weibull_power_density_wm2

BUILDING_FILL = "#d9c9a3"
BUILDING_EDGE = "#7a6a48"
RANK_SCHEME = ["#123f73", "#2f7fb5", "#8cc0d8", "#f2c46d", "#c97a2b"]
EXCLUDED_COLOUR = "#9a9a9a"
ACCENT = "#1f5f99"
RANGE_COLOUR = "#c97a2b"
#: Name of the plan's click selection (a clicked position's ``position_id``).
PICK = "pick"
COMPASS = ("N", "NNE", "NE", "ENE", "E", "ESE", "SE", "SSE",
           "S", "SSW", "SW", "WSW", "W", "WNW", "NW", "NNW")

MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")


def compass_name(direction_deg: float) -> str:
    """16-point compass name of a bearing [deg from north]."""
    return COMPASS[int(round((float(direction_deg) % 360.0) / 22.5)) % 16]


# ---------------------------------------------------------------- data for the charts

def best_per_position(table: pd.DataFrame) -> pd.DataFrame:
    """One row per position: its best-ranked turbine row (the table is already ranked)."""
    return table.sort_values("rank").drop_duplicates("position_id").reset_index(drop=True)


def prevailing_sector(climate) -> tuple[float, float]:
    """Centre [deg] and frequency [-] of the most frequent sector of a climate."""
    i = int(np.argmax(climate.frequency))
    return float(climate.sector_deg[i]), float(climate.frequency[i])


def position_index(evaluation, position_id: str) -> int:
    """Index of a position in the effective climate's arrays."""
    return list(evaluation.climate.position_ids).index(position_id)


def hub_distribution(evaluation, position_id: str, speed_unit: str = "m/s",
                     bin_width_ms: float = 0.5, top_ms: float = 25.0) -> pd.DataFrame:
    """Probability of each speed bin at a position's hub, all sectors together.

    Notes
    -----
    p_i = Σ_s f_s [F_s(V_i) − F_s(V_{i−1})], with the sector Weibull CDF F_s of the effective
    climate (building effects included); density f(V) = Σ_s f_s f_s(V).
    """
    eff = evaluation.climate
    i = position_index(evaluation, position_id)
    edges = np.arange(0.0, top_ms + 1e-9, bin_width_ms)
    f, k, c = eff.frequency[i], eff.weibull_k[i], eff.weibull_c_ms[i]
    cdf = weibull_cdf(edges[:, None], k[None, :], c[None, :])  # (J, S)
    prob = np.diff(cdf, axis=0) @ f
    mid = 0.5 * (edges[1:] + edges[:-1])
    dens = weibull_pdf(mid[:, None], k[None, :], c[None, :]) @ f
    return pd.DataFrame({
        "speed": units.speed_from_si(mid, speed_unit),
        "lo": units.speed_from_si(edges[:-1], speed_unit),
        "hi": units.speed_from_si(edges[1:], speed_unit),
        "probability": prob,
        # density per displayed unit so the line sits on the bars: f(V) dV / bin
        "density_per_bin": dens * bin_width_ms,
    })


def sector_table(climate, air_density_kgm3: float = 1.225) -> pd.DataFrame:
    """Per sector: centre, frequency and share of the wind's energy [-].

    Notes
    -----
    Energy share e_s = f_s ½ρ c_s³ Γ(1 + 3/k_s) / Σ f ½ρ c³ Γ(1 + 3/k)
    (the Weibull power density).
    """
    f = np.asarray(climate.frequency, float)
    pd_w = f * weibull_power_density_wm2(climate.weibull_k, climate.weibull_c_ms,
                                         air_density_kgm3)
    n = len(f)
    width = 2 * math.pi / n
    centres = np.asarray(climate.sector_deg, float)
    return pd.DataFrame({
        "sector_deg": centres,
        "sector": [compass_name(d) for d in centres],
        "frequency": f,
        "energy_share": pd_w / pd_w.sum() if pd_w.sum() > 0 else pd_w,
        "t0": np.radians(centres) - width / 2,
        "t1": np.radians(centres) + width / 2,
    })


def _row(evaluation, position_id: str, turbine_id: str):
    t = evaluation.table
    hit = t[(t["position_id"] == position_id) & (t["turbine_id"] == turbine_id)]
    return hit.iloc[0] if len(hit) else None


def monthly_energy_kwh(evaluation, position_id: str, turbine_id: str):
    """Net energy per month [kWh] of one ranked row, or None when the climate has no monthly
    mean speeds (the chain's ``monthly_aep_kwh`` column, see
    :func:`engine.energy.aep.monthly_energy_wh`)."""
    row = _row(evaluation, position_id, turbine_id)
    if row is None or "monthly_aep_kwh" not in row.index:
        return None
    vals = row["monthly_aep_kwh"]
    if not isinstance(vals, (list, tuple, np.ndarray)) or len(vals) != 12:
        return None
    return pd.DataFrame({"month": MONTHS, "energy_kwh": np.asarray(vals, float)})


def corrected_curve(evaluation, position_id: str, turbine_id: str) -> pd.DataFrame:
    """The curve the yield used at a position: corrected to the site's air density and averaged
    over the position's turbulence (:func:`engine.energy.aep.turbulent_curve_table_w`), at the
    position's time-weighted turbulence intensity. Columns ``speed_ms``, ``power_w``."""
    a = evaluation.assessment
    eff = evaluation.climate
    i = position_index(evaluation, position_id)
    tur = next(t for t in a.turbines if t.id == turbine_id)
    ti = float(np.sum(eff.frequency[i] * eff.turbulence_intensity[i]))
    edges = energy.DEFAULT_EDGES_MS
    edges = edges[edges <= max(tur.cut_out_ms + 2.0, 5.0)]
    if hasattr(energy, "turbulent_curve_table_w"):
        pw = energy.turbulent_curve_table_w([tur], eff.air_density_kgm3, np.array([ti]),
                                            edges)[0, 0]
    else:
        pw = energy.power_at_speed_w(edges, tur.curve_speed_ms, tur.curve_power_w,
                                     tur.cut_in_ms, tur.cut_out_ms)
    return pd.DataFrame({"speed_ms": edges, "power_w": pw})


def profile_table(assessment, position_id: str, length_unit: str = "m",
                  speed_unit: str = "m/s", n: int = 60) -> pd.DataFrame:
    """Undisturbed mean speed against height above ground up to twice the hub height.

    Uses :func:`engine.flow.effective.free_stream_at_hub` (the chain's own transfer), so the line is the
    same profile the ranking starts from before building effects.
    """
    pos = next(p for p in assessment.positions if p.id == position_id)
    hub = assessment.hub_height_m(pos)
    z = np.linspace(0.5, max(2.0 * hub, hub + 6.0), n)
    k, c = flow.free_stream_at_hub(assessment, z)
    f = np.asarray(assessment.climate.frequency, float)
    mean = mixture_mean_ms(f[None, :], k, c)
    return pd.DataFrame({"height": units.length_from_si(z, length_unit),
                         "speed": units.speed_from_si(mean, speed_unit)})


# ---------------------------------------------------------------- charts

def _feature(kind, coords, **props):
    return {"type": "Feature", "geometry": {"type": kind, "coordinates": coords},
            "properties": props}


def _plan_buildings(a, L, lu) -> list:
    """GeoJSON features of the buildings in display units, labelled with their height."""
    feats = []
    for b in a.buildings:
        ring = L(building_outline_m(b)).tolist()
        ring.append(ring[0])
        feats.append(_feature("Polygon", [ring], id=b.id,
                              label=f"{b.id} {L(b.height_m):.0f} {lu}",
                              height=round(L(b.height_m), 1), roof=b.roof_type))
    return feats


def _plan_points(evaluation, L, selected) -> pd.DataFrame:
    """One row per position: place, best row, status and hub height for the plan's marks."""
    a = evaluation.assessment
    best = best_per_position(evaluation.table)
    order = {pid: i + 1 for i, pid in enumerate(best["position_id"])}
    pos_rows = []
    for p in a.positions:
        row = best[best["position_id"] == p.id]
        r = int(row["rank"].iloc[0]) if len(row) else 0
        excl = bool(row["excluded"].iloc[0]) if len(row) else False
        aep = float(row["aep_kwh"].iloc[0]) if len(row) else float("nan")
        pos_rows.append({"position_id": p.id, "x": L(p.x_m), "y": L(p.y_m), "kind": p.kind,
                         "kind_name": "passage" if p.kind == "gap" else p.kind,
                         "best_rank": r, "place": order.get(p.id, 0),
                         "excluded": "excluded" if excl else "eligible",
                         "best_turbine": row["turbine_id"].iloc[0] if len(row) else "",
                         "aep_kwh": round(aep, 0), "hub": round(L(a.hub_height_m(p)), 1),
                         "selected": p.id == selected})
    return pd.DataFrame(pos_rows)


def _plan_compass(climate, feats, pts) -> dict:
    """Compass and prevailing-wind wedge in the top-right corner, and the frame corners."""
    xs = [c[0] for f in feats for c in f["geometry"]["coordinates"][0]] + list(pts["x"])
    ys = [c[1] for f in feats for c in f["geometry"]["coordinates"][0]] + list(pts["y"])
    x0, x1, y0, y1 = min(xs), max(xs), min(ys), max(ys)
    span = max(x1 - x0, y1 - y0, 10.0)
    pad = 0.18 * span
    # Compass in the top-right corner, outside the drawn features.
    cx, cy, cr = x1 + pad * 1.3, y1 + pad * 0.6, 0.09 * span
    prev_deg, prev_f = prevailing_sector(climate)
    half = 180.0 / climate.n_sectors
    wedge = [[cx, cy]]
    for d in np.linspace(prev_deg - half, prev_deg + half, 9):
        t = math.radians(d)
        wedge.append([cx + 1.6 * cr * math.sin(t), cy + 1.6 * cr * math.cos(t)])
    wedge.append([cx, cy])
    arrow = [[cx, cy - cr], [cx, cy + cr]]
    head = [[cx - 0.35 * cr, cy + 0.55 * cr], [cx, cy + cr], [cx + 0.35 * cr, cy + 0.55 * cr]]
    deco = [
        _feature("Polygon", [wedge], id="prevailing",
                 label=f"prevailing wind from {compass_name(prev_deg)} ({prev_f:.0%})"),
        _feature("LineString", arrow, id="north"),
        _feature("LineString", head, id="north"),
    ]
    # Frame corners fix the projection's fit to a padded square around everything.
    frame = [_feature("Point", [x0 - pad, y0 - pad], id="frame"),
             _feature("Point", [x1 + pad * 2.1, y1 + pad * 1.8], id="frame")]
    return {"deco": deco, "frame": frame, "cx": cx, "cy": cy, "cr": cr, "span": span,
            "prev_deg": prev_deg}


def _values(frame: pd.DataFrame) -> dict:
    """A frame as the inline values Altair would make of it, converted once: a chart drawn
    from it in several layers (or copied by each method call) does not convert it again."""
    return alt.utils.data.to_values(frame)


def _geo(features):
    return alt.Data(values={"type": "FeatureCollection", "features": features},
                    format=alt.DataFormat(type="json", property="features"))


def _plan_ground_layers(feats, c, lu, proj) -> list:
    """Frame, building blocks, wind wedge, north arrow and the texts beside them."""
    frame_l = alt.Chart(_geo(c["frame"])).mark_geoshape(opacity=0).project(**proj)
    blocks = alt.Chart(_geo(feats)).mark_geoshape(
        fill=BUILDING_FILL, stroke=BUILDING_EDGE, strokeWidth=1.2).encode(
        tooltip=[alt.Tooltip("properties.id:N", title="building"),
                 alt.Tooltip("properties.height:Q", title=f"height ({lu})"),
                 alt.Tooltip("properties.roof:N", title="roof")]).project(**proj)
    wedge_l = alt.Chart(_geo(c["deco"][:1])).mark_geoshape(
        fill=RANGE_COLOUR, fillOpacity=0.45, stroke=RANGE_COLOUR).encode(
        tooltip=alt.Tooltip("properties.label:N", title="wind")).project(**proj)
    north_l = alt.Chart(_geo(c["deco"][1:])).mark_geoshape(
        filled=False, stroke="#222", strokeWidth=2).project(**proj)
    # Building labels sit just below each block so they never cover a position marker.
    cx, cy, cr, span = c["cx"], c["cy"], c["cr"], c["span"]
    labels = pd.DataFrame(
        [{"x": float(np.mean([q[0] for q in f["geometry"]["coordinates"][0][:4]])),
          "y": float(min(q[1] for q in f["geometry"]["coordinates"][0])) - 0.035 * span,
          "text": f["properties"]["label"]} for f in feats]
        + [{"x": cx, "y": cy + 1.45 * cr, "text": "N"},
           {"x": cx, "y": cy - 1.5 * cr,
            "text": f"wind from {compass_name(c['prev_deg'])}"}])
    text_l = alt.Chart(_values(labels)).mark_text(fontSize=11, color="#333", dy=0).encode(
        longitude=alt.Longitude("x:Q"), latitude=alt.Latitude("y:Q"),
        text=alt.Text("text:N")).project(**proj)
    return [frame_l, blocks, wedge_l, north_l, text_l]


def _plan_point_layers(pts, lu, proj) -> list:
    """Position marks (colour by place, shape by kind), the selection ring and the names."""
    n_rank = max(int(pts["place"].max()), 2)
    point_base = alt.Chart(_values(pts)).encode(
        longitude=alt.Longitude("x:Q"), latitude=alt.Latitude("y:Q"),
        tooltip=[alt.Tooltip("position_id:N", title="position"),
                 alt.Tooltip("kind_name:N", title="kind"),
                 alt.Tooltip("place:Q", title="position order"),
                 alt.Tooltip("best_rank:Q", title="rank of its first row"),
                 alt.Tooltip("best_turbine:N", title="turbine"),
                 alt.Tooltip("aep_kwh:Q", title="net energy (kWh/yr)", format=",.0f"),
                 alt.Tooltip("hub:Q", title=f"hub height ({lu})"),
                 alt.Tooltip("excluded:N", title="status")])
    dots = point_base.mark_point(filled=True, size=220, stroke="white", strokeWidth=1.5,
                                 opacity=1).encode(
        color=alt.condition(alt.datum.excluded == "excluded", alt.value(EXCLUDED_COLOUR),
                            alt.Color("place:Q", title="position order",
                                      scale=alt.Scale(range=RANK_SCHEME, domain=[1, n_rank]),
                                      legend=alt.Legend(format="d"))),
        shape=alt.Shape("kind:N", title="kind of position",
                        scale=alt.Scale(domain=["roof", "gap", "mast"],
                                        range=["circle", "diamond", "triangle-up"]),
                        # the site file's "gap" is a position in a passage between buildings
                        legend=alt.Legend(labelExpr="datum.label == 'gap' ? 'passage' : "
                                                    "datum.label"))
    ).add_params(alt.selection_point(name=PICK, fields=["position_id"], on="click",
                                     clear=False)).project(**proj)
    ring = point_base.transform_filter(alt.datum.selected).mark_point(
        size=650, stroke="#d62", strokeWidth=3, filled=False).project(**proj)
    # Names slant up and to the right of their markers so close neighbours stay readable.
    names = point_base.mark_text(angle=330, align="left", dx=8, dy=-6, fontSize=10,
                                 color="#123").encode(text=alt.Text("position_id:N")).project(**proj)
    return [dots, ring, names]


def plan_view(evaluation, length_unit: str = "m", selected: str | None = None,
              width: int = 460, height: int = 400) -> alt.LayerChart:
    """Plan of the site: buildings as blocks labelled with height, positions coloured by rank.

    Local metres (or feet) east and north, equal scale on both axes, a north arrow and a wedge
    for the prevailing wind sector in the top-right corner. No map tiles.
    """
    a = evaluation.assessment
    L = lambda v: units.length_from_si(v, length_unit)  # noqa: E731
    feats = _plan_buildings(a, L, length_unit)
    pts = _plan_points(evaluation, L, selected)
    compass = _plan_compass(a.climate, feats, pts)
    proj = alt.Projection(type="identity", reflectY=True).to_dict()
    layers = (_plan_ground_layers(feats, compass, length_unit, proj)
              + _plan_point_layers(pts, length_unit, proj))
    return alt.layer(*layers).properties(
        width=width, height=height,
        title=f"Plan view ({length_unit}, east to the right, north up)").resolve_scale(
        color="independent")


def suggestion_plan(assessment, building_id: str, suggestions: pd.DataFrame,
                    length_unit: str = "m", width: int = 460, height: int = 380):
    """Plan of one roof's suggested positions beside the site's buildings and positions.

    ``suggestions`` holds ``id``, ``x_m``, ``y_m``, ``mast_height_m`` [m] (the rows of
    :func:`engine.flow.roof_suggestions.suggest_roof_positions`, as the assessor left them).
    The chosen building is outlined in the accent colour, the site's positions are grey, the
    suggestions are open circles labelled with their names. Local metres (or feet), no tiles.
    """
    L = lambda v: units.length_from_si(v, length_unit)  # noqa: E731
    feats = _plan_buildings(assessment, L, length_unit)
    chosen = [f for f in feats if f["properties"]["id"] == building_id]
    proj = alt.Projection(type="identity", reflectY=True).to_dict()
    blocks = alt.Chart(_geo(feats)).mark_geoshape(
        fill=BUILDING_FILL, stroke=BUILDING_EDGE, strokeWidth=1).encode(
        tooltip=alt.Tooltip("properties.label:N", title="building")).project(**proj)
    layers = [blocks]
    if chosen:
        layers.append(alt.Chart(_geo(chosen)).mark_geoshape(
            filled=False, stroke=ACCENT, strokeWidth=3).project(**proj))
    here = pd.DataFrame({"name": [p.id for p in assessment.positions],
                         "x": [L(p.x_m) for p in assessment.positions],
                         "y": [L(p.y_m) for p in assessment.positions]})
    layers.append(alt.Chart(here).mark_point(filled=True, size=90, color=EXCLUDED_COLOUR).encode(
        longitude="x:Q", latitude="y:Q",
        tooltip=alt.Tooltip("name:N", title="position entered")).project(**proj))
    sug = pd.DataFrame({"name": suggestions["id"].astype(str).to_numpy(),
                        "x": L(suggestions["x_m"].to_numpy(float)),
                        "y": L(suggestions["y_m"].to_numpy(float)),
                        "mast": L(suggestions["mast_height_m"].to_numpy(float))})
    base = alt.Chart(sug).encode(
        longitude="x:Q", latitude="y:Q",
        tooltip=[alt.Tooltip("name:N", title="suggested"),
                 alt.Tooltip("mast:Q", title=f"mast ({length_unit})", format=".1f")])
    layers += [base.mark_point(filled=False, size=160, stroke=RANGE_COLOUR,
                               strokeWidth=2.5).project(**proj),
               base.mark_text(angle=330, align="left", dx=8, dy=-6, fontSize=10,
                              color="#123").encode(text="name:N").project(**proj)]
    return alt.layer(*layers).properties(
        width=width, height=height,
        title=f"Suggested positions on {building_id} ({length_unit}, east right, north up)")


def wind_rose(climate, air_density_kgm3: float = 1.225, size: int = 240) -> alt.HConcatChart:
    """Two roses side by side: how often the wind comes from each sector, and its energy share."""
    df = sector_table(climate, air_density_kgm3)

    def rose(field, title, colour):
        return alt.Chart(df).mark_arc(stroke="white", strokeWidth=1, color=colour).encode(
            theta=alt.Theta("t0:Q", scale=None), theta2=alt.Theta2("t1:Q"),
            # explicit range: a concatenated view has no single width to size the radius by
            radius=alt.Radius(f"{field}:Q", scale=alt.Scale(type="sqrt", zero=True,
                                                            range=[0, size / 2 - 18])),
            tooltip=[alt.Tooltip("sector:N"), alt.Tooltip("sector_deg:Q", title="centre (°)"),
                     alt.Tooltip(f"{field}:Q", title=title, format=".1%")],
        ).properties(width=size, height=size, title=title)

    labels = pd.DataFrame({"t": [0.0, math.pi / 2, math.pi, 1.5 * math.pi],
                           "text": ["N", "E", "S", "W"]})
    lab = alt.Chart(labels).mark_text(radius=size / 2 - 6, fontSize=12, fontWeight="bold",
                                      color="#555").encode(
        theta=alt.Theta("t:Q", scale=None), text=alt.Text("text:N"))
    return alt.hconcat(alt.layer(rose("frequency", "time from each sector", ACCENT), lab),
                       alt.layer(rose("energy_share", "wind energy from each sector",
                                      RANGE_COLOUR), lab))


def speed_distribution(evaluation, position_id: str, speed_unit: str = "m/s") -> alt.LayerChart:
    """Speed distribution at a position's hub: bin probabilities and the Weibull density."""
    df = hub_distribution(evaluation, position_id, speed_unit)
    bars = alt.Chart(df).mark_bar(color="#8cc0d8", opacity=0.9).encode(
        x=alt.X("lo:Q", title=f"wind speed at hub ({speed_unit})"), x2=alt.X2("hi:Q"),
        y=alt.Y("probability:Q", title="share of the year per bin", axis=alt.Axis(format="%")),
        tooltip=[alt.Tooltip("speed:Q", format=".1f"),
                 alt.Tooltip("probability:Q", format=".2%")])
    line = alt.Chart(df).mark_line(color=ACCENT, strokeWidth=2).encode(
        x=alt.X("speed:Q"), y=alt.Y("density_per_bin:Q"))
    return alt.layer(bars, line).properties(
        width=460, height=260,
        title=f"Speed distribution at {position_id}: bins (bars), sector Weibull mixture (line)")


def vertical_profile(evaluation, position_id: str, turbine_id: str, length_unit: str = "m",
                     speed_unit: str = "m/s", zones: list | None = None) -> alt.LayerChart:
    """Mean speed against height with the roof level, roof zones and the rotor disc drawn.

    ``zones`` is an optional list of ``{"name", "bottom_m", "top_m"}`` bands (e.g. from the
    roof-zone model) drawn as shaded bands.
    """
    a = evaluation.assessment
    pos = next(p for p in a.positions if p.id == position_id)
    tur = next(t for t in a.turbines if t.id == turbine_id)
    L = lambda v: units.length_from_si(v, length_unit)  # noqa: E731
    prof = profile_table(a, position_id, length_unit, speed_unit)
    hub = a.hub_height_m(pos)
    r = tur.rotor_radius_m
    vmax = float(prof["speed"].max()) * 1.1
    layers = []
    bands = [{"name": "rotor", "bottom": L(hub - r), "top": L(hub + r), "colour": ACCENT}]
    for z in zones or []:
        bands.append({"name": z["name"], "bottom": L(z["bottom_m"]), "top": L(z["top_m"]),
                      "colour": RANGE_COLOUR})
    bdf = pd.DataFrame(bands)
    layers.append(alt.Chart(bdf).mark_rect(opacity=0.18).encode(
        y=alt.Y("bottom:Q"), y2=alt.Y2("top:Q"), x=alt.XValue(0), x2=alt.X2Value(380),
        color=alt.Color("colour:N", scale=None),
        tooltip=[alt.Tooltip("name:N"), alt.Tooltip("bottom:Q", format=".1f"),
                 alt.Tooltip("top:Q", format=".1f")]))
    levels = [{"name": f"hub {L(hub):.1f} {length_unit}", "h": L(hub)}]
    base = a.base_height_m(pos)
    if base > 0:
        levels.append({"name": f"roof {L(base):.1f} {length_unit}", "h": L(base)})
    ldf = pd.DataFrame(levels)
    layers.append(alt.Chart(prof).mark_line(color="#333", strokeWidth=2).encode(
        x=alt.X("speed:Q", title=f"mean speed, undisturbed ({speed_unit})",
                scale=alt.Scale(domain=[0, vmax])),
        y=alt.Y("height:Q", title=f"height above ground ({length_unit})")))
    layers.append(alt.Chart(ldf).mark_rule(strokeDash=[4, 3], color="#7a6a48").encode(y=alt.Y("h:Q")))
    layers.append(alt.Chart(ldf).mark_text(align="left", dx=4, dy=-6, color="#7a6a48").encode(
        y=alt.Y("h:Q"), x=alt.XValue(4), text=alt.Text("name:N")))
    layers.append(alt.Chart(bdf).mark_text(align="right", dx=-4, color="#333").encode(
        y=alt.Y("top:Q"), x=alt.XValue(376), text=alt.Text("name:N")))
    return alt.layer(*layers).properties(
        width=380, height=320, title=f"Vertical profile at {position_id} with {turbine_id}")


def power_curve(turbine, speed_unit: str = "m/s", corrected: pd.DataFrame | None = None,
                distribution: pd.DataFrame | None = None) -> alt.LayerChart:
    """Power curve as published; optionally the turbulence-corrected curve and the hub-height
    distribution drawn behind it (on its own right-hand axis).

    ``corrected`` has columns ``speed_ms`` and ``power_w``; ``distribution`` is
    :func:`hub_distribution` output.
    """
    raw = pd.DataFrame({"speed": units.speed_from_si(np.asarray(turbine.curve_speed_ms),
                                                      speed_unit),
                        "power_kw": np.asarray(turbine.curve_power_w) / 1000.0,
                        "curve": "as published (1.225 kg/m³)"})
    curves = [raw]
    if corrected is not None and len(corrected):
        curves.append(pd.DataFrame({
            "speed": units.speed_from_si(corrected["speed_ms"].to_numpy(float), speed_unit),
            "power_kw": corrected["power_w"].to_numpy(float) / 1000.0,
            "curve": "corrected for turbulence and air density"}))
    cdf = pd.concat(curves, ignore_index=True)
    x = alt.X("speed:Q", title=f"wind speed at hub ({speed_unit})")
    lines = alt.Chart(cdf).mark_line(strokeWidth=2, point=False).encode(
        x=x, y=alt.Y("power_kw:Q", title="electrical power (kW)"),
        color=alt.Color("curve:N", title=None,
                        scale=alt.Scale(range=[ACCENT, RANGE_COLOUR]),
                        legend=alt.Legend(orient="bottom")),
        strokeDash=alt.StrokeDash("curve:N", legend=None,
                                  scale=alt.Scale(range=[[1, 0], [5, 3]])))
    chart = lines
    if distribution is not None and len(distribution):
        area = alt.Chart(distribution).mark_area(color="#cfe3ee", opacity=0.7,
                                                 interpolate="step").encode(
            x=alt.X("speed:Q"),
            y=alt.Y("probability:Q", title="share of the year at hub",
                    axis=alt.Axis(format="%", orient="right")))
        chart = alt.layer(area, lines).resolve_scale(y="independent")
    return chart.properties(width=460, height=280, title=f"Power curve: {turbine.name}")


def monthly_energy(frame: pd.DataFrame, title: str) -> alt.Chart:
    """Bar chart of :func:`monthly_energy_kwh` output."""
    return alt.Chart(frame).mark_bar(color=ACCENT).encode(
        x=alt.X("month:N", sort=list(MONTHS), title=None),
        y=alt.Y("energy_kwh:Q", title="net energy (kWh)"),
        tooltip=[alt.Tooltip("month:N"), alt.Tooltip("energy_kwh:Q", format=",.0f")],
    ).properties(width=460, height=240, title=title)


def ranking_bars(table: pd.DataFrame, top: int = 12) -> alt.LayerChart:
    """Ranked rows as horizontal bars of net energy, with the P50–P90 range where present."""
    keep = [c for c in ("rank", "position_id", "turbine_id", "excluded", "aep_kwh",
                        "p50_aep_kwh", "p90_aep_kwh") if c in table.columns]
    df = table.head(top)[keep].copy()  # only what is drawn: Altair serialises every column
    df["row"] = [f"{r}. {p} / {t}" for r, p, t in zip(df["rank"], df["position_id"],
                                                       df["turbine_id"])]
    df["status"] = np.where(df["excluded"], "excluded", "eligible")
    centre = "p50_aep_kwh" if "p50_aep_kwh" in df else "aep_kwh"
    order = list(df["row"])
    y = alt.Y("row:N", sort=order, title=None, axis=alt.Axis(labelLimit=280))
    bars = alt.Chart(df).mark_bar().encode(
        y=y, x=alt.X(f"{centre}:Q", title="net energy per year (kWh)",
                     axis=alt.Axis(labelOverlap=True, labelSeparation=8)),
        color=alt.Color("status:N", title=None,
                        scale=alt.Scale(domain=["eligible", "excluded"],
                                        range=[ACCENT, EXCLUDED_COLOUR])),
        tooltip=[alt.Tooltip("row:N", title="rank"),
                 alt.Tooltip(f"{centre}:Q", title="P50 (kWh)", format=",.0f")]
        + ([alt.Tooltip("p90_aep_kwh:Q", title="P90 (kWh)", format=",.0f")]
           if "p90_aep_kwh" in df else []))
    layers = [bars]
    if "p90_aep_kwh" in df:
        layers.append(alt.Chart(df).mark_rule(color=RANGE_COLOUR, strokeWidth=3).encode(
            y=y, x=alt.X("p90_aep_kwh:Q"), x2=alt.X2(f"{centre}:Q")))
        layers.append(alt.Chart(df).mark_tick(color=RANGE_COLOUR, thickness=3).encode(
            y=y, x=alt.X("p90_aep_kwh:Q")))
    title = ("Ranking: bars P50, orange line down to P90" if "p90_aep_kwh" in df
             else "Ranking: net energy per year")
    return alt.layer(*layers).properties(width=460, height=max(160, 24 * len(df)), title=title)
