"""Helpers of the phone tests: seed a circuit through the app's own functions, look into the
database, find and fill a reading card."""

from __future__ import annotations

import itertools

from seeds import ring_circuit

_numbers = itertools.count(1)
#: The browser tests' accounts (loopback only, one test run).
PASSWORD = "loopback-only-7"


def seed_circuit(live_app, *, safety=True, outlets=("Kitchen by door", "Lounge window"),
                 readings=None, user="apprentice"):
    """A job with one 32 A B-curve ring, step 1 done and outlets without step 2 readings
    (``readings`` {key: ln} sets some), written through the app's own importer and change
    functions; returns (job id, circuit id)."""
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
        "outlets": [{"id": chr(97 + i), "label": label, "kind": "twin_socket",
                     "ln": (readings or {}).get(chr(97 + i))}
                    for i, label in enumerate(outlets)],
    }

    def write(db):
        tester = db.session.scalar(db.select(User).where(User.username == user))
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


def outlets_of(live_app, circuit_id: int) -> list[tuple]:
    """(key, label, ln, le) of every live outlet, in visiting order."""
    from fieldapp import changes
    from fieldapp.models import Circuit

    def read(db):
        circuit = db.session.get(Circuit, circuit_id)
        return [(o.key, o.label, o.ln, o.le) for o in changes.live_outlets(circuit)]

    return live_app.query(read)


def writes_with(live_app, client_id: str) -> int:
    from fieldapp.models import ChangeLog

    return live_app.query(lambda db: db.session.scalar(
        db.select(db.func.count(ChangeLog.id)).where(ChangeLog.client_id == client_id)))


def card(page, anchor: str):
    return page.locator(f"article#{anchor}")


def enter(page, anchor: str, value: str):
    """Type a reading into one reading card and tap Save (opening "Correct" if needed)."""
    box = card(page, anchor)
    correct = box.locator("details.correct:not([open]) > summary")
    if correct.count():
        correct.tap()
    box.locator("input[name='value']").fill(value)
    box.get_by_role("button", name="Save", exact=True).tap()
