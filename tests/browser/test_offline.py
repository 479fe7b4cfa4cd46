"""On a phone without signal: fresh pages on Back, what an offline page shows, the outbox in
IndexedDB (outlets, readings, step moves sent in order), refusals kept, two users on one phone.

Each test seeds its own job. ``context.set_offline`` cuts the service worker's fetches too, so
an offline reload really comes from the worker's cache.
"""

from __future__ import annotations

import re

import pytest
from phone import (
    PASSWORD,
    card,
    enter,
    outlet_reading,
    outlets_of,
    seed_circuit,
    writes_with,
)
from playwright.sync_api import expect

pytestmark = pytest.mark.browser


@pytest.fixture(autouse=True)
def no_script_errors(page):
    """Every test here also fails on an uncaught error in the page's scripts."""
    errors = []
    page.on("pageerror", lambda error: errors.append(str(error)))
    yield
    assert errors == []


def wait_for_worker(page) -> None:
    # the worker's install fetches the shell: slow when the machine is busy
    page.wait_for_function("() => !!navigator.serviceWorker"
                           " && navigator.serviceWorker.controller !== null", timeout=40_000)


def until(page, script: str, arg=None, timeout_ms: int = 15_000) -> None:
    """Evaluate ``script`` (an async function is awaited) until it returns true."""
    waited = 0
    while not page.evaluate(script, arg):
        assert waited < timeout_ms, f"still false after {timeout_ms} ms: {script}"
        page.wait_for_timeout(100)
        waited += 100


def kept(page, path: str) -> bool:
    return page.evaluate("async (path) => !!(await caches.match(new URL(path, location.href)"
                         ".href))", path)


def wait_until_kept(page, path: str) -> None:
    until(page, "async (path) => !!(await caches.match(new URL(path, location.href).href))",
          path)


def open_step(page, circuit_id: int, step: str = "ln") -> str:
    url = f"/circuits/{circuit_id}/test/{step}"
    page.goto(url)
    wait_for_worker(page)
    wait_until_kept(page, url)
    return url


def items(page) -> list[dict]:
    return page.evaluate("window.ringtestOffline.items()")


def waiting(page) -> int:
    return page.evaluate("window.ringtestOffline.pending()")


def status(page):
    return page.locator("#offline-status")


def wait_sent(page, count: int) -> None:
    """Until ``count`` items of the outbox have been taken by the server."""
    until(page, "async (n) => (await window.ringtestOffline.items())"
          ".filter(i => i.state === 'sent').length >= n", count)


# ---------------------------------------------------------------- no stale screen


def test_back_after_a_correction_shows_the_new_value(apprentice, live_app):
    page = apprentice
    _, circuit_id = seed_circuit(live_app, readings={"a": "0.24"})
    response = page.goto(f"/circuits/{circuit_id}/test/ln")
    assert response.headers["cache-control"] == "no-store"
    enter(page, "r-ln-a", "0.25")
    wait_sent(page, 1)
    expect(card(page, "r-ln-a").locator("[data-value]")).to_have_text("0.25 Ω")
    expect(card(page, "r-ln-a").locator(".queued")).to_have_count(0)  # sent, not waiting
    assert outlet_reading(live_app, circuit_id, "a") == "0.25"
    page.evaluate("window.oldCopy = true")
    page.goto(f"/circuits/{circuit_id}/results")
    page.go_back()
    expect(card(page, "r-ln-a").locator("[data-value]")).to_have_text("0.25 Ω")
    # a new copy of the page, not the one left behind (bfcache or HTTP cache)
    assert page.evaluate("window.oldCopy === undefined")


def test_a_page_restored_from_the_back_forward_cache_reloads_itself(apprentice, live_app):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    page.goto(f"/circuits/{circuit_id}/test/ln")
    page.evaluate("window.oldCopy = true")
    with page.expect_navigation():
        page.evaluate("window.dispatchEvent(new PageTransitionEvent('pageshow', "
                      "{persisted: true}))")
    assert page.evaluate("window.oldCopy === undefined")


