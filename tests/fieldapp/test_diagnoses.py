"""Stored diagnoses: computed once per distinct record and engine, shared through the database."""

from __future__ import annotations

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
