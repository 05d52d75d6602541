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


def test_leading_option_words_and_a_live_price_what_if(page, dashboard_url):
    """What a person sees: the leading row named with its verdict (no "best"), the ranked
    table with each row's verdict and reason, and a typed import price (the two constraints
    switched off) turning the headline into the engine's paying verdict."""
    import dataclasses

    from playwright.sync_api import expect

    demo = pipeline.evaluate(sitefile.load(ROOT / "demo_sites" / "larkspur_yard.json"))
    lead = demo.table[~demo.table["excluded"]].iloc[0]
    page.set_viewport_size({"width": 1400, "height": 1400})
    page.goto(dashboard_url)
    page.wait_for_selector(IDLE, state="attached")
    page.get_by_role("link", name=re.compile("^5. Results")).click()
    page.wait_for_selector(IDLE, state="attached")
    expect(page.get_by_text(f"Leading option ({lead['verdict']})")).to_be_visible()
    head = page.locator('[data-testid="stTable"]').first.locator("thead")
    expect(head).to_contain_text("verdict")
    expect(head).to_contain_text("reason")
    main = page.locator('[data-testid="stMain"]')
    assert not re.search(r"\bbest\b|recommend", main.inner_text(), re.IGNORECASE)
    page.screenshot(path=str(ARTIFACTS / "browser-verdict-leading-option.png"), full_page=True)

    for label in ("Keep the rotor clear of the roof's high-turbulence zone",
                  "Exclude positions louder than a receptor's limit"):
        page.get_by_text(label, exact=True).click()
        page.wait_for_selector(IDLE, state="attached")
    price = page.get_by_role("spinbutton", name="Price of a kWh")
    price.fill("1.5")
    price.press("Enter")
    a = demo.assessment
    b = dataclasses.replace(
        a, economics=dataclasses.replace(a.economics, tariff_per_kwh=1.5),
        ranking=dataclasses.replace(a.ranking, require_clear_of_turbulence_zone=False,
                                    apply_noise_limits=False))
    want = verdict.headline_for(pipeline.evaluate(b))
    assert verdict.VERDICTS[0] in want
    expect(page.get_by_text(want.split(":")[0], exact=False).first).to_be_visible()
    expect(page.get_by_text("Leading option (pays back within its life)")).to_be_visible()
    page.wait_for_selector(IDLE, state="attached")
    page.screenshot(path=str(ARTIFACTS / "browser-verdict-price-what-if.png"), full_page=True)
