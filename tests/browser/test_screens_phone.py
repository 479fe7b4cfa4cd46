"""On a 360-px phone: the outlet table fits with its Result in view, the diagnosis stays in
view while readings are entered, focus follows a new outlet, and a slipped decimal point is
asked about with one tap per answer."""

from __future__ import annotations

import itertools
import re

import pytest
from playwright.sync_api import expect
from seeds import ring_circuit

pytestmark = pytest.mark.browser

_numbers = itertools.count(1)
SMALL = {"width": 360, "height": 740}
# A healthy 2.5/1.5 mm² ring: step 2 about (r1 + rn) / 4 = 0.26 Ω, step 3 about
# (r1 + r2) / 4 ≈ 0.35 Ω at every outlet (the three-step ring test, common practice).
E2E = {"r1": 0.52, "rn": 0.52, "r2": 0.86}


def seed(live_app, outlets, *, step="ln"):
    """A job with one ring, step 1 done, safety confirmed; returns (job id, circuit id)."""
    from fieldapp import changes
    from fieldapp.importer import import_document
    from fieldapp.models import User

    number = next(_numbers)
    doc = {"format": "ringtest/1",
           "job": {"reference": f"SC-{number:04d}", "site": f"{number} Ffordd Las, Corris",
                   "client": "Invented Homes", "date": "2026-12-01"},
           "circuit": ring_circuit("DB1/5", "Upstairs sockets"),
           "end_to_end": E2E, "outlets": outlets}

    def write(db):
        tester = db.session.scalar(db.select(User).where(User.username == "apprentice"))
        who = changes.Actor(tester.id, "browser test seed")
        job = import_document(doc, who, tester_id=tester.id)
        circuit = job.circuits[0]
        changes.update(circuit, {"safety_isolated": True, "safety_locked_off": True,
                                 "safety_proved_dead": True, "current_step": step}, who)
        db.session.commit()
        return job.id, circuit.id

    return live_app.query(write)


def stored(live_app, circuit_id, key, step="ln"):
    from fieldapp import changes
    from fieldapp.models import Circuit

    def read(db):
        circuit = db.session.get(Circuit, circuit_id)
        return next(getattr(o, step) for o in changes.live_outlets(circuit) if o.key == key)

    return live_app.query(read)


def long_walk():
    rooms = ["Front bedroom by the window", "Front bedroom bedside", "Landing",
             "Back bedroom desk", "Bathroom shaver point", "Box room", "Study"]
    out = [{"id": chr(97 + i), "label": r, "kind": "twin_socket", "ln": 0.26, "le": 0.35}
           for i, r in enumerate(rooms)]
    out[3]["le"] = "OL"  # no earth path proved here
    out.append({"id": "h", "label": "Loft spur to the water heater", "kind": "twin_socket",
                "spur_from": "c", "ln": 0.31, "le": 0.42})
    return out


def focused_on(page, element_id: str, seconds: float = 15.0) -> None:
    """Wait until the element with this id has the focus (a loop of evaluations: the pages'
    content security policy forbids the string predicates wait_for_function would poll)."""
    import time

    end = time.monotonic() + seconds
    active = None
    while time.monotonic() < end:
        active = page.evaluate("document.activeElement && document.activeElement.id")
        if active == element_id:
            return
        page.wait_for_timeout(100)
    raise AssertionError(f"focus on {active!r}, not {element_id!r}")


FIT = """() => {
  const table = document.querySelector("table.outlet-table");
  const wrap = table.closest(".table-wrap");
  const results = [...table.querySelectorAll("tbody tr td.result")].map(td => {
    const box = td.getBoundingClientRect();
    return {left: box.left, right: box.right, width: box.width, text: td.innerText};
  });
  return {page: [document.scrollingElement.scrollWidth, document.scrollingElement.clientWidth],
          table: [table.scrollWidth, wrap.clientWidth], results};
}"""


def test_the_zs_table_fits_a_360px_phone_with_its_result_in_view(apprentice, live_app):
    page = apprentice
    page.set_viewport_size(SMALL)
    _, cid = seed(live_app, long_walk(), step="results")
    page.goto(f"/circuits/{cid}/results")
    got = page.evaluate(FIT)
    assert got["page"][0] <= got["page"][1] == 360
    assert got["table"][0] <= got["table"][1]
    assert len(got["results"]) == 8
    for cell in got["results"]:
        assert cell["width"] > 0 and 0 <= cell["left"] and cell["right"] <= 360, cell
    assert "no earth path proved" in got["results"][3]["text"]
    # the failing outlet leads the answer, before the verdict
    first = page.locator(".answer > *").first
    expect(first).to_contain_text("no earth path proved at d · Back bedroom desk")


