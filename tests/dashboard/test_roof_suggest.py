"""Suggested roof positions on the layout step through Streamlit's AppTest: suggest, accept,
move and delete, with nothing already entered lost and no name used twice.

Editors are driven by assigning their edit state (``edited_rows``, ``added_rows``,
``deleted_rows``, cells named by column label), which is what the browser sends.
"""
from __future__ import annotations

import copy
import json
import re

import pytest

from engine.flow import roof_suggestions as rs
from engine.io import sitefile

from test_app import DEMO, _app, _go

LAYOUT = "steps/step_layout.py"


def _layout():
    return _go(_app(), LAYOUT)


def _key(at, name: str) -> str:
    return f"ed|{name}|{at.session_state['gen']}|m/s|m"


def _edit(at, name, edited=None, deleted=()):
    at.session_state[_key(at, name)] = {"edited_rows": edited or {}, "added_rows": [],
                                        "deleted_rows": list(deleted)}
    at.run()
    assert not at.exception, at.exception
    return at


def _suggest(at, building="mill"):
    at.selectbox(key="suggest_building").set_value(building).run()
    at.button(key="suggest_go").click().run()
    assert not at.exception, at.exception
    return at


def _text(at, kind) -> str:
    return " ".join(re.sub(r"\\(.)", r"\1", e.value).replace("\u200b", "")
                    for e in getattr(at, kind))


def test_suggestions_are_the_engines_and_accepting_adds_positions():
    """The table holds the engine's candidates; ticking two and accepting appends them as
    roof positions on that building, the positions already entered (one just edited) kept
    as they were."""
    at = _layout()
    _edit(at, "positions", {0: {"mast height (m)": 9.5}})
    before = copy.deepcopy(at.session_state["draft"]["positions"])
    assert before[0]["mast_height_m"] == 9.5
    _suggest(at, "mill")
    expect = rs.suggest_roof_positions(sitefile.load(DEMO), "mill")
    got = at.session_state["roof_suggestions"]["rows"]
    assert [r["id"] for r in got] == list(expect["id"])
    assert [r["mast_height_m"] for r in got] == list(expect["mast_height_m"])
    _edit(at, "roof_suggestions", {0: {"accept": True}, 1: {"accept": True}})
    at.button(key="suggest_accept").click().run()
    assert not at.exception, at.exception
    pos = at.session_state["draft"]["positions"]
    assert pos[:len(before)] == before  # nothing entered is lost
    added = pos[len(before):]
    assert [p["id"] for p in added] == list(expect["id"][:2])
    assert all(p["kind"] == "roof" and p["building_id"] == "mill" for p in added)
    assert [p["mast_height_m"] for p in added] == list(expect["mast_height_m"][:2])
    assert not at.session_state["problems"]
    ids = [p.id for p in at.session_state["valid"].positions]
    assert len(ids) == len(set(ids)) and set(expect["id"][:2]) <= set(ids)
    # the accepted ones leave the suggestions; the rest stay
    left = [r["id"] for r in at.session_state["roof_suggestions"]["rows"]]
    assert left == list(expect["id"][2:])
    assert "Added 2 position(s) on mill" in _text(at, "success")


def test_accepted_positions_move_and_delete_like_any_position():
    """After accepting, the positions table moves (x, y, mast) and deletes them."""
    at = _layout()
    n0 = len(at.session_state["draft"]["positions"])
    _suggest(at, "tower")
    _edit(at, "roof_suggestions", {0: {"accept": True}, 1: {"accept": True}})
    at.button(key="suggest_accept").click().run()
    assert len(at.session_state["draft"]["positions"]) == n0 + 2
    _edit(at, "positions", {n0: {"x east (m)": 40.5, "y north (m)": 3.0,
                                 "mast height (m)": 11.0}})
    moved = at.session_state["draft"]["positions"][n0]
    assert (moved["x_m"], moved["y_m"], moved["mast_height_m"]) == (40.5, 3.0, 11.0)
    v = next(p for p in at.session_state["valid"].positions if p.id == moved["id"])
    assert (v.x_m, v.y_m, v.mast_height_m) == (40.5, 3.0, 11.0)
    gone = at.session_state["draft"]["positions"][n0 + 1]["id"]
    _edit(at, "positions", deleted=[n0 + 1])
    ids = [p["id"] for p in at.session_state["draft"]["positions"]]
    assert gone not in ids and moved["id"] in ids and len(ids) == n0 + 1
    assert not at.session_state["problems"]


def test_moving_and_deleting_a_suggestion_before_accepting():
    """A suggestion moved and re-masted in its own table is added where it was moved to; a
    deleted one is not added."""
    at = _layout()
    _suggest(at, "mill")
    first = at.session_state["roof_suggestions"]["rows"][0]["id"]
    _edit(at, "roof_suggestions", {1: {"accept": True, "x east (m)": -15.0,
                                       "mast height (m)": 9.0}}, deleted=[0])
    rows = at.session_state["roof_suggestions"]["rows"]
    assert first not in [r["id"] for r in rows]
    at.button(key="suggest_accept").click().run()
    added = at.session_state["draft"]["positions"][-1]
    assert (added["x_m"], added["mast_height_m"]) == (-15.0, 9.0)
    assert first not in [p["id"] for p in at.session_state["draft"]["positions"]]


