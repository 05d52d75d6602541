"""The screening page's model options through Streamlit's AppTest: per-sector surroundings
and their fetch, the upwind wakes, tiles, their effect, and bad values named.

Check values come from the engine run beside the page (the page only arranges and calls):
its screening of the same table with the same options, and the shares counted from it.
"""
from __future__ import annotations

import re
from dataclasses import replace

import pandas as pd
import pytest

from engine import screening
from engine.io import sitefile
from engine.screening import options as so

from test_screening_page import DEMO, DISTRICT, _page, _screen, _texts

ROWS = 120


@pytest.fixture(scope="module")
def table_bytes() -> bytes:
    frame = pd.read_csv(DISTRICT, dtype={"id": str}, keep_default_na=False).iloc[:ROWS]
    return frame.to_csv(index=False).encode("utf-8")


@pytest.fixture(scope="module")
def ctx():
    return screening.context_from_assessment(sitefile.load(DEMO))


def _engine(table_bytes, ctx, tmp_path, options):
    path = tmp_path / "b.csv"
    path.write_bytes(table_bytes)
    return so.screen_with_options(path, ctx, options)


def _set(at, sectors=None, fetch=None, shelter=None, tiles=None, tile=None, effect=None):
    if sectors is not None:
        at.toggle(key="screening_sectors").set_value(sectors)
    if fetch is not None:
        at.number_input(key="screening_fetch|m").set_value(fetch)
    if shelter is not None:
        at.toggle(key="screening_shelter").set_value(shelter)
    if tiles is not None:
        at.toggle(key="screening_tiles").set_value(tiles)
    if tile is not None:
        at.number_input(key="screening_tile|m").set_value(tile)
    if effect is not None:
        at.checkbox(key="screening_show_effect").set_value(effect)
    return at


def _upload(at, data):
    at.file_uploader(key="screening_upload").upload("b.csv", data, "text/csv")
    return _screen(at)


def test_options_start_at_the_engine_defaults():
    at = _page()
    a = sitefile.load(DEMO)
    assert at.toggle(key="screening_sectors").value is a.transfer.sector_morphometry
    assert at.number_input(key="screening_fetch|m").value == a.transfer.sector_fetch_m
    assert at.toggle(key="screening_shelter").value is screening.ScreeningSettings().upwind_shelter
    assert at.toggle(key="screening_tiles").value is False  # the engine screens whole


def test_per_sector_with_wakes_shows_the_effect_with_and_without(table_bytes, ctx, tmp_path):
    """Per-sector surroundings and wakes on: the classes are the engine's for those options,
    and the effect table holds the shares of the engine's runs with the wakes, without them,
    and with neither."""
    at = _page()
    _set(at, sectors=True, fetch=250.0, shelter=True)
    _upload(at, table_bytes)
    assert not _texts(at, "error")
    chosen = so.ScreeningOptions(sector_morphometry=True, sector_fetch_m=250.0,
                                 upwind_shelter=True)
    res = _engine(table_bytes, ctx, tmp_path, chosen)
    page = at.session_state["screening_result"].table
    assert list(page["id"]) == list(res.table["id"])
    assert list(page["suitability"]) == list(res.table["suitability"])
    effect = at.session_state["screening_effect"]
    assert [e["model"] for e in effect] == ["as chosen", "without the upwind wakes",
                                            "surroundings averaged over all directions, no wakes"]
    runs = [res, _engine(table_bytes, ctx, tmp_path, replace(chosen, upwind_shelter=False)),
            _engine(table_bytes, ctx, tmp_path, so.ScreeningOptions(
                sector_morphometry=False, upwind_shelter=False))]
    for row, run in zip(effect, runs):
        want = so.class_shares(run.table)
        assert {c: row[c] for c in screening.CLASSES} == pytest.approx(want, abs=1e-12)
        assert sum(want.values()) == pytest.approx(1.0)  # every building in one class
    # Wakes only slow the wind (a speed factor of at most 1): no building's mean hub speed
    # is higher with them than without (continuity; the shelter model's bound).
    by_id = runs[1].table.set_index("id")["mean_speed_ms"]
    assert (res.table["mean_speed_ms"].to_numpy()
            <= by_id.reindex(res.table["id"]).to_numpy() + 1e-9).all()
    shown = next(d.value for d in at.dataframe if "model" in d.value.columns)
    assert list(shown["model"]) == [e["model"] for e in effect]


def test_tiles_give_the_whole_tables_classes(table_bytes, ctx, tmp_path):
    """In tiles of 600 m with a 300 m fetch: the same classes as the whole table screened."""
    at = _page()
    _set(at, sectors=True, fetch=300.0, tiles=True, tile=600.0, effect=False)
    _upload(at, table_bytes)
    assert not _texts(at, "error")
    whole = _engine(table_bytes, ctx, tmp_path, so.ScreeningOptions(
        sector_morphometry=True, sector_fetch_m=300.0))
    page = at.session_state["screening_result"].table
    assert sorted(zip(page["id"], page["suitability"])) == sorted(
        zip(whole.table["id"], whole.table["suitability"]))
    assert at.session_state["screening_effect"] is None


@pytest.mark.parametrize("kw, where, text", [
    ({"sectors": True, "fetch": 20.0}, "Upwind fetch", "must be"),
    ({"sectors": True, "fetch": 300.0, "tiles": True, "tile": 100.0}, "Tile side",
     "must be at least the halo"),
    ({"sectors": False, "tiles": True, "tile": 2000.0}, "Tile side",
     "needs per-sector surroundings on"),
])
def test_bad_option_values_are_named_and_nothing_is_screened(table_bytes, kw, where, text):
    at = _page()
    draft = at.session_state["draft"]
    _set(at, **kw)
    _upload(at, table_bytes)
    err = " ".join(_texts(at, "error"))
    assert re.search(rf"\*\*{re.escape(where)}\*\*: [^\n]*{re.escape(text)}", err), err
    assert at.session_state["screening_result"] is None
    assert at.session_state["draft"] == draft  # nothing entered is lost


def test_opening_a_building_screened_per_sector_says_why_not_and_keeps_the_draft(table_bytes):
    """A row screened with per-sector surroundings cannot be one building alone in detail:
    the page says so (the engine's message), keeps the working copy and saves no scenario."""
    at = _page()
    draft = at.session_state["draft"]
    _set(at, sectors=True, effect=False)
    _upload(at, table_bytes)
    at.button(key="screening_open").click().run()
    at.button(key="screening_open_yes").click().run()
    assert not at.exception, at.exception
    err = " ".join(_texts(at, "error"))
    assert "cannot be opened" in err and "neighbours by sector" in err
    assert at.session_state["draft"] == draft and not at.session_state["scenarios"]


def test_bad_options_in_feet_say_the_rule_is_in_metres_and_name_the_pages_field(table_bytes):
    """In feet the engine's rule (in metres) says so, and the tile's rule names the page's
    "Upwind fetch", not a site-file key."""
    at = _page()
    at.radio(key="length_unit").set_value("ft").run()
    at.toggle(key="screening_sectors").set_value(True)
    at.number_input(key="screening_tile|ft").set_value(100.0)
    at.toggle(key="screening_tiles").set_value(True)
    _upload(at, table_bytes)
    err = " ".join(_texts(at, "error"))
    assert "**Tile side**: must be at least the halo" in err, err
    assert "transfer.sector_fetch_m" not in err and "Upwind fetch" in err, err
    assert "(checked in metres)" in err, err
