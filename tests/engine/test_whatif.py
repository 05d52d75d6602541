"""What would change the answer: break-even speed and mast, NPV sensitivity."""
import dataclasses
from pathlib import Path

import numpy as np
import pytest

from engine.chain import pipeline, whatif
from engine.io import sitefile

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


@pytest.fixture(scope="module")
def dear():
    """The demo's site at invented high prices (so that a break-even speed exists)."""
    a = sitefile.load(DEMO)
    e = dataclasses.replace(a.economics, tariff_per_kwh=0.6, export_price_per_kwh=0.3)
    return pipeline.evaluate(dataclasses.replace(a, economics=e))


def test_break_even_speed_gives_zero_npv(dear):
    """NPV at the break-even mean speed is zero within rounding (definition of break-even)."""
    lead = dear.table[~dear.table["excluded"]].iloc[0]
    v = whatif.break_even_speed_ms(dear, lead["position_id"], lead["turbine_id"])
    assert np.isfinite(v) and v > lead["mean_speed_ms"]  # it does not pay back at its speed
    # The whole chain again with the site's wind scaled to that speed (every model in the
    # chain is linear in the speed scale): the option's NPV is zero and its speed is v.
    a = dear.assessment
    r = v / lead["mean_speed_ms"]
    windier = dataclasses.replace(a.climate, weibull_c_ms=tuple(c * r for c in
                                                                a.climate.weibull_c_ms))
    table = pipeline.evaluate(dataclasses.replace(a, climate=windier)).table
    row = table[(table["position_id"] == lead["position_id"])
                & (table["turbine_id"] == lead["turbine_id"])].iloc[0]
    assert row["mean_speed_ms"] == pytest.approx(v, rel=1e-9)
    assert abs(row["npv"]) < 1.0


def test_mast_search_matches_the_chain(dear):
    """The NPV at a taller mast equals a full re-run of the chain with that mast (one chain)."""
    lead = dear.table[~dear.table["excluded"]].iloc[0]
    h, frame = whatif.mast_height_to_pay_back_m(dear, lead["position_id"], lead["turbine_id"])
    a = dear.assessment
    taller = float(frame["mast_height_m"].iloc[2])
    pos = tuple(dataclasses.replace(p, mast_height_m=taller) if p.id == lead["position_id"]
                else p for p in a.positions)
    rerun = pipeline.evaluate(dataclasses.replace(a, positions=pos)).table
    row = rerun[(rerun["position_id"] == lead["position_id"])
                & (rerun["turbine_id"] == lead["turbine_id"])].iloc[0]
    assert frame["npv"].iloc[2] == pytest.approx(row["npv"], rel=1e-9, abs=1e-6)
    if np.isfinite(h):
        at = frame.set_index("mast_height_m")["npv"]
        assert at[h] >= 0 and (at[at.index < h] < 0).all()


def test_sensitivity_directions(dear):
    """NPV rises with speed and price, falls with cost and downtime (monotone economics);
    cost ±20 % moves NPV by exactly ±20 % of the installed cost (NPV is linear in it)."""
    lead = dear.table[~dear.table["excluded"]].iloc[0]
    s = whatif.npv_sensitivity(dear, lead["position_id"], lead["turbine_id"]).set_index("input")
    base = s["npv_base"].iloc[0]
    assert base == pytest.approx(lead["npv"], rel=1e-9)
    assert s.loc["mean wind speed", "npv_low"] < base < s.loc["mean wind speed", "npv_high"]
    assert s.loc["energy prices", "npv_low"] < base < s.loc["energy prices", "npv_high"]
    assert s.loc["installed cost", "npv_low"] - base == pytest.approx(0.2 * lead["installed_cost"])
    assert s.loc["downtime", "npv_low"] > base > s.loc["downtime", "npv_high"]


def test_what_would_change_table(dear):
    """One row per leading option with its break-even price matching the table's."""
    w = whatif.what_would_change(dear, n=2)
    assert len(w) == 2
    t = dear.table.set_index(["position_id", "turbine_id"])
    for r in w.to_dict("records"):
        assert r["break_even_import_price"] == pytest.approx(
            t.loc[(r["position_id"], r["turbine_id"]), "break_even_import_price"])
        assert isinstance(r["mast_within_limit"], bool)
