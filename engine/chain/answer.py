"""The site's answer in two sentences: the verdict with its money, then the energy and what to
measure next to firm it up.

The first sentence is the verdict of the option the summary leads with (the leading allowed
option, or the least bad one when none pays back; :mod:`engine.chain.verdict`), with the money
from its ``verdict_reason``. The second gives its P50 and P90 energy and names the measurement
that would narrow the largest uncertainty in that energy (:func:`largest_uncertainty`).

Where the climate was measured at the option's own position (``WindClimate.measured_at`` is
``position`` and ``position_id`` is the option's), the measurement already stands in for the
building-flow model and the transfer of the climate (:data:`COVERED_BY_POSITION_RECORD`), so the
answer does not advise measuring there again: it says what the record covers and names the
largest of the remaining terms (the long-term correction, the power curve, the wind data...).
The stated allowances for the covered terms stay in the P-values (they are not removed there).
"""
from __future__ import annotations

import numpy as np

from engine.chain.verdict import VERDICTS, add_verdicts
from engine.energy.uncertainty import SPEED_COMPONENTS, with_climate

#: What to measure or ask for next, by the uncertainty component it narrows.
MEASURE_NEXT = {
    "speed_building_model": (
        "measure the wind at the proposed hub position for at least a year (an anemometer on a "
        "temporary mast there, installed by people trained for work at height), which replaces "
        "the building-flow estimate"),
    "speed_transfer": (
        "measure the wind on site near hub height for at least a year, which replaces the "
        "transfer of the climate from its reference height and roughness"),
    "speed_data": (
        "check the wind record's instruments and calibration, or log a calibrated anemometer "
        "on site"),
    "speed_long_term": (
        "correlate the site's record with a long-term reference station "
        "(measure-correlate-predict) to place it in a typical year"),
    "energy_power_curve": (
        "ask the maker for a power curve measured to IEC 61400-12-1 (or a turbine certified to "
        "IEC 61400-2)"),
    "interannual_speed": (
        "expect the year-to-year variation of the wind, which no measurement removes; only the "
        "life-average P90 narrows with a longer record"),
}

#: Words for each component in the sentence.
COMPONENT_WORDS = {
    "speed_building_model": "the building-flow model",
    "speed_transfer": "the transfer of the climate to the site",
    "speed_data": "the wind data",
    "speed_long_term": "the long-term correction",
    "energy_power_curve": "the power curve",
    "interannual_speed": "the year-to-year variation of the wind",
}


#: Components a record measured at the option's own hub position already stands in for.
COVERED_BY_POSITION_RECORD = ("speed_building_model", "speed_transfer")

#: What to do next about the wind data when the record was taken at the option's position.
MEASURED_DATA_NEXT = (
    "have the logger's anemometer calibrated (or checked against a calibrated one) and its "
    "mounting checked, which firms up the record already taken there")


def largest_uncertainty(speed_sensitivity: float, uncertainty,
                        exclude: tuple[str, ...] = ()) -> tuple[str, float]:
    """The component that contributes most to the energy's uncertainty, and its share [-].

    Parameters
    ----------
    speed_sensitivity : d ln E / d ln V of the option [-]
    uncertainty : :class:`engine.core.model.Uncertainty` (relative standard uncertainties)
    exclude : component names left out of the choice (terms a measurement already covers)

    Returns
    -------
    (name, sigma) : the component's field name and its relative energy uncertainty [-]

    Notes
    -----
    A speed component u_i moves the energy by s u_i (s the speed sensitivity); the power
    curve's u_E is already in energy; the year-to-year variation gives s u_IAV in a single
    year. The largest of these names the measurement to make next (common practice: reduce
    the largest term of a root-sum-square first).
    """
    s = abs(float(speed_sensitivity)) if np.isfinite(speed_sensitivity) else 0.0
    terms = {name: s * float(getattr(uncertainty, name)) for name in SPEED_COMPONENTS}
    terms["energy_power_curve"] = float(uncertainty.energy_power_curve)
    terms["interannual_speed"] = s * float(uncertainty.interannual_speed)
    for k in exclude:
        terms.pop(k, None)
    name = max(terms, key=lambda k: (terms[k], k))
    return name, terms[name]