def test_offline_reload_shows_what_the_phone_knows(apprentice, live_app, context):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    open_step(page, circuit_id)  # the copy kept now has no readings
    enter(page, "r-ln-a", "0.26")  # online: sent at once
    wait_sent(page, 1)
    expect(card(page, "r-ln-a").locator(".queued")).to_have_count(0)
    assert outlet_reading(live_app, circuit_id, "a") == "0.26"

    context.set_offline(True)
    try:
        enter(page, "r-ln-b", "0.27")
        expect(status(page)).to_contain_text("Saved on this phone, will send when back online")
        # the "as of" line follows the outbox at once, not only after a reload
        expect(page.locator("#as-of")).to_have_text(re.compile(
            r"^As of \d\d:\d\d, 1 reading waiting\.$"))
        # no server to ask, but the card carries the band the server gave: (0.52+0.52)/4 =
        # 0.26 Ω, ±0.05 Ω (common practice)
        expect(card(page, "r-ln-b").locator(".offline-note")).to_contain_text(
            "Within the expected 0.21 to 0.31 Ω")
        page.reload()
        expect(page.get_by_role("heading", name=re.compile("Step 2"))).to_be_visible()
        # the kept copy predates both readings: the phone adds what it sent and what waits
        expect(card(page, "r-ln-a").locator("[data-value]")).to_have_text("0.26 Ω")
        expect(card(page, "r-ln-b").locator("[data-value]")).to_have_text("0.27 Ω")
        expect(card(page, "r-ln-b").locator(".queued")).to_have_text("waiting to send")
        expect(card(page, "r-ln-a").locator(".queued")).to_have_count(0)
        expect(page.locator("#as-of")).to_have_text(re.compile(
            r"^As of \d\d:\d\d, 1 reading waiting\.$"))
        assert outlet_reading(live_app, circuit_id, "b") is None
    finally:
        context.set_offline(False)
    expect(status(page)).to_contain_text("Sent 1 reading")
    assert outlet_reading(live_app, circuit_id, "b") == "0.27"
    assert waiting(page) == 0


def test_a_correction_waiting_offline_is_judged_on_its_own_value(apprentice, live_app, context):
    """The card never shows the server's words about the old value beside the new one."""
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    open_step(page, circuit_id)
    enter(page, "r-ln-a", "0.26")
    wait_sent(page, 1)
    page.reload()  # the kept copy now has 0.26 and the server's feedback on it
    expect(card(page, "r-ln-a").locator("[data-feedback]")).to_contain_text("Expected about")
    context.set_offline(True)
    try:
        enter(page, "r-ln-a", "0.40")
        expect(status(page)).to_contain_text("Saved on this phone, will send when back online")
        page.reload()
        fb = card(page, "r-ln-a").locator("[data-feedback]")
        # (0.52 + 0.52) / 4 = 0.26 Ω, ±0.05 Ω (common practice): 0.40 is above the band
        expect(fb).to_contain_text("Waiting to send. Above the expected 0.21 to 0.31 Ω")
        expect(fb).not_to_contain_text("Expected about")
    finally:
        context.set_offline(False)
    expect(status(page)).to_contain_text("Sent 1 reading")


def test_a_page_never_opened_here_shows_the_offline_page(apprentice, live_app, context):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    open_step(page, circuit_id)
    context.set_offline(True)
    try:
        page.goto(f"/circuits/{circuit_id}/results")
        expect(page.get_by_role("heading", name="No connection")).to_be_visible()
        rules = page.evaluate("[...document.styleSheets].filter(s => s.href && "
                              "s.href.endsWith('/static/app.css')).map(s => s.cssRules.length)")
        assert rules and rules[0] > 0
    finally:
        context.set_offline(False)


# ---------------------------------------------------------------- every action offline


