"""Local rule sets: loading with clear messages, met/broken per position; certification; vibration."""
import json
import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from engine.chain import neighbours, rules
from engine.core import model
from engine.core.errors import InputError
from engine.energy import uncertainty

EXAMPLE = Path(__file__).resolve().parents[2] / "demo_sites" / "rules" / "example_borough.json"


def test_example_rule_set_loads():
    """The example rule set file is valid and names its rules."""
    name, note, rs = rules.load_rule_set(EXAMPLE)
    assert name and "local planning authority" in note
    assert {r.id for r in rs} >= {"tip-above-roof", "topple"}


def test_broken_rule_is_named_in_the_message():
    """A bad limit and an unknown kind are reported naming the rule by id."""
    text = json.dumps({"name": "x", "rules": [
        {"id": "area", "kind": "swept_area_max_m2", "limit": -2},
        {"id": "tip", "kind": "tip_taller_than", "limit": 3}]})
    with pytest.raises(InputError) as err:
        rules.load_rule_set(text)
    msg = str(err.value)
    assert "rules[0] (area).limit" in msg and "'area'" in msg
    assert "rules[1] (tip).kind" in msg and "tip_taller_than" in msg


def test_bad_json_and_missing_file_get_clear_messages():
    with pytest.raises(InputError, match="line 1"):
        rules.load_rule_set("{not json")
    with pytest.raises(InputError, match="cannot read"):
        rules.load_rule_set("/nonexistent/rules.json")


def _assessment(rule_list, boundary=((-20, 20, 20, -20), (-20, -20, 20, 20))):
    site = model.Site("s")
    clim = model.WindClimate(10.0, 0.03, (1.0,), (2.0,), (6.0,))
    b = model.Building("B", 0.0, 0.0, 10.0, 10.0, 8.0)
    pos = (model.Position("roof1", "roof", 0.0, 0.0, 2.0, building_id="B"),
           model.Position("mast1", "mast", 15.0, 0.0, 9.0))
    t = model.Turbine("t", "t", "horizontal", 1000.0, (0.0, 3.0, 11.0, 20.0),
                      (0.0, 0.0, 1000.0, 1000.0), 3.0, 11.0, 20.0, rotor_diameter_m=2.0)
    rec = (model.Receptor("house", 15.0, 30.0, 4.0),)
    consent = model.ConsentSettings(rules=tuple(rule_list), boundary_x_m=boundary[0],
                                    boundary_y_m=boundary[1])
    return model.Assessment(site, clim, (b,), pos, (t,), receptors=rec, consent=consent)


def test_met_and_broken_per_position():
    """Hand geometry: roof tip 2 + 1 = 3 m above the roof; mast tip 9 + 1 = 10 m; mast is 5 m
    from the boundary at x = 20 and 30 m from the house, 3.0 tip heights."""
    rs = [model.SitingRule("roof", "tip_above_roof_max_m", 2.5),
          model.SitingRule("edge", "boundary_distance_min_m", 6.0),
          model.SitingRule("home", "dwelling_distance_min_tip_multiple", 2.0),
          model.SitingRule("fall", "topple_distance_min_tip_multiple", 1.0)]
    cols = rules.rule_columns(_assessment(rs))
    roof, mast = 0, 1
    assert cols["rules_broken"][roof] == ["roof"]
    assert cols["rule_results"][mast]["roof"].startswith("not applicable")
    assert "edge" in cols["rules_broken"][mast]          # 5 m < 6 m
    assert "home" in cols["rules_met"][mast]             # 30 / 10 = 3 >= 2
    assert "fall" not in cols["rules_met"][mast]         # min(5, 30) / 10 = 0.5 < 1
    m = rules.rule_metrics(_assessment(rs))
    assert m["boundary_distance_min_m"][mast, 0] == pytest.approx(5.0)
    assert m["dwelling_distance_min_tip_multiple"][mast, 0] == pytest.approx(3.0)


def test_outside_the_boundary_is_negative_and_no_boundary_not_checked():
    """A mast outside the boundary has a negative distance; without a boundary: not checked."""
    rs = [model.SitingRule("edge", "boundary_distance_min_m", 1.0)]
    a = _assessment(rs, boundary=((-10, 10, 10, -10), (-10, -10, 10, 10)))
    assert rules.rule_metrics(a)["boundary_distance_min_m"][1, 0] == pytest.approx(-5.0)
    none = rules.rule_columns(_assessment(rs, boundary=((), ())))
    assert none["rule_results"][0]["edge"].startswith("not checked")


