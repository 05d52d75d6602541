"""Tables of results for people: chosen columns, display units, readable headers."""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.chain import columns, verdict
from engine.core import units

#: Columns shown in the ranked table, in this order, when the chain provides them: what a
#: client asks first (where, which turbine, how much, at what cost, allowed or not) in view.
SHOWN = ("rank", "position_id", "turbine_id", "aep_kwh", "p90_aep_kwh", "p90_one_year_aep_kwh",
         "lcoe_per_kwh", "excluded", "hub_height_m", "mean_speed_ms", "kind", "payback_years",
         "capacity_factor", "p50_aep_kwh", "aep_bins_kwh", "speedup", "turbulence_intensity",
         "turbulence_effect", "min_clear_mast_m", "in_recirculation_zone", "in_turbulence_zone",
         "spilled_fraction", "noise_margin_db", "thrust_extreme_n", "flags")

#: Display format of each numeric column (printf style, as the table draws it).
FORMATS = {"rank": "%d", "aep_kwh": "%.0f", "p50_aep_kwh": "%.0f", "p90_aep_kwh": "%.0f",
           "p90_one_year_aep_kwh": "%.0f", "aep_bins_kwh": "%.0f",
           "lcoe_per_kwh": "%.2f", "payback_years": "%.1f", "capacity_factor": "%.3f",
           "hub_height_m": "%.1f", "mean_speed_ms": "%.2f", "speedup": "%.2f",
           "turbulence_intensity": "%.3f", "turbulence_effect": "%.3f",
           "min_clear_mast_m": "%.1f", "spilled_fraction": "%.2f", "noise_margin_db": "%.1f",
           "thrust_extreme_n": "%.0f"}
#: Columns kept in view while the wide table scrolls sideways.
PINNED = ("rank", "position_id", "turbine_id")
#: What a person reads for each position kind of the site file: "gap" is the file's key for
#: a position in the passage between two buildings, which the engine's words call a passage.
KIND_LABELS = {"roof": "roof", "gap": "passage", "mast": "mast"}

HEADERS = {
    "rank": "rank", "position_id": "position", "turbine_id": "turbine", "kind": "kind",
    "aep_kwh": "net energy (kWh/yr)", "p50_aep_kwh": "P50 (kWh/yr)",
    "p90_aep_kwh": "P90, average year of the project life (kWh/yr)",
    "p90_life_aep_kwh": "P90, average year of the project life (kWh/yr)",
    "p90_one_year_aep_kwh": "P90, a single year (kWh/yr)",
    "aep_bins_kwh": "net energy by the method of bins, cross-check (kWh/yr)",
    "turbulence_effect": "turbulence effect on energy (fraction)",
    "capacity_factor": "capacity factor",
    "speedup": "speed factor from buildings", "turbulence_intensity": "turbulence intensity",
    "lcoe_per_kwh": "cost per kWh", "payback_years": "payback (years)",
    "in_recirculation_zone": "in recirculation", "in_turbulence_zone": "in roof turbulence",
    "spilled_fraction": "spilled share in passage", "noise_margin_db": "noise margin (dB)",
    "thrust_extreme_n": "extreme thrust, parked rotor (N)", "excluded": "excluded", "flags": "reasons and notes",
}


def header(name: str, speed_unit: str, length_unit: str) -> str:
    return columns.column_label(name, speed_unit, length_unit)


def display_table(table: pd.DataFrame, speed_unit: str, length_unit: str,
                  columns=SHOWN) -> pd.DataFrame:
    """Ranked rows with the chosen columns present, converted and labelled for reading."""
    cols = [c for c in columns if c in table.columns]
    df = table[cols].copy()
    df = units.convert_columns(df, speed_unit, length_unit)
    if "kind" in df:
        df["kind"] = [KIND_LABELS.get(k, k) for k in df["kind"]]
    if "flags" in df:
        df["flags"] = ["; ".join(map(str, f)) if isinstance(f, (list, tuple)) else str(f)
                       for f in df["flags"]]
    for c in df.columns:
        if df[c].dtype == float:
            df[c] = df[c].replace([np.inf, -np.inf], np.nan)
    return df.rename(columns={c: header(c, speed_unit, length_unit) for c in df.columns})


