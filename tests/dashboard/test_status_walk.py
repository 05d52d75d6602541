"""Every step after an edit that used to crash or lose work, through Streamlit's AppTest.

After each of: all positions deleted, all turbines deleted, a position named by a spot reading
renamed, a damaged site file opened, every page draws without an exception and its status
says what the page shows: a "Needs attention: N problem(s) below" banner has exactly N messages
beneath it, a "Complete" banner none, and the sidebar counts the steps whose banner says they
need attention. A data editor is driven by assigning its edit state, as the browser sends it.
"""
from __future__ import annotations

import json
import re

import pytest

from test_app import DEMO, _app, _go

PAGES = ["steps/step_site.py", "steps/step_climate.py", "steps/step_layout.py",
         "steps/step_turbines.py", "steps/step_results.py", "steps/step_summary.py",
         "steps/step_compare.py"]
STEP_PAGES = PAGES[:5]  # the steps with inputs of their own (the summary sums them up)
NEEDS = re.compile(r"Needs attention: (\d+) problem\(s\) below")


def _demo() -> dict:
    return json.loads(DEMO.read_text(encoding="utf-8"))


def _edit(at, page: str, table: str, **state) -> None:
    _go(at, page)
    key = f"ed|{table}|{at.session_state['gen']}|m/s|m"
    at.session_state[key] = {"edited_rows": {}, "added_rows": [], "deleted_rows": [], **state}
    at.run()
    assert not at.exception, at.exception


def delete_all_positions(at):
    _edit(at, "steps/step_layout.py", "positions",
          deleted_rows=list(range(len(_demo()["positions"]))))


def delete_all_turbines(at):
    _edit(at, "steps/step_turbines.py", "turbines",
          deleted_rows=list(range(len(_demo()["turbines"]))))


def rename_referenced_position(at):
    demo = _demo()
    ref = demo["spot_readings"][0]["position_id"]
    i = [p["id"] for p in demo["positions"]].index(ref)
    _edit(at, "steps/step_layout.py", "positions", edited_rows={i: {"name": "renamed-spot"}})


def bad_upload(at):
    _go(at, "steps/step_site.py")
    at.file_uploader(key="site_upload").upload("broken.json", b'{"format_version": 1, "si',
                                               "application/json").run()
    at.button(key="open_site").click().run()
    assert not at.exception, at.exception


EDITS = {"delete all positions": delete_all_positions,
         "delete all turbines": delete_all_turbines,
         "rename a referenced position": rename_referenced_position,
         "bad upload": bad_upload}


def _page_status(at) -> str:
    """'ok', 'earlier' (results from the last complete inputs) or 'N' problems, checked
    against the messages the page shows."""
    warnings = [w.value for w in at.main.warning]
    errors = [e.value for e in at.main.error
              if "was not opened" not in e.value]  # the file's message, not the step's
    success = [s.value for s in at.main.success]
    counts = [int(m.group(1)) for w in warnings if (m := NEEDS.search(w))]
    if counts:
        assert len(counts) == 1 and not success, (warnings, success)
        assert counts[0] >= 1
        assert len(errors) == counts[0], (counts[0], errors)
        return str(counts[0])
    assert not errors, errors
    if any("Shown from the last complete inputs" in w for w in warnings):
        assert not success, success
        return "earlier"
    return "ok"


@pytest.mark.parametrize("name", EDITS)
def test_every_step_after_an_edit_draws_and_tells_the_truth(name):
    """No exception on any page; each banner's count equals the messages shown."""
    at = _app()
    EDITS[name](at)
    for _ in range(2):  # twice: the second visit finds every page already drawn once
        needing = 0
        for page in PAGES:
            _go(at, page)
            status = _page_status(at)
            if page in STEP_PAGES and status not in ("ok", "earlier"):
                needing += 1
        sidebar = [w.value for w in at.sidebar.warning] + [s.value for s in at.sidebar.success]
        if needing:
            assert f"{needing} step(s) need attention (marked !)." in sidebar, sidebar
        else:
            assert "All steps complete." in sidebar, sidebar


def test_deleting_all_positions_keeps_the_results_and_says_why():
    """Results drawn from the last complete inputs; the what-if says the working copy has no
    positions; the layout step names the problem."""
    at = _app()
    delete_all_positions(at)
    assert at.session_state["draft"]["positions"] == []
    _go(at, "steps/step_results.py")
    assert any("no positions" in i.value for i in at.main.info)
    assert len(at.table[0].value) == 5  # the last valid ranking is still shown
    warn = " ".join(w.value for w in at.main.warning)
    assert "Buildings & positions" in warn


def test_renaming_a_position_carries_to_its_spot_readings():
    """The spot reading names the new id, nothing needs attention, Results offer the new id."""
    at = _app()
    rename_referenced_position(at)
    draft = at.session_state["draft"]
    assert draft["spot_readings"][0]["position_id"] == "renamed-spot"
    assert not at.session_state["problems"], at.session_state["problems"]
    _go(at, "steps/step_results.py")
    assert "renamed-spot" in at.selectbox(key="whatif_position_w").options
    assert "renamed-spot" in [p.id for p in at.session_state["valid"].positions]


def test_renaming_a_building_carries_to_its_positions():
    """Roof positions and gaps follow a renamed building."""
    at = _app()
    demo = _demo()
    _edit(at, "steps/step_layout.py", "buildings", edited_rows={0: {"name": "old-mill"}})
    old = demo["buildings"][0]["id"]
    draft = at.session_state["draft"]
    assert not at.session_state["problems"], at.session_state["problems"]
    for before, after in zip(demo["positions"], draft["positions"]):
        if before.get("building_id") == old:
            assert after["building_id"] == "old-mill"
        assert old not in (after.get("gap_buildings") or [])
