"""In a real headless Chromium: a roof logger measured at a position, long-term corrected
against a reference station, and what a person then sees on the climate and results steps."""
from __future__ import annotations

import re

import pytest

from conftest import ARTIFACTS, ROOT

pytestmark = [pytest.mark.browser, pytest.mark.slow]

IDLE = '[data-testid="stApp"][data-test-script-state="notRunning"]'
RECORDS = ROOT / "demo_sites" / "records"


def _idle(page):
    page.wait_for_timeout(300)
    page.wait_for_selector(IDLE, state="attached", timeout=60000)


def test_logger_with_a_long_term_reference_shows_the_correction_and_the_series(page,
                                                                               dashboard_url):
    from playwright.sync_api import expect

    page.set_viewport_size({"width": 1400, "height": 1400})
    page.goto(dashboard_url)
    _idle(page)
    page.get_by_role("link", name=re.compile("^2. Wind climate")).click()
    _idle(page)
    page.get_by_text("Upload a measured record", exact=True).click()
    _idle(page)
    inputs = page.locator('[data-testid="stFileUploaderDropzoneInput"]')
    inputs.first.set_input_files(str(RECORDS / "roof_logger_two_heights.csv"))
    _idle(page)
    expect(page.get_by_text("Logged heights: 2, 5 m", exact=False)).to_be_visible()
    page.get_by_text(re.compile("^At one of this site's positions")).click()
    _idle(page)
    page.get_by_text("Correct to the long term with a reference").click()
    _idle(page)
    page.locator('[data-testid="stFileUploaderDropzoneInput"]').nth(1).set_input_files(
        str(RECORDS / "reanalysis_grid.nc"))
    _idle(page)
    page.get_by_text("Use the long-term correction", exact=True).click()
    _idle(page)
    for name, value in (("Latitude (°)", "51.5"), ("Longitude (°)", "-1.25")):
        box = page.get_by_role("spinbutton", name=name)
        box.fill(value)
        box.press("Enter")
        _idle(page)
    page.get_by_role("button", name="Build the climate from this record").click()
    _idle(page)
    expect(page.get_by_text("Long-term adjustment")).to_be_visible()
    expect(page.get_by_text(re.compile("Concurrent pairs: .*r = 0\\.9"))).to_be_visible()
    expect(page.get_by_text("mast set to the logger's height", exact=False)).to_be_visible()
    page.get_by_text("Long-term adjustment").scroll_into_view_if_needed()
    page.wait_for_timeout(800)
    page.screenshot(path=str(ARTIFACTS / "browser-record-long-term.png"))

    page.get_by_role("link", name=re.compile("^5. Results")).click()
    _idle(page)
    head = page.get_by_text("Time-series yield of the leading option")
    head.scroll_into_view_if_needed()
    expect(head).to_be_visible()
    expect(page.get_by_text("Series against fit")).to_be_visible()
    page.get_by_text("Series against fit").scroll_into_view_if_needed()
    page.wait_for_timeout(800)
    page.screenshot(path=str(ARTIFACTS / "browser-record-series-yield.png"))
