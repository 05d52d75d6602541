"""One quantity, one name, and display units on every table (AppTest and the sources)."""
from __future__ import annotations

import ast
import json
import re
from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest

from engine import screening
from engine.io import sitefile
from engine.report import inputs as report_inputs

ROOT = Path(__file__).resolve().parents[2]
APP = str(ROOT / "dashboard" / "app.py")
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
DISTRICT = ROOT / "demo_sites" / "district_1000.csv"
FT = 0.3048  # 1 ft = 0.3048 m exactly (NIST SP 811)
MPH = 0.44704  # 1 mph = 0.44704 m/s exactly (NIST SP 811)


def _at(page: str) -> AppTest:
    at = AppTest.from_file(APP, default_timeout=90)
    at.run()
    at.switch_page(page).run()
    assert not at.exception, at.exception
    return at


def test_transfer_uncertainty_has_the_summary_name():
    """The turbines step names the station-to-site uncertainty as the summary does."""
    summary = report_inputs.LABELS[("uncertainty", "speed_transfer")]
    name = summary.split(" (")[0]
    labels = [w.label for w in _at("steps/step_turbines.py").number_input]
    assert name in labels
    assert not [x for x in labels if "carrying" in x.lower()]


def _dashboard_strings() -> list:
    out = []
    for path in sorted((ROOT / "dashboard").rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        docs = {id(n.body[0].value) for n in ast.walk(tree)
                if isinstance(n, (ast.Module, ast.FunctionDef, ast.ClassDef)) and n.body
                and isinstance(n.body[0], ast.Expr)
                and isinstance(n.body[0].value, ast.Constant)}
        out += [(path.name, n.value) for n in ast.walk(tree)
                if isinstance(n, ast.Constant) and isinstance(n.value, str)
                and id(n) not in docs]
    return out


def test_dashboard_words_say_passage_not_gap():
    """The engine's words call a position between two buildings a passage; no text the
    dashboard shows says "gap" (the site file's own value "gap" and key ``gap_buildings``
    stay, they are the file format)."""
    word = re.compile(r"(?<![_\w])gaps?(?![_\w])", re.IGNORECASE)
    bad = [(f, s) for f, s in _dashboard_strings() if word.search(s) and s != "gap"]
    assert not bad, bad
    caption = " ".join(c.value for c in _at("steps/step_layout.py").caption)
    assert "passage position between two" in caption


def test_screening_shortlist_follows_the_display_units():
    """With feet and miles per hour chosen, the shortlist's masts, hubs, heights and mean
    speeds are the engine's SI figures converted, and its headers say so."""
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.radio(key="length_unit").set_value("ft").run()
    at.radio(key="speed_unit").set_value("mph").run()
    at.switch_page("screening_page.py").run()
    at.button(key="FormSubmitter:screening_form-Screen").click().run()
    assert not at.exception, at.exception
    shown = at.dataframe[0].value
    ctx = screening.context_from_assessment(sitefile.load(DEMO))
    want = screening.screen_local(DISTRICT, ctx).table
    want = want[want["suitability"] != "unsuitable"].head(len(shown)).set_index("id")
    got = shown.set_index("id")
    for col in ("mast_height_m", "hub_height_m", "height_m"):
        assert got[col].to_numpy() == pytest.approx(want[col].to_numpy() / FT, rel=1e-9)
    assert got["mean_speed_ms"].to_numpy() == pytest.approx(
        want["mean_speed_ms"].to_numpy() / MPH, rel=1e-9)
    headers = {k: v.get("label") for k, v in json.loads(at.dataframe[0].proto.columns).items()}
    assert headers["mast_height_m"] == "mast (ft)"
    assert headers["hub_height_m"] == "hub (ft)"
    assert headers["height_m"] == "building height (ft)"
    assert headers["mean_speed_ms"] == "mean speed (mph)"
