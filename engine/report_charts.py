"""Static charts for the siting summary: Vega-Lite specs drawn offline to SVG and PNG.

The charts themselves are the dashboard's builders in :mod:`engine.charts`, so the summary
shows the same pictures a person saw on screen. This module picks them for a summary, draws
them with vl-convert (no browser, no network) and makes the SVG safe to inline several times
in one HTML page (element ids are prefixed per chart so clip paths do not collide).
"""
from __future__ import annotations

import json
import re
from dataclasses import dataclass

import vl_convert as vlc

from . import charts

#: PNG scale for the PDF (2 = twice the CSS pixel size, sharp in print).
PNG_SCALE = 2

_ID_ATTR = re.compile(r'\bid="([^"]+)"')


@dataclass(frozen=True)
class Figure:
    """One chart of the summary: a Vega-Lite spec with its title and caption."""

    key: str
    title: str
    caption: str
    spec: dict

    def spec_json(self) -> str:
        """The spec as canonical JSON text (sorted keys), the same bytes on every run."""
        return json.dumps(self.spec, sort_keys=True, ensure_ascii=False)


def _spec(chart) -> dict:
    # Round-trip through JSON so the spec holds plain types only (numpy scalars become floats).
    return json.loads(json.dumps(chart.to_dict(), default=float))


def roof_zone_bands(evaluation, position_id: str) -> list:
    """Roof-zone bands above a position's roof as ``{"name", "bottom_m", "top_m"}`` [m].

    Read from the building models' per-position diagnostics of the effective climate, so
    the bands drawn are the ones the ranking used: every pair of diagnostics named
    ``<zone>_bottom_m`` / ``<zone>_top_m`` (heights above ground) becomes a band, and
    ``<zone>_top_m`` alone a band starting at the roof.
    """
    eff = evaluation.climate
    a = evaluation.assessment
    i = list(eff.position_ids).index(position_id)
    pos = a.positions[i]
    base = a.base_height_m(pos)
    bands = []
    for name in sorted(eff.diagnostics):
        if not name.endswith("_top_m"):
            continue
        zone = name[: -len("_top_m")]
        top = eff.diagnostics[name]
        bottom = eff.diagnostics.get(f"{zone}_bottom_m")
        try:
            top_v = float(top[i])
            bottom_v = float(bottom[i]) if bottom is not None else base
        except (TypeError, IndexError, ValueError):
            continue
        if top_v > bottom_v:
            bands.append({"name": zone.replace("_", " "), "bottom_m": bottom_v, "top_m": top_v})
    return bands


def summary_figures(evaluation, position_id: str | None, turbine_id: str | None) -> list:
    """The summary's charts: plan, wind roses, profile at the recommended position, yields."""
    a = evaluation.assessment
    figs = [Figure(
        "plan", "Site plan",
        "Buildings (labelled with height) and candidate positions coloured by their best rank; "
        "grey positions are excluded. The wedge shows the most frequent wind sector.",
        _spec(charts.plan_view(evaluation, selected=position_id)))]
    figs.append(Figure(
        "wind-rose", "Wind rose of the reference climate",
        f"Share of the time (left) and of the wind's energy (right) from each of the "
        f"{a.climate.n_sectors} sectors, at the climate's own height of "
        f"{a.climate.height_m:g} m.",
        _spec(charts.wind_rose(a.climate, evaluation.climate.air_density_kgm3))))
    if position_id is not None and turbine_id is not None:
        zones = roof_zone_bands(evaluation, position_id)
        zone_text = ("Shaded bands: the rotor disc and the roof zones from the building model."
                     if zones else "Shaded band: the rotor disc. The building model reported "
                                   "no roof-zone heights for this position.")
        figs.append(Figure(
            "profile", f"Vertical profile at {position_id}",
            "Mean undisturbed wind speed against height (the transfer the ranking starts "
            f"from, before building effects), with the roof level and hub height. {zone_text}",
            _spec(charts.vertical_profile(evaluation, position_id, turbine_id, zones=zones))))
    n = min(len(evaluation.table), 30)
    figs.append(Figure(
        "yield", "Yield by position and turbine",
        f"Net energy per year of the {n} best-ranked position and turbine combinations.",
        _spec(charts.ranking_bars(evaluation.table, top=n))))
    return figs


def _prefix_ids(svg: str, prefix: str) -> str:
    ids = set(_ID_ATTR.findall(svg))
    if not ids:
        return svg
    pattern = re.compile(r'(\bid="|url\(#|href="#)(' + "|".join(
        re.escape(i) for i in sorted(ids, key=len, reverse=True)) + r')(?=["\)])')
    return pattern.sub(lambda m: f"{m.group(1)}{prefix}-{m.group(2)}", svg)


def figure_svg(fig: Figure) -> str:
    """The figure as SVG text ready to inline in HTML (ids prefixed with the figure's key)."""
    svg = vlc.vegalite_to_svg(fig.spec)
    svg = re.sub(r"^<\?xml[^>]*>\s*", "", svg)
    return _prefix_ids(svg, f"fig-{fig.key}")


def figure_png(fig: Figure, scale: float = PNG_SCALE) -> bytes:
    """The figure as PNG bytes at ``scale`` times its CSS pixel size."""
    return vlc.vegalite_to_png(fig.spec, scale=scale)
