"""Stored diagnoses: computed once per distinct record and engine, shared through the database."""

from __future__ import annotations

import os
import sys

import pytest

RING = {"r1": "0.52", "rn": "0.52", "r2": "0.86"}
OUTLETS = [{"label": "Hall", "ln": "0.26", "le": "0.35"},
           {"label": "Lounge", "ln": "0.26", "le": "0.34"}]


def _rows(app):
    from fieldapp.extensions import db
    from fieldapp.models import StoredDiagnosis

    with app.app_context():
        return db.session.query(StoredDiagnosis).count()


@pytest.fixture
def circuit_id(make_circuit):
    return make_circuit(e2e=RING, outlets=OUTLETS)


def test_a_record_is_diagnosed_once_and_the_result_is_the_engines(app, circuit_id):
    from fieldapp import records
    from fieldapp.extensions import db
    from fieldapp.models import Circuit
    from ringmath.diagnose import diagnose

    with app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        first, problem = records.diagnose_circuit(circuit)
        second, _ = records.diagnose_circuit(circuit)
        expected = diagnose(records.circuit_record(circuit, with_job=False))
    assert problem is None
    assert first == second == expected  # a JSON round trip changes nothing
    assert _rows(app) == 1


def test_a_changed_reading_is_a_new_record(app, circuit_id):
    from fieldapp import changes, records
    from fieldapp.extensions import db
    from fieldapp.models import Circuit, User

    with app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        records.diagnose_circuit(circuit)
        who = changes.Actor(db.session.query(User).filter_by(username="test").one().id, "t")
        changes.set_reading(circuit, "r2", "0.87", who)
        db.session.commit()
        after, _ = records.diagnose_circuit(circuit)
    assert after["end_to_end"]["r2"] == 0.87
    assert _rows(app) == 2


def test_a_stored_result_is_served_without_computing(app, circuit_id, monkeypatch):
    """Another worker (here: the engine made unusable) reads the row the first one stored."""
    from fieldapp import diagnoses, records
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    with app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        first, _ = records.diagnose_circuit(circuit)

        def refuse(_record):
            raise AssertionError("diagnosed again")

        monkeypatch.setattr(diagnoses, "diagnose", refuse)
        again, _ = records.diagnose_circuit(circuit)
    assert again == first


def test_a_new_engine_recomputes(app, circuit_id, monkeypatch):
    from fieldapp import diagnoses, records
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    with app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        records.diagnose_circuit(circuit)
        monkeypatch.setattr(diagnoses, "ENGINE_VERSION", "another-engine")
        records.diagnose_circuit(circuit)
    assert _rows(app) == 2


def test_callers_get_their_own_copy(app, circuit_id):
    from fieldapp import records
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    with app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        first, _ = records.diagnose_circuit(circuit)
        first["findings"].append("scribble")
        second, _ = records.diagnose_circuit(circuit)
    assert "scribble" not in second["findings"]


def test_the_engine_version_follows_the_code():
    from fieldapp import diagnoses

    assert len(diagnoses.ENGINE_VERSION) == 16
    assert diagnoses.ENGINE_VERSION == diagnoses._engine_version()


# ---------------------------------------------------------------- background diagnosis


@pytest.fixture
def bg_app(make_app):
    return make_app(DIAGNOSIS_MODE="background")


def test_a_save_answers_with_the_instant_check_and_the_diagnosis_follows(bg_app, make_circuit):
    from fieldapp import background, diagnoses, records
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    circuit_id = _bg_circuit(bg_app)
    with bg_app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        first, pending = records.diagnosis_or_instant(circuit)
        assert pending
        assert set(first) == {"readings", "expected"}  # the instant check, no fit
        assert background.queue(bg_app).wait_idle(30)
        record = records.circuit_record(circuit, with_job=False)
        assert diagnoses.stored(record) is not None
        again, pending = records.diagnosis_or_instant(circuit)
    assert not pending
    assert again["verdict"] in ("satisfactory", "investigate", "retest", "incomplete")
    assert again["readings"] == first["readings"]  # the same instant checks inside


def _bg_circuit(app):
    from fieldapp import changes
    from fieldapp.extensions import db
    from fieldapp.models import Circuit, Job, User

    with app.app_context():
        user = db.session.query(User).filter_by(username="test").one()
        who = changes.Actor(user.id, "pytest")
        job = changes.create(Job, {"reference": "BG-1", "site": "2 Test Row",
                                   "created_by": user.id, "tester_id": user.id}, who)
        circuit = changes.create(Circuit, {
            "job_id": job.id, "ocpd_curve": "B", "ze_ohm": 0.35, "safety_isolated": True,
            "safety_locked_off": True, "safety_proved_dead": True}, who)
        for name, value in RING.items():
            changes.set_reading(circuit, name, value, who)
        for spec in OUTLETS:
            spec = dict(spec)
            readings = {k: spec.pop(k) for k in ("ln", "le")}
            outlet = changes.add_outlet(circuit, spec, who)
            for name, value in readings.items():
                changes.set_reading(circuit, name, value, who, outlet=outlet)
        db.session.commit()
        return circuit.id


