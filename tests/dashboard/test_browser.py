"""The dashboard in a real headless Chromium: walk the demo to the ranking, change a mast."""
from __future__ import annotations

import re

import pytest

from conftest import ARTIFACTS, ROOT
from engine import screening
from engine.io import sitefile

pytestmark = [pytest.mark.browser, pytest.mark.slow]

IDLE = '[data-testid="stApp"][data-test-script-state="notRunning"]'


def idle(page):
    page.wait_for_selector(IDLE, state="attached")


def shot(page, name: str) -> None:
    """Full-page screenshot: the viewport grows to the main block's height first."""
    height = page.evaluate(
        "() => { const m = document.querySelector('[data-testid=\"stMain\"]');"
        " return m ? m.scrollHeight : document.body.scrollHeight; }")
    page.set_viewport_size({"width": 1400, "height": max(900, min(int(height) + 40, 8000))})
    page.wait_for_timeout(400)
    page.screenshot(path=str(ARTIFACTS / f"{name}.png"), full_page=True)
    page.set_viewport_size({"width": 1400, "height": 1000})


def first_ranked(page):
    return page.locator('[data-testid="stTable"]').first.locator("tbody tr").first


def choose(page, label: str, option: str, nth: int = 0) -> None:
    """Pick ``option`` in the ``nth`` selectbox labelled ``label``."""
    page.get_by_role("combobox", name=label, exact=True).nth(nth).click()
    page.get_by_role("option", name=option, exact=True).click()
    idle(page)


def test_walk_the_demo_and_change_a_mast(page, dashboard_url):
    """From the first step to the ranking; without the noise criteria the tower roof leads, and
    the two what-ifs compare."""
    from playwright.sync_api import expect

    page.goto(dashboard_url)
    idle(page)
    expect(page.get_by_role("heading", name="1. Site")).to_be_visible()
    expect(page.get_by_text("All steps complete.")).to_be_visible()
    shot(page, "browser-1-site")
    for label, heading, name in (("2. Wind climate", "2. Wind climate", "browser-2-climate"),
                                 ("3. Buildings & positions", "3. Buildings & positions",
                                  "browser-3-layout"),
                                 ("4. Turbines & costs", "4. Turbines & costs",
                                  "browser-4-turbines"),
                                 ("5. Results", "5. Results", "browser-5-results")):
        page.get_by_role("link", name=re.compile("^" + re.escape(label))).click()
        idle(page)
        expect(page.get_by_role("heading", name=heading)).to_be_visible()
        page.wait_for_timeout(300)
        shot(page, name)

    top = first_ranked(page)
    # On the demo only the passage clears the roof zones and the noise criteria.
    expect(top).to_contain_text("mill-tower-gap")
    # a field shown on two steps keeps its value across the page change
    expect(page.get_by_role("spinbutton", name="Price of a kWh")).to_have_value("0.250")
    noise = page.get_by_text("Exclude positions louder than a receptor's limit")
    noise.click()  # the what-if: without the noise criteria the tower roof leads
    expect(top).to_contain_text("tower-centre")
    idle(page)
    shot(page, "browser-6-results-without-noise-limits")

    name = page.get_by_role("textbox", name="Save as scenario")
    name.fill("no noise limits")
    name.press("Enter")
    idle(page)
    page.get_by_role("button", name="Save scenario").click()
    idle(page)
    noise.click()
    expect(top).to_contain_text("mill-tower-gap")
    name.fill("as drawn")
    name.press("Enter")
    idle(page)
    page.get_by_role("button", name="Save scenario").click()
    idle(page)

    page.get_by_role("link", name="Compare what-ifs").first.click()
    idle(page)
    expect(page.get_by_role("heading", name="Inputs that differ")).to_be_visible()
    expect(page.get_by_text("no noise limits").first).to_be_visible()
    shot(page, "browser-6b-compare")

    page.get_by_role("link", name=re.compile(r"^6\. Summary")).click()
    idle(page)
    expect(page.get_by_role("heading", name="Safety cautions")).to_be_visible()
    expect(page.get_by_role("button", name="Site file (JSON)")).to_be_visible()
    shot(page, "browser-7-summary")


def test_bad_value_shows_message_in_the_browser(page, dashboard_url):
    """An altitude out of range shows its message beside the field; fixing it clears it."""
    from playwright.sync_api import expect

    page.goto(dashboard_url)
    idle(page)
    alt = page.get_by_role("spinbutton", name="Altitude above sea level (m)")
    alt.fill("9000")
    alt.press("Enter")
    expect(page.get_by_text(re.compile(r"must be (>=|≥) -450 and (<=|≤) 5000"))).to_be_visible()
    site_name = page.get_by_role("textbox", name="Site name")
    expect(site_name).to_have_value(re.compile("^Larkspur Yard"))
    shot(page, "browser-8-bad-altitude")
    alt.fill("45")
    alt.press("Enter")
    expect(page.get_by_text("All steps complete.")).to_be_visible()


