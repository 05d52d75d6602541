"""Bad uploads through the dashboard: the page names the problem and the valid state stays."""
from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest
from streamlit.testing.v1 import AppTest

from dashboard import exports


def shown(markdown: str) -> str:
    """The text a person reads from Markdown source whose user text is backslash-escaped."""
    return re.sub(r"\\(.)", r"\1", markdown).replace("\u200b", "")  # escapes, word breaks


ROOT = Path(__file__).resolve().parents[2]
APP = str(ROOT / "dashboard" / "app.py")
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"


def _app() -> AppTest:
    at = AppTest.from_file(APP, default_timeout=60)
    at.run()
    assert not at.exception, at.exception
    return at


def _errors(at) -> list:
    return [shown(e.value) for e in at.error]


def _demo() -> dict:
    return json.loads(DEMO.read_text(encoding="utf-8"))


def _newer() -> bytes:
    d = _demo()
    d["format_version"] = 99
    return json.dumps(d).encode()


def _wrong_types() -> bytes:
    d = _demo()
    d["site"]["altitude_m"] = "high"
    d["turbines"][0]["rated_power_w"] = None
    return json.dumps(d).encode()


BAD_SITE_FILES = {
    "binary junk": lambda: np.random.default_rng(3).bytes(2048),
    "5000-digit number": lambda: b'{"format_version": ' + b"9" * 5000 + b"}",
    "deep nesting": lambda: b"[" * 100000 + b"]" * 100000,
    "newer format": _newer,
    "wrong types": _wrong_types,
    "empty": lambda: b"",
}


@pytest.mark.parametrize("name", BAD_SITE_FILES)
def test_bad_site_file_upload_is_named_and_the_open_site_kept(name):
    """Each damaged site file shows an error on the page; the open assessment does not change."""
    at = _app()
    before = exports.site_file_bytes(at.session_state["valid"])
    at.file_uploader(key="site_upload").upload(f"{name}.json", BAD_SITE_FILES[name](),
                                               "application/json").run()
    at.button(key="open_site").click().run()
    assert not at.exception, at.exception
    assert _errors(at), "no message shown"
    assert exports.site_file_bytes(at.session_state["valid"]) == before


def test_utf16_site_file_opens():
    """A site file saved as UTF-16 (with its byte-order mark) is decoded, not called binary."""
    at = _app()
    at.file_uploader(key="site_upload").upload("utf16.json", DEMO.read_text(
        encoding="utf-8").encode("utf-16"), "application/json").run()
    at.button(key="open_site").click().run()
    assert not at.exception, at.exception
    assert not _errors(at)
    assert at.session_state["valid"].site.name.startswith("Larkspur Yard")


def test_wrong_types_name_every_field_on_the_page():
    """Two bad fields in one file give two messages, each naming its field."""
    at = _app()
    at.file_uploader(key="site_upload").upload("two.json", _wrong_types(),
                                               "application/json").run()
    at.button(key="open_site").click().run()
    text = " ".join(_errors(at))
    assert "site.altitude_m" in text and "turbines[0].rated_power_w" in text


def test_older_format_opens_with_a_note():
    """A format-0 site file opens, and the page says what the migration changed."""
    d = _demo()
    heights = {b["id"]: b["height_m"] for b in d["buildings"]}
    for p in d["positions"]:
        base = heights[p["building_id"]] if p["kind"] == "roof" else 0.0
        p["hub_height_m"] = base + p.pop("mast_height_m")
    d["format_version"] = 0
    at = _app()
    at.file_uploader(key="site_upload").upload("old.json", json.dumps(d).encode(),
                                               "application/json").run()
    at.button(key="open_site").click().run()
    assert not at.exception, at.exception
    assert not _errors(at), _errors(at)
    infos = " ".join(shown(i.value) for i in at.info)
    assert "format_version 0" in infos and "hub_height_m" in infos
    want = {p["id"]: p for p in _demo()["positions"]}
    for p in at.session_state["valid"].positions:
        assert p.mast_height_m == pytest.approx(want[p.id]["mast_height_m"], abs=1e-9)


BAD_RECORDS = {
    "binary junk": lambda: np.random.default_rng(4).bytes(4096),
    "utf-16": lambda: "timestamp,speed_ms\n2025-01-01 00:00,5.0\n".encode("utf-16"),
    "no speed column": lambda: b"timestamp,colour\n2025-01-01 00:00,red\n",
    "header only": lambda: b"timestamp,speed_ms,direction_deg\n",
}


@pytest.mark.parametrize("name", BAD_RECORDS)
def test_bad_record_upload_is_named_and_the_climate_kept(name):
    """A damaged measured record shows its problem; the climate in use does not change."""
    at = _app()
    at.switch_page("steps/step_climate.py").run()
    before = at.session_state["valid"].climate
    at.radio(key="climate_mode_w").set_value("measured").run()
    at.file_uploader(key="record_upload").upload(f"{name}.csv", BAD_RECORDS[name](),
                                                 "text/csv").run()
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception
    assert _errors(at), "no message shown"
    assert at.session_state["valid"].climate == before


def test_tiny_discount_rate_shows_results_and_summary():
    """A discount rate so small that 1 + r rounds to 1 (below about 1e-16) once divided by zero
    in the annuity factor; the limit as r -> 0 is the undiscounted sum (Short, Packey & Holt
    1995, NREL/TP-462-5173). Results and the summary show, with no error."""
    d = _demo()
    d["economics"]["discount_rate"] = 1e-17
    at = _app()
    at.file_uploader(key="site_upload").upload("tiny-rate.json", json.dumps(d).encode(),
                                               "application/json").run()
    at.button(key="open_site").click().run()
    assert not at.exception, at.exception
    assert at.session_state["valid"].economics.discount_rate == 1e-17
    for page in ("steps/step_results.py", "steps/step_summary.py"):
        at.switch_page(page).run()
        assert not at.exception, at.exception
        assert not _errors(at), _errors(at)
    at.button(key="make_report").click().run()
    assert not at.exception, at.exception
    assert not _errors(at), _errors(at)
    labels = [b.label for b in at.get("download_button")]
    assert any("HTML" in lb for lb in labels) and any("PDF" in lb for lb in labels), labels
