"""The measured record after the edits a hurried assessor makes, through Streamlit's AppTest.

A climate measured at one of the site's positions names that position: renaming it carries the
new name to the climate, deleting it or changing its mast is named on the climate step (the
banner's count equals the messages beneath it), and building again with the stale choice
names the field instead of failing.
"""
from __future__ import annotations

from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest

from test_status_walk import _edit, _page_status

ROOT = Path(__file__).resolve().parents[2]
APP = str(ROOT / "dashboard" / "app.py")
LOGGER = ROOT / "demo_sites" / "records" / "roof_logger_two_heights.csv"
CLIMATE = "steps/step_climate.py"
LAYOUT = "steps/step_layout.py"


def _built_at(position: str) -> AppTest:
    """The demo with the two-height logger built as measured at ``position``."""
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.switch_page(CLIMATE).run()
    at.radio(key="climate_mode_w").set_value("measured").run()
    at.file_uploader(key="record_upload").upload(LOGGER.name, LOGGER.read_bytes(),
                                                 "text/csv").run()
    at.radio(key="rf|where").set_value("position").run()
    at.selectbox(key="rf|pos").set_value(position).run()
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception
    assert at.session_state["valid"].climate.position_id == position
    assert at.session_state["problems"] == []
    return at


def _row(at, position: str) -> int:
    return [p["id"] for p in at.session_state["draft"]["positions"]].index(position)


def test_renaming_the_logger_position_carries_to_the_climate():
    at = _built_at("mill-west-edge")
    _edit(at, LAYOUT, "positions", edited_rows={_row(at, "mill-west-edge"): {"name": "mill-w"}})
    assert at.session_state["draft"]["climate"]["position_id"] == "mill-w"
    assert at.session_state["problems"] == [], at.session_state["problems"]
    assert at.session_state["valid"].climate.position_id == "mill-w"


def test_deleting_the_logger_position_is_named_on_the_climate_step():
    at = _built_at("mill-west-edge")
    _edit(at, LAYOUT, "positions", deleted_rows=[_row(at, "mill-west-edge")])
    at.switch_page(CLIMATE).run()
    assert not at.exception, at.exception
    assert _page_status(at) == "1"  # "1 problem(s) below" and that one message shown
    shown = " ".join(e.value for e in at.main.error)
    assert "mill" in shown and "position" in shown.lower(), shown
    # the stale position is no longer offered; building again does not fail
    assert "mill-west-edge" not in at.selectbox(key="rf|pos").options
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception


def test_a_stale_logger_position_names_the_field_when_built():
    """The position chosen for the logger went away between drawing and building (the
    selection is kept from before): the build names the field, the record stays kept."""
    at = _built_at("mill-west-edge")
    d = at.session_state["draft"]
    del d["positions"][_row(at, "mill-west-edge")]
    at.session_state["rf|pos"] = "mill-west-edge"
    at.session_state["validated_text"] = None  # as after a table edit
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception
    assert at.session_state["record_file"]["name"] == LOGGER.name


def test_a_changed_logger_mast_is_named_on_the_climate_step():
    at = _built_at("mill-west-edge")
    i = _row(at, "mill-west-edge")
    _edit(at, LAYOUT, "positions", edited_rows={i: {"mast height (m)": 9.0}})
    at.switch_page(CLIMATE).run()
    assert not at.exception, at.exception
    assert _page_status(at) == "1"
    shown = " ".join(e.value for e in at.main.error)
    assert "hub height" in shown, shown


def _logger_form(at) -> AppTest:
    at.radio(key="climate_mode_w").set_value("measured").run()
    at.file_uploader(key="record_upload").upload(LOGGER.name, LOGGER.read_bytes(),
                                                 "text/csv").run()
    return at


def test_the_record_speaks_the_display_units():
    """In feet and mph every height and speed the record's section shows is in feet and mph
    (1 ft = 0.3048 m, 1 mph = 0.44704 m/s exactly, by definition)."""
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.switch_page(CLIMATE).run()
    at.radio(key="length_unit").set_value("ft").run()
    at.radio(key="speed_unit").set_value("mph").run()
    _logger_form(at)
    at.radio(key="rf|where").set_value("position").run()
    at.selectbox(key="rf|pos").set_value("mill-west-edge").run()
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception
    texts = " ".join(m.value for m in at.main.markdown) + " ".join(i.value for i in at.main.info)
    texts = texts.replace("\\", "")
    assert "5 m" not in texts and "2, 5 m" not in texts, texts
    assert "6.6, 16.4 ft" in texts, texts  # 2 m and 5 m logged heights
    assert "16.4 ft, so the climate stands at its hub" in texts, texts


