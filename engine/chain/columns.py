"""The result contract: every column of the ranked table, declared once.

Part of the chain layer. :func:`engine.chain.pipeline.evaluate` returns a ranked table with
one row per position x turbine; this module says, for each of its columns, the name, the SI
unit, a label a person reads, what it means and which layer fills it. Everything that shows
or writes the table reads it from here:

- the ``rank`` command's ``--format json`` fields and their order
  (:func:`engine.chain.documents.rank_records`) and the CSV header (:func:`csv_columns`);
- the siting summary's headers and cell formats (:mod:`engine.report.formats`);
- the dashboard's column labels (:func:`column_label`, in the display units).

A test (``tests/engine/test_report.py``) runs the demo site and fails when the ranked table
has a column that is not declared here, so nothing reaches a client unlabelled.

Declaring a new column
----------------------
Add one :class:`Column` to :data:`COLUMNS`, after the columns of the layer that fills it
(existing ``rank`` JSON fields keep their names and their order; append, never rename)::

    Column("wake_loss_fraction", "", "Wake loss", "share of energy lost in upwind wakes",
           "energy.aep", kind="fraction", digits=1),

- ``name`` carries its unit as a suffix (``_m``, ``_ms``, ``_kwh``): the dashboard converts
  ``*_m`` and ``*_ms`` columns to the display units by that suffix, so ``unit`` must be
  ``"m"`` or ``"m/s"`` for them (a test checks).
- ``unit`` is the SI unit as printed (``"kWh/yr"``, ``"N m"``), ``""`` for a pure number or a
  fraction, ``"money"`` for an amount in the site's currency, ``"per kWh"`` for money per kWh.
- ``kind`` says how a value is written: ``"id"``/``"text"`` as is, ``"int"``, ``"number"``
  with ``digits`` decimals, ``"fraction"`` as a percentage with ``digits`` decimals,
  ``"flag"`` as yes/no, ``"list"`` joined by ``"; "``, ``"mapping"`` as ``key value`` pairs.
- ``layer`` names the engine module that fills it (``"flow.effective"``, ``"energy.noise"``).

A building-model diagnostic of shape (P,) becomes a column on its own
(:func:`engine.chain.pipeline.energy_table`): declare it here in the same change.
"""
from __future__ import annotations

from dataclasses import dataclass

from engine.core import units


@dataclass(frozen=True)
class Column:
    """One declared column of the ranked table (see the module notes)."""

    name: str
    unit: str
    label: str
    meaning: str
    layer: str
    kind: str = "number"
    digits: int = 3


KINDS = ("id", "text", "int", "number", "fraction", "flag", "list", "mapping")