def test_names_never_collide_with_positions_already_entered():
    """A suggestion renamed to a position's name, and suggesting again after accepting, give
    fresh names (suffixed), never a duplicate."""
    at = _layout()
    _suggest(at, "mill")
    _edit(at, "roof_suggestions", {0: {"accept": True, "name": "mill-centre"}})
    at.button(key="suggest_accept").click().run()
    ids = [p["id"] for p in at.session_state["draft"]["positions"]]
    assert ids.count("mill-centre") == 1 and "mill-centre-2" in ids
    assert "mill-centre as mill-centre-2" in _text(at, "success")
    _suggest(at, "mill")  # again: no suggested name is one the positions already use
    again = [r["id"] for r in at.session_state["roof_suggestions"]["rows"]]
    assert not set(again) & set(ids)
    assert not at.session_state["problems"]


def test_a_roof_too_small_gets_a_clear_message_and_nothing_is_lost():
    """A roof narrower than twice the set-back: a message naming the building, its side and
    the rule; the draft is unchanged."""
    at = _layout()
    before = copy.deepcopy(at.session_state["draft"])
    at.number_input(key="suggest_setback|m").set_value(8.0).run()
    _suggest(at, "mill")  # 14 m wide: 2 x 8 m does not fit
    msg = _text(at, "error")
    assert "building mill: width_m" in msg and "must be at least 16 m" in msg
    assert "got 14 m" in msg
    assert at.session_state["draft"] == before
    assert not at.session_state["roof_suggestions"]["rows"]


def test_bad_spacing_named():
    at = _layout()
    at.number_input(key="suggest_spacing|m").set_value(0.0).run()
    _suggest(at, "tower")
    assert "Grid spacing: must be more than 0 m, got 0.0 m" in _text(at, "error")


def test_a_spacing_too_fine_is_named_in_the_unit_shown_and_nothing_is_lost():
    """0.000001 ft typed as the spacing: the page names the field and the finest spacing the
    roof allows (the engine checks in metres and says so), instead of running out of memory."""
    at = _layout()
    at.radio(key="length_unit").set_value("ft").run()
    before = copy.deepcopy(at.session_state["draft"])
    at.number_input(key="suggest_spacing|ft").set_value(1e-6).run()
    _suggest(at, "mill")
    assert not at.exception, at.exception
    msg = _text(at, "error")
    assert "Grid spacing: must be at least" in msg and "checked in metres" in msg, msg
    assert at.session_state["draft"] == before


def test_a_moved_suggestion_gets_its_mast_again_and_off_the_roof_is_refused():
    """Moved to another point, the mast is worked out again there by the engine; moved off
    the roof, accepting it is refused with a message naming it, and nothing is added."""
    at = _layout()
    _suggest(at, "mill")
    name = at.session_state["roof_suggestions"]["rows"][1]["id"]
    _edit(at, "roof_suggestions", {1: {"x east (m)": -10.0, "y north (m)": 4.0}})
    at.button(key="suggest_remeasure").click().run()
    assert not at.exception, at.exception
    want = rs.measure_roof_points(sitefile.load(DEMO), "mill", [-10.0], [4.0])
    row = at.session_state["roof_suggestions"]["rows"][1]
    assert row["id"] == name and (row["x_m"], row["y_m"]) == (-10.0, 4.0)
    assert row["mast_height_m"] == want["mast_height_m"][0]
    assert row["edge_distance_m"] == pytest.approx(want["edge_distance_m"][0])
    n = len(at.session_state["draft"]["positions"])
    _edit(at, "roof_suggestions", {1: {"accept": True, "y north (m)": 30.0}})
    at.button(key="suggest_accept").click().run()
    msg = _text(at, "error")
    assert f"{name}: must be on the roof of mill" in msg and "move it onto the roof" in msg
    assert len(at.session_state["draft"]["positions"]) == n


def test_spacing_and_set_back_typed_survive_a_change_of_units():
    """4 m and 1.5 m typed, then feet chosen: the fields show 13.1 ft and 4.9 ft (1 ft =
    0.3048 m exactly, by definition), not the defaults."""
    at = _layout()
    at.number_input(key="suggest_spacing|m").set_value(4.0).run()
    at.number_input(key="suggest_setback|m").set_value(1.5).run()
    at.radio(key="length_unit").set_value("ft").run()
    assert at.number_input(key="suggest_spacing|ft").value == pytest.approx(4.0 / 0.3048)
    assert at.number_input(key="suggest_setback|ft").value == pytest.approx(1.5 / 0.3048)


def test_suggestions_follow_a_renamed_building():
    """Suggested on mill, mill renamed before accepting: the suggestions stay, on the new
    name, and accepting puts them on it."""
    at = _layout()
    _suggest(at, "mill")
    n = len(at.session_state["roof_suggestions"]["rows"])
    i = [b["id"] for b in at.session_state["draft"]["buildings"]].index("mill")
    _edit(at, "buildings", edited={i: {"name": "old-mill"}})
    got = at.session_state["roof_suggestions"]
    assert got["building"] == "old-mill" and len(got["rows"]) == n
    assert not any("no longer on the site" in w.value for w in at.main.warning)
