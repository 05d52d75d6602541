"""The layout step's noise and flicker criteria and the measured background per place,
through Streamlit's AppTest: values reach the assessment, the engine's messages show beside
their fields, nothing entered is lost, and a change of criterion changes the Results as the
engine's own evaluation of the same site file does."""
from __future__ import annotations

import copy
import re

import pytest

from engine.chain import pipeline
from engine.core import units
from engine.io import sitefile

from test_app import _app, _go

LAYOUT = "steps/step_layout.py"
RESULTS = "steps/step_results.py"
CRITERION = "w|consent.noise.criterion|plain|-"
MARGIN = "w|consent.noise.margin_above_background_db|plain|-"
SUN = "w|consent.flicker.sunshine_fraction.{}|plain|-"


def shown(markdown: str) -> str:
    """The text a person reads from Markdown source whose user text is backslash-escaped."""
    return re.sub(r"\\(.)", r"\1", markdown).replace("\u200b", "")  # escapes, word breaks


def _errors(at) -> str:
    return " ".join(shown(e.value) for e in at.error)


def _background_key(at, i: int, rid: str, speed_unit: str = "m/s") -> str:
    return f"ed|background|{i}|{rid}|{at.session_state['gen']}|{speed_unit}|m"


def _enter_background(at, i, rid, speeds, levels, speed_unit="m/s"):
    """Type rows into receptor ``i``'s background table (speeds in ``speed_unit``)."""
    added = [{f"hub wind speed ({speed_unit})": v, "background L90 (dB(A))": lv}
             for v, lv in zip(speeds, levels)]
    at.session_state[_background_key(at, i, rid, speed_unit)] = {
        "edited_rows": {}, "added_rows": added, "deleted_rows": []}
    at.run()
    assert not at.exception, at.exception
    return at


def test_criterion_margin_and_tolerance_reach_the_assessment():
    """The plain-word criterion, margin and tolerance typed on the page are the assessment's
    NoiseSettings; the engine's defaults and their sources are shown."""
    at = _go(_app(), LAYOUT)
    box = at.selectbox(key=CRITERION)
    assert box.value == "limit"
    assert "background plus a margin" in box.format_func("background_plus")
    box.set_value("background_plus")
    at.number_input(key=MARGIN).set_value(8.0)
    at.number_input(key="w|consent.noise.tolerance_db|plain|-").set_value(1.5).run()
    assert not at.exception and not _errors(at)
    noise = at.session_state["valid"].consent.noise
    assert (noise.criterion, noise.margin_above_background_db, noise.tolerance_db) == (
        "background_plus", 8.0, 1.5)
    captions = " ".join(c.value for c in at.caption)
    assert "Engine default 5 dB" in captions and "from memory" in captions
    assert "Engine default 30 h" in captions and "Engine default 8 h" in captions
    warnings = " ".join(w.value for w in at.warning)
    assert "screening estimates" in warnings and "local planning authority" in warnings
    assert "qualified acoustician" in warnings


def test_a_bad_margin_is_named_beside_its_field_and_kept():
    """A margin of 50 dB breaks NoiseSettings' range: the message shows on the page, the
    typed value stays in the working copy, the results keep the last valid settings."""
    at = _go(_app(), LAYOUT)
    at.number_input(key=MARGIN).set_value(50.0).run()
    assert not at.exception
    text = _errors(at)
    assert "Margin above background (dB)" in text and "must be >= -10 and <= 30, got 50 dB" in text
    assert at.session_state["draft"]["consent"]["noise"]["margin_above_background_db"] == 50.0
    assert at.session_state["valid"].consent.noise.margin_above_background_db == 5.0
    assert at.number_input(key=MARGIN).value == 50.0


def test_sunshine_one_value_or_twelve_and_nothing_lost_on_switching():
    """Twelve monthly shares reach FlickerSettings; switching to one value and back gives the
    months again; a share above 1 is named by its month's entry."""
    at = _go(_app(), LAYOUT)
    radio = next(r for r in at.radio if r.key.startswith("sunshine_mode|"))
    radio.set_value("A value for each month").run()
    assert at.session_state["valid"].consent.flicker.sunshine_fraction == (0.35,) * 12
    at.number_input(key=SUN.format(2)).set_value(0.5).run()
    assert at.session_state["valid"].consent.flicker.sunshine_fraction[2] == 0.5
    radio = next(r for r in at.radio if r.key.startswith("sunshine_mode|"))
    radio.set_value("One value for the year").run()
    assert at.session_state["valid"].consent.flicker.sunshine_fraction == (0.35,)
    radio = next(r for r in at.radio if r.key.startswith("sunshine_mode|"))
    radio.set_value("A value for each month").run()
    got = at.session_state["valid"].consent.flicker.sunshine_fraction
    assert len(got) == 12 and got[2] == 0.5 and got[0] == 0.35
    at.number_input(key=SUN.format(6)).set_value(1.5).run()
    assert not at.exception
    assert "Jul** must be >= 0 and <= 1, got 1.5" in _errors(at)
    assert at.session_state["draft"]["consent"]["flicker"]["sunshine_fraction"][6] == 1.5