def test_an_outlet_added_offline_lands_with_its_readings(apprentice, live_app, context):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    open_step(page, circuit_id)
    wait_until_kept(page, f"/circuits/{circuit_id}/test/le")  # the next step, for offline
    context.set_offline(True)
    try:
        page.get_by_label("Where is it?").fill("Loft hatch")
        page.get_by_role("button", name="Add outlet").tap()
        new = page.locator("article[data-client-key]")
        expect(new).to_contain_text("Loft hatch")
        expect(new.locator("input[name='value']")).to_be_focused()
        new.locator("input[name='value']").fill("0.27")
        new.get_by_role("button", name="Save", exact=True).tap()
        expect(new.locator(".queued")).to_be_visible()
        card(page, "r-ln-a").locator("details.rename > summary").tap()
        card(page, "r-ln-a").get_by_label("New name for this outlet").fill("Kitchen left of door")
        card(page, "r-ln-a").get_by_role("button", name="Save name").tap()
        expect(card(page, "r-ln-a").locator("h3")).to_have_text("a · Kitchen left of door")

        page.get_by_role("button", name=re.compile("Next: Step 3")).tap()
        expect(page.get_by_role("heading", name=re.compile("Step 3"))).to_be_visible()
        new3 = page.locator("article[data-client-key][data-field='le']")
        expect(new3).to_contain_text("Loft hatch")
        new3.locator("input[name='value']").fill("0.45")
        new3.get_by_role("button", name="Save", exact=True).tap()
        expect(new3.locator(".queued")).to_be_visible()
        assert waiting(page) == 5  # outlet, reading, label, step move, reading
        assert len(outlets_of(live_app, circuit_id)) == 2
    finally:
        context.set_offline(False)
    expect(status(page)).to_contain_text("Sent 2 readings and 3 other changes")
    assert outlets_of(live_app, circuit_id) == [
        ("a", "Kitchen left of door", None, None), ("b", "Lounge window", None, None),
        ("c", "Loft hatch", "0.27", "0.45")]
    assert waiting(page) == 0
    expect(page.locator("article#r-le-c")).to_contain_text("c · Loft hatch")
    step = live_app.query(lambda db: db.session.get(
        __import__("fieldapp.models", fromlist=["Circuit"]).Circuit, circuit_id).current_step)
    assert step == "le"
    # sent again (a reply lost on the way back): still one outlet, one reading
    page.evaluate("""async () => {
      const all = await window.ringtestOffline.items();
      for (const item of all) { item.state = "waiting"; item.needs = null; }
      const db = await RT.outbox.open();
      await new Promise((ok) => { const t = db.transaction("items", "readwrite");
        all.forEach((i) => t.objectStore("items").put(i)); t.oncomplete = ok; });
      return window.ringtestOffline.replay();
    }""")
    assert waiting(page) == 0
    assert [o[0] for o in outlets_of(live_app, circuit_id)] == ["a", "b", "c"]
    outlet_item = next(i for i in items(page) if i["kind"] == "outlet")
    assert writes_with(live_app, outlet_item["id"]) == 1


def queued_offline(page, live_app, context, anchor: str, value: str, meanwhile):
    """Open step 2 of a fresh circuit, enter ``value`` at ``anchor`` offline (it waits on the
    phone), call ``meanwhile(job_id, circuit_id)`` while still offline, then come back online.
    Returns (job_id, circuit_id)."""
    job_id, circuit_id = seed_circuit(live_app)
    open_step(page, circuit_id)
    context.set_offline(True)
    try:
        enter(page, anchor, value)
        expect(card(page, anchor).locator(".queued")).to_be_visible()
    finally:
        meanwhile(job_id, circuit_id)
        context.set_offline(False)
    return job_id, circuit_id


