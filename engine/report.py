"""Siting summary: one structured content object, rendered as self-contained HTML and as PDF.

:func:`build_summary` turns an :class:`~engine.pipeline.Evaluation` into a :class:`Summary`
(sections of paragraphs, bullet lists, tables and figures, every number already formatted),
so the HTML and the PDF show the same words and numbers. :func:`render_html` writes one
HTML file with inline CSS and inline SVG charts and nothing fetched from anywhere;
:func:`render_pdf` writes a PDF with fpdf2 (charts as PNG, a Unicode TrueType font when one is
found, else the PDF core fonts with the text transliterated to Latin-1).

Everything in the summary follows from the site file, the tool version and the time stamp, so
the same site file and time stamp give the same bytes.

User text (site name, notes, assessor, ids) is escaped in HTML and written as plain text in
the PDF; it is never parsed as markup.
"""
from __future__ import annotations

import base64
import datetime as _dt
import html
import importlib
import io
import json
import math
import os
import re
import shlex
import struct
import unicodedata
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from . import __version__, exports, sitefile
from .cli import rank_document
from .model import BETZ_CP

# ---------------------------------------------------------------- the content object


@dataclass(frozen=True)
class Paragraph:
    """A paragraph of plain text; ``tone`` is ``""``, ``"note"`` or ``"caution"``."""

    text: str
    tone: str = ""


@dataclass(frozen=True)
class Bullets:
    """A bullet list of plain-text items."""

    items: tuple


@dataclass(frozen=True)
class Table:
    """A table of already formatted cells; ``align`` is ``"l"`` or ``"r"`` per column."""

    key: str
    columns: tuple
    rows: tuple
    align: tuple
    caption: str = ""


@dataclass(frozen=True)
class FigureBlock:
    """A chart (see :class:`engine.report_charts.Figure`)."""

    figure: object


@dataclass(frozen=True)
class Section:
    """One numbered section of the summary."""

    key: str
    title: str
    blocks: tuple


@dataclass(frozen=True)
class Attachment:
    """A data file carried inside the summary (data: link in HTML, embedded file in PDF)."""

    name: str
    mime: str
    data: bytes
    description: str


@dataclass(frozen=True)
class Summary:
    """The siting summary's content, shared by :func:`render_html` and :func:`render_pdf`."""

    title: str
    site_name: str
    generated_at: str
    assessor: str
    site_sha256: str
    version: str
    cautions_short: tuple
    sections: tuple
    attachments: tuple = ()
    rank_document: dict = field(default_factory=dict)

    def section(self, key: str) -> Section:
        """The section with ``key``."""
        for s in self.sections:
            if s.key == key:
                return s
        raise KeyError(key)

    def table(self, key: str) -> Table:
        """The first table with ``key`` in any section."""
        for s in self.sections:
            for b in s.blocks:
                if isinstance(b, Table) and b.key == key:
                    return b
        raise KeyError(key)


#: Section keys in order; every summary has all of them.
SECTION_KEYS = ("question", "recommendation", "ranking", "costs", "charts", "positions",
                "further", "quality", "inputs", "cautions", "reproducibility", "data")

# ---------------------------------------------------------------- number formats

DASH = "–"


def _finite(v) -> bool:
    return isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, bool) \
        and math.isfinite(float(v))


def fmt_fixed(v, digits: int) -> str:
    """``v`` with ``digits`` decimals, or a dash for a missing or non-finite value."""
    return f"{float(v):.{digits}f}" if _finite(v) else DASH


def fmt_percent(v, digits: int = 1) -> str:
    """A fraction as a percentage with ``digits`` decimals (0.1298 -> ``"13.0 %"``)."""
    return f"{100.0 * float(v):.{digits}f} %" if _finite(v) else DASH


def fmt_value(v) -> str:
    """Any table value: booleans as yes/no, numbers to 4 significant digits, lists joined."""
    if v is None:
        return DASH
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    if isinstance(v, (float, np.floating)):
        return f"{float(v):.4g}" if math.isfinite(float(v)) else DASH
    if isinstance(v, (list, tuple)):
        return "; ".join(fmt_value(x) for x in v) if v else DASH
    if isinstance(v, dict):
        return "; ".join(f"{k} {fmt_value(x)}" for k, x in v.items()) if v else DASH
    return str(v)


#: Column -> (header, formatter) for the result columns the summary knows by name. Every other
#: column of the results table is shown with :func:`fmt_value` under its own name.
COLUMN_FORMATS = {
    "rank": ("Rank", lambda v: str(int(v))),
    "position_id": ("Position", str),
    "turbine_id": ("Turbine", str),
    "kind": ("Kind", str),
    "mast_height_m": ("Mast [m]", lambda v: fmt_fixed(v, 1)),
    "hub_height_m": ("Hub height [m]", lambda v: fmt_fixed(v, 1)),
    "mean_speed_ms": ("Mean speed at hub [m/s]", lambda v: fmt_fixed(v, 2)),
    "gross_aep_kwh": ("Gross AEP [kWh/yr]", lambda v: fmt_fixed(v, 0)),
    "aep_kwh": ("Net AEP [kWh/yr]", lambda v: fmt_fixed(v, 0)),
    "p50_aep_kwh": ("P50 AEP [kWh/yr]", lambda v: fmt_fixed(v, 0)),
    "p90_aep_kwh": ("P90 AEP [kWh/yr]", lambda v: fmt_fixed(v, 0)),
    "capacity_factor": ("Capacity factor", lambda v: fmt_percent(v, 1)),
    "rated_power_kw": ("Rated power [kW]", lambda v: fmt_fixed(v, 2)),
    "speedup": ("Speed-up [-]", lambda v: fmt_fixed(v, 3)),
    "turbulence_intensity": ("Turbulence intensity", lambda v: fmt_percent(v, 1)),
    "lcoe_per_kwh": ("Cost of energy [per kWh]", lambda v: fmt_fixed(v, 3)),
    "p75_aep_kwh": ("P75 AEP [kWh/yr]", lambda v: fmt_fixed(v, 0)),
    "full_load_hours": ("Full-load hours [h/yr]", lambda v: fmt_fixed(v, 0)),
    "payback_years": ("Simple payback [years]", lambda v: fmt_fixed(v, 1)),
    "installed_cost": ("Installed cost", lambda v: fmt_fixed(v, 0)),
    "npv": ("Net present value", lambda v: fmt_fixed(v, 0)),
    "co2_avoided_kg_per_year": ("CO2 avoided [kg/yr]", lambda v: fmt_fixed(v, 0)),
    "thrust_rated_n": ("Thrust near rated [N]", lambda v: fmt_fixed(v, 0)),
    "thrust_extreme_n": ("Extreme thrust [N]", lambda v: fmt_fixed(v, 0)),
    "mast_base_moment_nm": ("Mast base moment [N m]", lambda v: fmt_fixed(v, 0)),
    "noise_margin_db": ("Noise margin [dB(A)]", lambda v: fmt_fixed(v, 1)),
    "noise_worst_receptor": ("Worst receptor", str),
    "noise_exceeds_limit": ("Noise over limit", fmt_value),
    "noise_db_at_receptors": ("Noise at receptors [dB(A)]", lambda v: "; ".join(
        f"{k} {fmt_fixed(x, 1)}" for k, x in v.items()) if v else DASH),
    "in_recirculation_zone": ("In recirculation zone", fmt_value),
    "in_turbulence_zone": ("In high-turbulence zone", fmt_value),
    "in_roof_wake": ("In roof wake", fmt_value),
    "min_clear_mast_m": ("Mast to clear roof zones [m]", lambda v: fmt_fixed(v, 1)),
    "spilled_fraction": ("Spilled share in passage", lambda v: fmt_percent(v, 0)),
    "shelter_factor": ("Shelter factor [-]", lambda v: fmt_fixed(v, 3)),
    "speed_sensitivity": ("Energy per speed change [-]", lambda v: fmt_fixed(v, 2)),
    "skew_speed_factor": ("Inflow-skew factor [-]", lambda v: fmt_fixed(v, 3)),
    "governing_limit": ("Passage limited by", lambda v: v or DASH),
    "spot_measured_speedup": ("Spot speed-up, measured", lambda v: fmt_fixed(v, 3)),
    "spot_speedup_ci_low": ("Spot speed-up, low", lambda v: fmt_fixed(v, 3)),
    "spot_speedup_ci_high": ("Spot speed-up, high", lambda v: fmt_fixed(v, 3)),
    "spot_model_speedup": ("Model speed-up at spot", lambda v: fmt_fixed(v, 3)),
    "excluded": ("Excluded", fmt_value),
    "status": ("Status", str),
    "flags": ("Notes and exclusions", lambda v: "; ".join(v) if v else DASH),
}

