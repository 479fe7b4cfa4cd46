"""Load test: simulated phones saving readings against gunicorn on loopback.

Each phone signs in, owns one 20-outlet circuit (safety confirmed, step 1 taken) and saves its
step 2 and step 3 readings through the JSON API, either at a human pace (one reading every
10–20 s) or flat out, while one large job import runs. At the end it prints saves per second
(over the time the phones were saving, not the tail spent waiting for a last diagnosis),
p50/p95/p99 save latency, the time from a save to its full diagnosis being available, errors,
a row count (every reading the phones were told was stored must be in the change log
exactly once) and the phones' own CPU in cores: they run on the same two cores as the server.

Bounded and loopback only: every request goes to 127.0.0.1, every loop stops by time and count.
Run: ``.venv/bin/python bench/load.py`` (SQLite and PostgreSQL, 10 and 50 phones, both paces,
60 s each: about 9 minutes), or narrow it: ``--db sqlite --phones 50 --pace human --seconds 30``.
"""

from __future__ import annotations

import argparse
import http.cookiejar
import json
import os
import random
import re
import subprocess
import sys
import tempfile
import threading
import time
import urllib.error
import urllib.request
import uuid
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "fieldapp"))

PASSWORD = "bench-password-not-for-use"
OUTLETS = 20
MAX_REQUESTS_PER_PHONE = 2000  # a bound on the flat-out loop whatever the duration


class Phone:
    """One signed-in browser session (cookies, CSRF token) talking to the server."""

    def __init__(self, base: str):
        self.base = base
        self.jar = http.cookiejar.CookieJar()
        self.opener = urllib.request.build_opener(urllib.request.HTTPCookieProcessor(self.jar))
        self.csrf = ""

    def request(self, method: str, path: str, body: bytes | None = None,
                headers: dict | None = None, timeout: float = 30) -> tuple[int, bytes]:
        req = urllib.request.Request(self.base + path, data=body, method=method,
                                     headers=headers or {})
        try:
            with self.opener.open(req, timeout=timeout) as response:
                return response.status, response.read()
        except urllib.error.HTTPError as error:
            return error.code, error.read()

    def sign_in(self, username: str) -> None:
        _, page = self.request("GET", "/login")
        token = re.search(rb'name="csrf_token"[^>]*value="([^"]+)"', page)
        form = f"username={username}&password={PASSWORD}"
        if token:
            form += f"&csrf_token={token.group(1).decode()}"
        status, page = self.request("POST", "/login", form.encode(),
                                    {"Content-Type": "application/x-www-form-urlencoded"})
        _, page = self.request("GET", "/jobs/")
        meta = re.search(rb'name="csrf-token" content="([^"]+)"', page)
        if not meta:
            raise RuntimeError(f"sign-in as {username} failed (status {status})")
        self.csrf = meta.group(1).decode()

    def post_json(self, path: str, doc: dict) -> tuple[int, dict, float]:
        start = time.perf_counter()
        status, body = self.request("POST", path, json.dumps(doc).encode(),
                                    {"Content-Type": "application/json",
                                     "X-CSRFToken": self.csrf})
        elapsed = time.perf_counter() - start
        try:
            reply = json.loads(body or b"{}")
        except ValueError:
            reply = {}
        return status, reply, elapsed


def make_app(database_url: str, instance: Path):
    os.environ.update(DATABASE_URL=database_url, FIELDAPP_INSTANCE_PATH=str(instance),
                      FIELDAPP_DEMO_PASSWORD=PASSWORD, SECRET_KEY="bench-" + uuid.uuid4().hex)
    from fieldapp import create_app

    return create_app()


def seed(app, phones: int) -> list[int]:
    """Run setup, then one circuit per phone ready for step 2 (written through changes)."""
    from fieldapp import changes, manage
    from fieldapp.extensions import db
    from fieldapp.models import Circuit, Job, User

    manage.setup(app, out=open(os.devnull, "w"))
    ids = []
    with app.app_context():
        user = db.session.query(User).filter_by(role="tester").first()
        who = changes.Actor(user.id, "bench")
        for n in range(phones):
            job = changes.create(Job, {"reference": f"LOAD-{uuid.uuid4().hex[:8]}",
                                       "site": f"{n + 1} Bench Row", "created_by": user.id,
                                       "tester_id": user.id}, who)
            circuit = changes.create(Circuit, {
                "job_id": job.id, "board": "DB1", "way": str(n + 1), "ocpd_curve": "B",
                "ze_ohm": 0.35, "earthing": "TN-C-S", "safety_isolated": True,
                "safety_locked_off": True, "safety_proved_dead": True, "current_step": "ln"},
                who)
            for name, value in (("r1", "0.52"), ("rn", "0.52"), ("r2", "0.86")):
                changes.set_reading(circuit, name, value, who)
            for k in range(OUTLETS):
                changes.add_outlet(circuit, {"label": f"Room {k + 1}"}, who)
            db.session.commit()
            ids.append(circuit.id)
        username = user.username
    return ids, username