C = Column
#: The ranked table's columns in the order the table, the CSV and the JSON write them.
COLUMNS = (
    C("rank", "", "Rank", "1 is best; excluded rows rank after every eligible one",
      "chain.ranking", "int"),
    C("position_id", "", "Position", "candidate position id from the site file", "site file",
      "id"),
    C("turbine_id", "", "Turbine", "turbine id from the site file", "site file", "id"),
    C("kind", "", "Kind of position", "roof, wall, mast or passage between buildings",
      "site file", "text"),
    C("mast_height_m", "m", "Mast", "mast height above the roof or ground", "site file",
      digits=1),
    C("hub_height_m", "m", "Hub height", "hub height above ground", "flow.effective", digits=1),
    C("mean_speed_ms", "m/s", "Mean speed at hub", "long-term mean wind speed at the hub, "
      "building effects included", "flow.effective", digits=2),
    C("gross_aep_kwh", "kWh/yr", "Gross energy", "energy a year before losses", "energy.aep",
      digits=0),
    C("aep_kwh", "kWh/yr", "Net energy", "energy a year after losses (central estimate)",
      "energy.aep", digits=0),
    C("capacity_factor", "", "Capacity factor", "net energy over rated power for 8760 h",
      "energy.aep", "fraction", 1),
    C("rated_power_kw", "kW", "Rated power", "the turbine's rated power", "energy.turbines",
      digits=2),
    C("full_load_hours", "h/yr", "Full-load hours", "net energy over rated power",
      "energy.aep", digits=0),
    C("p50_aep_kwh", "kWh/yr", "P50 energy", "net energy exceeded in half of all years",
      "energy.uncertainty", digits=0),
    C("p75_aep_kwh", "kWh/yr", "P75 energy", "net energy exceeded in three years of four",
      "energy.uncertainty", digits=0),
    C("p90_aep_kwh", "kWh/yr", "P90 energy, life average", "net energy a year averaged over "
      "the project life, exceeded with 90 % confidence (not a single year: see P90 one year)",
      "energy.uncertainty", digits=0),
    C("speed_sensitivity", "", "Energy change per speed change",
      "relative change of energy per relative change of mean speed", "energy.aep", digits=2),
    C("skew_speed_factor", "", "Inflow-skew factor", "frequency-weighted speed factor from the "
      "inflow's tilt to the rotor", "energy.aep", digits=3),
    C("lcoe_per_kwh", "per kWh", "Cost of energy", "levelised cost per kWh over the lifetime",
      "energy.economics", digits=3),
    C("payback_years", "years", "Cash payback", "year the undiscounted savings reach the cost",
      "energy.economics", digits=1),
    C("npv", "money", "Net present value", "discounted income less costs over the lifetime",
      "energy.economics", digits=0),
    C("co2_avoided_kg_per_year", "kg/yr", "CO2 avoided", "grid emissions avoided a year",
      "energy.economics", digits=0),
    C("thrust_rated_n", "N", "Thrust near rated", "rotor thrust near rated wind speed",
      "energy.loads", digits=0),
    C("thrust_extreme_n", "N", "Extreme thrust", "rotor thrust in the extreme wind",
      "energy.loads", digits=0),
    C("mast_base_moment_nm", "N m", "Mast base moment", "bending moment at the mast base from "
      "the extreme thrust", "energy.loads", digits=0),
    C("speedup", "", "Speed factor from buildings", "mean speed at the hub over the "
      "undisturbed mean speed at the same height", "chain.pipeline", digits=3),
    C("turbulence_intensity", "", "Turbulence intensity", "frequency-weighted turbulence "
      "intensity at the hub", "flow.effective", "fraction", 1),
    C("in_recirculation_zone", "", "Hub in recirculation zone", "hub inside a roof's "
      "recirculation zone in the main energy sector", "flow.effective", "flag"),
    C("in_turbulence_zone", "", "Hub in high-turbulence zone", "hub inside a roof's "
      "high-turbulence zone in the main energy sector", "flow.effective", "flag"),
    C("in_roof_wake", "", "Hub in roof wake", "hub in the wake behind a roof's edge",
      "flow.effective", "flag"),
    C("min_clear_mast_m", "m", "Mast for the hub to clear roof zones", "shortest mast that "
      "puts the hub above the roof's high-turbulence zone", "flow.effective", digits=1),
    C("spilled_fraction", "", "Spilled share in passage", "share of the approaching flow "
      "that spills round a passage instead of through it", "flow.gaps", "fraction", 0),
    C("governing_limit", "", "Passage limited by", "what limits the speed-up in a passage",
      "flow.gaps", "text"),
    C("shelter_factor", "", "Shelter factor", "energy-weighted speed factor of upwind "
      "buildings' wakes", "flow.shelter", digits=3),
    C("spot_measured_speedup", "", "Spot reading: measured speed factor", "speed factor "
      "measured by the spot readings at this position", "flow.spot", digits=3),
    C("spot_speedup_ci_low", "", "Spot reading: speed factor, low", "lower bound of the "
      "measured speed factor's 95 % confidence interval", "flow.spot", digits=3),
    C("spot_speedup_ci_high", "", "Spot reading: speed factor, high", "upper bound of the "
      "measured speed factor's 95 % confidence interval", "flow.spot", digits=3),
    C("spot_model_speedup", "", "Spot reading: modelled speed factor", "the model's speed "
      "factor at the spot readings' place", "flow.spot", digits=3),
    C("mast_to_clear_turbulence_m", "m", "Mast for the rotor to clear roof zones",
      "shortest mast that lifts the whole rotor above the roof's high-turbulence zone",
      "chain.pipeline", digits=1),
    C("rotor_in_turbulence_zone", "", "Rotor in high-turbulence zone", "part of the rotor "
      "inside a roof's high-turbulence zone", "chain.pipeline", "flag"),
    C("noise_db_at_receptors", "dB(A)", "Noise at receptors", "highest sound pressure level "
      "at each receptor over the assessed hub wind speeds (ISO 9613-2 octave bands)",
      "energy.noise_bands", "mapping", 1),
    C("noise_exceeds_limit", "", "Noise over criterion", "any receptor above its criterion "
      "(plus tolerance) at any assessed hub wind speed", "energy.noise_bands", "flag"),
    C("noise_margin_db", "dB(A)", "Noise margin", "smallest margin below a receptor's "
      "criterion over the assessed wind speeds (negative: over it)", "energy.noise_bands",
      digits=1),
    C("noise_worst_receptor", "", "Receptor with the least margin", "receptor id",
      "energy.noise_bands", "text"),
    C("monthly_aep_kwh", "kWh", "Net energy by month", "net energy of each month, January "
      "first", "energy.aep", "list", 0),
    C("flags", "", "Notes and exclusions", "advice on the position and the reasons it is "
      "excluded", "chain.ranking", "list"),
    C("excluded", "", "Excluded", "fails at least one ranking constraint", "chain.ranking",
      "flag"),
    C("cost_turbine", "money", "Turbine cost", "the turbine's price", "energy.economics",
      digits=0),
    C("cost_mast", "money", "Mast or bracket cost", "mast or bracket, by height",
      "energy.economics", digits=0),
    C("cost_structure", "money", "Structure cost", "roof fixings or foundation",
      "energy.economics", digits=0),
    C("cost_connection", "money", "Connection cost", "electrical connection",
      "energy.economics", digits=0),
    C("installed_cost", "money", "Installed cost", "turbine, mast, structure and connection",
      "energy.economics", digits=0),
    C("self_consumed_share", "", "Used on site", "share of the energy used on site (hourly "
      "generation against the load)", "energy.selfuse", "fraction", 0),
    C("self_consumed_kwh", "kWh/yr", "Used on site", "energy used on site a year",
      "energy.selfuse", digits=0),
    C("exported_kwh", "kWh/yr", "Exported", "energy exported a year", "energy.selfuse",
      digits=0),
    C("first_year_saving", "money", "Net saving, first year", "bill saving and export income "
      "less upkeep and standby use, first year", "energy.economics", digits=0),
    C("npv_without_support", "money", "NPV without support", "net present value without "
      "grants or support payments", "energy.economics", digits=0),
    C("discounted_payback_years", "years", "Discounted payback", "year the discounted "
      "savings reach the installed cost (infinite if never)", "energy.economics", digits=1),
    C("break_even_import_price", "per kWh", "Break-even import price", "import price at which "
      "the net present value is zero", "energy.economics", digits=3),
    C("exclusion_reason", "", "Excluded because", "the ranking constraints the row fails",
      "chain.ranking", "text"),
    C("verdict", "", "Verdict", "pays back within its life / only with support / does not pay "
      "back / not allowed here", "chain.verdict", "text"),
    C("verdict_reason", "", "Why", "one line with the numbers behind the verdict",
      "chain.verdict", "text"),
    C("p90_life_aep_kwh", "kWh/yr", "P90 energy, life average", "net energy a year, averaged "
      "over the project life, exceeded with 90 % confidence", "energy.uncertainty", digits=0),
    C("p90_one_year_aep_kwh", "kWh/yr", "P90 energy, one year", "net energy of a single year "
      "exceeded in nine years of ten (year-to-year variability included)",
      "energy.uncertainty", digits=0),
    C("p75_one_year_aep_kwh", "kWh/yr", "P75 energy, one year", "net energy of a single year "
      "exceeded in three years of four", "energy.uncertainty", digits=0),
    C("project_life_years", "years", "Project life", "years the life-average P-values cover",
      "energy.uncertainty", digits=0),
    C("aep_bins_kwh", "kWh/yr", "Net energy, method of bins", "the same energy by the IEC "
      "61400-12-1 method of bins (cross-check of the exact integral)", "energy.aep", digits=0),
    C("turbulence_effect", "", "Turbulence effect on energy", "change of energy from the site's "
      "turbulence against the curve's test turbulence", "energy.aep", "fraction", 1),
    C("power_curve_ti", "", "Power-curve test TI", "turbulence intensity the curve was "
      "measured at", "energy.turbines", "fraction", 0),
    C("extreme_load_method", "", "Extreme load method", "how the extreme thrust was found",
      "energy.loads", "text"),
    C("class_design_ti", "", "Class design TI", "turbulence intensity the turbine's IEC "
      "61400-2 class is designed for", "energy.loads", "fraction", 0),
    C("ti_above_class_design", "", "TI above class design", "the site's turbulence exceeds "
      "the class design value", "energy.loads", "flag"),
    C("noise_worst_speed_ms", "m/s", "Wind speed of the least noise margin", "hub wind speed "
      "bin at which the least margin occurs", "energy.noise_bands", digits=0),
    C("noise_hours_over_limit", "h/yr", "Noise over criterion", "hours a year in hub-speed "
      "bins where any receptor is above its criterion", "energy.noise_bands", digits=0),
    C("noise_screening_db", "dB", "Noise screening by buildings", "what the site's buildings "
      "take off the level at the receptor and speed of the least margin", "energy.noise_bands",
      digits=1),
    C("flicker_worst_hours", "h/yr", "Flicker, worst case", "shadow flicker at the worst "
      "window, sun always out and rotor face-on to it", "energy.flicker", digits=1),
    C("flicker_worst_day_min", "min", "Flicker, worst day", "most worst-case flicker minutes "
      "in one day at any window", "energy.flicker", digits=0),
    C("flicker_expected_hours", "h/yr", "Flicker, expected", "shadow flicker at the worst "
      "window with the wind's directions, operating time and sunshine", "energy.flicker",
      digits=1),
    C("flicker_worst_window", "", "Window with most flicker", "receptor id of the window "
      "with the most worst-case flicker", "energy.flicker", "text"),
    C("flicker_over_limit", "", "Flicker over limit", "any window above a flicker limit "
      "(hours a year, minutes a day or expected hours)", "energy.flicker", "flag"),
    C("rules_met", "", "Chosen rules met", "ids of the chosen local rules the position meets",
      "chain.rules", "list"),
    C("rules_broken", "", "Chosen rules broken", "ids of the chosen local rules the position "
      "breaks (the local authority decides)", "chain.rules", "list"),
    C("rule_results", "", "Rule results", "each chosen rule's value against its limit, or "
      "why it was not checked", "chain.rules", "mapping"),
    C("turbine_certified", "", "Power curve certified", "the turbine's power curve was tested "
      "by an independent body", "chain.neighbours", "flag"),
    C("certification", "", "Power-curve certification", "test standard and body, or the "
      "caution for an untested curve", "chain.neighbours", "text"),
    C("vibration_caution", "", "Vibration", "the rotor's 1P and 3P frequencies beside the "
      "structure's, and who must check it", "chain.neighbours", "text"),
)