#: Words that mark a results column as money.
_COST_WORDS = ("cost", "lcoe", "payback", "npv", "saving", "revenue", "co2", "emission",
               "income", "value")


def format_cell(column: str, value, raw=None) -> str:
    """The summary's text for one cell of the results table (the same in HTML and PDF).

    ``value`` is the rank JSON's value (non-finite numbers are null there); ``raw`` the
    results table's own value, used to say "never" for a payback that never comes (+inf).
    """
    if value is None and column == "payback_years" and isinstance(raw, (float, np.floating)) \
            and np.isposinf(raw):
        return "never"
    if column in COLUMN_FORMATS:
        if value is None:
            return DASH
        return COLUMN_FORMATS[column][1](value)
    return fmt_value(value)


def column_header(column: str) -> str:
    """The summary's header for a results column."""
    return COLUMN_FORMATS.get(column, (column,))[0]


def _aligned(column: str, values) -> str:
    numeric = all(_finite(v) or v is None for v in values) and column not in ("position_id",
                                                                               "turbine_id")
    return "r" if numeric else "l"


def _records_table(key, records, columns, caption="", raw=None) -> Table:
    raw = raw if raw is not None else [{}] * len(records)
    rows = tuple(tuple(format_cell(c, r.get(c), w.get(c)) for c in columns)
                 for r, w in zip(records, raw))
    align = tuple(_aligned(c, [r.get(c) for r in records]) for c in columns)
    return Table(key=key, columns=tuple(column_header(c) for c in columns), rows=rows,
                 align=align, caption=caption)


# ---------------------------------------------------------------- words

#: objective -> (question wording, label of the ranked value)
OBJECTIVE_WORDS = {
    "net_aep": ("gives the most net energy in a typical year (P50)", "net AEP"),
    "p90_aep": ("gives the most energy in a poor year (P90, exceeded nine years in ten)",
                "P90 AEP"),
    "lcoe": ("gives the lowest cost per kWh over the turbine's life", "cost of energy"),
    "payback": ("pays back its cost soonest", "simple payback"),
}

#: The cautions, in full. Shown in a box on the first page and again as their own section.
CAUTIONS = (
    "Working at height: roof and mast work is dangerous. Only trained people with fall "
    "protection, a safe access plan and a second person present should go on a roof or raise "
    "a mast.",
    "Roof structure: a turbine puts thrust, vibration and fatigue loads into the roof. A "
    "structural engineer must check the building, its fixings and the mast before anything "
    "is mounted; this summary does not check structures.",
    "Mast loads: masts, guys and foundations must be designed for the extreme wind of the "
    "site and the turbine's thrust by a qualified engineer to local codes.",
    "Electrical connection: connection to the building's wiring or the grid must be designed, "
    "installed and certified by a licensed installer, with the network operator's consent "
    "where required.",
    "Noise and flicker: a turbine can disturb neighbours. Check noise against local limits at "
    "the nearest windows and gardens, and talk to neighbours before installing.",
    "Planning permission: many places need planning or building consent for a turbine. Check "
    "with the local authority before buying.",
    "Local codes come first: where this summary and a local code, a structural engineer or a "
    "licensed installer disagree, follow them.",
    "Yield estimates: building-mounted turbines in field trials produced far less than "
    "promised. The figures here are estimates from models with the uncertainties stated; "
    "measure on site before investing where you can.",
)

CAUTIONS_SHORT = (
    "Roof and mast work, structure, mast loads and electrical connection need a structural "
    "engineer and licensed installers; check noise for neighbours and planning permission; "
    "local codes come first (section 10 lists every caution).",
)

#: Field-trial experience of building-mounted turbines (REFERENCES: verified).
FIELD_TRIALS = ("Field trials of building-mounted turbines found capacity factors mostly below "
                "5 % (Warwick Wind Trials, 2009: mean 0.85 %, 4.15 % excluding downtime; "
                "Energy Saving Trust, 2009: best urban site below 3 %).")
#: Capacity factor above which a building-mounted estimate deserves a second look [-]
#: (common practice, from the field-trial range above).
CF_ALARM = 0.10

#: Chain steps listed under inputs and methods: (title, module). Modules that are not part
#: of this installation are left out of the list.
METHOD_STEPS = (
    ("Air density", "air"),
    ("Climate from measurements", "climate"),
    ("Quality control of records", "qc"),
    ("Long-term correction", "mcp"),
    ("Transfer to the site", "transfer"),
    ("Vertical profile", "profiles"),
    ("Wind speed distribution", "weibull"),
    ("Buildings and roof zones", "roofzones"),
    ("Roof flow", "roofflow"),
    ("Shelter by upwind buildings", "shelter"),
    ("Passages between buildings", "gaps"),
    ("Spot readings", "spot"),
    ("Effective climate at each position", "flow"),
    ("Turbine power curves", "turbines"),
    ("Energy yield", "energy"),
    ("Uncertainty (P50/P90)", "uncertainty"),
    ("Loads", "loads"),
    ("Noise", "noise"),
    ("Economics", "economics"),
    ("Ranking", "ranking"),
)


def _docstring_parts(module) -> tuple[str, str]:
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
            mod = importlib.import_module(f"engine.{name}")
        except ImportError:
            continue
        first, refs = _docstring_parts(mod)
        rows.append((title, first or DASH, refs or "Project method; see the module's notes."))
    return Table(key="methods", columns=("Step", "Method", "Published source"), rows=tuple(rows),
                 align=("l", "l", "l"),
                 caption="Each step is one module of the engine; its documentation gives the "
                         "equations.")


def _flatten(obj, prefix=""):
    """(path, value) pairs of a site-file dict, lists of numbers kept whole."""
    out = []
    if isinstance(obj, dict):
        for k, v in obj.items():
            out.extend(_flatten(v, f"{prefix}.{k}" if prefix else k))
    elif isinstance(obj, list) and obj and all(isinstance(x, dict) for x in obj):
        for i, v in enumerate(obj):
            out.extend(_flatten(v, f"{prefix}[{i}]"))
    else:
        out.append((prefix, obj))
    return out


def _param_text(v) -> str:
    if v is None:
        return "null"
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, list):
        return "[" + ", ".join(_param_text(x) for x in v) + "]"
    if isinstance(v, float):
        return repr(v)
    return str(v)


def _slug(text: str) -> str:
    s = re.sub(r"[^a-z0-9]+", "-", unicodedata.normalize("NFKD", text).encode(
        "ascii", "ignore").decode("ascii").lower()).strip("-")
    return (s or "site")[:60]


