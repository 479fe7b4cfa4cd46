"""On a phone: the live tests page fits 360 px and a measured Zs is judged in place."""

from __future__ import annotations

import pytest
from playwright.sync_api import expect
from seeds import ring_circuit
from test_phone import TAP_CHECK, TAP_PX

pytestmark = pytest.mark.browser

WIDTHS = "[document.scrollingElement.scrollWidth, document.scrollingElement.clientWidth]"


def seed(live_app) -> int:
    """A 32 A type B ring with all three steps in, written through the app's importer."""
    from fieldapp import changes
    from fieldapp.importer import import_document
    from fieldapp.models import User

    doc = {
        "format": "ringtest/1",
        "job": {"reference": "BT-LIVE-1", "site": "9 Slate Terrace, Bethesda",
                "client": "Invented Lettings", "date": "2026-11-30"},
        "circuit": ring_circuit("DB1/5", "Upstairs sockets with a long label to wrap"),
        "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": 0.86},
        "outlets": [{"id": "a", "label": "Landing", "ln": 0.26, "le": 0.35},
                    {"id": "b", "label": "Back bedroom by the window", "ln": 0.27, "le": 0.36},
                    {"id": "c", "label": "Bathroom shaver FCU", "kind": "fcu", "fuse_a": 3,
                     "spur_from": "b", "ln": 0.31, "le": 0.42}],
    }

    def write(db):
        user = db.session.scalar(db.select(User).where(User.username == "tester"))
        who = changes.Actor(user.id, "browser test seed")
        job = import_document(doc, who, tester_id=user.id)
        circuit = job.circuits[0]
        changes.update(circuit, {"safety_isolated": True, "safety_locked_off": True,
                                 "safety_proved_dead": True, "current_step": "le"}, who)
        db.session.commit()
        return circuit.id

    return live_app.query(write)


def test_live_page_fits_360px_and_judges_a_zs_in_place(page, live_app, log_in):
    from fieldapp.models import Outlet

    page.set_viewport_size({"width": 360, "height": 740})
    log_in(page, "tester")
    circuit_id = seed(live_app)
    assert page.goto(f"/circuits/{circuit_id}/live").ok
    page.locator("details.terminals").first.evaluate("d => d.open = true")
    scroll, client = page.evaluate(WIDTHS)
    assert client == 360 and scroll <= client
    page.locator("details.terminals").evaluate_all("ds => ds.forEach(d => d.open = true)")
    assert page.evaluate(TAP_CHECK.replace("LIMIT", str(TAP_PX))) == []
    card = page.locator("#r-zs_measured-a")
    page.locator("#v-r-zs_measured-a").fill("0.74")
    page.locator("#s-r-zs_measured-a").click()
    expect(card.locator("[data-value]").first).to_have_text("0.74 Ω")
    expect(card.locator("[data-feedback]").first).to_contain_text("Limit for a measured Zs")
    stored = live_app.query(lambda db: db.session.scalar(db.select(Outlet.zs_measured).where(
        Outlet.circuit_id == circuit_id, Outlet.key == "a")))
    assert stored == "0.74"
    assert page.evaluate(WIDTHS)[0] <= 360