def test_quick_saves_coalesce_into_one_diagnosis(bg_app, monkeypatch):
    """Five submissions inside the coalescing window cost one diagnosis."""
    from fieldapp import background, records

    calls = []
    real = records.diagnose_circuit

    def counting(circuit):
        calls.append(circuit.id)
        return real(circuit)

    monkeypatch.setattr(records, "diagnose_circuit", counting)
    circuit_id = _bg_circuit(bg_app)
    queue = background.queue(bg_app)
    for _ in range(5):
        queue.submit(circuit_id)
    assert queue.pending(circuit_id)
    assert queue.wait_idle(30)
    assert calls == [circuit_id]


def test_one_failing_circuit_does_not_stop_the_thread(bg_app, monkeypatch):
    from fieldapp import background, records

    circuit_id = _bg_circuit(bg_app)
    real = records.diagnose_circuit
    seen = []

    def flaky(circuit):
        seen.append(circuit.id)
        if len(seen) == 1:
            raise RuntimeError("boom")
        return real(circuit)

    monkeypatch.setattr(records, "diagnose_circuit", flaky)
    queue = background.queue(bg_app)
    queue.submit(circuit_id)
    assert queue.wait_idle(30)
    queue.submit(circuit_id)
    assert queue.wait_idle(30)
    assert seen == [circuit_id, circuit_id]


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="per-thread priority is Linux's")
def test_the_diagnosis_thread_yields_the_cores_to_the_requests(bg_app, monkeypatch):
    """The background thread runs NICE_STEPS lower than the thread that saved; the saving
    thread's own priority is untouched (Linux schedules each thread on its own)."""
    import threading

    from fieldapp import background, records

    seen = {}
    real = records.diagnose_circuit

    def noting(circuit):
        seen["nice"] = os.getpriority(os.PRIO_PROCESS, threading.get_native_id())
        return real(circuit)

    monkeypatch.setattr(records, "diagnose_circuit", noting)
    mine = os.getpriority(os.PRIO_PROCESS, threading.get_native_id())
    queue = background.Background(bg_app, coalesce_s=0.0)  # a new thread: the priority is set
    queue.submit(_bg_circuit(bg_app))                        # when a thread starts
    assert queue.wait_idle(30)
    assert seen["nice"] == min(mine + background.NICE_STEPS, 19)
    assert os.getpriority(os.PRIO_PROCESS, threading.get_native_id()) == mine


@pytest.mark.parametrize("mode", ["", "threads", "Inline "])
def test_an_unknown_mode_is_refused_naming_the_setting(make_app, mode):
    with pytest.raises(ValueError, match="DIAGNOSIS_MODE"):
        make_app(DIAGNOSIS_MODE=mode)


def test_the_api_save_does_not_wait_and_the_poll_brings_the_diagnosis(bg_app, login):
    import time

    from fieldapp import background

    circuit_id = _bg_circuit(bg_app)
    client = bg_app.test_client()
    login(client, "test")
    outlet = client.get(f"/api/circuits/{circuit_id}").get_json()["record"]["outlets"][0]["id"]
    assert background.queue(bg_app).wait_idle(30)  # the GET above diagnosed inline: stored
    reply = client.post(f"/api/circuits/{circuit_id}/readings",
                        json={"step": "le", "outlet": outlet, "value": "0.36",
                              "client_id": "bg-save-0001"})
    body = reply.get_json()
    assert reply.status_code == 200 and body["stored"]
    assert body["diagnosis_pending"] is True and body["leading"] is None
    assert body["feedback"]["expected_ohm"] is not None  # the instant check is there
    assert 'data-poll="' + body["diagnosis_url"] + '"' in body["html"]["leading"]
    deadline = time.monotonic() + 30
    while True:
        poll = client.get(body["diagnosis_url"])
        if poll.status_code == 200 or time.monotonic() > deadline:
            break
        assert poll.status_code == 202 and poll.get_json()["pending"] is True
        time.sleep(0.05)
    assert poll.status_code == 200
    data = poll.get_json()
    assert data["leading"]["verdict"] in ("satisfactory", "investigate", "retest", "incomplete")
    assert "data-poll" not in data["html"]["leading"]


def test_inline_mode_answers_a_save_with_the_full_diagnosis(tester, make_circuit):
    circuit_id = make_circuit(e2e=RING, outlets=OUTLETS)
    outlet = tester.get(f"/api/circuits/{circuit_id}").get_json()["record"]["outlets"][1]["id"]
    body = tester.post(f"/api/circuits/{circuit_id}/readings",
                       json={"step": "le", "outlet": outlet, "value": "0.35",
                             "client_id": "inline-0001"}).get_json()
    assert body["diagnosis_pending"] is False and body["diagnosis_url"] is None
    assert body["leading"]["verdict"]
    poll = tester.get(f"/api/circuits/{circuit_id}/diagnosis")
    assert poll.status_code == 200 and poll.get_json()["leading"] == body["leading"]


def test_a_poll_stops_when_the_circuit_cannot_be_diagnosed(bg_app, login, monkeypatch):
    from fieldapp import background, records

    circuit_id = _bg_circuit(bg_app)
    monkeypatch.setattr(records.diagnoses, "diagnosis_for",
                        lambda record: (_ for _ in ()).throw(RuntimeError("engine down")))
    client = bg_app.test_client()
    login(client, "test")
    first = client.get(f"/api/circuits/{circuit_id}/diagnosis")
    assert first.status_code == 202
    assert background.queue(bg_app).wait_idle(30)
    again = client.get(f"/api/circuits/{circuit_id}/diagnosis")
    assert again.status_code == 200 and again.get_json()["leading"] is None
