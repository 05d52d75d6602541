"""A money or ranking change re-runs only the money step on the kept energy stage."""
import copy
import dataclasses
from pathlib import Path

import pandas as pd
import pytest

from engine.chain import pipeline
from engine.io import sitefile

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


@pytest.fixture(scope="module")
def demo():
    a = sitefile.load(DEMO)
    return a, pipeline.energy_stage(a)


def _money_change(a):
    e = dataclasses.replace(a.economics, tariff_per_kwh=a.economics.tariff_per_kwh * 4,
                            connection_cost=a.economics.connection_cost * 0.5)
    turbines = tuple(dataclasses.replace(t, installed_cost=t.installed_cost * 0.7)
                     for t in a.turbines)
    ranking = dataclasses.replace(a.ranking, objective="lcoe",
                                  apply_noise_limits=not a.ranking.apply_noise_limits)
    return dataclasses.replace(a, economics=e, turbines=turbines, ranking=ranking)


def test_priced_on_a_kept_stage_equals_the_whole_chain(demo):
    """Prices, costs and ranking settings changed: the same table as a fresh run of the
    whole chain, cell for cell (the money step is the one the chain itself calls)."""
    a, stage = demo
    b = _money_change(a)
    fast = pipeline.priced(b, stage)
    full = pipeline.evaluate(b)
    pd.testing.assert_frame_equal(fast.table, full.table)
    # and the change did change the money and the ranking, so the check has teeth
    before = pipeline.priced(a, stage).table
    assert not before["npv"].equals(fast.table["npv"])
    # the stage's own table is left as it was (a kept cache entry must not change)
    pd.testing.assert_frame_equal(stage.table, pipeline.energy_table(a, stage.climate))


@pytest.mark.parametrize("change", [
    lambda a: dataclasses.replace(a, positions=(dataclasses.replace(
        a.positions[0], mast_height_m=a.positions[0].mast_height_m + 1.0),) + a.positions[1:]),
    lambda a: dataclasses.replace(a, economics=dataclasses.replace(
        a.economics, lifetime_years=a.economics.lifetime_years + 5)),
    lambda a: dataclasses.replace(a, losses=dataclasses.replace(
        a.losses, availability=a.losses.availability + 0.02)),
])
def test_a_change_of_energy_refuses_the_kept_stage(demo, change):
    """Mast height, project life (the life-time P90 reads it) and losses change the energy:
    the kept stage is refused with a message instead of giving stale figures."""
    a, stage = demo
    b = change(a)
    assert pipeline.energy_key(b) != stage.key
    with pytest.raises(ValueError, match="energy_stage again"):
        pipeline.priced(b, stage)


def test_money_only_change_keeps_the_key(demo):
    a, stage = demo
    assert pipeline.energy_key(_money_change(a)) == stage.key


def test_kept_keys_follow_each_assessment_not_its_place_in_memory(demo):
    """The key is kept per assessment object: many changed copies made and dropped in turn
    (so their memory is reused) each get the key of their own content."""
    demo, _ = demo
    first = demo.positions[0].mast_height_m
    for mast in (3.0, 4.0, 5.0, 6.0, first) * 5:
        pos = tuple(dataclasses.replace(p, mast_height_m=mast) if i == 0 else p
                    for i, p in enumerate(demo.positions))
        changed = dataclasses.replace(demo, positions=pos)
        fresh = copy.deepcopy(changed)  # another object of the same content: worked afresh
        assert pipeline.energy_key(changed) == pipeline.energy_key(fresh)
        assert (pipeline.energy_key(changed) == pipeline.energy_key(demo)) == (mast == first)
        del changed, fresh
