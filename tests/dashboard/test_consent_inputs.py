"""Consent inputs on the layout step through Streamlit's AppTest: the receptors' window
facing, window height, dwelling and noise criterion, and the rule set chosen from a JSON file
(checked by engine.chain.rules.load_rule_set, every problem named by its field)."""
from __future__ import annotations

import json
import re

from engine.chain import rules as rule_sets

from test_app import DEMO, _app, _go

LAYOUT = "steps/step_layout.py"
RULES = DEMO.parent / "rules" / "example_borough.json"


def shown(markdown: str) -> str:
    """The text a person reads from Markdown source whose user text is backslash-escaped."""
    return re.sub(r"\\(.)", r"\1", markdown).replace("\u200b", "")  # escapes, word breaks


def _errors(at) -> str:
    return " ".join(shown(e.value) for e in at.error)


def _receptors_key(at) -> str:
    return f"ed|receptors|{at.session_state['gen']}|m/s|m"


def _upload(at, name: str, data: bytes):
    at.file_uploader(key="rule_set_upload").upload(name, data, "application/json").run()
    at.button(key="use_rule_set").click().run()
    assert not at.exception, at.exception
    return at


def test_receptor_facing_height_dwelling_and_criterion_reach_the_assessment():
    """The editor shows the new columns; an edit reaches the valid assessment in SI."""
    at = _go(_app(), LAYOUT)
    table = next(d for d in at.data_editor if d.key == _receptors_key(at))
    for label in ("noise criterion (dB(A))", "window faces (°)", "window height (m)",
                  "dwelling"):
        assert label in table.value.columns
    at.session_state[_receptors_key(at)] = {
        "edited_rows": {0: {"window faces (°)": 135.0, "window height (m)": 4.5,
                            "noise criterion (dB(A))": 38.0, "dwelling": False}},
        "added_rows": [], "deleted_rows": []}
    at.run()
    assert not at.exception and not _errors(at)
    r = at.session_state["valid"].receptors[0]
    assert (r.facing_deg, r.window_height_m, r.limit_db, r.dwelling) == (135.0, 4.5, 38.0, False)


def test_a_valid_rule_set_file_becomes_the_sites_rules():
    """The demo's rule-set file, uploaded, gives exactly the rules load_rule_set reads."""
    at = _go(_app(), LAYOUT)
    at.button(key="clear_rule_set").click().run()
    assert at.session_state["valid"].consent.rules == ()
    _upload(at, "borough.json", RULES.read_bytes())
    name, _note, want = rule_sets.load_rule_set(str(RULES))
    got = at.session_state["valid"].consent
    assert got.rules == want and got.rule_set_name == name
    assert not _errors(at)
    assert any(name in shown(m.value) for m in at.markdown)


def test_a_bad_rule_set_names_the_field_and_keeps_the_rules():
    """A limit of -1, a kind that does not exist, text that is not JSON and a JSON list are
    each refused with the field named; the site's rules stay as they were."""
    at = _go(_app(), LAYOUT)
    before = at.session_state["valid"].consent.rules
    assert before, "the demo site is expected to carry a rule set"
    bad = {"name": "x", "rules": [{"id": "tip", "kind": "tip_height_max_m", "limit": -1},
                                  {"id": "odd", "kind": "no_such_kind", "limit": 2}]}
    _upload(at, "bad.json", json.dumps(bad).encode())
    text = _errors(at)
    assert "bad.json was not used" in text
    assert "rules[0] (tip).limit" in text and "must be a number > 0, got -1" in text
    assert "rules[1] (odd).kind" in text and "no_such_kind" in text
    assert at.session_state["valid"].consent.rules == before
    assert at.session_state["draft"]["consent"]["rules"] == json.loads(
        DEMO.read_text())["consent"]["rules"]
    _upload(at, "broken.json", b'{"name": "x", "rules": [')
    assert "not valid JSON" in _errors(at) and "line 1" in _errors(at)
    _upload(at, "list.json", b'[{"id": "a"}]')
    assert "rule_set:** must be a JSON object" in _errors(at) and "got a JSON list" in _errors(at)
    assert at.session_state["valid"].consent.rules == before