def _timestamp(generated_at) -> str:
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


def _parse_timestamp(text: str) -> _dt.datetime:
    return _dt.datetime.strptime(text, "%Y-%m-%d %H:%M:%S UTC").replace(tzinfo=_dt.timezone.utc)


def _transfer_words(t) -> str:
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
    if getattr(t, "adjust_shape_with_height", False):
        words += ", Weibull shape adjusted with height"
    return words


def _reproduce_command(stem, stamp, assessor, file_assessor, notes) -> str:
    """The command line that rebuilds this summary from its attached site file."""
    parts = ["python", "-m", "engine", "report", f"{stem}.site.json", "--out", "summary.html",
             "--generated-at", stamp.replace(" UTC", "Z").replace(" ", "T")]
    if assessor and assessor != (file_assessor or "").strip():
        parts += ["--assessor", assessor]
    if notes.strip():
        parts += ["--notes", notes]
    return shlex.join(parts)


def _library_versions() -> str:
    parts = []
    for name, dist in (("numpy", "numpy"), ("scipy", "scipy"), ("pandas", "pandas"),
                       ("vl-convert", "vl_convert"), ("fpdf2", "fpdf")):
        try:
            mod = importlib.import_module(dist)
            parts.append(f"{name} {getattr(mod, '__version__', '?')}")
        except ImportError:
            continue
    return ", ".join(parts)


# ---------------------------------------------------------------- data exports

def ranking_csv(evaluation) -> bytes:
    """The ranked results table as CSV (formula-like text neutralised)."""
    return exports.safe_csv(evaluation.table).encode("utf-8")


def rank_json(evaluation) -> bytes:
    """The ``rank`` JSON document, the same bytes as ``python -m engine rank --format json``."""
    return (json.dumps(rank_document(evaluation), indent=2, ensure_ascii=False) + "\n").encode(
        "utf-8")


def site_file_bytes(evaluation) -> bytes:
    """The site file in canonical form (its SHA-256 is the one the summary records)."""
    return sitefile.dumps(evaluation.assessment).encode("utf-8")


def effective_climate_csv(evaluation) -> bytes:
    """Per-sector effective climate of every position as CSV (one row per position x sector)."""
    return exports.safe_csv(exports.effective_climate_table(evaluation.climate)).encode("utf-8")


def export_files(evaluation) -> dict:
    """File name -> (MIME type, bytes, description) of every data export of a site."""
    stem = _slug(evaluation.assessment.site.name)
    return {
        f"{stem}.site.json": ("application/json", site_file_bytes(evaluation),
                              "the site file (re-run it to reproduce this summary)"),
        f"{stem}.rank.json": ("application/json", rank_json(evaluation),
                              "ranked positions as JSON (the rank command's document)"),
        f"{stem}.ranking.csv": ("text/csv", ranking_csv(evaluation),
                                "ranked positions as CSV"),
        f"{stem}.effective-climate.csv": ("text/csv", effective_climate_csv(evaluation),
                                          "per-sector effective climate of every position"),
    }


# ---------------------------------------------------------------- building the summary

def _recommendation(evaluation, records) -> tuple[dict | None, list]:
    a = evaluation.assessment
    from .ranking import exclusion_reasons
    # The ranking's own constraint texts per row (the flags also carry advice).
    reasons = exclusion_reasons(evaluation.table, a.ranking)
    eligible = [r for r in records if not r.get("excluded")]
    objective = a.ranking.objective
    from .ranking import OBJECTIVE_COLUMNS
    col, larger = OBJECTIVE_COLUMNS[objective]
    if not any(col in r for r in records):
        col, larger = "aep_kwh", True
    label = OBJECTIVE_WORDS[objective][1] if col == OBJECTIVE_COLUMNS[objective][0] else "net AEP"
    lines = []
    if not eligible:
        lines.append(Paragraph(
            "No position is recommended: every position and turbine combination fails at least "
            "one constraint (see the notes in the ranking). Relax a constraint only with good "
            "reason, or look for other positions.", "caution"))
        return None, lines
    best = eligible[0]
    val = format_cell(col, best.get(col))
    lines.append(Paragraph(
        f"Recommended: {best['turbine_id']} at {best['position_id']} (rank {best['rank']}), "
        f"with {format_cell('aep_kwh', best['aep_kwh'])} kWh of net energy a year"
        + (f" (P90 {format_cell('p90_aep_kwh', best['p90_aep_kwh'])} kWh)"
           if _finite(best.get("p90_aep_kwh")) else "")
        + f" and a capacity factor of {format_cell('capacity_factor', best['capacity_factor'])}."))
    why = [f"It ranks first of {len(eligible)} eligible combinations by {label} ({val})."
           if len(eligible) > 1 else
           f"It is the only eligible combination ({label} {val})."]
    if len(eligible) > 1:
        second = eligible[1]
        a1, a2 = best.get(col), second.get(col)
        if _finite(a1) and _finite(a2) and float(a2) != 0:
            diff = (float(a1) - float(a2)) / abs(float(a2))
            word = "more" if diff >= 0 else "less"
            why.append(f"The next best, {second['turbine_id']} at {second['position_id']}, has "
                       f"{label} {format_cell(col, a2)}; the recommended one has "
                       f"{abs(diff):.1%} {word}.")
    why.append(f"Its hub stands {format_cell('hub_height_m', best['hub_height_m'])} m above "
               f"ground, where the mean wind speed is "
               f"{format_cell('mean_speed_ms', best['mean_speed_ms'])} m/s"
               + (f" ({format_cell('speedup', best['speedup'])} times the undisturbed flow)"
                  if _finite(best.get("speedup")) else "") + ".")
    excluded = [r for r in records if r.get("excluded")]
    if excluded:
        v_best = best.get(col)
        why_out = {r["rank"]: reasons[i] for i, r in enumerate(records)}
        better = [r for r in excluded if _finite(r.get(col)) and _finite(v_best)
                  and ((float(r[col]) > float(v_best)) if larger else
                       (float(r[col]) < float(v_best)))]
        text = f"{len(excluded)} combination(s) were excluded (their reasons are in the notes "
        text += "after the ranking)."
        if better:
            shown = better[:2]
            text += (f" {len(better)} of them would score better by {label}; the best of "
                     "those: " + ". ".join(
                         f"{r['turbine_id']} at {r['position_id']} ({format_cell(col, r[col])})"
                         f" is out because {'; '.join(why_out[r['rank']] or r.get('flags') or [])}"
                         for r in shown) + ".")
        why.append(text)
    if best.get("flags"):
        why.append("Notes on this position: " + "; ".join(best["flags"]) + ".")
    lines.append(Bullets(tuple(why)))
    cf = best.get("capacity_factor")
    if _finite(cf) and float(cf) > CF_ALARM and best.get("kind") != "mast":
        lines.append(Paragraph(
            f"Check before relying on it: a capacity factor of {fmt_percent(cf)} is high for a "
            f"building-mounted turbine. {FIELD_TRIALS} Measure on site to confirm.", "caution"))
    else:
        lines.append(Paragraph(FIELD_TRIALS, "note"))
    return best, lines


