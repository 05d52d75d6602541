"""The results and summary steps lead with the engine's verdict headline (AppTest)."""
from __future__ import annotations

import re
from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest

from engine.chain import pipeline, verdict
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[2]
APP = str(ROOT / "dashboard" / "app.py")
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"


@pytest.mark.parametrize("page", ["steps/step_results.py", "steps/step_summary.py"])
def test_page_shows_the_engine_headline(page):
    """The page's text holds the engine's headline for the demo, word for word."""
    want = verdict.headline_for(pipeline.evaluate(sitefile.load(DEMO)))
    at = AppTest.from_file(APP, default_timeout=90)
    at.run()
    at.switch_page(page).run()
    assert not at.exception, at.exception
    # What a person reads: the summary escapes the headline's Markdown (it quotes ids).
    shown = [re.sub(r"\\(.)", r"\1", e.value) for e in at.markdown]
    assert f"**{want}**" in shown
    assert "recommend" not in want.lower()