def test_measured_background_in_display_units_reaches_the_receptor_in_si():
    """Speeds typed in km/h are stored in m/s (NIST SP 811: 1 km/h = 1000/3600 m/s); a table
    out of order and an implausible level are named by row beside the table."""
    at = _go(_app(), LAYOUT)
    at.radio(key="speed_unit").set_value("km/h").run()
    rid = at.session_state["draft"]["receptors"][0]["id"]
    _enter_background(at, 0, rid, [14.4, 28.8, 43.2], [31.0, 36.0, 42.0], "km/h")
    r = at.session_state["valid"].receptors[0]
    assert r.background_speed_ms == pytest.approx([units.speed_to_si(v, "km/h")
                                                   for v in (14.4, 28.8, 43.2)])
    assert r.background_speed_ms == pytest.approx([4.0, 8.0, 12.0])  # 14.4 km/h = 4 m/s
    assert r.background_db == (31.0, 36.0, 42.0)
    # out of order, and a sound power typed for a level: both named, nothing entered lost
    _enter_background(at, 1, at.session_state["draft"]["receptors"][1]["id"],
                      [28.8, 14.4], [35.0, 95.0], "km/h")
    text = _errors(at)
    assert "Row 2, wind speed:** must be above the speed before it (8 m/s), got 4 m/s " \
           "(the rule is checked in m/s)" in text
    assert "Row 2, background level:** must be >= 10 and <= 80, got 95 dB(A)" in text
    kept = at.session_state["draft"]["receptors"][1]
    assert kept["background_db"] == [35.0, 95.0]
    assert kept["background_speed_ms"] == pytest.approx([8.0, 4.0])
    assert at.session_state["draft"]["receptors"][0]["background_db"] == [31.0, 36.0, 42.0]


def _results_allowed(at) -> set:
    """(position, turbine) of the rows the Results page's full table shows as not excluded."""
    frame = next(d.value for d in at.dataframe
                 if {"Position", "Turbine", "Excluded"} <= set(d.value.columns))
    assert len(frame) == len(at.session_state["valid"].positions) * len(
        at.session_state["valid"].turbines)
    return {(p, t) for p, t, x in zip(frame["Position"], frame["Turbine"], frame["Excluded"])
            if not x}


def _engine_allowed(draft: dict) -> set:
    table = pipeline.evaluate(sitefile.assessment_from_dict(copy.deepcopy(draft))).table
    return {(p, t) for p, t, x in zip(table["position_id"], table["turbine_id"],
                                      table["excluded"]) if not x}


def test_switching_to_background_plus_changes_results_as_the_engine_does():
    """With a measured background entered and the criterion switched to background plus a
    margin, the Results page allows exactly the rows the engine's own evaluation of the same
    working copy allows, and that set differs from the fixed-limit one."""
    at = _go(_app(), LAYOUT)
    draft = at.session_state["draft"]
    for i, rec in enumerate(list(draft["receptors"])):
        _enter_background(at, i, rec["id"], [4.0, 8.0, 12.0], [40.0, 46.0, 52.0])
    at = _go(at, RESULTS)
    before = _results_allowed(at)
    assert before == _engine_allowed(at.session_state["draft"])
    at = _go(at, LAYOUT)
    at.selectbox(key=CRITERION).set_value("background_plus").run()
    assert not at.exception and not _errors(at)
    at = _go(at, RESULTS)
    after = _results_allowed(at)
    want = _engine_allowed(at.session_state["draft"])
    assert after == want
    # background + 5 dB above every fixed limit here: the criterion is looser, never tighter
    assert before < after


def test_background_survives_edits_and_deletions_in_the_table_of_places():
    """A background entered for the second place stays with it when the first place's limit
    is edited and when the first place is deleted; a look in mph changes no stored speed."""
    at = _go(_app(), LAYOUT)
    rid = at.session_state["draft"]["receptors"][1]["id"]
    _enter_background(at, 1, rid, [3.0, 6.0, 9.0], [30.0, 33.0, 37.0])
    places = f"ed|receptors|{at.session_state['gen']}|m/s|m"
    at.session_state[places] = {"edited_rows": {0: {"noise criterion (dB(A))": 38.0}},
                                "added_rows": [], "deleted_rows": []}
    at.run()
    assert not at.exception and not _errors(at)
    r = at.session_state["valid"].receptors[1]
    assert (r.id, r.background_speed_ms, r.background_db) == (
        rid, (3.0, 6.0, 9.0), (30.0, 33.0, 37.0))
    assert at.session_state["valid"].receptors[0].limit_db == 38.0
    places = f"ed|receptors|{at.session_state['gen']}|m/s|m"
    at.session_state[places] = {"edited_rows": {}, "added_rows": [], "deleted_rows": [0]}
    at.run()
    assert not at.exception and not _errors(at)
    (r,) = at.session_state["valid"].receptors
    assert (r.id, r.background_speed_ms, r.background_db) == (
        rid, (3.0, 6.0, 9.0), (30.0, 33.0, 37.0))
    text = sitefile.dumps(at.session_state["valid"])
    at.radio(key="speed_unit").set_value("mph").run()
    at.run()
    assert sitefile.dumps(at.session_state["valid"]) == text
    assert at.session_state["draft"]["receptors"][0]["background_speed_ms"] == [3.0, 6.0, 9.0]


def test_the_row_closest_to_its_noise_criterion_is_the_engines():
    """The panel names the allowed row with the smallest noise margin of the engine's own
    evaluation of the same site file, and that margin."""
    at = _go(_app(), LAYOUT)
    table = pipeline.evaluate(sitefile.assessment_from_dict(
        copy.deepcopy(at.session_state["draft"]))).table
    kept = table[~table["excluded"]]
    want = kept.loc[kept["noise_margin_db"].idxmin()]
    note = next(shown(m.value) for m in at.markdown
                if shown(m.value).startswith("Closest to its noise criterion"))
    assert f"**{want['position_id']}** with **{want['turbine_id']}**" in note
    margin = float(want["noise_margin_db"])
    assert f"{abs(margin):.1f} dB {'below' if margin >= 0 else 'above'} it" in note
    assert f"at {want['noise_worst_receptor']}" in note