def build_summary(evaluation, assessor: str = "", notes: str = "", generated_at=None,
                  with_charts: bool = True) -> Summary:
    """The siting summary's content for an evaluated site.

    Parameters
    ----------
    evaluation : :class:`engine.pipeline.Evaluation`
    assessor : name of the person responsible; the site file's ``site.assessor`` when empty
    notes : the assessor's notes for this summary (the site file's notes are shown too)
    generated_at : time stamp (datetime or ISO 8601 text; UTC when naive); the current time,
        or ``SOURCE_DATE_EPOCH`` when set, if None. The only value that may differ between two
        summaries of the same site file.
    with_charts : include the charts (drawing them takes about a second)

    Returns
    -------
    Summary
        Sections in the order of :data:`SECTION_KEYS`, every number formatted.
    """
    a = evaluation.assessment
    site = a.site
    doc = rank_document(evaluation)
    records = [dict(r) for r in doc["positions"]]
    raw = evaluation.table.to_dict("records")
    stamp = _timestamp(generated_at)
    sha = doc["site"]["site_file_sha256"]
    assessor = (assessor or site.assessor or "").strip()
    sections = []

    # 1. The question.
    rs = a.ranking
    limits = [f"masts up to {rs.max_mast_height_m:g} m"]
    if rs.require_clear_of_turbulence_zone:
        limits.append("rotors clear of the roofs' high-turbulence zones")
    if rs.apply_noise_limits and a.receptors:
        limits.append(f"noise within the limits at {len(a.receptors)} receptor(s)")
    if rs.max_thrust_n > 0:
        limits.append(f"extreme thrust up to {rs.max_thrust_n:g} N")
    q = [Paragraph(
        f"Which of the {len(a.positions)} candidate positions on {site.name}, with which of the "
        f"{len(a.turbines)} turbines, {OBJECTIVE_WORDS[rs.objective][0]}, with "
        f"{', '.join(limits)}; and what can it realistically be expected to produce?")]
    facts = [("Site", site.name), ("Summary made", stamp),
             ("Assessor", assessor or "(not given)"),
             ("Air density", f"{doc['site']['air_density_kgm3']:.4f} kg/m³"),
             ("Site file SHA-256", sha)]
    q.append(Table("facts", ("Item", "Value"), tuple(facts), ("l", "l")))
    if site.notes.strip():
        q.append(Paragraph("Site notes: " + site.notes.strip(), "note"))
    if notes.strip():
        q.append(Paragraph("Assessor's notes: " + notes.strip(), "note"))
    sections.append(Section("question", "The question", tuple(q)))

    # 2. Recommendation.
    best, rec_blocks = _recommendation(evaluation, records)
    sections.append(Section("recommendation", "Recommended position and why", tuple(rec_blocks)))

    # 3. Ranking.
    centre = "p50_aep_kwh" if any("p50_aep_kwh" in r for r in records) else "aep_kwh"
    cols = ["rank", "position_id", "turbine_id", "hub_height_m", "mean_speed_ms", centre]
    if any("p90_aep_kwh" in r for r in records):
        cols.append("p90_aep_kwh")
    cols += ["capacity_factor", "status"]
    for r in records:
        r["status"] = "excluded" if r.get("excluded") else "eligible"
    rank_caption = ("Every position and turbine combination, best first; excluded ones are "
                    "ranked last. Their reasons, and advice for the others, follow.")
    if centre == "aep_kwh":
        rank_caption += (" Net AEP is the central (P50) estimate after losses; no P90 was "
                         "computed for this site.")
    noted = [r for r in records if r.get("flags")]
    notes_table = Table("notes", ("Rank", "Position", "Turbine", "Notes and exclusions"),
                        tuple((str(r["rank"]), r["position_id"], r["turbine_id"],
                               "; ".join(r["flags"])) for r in noted), ("r", "l", "l", "l"),
                        "Reasons for exclusion and advice, per combination.")
    sections.append(Section("ranking", "Ranked positions", (
        _records_table("ranking", records, cols, rank_caption),)
        + ((notes_table,) if noted else ())))

    # 4. Costs.
    cost_cols = [c for c in ("installed_cost", "lcoe_per_kwh", "payback_years", "npv",
                             "co2_avoided_kg_per_year") if any(c in r for r in records)]
    cost_cols += sorted({c for r in records for c in r if c not in cost_cols
                         and c not in COLUMN_FORMATS and any(w in c for w in _COST_WORDS)})
    e = a.economics
    econ = Paragraph(
        f"Money in {e.currency}: tariff {e.tariff_per_kwh:g} per kWh, operation and maintenance "
        f"{e.om_cost_per_year:g} a year, discount rate {e.discount_rate:.1%}, lifetime "
        f"{e.lifetime_years:g} years, grid emission factor {e.emission_factor_kg_per_kwh:g} "
        "kg CO2 per kWh.")
    turb_costs = Table("turbine-costs", ("Turbine", "Name", "Rated power [kW]",
                                          f"Installed cost [{e.currency}]"),
                       tuple((t.id, t.name, fmt_fixed(t.rated_power_w / 1000.0, 2),
                              fmt_fixed(t.installed_cost, 0)) for t in a.turbines),
                       ("l", "l", "r", "r"))
    if cost_cols:
        cost_blocks = (econ, _records_table(
            "costs", records, ["rank", "position_id", "turbine_id"] + cost_cols,
            f"Cost metrics per combination ({e.currency}). A payback of \"never\" means the "
            "yearly income does not cover operation and maintenance.", raw=raw), turb_costs)
    else:
        cost_blocks = (econ, turb_costs, Paragraph(
            "No cost metrics (cost of energy, payback) were computed for this site.", "note"))
    sections.append(Section("costs", "Cost metrics", cost_blocks))

    # 5. Charts.
    if with_charts:
        from . import report_charts
        figs = report_charts.summary_figures(
            evaluation, best["position_id"] if best else None,
            best["turbine_id"] if best else None)
        chart_blocks = tuple(FigureBlock(f) for f in figs)
    else:
        chart_blocks = (Paragraph("Charts were left out of this summary.", "note"),)
    sections.append(Section("charts", "Charts", chart_blocks))

    # 6. Positions and buildings (inputs a reader checks against the site).
    pos_rows = tuple((p.id, p.kind, p.building_id or (" / ".join(p.gap_buildings) or DASH),
                      fmt_fixed(p.x_m, 1), fmt_fixed(p.y_m, 1), fmt_fixed(p.mast_height_m, 1),
                      fmt_fixed(a.hub_height_m(p), 1), p.note or DASH) for p in a.positions)
    b_rows = tuple((b.id, fmt_fixed(b.x_m, 1), fmt_fixed(b.y_m, 1), fmt_fixed(b.length_m, 1),
                    fmt_fixed(b.width_m, 1), fmt_fixed(b.height_m, 1),
                    fmt_fixed(b.orientation_deg, 0),
                    b.roof_type + (f" {b.roof_pitch_deg:g}°" if b.roof_type == "pitched" else ""),
                    fmt_fixed(b.parapet_height_m, 1)) for b in a.buildings)
    t_rows = tuple((t.id, t.name, t.axis, fmt_fixed(t.rated_power_w / 1000.0, 2),
                    fmt_fixed(t.rotor_diameter_m, 2), fmt_fixed(t.area_m2, 2),
                    f"{t.cut_in_ms:g} / {t.rated_speed_ms:g} / {t.cut_out_ms:g}",
                    t.iec_class, fmt_fixed(t.sound_power_db, 1)) for t in a.turbines)
    sections.append(Section("positions", "Positions, buildings and turbines", (
        Table("positions", ("Position", "Kind", "On / between", "East [m]", "North [m]",
                            "Mast [m]", "Hub [m]", "Note"), pos_rows,
              ("l", "l", "l", "r", "r", "r", "r", "l")),
        Table("buildings", ("Building", "East [m]", "North [m]", "Length [m]", "Width [m]",
                            "Height [m]", "Bearing [°]", "Roof", "Parapet [m]"), b_rows,
              ("l", "r", "r", "r", "r", "r", "r", "l", "r")),
        Table("turbines", ("Turbine", "Name", "Axis", "Rated [kW]", "Rotor [m]",
                           "Swept area [m²]", "Cut-in / rated / cut-out [m/s]", "IEC class",
                           "Sound power [dB(A)]"), t_rows,
              ("l", "l", "l", "r", "r", "r", "r", "l", "r")))))

    # 7. Further results: every other column, per position where the value does not depend
    # on the turbine (building diagnostics), else per combination; in chunks that fit a page.
    shown = set(cols) | set(cost_cols) | {"position_id", "turbine_id", "rank", "flags",
                                          "status", "excluded"}
    extra = [c for c in (records[0].keys() if records else []) if c not in shown]
    first_rows = {}
    for r, w in zip(records, raw):
        first_rows.setdefault(r["position_id"], (r, w))
    per_position = [c for c in extra if all(
        json.dumps(r.get(c), sort_keys=True) == json.dumps(first_rows[r["position_id"]][0].get(c),
                                                           sort_keys=True) for r in records)]
    per_row = [c for c in extra if c not in per_position]
    order = [p.id for p in a.positions if p.id in first_rows]
    pos_records = [first_rows[i][0] for i in order]
    pos_raw = [first_rows[i][1] for i in order]
    further = []
    for i in range(0, len(per_position), 7):
        further.append(_records_table(
            f"further-position-{i // 7 + 1}", pos_records, ["position_id"] + per_position[i:i + 7],
            "Per position (the same for every turbine)." if i == 0 else "", raw=pos_raw))
    for i in range(0, len(per_row), 6):
        further.append(_records_table(
            f"further-row-{i // 6 + 1}", records,
            ["rank", "position_id", "turbine_id"] + per_row[i:i + 6],
            "Per position and turbine." if i == 0 else "", raw=raw))
    if not further:
        further.append(Paragraph("No further results.", "note"))
    sections.append(Section("further", "Further results", tuple(further)))

    # 8. Data quality and uncertainty.
    c = a.climate
    u = a.uncertainty
    qual = [Table("climate", ("Item", "Value"), (
        ("Climate source", c.source),
        ("Description", c.label or DASH),
        ("Reference height", f"{c.height_m:g} m"),
        ("Reference roughness length", f"{c.roughness_m:g} m"),
        ("Sectors", str(c.n_sectors)),
        ("Measured record", (f"{c.record_file} (SHA-256 {c.record_sha256})"
                             if c.record_file else "none: the climate is a table")),
        ("Monthly mean speeds", "given" if c.monthly_mean_ms else "not given"),
        ("Spot readings", str(len(a.spot_readings))),
    ), ("l", "l"))]
    unc_rows = (("Wind data (measurement)", fmt_percent(u.speed_data), "of mean speed"),
                ("Long-term representativeness", fmt_percent(u.speed_long_term), "of mean speed"),
                ("Transfer to the site", fmt_percent(u.speed_transfer), "of mean speed"),
                ("Building flow model", fmt_percent(u.speed_building_model), "of mean speed"),
                ("Power curve", fmt_percent(u.energy_power_curve), "of energy"))
    qual.append(Table("uncertainty", ("Source of uncertainty", "One sigma", "As a share"),
                      unc_rows, ("l", "r", "l")))
    if best and _finite(best.get("p90_aep_kwh")) and _finite(best.get(centre)) \
            and float(best[centre]) > 0:
        ratio = float(best["p90_aep_kwh"]) / float(best[centre])
        qual.append(Paragraph(
            f"For the recommended combination P90 is {ratio:.0%} of P50: nine years in ten "
            f"should give at least {format_cell('p90_aep_kwh', best['p90_aep_kwh'])} kWh."))
    elif centre == "aep_kwh":
        qual.append(Paragraph(
            "These uncertainties are inputs; this installation did not compute a P90 from them, "
            "so the ranking shows central estimates only.", "note"))
    high = [r for r in records if not r.get("excluded") and _finite(r.get("capacity_factor"))
            and float(r["capacity_factor"]) > CF_ALARM and r.get("kind") != "mast"]
    if high:
        qual.append(Paragraph(
            f"{len(high)} eligible building-mounted combination(s) have a capacity factor above "
            f"{CF_ALARM:.0%}, above field-trial experience; treat them with caution.", "caution"))
    sections.append(Section("quality", "Data quality and uncertainty", tuple(qual)))

    # 9. Inputs, assumptions and methods.
    lo = a.losses
    assumptions = (
        f"Air density {doc['site']['air_density_kgm3']:.4f} kg/m³ from altitude "
        f"{site.altitude_m:g} m and mean temperature {site.air_temperature_c:g} °C"
        + (f" with measured pressure {site.air_pressure_pa:g} Pa." if site.air_pressure_pa
           else " with standard-atmosphere pressure."),
        f"Reference climate at {c.height_m:g} m over roughness {c.roughness_m:g} m, carried to "
        + ("the site with roughness and displacement derived from its building morphometry"
           if getattr(getattr(a, "transfer", None), "use_morphometry", False) else
           f"the site's roughness {site.terrain_roughness_m:g} m and displacement "
           f"{site.displacement_m:g} m")
        + _transfer_words(getattr(a, "transfer", None)) + ".",
        "Power curves are as published at 1.225 kg/m³; the power coefficient can never exceed "
        f"the Betz limit {BETZ_CP:.3f}.",
        "Energy by the method of bins over 0.5 m/s bins up to 40 m/s and 8760 hours a year.",
        f"Losses multiplied: availability {lo.availability:.1%}, electrical {lo.electrical:.1%}, "
        f"icing {lo.icing:.1%}, cut-out hysteresis {lo.cut_out_hysteresis:.1%}, other "
        f"{lo.other:.1%}.",
        f"Ranking objective: {OBJECTIVE_WORDS[rs.objective][1]}; constraints: "
        f"{', '.join(limits)}.",
    )
    sections.append(Section("inputs", "Inputs, assumptions and methods", (
        Bullets(assumptions), methods_table())))

    # 10. Cautions.
    blank = "_" * 28
    sections.append(Section("cautions", "Cautions", (
        Bullets(CAUTIONS),
        Paragraph("Sign-off: the assessor confirms that the inputs describe the site as "
                  "surveyed and that the client has been given these cautions."),
        Table("sign-off", ("Item", "Value"), (
            ("Assessor", assessor or blank), ("Date", blank), ("Signature", blank)),
              ("l", "l")))))

    # 11. Reproducibility.
    params = tuple((k, _param_text(v)) for k, v in _flatten(sitefile.assessment_to_dict(a)))
    stem = _slug(site.name)
    repro = (
        Table("reproduce", ("Item", "Value"), (
            ("Tool", f"perch {__version__}"),
            ("Libraries", _library_versions()),
            ("Site file SHA-256", sha),
            ("Summary made", stamp),
            ("To reproduce", _reproduce_command(stem, stamp, assessor, site.assessor, notes)),
        ), ("l", "l")),
        Paragraph("The chain has no random parts: the same site file with the same tool and "
                  "libraries gives the same numbers, and the same time stamp the same summary. "
                  "Every parameter follows."),
        Table("parameters", ("Parameter", "Value"), params, ("l", "l")),
    )
    sections.append(Section("reproducibility", "Reproducibility", repro))

    # 12. Data.
    files = export_files(evaluation)
    attachments = tuple(Attachment(n, m, b, d) for n, (m, b, d) in files.items())
    sections.append(Section("data", "Data files", (
        Table("files", ("File", "What", "Size [bytes]"),
              tuple((x.name, x.description, str(len(x.data))) for x in attachments),
              ("l", "l", "r"),
              "Carried inside this summary: links in the HTML, attachments in the PDF."),)))

    return Summary(title=f"Siting summary: {site.name}", site_name=site.name,
                   generated_at=stamp, assessor=assessor, site_sha256=sha, version=__version__,
                   cautions_short=CAUTIONS_SHORT, sections=tuple(sections),
                   attachments=attachments, rank_document=doc)


