"""The layout step's noise and flicker criteria in a real headless Chromium: the cautions,
the criterion in plain words, the monthly sunshine with a bad month named beside it, and
the measured background table."""
from __future__ import annotations

import re

import pytest

from conftest import ARTIFACTS

pytestmark = [pytest.mark.browser, pytest.mark.slow]

IDLE = '[data-testid="stApp"][data-test-script-state="notRunning"]'


def idle(page):
    page.wait_for_selector(IDLE, state="attached")


def test_noise_and_flicker_criteria_as_a_person_sees_them(page, dashboard_url):
    from playwright.sync_api import expect

    page.goto(dashboard_url)
    idle(page)
    page.get_by_role("link", name=re.compile(r"^3\. Buildings & positions")).click()
    idle(page)
    page.get_by_text("Noise and flicker criteria").click()
    idle(page)
    panel = page.get_by_test_id("stExpander").filter(has_text="Noise and flicker criteria")
    expect(panel.get_by_text("screening estimates", exact=False)).to_be_visible()
    expect(panel.get_by_text("qualified acoustician", exact=False)).to_be_visible()
    box = panel.get_by_role("combobox", name="Noise criterion")
    expect(box).to_have_value(re.compile("fixed limit at each place"))
    box.scroll_into_view_if_needed()
    option = page.get_by_role("option", name=re.compile("measured background plus a margin"))
    for _ in range(3):  # the list opens once the expander has settled
        box.click()
        try:
            option.wait_for(timeout=3000)
            break
        except Exception:
            page.keyboard.press("Escape")
    option.click()
    idle(page)
    expect(panel.get_by_role("combobox", name="Noise criterion")).to_have_value(
        re.compile("measured background plus a margin"))
    panel.get_by_test_id("stAlert").first.scroll_into_view_if_needed()
    page.mouse.move(0, 0)
    page.wait_for_timeout(300)
    page.screenshot(path=str(ARTIFACTS / "browser-neighbour-criterion.png"))
    panel.get_by_text("A value for each month").click()
    idle(page)
    july = panel.get_by_label("Jul")
    expect(july).to_be_visible()
    july.fill("1.5")
    july.press("Enter")
    idle(page)
    alert = panel.get_by_test_id("stAlert").filter(has_text="Jul")
    expect(alert).to_contain_text(re.compile(r"must be (>=|≥) 0 and (<=|≤) 1, got 1\.5"))
    expect(july).to_have_value("1.50")
    panel.scroll_into_view_if_needed()
    page.mouse.move(0, 0)
    page.wait_for_timeout(300)
    page.screenshot(path=str(ARTIFACTS / "browser-neighbour-criteria.png"), full_page=True)

    page.get_by_text("Measured background noise at each place").click()
    idle(page)
    bg = page.get_by_test_id("stExpander").filter(
        has_text="Measured background noise at each place")
    expect(bg.get_by_test_id("stDataFrame").first).to_be_visible()
    expect(bg.get_by_text("No measured background here", exact=False).first).to_be_visible()
    bg.scroll_into_view_if_needed()
    page.mouse.move(0, 0)
    page.wait_for_timeout(300)
    page.screenshot(path=str(ARTIFACTS / "browser-neighbour-background.png"))
