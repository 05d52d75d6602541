"""Spot readings edited on the layout step through Streamlit's AppTest.

AppTest does not type into a data editor; a keyed editor is driven by assigning its edit state
(``edited_rows``, ``added_rows``, ``deleted_rows``, cells named by column label) before a run,
which is what the browser sends when a person edits the table.
"""
from __future__ import annotations

import json
import re
import math

import numpy as np
import pytest

from dashboard import exports
from engine.chain import pipeline
from engine.io import sitefile

from test_app import DEMO, _app, _go


def shown(markdown: str) -> str:
    """The text a person reads from Markdown source whose user text is backslash-escaped."""
    return re.sub(r"\\(.)", r"\1", markdown).replace("\u200b", "")  # escapes, word breaks


LAYOUT = "steps/step_layout.py"
MPH_MS = 0.44704  # 1 mph = 0.44704 m/s, exact by definition (NIST SP 811, appendix B)
FT_M = 0.3048  # 1 ft = 0.3048 m, exact by definition (NIST SP 811, appendix B)


def _editor_key(at, speed="m/s", length="m") -> str:
    return f"ed|spot_readings|{at.session_state['gen']}|{speed}|{length}"


def _layout(speed="m/s", length="m"):
    at = _app()
    if speed != "m/s":
        at.radio(key="speed_unit").set_value(speed).run()
    if length != "m":
        at.radio(key="length_unit").set_value(length).run()
    return _go(at, LAYOUT)


def _edit(at, speed="m/s", length="m", added=(), edited=None):
    at.session_state[_editor_key(at, speed, length)] = {
        "edited_rows": edited or {}, "added_rows": list(added), "deleted_rows": []}
    at.run()
    assert not at.exception, at.exception
    return at


def _row(position="tower-centre", pos="5, 6, 7", ref="4, 5, 6", speed="m/s", length="m",
         height=10.0, calibrate=False, direction=200.0):
    return {"position": position, "wind from (°)": direction,
            f"position readings ({speed})": pos,
            f"reference readings ({speed})": ref,
            f"ref. height ({length})": height, "note": "by the tank room door",
            "use for calibration": calibrate}


def _errors(at) -> str:
    return " ".join(shown(e.value) for e in at.error)


def _demo_readings() -> list:
    return json.loads(DEMO.read_text())["spot_readings"]


def test_demo_readings_shown_and_kept_unchanged_in_mph():
    """The demo's reading is listed in mph (exact factor) and, with nothing edited, the site
    file stays byte for byte as loaded."""
    demo = _demo_readings()
    assert demo, "the demo site is expected to carry a spot reading"
    at = _layout("mph")
    table = next(d for d in at.data_editor if d.key == _editor_key(at, "mph"))
    shown = table.value.iloc[0]
    assert shown["position"] == demo[0]["position_id"]
    cells = [float(v) for v in shown["position readings (mph)"].split(",")]
    # v / 0.44704 (NIST SP 811) shown to 5 significant figures: within half a unit of the 5th
    # figure, a relative 5e-5 at most
    assert cells == pytest.approx([v / MPH_MS for v in demo[0]["position_speed_ms"]], rel=5e-5)
    assert bool(shown["use for calibration"]) is demo[0]["use_for_calibration"]
    at.run()
    _go(at, "steps/step_results.py")
    _go(at, LAYOUT)
    assert at.session_state["draft"]["spot_readings"] == demo
    assert exports.site_file_bytes(at.session_state["valid"]) == DEMO.read_bytes()
    assert not at.session_state["problems"]


def test_editing_another_cell_keeps_the_stored_readings_exactly():
    """Changing the direction in mph leaves the speed lists as stored, not rounded copies."""
    demo = _demo_readings()[0]
    at = _layout("mph")
    _edit(at, "mph", edited={0: {"wind from (°)": 250.0}})
    got = at.session_state["valid"].spot_readings[0]
    assert got.direction_deg == 250.0
    assert got.position_speed_ms == tuple(demo["position_speed_ms"])
    assert got.reference_speed_ms == tuple(demo["reference_speed_ms"])


