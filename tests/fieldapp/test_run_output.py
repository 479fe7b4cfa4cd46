"""``make run``: the demo logins come last, after everything else set-up and start-up print;
the login page shows no developer command; the README names the port setting."""

from __future__ import annotations

import io
import re
from pathlib import Path

import pytest

from fieldapp import create_app, manage
from fieldapp.extensions import db

ROOT = Path(__file__).resolve().parents[2]
FAST_HASH = "pbkdf2:sha256:1000"


class FakeServer:
    """Stands in for werkzeug's server: records how it was made, serves nothing."""

    def __init__(self, out, host, port, app, threaded):
        self.out, self.made = out, (host, port, threaded)
        self.printed_before_serving = None

    def serve_forever(self):
        self.printed_before_serving = self.out.getvalue()

    def server_close(self):
        pass


@pytest.fixture
def fresh_app(monkeypatch, tmp_path):
    monkeypatch.delenv("FIELDAPP_DEMO_PASSWORD", raising=False)
    monkeypatch.delenv("DATABASE_URL", raising=False)
    app = create_app({"INSTANCE_PATH": str(tmp_path), "SECRET_KEY": "x",
                      "PASSWORD_HASH_METHOD": FAST_HASH})
    yield app
    with app.app_context():
        db.session.remove()
        db.engine.dispose()


@pytest.mark.parametrize("first_run", [True, False])
def test_the_logins_are_printed_last_once_the_server_listens(fresh_app, first_run):
    if not first_run:
        manage.setup(fresh_app, out=io.StringIO())
    out = io.StringIO()
    servers = []

    def make_server(host, port, app, threaded):
        servers.append(FakeServer(out, host, port, app, threaded))
        return servers[-1]

    manage.serve("127.0.0.1", 8080, app=fresh_app, out=out, make_server=make_server)
    lines = servers[0].printed_before_serving.splitlines()
    assert servers[0].made == ("127.0.0.1", 8080, True)
    head = "demo logins (passwords shown this once; write them down):" if first_run \
        else "logins:"
    start = lines.index(head)
    assert lines[start - 1] == ("serving on http://127.0.0.1:8080 (development server; "
                                "Ctrl+C stops it)")
    block = lines[start + 1:]
    users = [re.match(r"\s+(\w+)\s+user (\w+)", line) for line in block]
    assert [m.group(2) for m in users if m] == [u for u, _, _ in manage.DEMO_USERS]
    assert all(line.startswith("  ") for line in block)  # nothing after the logins
    assert ("password" in " ".join(block)) is first_run or "reset-password" in block[-1]


def test_the_makefile_runs_through_the_ordered_command():
    makefile = (ROOT / "Makefile").read_text()
    run = makefile.split("\nrun:", 1)[1].split("\n\n", 1)[0]
    assert "fieldapp.manage run --host 127.0.0.1 --port $(PORT)" in run
    assert "flask" not in run  # its own banner would follow the logins


def test_the_readme_names_the_port_setting():
    assert "make run PORT=8080" in (ROOT / "README.md").read_text()


def test_the_login_page_shows_no_developer_command(client, parse):
    page = parse(client.get("/login"))
    text = page.get_text(" ")
    assert not page.find("code")
    assert "python" not in text and "manage" not in text and "setup" not in text
    assert "Ask your supervisor" in text
