"""Saved what-if scenarios survive a restart; Compare matches rows by name, never by place."""
from __future__ import annotations

import json

from streamlit.testing.v1 import AppTest

from dashboard import results_view, scenario_store
from test_app import APP, DEMO, _app, _go


def _demo() -> dict:
    return json.loads(DEMO.read_text(encoding="utf-8"))


def test_scenarios_survive_a_restart():
    """Two scenarios saved in one session are offered in the next and compared after restore."""
    at = _go(_app(), "steps/step_results.py")
    at.text_input(key="scenario_name").input("as drawn").run()
    at.button(key="save_scenario").click().run()
    at.number_input(key="w|economics.tariff_per_kwh|plain|-|whatif").set_value(0.4).run()
    at.text_input(key="scenario_name").input("dearer power").run()
    at.button(key="save_scenario").click().run()
    assert not at.exception, at.exception
    saved = dict(at.session_state["scenarios"])
    assert list(saved) == ["as drawn", "dearer power"]
    assert scenario_store.read()[0] == saved  # on disk at once

    fresh = AppTest.from_file(APP, default_timeout=60).run()
    assert not fresh.exception
    assert fresh.session_state["scenarios"] == {}  # offered, not applied
    assert any("2 saved scenario(s)" in i.value for i in fresh.sidebar.info)
    fresh.button(key="autosave_restore").click().run()
    assert fresh.session_state["scenarios"] == saved
    _go(fresh, "steps/step_compare.py")
    assert not any("No scenario saved yet" in i.value for i in fresh.info)
    assert "economics: tariff (per kWh)" in list(fresh.table[1].value.index)


def test_kept_demo_does_not_bring_old_scenarios():
    """'Keep the demo' leaves the earlier session's scenarios on disk but out of this one."""
    at = _go(_app(), "steps/step_results.py")
    at.button(key="save_scenario").click().run()
    fresh = AppTest.from_file(APP, default_timeout=60).run()
    fresh.button(key="autosave_dismiss").click().run()
    assert fresh.session_state["scenarios"] == {}
    assert scenario_store.read()[0]


def test_damaged_scenario_entry_is_left_out_and_named(tmp_path):
    """One unreadable entry is named; the readable one is kept."""
    p = tmp_path / "scenarios.json"
    p.write_text(json.dumps({"scenarios": {"good": DEMO.read_text(), "bad": "{not a site"}}))
    scenarios, _, problems = scenario_store.read(p)
    assert list(scenarios) == ["good"]
    assert problems and problems[0][0] == "scenario 'bad'"


def test_compare_matches_buildings_by_name_not_by_place():
    """The same buildings in another order differ in nothing; another site's buildings are
    never set beside this site's by their place in the list."""
    a = _demo()
    b = _demo()
    b["buildings"] = b["buildings"][::-1]
    b["positions"] = b["positions"][::-1]
    assert results_view.input_differences({"one": a, "two": b}).empty

    other = _demo()
    other["site"]["name"] = "Another estate"
    other["buildings"] = [dict(a["buildings"][0], id="B0001", width_m=99.0)]
    diff = results_view.input_differences({"one": a, "other": other}).set_index("input")
    first = a["buildings"][0]["id"]
    row = diff.loc[f"buildings {first}: width (m)"]
    assert row["other"] == ""  # the other site has no building of that name
    assert diff.loc["buildings B0001: width (m)", "one"] == ""
    assert results_view.different_sites({"one": a, "other": other}) == [
        a["site"]["name"], "Another estate"]
    assert results_view.different_sites({"one": a, "two": b}) == []