# ---------------------------------------------------------------- HTML

_CSS = """
:root { --ink:#1d232b; --muted:#5b6470; --rule:#d5d9de; --accent:#1f5f99; --warn:#8a4b08;
        --warnbg:#fff4e0; --notebg:#eef4fa; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", "Segoe UI", Arial, Helvetica, sans-serif; color: var(--ink);
       margin: 0 auto; max-width: 62rem; padding: 1.5rem 1.5rem 3rem; line-height: 1.45;
       font-size: 15px; }
header { border-bottom: 3px solid var(--accent); padding-bottom: .8rem; margin-bottom: 1rem; }
h1 { font-size: 1.6rem; margin: 0 0 .3rem; }
h2 { font-size: 1.2rem; margin: 2rem 0 .6rem; border-bottom: 1px solid var(--rule);
     padding-bottom: .2rem; color: var(--accent); }
.meta { color: var(--muted); margin: 0; }
nav ol { columns: 2; margin: .4rem 0 0; padding-left: 1.4rem; }
nav a, a { color: var(--accent); }
table { border-collapse: collapse; width: 100%; margin: .5rem 0 1rem; font-size: .82rem; }
th, td { border-bottom: 1px solid var(--rule); padding: .25rem .45rem; vertical-align: top;
         text-align: left; }
th { background: #f3f5f7; font-weight: 600; }
td.r, th.r { text-align: right; font-variant-numeric: tabular-nums; }
td.r { white-space: nowrap; }
.wide { overflow-x: auto; }
table.kv td:first-child { width: 21rem; color: var(--muted); }
td { overflow-wrap: anywhere; }
td.n { white-space: nowrap; overflow-wrap: normal; }
caption { caption-side: bottom; text-align: left; color: var(--muted); font-size: .8rem;
          padding-top: .3rem; }
.note { background: var(--notebg); padding: .5rem .8rem; border-radius: 4px; }
.caution { background: var(--warnbg); color: var(--warn); padding: .5rem .8rem;
           border-left: 4px solid var(--warn); border-radius: 2px; }
figure { margin: 1rem 0 1.5rem; break-inside: avoid; }
figure svg { max-width: 100%; height: auto; display: block; margin: 0 auto; }
figcaption { color: var(--muted); font-size: .85rem; }
footer { margin-top: 2rem; color: var(--muted); font-size: .8rem; border-top: 1px solid
         var(--rule); padding-top: .5rem; }
@media print { body { max-width: none; font-size: 11px; } nav { display: none; }
               h2 { break-after: avoid; } tr { break-inside: avoid; } }
"""

