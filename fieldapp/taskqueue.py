"""Diagnoses in separate worker processes, for a team on PostgreSQL (``FIELDAPP_DIAGNOSIS=queue``).

The queue is procrastinate: its jobs live in the same PostgreSQL database as the app, so every
app server defers into one queue and every worker process (on any machine) takes from it; no
broker or other service is needed, and a job survives a restart of anything. Chosen over a
broker-based queue (rq, dramatiq, huey need Redis or RabbitMQ, which a small team would have to
run and back up as well) and over our own table-claiming loop (procrastinate already does the
locking, retries, LISTEN/NOTIFY wake-ups and a worker command, and is maintained).

Coalescing: each deferral carries the queueing lock ``circuit-<id>``, and procrastinate refuses
a second job with the same lock while one waits (``AlreadyEnqueued``): any number of saves
while a circuit waits cost one diagnosis, of its newest record (read when the job runs).

Start the workers beside the app servers::

    export FIELDAPP_DIAGNOSIS=queue DATABASE_URL=postgresql://...
    python -m fieldapp.manage diagnosis-worker
"""

from __future__ import annotations

import logging
import os

import procrastinate
from flask import Flask
from procrastinate import exceptions as pexc

log = logging.getLogger(__name__)

QUEUE = "diagnosis"
TASK = "ringtest.diagnose_circuit"


def conninfo(sqlalchemy_url: str) -> str:
    """A libpq connection string from the app's SQLAlchemy URL."""
    for prefix in ("postgresql+psycopg://", "postgresql://", "postgres://"):
        if sqlalchemy_url.startswith(prefix):
            return "postgresql://" + sqlalchemy_url[len(prefix):]
    raise ValueError("DIAGNOSIS_MODE=queue needs DATABASE_URL to be a PostgreSQL URL")


def build(flask_app: Flask, connector) -> procrastinate.App:
    """The procrastinate app with our one task, diagnosing in ``flask_app``'s context."""
    papp = procrastinate.App(connector=connector)

    @papp.task(name=TASK, queue=QUEUE)
    def diagnose_circuit(circuit_id: int) -> None:
        from fieldapp.background import diagnose_one

        diagnose_one(flask_app, circuit_id)

    return papp


def schema_ready(papp: procrastinate.App) -> bool:
    rows = papp.connector.get_sync_connector().execute_query_all(
        query="SELECT to_regclass('procrastinate_jobs') IS NOT NULL AS present")
    return bool(rows and rows[0]["present"])


def apply_schema(papp: procrastinate.App) -> bool:
    """Create procrastinate's tables once (``manage setup``); True when it created them."""
    if schema_ready(papp):
        return False
    papp.schema_manager.apply_schema()
    return True


class QueueSubmitter:
    """The app servers' side: defer a circuit's diagnosis to the shared queue."""

    def __init__(self, flask_app: Flask):
        self.flask_app = flask_app
        self._papp: procrastinate.App | None = None
        self._pid = 0
        #: the workers' failures are in their logs; polls simply stop after a while
        self.failed: dict[int, str] = {}

    def papp(self) -> procrastinate.App:
        if self._papp is None or self._pid != os.getpid():  # a pool does not survive a fork
            url = self.flask_app.config["SQLALCHEMY_DATABASE_URI"]
            self._papp = build(self.flask_app, procrastinate.SyncPsycopgConnector(
                conninfo=conninfo(url), min_size=1, max_size=4)).open()
            self._pid = os.getpid()
        return self._papp

    def submit(self, circuit_id: int) -> None:
        task = self.papp().tasks[TASK]
        try:
            task.configure(queueing_lock=f"circuit-{circuit_id}").defer(circuit_id=circuit_id)
        except pexc.AlreadyEnqueued:
            pass  # one already waits: it will read the newest record when it runs
        except pexc.ConnectorException as error:  # the page still shows the instant check
            log.warning("diagnosis of circuit %s not queued: %s", circuit_id, error)

    ensure = submit


def run_worker(flask_app: Flask, *, wait: bool = True) -> None:
    """Work the diagnosis queue (``manage diagnosis-worker``); ``wait=False`` stops once the
    queue is empty (tests)."""
    url = flask_app.config["SQLALCHEMY_DATABASE_URI"]
    papp = build(flask_app, procrastinate.PsycopgConnector(conninfo=conninfo(url)))
    papp.run_worker(queues=[QUEUE], wait=wait, install_signal_handlers=wait)