def import_document(circuits: int = 12, outlets: int = 30) -> dict:
    """A large but legal job document (the import holds the write lock longest)."""
    records = []
    for c in range(circuits):
        records.append({
            "circuit": {"reference": f"DB2/{c + 1}", "ocpd": {"standard": "BS EN 60898",
                        "curve": "B", "rating_a": 32}, "ze_ohm": 0.3},
            "end_to_end": {"r1": 0.5, "rn": 0.5, "r2": 0.82},
            "outlets": [{"id": f"o{k}", "label": f"Point {k}", "spur_from": None,
                         "ln": 0.25, "le": 0.33}
                        for k in range(outlets)],
        })
    return {"format": "ringtest/1", "job": {"reference": f"IMP-{uuid.uuid4().hex[:8]}",
                                            "site": "9 Import Way"}, "circuits": records}


def outlet_keys(phone: Phone, circuit_id: int) -> list[str]:
    status, body = phone.request("GET", f"/api/circuits/{circuit_id}")
    record = json.loads(body)["record"]
    return [o["id"] for o in record["outlets"]]


def run_phone(base, username, circuit_id, pace, deadline, rng, out, lock):
    phone = Phone(base)
    phone.sign_in(username)
    keys = outlet_keys(phone, circuit_id)
    plan = [(step, key) for step in ("ln", "le") for key in keys]
    n = 0
    if pace == "human":  # phones start at different moments, as testers on different sites
        time.sleep(rng.uniform(0, 15))
    while time.monotonic() < deadline and n < MAX_REQUESTS_PER_PHONE:
        step, key = plan[n % len(plan)]
        base_value = 0.26 if step == "ln" else 0.34
        value = f"{base_value + rng.uniform(-0.01, 0.01):.2f}"
        client_id = uuid.uuid4().hex
        sent = time.perf_counter()
        status, reply, elapsed = phone.post_json(
            f"/api/circuits/{circuit_id}/readings",
            {"step": step, "outlet": key, "value": value, "client_id": client_id})
        ready = elapsed
        url = reply.get("diagnosis_url") if isinstance(reply, dict) else None
        timed = True
        if url and pace == "flat" and n % 10:
            url, timed = None, False  # flat out: save again at once; every 10th waits, timed
        while url and time.monotonic() < deadline + 30:  # diagnosis computed after the save
            code, _ = phone.request("GET", url)
            if code == 200:
                ready = time.perf_counter() - sent
                break
            time.sleep(0.1)
        with lock:
            out["latency"].append(elapsed)
            out["last_save"] = max(out.get("last_save", 0.0), sent + elapsed)
            if timed:
                out["ready"].append(ready)
            if status == 200 and reply.get("stored"):
                out["stored"].append(client_id)
            elif status != 200:
                out["errors"].append(status)
        n += 1
        if pace == "human":
            time.sleep(rng.uniform(10, 20))


def run_import(base, username, at, out):
    time.sleep(at)
    phone = Phone(base)
    phone.sign_in(username)
    status, _, elapsed = phone.post_json("/api/jobs/import", import_document())
    out["import"] = (status, elapsed)


def percentile(values: list[float], q: float) -> float:
    if not values:
        return float("nan")
    ordered = sorted(values)
    return ordered[min(len(ordered) - 1, int(round(q / 100 * (len(ordered) - 1))))]


def count_stored(app, client_ids: list[str]) -> int:
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog

    with app.app_context():
        found = 0
        for i in range(0, len(client_ids), 500):
            chunk = client_ids[i:i + 500]
            found += db.session.query(ChangeLog).filter(ChangeLog.client_id.in_(chunk)).count()
        return found