#: Nothing may load from anywhere: the page's own policy forbids it, so even a mistake in the
#: markup cannot reach the network.
_CSP = ("default-src 'none'; style-src 'unsafe-inline'; img-src data:; "
        "base-uri 'none'; form-action 'none'")


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _cell_class(value: str, align: str) -> str:
    # Short words (ids, numbers) stay on one line; long text wraps.
    return align + (" n" if len(value) <= 24 and " " not in value else "")


def _html_table(t: Table) -> str:
    kv = t.columns in (("Item", "Value"), ("Parameter", "Value"))
    out = [f'<table id="table-{_e(t.key)}"' + (' class="kv"' if kv else "") + ">"]
    if t.caption:
        out.append(f"<caption>{_e(t.caption)}</caption>")
    out.append("<thead><tr>" + "".join(
        f'<th class="{a}">{_e(c)}</th>' for c, a in zip(t.columns, t.align)) + "</tr></thead>")
    out.append("<tbody>")
    for row in t.rows:
        out.append("<tr>" + "".join(f'<td class="{_cell_class(v, a)}">{_e(v)}</td>'
                                    for v, a in zip(row, t.align)) + "</tr>")
    out.append("</tbody></table>")
    return '<div class="wide">' + "\n".join(out) + "</div>"


def _html_block(b, attachments) -> str:
    if isinstance(b, Paragraph):
        cls = f' class="{b.tone}"' if b.tone else ""
        return f"<p{cls}>{_e(b.text)}</p>"
    if isinstance(b, Bullets):
        return "<ul>" + "".join(f"<li>{_e(i)}</li>" for i in b.items) + "</ul>"
    if isinstance(b, Table):
        if b.key == "files":
            return _html_files(b, attachments)
        return _html_table(b)
    if isinstance(b, FigureBlock):
        from .chart_render import ChartError
        from .report_charts import figure_svg
        f = b.figure
        if f.spec is None:
            return (f'<figure id="figure-{_e(f.key)}" class="missing"><h3>{_e(f.title)}</h3>'
                    f'<p class="caution">This chart could not be drawn: {_e(f.problem)}</p>'
                    "</figure>")
        try:
            svg = figure_svg(f)
        except ChartError as err:  # the renderer failed: say so in place of the chart
            return (f'<figure id="figure-{_e(f.key)}" class="missing"><h3>{_e(f.title)}</h3>'
                    f'<p class="caution">This chart could not be drawn: {_e(str(err))}</p>'
                    "</figure>")
        return (f'<figure id="figure-{_e(f.key)}"><h3>{_e(f.title)}</h3>\n{svg}\n'
                f"<figcaption>{_e(f.caption)}</figcaption></figure>")
    raise TypeError(f"unknown block {type(b).__name__}")


def _html_files(t: Table, attachments) -> str:
    rows = []
    for x in attachments:
        uri = f"data:{x.mime};base64," + base64.b64encode(x.data).decode("ascii")
        rows.append(f'<tr><td><a download="{_e(x.name)}" href="{uri}">{_e(x.name)}</a></td>'
                    f'<td>{_e(x.description)}</td><td class="r">{len(x.data)}</td></tr>')
    head = "".join(f'<th class="{a}">{_e(c)}</th>' for c, a in zip(t.columns, t.align))
    return (f'<table id="table-files"><caption>{_e(t.caption)}</caption><thead><tr>{head}'
            f"</tr></thead><tbody>{''.join(rows)}</tbody></table>")


def render_html(summary: Summary) -> str:
    """The summary as one self-contained HTML page (inline CSS and SVG, no external URL)."""
    parts = ["<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
             f'<meta http-equiv="Content-Security-Policy" content="{_CSP}">',
             '<meta name="viewport" content="width=device-width, initial-scale=1">',
             f'<meta name="generator" content="perch {_e(summary.version)}">',
             f"<title>{_e(summary.title)}</title>", f"<style>{_CSS}</style>", "</head>",
             "<body>", "<header>", f"<h1>{_e(summary.title)}</h1>",
             f'<p class="meta">Made {_e(summary.generated_at)} · assessor: '
             f'{_e(summary.assessor or "(not given)")} · perch {_e(summary.version)} · '
             f"site file SHA-256 {_e(summary.site_sha256[:16])}…</p>", "</header>"]
    parts += [f'<p class="caution"><strong>Safety:</strong> {_e(c)}</p>'
              for c in summary.cautions_short]
    parts.append('<nav aria-label="Contents"><strong>Contents</strong><ol>')
    parts += [f'<li><a href="#{_e(s.key)}">{_e(s.title)}</a></li>' for s in summary.sections]
    parts.append("</ol></nav>")
    for n, s in enumerate(summary.sections, 1):
        parts.append(f'<section id="{_e(s.key)}"><h2>{n}. {_e(s.title)}</h2>')
        parts += [_html_block(b, summary.attachments) for b in s.blocks]
        parts.append("</section>")
    parts.append(f"<footer>Perch {_e(summary.version)} · {_e(summary.site_name)} · made "
                 f"{_e(summary.generated_at)} · site file SHA-256 {_e(summary.site_sha256)}"
                 "</footer>")
    parts += ["</body>", "</html>", ""]
    return "\n".join(parts)


