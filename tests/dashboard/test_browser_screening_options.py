"""In a real headless Chromium: the screening page's model options and their effect."""
from __future__ import annotations

import pytest

from conftest import ARTIFACTS

pytestmark = [pytest.mark.browser, pytest.mark.slow]

IDLE = '[data-testid="stApp"][data-test-script-state="notRunning"]'


def test_per_sector_surroundings_show_their_effect(page, dashboard_url):
    """Per-sector surroundings switched on: after Screen, the table of class shares with and
    without the options is drawn above the plan."""
    from playwright.sync_api import expect

    page.set_viewport_size({"width": 1400, "height": 1500})
    page.goto(f"{dashboard_url}/screening")
    page.wait_for_selector(IDLE, state="attached")
    page.get_by_text("Model options", exact=True).click()
    page.get_by_text("Per-sector surroundings", exact=True).click()
    page.get_by_test_id("stBaseButton-primaryFormSubmit").click()
    head = page.get_by_role("heading", name="What the model options do")
    expect(head).to_be_visible(timeout=120000)
    page.wait_for_selector(IDLE, state="attached")
    expect(page.get_by_test_id("stDataFrame")).to_have_count(2)  # the shares, the shortlist
    head.scroll_into_view_if_needed()
    page.wait_for_timeout(600)
    page.screenshot(path=str(ARTIFACTS / "browser-screening-options.png"), full_page=False)
