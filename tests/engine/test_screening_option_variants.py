"""Screening model options (engine.screening.options): checks, variants, shares, tiles."""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from engine import screening
from engine.core.errors import InputError
from engine.io import sitefile
from engine.screening import options as so

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
DISTRICT = ROOT / "demo_sites" / "district_1000.csv"


@pytest.fixture(scope="module")
def ctx():
    return screening.context_from_assessment(sitefile.load(DEMO))


@pytest.fixture(scope="module")
def small(tmp_path_factory):
    path = tmp_path_factory.mktemp("opt") / "b.csv"
    pd.read_csv(DISTRICT, dtype={"id": str}, keep_default_na=False).iloc[:150].to_csv(
        path, index=False)
    return path


def test_options_applied_and_none_keeps_the_defaults(ctx):
    same = so.with_options(ctx, so.ScreeningOptions())
    assert same.transfer == ctx.transfer and same.settings == ctx.settings
    got = so.with_options(ctx, so.ScreeningOptions(sector_morphometry=True,
                                                   sector_fetch_m=400.0, upwind_shelter=False))
    assert got.transfer.sector_morphometry and got.transfer.sector_fetch_m == 400.0
    assert got.settings.upwind_shelter is False


def test_every_bad_option_named_at_once(ctx):
    with pytest.raises(InputError) as e:
        so.with_options(ctx, so.ScreeningOptions(sector_fetch_m=10.0, tile_m=500.0))
    where = [w for w, _ in e.value.problems]
    assert where == ["sector_fetch_m", "tile_m"]
    with pytest.raises(InputError) as e:
        so.with_options(ctx, so.ScreeningOptions(sector_morphometry=True, sector_fetch_m=300.0,
                                                 tile_m=float("nan")))
    (w, m), = e.value.problems
    assert w == "tile_m" and "must be at least the halo" in m


def test_variants_drop_one_option_at_a_time(ctx):
    on = so.ScreeningOptions(sector_morphometry=True, upwind_shelter=True, tile_m=900.0)
    labels = [(lab, o.sector_morphometry, o.upwind_shelter, o.tile_m)
              for lab, o in so.option_variants(ctx, on)]
    assert labels == [("as chosen", True, True, 900.0),
                      ("without the upwind wakes", True, False, 900.0),
                      ("surroundings averaged over all directions, no wakes", False, False,
                       None)]
    assert len(so.option_variants(ctx, so.ScreeningOptions(sector_morphometry=False))) == 1


def test_tiled_equals_whole_and_wakes_never_speed_up(ctx, small):
    """Tiles of two sizes give the whole table's classes and, to rounding, its yields; the
    wakes' speed factor is at most 1 (a wake only takes momentum out: continuity), so no
    mean hub speed rises with them."""
    base = so.ScreeningOptions(sector_morphometry=True, sector_fetch_m=300.0)
    whole = so.screen_with_options(small, ctx, base).table.set_index("id")
    for tile in (300.0, 1000.0):
        t = so.screen_with_options(small, ctx, so.ScreeningOptions(
            sector_morphometry=True, sector_fetch_m=300.0, tile_m=tile)).table.set_index("id")
        t = t.reindex(whole.index)
        assert (t["suitability"] == whole["suitability"]).all()
        assert np.allclose(t["best_aep_kwh"], whole["best_aep_kwh"], rtol=1e-9, equal_nan=True)
    dry = so.screen_with_options(small, ctx, so.ScreeningOptions(
        sector_morphometry=True, sector_fetch_m=300.0, upwind_shelter=False)).table
    dry = dry.set_index("id").reindex(whole.index)
    assert (whole["mean_speed_ms"] <= dry["mean_speed_ms"] + 1e-9).all()
    assert (whole["mean_speed_ms"] >= 0).all()


def test_class_shares_count_the_table():
    t = pd.DataFrame({"suitability": ["worth a visit", "unsuitable", "unsuitable", "marginal"]})
    got = so.class_shares(t)
    # counted by hand: 1, 2 and 1 of 4
    assert got == {"exceptional: measure first": 0.0, "worth a visit": 0.25, "marginal": 0.25,
                   "unsuitable": 0.5}
    assert so.class_shares(t.iloc[:0]) == dict.fromkeys(screening.CLASSES, 0.0)
