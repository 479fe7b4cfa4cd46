"""The supervisor's job list: time to serve it with the diagnoses stored, and when they are not.

Builds a throwaway SQLite database with N submitted jobs of one 20-outlet circuit each (readings
from the seeded simulator), then times ``GET /review/`` through the app: first with nothing
stored (every circuit diagnosed once, then stored), then again (every diagnosis read back).
Prints milliseconds with the load average beside them. Bounded: one database, a few requests.

Run: ``.venv/bin/python bench/review_list.py [--jobs 60] [--repeat 5]``
"""

from __future__ import annotations

import argparse
import os
import random
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

PASSWORD = "bench-password-not-for-use"


def build(jobs: int):
    from fieldapp import changes, create_app, manage
    from fieldapp.extensions import db
    from fieldapp.models import Circuit, Job, User

    folder = Path(tempfile.mkdtemp(prefix="ringtest-review-"))
    app = create_app({"SECRET_KEY": "bench", "INSTANCE_PATH": str(folder),
                      "SQLALCHEMY_DATABASE_URI": f"sqlite:///{folder / 'bench.db'}",
                      "DEMO_PASSWORD": PASSWORD, "WTF_CSRF_ENABLED": False,
                      "DIAGNOSIS_MODE": "inline"})
    manage.setup(app, out=open(os.devnull, "w"))
    rng = random.Random(2026)
    with app.app_context():
        tester = db.session.query(User).filter_by(role="tester").first()
        who = changes.Actor(tester.id, "bench")
        for n in range(jobs):
            job = changes.create(Job, {"reference": f"REV-{n:03d}", "site": f"{n} Bench Row",
                                       "created_by": tester.id, "tester_id": tester.id,
                                       "status": "submitted"}, who)
            circuit = changes.create(Circuit, {
                "job_id": job.id, "ocpd_curve": "B", "ze_ohm": 0.35, "safety_isolated": True,
                "safety_locked_off": True, "safety_proved_dead": True}, who)
            r1 = round(rng.uniform(0.4, 0.7), 2)
            r2 = round(r1 * 1.63, 2)
            for name, value in (("r1", r1), ("rn", r1), ("r2", r2)):
                changes.set_reading(circuit, name, str(value), who)
            for k in range(20):
                outlet = changes.add_outlet(circuit, {"label": f"Point {k + 1}"}, who)
                t = (k + 0.5) / 20
                ln = r1 / 2 + rng.gauss(0, 0.005)  # (r1 + rn) / 4 with rn = r1
                le = (r1 * r2 + t * (1 - t) * (r1 - r2) ** 2) / (r1 + r2) + rng.gauss(0, 0.005)
                changes.set_reading(circuit, "ln", f"{ln:.2f}", who, outlet=outlet)
                changes.set_reading(circuit, "le", f"{le:.2f}", who, outlet=outlet)
        db.session.commit()
    return app


def timed(client) -> float:
    start = time.perf_counter()
    response = client.get("/review/")
    assert response.status_code == 200, response.status_code
    return (time.perf_counter() - start) * 1000


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--jobs", type=int, default=60)
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args(argv)
    app = build(args.jobs)
    client = app.test_client()
    client.post("/login", data={"username": "supervisor", "password": PASSWORD})
    cold = timed(client)
    warm = [timed(client) for _ in range(args.repeat)]
    load = "/".join(f"{x:.1f}" for x in os.getloadavg())
    print(f"review list, {args.jobs} jobs of one 20-outlet circuit (SQLite), load {load}")
    print(f"  nothing stored: {cold:7.0f} ms  ({cold / args.jobs:.0f} ms per new circuit)")
    print(f"  stored:         {statistics.median(warm):7.0f} ms median of {args.repeat}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
