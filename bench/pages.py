"""Page weight: bytes each screen transfers on a phone's first load and on a warm load.

The app runs on loopback (werkzeug thread, throwaway SQLite) behind a small WSGI wrapper that
counts every byte the server sends (status line, headers and body, as compressed on the wire),
requests of the service worker included. Debian's Chromium (Playwright) opens each screen in
a fresh phone context, signed in without opening a page, so that screen is the phone's first
page: the shell, the worker's install and anything it keeps for offline count. Then the same
screen is opened again (warm: the worker serves the shell, only the page itself comes down).

Targets: first load <= 60 KB including the shell, warm <= 15 KB. Bounded: a fixed list of
screens, every wait capped. Run: ``.venv/bin/python bench/pages.py`` (about 30 s).
"""

from __future__ import annotations

import logging
import os
import re
import sys
import tempfile
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

CHROMIUM = "/usr/bin/chromium"
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync"]
PASSWORD = "bench-password-not-for-use"
OUTLETS = 40
FIRST_KB, WARM_KB = 60, 15
SETTLE_S = 0.8  # quiet this long = the load is over
MAX_WAIT_S = 15


class Counter:
    """WSGI wrapper: bytes sent per request, and when the last one ended."""

    def __init__(self, app):
        self.app = app
        self.lock = threading.Lock()
        self.rows: list[tuple[str, int]] = []
        self.last = time.monotonic()

    def reset(self) -> None:
        with self.lock:
            self.rows = []
            self.last = time.monotonic()

    def __call__(self, environ, start_response):
        sent = {"n": 0}

        def counting_start(status, headers, exc_info=None):
            sent["n"] += len(status) + 11 + sum(len(k) + len(v) + 4 for k, v in headers) + 2
            return start_response(status, headers, exc_info)

        body = self.app(environ, counting_start)
        try:
            for chunk in body:
                sent["n"] += len(chunk)
                yield chunk
        finally:
            if hasattr(body, "close"):
                body.close()
            with self.lock:
                self.rows.append((environ.get("PATH_INFO", ""), sent["n"]))
                self.last = time.monotonic()

    def settle(self) -> list[tuple[str, int]]:
        start = time.monotonic()
        while time.monotonic() - start < MAX_WAIT_S:
            time.sleep(0.1)
            with self.lock:
                if time.monotonic() - self.last > SETTLE_S:
                    return list(self.rows)
        with self.lock:
            return list(self.rows)


def seed(app) -> dict:
    from fieldapp import changes, migrations
    from fieldapp.extensions import db
    from fieldapp.importer import import_document
    from fieldapp.manage import create_user
    from fieldapp.models import Job

    with app.app_context():
        migrations.upgrade(db.engine)
        tester = create_user("bench-tester", "Bench Tester", "tester", PASSWORD,
                             method="pbkdf2:sha256:1000")
        create_user("bench-super", "Bench Supervisor", "supervisor", PASSWORD,
                    method="pbkdf2:sha256:1000")
        db.session.commit()
        who = changes.Actor(tester.id, "bench")
        # an invented 40-outlet ring: readings a sound ring gives (common practice: about
        # (r1 + rn) / 4 at every outlet for step 2, (r1 + r2) / 4 for step 3)
        doc = {"format": "ringtest/1",
               "job": {"reference": "BENCH-1", "site": "40 Invented Terrace",
                       "client": "Bench Lettings", "date": "2026-12-01"},
               "circuit": {"reference": "DB1/1", "description": "Sockets",
                           "ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
                           "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_ohm": 0.35,
                           "ze_source": "measured", "earthing": "TN-C-S"},
               "end_to_end": {"r1": 0.8, "rn": 0.8, "r2": 1.31},
               "outlets": [{"id": f"o{i}", "label": f"Room {i}", "kind": "twin_socket",
                            "ln": round(0.40 + 0.002 * (i % 5), 3),
                            "le": round(0.53 + 0.003 * (i % 4), 3)} for i in range(OUTLETS)]}
        job = import_document(doc, who, tester_id=tester.id)
        circuit = job.circuits[0]
        changes.update(circuit, {"safety_isolated": True, "safety_locked_off": True,
                                 "safety_proved_dead": True, "current_step": "le"}, who)
        db.session.commit()
        ids = {"job": job.id, "circuit": circuit.id}
        assert db.session.get(Job, job.id) is not None
        db.session.remove()
    return ids


