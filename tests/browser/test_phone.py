"""On a phone: the apprentice's walk through a ring test, page width, tap targets, offline use.

Each test starts its own job so that tests do not lean on one another's data.
"""

from __future__ import annotations

import itertools
import re

import pytest
from playwright.sync_api import expect
from seeds import ring_circuit

pytestmark = pytest.mark.browser

_numbers = itertools.count(1)
#: Smallest comfortable touch target, CSS px (common practice: 44 pt in Apple's Human
#: Interface Guidelines, 48 dp in Material Design; WCAG 2.2 success criterion 2.5.5 asks 44).
TAP_PX = 44


def seed_circuit(live_app, *, safety=True, outlets=("Kitchen by door", "Lounge window")):
    """A job with one 32 A B-curve ring, step 1 done and outlets without step 2 readings,
    written through the app's own importer and change functions; returns the circuit id."""
    from fieldapp import changes
    from fieldapp.importer import import_document
    from fieldapp.models import User

    number = next(_numbers)
    doc = {
        "format": "ringtest/1",
        "job": {"reference": f"BT-{number:04d}", "site": f"{number} Quarry Row, Nantlle",
                "client": "Invented Lettings", "date": "2026-11-30"},
        "circuit": ring_circuit("DB1/3", "Ground floor sockets"),
        "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": 0.86},
        "outlets": [{"id": chr(97 + i), "label": label, "kind": "twin_socket"}
                    for i, label in enumerate(outlets)],
    }

    def write(db):
        tester = db.session.scalar(db.select(User).where(User.username == "apprentice"))
        who = changes.Actor(tester.id, "browser test seed")
        job = import_document(doc, who, tester_id=tester.id)
        circuit = job.circuits[0]
        if safety:
            changes.update(circuit, {"safety_isolated": True, "safety_locked_off": True,
                                     "safety_proved_dead": True, "current_step": "ln"}, who)
        db.session.commit()
        return job.id, circuit.id

    return live_app.query(write)


def outlet_reading(live_app, circuit_id: int, key: str, step: str = "ln"):
    from fieldapp import changes
    from fieldapp.models import Circuit

    def read(db):
        circuit = db.session.get(Circuit, circuit_id)
        return next(getattr(o, step) for o in changes.live_outlets(circuit) if o.key == key)

    return live_app.query(read)


def writes_with(live_app, client_id: str) -> int:
    from fieldapp.models import ChangeLog

    return live_app.query(lambda db: db.session.scalar(
        db.select(db.func.count(ChangeLog.id)).where(ChangeLog.client_id == client_id)))


def card(page, anchor: str):
    return page.locator(f"article#{anchor}")


def enter(page, anchor: str, value: str):
    """Type a reading into one reading card and tap Save."""
    box = card(page, anchor)
    box.locator("input[name='value']").fill(value)
    box.get_by_role("button", name="Save").tap()


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


# ---------------------------------------------------------------- offline


def wait_for_worker(page) -> None:
    # a function, not an expression: the page's CSP forbids eval, which polling an expression uses
    page.wait_for_function("() => !!navigator.serviceWorker && navigator.serviceWorker.controller")


def wait_until_kept(page, path: str) -> None:
    page.wait_for_function(
        "async (path) => !!(await caches.match(new URL(path, location.href).href))", arg=path)


def visit_and_keep(page, live_app) -> tuple[int, str]:
    """Open a fresh circuit's step 2 page and wait until the service worker holds a copy."""
    _, circuit_id = seed_circuit(live_app)
    url = f"/circuits/{circuit_id}/test/ln"
    page.goto(url)
    wait_for_worker(page)
    wait_until_kept(page, url)
    return circuit_id, url


def test_a_visited_page_opens_offline(apprentice, live_app, context):
    page = apprentice
    circuit_id, url = visit_and_keep(page, live_app)
    context.set_offline(True)
    try:
        page.reload()
        expect(page.get_by_role("heading", name=re.compile("Step 2"))).to_be_visible()
        expect(card(page, "r-ln-a")).to_contain_text("Kitchen by door")
        expect(page.locator("#offline-status")).to_contain_text("Offline")
        # a page never opened on this phone: the offline page, styled from the cached shell
        page.goto(f"/circuits/{circuit_id}/results")
        expect(page.get_by_role("heading", name="No connection")).to_be_visible()
        rules = page.evaluate("[...document.styleSheets].filter(s => s.href && "
                              "s.href.endsWith('/static/app.css')).map(s => s.cssRules.length)")
        assert rules and rules[0] > 0
    finally:
        context.set_offline(False)


