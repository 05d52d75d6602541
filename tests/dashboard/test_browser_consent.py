"""The layout step's consent inputs in a real headless Chromium: the rule-set panel, a bad
rule-set file refused with its field named, and the receptors' new columns."""
from __future__ import annotations

import json
import re

import pytest

from conftest import ARTIFACTS

pytestmark = [pytest.mark.browser, pytest.mark.slow]

IDLE = '[data-testid="stApp"][data-test-script-state="notRunning"]'


def idle(page):
    page.wait_for_selector(IDLE, state="attached")


def test_rule_set_panel_refuses_a_bad_file_with_its_field(page, dashboard_url, tmp_path):
    from playwright.sync_api import expect

    page.goto(dashboard_url)
    idle(page)
    page.get_by_role("link", name=re.compile(r"^3\. Buildings & positions")).click()
    idle(page)
    page.get_by_text("Places where noise matters (windows, gardens)").click()
    idle(page)
    noise = page.get_by_test_id("stExpander").filter(has_text="Places where noise matters")
    expect(noise.get_by_test_id("stDataFrame")).to_be_visible()
    noise.scroll_into_view_if_needed()
    page.mouse.move(0, 0)
    page.wait_for_timeout(300)
    page.screenshot(path=str(ARTIFACTS / "browser-consent-receptors.png"))
    page.get_by_text("Local siting rules (a rule-set file)").click()
    idle(page)
    panel = page.get_by_test_id("stExpander").filter(has_text="Local siting rules")
    expect(panel.get_by_text("local planning authority decides", exact=False)).to_be_visible()
    expect(panel.get_by_text("Rule set in use:", exact=False)).to_be_visible()
    bad = tmp_path / "bad-rules.json"
    bad.write_text(json.dumps({"name": "x", "rules": [
        {"id": "tip", "kind": "tip_height_max_m", "limit": -1}]}), encoding="utf-8")
    panel.locator('input[type="file"]').set_input_files(str(bad))
    idle(page)
    panel.get_by_role("button", name="Use this rule set").click()
    idle(page)
    alert = panel.get_by_test_id("stAlert")
    expect(alert).to_contain_text("bad-rules.json was not used")
    expect(alert).to_contain_text("rules[0] (tip).limit")
    expect(alert).to_contain_text("must be a number > 0, got -1")
    expect(panel.get_by_text("Rule set in use:", exact=False)).to_be_visible()
    panel.scroll_into_view_if_needed()
    page.mouse.move(0, 0)
    page.wait_for_timeout(300)
    page.screenshot(path=str(ARTIFACTS / "browser-consent-rule-set.png"), full_page=True)
