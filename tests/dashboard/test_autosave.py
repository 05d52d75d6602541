"""Autosave: a change is written at once, survives the session, and is offered on the next start."""
import json
import re
from pathlib import Path

from streamlit.testing.v1 import AppTest

from engine.io import autosave


def shown(markdown: str) -> str:
    """The text a person reads from Markdown source whose user text is backslash-escaped."""
    return re.sub(r"\\(.)", r"\1", markdown).replace("\u200b", "")  # escapes, word breaks


APP = str(Path(__file__).resolve().parents[2] / "dashboard" / "app.py")


def _number_input(at, label_start):
    return next(w for w in at.number_input if w.label.startswith(label_start))


def test_change_is_autosaved_and_offered_next_session():
    """Altitude typed in one session is on disk at once and restorable in a new session."""
    at = AppTest.from_file(APP, default_timeout=60).run()
    assert not at.exception
    assert autosave.read_draft() is None  # nothing written until something changes
    _number_input(at, "Altitude").set_value(321.0).run()
    data, _ = autosave.read_draft()
    assert data["site"]["altitude_m"] == 321.0

    fresh = AppTest.from_file(APP, default_timeout=60).run()
    assert fresh.session_state["draft"]["site"]["altitude_m"] != 321.0  # offered, not applied
    restore = next(b for b in fresh.button if b.label == "Restore it")
    restore.click().run()
    assert not fresh.exception
    assert fresh.session_state["draft"]["site"]["altitude_m"] == 321.0
    assert "autosave" in fresh.session_state["loaded_from"]


def test_unreadable_autosave_is_reported_not_fatal():
    """A damaged autosave file gives a warning in the sidebar; the demo still opens."""
    path = autosave.autosave_path()
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_bytes(b"{not json")
    at = AppTest.from_file(APP, default_timeout=60).run()
    assert not at.exception
    assert any("autosave cannot be read" in shown(w.value) for w in at.sidebar.warning)
    assert at.session_state["draft"]["site"]["name"].startswith("Larkspur Yard")


def test_previous_autosave_kept_as_backup(tmp_path):
    """Writing the working copy twice keeps the first as .bak (atomic write, previous version)."""
    p = tmp_path / "w.json"
    autosave.write_draft({"site": {"name": "one"}}, p)
    autosave.write_draft({"site": {"name": "two"}}, p)
    assert json.loads(p.read_text())["site"]["name"] == "two"
    assert json.loads((tmp_path / "w.json.bak").read_text())["site"]["name"] == "one"


def test_misshapen_autosave_refused_not_rendered():
    """An autosave with `positions` a string is refused with a message; every page opens."""
    path = autosave.autosave_path()
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(json.dumps({"site": {"name": "x"}, "climate": {}, "buildings": [],
                                "positions": "p1", "turbines": None}))
    at = AppTest.from_file(APP, default_timeout=60).run()
    assert not at.exception
    assert "autosave_found" not in at.session_state
    assert any("not shaped like a working site" in shown(w.value) for w in at.sidebar.warning)
    for page in ("steps/step_layout.py", "steps/step_turbines.py", "steps/step_results.py"):
        at.switch_page(page).run()
        assert not at.exception, page


def test_offered_autosave_survives_edits_until_declined():
    """Offered but not restored: two edits later it is still on disk, and still offered."""
    autosave.write_draft({**json.loads(autosave.draft_text(_demo_draft())),
                          "site": {**_demo_draft()["site"], "altitude_m": 321.0}})
    at = AppTest.from_file(APP, default_timeout=60).run()
    assert "autosave_found" in at.session_state
    _number_input(at, "Altitude").set_value(100.0).run()
    _number_input(at, "Altitude").set_value(101.0).run()
    fresh = AppTest.from_file(APP, default_timeout=60).run()
    assert fresh.session_state["autosave_found"][0]["site"]["altitude_m"] == 321.0
    next(b for b in fresh.button if b.label == "Keep the demo").click().run()
    assert not autosave.offered_path().exists()


def test_infinite_number_is_refused_not_zero():
    """1e999 in a number field is infinity: refused with a message, never taken as 0."""
    at = AppTest.from_file(APP, default_timeout=60).run()
    _number_input(at, "Altitude").set_value(float("inf")).run()
    assert not at.exception
    assert at.session_state["draft"]["site"]["altitude_m"] is None
    assert any(w == "site.altitude_m" for w, _ in at.session_state["problems"])


def _demo_draft() -> dict:
    root = Path(__file__).resolve().parents[2]
    return json.loads((root / "demo_sites" / "larkspur_yard.json").read_text(encoding="utf-8"))
