"""The site file's inputs as readable tables, for the summary's appendix.

Every value of the site file appears once, under a label in words with its unit (never a
raw key path such as ``buildings[0].width_m``): settings groups as two-column tables, lists
of buildings, positions, turbines... as one row per item (one column per item when an item
has many fields), per-sector arrays as a sector table and power curves as a speed table.
Values are written exactly as the site file holds them, so the tables reproduce it.
"""
from __future__ import annotations

from engine.report.content import Table
from engine.report.formats import DASH

#: Name suffix -> unit, longest first.
SUFFIX_UNITS = (("_kg_per_kwh", "kg CO2/kWh"), ("_per_kwh", "per kWh"),
                ("_per_year", "a year"), ("_ms", "m/s"), ("_m2", "m²"), ("_m", "m"),
                ("_deg", "°"), ("_db", "dB(A)"), ("_pa", "Pa"), ("_c", "°C"), ("_w", "W"),
                ("_kg", "kg"), ("_n", "N"), ("_years", "years"), ("_pct", "%"), ("_hz", "Hz"),
                ("_min", "min"), ("_m3", "m³"))

#: Labels that need more words than the key gives: (group, key) or key -> label.
LABELS = {
    ("losses", "availability"): "Availability loss (downtime share)",
    ("losses", "electrical"): "Electrical loss",
    ("losses", "icing"): "Icing loss",
    ("losses", "cut_out_hysteresis"): "Cut-out hysteresis loss",
    ("losses", "other"): "Other losses",
    ("uncertainty", "speed_data"): "Wind data (of mean speed)",
    ("uncertainty", "speed_long_term"): "Long-term representativeness (of mean speed)",
    ("uncertainty", "speed_transfer"): "Transfer to the site (of mean speed)",
    ("uncertainty", "speed_building_model"): "Building flow model (of mean speed)",
    ("uncertainty", "energy_power_curve"): "Power curve (of energy)",
    "om_cost_per_year": "Operation and maintenance (a year)",
    "emission_factor_kg_per_kwh": "Grid emission factor (kg CO2/kWh)",
    "iec_class": "IEC class", "v_ref_ms": "IEC reference speed (m/s)", "id": "Id",
    "sound_power_db": "Sound power (dB(A))", "limit_db": "Noise limit (dB(A))",
    "record_sha256": "Record SHA-256", "x_m": "East (m)", "y_m": "North (m)",
    "orientation_deg": "Bearing of the long side (°)", "use_for_calibration":
    "Used to calibrate the model",
}

#: Group key -> title of its table.
TITLES = {"site": "Site", "climate": "Reference climate", "transfer": "Climate transfer",
          "losses": "Losses", "uncertainty": "Uncertainty (one sigma)",
          "economics": "Economics", "ranking": "Ranking settings", "buildings": "Buildings",
          "positions": "Positions", "turbines": "Turbines", "receptors": "Noise receptors",
          "spot_readings": "Spot readings", "consent": "Neighbours and consent",
          "consent.noise": "Noise assessment", "consent.flicker": "Shadow flicker",
          "consent.rules": "Local siting rules"}

#: Groups whose fractions are shown as percentages.
PERCENT_GROUPS = ("losses", "uncertainty")
#: Per-sector arrays of the climate, with their labels.
SECTOR_ARRAYS = (("frequency", "Frequency"), ("weibull_k", "Weibull k"),
                 ("weibull_c_ms", "Weibull c (m/s)"))
#: Items with more fields than this are shown one column per item.
MAX_COLUMNS = 9


def label(key: str, group: str = "") -> str:
    """A key of the site file in words with its unit: ``"altitude_m"`` -> ``"Altitude (m)"``."""
    if (group, key) in LABELS:
        return LABELS[(group, key)]
    if key in LABELS:
        return LABELS[key]
    for suffix, unit in SUFFIX_UNITS:
        if key.endswith(suffix) and len(key) > len(suffix):
            words = key[: -len(suffix)].replace("_", " ")
            return f"{words[:1].upper()}{words[1:]} ({unit})"
    words = key.replace("_", " ")
    return words[:1].upper() + words[1:]


def value_text(v, percent: bool = False) -> str:
    """A site-file value exactly as held: numbers in full, yes/no, lists joined."""
    if v is None:
        return "not given"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float):
        return f"{100.0 * v:.10g} %" if percent else repr(v)
    if isinstance(v, (list, tuple)):
        return ", ".join(value_text(x) for x in v) if v else "none"
    text = str(v)
    return text if text.strip() else DASH


