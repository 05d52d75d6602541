"""In a real headless Chromium: the results step leads with the verdict headline."""
from __future__ import annotations

import re

import pytest

from conftest import ARTIFACTS, ROOT
from engine.chain import pipeline, verdict
from engine.io import sitefile

pytestmark = [pytest.mark.browser, pytest.mark.slow]

IDLE = '[data-testid="stApp"][data-test-script-state="notRunning"]'


def test_results_lead_with_the_verdict(page, dashboard_url):
    """The headline the engine gives for the demo is visible above the ranked table."""
    from playwright.sync_api import expect

    want = verdict.headline_for(pipeline.evaluate(
        sitefile.load(ROOT / "demo_sites" / "larkspur_yard.json")))
    page.goto(dashboard_url)
    page.wait_for_selector(IDLE, state="attached")
    page.get_by_role("link", name=re.compile("^5. Results")).click()
    page.wait_for_selector(IDLE, state="attached")
    head = page.get_by_text(want.split(";")[0], exact=False).first
    expect(head).to_be_visible()
    box, table = head.bounding_box(), page.locator('[data-testid="stTable"]').first.bounding_box()
    assert box["y"] < table["y"]  # the verdict comes before the ranking
    page.set_viewport_size({"width": 1400, "height": 1400})
    page.wait_for_timeout(400)
    page.screenshot(path=str(ARTIFACTS / "browser-verdict-results.png"), full_page=True)
