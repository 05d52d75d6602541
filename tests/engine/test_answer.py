"""The site's answer in two sentences: the verdict with its money, the energy and what to
measure next (the largest term of the energy's uncertainty)."""
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from engine.chain import answer, pipeline, ranking, verdict
from engine.core import model
from engine.io import sitefile
from engine.report import build_summary

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"
OFF = dict(require_clear_of_turbulence_zone=False, apply_noise_limits=False,
           max_mast_height_m=15.0)


def table(npv, payback, saving, sensitivity, mast=None):
    """Rows with the columns the verdict and the answer read (structure only)."""
    n = len(npv)
    t = pd.DataFrame({
        "position_id": [f"p{i}" for i in range(n)], "turbine_id": ["t"] * n,
        "mast_height_m": mast or [6.0] * n, "aep_kwh": np.linspace(3000, 1000, n),
        "p50_aep_kwh": np.linspace(3000, 1000, n), "p90_aep_kwh": np.linspace(2000, 600, n),
        "speed_sensitivity": sensitivity, "npv": npv, "npv_without_support": npv,
        "payback_years": payback, "first_year_saving": saving,
        "installed_cost": [10000.0] * n, "lcoe_per_kwh": [0.3] * n,
        "flags": [[] for _ in range(n)],
    })
    ranked = ranking.rank(t, model.RankingSettings(**OFF))
    return verdict.add_verdicts(ranked, model.Economics())


def test_largest_uncertainty_by_hand():
    """s = 2.5 with the default uncertainties: the speed terms give s u_i (0.075, 0.1, 0.15,
    0.3), the power curve 0.08, the year-to-year wind 0.15; the building model is the largest
    (hand calculation); with s = 0.5 the power curve's 0.08 beats 0.5 x 0.12 = 0.06."""
    u = model.Uncertainty(speed_data=0.03, speed_long_term=0.04, speed_transfer=0.06,
                          speed_building_model=0.12, energy_power_curve=0.08,
                          interannual_speed=0.06)
    name, sigma = answer.largest_uncertainty(2.5, u)
    assert name == "speed_building_model" and sigma == pytest.approx(0.30)
    name, sigma = answer.largest_uncertainty(0.5, u)
    assert name == "energy_power_curve" and sigma == pytest.approx(0.08)
    # No sensitivity (no energy): only the power curve's own term is left.
    assert answer.largest_uncertainty(float("nan"), u)[0] == "energy_power_curve"


def test_nothing_pays_back_is_the_first_words():
    """Two sentences; the first says nothing pays back and names the highest NPV (p1); the
    second gives that option's P50 and P90 and the measurement that narrows the largest term."""
    t = table([-9000.0, -5000.0, -7000.0], [np.inf, 40.0, 60.0], [-20.0, 400.0, 300.0],
              [2.5, 2.5, 2.5])
    first, second = answer.answer_sentences(t, model.Economics(), model.Uncertainty())
    assert first.startswith("None of the options pays back at these prices; the least bad is "
                            "t at p1:")
    assert "NPV -5,000 EUR" in first
    assert "2,000 kWh a year (P50; P90 1,300 kWh" in second  # the p1 row: linspace midpoints
    assert "building-flow model" in second and "hub position" in second
    assert "recommend" not in (first + second).lower()


def test_paying_option_leads_with_its_verdict():
    t = table([3000.0, -100.0], [11.0, 25.0], [900.0, 500.0], [0.5, 0.5])
    first, second = answer.answer_sentences(t, model.Economics(), model.Uncertainty())
    assert first.startswith("t at p0 pays back within its life: NPV +3,000 EUR")
    assert "IEC 61400-12-1" in second  # at s = 0.5 the power curve is the largest term


def test_nothing_allowed_gives_no_energy_figure():
    t = table([100.0], [10.0], [900.0], [2.0], mast=[30.0])
    first, second = answer.answer_sentences(t, model.Economics(), model.Uncertainty())
    assert first.startswith("None of the options is allowed here")
    assert "kWh" not in second


def test_summary_opens_with_the_answer():
    """The summary's first section is the answer, in exactly two paragraphs of one sentence
    each, and its numbers are the table's."""
    ev = pipeline.evaluate(sitefile.load(DEMO))
    s = build_summary(ev, generated_at="2026-03-04T05:06:07Z", with_charts=False)
    first = s.sections[0]
    assert first.key == "answer" and first.number == "1"
    texts = [b.text for b in first.blocks]
    assert len(texts) == 2
    assert tuple(texts) == answer.answer_for(ev)
    lead = ev.table[~ev.table["excluded"]]
    assert any(f"{r['turbine_id']} at {r['position_id']}" in texts[0] for _, r in lead.iterrows())