def signed_percent(fraction) -> str:
    """A relative change as signed per cent text: 0.031 -> "+3.1 %", -0.054 -> "−5.4 %"."""
    v = float(fraction)
    if not np.isfinite(v):
        return "–"
    return f"{'+' if v >= 0 else '−'}{abs(v) * 100:.1f} %"


def p90_labels(life_years) -> dict:
    """Labels of the two P90s, saying which is which."""
    n = f"{float(life_years):g}"
    return {"p90_aep_kwh": f"P90, average year over {n} years (kWh/yr)",
            "p90_one_year_aep_kwh": "P90, a single year (kWh/yr)"}


def display_config(table: pd.DataFrame, speed_unit: str, length_unit: str,
                   columns=SHOWN) -> dict:
    """``st.column_config`` arguments for :func:`display_table`'s frame: a format for every
    number (no raw floats), the first columns pinned, the notes column wide. Returned as
    ``{header: (kind, options)}`` so this module does not import streamlit."""
    out = {}
    for c in columns:
        if c not in table.columns:
            continue
        h = header(c, speed_unit, length_unit)
        if c in FORMATS:
            out[h] = ("number", {"format": FORMATS[c], "pinned": c in PINNED})
        elif c == "flags":
            out[h] = ("text", {"width": "large"})
        elif c in PINNED:
            out[h] = ("text", {"pinned": True})
    return out


def leading_label(row) -> str:
    """Name of the first allowed row with its verdict, never "best" or "recommended": under a
    "none of the options pays back" headline the first row is only the leading option."""
    v = str(row.get("verdict", "")) if hasattr(row, "get") else ""
    return f"Leading option ({v})" if v else "Leading option"


def top_rows(table: pd.DataFrame, speed_unit: str, length_unit: str, n: int = 5) -> pd.DataFrame:
    """The rows :func:`engine.chain.verdict.top_rows` shows (allowed ones first, an excluded
    one only with its reason) as short text, for a static table anyone can read aloud; each
    row with its verdict and the reason behind it."""
    if "verdict" in table:
        ranks = verdict.top_rows(table, n)["rank"].to_numpy()
        t = table.set_index("rank", drop=False).loc[ranks]
    else:
        t = table.head(n)
    hub = units.length_from_si(t["hub_height_m"].to_numpy(float), length_unit)
    out = pd.DataFrame({
        "rank": t["rank"].astype(int).to_numpy(),
        "position": t["position_id"].to_numpy(),
        "turbine": t["turbine_id"].to_numpy(),
        f"hub height ({length_unit})": [f"{v:.1f}" for v in hub],
        "net energy (kWh/yr)": [f"{v:,.0f}" for v in t["aep_kwh"]],
    })
    life = t["project_life_years"].iloc[0] if "project_life_years" in t and len(t) else 20
    for col, label in p90_labels(life).items():
        if col in t:
            out[label] = [f"{v:,.0f}" for v in t[col]]
    if "turbulence_effect" in t:
        out["turbulence effect"] = [signed_percent(v) for v in t["turbulence_effect"]]
    if "lcoe_per_kwh" in t:
        out["cost per kWh"] = [f"{v:.2f}" if np.isfinite(v) else "–" for v in t["lcoe_per_kwh"]]
    if "verdict" in t:
        out["verdict"] = t["verdict"].astype(str).to_numpy()
        out["reason"] = t["verdict_reason"].astype(str).to_numpy()
    else:
        out["status"] = ["excluded" if e else "allowed" for e in t["excluded"]]
    return out.set_index("rank")