def test_reading_saved_offline_is_sent_once_when_back_online(apprentice, live_app, context):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    page.goto(f"/circuits/{circuit_id}/test/ln")
    wait_for_worker(page)
    client_id = card(page, "r-ln-a").locator("input[name='client_id']").input_value()

    context.set_offline(True)
    enter(page, "r-ln-a", "0.27")
    status = page.locator("#offline-status")
    expect(status).to_contain_text("Saved on this phone, will send when back online")
    expect(status).to_contain_text("L–N at outlet a = 0.27")
    # no server to ask, but the card carries the band the server gave: (0.52+0.52)/4 = 0.26 Ω,
    # ±0.05 Ω (common practice)
    expect(card(page, "r-ln-a").locator(".offline-note")).to_contain_text(
        "Within the expected 0.21 to 0.31 Ω")
    assert page.evaluate("window.ringtestOffline.pending()") == 1
    assert writes_with(live_app, client_id) == 0
    assert outlet_reading(live_app, circuit_id, "a") is None
    # the next reading from the same form is a separate write
    assert card(page, "r-ln-a").locator("input[name='client_id']").input_value() != client_id

    context.set_offline(False)
    expect(status).to_contain_text("Sent 1 reading")
    assert page.evaluate("window.ringtestOffline.pending()") == 0
    assert writes_with(live_app, client_id) == 1
    assert float(outlet_reading(live_app, circuit_id, "a")) == pytest.approx(0.27)

    # the same item replayed again (a reply lost on the way back) is not stored twice
    with page.expect_response(lambda r: r.request.method == "POST"
                              and r.url.endswith("/test/reading")) as sent_again:
        page.evaluate("""([id, url]) => {
          const item = {kind: "form", url: url, clientId: id, label: "again",
            fields: [["field", "ln"], ["outlet", "a"], ["value", "0.99"], ["client_id", id]]};
          localStorage.setItem("ringtest.outbox.v1", JSON.stringify([item]));
          return window.ringtestOffline.replay();
        }""", [client_id, f"{live_app.url}/circuits/{circuit_id}/test/reading"])
    assert sent_again.value.status == 302  # accepted (as a repeat) and sent on to the page
    assert page.evaluate("window.ringtestOffline.pending()") == 0
    assert writes_with(live_app, client_id) == 1
    assert float(outlet_reading(live_app, circuit_id, "a")) == pytest.approx(0.27)


def test_reading_whose_post_fails_on_the_network_is_queued(apprentice, live_app):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    page.goto(f"/circuits/{circuit_id}/test/ln")
    client_id = card(page, "r-ln-b").locator("input[name='client_id']").input_value()
    page.route("**/api/**", lambda route: route.abort("internetdisconnected"))
    enter(page, "r-ln-b", "0.25")
    expect(page.locator("#offline-status")).to_contain_text("will send when back online")
    assert writes_with(live_app, client_id) == 0

    page.unroute("**/api/**")
    page.evaluate("window.dispatchEvent(new Event('online'))")
    expect(page.locator("#offline-status")).to_contain_text("Sent 1 reading")
    assert writes_with(live_app, client_id) == 1
    assert float(outlet_reading(live_app, circuit_id, "b")) == pytest.approx(0.25)


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


def test_logging_out_forgets_the_pages_kept_for_offline(apprentice, live_app):
    page = apprentice
    circuit_id, url = visit_and_keep(page, live_app)
    page.get_by_role("button", name="Log out").tap()
    expect(page.get_by_role("heading", name="Log in")).to_be_visible()
    page.wait_for_function("async (path) => !(await caches.match(new URL(path, location.href)"
                           ".href))", arg=url)
    assert page.evaluate("async () => (await caches.keys()).some(k => k.endsWith('-shell'))")


def test_without_the_page_script_a_reading_form_still_queues_or_saves(page, context, live_app,
                                                                      log_in):
    """If app.js is missing, offline.js itself posts the form, and queues it when the post
    fails on the network."""
    # on the context, before the first page, so the service worker never holds a copy either
    context.route("**/static/js/app.js", lambda route: route.abort())
    log_in(page)
    _, circuit_id = seed_circuit(live_app)
    page.goto(f"/circuits/{circuit_id}/test/ln")
    assert page.evaluate("typeof window.ringtestOffline") == "object"
    post = f"**/circuits/{circuit_id}/test/reading"
    page.route(post, lambda route: route.abort("internetdisconnected"))
    queued_id = card(page, "r-ln-a").locator("input[name='client_id']").input_value()
    card(page, "r-ln-a").get_by_role("button", name="OL").tap()
    expect(page.locator("#offline-status")).to_contain_text("L–N at outlet a = OL")
    assert writes_with(live_app, queued_id) == 0

    page.unroute(post)
    saved_id = card(page, "r-ln-b").locator("input[name='client_id']").input_value()
    enter(page, "r-ln-b", "0.26")  # online: posted by fetch, then the page is shown again
    expect(page.locator("p.flash-ok")).to_contain_text("Saved L–N at b")
    assert writes_with(live_app, saved_id) == 1
    assert float(outlet_reading(live_app, circuit_id, "b")) == pytest.approx(0.26)
    # the page load sends what was waiting
    expect(page.locator("#offline-status")).to_contain_text("Sent 1 reading")
    assert writes_with(live_app, queued_id) == 1
    assert outlet_reading(live_app, circuit_id, "a") == "OL"


def test_a_new_worker_deletes_the_caches_of_older_versions(page):
    page.goto("/static/offline.html")  # same origin, and registers no worker
    page.evaluate("""async () => {
      await (await caches.open("ringtest-v0-shell")).put("/old", new Response("old"));
      await caches.open("someone-elses-cache");
    }""")
    page.goto("/login")
    wait_for_worker(page)
    version = re.search(r'const VERSION = "([^"]+)"', page.evaluate(
        "fetch('/sw.js').then(r => r.text())")).group(1)
    names = page.evaluate("caches.keys()")
    assert "ringtest-v0-shell" not in names
    assert f"{version}-shell" in names and "someone-elses-cache" in names
    shell = page.evaluate(f"caches.open('{version}-shell').then(c => c.keys())"
                          ".then(keys => keys.map(k => new URL(k.url).pathname))")
    assert {"/static/offline.html", "/static/app.css", "/static/js/offline.js"} <= set(shell)
