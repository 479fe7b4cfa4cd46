"""Where the full diagnosis runs after a reading is saved.

A save stores the reading and answers with the instant check of that reading (cheap: the
expected value and band from step 1). The full diagnosis of the circuit's new record follows:

* ``inline``: computed in the request that asks for it (tests; the simplest deployment);
* ``background`` (the embedded default): one daemon thread per app process. Saves of the same
  circuit coalesce: while a circuit waits (or is being diagnosed) further saves only mark it
  again, and the thread diagnoses the newest record once. Nothing here is needed by another
  process: the result goes to the database (``fieldapp.diagnoses``), and a circuit whose
  pending mark is lost (a worker restarted) is diagnosed by the next page or poll that asks.

* ``queue``: a team on PostgreSQL runs the diagnoses in separate worker processes through a
  shared job queue (``fieldapp/taskqueue.py``, procrastinate).

Set ``FIELDAPP_DIAGNOSIS=inline|background|queue`` (config ``DIAGNOSIS_MODE``).
"""

from __future__ import annotations

import logging
import os
import threading
import time

from flask import Flask

log = logging.getLogger(__name__)

MODES = ("inline", "background", "queue")
#: Seconds a circuit waits after its latest save before it is diagnosed: quick saves in a row
#: (a tester reading socket after socket) then cost one diagnosis, not one each.
COALESCE_S = 0.15
#: How much lower (Unix nice steps) the diagnosis thread runs than the requests: when the
#: cores are busy a save is answered first and the diagnosis takes the spare time. 10, not 19:
#: at 19 a flat-out load starved the diagnoses for tens of seconds (bench/load.py, 50 phones).
NICE_STEPS = 10


def lower_priority(steps: int = NICE_STEPS) -> bool:
    """Lower the calling thread's scheduling priority by ``steps`` (Linux schedules threads one
    by one, so the other threads of this server process keep theirs). False where the platform
    cannot (no per-thread priority, or not permitted); the thread then runs as it was."""
    try:
        tid = threading.get_native_id()
        os.setpriority(os.PRIO_PROCESS, tid, os.getpriority(os.PRIO_PROCESS, tid) + steps)
    except (AttributeError, OSError):
        return False
    return True


class Background:
    """A coalescing queue of circuit ids and the thread that diagnoses them."""

    def __init__(self, app: Flask, coalesce_s: float = COALESCE_S):
        self.app = app
        self.coalesce_s = coalesce_s
        self._due: dict[int, float] = {}  # circuit id -> time it may run (monotonic)
        self._busy = 0
        self._cond = threading.Condition()
        self._thread: threading.Thread | None = None
        self._pid = 0
        #: circuit id -> hash of the record whose diagnosis failed here (so a poll stops
        #: asking for it; a changed reading is a new record and is tried again)
        self.failed: dict[int, str] = {}

    def submit(self, circuit_id: int) -> None:
        """Diagnose this circuit's newest record soon (once, however often it is submitted)."""
        with self._cond:
            self._due[circuit_id] = time.monotonic() + self.coalesce_s
            if self._thread is None or not self._thread.is_alive() or self._pid != os.getpid():
                # threads do not survive a fork: each server process starts its own
                self._pid = os.getpid()
                self._thread = threading.Thread(target=self._loop, name="ringtest-diagnosis",
                                                daemon=True)
                self._thread.start()
            self._cond.notify()

    def ensure(self, circuit_id: int) -> None:
        """Queue the circuit unless it already waits (a poll must not push a save's turn back)."""
        with self._cond:
            waiting = circuit_id in self._due
        if not waiting:
            self.submit(circuit_id)

    def pending(self, circuit_id: int) -> bool:
        with self._cond:
            return circuit_id in self._due

    def wait_idle(self, timeout_s: float = 10.0) -> bool:
        """True once nothing waits or runs (tests and the benchmark)."""
        end = time.monotonic() + timeout_s
        with self._cond:
            while self._due or self._busy:
                left = end - time.monotonic()
                if left <= 0:
                    return False
                self._cond.wait(min(left, 0.05))
        return True

    def _next(self) -> int:
        with self._cond:
            while True:
                now = time.monotonic()
                ready = [cid for cid, at in self._due.items() if at <= now]
                if ready:
                    circuit_id = min(ready, key=self._due.__getitem__)
                    del self._due[circuit_id]
                    self._busy += 1
                    return circuit_id
                wait = min(self._due.values()) - now if self._due else None
                self._cond.wait(wait)

    def _loop(self) -> None:
        lower_priority()
        while True:
            circuit_id = self._next()
            try:
                self._diagnose(circuit_id)
            except Exception:  # one bad circuit must not stop the thread
                log.exception("background diagnosis failed for circuit %s", circuit_id)
            finally:
                with self._cond:
                    self._busy -= 1
                    self._cond.notify_all()

    def _diagnose(self, circuit_id: int) -> None:
        failed = diagnose_one(self.app, circuit_id)
        if failed is None:
            self.failed.pop(circuit_id, None)
        else:
            self.failed[circuit_id] = failed


def diagnose_one(app: Flask, circuit_id: int) -> str | None:
    """Diagnose (and store) one circuit's newest record in ``app``'s context, for the thread
    here and the queue's workers alike. The record's hash when it cannot be diagnosed, else
    None (also for a circuit deleted meanwhile)."""
    from fieldapp import records
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    with app.app_context():
        try:
            circuit = db.session.get(Circuit, circuit_id)
            if circuit is None:
                return None
            _, problem = records.diagnose_circuit(circuit)
            if not problem:
                return None
            log.info("circuit %s not diagnosed: %s", circuit_id, problem)
            return records.record_hash(circuit)
        finally:
            db.session.remove()


def init_app(app: Flask) -> None:
    mode = app.config.get("DIAGNOSIS_MODE", "inline")
    if mode not in MODES:
        raise ValueError(f"DIAGNOSIS_MODE: expected one of {', '.join(MODES)}, got {mode!r}")
    if mode == "queue":
        from fieldapp.taskqueue import QueueSubmitter, conninfo

        conninfo(app.config["SQLALCHEMY_DATABASE_URI"])  # refuse a non-PostgreSQL database now
        app.extensions["ringtest_background"] = QueueSubmitter(app)
        return
    app.extensions["ringtest_background"] = Background(app) if mode == "background" else None


def queue(app: Flask):
    """The app's background queue (a Background or a taskqueue.QueueSubmitter), or None."""
    return app.extensions.get("ringtest_background")