def test_the_diagnosis_stays_in_view_while_entering_readings(apprentice, live_app):
    page = apprentice
    page.set_viewport_size(SMALL)
    _, cid = seed(live_app, long_walk(), step="le")
    page.goto(f"/circuits/{cid}/test/le")
    page.locator("article#r-le-h").scroll_into_view_if_needed()
    page.mouse.wheel(0, 2000)
    box = page.locator("#leading").bounding_box()
    assert box is not None and -1 <= box["y"] <= 2 and box["height"] < 120
    expect(page.locator("#leading summary")).to_contain_text("Zs fails")
    page.locator("#leading summary").tap()
    expect(page.locator("#leading .zs-fail")).to_be_visible()


def test_after_add_outlet_the_new_outlets_reading_takes_the_focus(apprentice, live_app):
    page = apprentice
    _, cid = seed(live_app, [{"id": "a", "label": "Kitchen", "kind": "twin_socket"}])
    page.goto(f"/circuits/{cid}/test/ln")
    for label, key in (("Hall", "b"), ("Lounge", "c"), ("Porch", "d")):
        page.get_by_label("Where is it?").fill(label)
        page.get_by_role("button", name="Add outlet").tap()
        expect(page.get_by_role("heading", name=re.compile(label))).to_be_visible()
        focused_on(page, f"v-r-ln-{key}")


def test_a_slipped_decimal_point_is_one_tap_to_fix(apprentice, live_app):
    page = apprentice
    _, cid = seed(live_app, [{"id": "a", "label": "Kitchen", "kind": "twin_socket"},
                             {"id": "b", "label": "Hall", "kind": "twin_socket"}])
    page.goto(f"/circuits/{cid}/test/ln")
    box = page.locator("article#r-ln-a")
    box.locator("input[name='value']").fill("2.6")
    box.get_by_role("button", name="Save").tap()
    question = box.locator("[data-slip]")
    expect(question).to_contain_text("Decimal point slipped?")
    expect(question.get_by_role("button")).to_have_text(["0.26 Ω", "keep 2.6 Ω"])
    assert stored(live_app, cid, "a") is None  # nothing stored until the answer
    question.get_by_role("button", name="0.26 Ω").tap()
    expect(box.locator("[data-value]")).to_have_text("0.26 Ω")
    expect(box.locator("[data-slip]")).to_have_count(0)
    assert stored(live_app, cid, "a") == "0.26"
    # keeping the value as typed is one tap too
    other = page.locator("article#r-ln-b")
    other.locator("input[name='value']").fill("2.6")
    other.get_by_role("button", name="Save").tap()
    other.locator("[data-slip]").get_by_role("button", name="keep 2.6 Ω").tap()
    expect(other.locator("[data-value]")).to_have_text("2.60 Ω")
    assert stored(live_app, cid, "b") == "2.6"


def test_without_the_server_the_page_asks_the_same_question(apprentice, live_app):
    """The network fails on the way: the card's own band (the server's, on data-low/high)
    asks about the slip before anything is queued."""
    page = apprentice
    _, cid = seed(live_app, [{"id": "a", "label": "Kitchen", "kind": "twin_socket"}])
    page.goto(f"/circuits/{cid}/test/ln")
    page.route("**/api/circuits/*/readings", lambda route: route.abort())
    box = page.locator("article#r-ln-a")
    box.locator("input[name='value']").fill("0.026")
    box.get_by_role("button", name="Save").tap()
    question = box.locator("[data-slip]")
    expect(question).to_contain_text("Decimal point slipped?")
    expect(question.get_by_role("button")).to_have_text(["0.26 Ω", "keep 0.026 Ω"])
    assert page.evaluate("window.ringtestSlip.check(document.querySelector("
                         "'#r-ln-a form.reading-form'), '2.6').suggested") == "0.26"
    assert page.evaluate("window.ringtestSlip.check(document.querySelector("
                         "'#r-ln-a form.reading-form'), '0.27')") is None
    assert stored(live_app, cid, "a") is None
