"""Static charts for the siting summary: Vega-Lite specs drawn offline to SVG and PNG.

The charts themselves are the dashboard's builders in :mod:`engine.report.charts`, so the summary
shows the same pictures a person saw on screen. This module picks them for a summary, draws
them with vl-convert (no browser, no network) in a child process, so a crash of the renderer
costs the chart and not the program (:mod:`engine.report.render`), and makes the SVG safe to
inline several times in one HTML page (element ids are prefixed per chart so clip paths do not
collide).
"""
from __future__ import annotations

import json
import re
from dataclasses import dataclass

import numpy as np

from engine.core.errors import InputError
from engine.report import charts
from engine.report import render as chart_render

#: PNG scale for the PDF (2 = twice the CSS pixel size, sharp in print).
PNG_SCALE = 2

_ID_ATTR = re.compile(r'\bid="([^"]+)"')


@dataclass(frozen=True)
class Figure:
    """One chart of the summary: a Vega-Lite spec with its title and caption."""

    key: str
    title: str
    caption: str
    spec: dict | None = None

    #: Why the chart could not be drawn (empty when ``spec`` holds it).
    problem: str = ""


def _spec(chart) -> dict:
    # Round-trip through JSON so the spec holds plain types only (numpy scalars become floats).
    # Schema validation is left to the chart builders' own tests (it doubles the time here);
    # vl-convert still rejects a spec it cannot draw.
    return json.loads(json.dumps(chart.to_dict(validate=False), default=float))


def _figure(key, title, caption, build) -> Figure:
    """A figure from ``build()``; when the input cannot be drawn, a figure carrying the reason."""
    try:
        return Figure(key, title, caption, _spec(build()))
    except InputError as e:
        return Figure(key, title, caption, None,
                      "; ".join(f"{w}: {m}" for w, m in e.problems[:3])
                      + (f" (and {len(e.problems) - 3} more)" if len(e.problems) > 3 else ""))


#: Roof zones of the building model, by the name of their clearance diagnostic.
ZONE_NAMES = {"recirculation": "recirculation", "turbulence": "high turbulence",
              "wake": "roof wake"}


def roof_zone_bands(evaluation, position_id: str) -> list:
    """Roof-zone bands over a position's roof as ``{"name", "bottom_m", "top_m"}`` [m above ground].

    Read from the building models' diagnostics of the effective climate, so the bands drawn
    are the ones the ranking used: ``clearance_<zone>_m`` (P, S) is the hub's height above
    the zone's boundary in each sector, hence the boundary stands at hub height minus the
    clearance. The band's top is the highest boundary over the sectors that carry the main
    share of the energy (``main_sector``; all sectors when absent); its bottom is the roof.
    Positions off roofs, or a building model without these diagnostics, give no bands.
    """
    eff = evaluation.climate
    a = evaluation.assessment
    i = list(eff.position_ids).index(position_id)
    pos = a.positions[i]
    if pos.kind != "roof":
        return []
    base = a.base_height_m(pos)
    hub = float(eff.hub_height_m[i])
    S = eff.frequency.shape[1]
    main = np.asarray(eff.diagnostics.get("main_sector", np.ones_like(eff.frequency, bool)))
    use = main[i].astype(bool) if main.shape == eff.frequency.shape else np.ones(S, bool)
    bands = []
    for zone, label in ZONE_NAMES.items():
        clear = eff.diagnostics.get(f"clearance_{zone}_m")
        if clear is None or np.shape(clear) != eff.frequency.shape:
            continue
        c = np.asarray(clear, float)[i][use]
        c = c[np.isfinite(c)]
        if c.size == 0:
            continue
        top = hub - float(c.min())
        if top > base:
            bands.append({"name": label, "bottom_m": base, "top_m": top})
    return bands


def _profile_top_m(assessment, position_id: str) -> float:
    # The profile chart's height range (as engine.report.charts.profile_table draws it) [m].
    pos = next(p for p in assessment.positions if p.id == position_id)
    hub = assessment.hub_height_m(pos)
    return max(2.0 * hub, hub + 6.0)


def _merge_close_bands(bands: list, min_gap_m: float) -> list:
    """Bands whose tops lie within ``min_gap_m`` become one, so their labels do not overlap."""
    out = []
    for b in sorted(bands, key=lambda b: b["top_m"]):
        if out and b["top_m"] - out[-1]["top_m"] < min_gap_m:
            last = out[-1]
            out[-1] = {"name": f"{last['name']} / {b['name']}",
                       "bottom_m": min(last["bottom_m"], b["bottom_m"]), "top_m": b["top_m"]}
        else:
            out.append(dict(b))
    return out