def scenario_outcome(evaluation, speed_unit: str, length_unit: str) -> dict:
    """Headline numbers of one scenario as text: the leading allowed row, its verdict and
    what it stands on (never called "best": it may not pay back)."""
    t = evaluation.table
    ok = t[~t["excluded"]]
    best = ok.iloc[0] if len(ok) else t.iloc[0]
    hub = float(units.length_from_si(best["hub_height_m"], length_unit))
    out = {
        "leading position": str(best["position_id"]),
        "leading turbine": str(best["turbine_id"]),
        "verdict": str(best.get("verdict", "")),
        f"hub height ({length_unit})": f"{hub:.1f}",
        "net energy (kWh/yr)": f"{float(best['aep_kwh']):,.0f}",
    }
    life = best["project_life_years"] if "project_life_years" in best.index else 20
    labels = p90_labels(life)
    for col, label, fmt in (("p90_aep_kwh", labels["p90_aep_kwh"], "{:,.0f}"),
                            ("p90_one_year_aep_kwh", labels["p90_one_year_aep_kwh"], "{:,.0f}"),
                            ("lcoe_per_kwh", "cost per kWh", "{:.3f}"),
                            ("payback_years", "payback (years)", "{:.1f}")):
        if col in best.index:
            v = float(best[col])
            out[label] = fmt.format(v) if np.isfinite(v) else "never"
    out["eligible rows"] = str(int(len(ok)))
    return out


def _row_keys(rows: list) -> list:
    """How rows of a list are told apart: by their ``id`` when every row has its own one, so
    scenarios line up a building or position with the same one (never two different
    buildings that happen to share a place in the list), else by place."""
    ids = [r.get("id") if isinstance(r, dict) else None for r in rows]
    if all(isinstance(i, str) and i for i in ids) and len(set(ids)) == len(ids):
        return ids
    return [str(i) for i in range(len(rows))]


def flatten(data, prefix: str = "") -> dict:
    """Site-file dict as ``path -> value`` for comparing scenarios (``positions[tower].x_m``;
    rows without their own ids by place, ``climate.table[2]``)."""
    out = {}
    if isinstance(data, dict):
        for k, v in data.items():
            out.update(flatten(v, f"{prefix}.{k}" if prefix else str(k)))
    elif isinstance(data, list) and data and isinstance(data[0], (dict, list)):
        for key, v in zip(_row_keys(data), data):
            out.update(flatten(v, f"{prefix}[{key}]"))
    else:
        out[prefix] = data
    return out


def input_differences(docs: dict) -> pd.DataFrame:
    """Inputs that differ between scenarios (site-file dicts by name): one row per input; a
    row that only one scenario has is shown empty in the others."""
    flat = {name: flatten(d) for name, d in docs.items()}
    keys = list(dict.fromkeys(k for f in flat.values() for k in f))
    rows = []
    names = list(docs)
    for k in keys:
        vals = [flat[n].get(k) for n in names]
        if any(v != vals[0] for v in vals[1:]):
            rows.append({"input": _readable(k), **{n: _fmt(v) for n, v in zip(names, vals)}})
    return pd.DataFrame(rows, columns=["input"] + names)


def different_sites(docs: dict) -> list:
    """Names of the sites when the scenarios are of more than one (by site name or by the
    ids of their buildings), else an empty list."""
    seen = {}
    for d in docs.values():
        site = (d.get("site") or {}).get("name", "")
        ids = tuple(sorted(str(b.get("id")) for b in d.get("buildings", []) or []))
        seen.setdefault((site, ids), site or "unnamed")
    return list(seen.values()) if len(seen) > 1 else []


def _readable(path: str) -> str:
    """``positions[tower-centre].mast_height_m`` -> ``positions tower-centre: mast height (m)``."""
    head, _, rest = path.partition(".")
    if "[" in head:
        group, name = head.split("[", 1)
        name = name[:-1] if name.endswith("]") else name
        return f"{group} {name}: {units.column_label(rest) if rest else ''}".strip()
    return f"{head}: {units.column_label(rest)}" if rest else units.column_label(head)


def _fmt(v):
    if isinstance(v, list):
        return ", ".join(f"{x:g}" if isinstance(x, float) else str(x) for x in v[:6]) + (
            " …" if len(v) > 6 else "")
    if isinstance(v, float):
        return f"{v:g}"
    return "" if v is None else str(v)
