"""Browser tests: Debian's Chromium driven by Playwright against a live app on loopback.

The app runs in a werkzeug server thread on a free port with a throwaway SQLite database,
seeded through the app's own functions (migrations, ``manage.create_user``). Every test gets a
fresh browser context shaped like a phone (390 × 844, touch), so service workers and storage
start empty each time.
"""

from __future__ import annotations

import os
import threading
from dataclasses import dataclass

import pytest
from phone import PASSWORD
from playwright.sync_api import expect

CHROMIUM = "/usr/bin/chromium"
#: Flags this closed network needs (no background fetches, no GPU, no sandbox as root).
CHROMIUM_FLAGS = [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
]
PHONE = {"width": 390, "height": 844}
#: Invented people for the browser tests, one per role.
USERS = (
    ("apprentice", "Tegan Pryce", "apprentice"),
    ("tester", "Orrin Vale", "tester"),
    ("supervisor", "Maud Henshall", "supervisor"),
)


def pytest_collection_modifyitems(config, items):
    if os.path.exists(CHROMIUM):
        return
    skip = pytest.mark.skip(reason=f"{CHROMIUM} is not installed (apt-get install chromium)")
    for item in items:
        if item.get_closest_marker("browser"):
            item.add_marker(skip)


@dataclass
class LiveApp:
    """The running app: its URL and the Flask app object for looking into the database."""

    url: str
    app: object

    def query(self, fn):
        """Run ``fn(db)`` inside an app context and return its result."""
        from fieldapp.extensions import db

        with self.app.app_context():
            try:
                return fn(db)
            finally:
                db.session.remove()


@pytest.fixture(scope="session")
def live_app(tmp_path_factory):
    from werkzeug.serving import make_server

    from fieldapp import create_app, migrations
    from fieldapp.extensions import db
    from fieldapp.manage import create_user

    folder = tmp_path_factory.mktemp("live")
    app = create_app({
        "TESTING": False,
        "SECRET_KEY": "browser-tests-only",
        "SQLALCHEMY_DATABASE_URI": f"sqlite:///{folder / 'app.sqlite'}",
        "INSTANCE_PATH": str(folder),
    })
    with app.app_context():
        migrations.upgrade(db.engine)
        for username, name, role in USERS:
            # a cheap hash: these accounts live for one test run on loopback
            create_user(username, name, role, PASSWORD, method="pbkdf2:sha256:1000")
        db.session.commit()
        db.session.remove()
    server = make_server("127.0.0.1", 0, app, threaded=True)
    thread = threading.Thread(target=server.serve_forever, name="live-app", daemon=True)
    thread.start()
    try:
        yield LiveApp(url=f"http://127.0.0.1:{server.server_port}", app=app)
    finally:
        server.shutdown()
        thread.join(timeout=10)
        server.server_close()
        with app.app_context():
            db.engine.dispose()


@pytest.fixture(scope="session")
def browser_type_launch_args(browser_type_launch_args):
    return {**browser_type_launch_args, "executable_path": CHROMIUM, "args": CHROMIUM_FLAGS,
            "headless": True}


@pytest.fixture(scope="session")
def browser_context_args(browser_context_args, live_app):
    return {**browser_context_args, "base_url": live_app.url, "viewport": PHONE,
            "is_mobile": True, "has_touch": True, "device_scale_factor": 2,
            "locale": "en-GB"}


#: Generous waits: on a 2-core machine busy with the rest of the suite, a service-worker
#: reload can take a few seconds; a wait that is too short fails a sound test.
WAIT_MS = 15_000
expect.set_options(timeout=WAIT_MS)


@pytest.fixture
def page(page):
    page.set_default_timeout(WAIT_MS)
    return page


def _log_in(page, username: str = "apprentice") -> None:
    page.goto("/login")
    page.get_by_label("User name").fill(username)
    page.get_by_label("Password").fill(PASSWORD)
    page.get_by_role("button", name="Log in").click()
    page.wait_for_url(lambda url: "/login" not in url)


@pytest.fixture
def log_in():
    """``log_in(page, username)``: log in through the login form as one of USERS."""
    return _log_in


@pytest.fixture
def apprentice(page):
    """A phone page logged in as the apprentice."""
    _log_in(page, "apprentice")
    return page