def start_server(port: int, workers: int, env: dict) -> subprocess.Popen:
    cmd = [sys.executable, "-m", "gunicorn", "-w", str(workers), "-b", f"127.0.0.1:{port}",
           "--log-level", "warning", "fieldapp:create_app()"]
    server = subprocess.Popen(cmd, cwd=ROOT, env=env)
    for _ in range(100):
        try:
            urllib.request.urlopen(f"http://127.0.0.1:{port}/login", timeout=1).read()
            return server
        except OSError:
            time.sleep(0.2)
    server.terminate()
    raise RuntimeError("gunicorn did not start")


def one_run(database_url: str, phones: int, pace: str, seconds: float, workers: int) -> dict:
    from pg import free_port

    instance = Path(tempfile.mkdtemp(prefix="ringtest-load-"))
    app = make_app(database_url, instance)
    circuit_ids, username = seed(app, phones)
    port = free_port()
    server = start_server(port, workers, dict(os.environ))
    base = f"http://127.0.0.1:{port}"
    out = {"latency": [], "ready": [], "stored": [], "errors": []}
    lock = threading.Lock()
    client_cpu = time.process_time()  # the phones' own share of the two cores
    try:
        start = time.monotonic()
        first = time.perf_counter()
        deadline = start + seconds
        threads = [threading.Thread(target=run_phone, args=(
            base, username, cid, pace, deadline, random.Random(1000 + i), out, lock))
            for i, cid in enumerate(circuit_ids)]
        threads.append(threading.Thread(target=run_import, args=(base, username, 2.0, out)))
        for t in threads:
            t.start()
        for t in threads:
            t.join(timeout=seconds + 120)
        client_cpu = time.process_time() - client_cpu
    finally:
        server.terminate()
        server.wait(timeout=30)
    stored = count_stored(app, out["stored"])
    # saves per second while the phones were saving (not the tail spent polling for diagnoses)
    window = max(out.get("last_save", first) - first, 1e-9)
    return {"saves": len(out["latency"]), "rate": len(out["latency"]) / window,
            "client_cpu": client_cpu / window,
            "p50": percentile(out["latency"], 50), "p95": percentile(out["latency"], 95),
            "p99": percentile(out["latency"], 99), "ready95": percentile(out["ready"], 95),
            "errors": len(out["errors"]), "sent_ok": len(out["stored"]), "in_db": stored,
            "import": out.get("import")}


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--db", choices=("sqlite", "postgres", "both"), default="both")
    parser.add_argument("--phones", default="10,50")
    parser.add_argument("--pace", choices=("human", "flat", "both"), default="both")
    parser.add_argument("--seconds", type=float, default=60.0)
    parser.add_argument("--workers", type=int, default=4)
    args = parser.parse_args(argv)
    dbs = ("sqlite", "postgres") if args.db == "both" else (args.db,)
    paces = ("human", "flat") if args.pace == "both" else (args.pace,)
    counts = [int(p) for p in args.phones.split(",")]
    cluster = None
    print(f"gunicorn {args.workers} workers, {args.seconds:.0f} s per run, {OUTLETS} outlets")
    print(f"{'db':<9}{'phones':>7}{'pace':>7}{'saves':>7}{'per s':>7}{'p50 ms':>8}"
          f"{'p95 ms':>8}{'p99 ms':>8}{'diag95':>8}{'errors':>7}{'stored':>8}{'in db':>7}"
          f"{'import':>12}{'phones cpu':>11}  load")
    try:
        for db_kind in dbs:
            for phones in counts:
                for pace in paces:
                    if db_kind == "sqlite":
                        url = f"sqlite:///{tempfile.mkdtemp(prefix='ringtest-load-')}/load.db"
                    else:
                        if cluster is None:
                            from pg import PgCluster, find_bin_dir

                            cluster = PgCluster(find_bin_dir()).start()
                        url = cluster.new_database()
                    r = one_run(url, phones, pace, args.seconds, args.workers)
                    imp = r["import"]
                    imp_text = f"{imp[0]} {imp[1]:.1f}s" if imp else "-"
                    load = "/".join(f"{x:.1f}" for x in os.getloadavg())
                    print(f"{db_kind:<9}{phones:>7}{pace:>7}{r['saves']:>7}{r['rate']:>7.1f}"
                          f"{r['p50'] * 1000:>8.0f}{r['p95'] * 1000:>8.0f}"
                          f"{r['p99'] * 1000:>8.0f}{r['ready95'] * 1000:>8.0f}"
                          f"{r['errors']:>7}{r['sent_ok']:>8}{r['in_db']:>7}{imp_text:>12}"
                          f"{r['client_cpu']:>11.2f}  {load}", flush=True)
    finally:
        if cluster is not None:
            cluster.stop()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