def test_a_refused_replay_is_kept_and_shown_until_discarded(apprentice, live_app, context):
    page = apprentice
    # the supervisor approves meanwhile
    job_id, circuit_id = queued_offline(page, live_app, context, "r-ln-a", "0.27",
                                        lambda job, _circuit: approve(live_app, job))
    refused = page.locator("#not-accepted")
    expect(refused).to_contain_text("L–N at outlet a = 0.27")
    expect(refused).to_contain_text("approved")
    expect(card(page, "r-ln-a").locator(".now")).to_be_hidden()  # nothing claimed as recorded
    expect(card(page, "r-ln-a").locator(".js-error")).to_contain_text("Not accepted")
    expect(status(page)).not_to_contain_text("Sent")
    assert outlet_reading(live_app, circuit_id, "a") is None
    assert [i["state"] for i in items(page)] == ["refused"]
    # it stays on the job until the user acts
    page.goto(f"/jobs/{job_id}")
    expect(page.locator("#not-accepted")).to_contain_text("L–N at outlet a = 0.27")
    page.reload()
    expect(page.locator("#not-accepted")).to_contain_text("L–N at outlet a = 0.27")
    page.locator("#not-accepted").get_by_role("button", name="Discard").tap()
    expect(page.locator("#not-accepted")).to_have_count(0)
    assert items(page) == []


def test_a_send_that_finds_the_outbox_busy_tries_again(apprentice, live_app, context):
    # another tab (here: the page itself) holds the send lock when the phone comes back online:
    # the run that finds it busy must try again, not leave the reading waiting for a trigger
    page = apprentice
    _, circuit_id = queued_offline(page, live_app, context, "r-ln-a", "0.27", lambda *_: (
        page.evaluate("""() => { navigator.locks.request("ringtest-outbox",
            () => new Promise((done) => setTimeout(done, 2500))); }""")))
    expect(card(page, "r-ln-a").locator(".queued")).to_be_hidden(timeout=15000)
    assert outlet_reading(live_app, circuit_id, "a") == "0.27"
    assert [i["state"] for i in items(page)] == ["sent"]


def set_safety(live_app, circuit_id: int, confirmed: bool) -> None:
    from fieldapp import changes
    from fieldapp.models import Circuit, User

    def write(db):
        who = db.session.scalar(db.select(User).where(User.username == "apprentice"))
        changes.update(db.session.get(Circuit, circuit_id), {"safety_proved_dead": confirmed},
                       changes.Actor(who.id, "browser test"))
        db.session.commit()

    live_app.query(write)


def test_a_refused_reading_entered_again_leaves_the_list(apprentice, live_app, context):
    page = apprentice
    # the safety checks were withdrawn meanwhile
    _, circuit_id = queued_offline(page, live_app, context, "r-ln-b", "0.28",
                                   lambda _job, circuit: set_safety(live_app, circuit, False))
    expect(page.locator("#not-accepted")).to_contain_text("Confirm safe isolation first")
    assert outlet_reading(live_app, circuit_id, "b") is None
    set_safety(live_app, circuit_id, True)
    enter(page, "r-ln-b", "0.28")  # entered again: sent, and the refused one is gone
    wait_sent(page, 1)
    expect(page.locator("#not-accepted")).to_have_count(0)
    assert [i["state"] for i in items(page)] == ["sent"]
    assert outlet_reading(live_app, circuit_id, "b") == "0.28"


def approve(live_app, job_id: int) -> None:
    from fieldapp import changes
    from fieldapp.models import Job, User

    def write(db):
        boss = db.session.scalar(db.select(User).where(User.username == "supervisor"))
        changes.update(db.session.get(Job, job_id), {"status": "approved",
                                                     "approved_by_id": boss.id},
                       changes.Actor(boss.id, "browser test"))
        db.session.commit()

    live_app.query(write)


def test_two_users_on_one_phone_never_send_each_others_items(apprentice, live_app, context,
                                                            log_in):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    url = open_step(page, circuit_id)
    context.set_offline(True)
    enter(page, "r-ln-a", "0.27")
    expect(card(page, "r-ln-a").locator(".queued")).to_be_visible()
    context.clear_cookies()  # the apprentice's session ends while the phone is offline
    context.set_offline(False)
    expect(status(page)).to_contain_text("log in again to send them")

    log_in(page, "tester")  # someone else signs in on the same phone
    held = page.locator("#outbox-held")
    expect(held).to_contain_text("Held on this phone for Tegan Pryce: 1 reading")
    page.evaluate("window.ringtestOffline.replay()")
    page.reload()
    expect(held).to_be_visible()
    assert outlet_reading(live_app, circuit_id, "a") is None
    assert [i["state"] for i in items(page)] == ["waiting"]
    assert not kept(page, url)  # the apprentice's pages left with their user

    context.clear_cookies()
    log_in(page, "apprentice")
    expect(status(page)).to_contain_text("Sent 1 reading")
    assert outlet_reading(live_app, circuit_id, "a") == "0.27"
    client_id = items(page)[0]["id"]
    assert writes_with(live_app, client_id) == 1


