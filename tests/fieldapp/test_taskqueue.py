"""Diagnoses through the shared PostgreSQL job queue (procrastinate) and separate workers."""

from __future__ import annotations

import io
import threading

import pytest
import sqlalchemy as sa
from test_storage import copy_users


@pytest.fixture
def queue_app(make_app, template_db, pg_cluster):
    from fieldapp import manage
    from fieldapp.extensions import db

    url = pg_cluster.new_database()
    app = make_app(SQLALCHEMY_DATABASE_URI=url, DIAGNOSIS_MODE="queue")
    from fieldapp import migrations

    with app.app_context():
        migrations.upgrade(db.engine)
    copy_users(template_db, url)
    manage._queue_schema(app, out=io.StringIO())
    yield app
    queue = app.extensions["ringtest_background"]
    if queue._papp is not None:
        queue._papp.close()
    with app.app_context():
        db.session.remove()
        db.engine.dispose()


def _jobs(app) -> list[tuple]:
    from fieldapp.extensions import db

    with app.app_context():
        return [tuple(r) for r in db.session.execute(sa.text(
            "SELECT queueing_lock, status FROM procrastinate_jobs ORDER BY id"))]


@pytest.mark.postgres
def test_saves_coalesce_into_one_queued_job_and_a_worker_stores_the_diagnosis(
        queue_app, login):
    from test_diagnoses import _bg_circuit

    from fieldapp import records, taskqueue
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    circuit_id = _bg_circuit(queue_app)
    client = queue_app.test_client()
    login(client, "test")
    record = client.get(f"/api/circuits/{circuit_id}").get_json()["record"]
    keys = [o["id"] for o in record["outlets"]]
    for n, value in enumerate(("0.36", "0.37", "0.38")):
        reply = client.post(f"/api/circuits/{circuit_id}/readings", json={
            "step": "le", "outlet": keys[0], "value": value, "client_id": f"queue-save-{n:04d}"})
        assert reply.status_code == 200, reply.get_data(as_text=True)
        assert reply.get_json()["diagnosis_pending"] is True, reply.get_json()
    assert _jobs(queue_app) == [(f"circuit-{circuit_id}", "todo")]  # three saves, one job
    assert client.get(f"/api/circuits/{circuit_id}/diagnosis").status_code == 202
    # another process in real life; a thread of its own here, so its event loop is its own
    worker = threading.Thread(target=taskqueue.run_worker, args=(queue_app,),
                              kwargs={"wait": False})
    worker.start()
    worker.join(timeout=60)
    assert not worker.is_alive()
    assert _jobs(queue_app) == [(f"circuit-{circuit_id}", "succeeded")]
    poll = client.get(f"/api/circuits/{circuit_id}/diagnosis")
    assert poll.status_code == 200 and poll.get_json()["leading"]["verdict"]
    with queue_app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        assert records.diagnosis_or_instant(circuit)[1] is False  # stored: the newest record


@pytest.mark.parametrize("url", ["sqlite:///x.db", "sqlite://"])
def test_the_queue_needs_postgresql(make_app, url):
    with pytest.raises(ValueError, match="PostgreSQL"):
        make_app(SQLALCHEMY_DATABASE_URI=url, DIAGNOSIS_MODE="queue")