def _option(table):
    """The row the answer speaks of: the least bad allowed one when none pays back."""
    ok = table[table["verdict"] != VERDICTS[3]]
    if len(ok) == 0:
        return None
    if not ok["verdict"].isin(VERDICTS[:2]).any() and "npv" in ok:
        return ok.iloc[int(np.argmax(ok["npv"].to_numpy(dtype=float)))]
    return ok.iloc[0]


def _kwh(v) -> str:
    return f"{float(v):,.0f} kWh" if np.isfinite(float(v)) else "no figure"


def _firm_up(row, uncertainty, measured_at_position: str, height_m,
             long_term_corrected: bool = False) -> str:
    """The clause naming the largest term and what to do about it."""
    here = bool(measured_at_position) and str(row["position_id"]) == measured_at_position
    exclude = COVERED_BY_POSITION_RECORD if here else ()
    comp, sigma = largest_uncertainty(row.get("speed_sensitivity", np.nan), uncertainty, exclude)
    todo = MEASURED_DATA_NEXT if here and comp == "speed_data" else MEASURE_NEXT[comp]
    text = (f"the largest uncertainty in that is {COMPONENT_WORDS[comp]} "
            f"(±{sigma:.0%} of the energy), so to firm it up, {todo}")
    if not here:
        return text
    at = f" at {float(height_m):g} m" if height_m is not None else ""
    return (f"the wind was measured at {measured_at_position}{at}, which already stands in for "
            f"{COMPONENT_WORDS['speed_building_model']} and "
            f"{COMPONENT_WORDS['speed_transfer']} there ("
            + ("so its P90 leaves them out" if long_term_corrected else
               "their stated allowances stay in its P90 until the record is long-term "
               "corrected") + f"); of the rest, {text}")


def answer_sentences(table, economics, uncertainty, measured_at_position: str = "",
                     measured_height_m=None, long_term_corrected: bool = False
                     ) -> tuple[str, str]:
    """The answer in two sentences: (verdict and money, energy and what to measure next).

    Parameters
    ----------
    table : ranked table (verdicts added when missing), best first
    economics : :class:`engine.core.model.Economics`
    uncertainty : :class:`engine.core.model.Uncertainty`
    measured_at_position : id of the position the climate was measured at ("" for a
        reference climate); the option there is not advised to measure again
    measured_height_m : the measured climate's height above ground [m], for the words
    long_term_corrected : the position record was long-term corrected, so its P-values leave
        out the terms it covers (:func:`engine.energy.uncertainty.logger_row`)
    """
    if "verdict" not in table:
        table = add_verdicts(table, economics)
    if len(table) == 0:
        return ("There is nothing to judge: the site lists no position or no turbine.",
                "Add candidate positions and turbines, then assess again.")
    row = _option(table)
    if row is None:
        first = table.iloc[0]
        return ("None of the options is allowed here: every position and turbine fails a "
                f"constraint (the first, {first['turbine_id']} at {first['position_id']}: "
                f"{first['verdict_reason']}).",
                "No energy figure is given for an option that is not allowed; the ranking "
                "lists each constraint and the change that would lift it.")
    name = f"{row['turbine_id']} at {row['position_id']}"
    ok = table[table["verdict"] != VERDICTS[3]]
    if not ok["verdict"].isin(VERDICTS[:2]).any():
        first = (f"None of the options pays back at these prices; the least bad is {name}: "
                 f"{row['verdict_reason']}.")
    else:
        first = f"{name} {row['verdict']}: {row['verdict_reason']}."
    p50 = row.get("p50_aep_kwh", row.get("aep_kwh", np.nan))
    p90 = row.get("p90_aep_kwh", np.nan)
    firm = _firm_up(row, uncertainty, measured_at_position, measured_height_m,
                    long_term_corrected)
    second = (f"It would make about {_kwh(p50)} a year (P50; P90 {_kwh(p90)} as a life "
              f"average); {firm}.")
    return first, second


def answer_for(evaluation) -> tuple[str, str]:
    """:func:`answer_sentences` of an :class:`engine.chain.pipeline.Evaluation`."""
    a = evaluation.assessment
    # The uncertainties the P-values used (a long-term correction's own σ where larger).
    c = a.climate
    here = c.position_id if getattr(c, "measured_at", "reference") == "position" else ""
    return answer_sentences(evaluation.table, a.economics, with_climate(a.uncertainty, c),
                            measured_at_position=here,
                            measured_height_m=c.height_m if here else None,
                            long_term_corrected=float(c.long_term_uncertainty) > 0)
