"""Ranking by objective with constraints; every exclusion carries its reason."""
import numpy as np
import pandas as pd
import pytest

from engine.core import model
from engine.chain import pipeline
from engine.chain import ranking
from engine.io import sitefile
from pathlib import Path

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


def table():
    """Four rows with the columns the ranking reads (structure only; the values are arbitrary)."""
    return pd.DataFrame({
        "position_id": ["a", "b", "c", "d"], "turbine_id": ["t", "t", "t", "t"],
        "mast_height_m": [6.0, 20.0, 6.0, 6.0],
        "aep_kwh": [900.0, 1500.0, 1200.0, 300.0],
        "p90_aep_kwh": [700.0, 1000.0, 800.0, 250.0],
        "lcoe_per_kwh": [0.5, 0.3, 0.4, np.inf],
        "payback_years": [20.0, 12.0, np.inf, 30.0],
        "in_turbulence_zone": [False, False, True, False],
        "noise_exceeds_limit": [False, False, False, True],
        "noise_margin_db": [5.0, 3.0, 2.0, -4.25],
        "noise_worst_receptor": ["w", "w", "w", "w"],
        "thrust_extreme_n": [1000.0, 1000.0, 1000.0, 1000.0],
        "flags": [[], [], [], []],
    })


def test_objectives_order_eligible_rows():
    """net_aep and p90_aep sort high first; lcoe and payback low first; non-finite last."""
    off = dict(require_clear_of_turbulence_zone=False, apply_noise_limits=False,
               max_mast_height_m=60.0)
    order = {obj: list(ranking.rank(table(), model.RankingSettings(objective=obj, **off))
                       ["position_id"]) for obj in model.OBJECTIVES}
    assert order["net_aep"] == ["b", "c", "a", "d"]
    assert order["p90_aep"] == ["b", "c", "a", "d"]
    assert order["lcoe"] == ["b", "c", "a", "d"]
    assert order["payback"] == ["b", "a", "d", "c"]


def test_every_exclusion_has_a_reason_with_numbers():
    """Mast, turbulence zone, noise and load limits each exclude with a reason naming the value."""
    s = model.RankingSettings(max_mast_height_m=15.0, max_thrust_n=900.0)
    out = ranking.rank(table(), s).set_index("position_id")
    assert out["excluded"].all()
    assert any("mast 20 m taller than the 15 m limit" in f for f in out.loc["b", "flags"])
    assert any("high-turbulence zone" in f for f in out.loc["c", "flags"])
    assert any("noise 4.2 dB(A) above the limit at w" in f for f in out.loc["d", "flags"])
    assert all(any("extreme thrust 1000 N" in f for f in fl) for fl in out["flags"])


def test_rotor_check_takes_precedence_over_hub_flag():
    """With a per-turbine rotor check the hub flag is not used, and the needed mast is named."""
    t = table()
    t["rotor_in_turbulence_zone"] = [True, False, False, False]
    t["mast_to_clear_turbulence_m"] = [7.25, 3.0, 4.0, np.nan]
    s = model.RankingSettings(max_mast_height_m=60.0, apply_noise_limits=False)
    out = ranking.rank(t, s).set_index("position_id")
    assert any("a mast of at least 7.2 m clears it" in f for f in out.loc["a", "flags"])
    assert not out.loc["c", "excluded"]


def test_one_minimum_mast_and_one_recirculation_note_per_row():
    """A hub-only mast note from the building model gives way to the rotor-clear mast; the
    exclusion for recirculation replaces the zone's plain note (hand-made rows, common
    practice: one piece of advice per matter)."""
    t = table()
    t["rotor_in_turbulence_zone"] = [True, True, False, False]
    t["mast_to_clear_turbulence_m"] = [8.8, 9.0, 4.0, np.nan]
    t["in_recirculation_zone"] = [True, False, False, False]
    t["flags"] = [("in roof recirculation zone",
                   "a mast of 7.5 m puts the hub above the roof's high-turbulence zone"),
                  ("a mast of 7.0 m puts the hub above the roof's high-turbulence zone",),
                  (), ()]
    s = model.RankingSettings(max_mast_height_m=60.0, apply_noise_limits=False)
    out = ranking.rank(t, s).set_index("position_id")
    flags_a = out.loc["a", "flags"]
    masts = [f for f in flags_a if "a mast of" in f]
    assert masts == ["rotor in the roof's high-turbulence zone; a mast of at least 8.8 m "
                     "clears it with the whole rotor"]
    assert [f for f in flags_a if "recirculation" in f] == ["hub in a recirculation zone"]
    # without the rotor requirement the one mast note is still the rotor-clear one
    s2 = model.RankingSettings(max_mast_height_m=60.0, apply_noise_limits=False,
                               require_clear_of_turbulence_zone=False)
    out2 = ranking.rank(t, s2).set_index("position_id")
    assert [f for f in out2.loc["b", "flags"] if "a mast of" in f] == [
        "rotor in the roof's high-turbulence zone; a mast of at least 9.0 m clears it with "
        "the whole rotor"]


def test_excluded_rows_rank_after_eligible():
    """Excluded rows are kept, ranked after every eligible row."""
    out = ranking.rank(table(), model.RankingSettings())
    ex = out["excluded"].to_numpy()
    assert list(out["rank"]) == [1, 2, 3, 4]
    assert not np.any(ex[:-1] & ~ex[1:])  # never an eligible row after an excluded one
    assert set(out.loc[~out["excluded"], "position_id"]) == {"a"}


def test_demo_ranks_by_p90_with_all_fields():
    """On the demo, the p90 objective orders eligible rows by P90 and keeps the rank fields."""
    import dataclasses
    a = sitefile.load(DEMO)
    a = dataclasses.replace(a, ranking=model.RankingSettings(objective="p90_aep",
                                                             apply_noise_limits=False))
    t = pipeline.evaluate(a).table
    elig = t[~t["excluded"]]
    assert np.all(np.diff(elig["p90_aep_kwh"].to_numpy()) <= 1e-9)
    for col in ("rank", "position_id", "turbine_id", "p50_aep_kwh", "p90_aep_kwh",
                "lcoe_per_kwh", "payback_years", "thrust_extreme_n", "noise_db_at_receptors"):
        assert col in t.columns
    assert all(bool(f) for f in t.loc[t["excluded"], "flags"])