# ---------------------------------------------------------------- PDF

#: Unicode TrueType fonts tried in order (regular, bold). ``PERCH_REPORT_FONT`` may name a
#: regular TTF to try first (its bold is looked for beside it as ``<name>-Bold.ttf``).
FONT_CANDIDATES = (
    ("/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf",
     "/usr/share/fonts/truetype/dejavu/DejaVuSans-Bold.ttf"),
)

#: Characters outside Latin-1 that the summary uses, with their plain-text stand-ins for the
#: PDF core fonts.
_TRANSLIT = {"–": "-", "—": "-", "‘": "'", "’": "'", "“": '"', "”": '"', "…": "...",
             "·": "\u00b7", "≤": "<=", "≥": ">=", "≈": "~", "→": "->", "←": "<-", "−": "-",
             "α": "alpha", "β": "beta", "γ": "gamma", "δ": "delta", "κ": "kappa",
             "λ": "lambda", "ρ": "rho", "σ": "sigma", "θ": "theta", "Γ": "Gamma", "Σ": "Sum",
             "Δ": "Delta", "√": "sqrt", "×": "x", "₀": "0", "₂": "2", "\u2009": " ",
             "\u202f": " ", "•": "-", "€": "EUR", "£": "GBP"}


def find_font():
    """(regular, bold) paths of a Unicode TrueType font for the PDF, or None.

    The bold path is the regular one when no bold face is found.
    """
    cands = []
    env = os.environ.get("PERCH_REPORT_FONT", "").strip()
    if env:
        p = Path(env)
        cands.append((str(p), str(p.with_name(p.stem + "-Bold" + p.suffix))))
    cands.extend(FONT_CANDIDATES)
    for reg, bold in cands:
        if Path(reg).is_file():
            return reg, (bold if Path(bold).is_file() else reg)
    return None


def to_latin1(text: str) -> str:
    """Text the PDF core fonts can draw: known symbols spelt out, accents kept, rest '?'."""
    out = []
    for ch in str(text):
        if ch in _TRANSLIT:
            out.append(_TRANSLIT[ch])
            continue
        try:
            ch.encode("latin-1")
            out.append(ch)
        except UnicodeEncodeError:
            base = unicodedata.normalize("NFKD", ch).encode("latin-1", "ignore").decode("latin-1")
            out.append(base if base else "?")
    return "".join(out)


#: Size of a CSS pixel [mm] (96 per inch), so a chart prints at its screen size.
MM_PER_CSS_PX = 25.4 / 96.0


