"""The Results charts served from the content-keyed cache after a what-if are the charts drawn
afresh for the changed site file (the cache may skip work, never show a stale chart)."""
from __future__ import annotations

import json
from pathlib import Path

import pytest

from dashboard import cache
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
KINDS = ("plan", "bars", "rose", "dist", "profile", "curve", "monthly")


def _texts():
    base = json.loads(DEMO.read_text(encoding="utf-8"))
    mast = json.loads(json.dumps(base))
    mast["positions"][0]["mast_height_m"] += 1.5          # an energy what-if at one position
    price = json.loads(json.dumps(base))
    price["economics"]["tariff_per_kwh"] *= 3.0            # a money what-if
    return [sitefile.dumps(sitefile.assessment_from_dict(d)) for d in (base, mast, price)]


def _clear():
    for fn in (cache.evaluate_text, cache._energy_stage, cache.chart_keys, cache._chart_spec):
        fn.clear()


@pytest.fixture(scope="module")
def texts():
    return _texts()


@pytest.mark.parametrize("kind", KINDS)
def test_chart_after_a_what_if_equals_a_fresh_one(texts, kind):
    """For each what-if (mast at one position, import price), every chart of the detail and
    the plan, for the changed position and another one, equals the one drawn with empty
    caches; the rose and the other position's speed distribution are served from the first
    drawing (same content key), not drawn again."""
    base, *changed = texts
    a = sitefile.loads(base)
    here, other = a.positions[0].id, a.positions[-1].id
    turbine = a.turbines[0].id
    for text in changed:
        for pid in (here, other):
            _clear()
            fresh = cache.chart_spec(kind, text, "m/s", "m", pid, turbine)
            _clear()
            cache.chart_spec(kind, base, "m/s", "m", pid, turbine)
            served = cache.chart_spec(kind, text, "m/s", "m", pid, turbine)
            assert served == fresh, (kind, pid)
    keys = [cache.chart_keys(t) for t in texts]
    assert keys[0]["climate"] == keys[1]["climate"] == keys[2]["climate"]
    assert keys[0]["hub"][other] == keys[1]["hub"][other]  # the mast moved elsewhere
    assert keys[0]["hub"][here] != keys[1]["hub"][here]    # its own hub climate changed
    assert keys[0]["energy"] != keys[1]["energy"] and keys[0]["energy"] == keys[2]["energy"]
