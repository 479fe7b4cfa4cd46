"""Fixtures for the app tests: clients logged in per role and a circuit builder."""

from __future__ import annotations

import itertools

import pytest
from bs4 import BeautifulSoup
from pg import pg_cluster  # noqa: F401  (session fixture for the tests marked postgres)


@pytest.fixture
def client(app):
    return app.test_client()


@pytest.fixture
def login(test_password):
    """login(client, username) posts the login form and checks it worked."""

    def do(client, username, password=None):
        response = client.post("/login", data={"username": username,
                                               "password": password or test_password})
        assert response.status_code == 302, response.get_data(as_text=True)[:500]
        client.get(response.headers["Location"])  # shows (and so clears) the welcome flash
        return response

    return do


@pytest.fixture
def logged_in(app, login):
    """logged_in(username) -> a new test client logged in as that user."""

    def make(username):
        c = app.test_client()
        login(c, username)
        return c

    return make


@pytest.fixture
def tester(logged_in):
    return logged_in("test")


@pytest.fixture
def apprentice(logged_in):
    return logged_in("appr")


@pytest.fixture
def supervisor(logged_in):
    return logged_in("super")


@pytest.fixture
def parse():
    """parse(response) -> BeautifulSoup of the page."""

    def do(response) -> BeautifulSoup:
        return BeautifulSoup(response.get_data(as_text=True), "html.parser")

    return do


@pytest.fixture
def make_circuit(app):
    """make_circuit(safe=True, e2e=None, outlets=(), **circuit fields) -> circuit id.

    outlets: dicts of Outlet columns plus optional "ln"/"le" readings; written through
    fieldapp.changes like any other path.
    """
    from fieldapp import changes
    from fieldapp.extensions import db
    from fieldapp.models import Circuit, Job, User

    counter = itertools.count(1)

    def build(safe=True, e2e=None, outlets=(), status="in_progress", **fields):
        with app.app_context():
            user = db.session.query(User).filter_by(username="test").one()
            who = changes.Actor(user.id, "pytest")
            job = changes.create(Job, {"reference": f"T-{next(counter)}", "site": "1 Test Row",
                                       "client": "Test Client", "created_by": user.id,
                                       "tester_id": user.id, "status": status}, who)
            values = {"job_id": job.id, "board": "DB1", "way": "4", "ocpd_curve": "B",
                      "ze_ohm": 0.35, "earthing": "TN-C-S"}
            if safe:
                values.update({"safety_isolated": True, "safety_locked_off": True,
                               "safety_proved_dead": True, "current_step": "e2e"})
            values.update(fields)
            circuit = changes.create(Circuit, values, who)
            for name, value in (e2e or {}).items():
                changes.set_reading(circuit, name, value, who)
            for spec in outlets:
                spec = dict(spec)
                readings = {k: spec.pop(k) for k in ("ln", "le") if k in spec}
                outlet = changes.add_outlet(circuit, spec, who)
                for name, value in readings.items():
                    changes.set_reading(circuit, name, value, who, outlet=outlet)
            db.session.commit()
            return circuit.id

    return build
