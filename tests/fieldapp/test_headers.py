"""Security headers on every kind of response, HTTPS behind a proxy, and no inline script or
style anywhere the policy would block it."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
PAGES = [  # one of each kind: page, form, JSON, download, static, worker, error, redirect
    ("test", "/jobs/", 200), ("test", "/circuits/{cid}/test/e2e", 200),
    ("test", "/circuits/{cid}/results", 200), ("super", "/review/", 200),
    ("super", "/users/", 200), ("test", "/api/circuits/{cid}", 200),
    ("test", "/jobs/{job}/export.json", 200), ("test", "/static/app.css", 200),
    ("test", "/sw.js", 200), ("test", "/jobs/999999", 404), (None, "/login", 200),
    (None, "/jobs/", 302), ("test", "/jobs/{job}/sheet.pdf", 200),
]


@pytest.fixture
def ids(app, make_circuit):
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    cid = make_circuit(e2e={"r1": 0.52, "rn": 0.52, "r2": 0.85},
                       outlets=[{"label": "Hall", "ln": 0.26, "le": 0.34}])
    with app.app_context():
        return {"cid": cid, "job": db.session.get(Circuit, cid).job_id}


@pytest.mark.parametrize("who, url, status", PAGES, ids=[u for _, u, _ in PAGES])
def test_every_response_carries_the_headers(app, logged_in, ids, who, url, status):
    client = logged_in(who) if who else app.test_client()
    response = client.get(url.format(**ids))
    assert response.status_code == status
    csp = response.headers["Content-Security-Policy"]
    directives = dict(d.strip().split(" ", 1) for d in csp.split(";"))
    assert directives["frame-ancestors"] == "'none'"
    assert directives["script-src"] == "'self'" and directives["style-src"] == "'self'"
    assert "unsafe-inline" not in csp and "unsafe-eval" not in csp
    assert response.headers["X-Content-Type-Options"] == "nosniff"
    assert response.headers["Referrer-Policy"] == "same-origin"
    assert "Strict-Transport-Security" not in response.headers  # plain HTTP here
    response.close()


def test_https_behind_a_proxy_sends_hsts_and_secure_cookies(make_app, monkeypatch):
    monkeypatch.setenv("FIELDAPP_HTTPS", "1")
    monkeypatch.setenv("FIELDAPP_PROXY_HOPS", "1")
    app = make_app()
    client = app.test_client()
    proxied = {"X-Forwarded-Proto": "https", "X-Forwarded-For": "203.0.113.7"}
    page = client.get("/login", headers=proxied)
    assert page.headers["Strict-Transport-Security"].startswith("max-age=31536000")
    response = client.post("/login", headers=proxied, data={
        "username": "test", "password": "correct-horse-7", "remember": "y"})
    cookies = response.headers.getlist("Set-Cookie")
    assert cookies and all("Secure" in c for c in cookies)
    direct = app.test_client().get("/login", base_url="http://localhost")
    assert "Strict-Transport-Security" not in direct.headers  # plain http, no proxy header
    # the sign-in limits see the client's address, not the proxy's
    from fieldapp.extensions import db
    from fieldapp.models import LoginAttempt

    with app.app_context():
        assert db.session.query(LoginAttempt.address).scalar() == "203.0.113.7"


def test_without_the_proxy_setting_forwarded_headers_are_ignored(make_app):
    app = make_app()
    page = app.test_client().get("/login", headers={"X-Forwarded-Proto": "https"})
    assert "Strict-Transport-Security" not in page.headers


INLINE = [
    (re.compile(r"<script(?![^>]*\bsrc=)[^>]*>", re.I), "inline <script>"),
    (re.compile(r"<style\b", re.I), "<style> block"),
    (re.compile(r"\sstyle\s*=", re.I), "style attribute"),
    (re.compile(r"\son[a-z]+\s*=\s*[\"']", re.I), "on* handler"),
    (re.compile(r"javascript:", re.I), "javascript: URL"),
]
#: The job sheet is printed to PDF on the server, never served: its templates and the ones it
#: includes may style inline.
PRINTED = {"sheets/" + p.name for p in (ROOT / "templates" / "sheets").glob("*.html")}
PRINTED |= {name for p in (ROOT / "templates" / "sheets").glob("*.html")
            for name in re.findall(r'{%\s*include\s+"([^"]+)"', p.read_text())}
SERVED = [p for p in sorted((ROOT / "templates").rglob("*.html"))
          if p.relative_to(ROOT / "templates").as_posix() not in PRINTED]
SERVED += sorted((ROOT / "static").rglob("*.html")) + sorted((ROOT / "static").rglob("*.svg"))


@pytest.mark.parametrize("path", SERVED, ids=[str(p.relative_to(ROOT)) for p in SERVED])
def test_no_inline_script_or_style_in_what_browsers_get(path):
    text = path.read_text()
    found = [what for pattern, what in INLINE if pattern.search(text)]
    assert found == [], f"{path.relative_to(ROOT)}: {found}"


def test_drawn_svg_has_no_inline_style(app, tester, ids):
    page = tester.get(f"/circuits/{ids['cid']}/results").get_data(as_text=True)
    assert "<svg" in page
    for pattern, what in INLINE:
        assert not pattern.search(page), what
