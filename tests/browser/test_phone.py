"""On a phone: the apprentice's walk through a ring test, page width, tap targets (offline use
is in test_offline.py).

Each test starts its own job so that tests do not lean on one another's data.
"""

from __future__ import annotations

import re

import pytest
from phone import card, enter, seed_circuit
from playwright.sync_api import expect

pytestmark = pytest.mark.browser

#: Smallest comfortable touch target, CSS px (common practice: 44 pt in Apple's Human
#: Interface Guidelines, 48 dp in Material Design; WCAG 2.2 success criterion 2.5.5 asks 44).
TAP_PX = 44


# ---------------------------------------------------------------- the apprentice's walk


def test_apprentice_runs_a_ring_test_on_a_phone(apprentice, live_app):
    page = apprentice
    page.get_by_role("link", name="New job").tap()
    page.get_by_label("Job reference").fill("BT-WALK")
    page.get_by_label("Site address").fill("7 Slate Lane, Bethesda")
    page.get_by_role("button", name="Save job").tap()
    expect(page.get_by_text("Job BT-WALK created")).to_be_visible()

    page.get_by_label("Way").fill("4")
    page.get_by_label("Ze (Ω)").fill("0.35")
    page.get_by_role("button", name="Save circuit").tap()
    expect(page.get_by_role("heading", name=re.compile("safe isolation"))).to_be_visible()

    page.get_by_role("button", name="Confirm and start testing").tap()
    expect(page.get_by_role("alert")).to_contain_text("Tick all three")  # nothing ticked yet
    for label in ("isolated", "locked off", "proved it dead"):
        page.get_by_label(re.compile(label)).check()
    page.get_by_role("button", name="Confirm and start testing").tap()
    expect(page.get_by_role("heading", name=re.compile("Step 1"))).to_be_visible()
    expect(page.locator(".drawing svg")).to_be_visible()

    for anchor, value in (("r-r1", "0.52"), ("r-rn", "0,52"), ("r-r2", "0.86")):
        enter(page, anchor, value)
        expect(card(page, anchor).locator("[data-value]")).to_contain_text(
            value.replace(",", "."))
    # feedback arrives in place (the page script), without leaving the page
    expect(card(page, "r-r2").locator("[data-feedback]")).not_to_be_empty()
    assert page.url.endswith("/test/e2e")

    page.get_by_role("button", name=re.compile("Next: Step 2")).tap()
    expect(page.get_by_role("heading", name=re.compile("Step 2"))).to_be_visible()
    expect(page.locator(".expect")).to_contain_text("0.26")  # (r1 + rn) / 4 = 1.04 / 4
    for label in ("Kitchen by door", "Hall"):
        page.get_by_label("Where is it?").fill(label)
        page.get_by_role("button", name="Add outlet").tap()
        expect(page.get_by_role("heading", name=re.compile(label))).to_be_visible()

    enter(page, "r-ln-a", "0.26")
    enter(page, "r-ln-b", "0.61")
    good = card(page, "r-ln-a").locator("[data-feedback]")
    bad = card(page, "r-ln-b").locator("[data-feedback]")
    expect(good).to_contain_text("✓")
    expect(bad).to_contain_text("!")
    assert good.inner_text() != bad.inner_text()


# ---------------------------------------------------------------- layout on a small phone


def main_pages(job_id: int, circuit_id: int) -> list[str]:
    return ["/jobs/", f"/jobs/{job_id}", "/jobs/new", f"/jobs/{job_id}/circuits/new",
            f"/circuits/{circuit_id}/test/safety", f"/circuits/{circuit_id}/test/e2e",
            f"/circuits/{circuit_id}/test/ln", f"/circuits/{circuit_id}/test/le",
            f"/circuits/{circuit_id}/results"]


def test_no_sideways_scroll_at_360px(page, live_app, log_in):
    page.set_viewport_size({"width": 360, "height": 740})
    page.goto("/login")
    wide = {}
    wide["/login"] = page.evaluate(WIDTHS)
    log_in(page)
    job_id, circuit_id = seed_circuit(live_app)
    for url in main_pages(job_id, circuit_id):
        response = page.goto(url)
        assert response.ok, url
        wide[url] = page.evaluate(WIDTHS)
    assert all(client == 360 for _, client in wide.values())
    assert {url: w for url, w in wide.items() if w[0] > w[1]} == {}


TAP_CHECK = """() => {
  const small = [];
  for (const el of document.querySelectorAll(
      "button, input:not([type=hidden]), select, textarea, [role=button]")) {
    const box = el.getBoundingClientRect();
    if (!box.width || getComputedStyle(el).visibility === "hidden") continue;
    let target = box;
    if (el.type === "checkbox" || el.type === "radio") {
      const label = el.closest("label")
        || (el.id && document.querySelector(`label[for="${el.id}"]`));
      if (label) target = label.getBoundingClientRect();
    }
    if (target.height < LIMIT || target.width < LIMIT) {
      const size = `${Math.round(target.width)}x${Math.round(target.height)}`;
      small.push(`${el.tagName.toLowerCase()}[name=${el.name || ""}] ${size}`);
    }
  }
  return small;
}"""


def test_tap_targets_are_at_least_44px(apprentice, live_app):
    page = apprentice
    job_id, circuit_id = seed_circuit(live_app)
    small = {}
    for url in main_pages(job_id, circuit_id):
        page.goto(url)
        found = page.evaluate(TAP_CHECK.replace("LIMIT", str(TAP_PX)))
        if found:
            small[url] = found
    assert small == {}


WIDTHS = "[document.scrollingElement.scrollWidth, document.scrollingElement.clientWidth]"


def test_the_layout_checks_catch_what_they_look_for(page):
    """The two checks above, on a page built to fail them (so neither can pass vacuously)."""
    page.set_viewport_size({"width": 360, "height": 740})
    page.set_content("<!doctype html><meta name=viewport content='width=device-width'>"
                     "<body style='margin:0'><div style='width:520px'>wide</div>"
                     "<button style='height:30px;width:120px'>small</button>"
                     "<label style='display:block;height:48px'><input type=checkbox "
                     "name=ok> roomy label</label></body>")
    scroll, client = page.evaluate(WIDTHS)
    assert scroll > client == 360
    found = page.evaluate(TAP_CHECK.replace("LIMIT", str(TAP_PX)))
    assert found == ["button[name=] 120x30"]