def test_settings_changed_since_the_build_are_said():
    """Sectors changed after building: the page says the climate shown was built with other
    settings, until it is built again."""
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.switch_page(CLIMATE).run()
    _logger_form(at)
    at.button(key="build_record").click().run()
    assert not any("built with other settings" in w.value for w in at.main.warning)
    at.selectbox(key="rf|n").set_value(16).run()
    assert any("built with other settings" in w.value for w in at.main.warning)
    assert at.session_state["valid"].climate.n_sectors == 12  # nothing changes by itself
    at.button(key="build_record").click().run()
    assert at.session_state["valid"].climate.n_sectors == 16
    assert not any("built with other settings" in w.value for w in at.main.warning)


def test_forgetting_a_record_that_failed_to_build_clears_its_message():
    """A record that could not be built, then forgotten: its message and the step's mark go
    with it, since the climate in use never changed."""
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.switch_page(CLIMATE).run()
    at.radio(key="climate_mode_w").set_value("measured").run()
    at.file_uploader(key="record_upload").upload("empty.csv", b"", "text/csv").run()
    at.button(key="build_record").click().run()
    assert _page_status(at) == "1"
    at.button(key="forget_record_file").click().run()
    assert not at.exception, at.exception
    assert _page_status(at) == "ok"
    assert "All steps complete." in [s.value for s in at.sidebar.success]


def test_a_record_kept_but_not_built_says_the_climate_is_not_yet_from_it():
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.switch_page(CLIMATE).run()
    _logger_form(at)
    assert any("not built from it yet" in i.value for i in at.main.info)
    at.button(key="build_record").click().run()
    assert not any("not built from it yet" in i.value for i in at.main.info)


def test_a_rename_made_while_another_way_is_shown_reaches_the_kept_record_climate():
    """Built at a position, switched to the sector table, the position renamed, switched back:
    the measured climate kept for that way names the new id."""
    at = _built_at("mill-west-edge")
    at.radio(key="climate_mode_w").set_value("table").run()
    _edit(at, LAYOUT, "positions", edited_rows={_row(at, "mill-west-edge"): {"name": "mill-w"}})
    at.switch_page(CLIMATE).run()
    at.radio(key="climate_mode_w").set_value("measured").run()
    assert not at.exception, at.exception
    assert at.session_state["draft"]["climate"]["position_id"] == "mill-w"
    assert at.session_state["problems"] == [], at.session_state["problems"]


def _mean_way() -> AppTest:
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.switch_page(CLIMATE).run()
    at.radio(key="climate_mode_w").set_value("mean_speed").run()
    assert not at.exception, at.exception
    return at


def test_mean_speed_way_keeps_a_reference_height_typed_as_zero_and_names_it():
    """0 m typed as the reference height is neither replaced by 10 m nor left unnamed: the
    height field says what is wrong, and the banner counts what is shown."""
    at = _mean_way()
    at.number_input(key="w|climate.height_m|length|m").set_value(0.0).run()
    assert at.session_state["draft"]["climate"]["height_m"] == 0.0
    assert _page_status(at) == "1"
    assert "Reference height (m)" in " ".join(e.value for e in at.main.error)


@pytest.mark.parametrize("key, value", [("w|climate.height_m|length|m", -3.0),
                                        ("w|climate.roughness_m|length|m", -3.0),
                                        ("mf|mean|m/s", 1e-9)])
def test_mean_speed_way_names_each_problem_once_by_its_own_field(key, value):
    at = _mean_way()
    at.number_input(key=key).set_value(value).run()
    errors = [e.value for e in at.main.error]
    assert _page_status(at) == "1", errors
    if key.startswith("w|"):
        assert not any("mean wind speed" in e for e in errors), errors
    else:
        assert "mean wind speed" in errors[0], errors


def test_sector_table_messages_name_the_row_and_column_as_shown():
    """A bad Weibull c in the third row, in mph: the message names "Sector 3" and the
    column's own label, and says the rule is checked in m/s (not "weibull_c_ms[2]")."""
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.switch_page(CLIMATE).run()
    at.radio(key="speed_unit").set_value("mph").run()
    at.radio(key="climate_mode_w").set_value("table").run()
    key = f"ed|climate_table|{at.session_state['gen']}|mph|m"
    at.session_state[key] = {"edited_rows": {2: {"Weibull c (mph)": 0.0}}, "added_rows": [],
                             "deleted_rows": []}
    at.run()
    assert not at.exception, at.exception
    errors = [e.value.replace("\\", "") for e in at.main.error]
    assert _page_status(at) == "1", errors
    assert errors[0].startswith("**Sector 3, Weibull c (mph):**"), errors
    assert "checked in m/s" in errors[0] and "weibull_c_ms" not in errors[0], errors