def screens(ids: dict) -> list[tuple[str, str, str | None]]:
    j, c = ids["job"], ids["circuit"]
    return [
        ("login", "/login", None),
        ("job list", "/jobs/", "bench-tester"),
        ("job", f"/jobs/{j}", "bench-tester"),
        ("safety", f"/circuits/{c}/test/safety", "bench-tester"),
        ("step 1", f"/circuits/{c}/test/e2e", "bench-tester"),
        (f"step 2 ({OUTLETS} outlets)", f"/circuits/{c}/test/ln", "bench-tester"),
        (f"step 3 ({OUTLETS} outlets)", f"/circuits/{c}/test/le", "bench-tester"),
        ("results", f"/circuits/{c}/results", "bench-tester"),
        ("review list", "/review/", "bench-super"),
        ("review job", f"/review/jobs/{j}", "bench-super"),
    ]


def sign_in(context, base: str, username: str) -> None:
    form = context.request.get(base + "/login").text()
    token = re.search(r'name="csrf-token" content="([^"]+)"', form).group(1)
    reply = context.request.post(base + "/login", form={
        "username": username, "password": PASSWORD, "csrf_token": token})
    if "/login" in reply.url:
        raise SystemExit(f"could not sign in as {username}")


def measure(browser, base: str, counter: Counter, url: str, user: str | None):
    context = browser.new_context(viewport={"width": 390, "height": 844}, is_mobile=True,
                                  has_touch=True, device_scale_factor=2, locale="en-GB")
    try:
        if user:
            sign_in(context, base, user)
        page = context.new_page()
        counter.reset()
        page.goto(base + url)
        page.wait_for_function("() => !!navigator.serviceWorker.controller",
                               timeout=MAX_WAIT_S * 1000)
        first = counter.settle()
        counter.reset()
        page.goto(base + url)
        warm = counter.settle()
        return first, warm
    finally:
        context.close()


def kb(rows) -> float:
    return sum(n for _, n in rows) / 1024


def main() -> int:
    from playwright.sync_api import sync_playwright
    from werkzeug.serving import make_server

    from fieldapp import create_app
    from fieldapp.extensions import db

    logging.getLogger("werkzeug").setLevel(logging.ERROR)

    folder = Path(tempfile.mkdtemp(prefix="bench-pages-"))
    app = create_app({"TESTING": False, "SECRET_KEY": "bench-only",
                      "SQLALCHEMY_DATABASE_URI": f"sqlite:///{folder / 'app.sqlite'}",
                      "INSTANCE_PATH": str(folder)})
    ids = seed(app)
    counter = Counter(app.wsgi_app)
    app.wsgi_app = counter
    server = make_server("127.0.0.1", 0, app, threaded=True)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    base = f"http://127.0.0.1:{server.server_port}"
    load = os.getloadavg()
    print(f"load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}; bytes as sent by the "
          "server (headers + compressed body), worker requests included")
    print(f"{'screen':<22} {'first KB':>9} {'req':>4} {'warm KB':>8} {'req':>4}  "
          f"targets {FIRST_KB} / {WARM_KB} KB")
    over = 0
    try:
        with sync_playwright() as p:
            browser = p.chromium.launch(executable_path=CHROMIUM, args=FLAGS, headless=True)
            for name, url, user in screens(ids):
                first, warm = measure(browser, base, counter, url, user)
                ok = kb(first) <= FIRST_KB and kb(warm) <= WARM_KB
                over += not ok
                print(f"{name:<22} {kb(first):9.1f} {len(first):4d} {kb(warm):8.1f} "
                      f"{len(warm):4d}  {'ok' if ok else 'OVER'}")
                if "-v" in sys.argv:
                    for path, n in first:
                        print(f"    first {n / 1024:6.1f} KB {path}")
                    for path, n in warm:
                        print(f"    warm  {n / 1024:6.1f} KB {path}")
            browser.close()
    finally:
        server.shutdown()
        thread.join(timeout=10)
        with app.app_context():
            db.engine.dispose()
    return 1 if over else 0


if __name__ == "__main__":
    raise SystemExit(main())