def test_storage_full_is_said_at_once_and_nothing_is_claimed(apprentice, live_app, context):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    open_step(page, circuit_id)
    page.evaluate("""() => { IDBObjectStore.prototype.put = function () {
      throw new DOMException("full", "QuotaExceededError"); }; }""")
    context.set_offline(True)
    try:
        enter(page, "r-ln-a", "0.27")
        expect(card(page, "r-ln-a").locator(".offline-note")).to_contain_text(
            "Not kept: this phone could not store it (storage full)")
        expect(card(page, "r-ln-a").locator(".queued")).to_have_count(0)
        expect(card(page, "r-ln-a").locator(".now")).to_be_hidden()
        assert items(page) == []
    finally:
        context.set_offline(False)


def test_items_of_the_old_outbox_are_moved_once_and_sent_only_when_claimed(apprentice,
                                                                           live_app):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    page.goto(f"/circuits/{circuit_id}/test/ln")
    old_id = "0d2f7a51-old0-4c6e-9b1a-5e3f2c1d0a9b"
    page.evaluate("""([id, url]) => localStorage.setItem("ringtest.outbox.v1", JSON.stringify([
      {kind: "form", url: url, clientId: id, label: "L–N at outlet a = 0.31",
       fields: [["field", "ln"], ["outlet", "a"], ["value", "0.31"], ["client_id", id]]}]))""",
                  [old_id, f"{live_app.url}/circuits/{circuit_id}/test/reading"])
    page.reload()
    held = page.locator("#outbox-held")
    expect(held).to_contain_text("kept by an earlier version of this app")
    assert page.evaluate("localStorage.getItem('ringtest.outbox.v1')") is None
    assert outlet_reading(live_app, circuit_id, "a") is None  # not sent without an owner
    held.get_by_role("button", name="Send them as mine").tap()
    expect(held).to_have_count(0)
    until(page, "async () => (await window.ringtestOffline.items())"
          ".every(i => i.state === 'sent')")
    assert outlet_reading(live_app, circuit_id, "a") == "0.31"
    assert writes_with(live_app, old_id) == 1


def test_a_reading_whose_post_fails_on_the_network_waits(apprentice, live_app):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    page.goto(f"/circuits/{circuit_id}/test/ln")
    page.context.route("**/api/circuits/**", lambda route: route.abort("internetdisconnected"))
    enter(page, "r-ln-b", "0.25")
    expect(status(page)).to_contain_text("will send when back online")
    expect(card(page, "r-ln-b").locator(".queued")).to_be_visible()
    assert waiting(page) == 1

    page.context.unroute("**/api/circuits/**")
    page.evaluate("window.dispatchEvent(new Event('online'))")
    expect(status(page)).to_contain_text("Sent 1 reading")
    assert float(outlet_reading(live_app, circuit_id, "b")) == pytest.approx(0.25)


# ---------------------------------------------------------------- the worker's caches


def test_logging_out_forgets_the_pages_kept_for_offline(apprentice, live_app):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    url = open_step(page, circuit_id)
    page.get_by_role("button", name="Log out").tap()
    expect(page.get_by_role("heading", name="Log in")).to_be_visible()
    until(page, "async (path) => !(await caches.match(new URL(path, location.href).href))",
          url)
    assert page.evaluate("async () => (await caches.keys()).some(k => k.endsWith('-shell'))")


