"""On a phone: the supervisor's list, review page and history; returning and approving a job.

Each test seeds its own submitted job, so the tests do not lean on one another's data.
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
SMALL_PHONE = {"width": 360, "height": 780}
WIDTHS = "[document.scrollingElement.scrollWidth, document.scrollingElement.clientWidth]"
#: Every control and every link a thumb is meant to hit: links inside running text (a
#: sentence, a list item's words) are left out, links standing as controls are not.
TAP_CHECK = """(limit) => {
  const small = [];
  const controls = "button, input:not([type=hidden]), select, textarea, summary, "
    + ".button, .chip, .card-link, .history-link, .crumbs a, .nav a, .jump a, .actions a";
  for (const el of document.querySelectorAll(controls)) {
    const box = el.getBoundingClientRect();
    if (!box.width || box.right <= 0 || getComputedStyle(el).visibility === "hidden") continue;
    if (box.height < limit || box.width < limit) {
      small.push(`${el.tagName.toLowerCase()} "${el.textContent.trim().slice(0, 30)}" `
        + `${Math.round(box.width)}x${Math.round(box.height)}`);
    }
  }
  return small;
}"""


def seed_submitted_job(live_app) -> tuple[int, int, str]:
    """A job with one complete 32 A ring, tested by ``tester`` and submitted for review,
    written through the app's importer and change functions; returns (job, circuit, ref)."""
    from fieldapp import changes
    from fieldapp.importer import import_document
    from fieldapp.models import User

    reference = f"RV-{next(_numbers):04d}"
    doc = {
        "format": "ringtest/1",
        "job": {"reference": reference, "site": "Flat 4, 2 Tanner's Yard, Wenbury",
                "client": "Invented Housing Co-op", "date": "2026-11-30"},
        "circuit": ring_circuit("DB1/2", "Upstairs sockets"),
        # (r1 + rn) / 4 = 0.26 and (r1 + r2) / 4 = 0.345 Ω at every outlet of a sound ring
        # (ring continuity test, IET Guidance Note 3)
        "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": 0.86},
        "outlets": [{"id": key, "label": label, "kind": "twin_socket", "ln": 0.26, "le": 0.35}
                    for key, label in (("a", "Back bedroom by bed"), ("b", "Landing"),
                                       ("c", "Front bedroom window"))],
    }

    def write(db):
        tester = db.session.scalar(db.select(User).where(User.username == "tester"))
        who = changes.Actor(tester.id, "browser test seed")
        job = import_document(doc, who, tester_id=tester.id)
        circuit = job.circuits[0]
        changes.update(circuit, {"safety_isolated": True, "safety_locked_off": True,
                                 "safety_proved_dead": True, "current_step": "results"}, who)
        changes.update(job, {"status": "submitted"}, who)
        db.session.commit()
        return job.id, circuit.id

    job_id, circuit_id = live_app.query(write)
    return job_id, circuit_id, reference


def job_status(live_app, job_id: int) -> str:
    from fieldapp.models import Job

    return live_app.query(lambda db: db.session.get(Job, job_id).status)


def outlet_id(live_app, circuit_id: int, key: str) -> int:
    from fieldapp.models import Outlet

    return live_app.query(lambda db: db.session.scalar(db.select(Outlet.id).where(
        Outlet.circuit_id == circuit_id, Outlet.key == key)))


def supervisor_pages(live_app, job_id: int, circuit_id: int) -> list[str]:
    return ["/review/", "/review/?status=submitted", "/review/?q=Tanner", f"/review/jobs/{job_id}",
            f"/review/jobs/{job_id}/history",
            f"/review/jobs/{job_id}/history?outlet={outlet_id(live_app, circuit_id, 'b')}"
            "&field=ln"]


@pytest.fixture
def supervisor(page, log_in):
    """A phone page logged in as the supervisor."""
    log_in(page, "supervisor")
    return page


@pytest.fixture
def tester_page(browser, browser_context_args, log_in):
    """A second phone, logged in as the tester, for what the tester sees after a decision."""
    context = browser.new_context(**browser_context_args)
    page = context.new_page()
    page.set_default_timeout(8000)
    log_in(page, "tester")
    yield page
    context.close()


def test_supervisor_pages_have_no_sideways_scroll_at_360px(supervisor, live_app):
    page = supervisor
    page.set_viewport_size(SMALL_PHONE)
    job_id, circuit_id, _ = seed_submitted_job(live_app)
    wide = {}
    for url in supervisor_pages(live_app, job_id, circuit_id):
        response = page.goto(url)
        assert response.ok, url
        wide[url] = page.evaluate(WIDTHS)
    assert {client for _, client in wide.values()} == {SMALL_PHONE["width"]}
    assert {url: w for url, w in wide.items() if w[0] > w[1]} == {}


def test_supervisor_controls_are_at_least_44px(supervisor, live_app):
    page = supervisor
    page.set_viewport_size(SMALL_PHONE)
    job_id, circuit_id, _ = seed_submitted_job(live_app)
    small, counted = {}, 0
    for url in supervisor_pages(live_app, job_id, circuit_id):
        page.goto(url)
        page.locator("details").evaluate_all("els => els.forEach(d => d.open = true)")
        counted += page.locator(".button, .chip, .history-link, button").count()
        found = page.evaluate(TAP_CHECK, TAP_PX)
        if found:
            small[url] = found
    assert small == {}
    assert counted > 20  # the check saw the pages' controls, not an empty page