def _settings(group: str, d: dict, skip=()) -> Table:
    pct = group in PERCENT_GROUPS or None
    rows = tuple((label(k, group), value_text(v, percent=bool(pct) or k == "discount_rate"))
                 for k, v in d.items() if k not in skip)
    return Table(f"inputs-{group}", ("Setting", "Value"), rows, ("l", "l"),
                 title=TITLES.get(group, label(group)))


def _sectors(climate: dict) -> Table:
    n = len(climate.get("frequency") or [])
    step = 360.0 / n if n else 0.0
    rows = tuple((f"{i * step:g}",) + tuple(value_text(climate[k][i], percent=(k == "frequency"))
                                             for k, _ in SECTOR_ARRAYS) for i in range(n))
    return Table("inputs-sectors", ("Sector centre (°)",) + tuple(h for _, h in SECTOR_ARRAYS),
                 rows, ("r", "r", "r", "r"), title="Reference climate by sector")


def _months(values) -> Table:
    names = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")
    return Table("inputs-months", names, (tuple(value_text(v) for v in values),),
                 ("r",) * len(values), title="Reference climate: monthly mean speed (m/s)")


def _items(group: str, items: list, skip=()) -> Table:
    keys = [k for k in items[0] if k not in skip]
    heads = tuple(label(k, group) for k in keys)
    rows = [tuple(value_text(it.get(k)) for k in keys) for it in items]
    numeric = tuple("r" if all(isinstance(it.get(k), (int, float)) and not isinstance(
        it.get(k), bool) for it in items) else "l" for k in keys)
    title = TITLES.get(group, label(group))
    if len(keys) <= MAX_COLUMNS:
        return Table(f"inputs-{group}", heads, tuple(rows), numeric, title=title)
    # Many fields: one row per field, one column per item (its id heads the column).
    ids = [r[0] for r in rows]
    body = tuple((heads[j],) + tuple(r[j] for r in rows) for j in range(1, len(keys)))
    return Table(f"inputs-{group}", (heads[0],) + tuple(ids), body,
                 ("l",) + ("l",) * len(ids), title=title)


def _power_curves(turbines: list) -> Table:
    speeds = sorted({float(s) for t in turbines for s in t.get("curve_speed_ms") or []})
    curves = [dict(zip(map(float, t.get("curve_speed_ms") or []), t.get("curve_power_w") or []))
              for t in turbines]
    rows = tuple((value_text(s),) + tuple(value_text(c[s]) if s in c else DASH for c in curves)
                 for s in speeds)
    return Table("inputs-power-curves", ("Wind speed (m/s)",) + tuple(
        f"{t['id']} power (W)" for t in turbines), rows, ("r",) * (1 + len(turbines)),
        title="Power curves as entered")


def _is_items(v) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def _nested(group: str, d: dict) -> list:
    """Tables of a group's own groups (``consent.noise``) and lists of items (``consent.rules``)."""
    out = []
    for k, x in d.items():
        if isinstance(x, dict):
            out.append(_settings(f"{group}.{k}", x))
        elif _is_items(x):
            out.append(_items(f"{group}.{k}", x))
    return out


def input_tables(site_dict: dict) -> tuple:
    """Tables of every input of a site-file dict (:func:`engine.io.sitefile.assessment_to_dict`)."""
    out = []
    for group, v in site_dict.items():
        if isinstance(v, dict):
            arrays = {k for k, x in v.items() if isinstance(x, list)} if group == "climate" \
                else set()
            out.extend(_nested(group, v))
            arrays |= {k for k, x in v.items() if isinstance(x, dict) or _is_items(x)}
            out.append(_settings(group, v, skip=arrays))
            if group == "climate" and v.get("frequency"):
                out.append(_sectors(v))
            if group == "climate" and v.get("monthly_mean_ms"):
                out.append(_months(v["monthly_mean_ms"]))
        elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
            curves = ("curve_speed_ms", "curve_power_w") if group == "turbines" else ()
            out.append(_items(group, v, skip=curves))
            if curves:
                out.append(_power_curves(v))
        elif isinstance(v, list):
            out.append(Table(f"inputs-{group}", ("Setting", "Value"),
                             ((label(group), "none"),), ("l", "l"),
                             title=TITLES.get(group, label(group))))
        else:
            out.append(Table(f"inputs-{group}", ("Setting", "Value"),
                             ((label(group), value_text(v)),), ("l", "l"), title="File"))
    return tuple(out)