def sign_in_without_a_page(page, username: str = "apprentice") -> None:
    """A session cookie in the context, without opening any page (no worker yet)."""
    form = page.request.get("/login").text()
    token = re.search(r'name="csrf_token" type="hidden" value="([^"]+)"', form) or re.search(
        r'name="csrf-token" content="([^"]+)"', form)
    reply = page.request.post("/login", form={"username": username, "password": PASSWORD,
                                              "csrf_token": token.group(1)})
    assert reply.ok and "/login" not in reply.url


def test_the_first_page_is_fetched_once(page, live_app):
    _, circuit_id = seed_circuit(live_app)
    sign_in_without_a_page(page)
    url = f"/circuits/{circuit_id}/test/ln"
    fetched = []
    page.context.on("request", lambda r: fetched.append(r.resource_type)
                    if r.url.endswith(url) else None)
    page.goto(url)  # the phone's first page: no worker controls it
    wait_for_worker(page)
    wait_until_kept(page, url)  # kept from the page's own copy
    page.wait_for_timeout(300)
    assert fetched == ["document"]


def test_a_new_worker_deletes_every_older_cache(page):
    page.goto("/static/offline.html")  # same origin, before any worker
    page.evaluate("""async () => {
      await (await caches.open("ringtest-v0-shell")).put("/old", new Response("old"));
      await caches.open("ringcheck-v4-pages");
    }""")
    page.goto("/login")
    wait_for_worker(page)
    version = re.search(r'const VERSION = "([^"]+)"', page.evaluate(
        "fetch('/sw.js').then(r => r.text())")).group(1)
    until(page, "async () => (await caches.keys()).length === 1")
    assert page.evaluate("caches.keys()") == [f"{version}-shell"]
    shell = page.evaluate(f"caches.open('{version}-shell').then(c => c.keys())"
                          ".then(keys => keys.map(k => new URL(k.url).pathname))")
    assert {"/static/offline.html", "/static/app.css", "/static/js/outbox.js",
            "/static/js/boot.js"} <= set(shell)


def test_a_slipped_decimal_point_offline_is_asked_and_never_sent_as_typed(apprentice,
                                                                          live_app, context):
    page = apprentice
    _, circuit_id = seed_circuit(live_app)
    open_step(page, circuit_id)
    # card b has no band (as before step 1 is in): only the server can ask, when it is reached
    card(page, "r-ln-b").evaluate("c => { c.removeAttribute('data-low'); "
                                  "c.removeAttribute('data-high'); }")
    context.set_offline(True)
    try:
        enter(page, "r-ln-a", "2.6")  # expected about 0.26 Ω: (0.52 + 0.52) / 4
        asked = card(page, "r-ln-a").locator("[data-slip]")  # the card's band asks at once
        expect(asked.get_by_role("button")).to_have_text(["0.26 Ω", "keep 2.6 Ω"])
        enter(page, "r-ln-b", "3.1")
        expect(card(page, "r-ln-b").locator(".queued")).to_be_visible()
    finally:
        context.set_offline(False)
    server = card(page, "r-ln-b").locator("[data-slip]")  # asked by the server on replay
    expect(server.get_by_role("button")).to_have_text(["0.31 Ω", "keep 3.1 Ω"])
    expect(page.locator("#not-accepted")).to_have_count(0)
    assert sorted(i["state"] for i in items(page)) == ["question", "question"]
    assert outlets_of(live_app, circuit_id)[:2] == [("a", "Kitchen by door", None, None),
                                                    ("b", "Lounge window", None, None)]
    page.reload()  # the questions stay on the phone, answered from the list
    listed = page.locator("#outbox-questions")
    expect(listed).to_contain_text("L–N at outlet a = 2.6")
    expect(listed).to_contain_text("L–N at outlet b = 3.1")
    listed.get_by_role("button", name="0.26 Ω").tap()
    listed.get_by_role("button", name="keep 3.10 Ω").tap()
    expect(listed).to_have_count(0)
    wait_sent(page, 2)
    assert outlet_reading(live_app, circuit_id, "a") == "0.26"
    assert outlet_reading(live_app, circuit_id, "b") == "3.1"