#: Columns derived for reading only (never in the ranked table or its files).
DERIVED = (
    C("status", "", "Status", "ranked, or excluded with its reasons", "chain.columns", "text"),
)
del C

BY_NAME = {c.name: c for c in COLUMNS + DERIVED}


def declared(name: str) -> Column | None:
    """The declared :class:`Column` called ``name``, or None."""
    return BY_NAME.get(name)


def undeclared(columns) -> list:
    """Names among ``columns`` that the contract does not declare (should be empty)."""
    return [str(c) for c in columns if str(c) not in BY_NAME]


def csv_columns(columns) -> list:
    """``columns`` in the contract's order; undeclared ones follow in their own order."""
    present = {str(c) for c in columns}
    head = [c.name for c in COLUMNS if c.name in present]
    return head + [str(c) for c in columns if str(c) not in BY_NAME]


def unit_text(name: str, speed_unit: str = "m/s", length_unit: str = "m",
              currency: str = "", percent: bool = False) -> str:
    """The unit a person reads for a column: display units for speeds and lengths; ``%`` for
    a fraction when ``percent`` (the caller shows it times 100), else none."""
    col = BY_NAME.get(name)
    if col is None:
        return ""
    unit = col.unit
    if unit == "m/s":
        return speed_unit
    if unit == "m":
        return length_unit
    if unit == "money":
        return currency
    if unit == "per kWh":
        return f"{currency} per kWh".strip()
    if col.kind == "fraction":
        return "%" if percent else ""
    return unit


def column_label(name: str, speed_unit: str = "m/s", length_unit: str = "m",
                 currency: str = "", percent: bool = False) -> str:
    """The header a person reads: ``"mean_speed_ms"`` -> ``"Mean speed at hub (m/s)"``.

    Speeds and lengths are labelled in the display units given (the values must be
    converted to them too, e.g. by :func:`engine.core.units.convert_columns`); fractions are
    labelled ``(%)`` when ``percent`` (the values shown times 100). A name the contract does
    not declare gets a label from its own words and unit suffix.
    """
    col = BY_NAME.get(name)
    if col is None:
        text = units.column_label(name, speed_unit, length_unit)
        return text[:1].upper() + text[1:]
    unit = unit_text(name, speed_unit, length_unit, currency, percent)
    return f"{col.label} ({unit})" if unit else col.label