def test_added_reading_in_mph_and_feet_is_stored_in_si():
    """A reading typed in mph and ft reaches the valid assessment in m/s and m."""
    at = _layout("mph", "ft")
    _edit(at, "mph", "ft", added=[_row(pos="10, 12.5, 15", ref="8, 10, 12.25", speed="mph",
                                       length="ft", height=30.0, calibrate=True)])
    assert not _errors(at)
    spot = at.session_state["valid"].spot_readings
    assert len(spot) == 2
    new = spot[1]
    assert new.position_id == "tower-centre" and new.direction_deg == 200.0
    # NIST SP 811: 1 mph = 0.44704 m/s and 1 ft = 0.3048 m, both exact
    assert new.position_speed_ms == pytest.approx((4.4704, 5.588, 6.7056), rel=1e-12)
    assert new.reference_speed_ms == pytest.approx((3.57632, 4.4704, 5.47624), rel=1e-12)
    assert new.reference_height_m == pytest.approx(9.144, rel=1e-12)
    assert new.use_for_calibration is True
    assert new.note == "by the tank room door"
    assert spot[0] == sitefile.load(DEMO).spot_readings[0]  # the demo row untouched


@pytest.mark.parametrize("pos, ref, column, words", [
    ("5, 6", "4, 5", "position readings (m/s)", "at least 3 paired readings"),
    ("5, 6, 7", "4, 5", "reference readings (m/s)", "one reference reading per"),
    ("5, x, 7", "4, 5, 6", "position readings (m/s)", "must be a number"),
    ("5, 6, 7", "0, 0, 0", "reference readings (m/s)", "while the wind blows"),
])
def test_bad_reading_is_named_by_row_and_column(pos, ref, column, words):
    """Two pairs, lists of unequal length or an unreadable entry: the message names the row
    and the column; the rest of the site stays valid and what was typed stays."""
    at = _layout()
    _edit(at, added=[_row(pos=pos, ref=ref)])
    errs = _errors(at)
    assert f"Spot readings, row 2 (tower-centre), {column}:" in errs and words in errs
    assert all(w.startswith("spot_readings[1].") for w, _ in at.session_state["problems"])
    assert at.session_state["draft"]["spot_readings"][1]["note"] == "by the tank room door"
    assert at.session_state["valid"].spot_readings == sitefile.load(DEMO).spot_readings
    at = _go(at, "steps/step_site.py")
    assert not _errors(at)  # the site step itself has nothing to fix
    at = _go(at, "steps/step_results.py")
    assert len(at.table[0].value) == 5  # results from the last complete inputs


def test_a_position_that_is_not_in_the_layout_is_named():
    """A reading naming a position that is gone gets the engine's message on its row."""
    at = _layout()
    _edit(at, added=[_row(position="no-such-place")])
    errs = _errors(at)
    assert "Spot readings, row 2 (no-such-place), position:" in errs and "not in positions" in errs


def test_results_draw_after_a_valid_reading():
    """With a new reading the results step draws, shows the engine's ranking, and the reading
    reaches the engine's comparison with non-negative bounds."""
    at = _layout()
    _edit(at, added=[_row(calibrate=True)])
    assert not _errors(at)
    at = _go(at, "steps/step_results.py")
    assert not _errors(at)
    ev = pipeline.evaluate(at.session_state["valid"])
    shown = at.table[0].value
    assert list(shown["position"]) == list(ev.table.head(5)["position_id"])
    rows = ev.table[ev.table.position_id == "tower-centre"]
    low = rows["spot_speedup_ci_low"].to_numpy()
    mid = rows["spot_measured_speedup"].to_numpy()
    high = rows["spot_speedup_ci_high"].to_numpy()
    assert np.all(np.isfinite(mid))
    # a ratio of non-negative speeds is non-negative, inside its own interval
    assert np.all((0 <= low) & (low <= mid) & (mid <= high))
    assert not math.isnan(float(rows["spot_model_speedup"].iloc[0]))
