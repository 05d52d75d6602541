"""In a real headless Chromium: "Forget it" on a kept record, while the upload box still shows
the file, and the same file uploaded again after removing it from the box."""
from __future__ import annotations

import re

import pytest

from conftest import ARTIFACTS, ROOT

pytestmark = [pytest.mark.browser, pytest.mark.slow]

IDLE = '[data-testid="stApp"][data-test-script-state="notRunning"]'
LOGGER = ROOT / "demo_sites" / "records" / "roof_logger_two_heights.csv"


def _idle(page):
    page.wait_for_timeout(300)
    page.wait_for_selector(IDLE, state="attached", timeout=60000)


def test_forget_it_forgets_while_the_box_still_shows_the_file(page, dashboard_url, tmp_path):
    from playwright.sync_api import expect

    page.goto(dashboard_url)
    _idle(page)
    page.get_by_role("link", name=re.compile("^2. Wind climate")).click()
    _idle(page)
    page.get_by_text("Upload a measured record", exact=True).click()
    _idle(page)
    page.locator('[data-testid="stFileUploaderDropzoneInput"]').first.set_input_files(
        str(LOGGER))
    _idle(page)
    expect(page.get_by_text("Record kept:", exact=False)).to_be_visible()
    expect(page.get_by_text("not built from it yet", exact=False)).to_be_visible()
    page.get_by_role("button", name="Forget it").click()
    _idle(page)
    expect(page.get_by_text("forgotten: remove it from the box above", exact=False)
           ).to_be_visible()
    expect(page.get_by_text("Record kept:", exact=False)).to_have_count(0)
    expect(page.get_by_role("button", name="Build the climate from this record")
           ).to_have_count(0)
    page.screenshot(path=str(ARTIFACTS / "browser-record-forgotten.png"))
    # the box's own remove button, then the same file again: kept again
    page.locator('[data-testid="stFileChipDeleteBtn"]').first.click()
    _idle(page)
    page.screenshot(path=str(ARTIFACTS / "browser-record-removed.png"))
    again = tmp_path / LOGGER.name  # the same name and bytes (the input ignores a same path)
    again.write_bytes(LOGGER.read_bytes())
    page.locator('[data-testid="stFileUploaderDropzoneInput"]').first.set_input_files(
        str(again))
    _idle(page)
    page.screenshot(path=str(ARTIFACTS / "browser-record-again.png"))
    expect(page.get_by_text("Record kept:", exact=False)).to_be_visible()
    expect(page.get_by_role("button", name="Build the climate from this record")
           ).to_be_visible()
