"""In a real headless Chromium: the layout step's roof suggestions, table and plan."""
from __future__ import annotations

import re

import pytest

from conftest import ARTIFACTS

pytestmark = [pytest.mark.browser, pytest.mark.slow]

IDLE = '[data-testid="stApp"][data-test-script-state="notRunning"]'


def test_suggest_positions_on_a_roof_shows_table_and_plan(page, dashboard_url):
    """A click on "Suggest positions on this roof" shows the candidates' table, the button
    that adds the ticked ones and the plan of the suggestions, with the safety words."""
    from playwright.sync_api import expect

    page.set_viewport_size({"width": 1400, "height": 1600})
    page.goto(dashboard_url)
    page.wait_for_selector(IDLE, state="attached")
    page.get_by_role("link", name=re.compile("^3. Buildings")).click()
    page.wait_for_selector(IDLE, state="attached")
    go = page.get_by_role("button", name="Suggest positions on this roof")
    go.scroll_into_view_if_needed()
    go.click()
    page.wait_for_selector(IDLE, state="attached")
    add = page.get_by_role("button", name="Add the ticked positions to the site")
    expect(add).to_be_visible(timeout=30000)
    expect(page.get_by_text("structural engineer", exact=False).last).to_be_visible()
    charts = page.locator('[data-testid="stVegaLiteChart"]')
    expect(charts.last).to_be_visible()
    editors = page.locator('[data-testid="stDataFrame"]')
    assert editors.count() >= 3  # buildings, positions and the suggestions
    add.scroll_into_view_if_needed()
    page.wait_for_timeout(800)
    page.screenshot(path=str(ARTIFACTS / "browser-roof-suggestions.png"), full_page=True)