def test_the_tap_check_catches_a_small_link(page):
    """The check above, on a page built to fail it (so it cannot pass vacuously)."""
    page.set_content("<!doctype html><meta name=viewport content='width=device-width'>"
                     "<a class='history-link' href='#' style='display:inline-block;"
                     "height:20px'>history</a><p>Running text with <a href='#'>a link</a>.</p>"
                     "<a class='button' href='#' style='display:block;height:48px'>roomy</a>")
    assert page.evaluate(TAP_CHECK, TAP_PX) == [
        f'a "history" {page.locator("a.history-link").bounding_box()["width"]:.0f}x20']


def test_review_page_leads_with_the_answer_and_reaches_the_decision(supervisor, live_app):
    page = supervisor
    job_id, _, reference = seed_submitted_job(live_app)
    page.goto("/review/?status=submitted")
    page.get_by_role("link", name=re.compile(reference)).tap()
    expect(page.get_by_role("heading", name=reference)).to_be_visible()
    # the verdict is on the first screen, the cautions on the page
    verdict = page.locator(".circuit-review .verdict-word").first
    expect(verdict).to_have_text("Satisfactory")
    assert verdict.bounding_box()["y"] < page.viewport_size["height"]
    expect(page.locator(".cautions")).to_contain_text("does not certify")
    page.get_by_role("link", name="Approve or return ↓").tap()
    expect(page.get_by_role("button", name="Approve job")).to_be_in_viewport()
    # a reading's history, one tap from its line
    # the one outlet name ("a · Landing") and the one reading name, as everywhere
    page.get_by_role("link", name=re.compile(r"^history of L–N.* at .*Landing$")).tap()
    expect(page.get_by_role("heading", name="History")).to_be_visible()
    expect(page.locator(".history-row")).to_have_count(1)
    expect(page.locator(".history-row")).to_contain_text("0.26")


def test_returned_with_a_comment_the_tester_sees_it(supervisor, live_app, tester_page):
    page = supervisor
    job_id, circuit_id, reference = seed_submitted_job(live_app)
    page.goto(f"/review/jobs/{job_id}")
    box = page.get_by_label("What the tester must do")
    page.get_by_role("button", name="Return to the tester").tap()
    assert box.evaluate("el => el.validity.valueMissing")  # the phone asks for the comment
    assert job_status(live_app, job_id) == "submitted"  # an empty comment changes nothing

    comment = "Landing reads the same as the bedrooms: re-check the spur under the stairs."
    box.fill(comment)
    page.get_by_role("button", name="Return to the tester").tap()
    expect(page.locator(".flash-ok")).to_contain_text(f"Job {reference} returned")
    assert job_status(live_app, job_id) == "returned"

    tester = tester_page
    tester.goto("/jobs/?status=returned")
    tester.get_by_role("link", name=re.compile(reference)).tap()
    expect(tester.locator(".review-comment")).to_have_text(comment)
    expect(tester.locator(".badge").first).to_contain_text("returned")
    # returned means writable again: the tester can correct a reading
    tester.goto(f"/circuits/{circuit_id}/test/ln")
    expect(tester.locator("input[name='value']")).to_have_count(3)


def test_approving_makes_the_job_read_only(supervisor, live_app, tester_page):
    page = supervisor
    job_id, circuit_id, reference = seed_submitted_job(live_app)
    page.goto(f"/review/jobs/{job_id}")
    page.get_by_role("button", name="Approve job").tap()
    expect(page.locator(".flash-ok")).to_contain_text(f"Job {reference} approved")
    expect(page.locator(".decision")).to_contain_text("The job is read-only")
    expect(page.get_by_role("button", name="Approve job")).to_have_count(0)
    assert job_status(live_app, job_id) == "approved"

    tester = tester_page
    tester.goto(f"/jobs/{job_id}")
    expect(tester.get_by_role("link", name="Add a ring circuit")).to_have_count(0)
    expect(tester.get_by_role("link", name="Edit job details")).to_have_count(0)
    tester.goto(f"/circuits/{circuit_id}/test/ln")
    expect(tester.locator(".flash-info")).to_contain_text("Read only")
    expect(tester.locator("input[name='value']")).to_have_count(0)
    expect(tester.get_by_role("button", name="Add outlet")).to_have_count(0)
    # and the server refuses a reading sent anyway
    status = tester.evaluate("""async (url) => {
      const token = document.querySelector('meta[name="csrf-token"]').content;
      const reply = await fetch(url, {method: "POST", credentials: "same-origin",
        headers: {"Content-Type": "application/json", "X-CSRFToken": token},
        body: JSON.stringify({step: "ln", outlet: "a", value: "0.30",
                              client_id: "browser-approved-1"})});
      return reply.status;
    }""", f"/api/circuits/{circuit_id}/readings")
    assert status == 409
    assert job_status(live_app, job_id) == "approved"