def test_screen_the_demo_district_and_open_the_top_building(page, dashboard_url):
    """Screen the demo district: metrics, plan and shortlist drawn; the top building opens."""
    from playwright.sync_api import expect

    page.goto(f"{dashboard_url}/screening")
    idle(page)
    expect(page.get_by_role("heading", name="District screening")).to_be_visible()
    page.get_by_test_id("stBaseButton-primaryFormSubmit").click()
    metrics = page.get_by_test_id("stMetric")
    expect(metrics.first).to_be_visible(timeout=60000)
    idle(page)
    expect(metrics).to_have_count(5)
    expect(metrics.first).to_contain_text("Screened, of 1,000 rows")
    expect(metrics.first.get_by_test_id("stMetricValue")).to_have_text("1,000")
    for name in ("Exceptional: measure first", "Worth a visit", "Marginal", "Unsuitable"):
        expect(metrics.filter(has_text=name).first).to_be_visible()
    expect(page.get_by_role("heading", name="Shortlist")).to_be_visible()
    expect(page.get_by_test_id("stDataFrame")).to_be_visible()
    chart = page.get_by_test_id("stVegaLiteChart")
    drawn = chart.locator("canvas, svg").first
    expect(drawn).to_be_visible()
    box = drawn.bounding_box()
    assert box and box["width"] > 200 and box["height"] > 200  # a plan, not an empty stub
    page.wait_for_timeout(300)
    shot(page, "browser-7-screening")

    open_button = page.get_by_role("button", name="Open in detailed assessment")
    open_button.scroll_into_view_if_needed()
    open_button.click()
    idle(page)
    # it asks first, and keeps the working copy as a scenario
    expect(page.get_by_text(re.compile("replaces the working copy"))).to_be_visible()
    page.get_by_role("button", name=re.compile("^Keep it as")).click()
    idle(page)
    # the engine's own top building for the demo assessment, ranked beside the page
    ranked = screening.screen_local(ROOT / "demo_sites" / "district_1000.csv",
                                    screening.context_from_assessment(
                                        sitefile.load(ROOT / "demo_sites" / "larkspur_yard.json")))
    top = ranked.table.iloc[0]["id"]
    expect(page.get_by_text(f"Building {top} is now the working assessment")).to_be_visible()
    expect(page.get_by_test_id("stSidebar")).to_contain_text(f"screening: building {top}")
    expect(page.get_by_text(f"kept as the scenario “before screening building {top}”",
                            exact=False)).to_be_visible()
    page.mouse.move(0, 0)  # no hover toolbar in the picture
    shot(page, "browser-7b-screening-opened")


def test_spot_readings_editor_on_the_layout_step(page, dashboard_url):
    """The layout step's spot readings open in an expander: caption, caution and the table."""
    from playwright.sync_api import expect

    page.goto(dashboard_url)
    idle(page)
    page.get_by_role("link", name=re.compile(r"^3\. Buildings & positions")).click()
    idle(page)
    expect(page.get_by_role("heading", name="3. Buildings & positions")).to_be_visible()
    page.get_by_text("Spot readings (handheld beside a reference)").click()
    idle(page)
    panel = page.get_by_test_id("stExpander").filter(has_text="Spot readings")
    expect(panel.get_by_text("indicative only", exact=False)).to_be_visible()
    expect(panel.get_by_text("work at height", exact=False)).to_be_visible()
    grid = panel.get_by_test_id("stDataFrame")
    expect(grid).to_be_visible()
    box = grid.bounding_box()
    assert box and box["width"] > 600 and box["height"] > 60  # a table with its row, not a stub
    expect(page.get_by_text("All steps complete.")).to_be_visible()
    panel.scroll_into_view_if_needed()
    page.mouse.move(0, 0)
    shot(page, "browser-9-spot-readings")


def test_clicking_a_position_on_the_plan_shows_its_detail(page, dashboard_url):
    """A click on a position's mark in the results plan makes it the position in detail."""
    from playwright.sync_api import expect

    page.goto(dashboard_url)
    idle(page)
    page.get_by_role("link", name=re.compile("^5. Results")).click()
    idle(page)
    # Two selectors are labelled Position: the what-if's (first) and the detail's (second).
    detail = page.get_by_role("combobox", name="Position", exact=True).nth(1)
    expect(detail).to_be_visible()
    start = detail.input_value()
    assert start and start != "yard-mast"  # the detail starts on the best position
    plan = page.locator('[data-testid="stVegaLiteChart"]').first
    # The demo's yard mast stands at x = -45 m, y = -30 m (its site file); vega labels each
    # mark with its fields, the minus as U+2212.
    mark = plan.locator('path[aria-label^="x: \u221245; y: \u221230;"]').first
    expect(mark).to_be_attached()
    mark.click(force=True)
    idle(page)
    expect(detail).to_have_value("yard-mast")
    shot(page, "browser-10-plan-click")


def test_results_show_the_two_p90s_and_the_turbulence_effect(page, dashboard_url):
    """A person sees a single-year P90 and a project-life P90 named apart, and what
    turbulence did to the energy of the position in detail (± %)."""
    from playwright.sync_api import expect

    page.goto(dashboard_url)
    idle(page)
    page.get_by_role("link", name=re.compile("^5. Results")).click()
    idle(page)
    expect(page.get_by_text("P90, a single year (kWh/yr)", exact=True).first).to_be_visible()
    expect(page.get_by_text("Turbulence effect", exact=True)).to_be_visible()
    expect(page.get_by_text(re.compile(r"^P90, \d+-year life \(kWh/yr\)$"))).to_be_visible()
    expect(page.get_by_text(re.compile(r"^P90, average year over \d+ years \(kWh/yr\)$")).first
           ).to_be_visible()
    value = page.locator('[data-testid="stMetric"]', has_text="Turbulence effect")
    expect(value.locator('[data-testid="stMetricValue"]')).to_have_text(
        re.compile(r"^[+\u2212]\d+\.\d %$"))
    shot(page, "browser-11-p90-and-turbulence")
    assert cut_metric_labels(page) == []


def cut_metric_labels(page) -> list:
    """Texts of the metric labels drawn cut short (an element narrower than its text)."""
    return page.evaluate(
        "() => [...document.querySelectorAll('[data-testid=\"stMetricLabel\"]')]"
        ".filter(l => [l, ...l.querySelectorAll('*')]"
        ".some(e => e.scrollWidth > e.clientWidth + 1)).map(l => l.innerText)")