def test_measured_at_the_leading_position_names_the_next_term_not_measuring_there_again():
    """An invented case: the climate was measured at p0, the leading option's position. With
    s = 2.5 the terms are (hand calculation) building model 0.30, transfer 0.15, long-term
    0.125, power curve 0.08, data 0.075, year-to-year 0.05; the record stands in for the first
    two, so the long-term correction (0.125) is named and no new hub measurement is advised."""
    u = model.Uncertainty(speed_data=0.03, speed_long_term=0.05, speed_transfer=0.06,
                          speed_building_model=0.12, energy_power_curve=0.08,
                          interannual_speed=0.02)
    t = table([3000.0, -100.0], [11.0, 25.0], [900.0, 500.0], [2.5, 2.5])
    _, second = answer.answer_sentences(t, model.Economics(), u, measured_at_position="p0",
                                        measured_height_m=16.0)
    assert "the wind was measured at p0 at 16 m" in second
    assert "already stands in for the building-flow model and the transfer" in second
    assert "the long-term correction (±12% of the energy)" in second
    assert "hub position" not in second and "measure the wind" not in second
    # Measured elsewhere (p1): the leading option p0 still gets the hub-position advice.
    _, other = answer.answer_sentences(t, model.Economics(), u, measured_at_position="p1")
    assert "building-flow model (±30% of the energy)" in other and "hub position" in other
    # With a tight long-term term the power curve (0.08) is next after the covered ones.
    u2 = model.Uncertainty(speed_data=0.03, speed_long_term=0.02, speed_transfer=0.06,
                           speed_building_model=0.12, energy_power_curve=0.08,
                           interannual_speed=0.02)
    _, pc = answer.answer_sentences(t, model.Economics(), u2, measured_at_position="p0")
    assert "the power curve (±8% of the energy)" in pc and "IEC 61400-12-1" in pc
    # The data term next: the advice is to check the logger there, not to log anew on site.
    u3 = model.Uncertainty(speed_data=0.05, speed_long_term=0.02, speed_transfer=0.06,
                           speed_building_model=0.12, energy_power_curve=0.08,
                           interannual_speed=0.02)
    _, data = answer.answer_sentences(t, model.Economics(), u3, measured_at_position="p0")
    assert "the wind data (±12%" in data and answer.MEASURED_DATA_NEXT in data
    assert "log a calibrated anemometer on site" not in data


def test_answer_for_a_position_measured_climate_at_the_leading_option():
    """End to end on an invented roof: the climate measured at 'logger' (16 m), the only
    position, leads; the answer says what the record covers and does not send the assessor
    back to measure at that hub."""
    import dataclasses
    clim = model.WindClimate(height_m=16.0, roughness_m=0.5, frequency=(0.5, 0.5),
                             weibull_k=(2.0, 2.0), weibull_c_ms=(5.0, 6.0),
                             measured_at="position", position_id="logger",
                             turbulence_intensity=(0.21, 0.18))
    v = tuple(float(x) for x in range(26))
    p = tuple(min(1000.0, 0.5 * 1.225 * 3.14 * 0.3 * x ** 3) if x >= 3 else 0.0 for x in v)
    turb = model.Turbine("t", "test 1 kW", "horizontal", 1000.0, v, p, 3.0, 10.0, 25.0,
                         rotor_diameter_m=2.0)
    a = model.Assessment(
        site=model.Site(name="invented roof", terrain_roughness_m=0.5), climate=clim,
        buildings=(model.Building("b", 0.0, 0.0, 30.0, 15.0, 12.0, orientation_deg=90.0),),
        positions=(model.Position("logger", "roof", 5.0, 2.0, 4.0, building_id="b"),),
        turbines=(turb,))
    a = dataclasses.replace(a, ranking=model.RankingSettings(**OFF))
    ev = pipeline.evaluate(a)
    assert ev.table.iloc[0]["position_id"] == "logger" and not ev.table.iloc[0]["excluded"]
    _, second = answer.answer_for(ev)
    assert "the wind was measured at logger at 16 m" in second
    assert "hub position" not in second
