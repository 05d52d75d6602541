"""Verdicts per option, the site headline, viability-first ranking and the top table."""
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from engine.chain import pipeline, ranking, verdict
from engine.core import model
from engine.io import sitefile

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"
OFF = dict(require_clear_of_turbulence_zone=False, apply_noise_limits=False,
           max_mast_height_m=15.0)


def money_table(npv, npv_alone, payback, saving, mast=None):
    """Rows with the columns the verdict reads (structure only; values chosen per test)."""
    n = len(npv)
    return pd.DataFrame({
        "position_id": [f"p{i}" for i in range(n)], "turbine_id": ["t"] * n,
        "mast_height_m": mast or [6.0] * n, "aep_kwh": np.linspace(3000, 1000, n),
        "npv": npv, "npv_without_support": npv_alone, "payback_years": payback,
        "first_year_saving": saving, "installed_cost": [10000.0] * n,
        "lcoe_per_kwh": [0.3] * n, "flags": [[] for _ in range(n)],
    })


def verdicts(t, e=model.Economics(), **settings):
    ranked = ranking.rank(t, model.RankingSettings(**{**OFF, **settings}))
    return verdict.add_verdicts(ranked, e)


def test_each_verdict_from_its_money_and_constraints():
    """NPV >= 0 alone -> pays back; only with support -> support; else does not; a mast over
    the limit -> not allowed here, with the constraint first in the reason (definitions)."""
    t = money_table([500.0, 200.0, -4000.0, 900.0], [500.0, -300.0, -4000.0, 900.0],
                    [12.0, 18.0, 34.0, 9.0], [800.0, 600.0, 300.0, 900.0],
                    mast=[6.0, 6.0, 6.0, 20.0])
    out = verdicts(t).set_index("position_id")
    assert out.loc["p0", "verdict"] == "pays back within its life"
    assert out.loc["p1", "verdict"] == "pays back only with support"
    assert out.loc["p2", "verdict"] == "does not pay back"
    assert "payback 34.0 years against a 20-year life" in out.loc["p2", "verdict_reason"]
    assert out.loc["p3", "verdict"] == "not allowed here"
    assert out.loc["p3", "verdict_reason"].startswith("mast 20 m taller than the 15 m limit")
    assert set(out["verdict"]) <= set(verdict.VERDICTS)


def test_headline_when_nothing_pays_back_says_so_first():
    """No allowed option pays back: the first sentence says so and names the highest NPV."""
    t = money_table([-9000.0, -5000.0, -7000.0], [-9000.0, -5000.0, -7000.0],
                    [np.inf, 40.0, 60.0], [-20.0, 400.0, 300.0])
    text = verdict.headline(verdicts(t), model.Economics())
    first = text.split("; ")[0]
    assert first == "None of the options pays back at these prices"
    assert "the least bad is t at p1" in text
    assert "recommend" not in text.lower()
    # The leading option by energy (p0) is named with its own verdict.
    assert "The option ranked first, t at p0, does not pay back either" in text


def test_headline_leads_with_the_leading_options_verdict():
    """The first allowed option's verdict comes first; one that pays back is named after."""
    t = money_table([-2000.0, 3000.0], [-2000.0, 3000.0], [25.0, 11.0], [500.0, 900.0])
    text = verdict.headline(verdicts(t), model.Economics())
    assert text.startswith("t at p0 does not pay back")
    assert "t at p1 pays back within its life" in text
    t2 = money_table([3000.0, -100.0], [3000.0, -100.0], [11.0, 25.0], [900.0, 500.0])
    assert verdict.headline(verdicts(t2), model.Economics()).startswith(
        "t at p0 pays back within its life: NPV +3,000 EUR")


def test_headline_when_nothing_is_allowed():
    t = money_table([100.0], [100.0], [10.0], [900.0], mast=[30.0])
    text = verdict.headline(verdicts(t), model.Economics())
    assert text.startswith("None of the options is allowed here")


def test_viability_first_and_npv_objective():
    """viability_first puts paying options first whatever their energy; npv sorts high first."""
    t = money_table([-2000.0, 3000.0, 1000.0], [-2000.0, 3000.0, -50.0], [25.0, 11.0, 19.0],
                    [500.0, 900.0, 700.0])
    by_energy = list(verdicts(t)["position_id"])
    assert by_energy == ["p0", "p1", "p2"]
    viable = list(verdicts(t, viability_first=True)["position_id"])
    assert viable == ["p1", "p2", "p0"]
    assert list(verdicts(t, objective="npv")["position_id"]) == ["p1", "p2", "p0"]


def test_top_rows_never_show_an_excluded_row_without_reason():
    """Allowed rows first; an excluded row appears only to fill up, with its reason."""
    t = money_table([-1.0, -2.0, -3.0], [-1.0, -2.0, -3.0], [30.0, 40.0, 50.0],
                    [300.0, 200.0, 100.0], mast=[6.0, 30.0, 40.0])
    top = verdict.top_rows(verdicts(t), n=5)
    assert list(top["position_id"]) == ["p0", "p1", "p2"]
    out = top[top["verdict"] == "not allowed here"]
    assert len(out) == 2 and all(len(r) > 0 and "taller than" in r for r in out["verdict_reason"])
    assert list(verdict.top_rows(verdicts(t), n=1)["position_id"]) == ["p0"]


@pytest.fixture(scope="module")
def demo():
    return pipeline.evaluate(sitefile.load(DEMO))


def test_demo_headline_states_the_leading_verdict(demo):
    """On the demo at its own prices the headline gives the leading option's verdict; where
    nothing allowed pays back, its first sentence says so (the table decides, not the test)."""
    t = demo.table
    text = verdict.headline_for(demo)
    allowed = t[t["verdict"] != "not allowed here"]
    lead = allowed.iloc[0]
    paying = allowed["verdict"].isin(verdict.VERDICTS[:2]).any()
    first = text.split(". ")[0]
    if not paying:
        assert first.startswith("None of the options pays back at these prices; the least bad")
        least = allowed.loc[allowed["npv"].idxmax()]
        assert f"{least['turbine_id']} at {least['position_id']}" in first
    else:
        assert first.startswith(f"{lead['turbine_id']} at {lead['position_id']} {lead['verdict']}")
    assert "recommend" not in text.lower()
    # Every row has a verdict and a reason; excluded rows say why.
    assert t["verdict"].isin(verdict.VERDICTS).all()
    assert (t["verdict_reason"].str.len() > 0).all()
    assert (t.loc[t["excluded"], "verdict"] == "not allowed here").all()


def test_demo_money_bounds(demo):
    """Energy used on site <= energy generated; shares in [0, 1]; cost parts add up."""
    t = demo.table
    assert np.all(t["self_consumed_kwh"] <= t["aep_kwh"] + 1e-9)
    assert np.all((t["self_consumed_share"] >= 0) & (t["self_consumed_share"] <= 1))
    assert np.all(t["exported_kwh"] >= -1e-9)
    parts = t[["cost_turbine", "cost_mast", "cost_structure", "cost_connection"]].sum(axis=1)
    assert np.allclose(parts, t["installed_cost"])
    # Payback within the life implies a non-negative undiscounted sum; NPV >= 0 rows pay back.
    life = demo.assessment.economics.lifetime_years
    assert np.all(~(t["npv_without_support"] >= 0) | (t["payback_years"] <= life + 1e-9))
