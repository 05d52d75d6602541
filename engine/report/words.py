"""Fixed wording of the summary: objectives, field-trial record, methods, settings in words.

The methods table is read from each engine module's own documentation (first line and
References), so the list of methods and sources cannot drift from the code.
"""
from __future__ import annotations

import datetime as _dt
import importlib
import os
import re

from engine.report.content import Table
from engine.report.formats import DASH

#: objective -> (question wording, label of the ranked value)
OBJECTIVE_WORDS = {
    "net_aep": ("gives the most net energy in a typical year (P50)", "net energy"),
    "p90_aep": ("gives the most energy in a poor year (P90, exceeded nine years in ten)",
                "P90 energy"),
    "lcoe": ("gives the lowest cost per kWh over the turbine's life", "cost of energy"),
    "payback": ("pays back its cost soonest", "simple payback"),
}

#: Field-trial experience of building-mounted turbines.
FIELD_TRIALS = ("Field trials of building-mounted turbines found capacity factors mostly below "
                "5 % (Warwick Wind Trials, 2009: mean 0.85 %, 4.15 % excluding downtime; "
                "Energy Saving Trust, 2009: best urban site below 3 %).")
#: Capacity factor above which a building-mounted estimate deserves a second look [-]
#: (common practice, from the field-trial range above).
CF_ALARM = 0.10

#: Chain steps listed under methods: (title, module). Modules that are not part of this
#: installation are left out of the list.
METHOD_STEPS = (
    ("Air density", "engine.climate.air"),
    ("Climate from measurements", "engine.climate.fit"),
    ("Quality control of records", "engine.climate.qc"),
    ("Long-term correction", "engine.climate.mcp"),
    ("Transfer to the site", "engine.flow.transfer"),
    ("Vertical profile", "engine.flow.profiles"),
    ("Wind speed distribution", "engine.climate.weibull"),
    ("Buildings and roof zones", "engine.flow.roofzones"),
    ("Roof flow", "engine.flow.roofflow"),
    ("Shelter by upwind buildings", "engine.flow.shelter"),
    ("Passages between buildings", "engine.flow.gaps"),
    ("Spot readings", "engine.flow.spot"),
    ("Effective climate at each position", "engine.flow.effective"),
    ("Turbine power curves", "engine.energy.turbines"),
    ("Energy yield", "engine.energy.aep"),
    ("Uncertainty (P50/P90)", "engine.energy.uncertainty"),
    ("Loads", "engine.energy.loads"),
    ("Noise by wind speed", "engine.energy.noise_bands"),
    ("Noise screening by buildings", "engine.energy.noise_paths"),
    ("Shadow flicker", "engine.energy.flicker"),
    ("Local siting rules", "engine.chain.rules"),
    ("Economics", "engine.energy.economics"),
    ("Ranking", "engine.chain.ranking"),
)


def docstring_parts(module) -> tuple[str, str]:
    """(first line, References text) of a module's numpydoc docstring."""
    doc = (module.__doc__ or "").strip()
    first = doc.split("\n", 1)[0].strip() if doc else ""
    refs = ""
    m = re.search(r"^References\n-+\n(.*?)(?:\n\n[A-Z][A-Za-z ]+\n-+\n|\Z)", doc, re.S | re.M)
    if m:
        refs = " ".join(line.strip() for line in m.group(1).splitlines() if line.strip())
    return first, refs


def methods_table() -> Table:
    """Every model of the chain in this installation: what it does and its published source."""
    rows = []
    for title, name in METHOD_STEPS:
        try:
            mod = importlib.import_module(name)
        except ImportError:
            continue
        first, refs = docstring_parts(mod)
        rows.append((title, first or DASH, refs or "Project method; see the module's notes."))
    return Table(key="methods", columns=("Step", "Method", "Published source"), rows=tuple(rows),
                 align=("l", "l", "l"),
                 caption="Each step is one module of the engine; its documentation gives the "
                         "equations.")


def transfer_words(t) -> str:
    """How the climate transfer was set, in words (empty when the site file has no settings)."""
    if t is None:
        return ""
    method = getattr(t, "method", "")
    if method == "power_law":
        alpha = getattr(t, "power_law_exponent", 0.0)
        words = (f" by the power law with exponent {alpha:g}" if alpha > 0 else
                 " by the power law with each terrain's exponent from the ASHRAE table")
    elif method == "log_law":
        words = " by the EN 1991-1-4 terrain factor and log law"
    else:
        words = f" by the {method} method" if method else ""
    if getattr(t, "use_morphometry", False):
        words += f" (Macdonald et al. 1998, {getattr(t, 'morphometry_layout', '')} layout)"
    if getattr(t, "sector_morphometry", False):
        words += (f"; per direction sector, roughness and displacement from the site's "
                  f"buildings within {getattr(t, 'sector_fetch_m', 0):g} m upwind of each "
                  "position (Macdonald et al. 1998), the site's own where a sector holds none")
    if getattr(t, "adjust_shape_with_height", False):
        words += ", Weibull shape adjusted with height"
    return words


def timestamp(generated_at) -> str:
    """The summary's time stamp as ``YYYY-MM-DD HH:MM:SS UTC``.

    ``generated_at`` is a datetime or ISO 8601 text (UTC when naive); None means
    ``SOURCE_DATE_EPOCH`` when set, else now.
    """
    if generated_at is None:
        env = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
        if env.isdigit():
            generated_at = _dt.datetime.fromtimestamp(int(env), _dt.timezone.utc)
        else:
            generated_at = _dt.datetime.now(_dt.timezone.utc)
    if isinstance(generated_at, str):
        generated_at = _dt.datetime.fromisoformat(generated_at.replace("Z", "+00:00"))
    if generated_at.tzinfo is None:
        generated_at = generated_at.replace(tzinfo=_dt.timezone.utc)
    return generated_at.astimezone(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M:%S UTC")


def parse_timestamp(text: str) -> _dt.datetime:
    """The datetime of a :func:`timestamp` text."""
    return _dt.datetime.strptime(text, "%Y-%m-%d %H:%M:%S UTC").replace(tzinfo=_dt.timezone.utc)