def test_never_says_permitted():
    """The rules caution defers to the local planning authority and never says 'permitted'
    of a position."""
    assert "local planning authority" in rules.CAUTION
    assert "does not say a position is permitted" in rules.CAUTION


def test_uncertified_curve_widens_p90():
    """σ_E = √((sσ_V)² + u_PC²): P90 with u_PC 0.08 re-derived with 0.15 equals the direct
    P50 exp(-z √(σ_E² - 0.08² + 0.15²)) (engine.energy.uncertainty's model)."""
    z = uncertainty.exceedance_z(90)
    sig = math.sqrt(0.1 ** 2 + 0.08 ** 2)
    p90 = 1000.0 * math.exp(-z * sig)
    wide = neighbours.widen_uncertified([1000.0, 1000.0], [p90, p90], 90, [False, True], 0.15, 0.08)
    assert wide[0] == pytest.approx(1000.0 * math.exp(-z * math.sqrt(0.1 ** 2 + 0.15 ** 2)))
    assert wide[1] == pytest.approx(p90) and wide[0] < p90


def test_certified_needs_standard_and_body():
    base = _assessment([]).turbines[0]
    with pytest.raises(InputError, match="test_standard"):
        replace(base, certified=True)
    ok = replace(base, certified=True, test_standard="IEC 61400-2", test_body="Body X")
    assert ok.certified


def test_vibration_caution_defers_to_structural_engineer():
    """1P = λ v / (2π R): λ 6, v 3..11 m/s, R 1 m gives 2.9..10.5 Hz; a 5-8 Hz structure overlaps."""
    t = _assessment([]).turbines[0]
    lo, hi, est = neighbours.rotor_frequency_hz(t)
    assert lo == pytest.approx(6 * 3 / (2 * math.pi)) and hi == pytest.approx(6 * 11 / (2 * math.pi))
    assert est
    text = neighbours.vibration_text(t, (5.0, 8.0))
    assert "OVERLAPS" in text and "structural engineer" in text


DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


def test_cli_rank_with_rules(tmp_path, capsys):
    """``rank --rules`` shows met/broken per position in the JSON; a broken rule file exits 2
    with a message naming the rule."""
    from engine.cli import main
    assert main(["rank", str(DEMO), "--rules", str(EXAMPLE), "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    row = doc["positions"][0]
    assert set(row["rule_results"]) == {r.id for r in rules.load_rule_set(EXAMPLE)[2]}
    assert all(v.split(":")[0] in ("met", "broken") or v.startswith("not ")
               for v in row["rule_results"].values())
    assert "permitted" not in json.dumps(doc)
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps({"rules": [{"id": "area", "kind": "swept_area_max_m2",
                                          "limit": "big"}]}), encoding="utf-8")
    assert main(["rank", str(DEMO), "--rules", str(bad)]) == 2
    assert "rules[0] (area).limit" in capsys.readouterr().err


def test_every_exceedance_column_widens_alike():
    """An uncertified curve widens every P75/P90 column (life average and one year) by the
    same variance: σ'² - σ² = u'² - u_PC², with P_X = P50 exp(-z_X σ) (the log-normal form of
    engine.energy.uncertainty) and z_X from scipy's normal quantile (independent reference)."""
    from scipy.stats import norm
    from engine.chain import pipeline
    base = _assessment([])
    tested = replace(base.turbines[0], certified=True, test_standard="IEC 61400-12-1",
                     test_body="Body X")
    cert = pipeline.evaluate(replace(base, turbines=(tested,))).table.sort_values("position_id")
    unc = pipeline.evaluate(base).table.sort_values("position_id")
    u_pc = base.uncertainty.energy_power_curve
    u_wide = base.consent.uncertified_curve_uncertainty
    assert u_wide > u_pc  # otherwise nothing widens and the test below could not fail
    for col, level in neighbours.WIDENED_COLUMNS.items():
        z = norm.ppf(level / 100.0)
        s_c = np.log(cert["p50_aep_kwh"].to_numpy() / cert[col].to_numpy()) / z
        s_u = np.log(unc["p50_aep_kwh"].to_numpy() / unc[col].to_numpy()) / z
        assert s_u ** 2 - s_c ** 2 == pytest.approx(np.full(2, u_wide ** 2 - u_pc ** 2),
                                                    rel=1e-9), col
    assert np.allclose(unc["p90_aep_kwh"], unc["p90_life_aep_kwh"])
    assert (unc["p90_one_year_aep_kwh"] <= unc["p90_life_aep_kwh"] + 1e-9).all()