def summary_figures(evaluation, position_id: str | None, turbine_id: str | None) -> list:
    """The summary's charts: plan, wind roses, profile at the leading position, yields."""
    a = evaluation.assessment
    figs = [_figure(
        "plan", "Site plan",
        "Buildings (labelled with height) and candidate positions coloured by their best rank; "
        "grey positions are excluded. The wedge shows the most frequent wind sector.",
        lambda: charts.plan_view(evaluation, selected=position_id))]
    figs.append(_figure(
        "wind-rose", "Wind rose of the reference climate",
        f"Share of the time (left) and of the wind's energy (right) from each of the "
        f"{a.climate.n_sectors} sectors, at the climate's own height of "
        f"{a.climate.height_m:g} m.",
        lambda: charts.wind_rose(a.climate, evaluation.climate.air_density_kgm3)))
    kinds = {p.id: p.kind for p in a.positions}
    profiles = []
    if position_id is not None and turbine_id is not None:
        profiles.append(("profile", position_id, turbine_id, "the leading position"))
    if position_id is None or kinds.get(position_id) != "roof":
        # Roof zones matter on roofs: show the best-ranked roof row too (eligible or not).
        roof_rows = evaluation.table[evaluation.table["kind"] == "roof"]
        if len(roof_rows):
            r = roof_rows.iloc[0]
            profiles.append(("profile-roof", str(r["position_id"]), str(r["turbine_id"]),
                             "the best-ranked roof position"))
    for key, pid, tid, which in profiles:
        zones = _merge_close_bands(roof_zone_bands(evaluation, pid),
                                   0.05 * _profile_top_m(a, pid))
        if zones:
            zone_text = ("Shaded bands: the rotor disc and, from the roof up, the roof zones of "
                         "the building model (highest boundary over the main energy sectors).")
        elif kinds.get(pid) == "roof":
            zone_text = ("Shaded band: the rotor disc. The building model reported no "
                         "roof-zone heights for this position.")
        else:
            zone_text = "Shaded band: the rotor disc (no roof zones: not on a roof)."
        figs.append(_figure(
            key, f"Vertical profile at {pid}, {which}",
            "Mean undisturbed wind speed against height (the transfer the ranking starts "
            f"from, before building effects), with the roof level and hub height. {zone_text}",
            lambda pid=pid, tid=tid, zones=zones: charts.vertical_profile(
                evaluation, pid, tid, zones=zones)))
    n = min(len(evaluation.table), 30)
    figs.append(_figure(
        "yield", "Yield by position and turbine",
        f"Net energy per year of the {n} best-ranked position and turbine combinations.",
        lambda: charts.ranking_bars(evaluation.table, top=n)))
    return figs


def _renumber_ids(svg: str, prefix: str) -> str:
    """Rename every element id to ``<prefix>-<n>`` in order of appearance, and its references.

    Ids must be unique across the charts of one page, and vl-convert numbers gradients with a
    counter that runs on between calls; renumbering makes both unique and repeatable.
    """
    ids = list(dict.fromkeys(_ID_ATTR.findall(svg)))
    if not ids:
        return svg
    new = {old: f"{prefix}-{n}" for n, old in enumerate(ids)}
    pattern = re.compile(r'(\bid="|url\(#|href="#)(' + "|".join(
        re.escape(i) for i in sorted(ids, key=len, reverse=True)) + r')(?=["\)])')
    return pattern.sub(lambda m: m.group(1) + new[m.group(2)], svg)


def drawn(fig: Figure, draw):
    """``(image, None)`` from ``draw(fig)``, or ``(None, why)`` when the figure has no spec or
    the renderer failed (:class:`engine.report.render.ChartError`): both summary formats then
    say why in place of the chart."""
    if fig.spec is None:
        return None, fig.problem
    try:
        return draw(fig), None
    except chart_render.ChartError as err:
        return None, str(err)


def figure_svg(fig: Figure) -> str:
    """The figure as SVG text ready to inline in HTML (ids prefixed with the figure's key).

    Drawn in a child process (:mod:`engine.report.render`); raises
    :class:`~engine.report.render.ChartError` with the reason when it cannot be drawn.
    """
    svg = chart_render.to_svg(fig.spec)
    svg = re.sub(r"^<\?xml[^>]*>\s*", "", svg)
    return _renumber_ids(svg, f"fig-{fig.key}")


def figure_png(fig: Figure, scale: float = PNG_SCALE) -> bytes:
    """The figure as PNG bytes at ``scale`` times its CSS pixel size (see :func:`figure_svg`)."""
    return chart_render.to_png(fig.spec, scale=scale)