class _Pdf:
    """fpdf2 document with the summary's header, footer and text helpers."""

    def __init__(self, summary: Summary, font):
        from fpdf import FPDF

        s = summary
        unicode_font = font is not None

        class Doc(FPDF):
            def header(doc):
                doc.set_font(doc.body_family, "", 7.5)
                doc.set_text_color(110, 116, 124)
                doc.cell(0, 4, self.fit(f"Siting summary · {s.site_name}", doc.epw), align="L")
                doc.ln(6)

            def footer(doc):
                doc.set_y(-12)
                doc.set_font(doc.body_family, "", 7.5)
                doc.set_text_color(110, 116, 124)
                doc.cell(0, 4, self.t(f"perch {s.version} · made {s.generated_at} · site file "
                                      f"{s.site_sha256[:16]}"), align="L")
                doc.cell(0, 4, f"page {doc.page_no()}/{{nb}}", align="R")

        pdf = Doc(orientation="portrait", unit="mm", format="A4")
        if unicode_font:
            pdf.add_font("Body", "", font[0])
            pdf.add_font("Body", "B", font[1])
            pdf.body_family = "Body"
        else:
            pdf.body_family = "Helvetica"
        self.unicode = unicode_font
        pdf.set_creation_date(_parse_timestamp(s.generated_at))
        pdf.set_title(self.t(s.title))
        pdf.set_author(self.t(s.assessor or "perch"))
        pdf.set_creator(f"perch {s.version}")
        pdf.set_subject(self.t(f"Site file SHA-256 {s.site_sha256}"))
        pdf.set_margins(15, 14, 15)
        pdf.set_auto_page_break(True, margin=16)
        pdf.alias_nb_pages()
        self.pdf = pdf
        self.summary = s
        self._widths = {}

    def t(self, text) -> str:
        """Text as the chosen font can draw it."""
        text = str(text)
        return text if self.unicode else to_latin1(text)

    def fit(self, text, width_mm) -> str:
        """Text for one line of ``width_mm`` in the current font, cut with an ellipsis."""
        text = self.t(text)
        if self.pdf.get_string_width(text) <= width_mm:
            return text
        dots = "…" if self.unicode else "..."
        while text and self.pdf.get_string_width(text + dots) > width_mm:
            text = text[:-1]
        return text + dots

    def font(self, size, bold=False, colour=(29, 35, 43)):
        self.pdf.set_font(self.pdf.body_family, "B" if bold else "", size)
        self.pdf.set_text_color(*colour)

    def para(self, text, tone=""):
        pdf = self.pdf
        if tone == "caution":
            self.font(9, colour=(138, 75, 8))
            pdf.set_fill_color(255, 244, 224)
        elif tone == "note":
            self.font(9, colour=(40, 60, 90))
            pdf.set_fill_color(238, 244, 250)
        else:
            self.font(9.5)
        pdf.multi_cell(0, 4.8, self.t(text), fill=bool(tone), padding=(1.5, 2) if tone else 0,
                       align="L", new_x="LMARGIN", new_y="NEXT")
        pdf.set_fill_color(255, 255, 255)
        pdf.ln(1.5)

    def bullets(self, items):
        self.font(9.5)
        for it in items:
            x = self.pdf.l_margin
            self.pdf.set_x(x)
            self.pdf.cell(4, 4.8, "-" if not self.unicode else "•")
            self.pdf.multi_cell(0, 4.8, self.t(it), align="L", new_x="LMARGIN", new_y="NEXT")
            self.pdf.ln(0.6)
        self.pdf.ln(1.2)

    def _width(self, text: str) -> float:
        # Widths of words in the current font, cached: a word's width is the sum of its glyphs.
        key = (self.pdf.font_family, self.pdf.font_style, self.pdf.font_size_pt, text)
        w = self._widths.get(key)
        if w is None:
            w = self._widths[key] = self.pdf.get_string_width(text)
        return w

    def _wrap(self, text: str, avail: float) -> list:
        """Greedy word wrap of ``text`` into lines no wider than ``avail`` [mm]."""
        out = []
        space = self._width(" ")
        for para in text.split("\n"):
            line, used = "", 0.0
            for word in para.split(" "):
                ww = self._width(word)
                if line and used + space + ww <= avail:
                    line, used = f"{line} {word}", used + space + ww
                    continue
                if line:
                    out.append(line)
                while ww > avail and len(word) > 1:
                    # A word wider than the column is cut where it stops fitting.
                    k = 1
                    while k < len(word) and self._width(word[:k + 1]) <= avail:
                        k += 1
                    out.append(word[:k])
                    word = word[k:]
                    ww = self._width(word)
                line, used = word, ww
            out.append(line)
        return out

    def _row(self, cells, widths, align, size, bold=False) -> bool:
        """Draw one table row; return True (drawing nothing) when it must go on a new page.

        Lines are broken by :meth:`_wrap` (fpdf2's own table breaks every cell twice, char by
        char, which made long tables slow).
        """
        pdf = self.pdf
        pad, lh = 0.8, size * 0.5
        self.font(size, bold=bold)
        lines = []
        for text, w in zip(cells, widths):
            avail = w - 2 * pad
            lines.append(self._wrap(text, avail))
        room = pdf.page_break_trigger - pdf.t_margin - 12
        most = max(1, int((room - 2 * pad) // lh))
        lines = [ls if len(ls) <= most else ls[:most - 1] + [ls[most - 1] + " …"]
                 for ls in lines]
        h = max(len(ls) for ls in lines) * lh + 2 * pad
        y0 = pdf.get_y()
        if y0 + h > pdf.page_break_trigger and not bold:
            pdf.add_page()
            return True
        auto = pdf.auto_page_break
        pdf.set_auto_page_break(False)
        x0 = pdf.l_margin
        total = sum(widths)
        if bold:
            pdf.set_fill_color(243, 245, 247)
            pdf.rect(x0, y0, total, h, style="F")
        x = x0
        for ls, w, a in zip(lines, widths, align):
            for k, line in enumerate(ls):
                pdf.set_xy(x + pad, y0 + pad + k * lh)
                pdf.cell(w - 2 * pad, lh, line, align=a)
            x += w
        pdf.set_draw_color(213, 217, 222)
        pdf.set_line_width(0.2)
        pdf.line(x0, y0 + h, x0 + total, y0 + h)
        pdf.set_auto_page_break(auto, margin=16)
        pdf.set_xy(x0, y0 + h)
        return False

    def table(self, t: Table):
        pdf = self.pdf
        n = len(t.columns)
        kv = t.columns in (("Item", "Value"), ("Parameter", "Value"))
        size = 7.2 if n >= 7 else 8
        self.font(size)
        width = pdf.epw
        if kv:
            widths = (0.3 * width, 0.7 * width)
        else:
            # Share the width by the longest text in each column (bounded), so numbers keep
            # one line and long notes wrap.
            lengths = [max([max(len(w) for w in c.split()) + 1.0, len(c) * 0.55]
                           + [len(r[i]) for r in t.rows]) for i, c in enumerate(t.columns)]
            lengths = [min(max(x, 4.0), 60.0) for x in lengths]
            total = sum(lengths)
            widths = tuple(width * x / total for x in lengths)
        align = tuple("R" if a == "r" else "L" for a in t.align)
        header = tuple(self.t(c) for c in t.columns)
        self._row(header, widths, align, size, bold=True)
        for row in t.rows:
            if self._row(tuple(self.t(v) for v in row), widths, align, size):
                self._row(header, widths, align, size, bold=True)
                self._row(tuple(self.t(v) for v in row), widths, align, size)
        if t.caption:
            pdf.ln(0.8)
            self.font(7.5, colour=(91, 100, 112))
            pdf.multi_cell(0, 3.8, self.t(t.caption), align="L", new_x="LMARGIN", new_y="NEXT")
        pdf.ln(2.5)

    def figure(self, f):
        from .chart_render import ChartError
        from .report_charts import PNG_SCALE, figure_png

        pdf = self.pdf
        if f.spec is None:
            self.font(10, bold=True)
            pdf.cell(0, 6, self.t(f.title), new_x="LMARGIN", new_y="NEXT")
            self.para(f"This chart could not be drawn: {f.problem}", "caution")
            return
        try:
            png = figure_png(f)
        except ChartError as err:  # the renderer failed: say so in place of the chart
            self.font(10, bold=True)
            pdf.cell(0, 6, self.t(f.title), new_x="LMARGIN", new_y="NEXT")
            self.para(f"This chart could not be drawn: {err}", "caution")
            return
        # PNG size from the IHDR chunk: width and height, big-endian, at bytes 16..24.
        w_px, h_px = struct.unpack(">II", png[16:24])
        w = min(pdf.epw, w_px / PNG_SCALE * MM_PER_CSS_PX)
        h = w * h_px / w_px
        if h > 200:
            h = 200.0
            w = h * w_px / h_px
        if pdf.get_y() + h + 14 > pdf.page_break_trigger:
            pdf.add_page()
        self.font(10, bold=True)
        pdf.cell(0, 6, self.t(f.title), new_x="LMARGIN", new_y="NEXT")
        pdf.image(io.BytesIO(png), x=pdf.l_margin + (pdf.epw - w) / 2, w=w, h=h)
        self.font(7.5, colour=(91, 100, 112))
        pdf.multi_cell(0, 3.8, self.t(f.caption), align="L", new_x="LMARGIN", new_y="NEXT")
        pdf.ln(3)


def render_pdf(summary: Summary, font="auto") -> bytes:
    """The summary as PDF bytes (A4, charts as PNG at scale 2, data files attached).

    Parameters
    ----------
    summary : from :func:`build_summary`
    font : ``"auto"`` to use :func:`find_font`; a (regular, bold) pair of TTF paths; or None
        for the PDF core fonts with text transliterated by :func:`to_latin1`.
    """
    if font == "auto":
        font = find_font()
    doc = _Pdf(summary, font)
    pdf = doc.pdf
    s = summary
    pdf.add_page()
    doc.font(17, bold=True)
    pdf.multi_cell(0, 8, doc.t(s.title), align="L", new_x="LMARGIN", new_y="NEXT")
    doc.font(9, colour=(91, 100, 112))
    pdf.multi_cell(0, 4.6, doc.t(f"Made {s.generated_at} · assessor: "
                                 f"{s.assessor or '(not given)'} · perch {s.version}"),
                   align="L", new_x="LMARGIN", new_y="NEXT")
    pdf.ln(2)
    for c in s.cautions_short:
        doc.para("Safety: " + c, "caution")
    for n, sec in enumerate(s.sections, 1):
        if sec.key in ("charts", "reproducibility") or pdf.get_y() > pdf.page_break_trigger - 40:
            pdf.add_page()
        doc.font(12.5, bold=True, colour=(31, 95, 153))
        pdf.cell(0, 8, doc.t(f"{n}. {sec.title}"), new_x="LMARGIN", new_y="NEXT")
        pdf.set_draw_color(213, 217, 222)
        pdf.line(pdf.l_margin, pdf.get_y(), pdf.l_margin + pdf.epw, pdf.get_y())
        pdf.ln(2)
        for b in sec.blocks:
            if isinstance(b, Paragraph):
                doc.para(b.text, b.tone)
            elif isinstance(b, Bullets):
                doc.bullets(b.items)
            elif isinstance(b, Table):
                doc.table(b)
            elif isinstance(b, FigureBlock):
                doc.figure(b.figure)
    stamp = _parse_timestamp(s.generated_at)
    for x in s.attachments:
        pdf.embed_file(bytes=x.data, basename=x.name, desc=doc.t(x.description),
                       creation_date=stamp, modification_date=stamp, mime_type=x.mime)
    return bytes(pdf.output())


# ---------------------------------------------------------------- bytes for downloads

def summary_html_bytes(evaluation, assessor: str = "", notes: str = "",
                       generated_at=None) -> bytes:
    """The siting summary as UTF-8 HTML bytes (for a download button or a file)."""
    return render_html(build_summary(evaluation, assessor, notes, generated_at)).encode("utf-8")


def summary_pdf_bytes(evaluation, assessor: str = "", notes: str = "",
                      generated_at=None) -> bytes:
    """The siting summary as PDF bytes (for a download button or a file)."""
    return render_pdf(build_summary(evaluation, assessor, notes, generated_at))
