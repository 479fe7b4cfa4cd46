"""Login, roles enforced on the server, CSRF, and what every page carries."""

from __future__ import annotations

import re

import pytest
from sqlalchemy import func, select

from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Circuit, User


def test_login_form_fields(client, parse):
    page = parse(client.get("/login"))
    for name, kind in (("username", "text"), ("password", "password")):
        field = page.select_one(f'input[name="{name}"]')
        assert field["type"] == kind
        assert page.select_one(f'label[for="{field["id"]}"]') is not None


def test_passwords_are_hashed(app, test_password):
    with app.app_context():
        for user in db.session.scalars(select(User)):
            assert test_password not in user.password_hash
            assert user.password_hash.startswith("pbkdf2:sha256")


@pytest.mark.parametrize("username, password", [("test", "wrong"), ("nobody", "x"),
                                                ("TEST", None)])
def test_wrong_login_is_refused(client, parse, test_password, username, password):
    response = client.post("/login", data={"username": username,
                                           "password": password or test_password})
    assert response.status_code == 401
    assert "User name or password is wrong." in parse(response).select_one(".error").text
    assert client.get("/jobs/").status_code == 302  # still logged out


def test_login_then_logout(client, login):
    login(client, "test")
    assert client.get("/jobs/").status_code == 200
    assert client.get("/logout").status_code == 405  # a link cannot log anyone out
    client.post("/logout")
    assert client.get("/jobs/").headers["Location"].startswith("/login")


@pytest.mark.parametrize("target, lands", [("/jobs/new", "/jobs/new"),
                                           ("https://elsewhere.example/", "/jobs/"),
                                           ("//elsewhere.example/", "/jobs/")])
def test_login_follows_only_local_next(client, test_password, target, lands):
    response = client.post(f"/login?next={target}",
                           data={"username": "test", "password": test_password})
    assert response.headers["Location"] == lands


@pytest.mark.parametrize("url", ["/jobs/", "/jobs/1", "/circuits/1/test/e2e",
                                 "/circuits/1/results", "/circuits/1/history"])
def test_pages_need_a_login(client, make_circuit, url):
    make_circuit()
    response = client.get(url)
    assert response.status_code == 302
    assert response.headers["Location"].startswith("/login?next=")


def test_supervisor_cannot_test_or_create(app, supervisor, make_circuit, parse):
    cid = make_circuit()
    with app.app_context():
        before = db.session.scalar(select(func.count(ChangeLog.id)))
    refused = [
        supervisor.get("/jobs/new"),
        supervisor.post("/jobs/new", data={"reference": "S-1", "site": "x"}),
        supervisor.get("/jobs/1/circuits/new"),
        supervisor.get(f"/jobs/circuits/{cid}/edit"),
        supervisor.post(f"/circuits/{cid}/test/reading",
                        data={"field": "r1", "value": "0.5", "client_id": "super-try-1"}),
        supervisor.post(f"/circuits/{cid}/outlets", data={"label": "x", "kind": "fcu"}),
        supervisor.post(f"/circuits/{cid}/test/e2e/done"),
        supervisor.post(f"/circuits/{cid}/test/safety", data={"isolated": "y"}),
    ]
    assert [r.status_code for r in refused] == [403] * len(refused)
    assert "Your role does not allow this" in parse(refused[0]).text
    with app.app_context():
        assert db.session.scalar(select(func.count(ChangeLog.id))) == before
        assert db.session.get(Circuit, cid).r1 is None
    # reading the results is fine, without any reading form on the step pages
    assert supervisor.get(f"/circuits/{cid}/results").status_code == 200
    page = parse(supervisor.get(f"/circuits/{cid}/test/e2e"))
    assert page.select_one("form.reading-form") is None
    assert "your role does not enter readings" in page.text


def test_apprentice_and_tester_may_test(apprentice, tester, make_circuit):
    cid = make_circuit()
    for n, client in enumerate((apprentice, tester)):
        response = client.post(f"/circuits/{cid}/test/reading", data={
            "field": "r1", "value": f"0.5{n}", "save": "Save", "client_id": f"role-ok-{n:04d}"})
        assert response.status_code == 302


# ------------------------------------------------------------------ CSRF


@pytest.fixture
def csrf_app(make_app):
    return make_app(WTF_CSRF_ENABLED=True)


def token_of(page_html: str) -> str:
    return re.search(r'<meta name="csrf-token" content="([^"]+)"', page_html).group(1)


def test_csrf_is_enforced_on_forms(csrf_app, test_password):
    client = csrf_app.test_client()
    refused = client.post("/login", data={"username": "test", "password": test_password})
    assert refused.status_code == 400
    assert "Form expired" in refused.get_data(as_text=True)
    token = token_of(client.get("/login").get_data(as_text=True))
    assert client.post("/login", data={"username": "test", "password": test_password,
                                       "csrf_token": token}).status_code == 302


def test_csrf_is_enforced_on_readings(csrf_app, test_password):
    from fieldapp import changes
    from fieldapp.models import Job

    with csrf_app.app_context():
        user = db.session.scalar(select(User).where(User.username == "test"))
        who = changes.Actor(user.id, "pytest")
        job = changes.create(Job, {"reference": "C-1", "site": "x", "status": "in_progress"}, who)
        circuit = changes.create(Circuit, {
            "job_id": job.id, "way": "1", "ocpd_curve": "B", "safety_isolated": True,
            "safety_locked_off": True, "safety_proved_dead": True}, who)
        db.session.commit()
        cid = circuit.id
    client = csrf_app.test_client()
    token = token_of(client.get("/login").get_data(as_text=True))
    client.post("/login", data={"username": "test", "password": test_password,
                                "csrf_token": token})
    body = {"field": "r1", "value": "0.5", "client_id": "csrf-form-0001", "save": "Save"}
    assert client.post(f"/circuits/{cid}/test/reading", data=body).status_code == 400
    api = {"step": "r1", "value": "0.5", "client_id": "csrf-api-0001"}
    assert client.post(f"/api/circuits/{cid}/readings", json=api).status_code == 400
    with csrf_app.app_context():
        assert db.session.get(Circuit, cid).r1 is None
    token = token_of(client.get(f"/circuits/{cid}/test/e2e").get_data(as_text=True))
    assert client.post(f"/circuits/{cid}/test/reading",
                       data={**body, "csrf_token": token}).status_code == 302
    response = client.post(f"/api/circuits/{cid}/readings", json={**api, "value": "0.6"},
                           headers={"X-CSRFToken": token})
    assert response.status_code == 200
    with csrf_app.app_context():
        assert db.session.get(Circuit, cid).r1 == "0.6"


# ------------------------------------------------------------------ every page


PAGES = ["/jobs/", "/jobs/new", "/jobs/1", "/jobs/1/edit", "/jobs/1/circuits/new",
         "/jobs/circuits/{cid}/edit", "/circuits/{cid}/test/safety", "/circuits/{cid}/test/e2e",
         "/circuits/{cid}/test/ln", "/circuits/{cid}/test/le", "/circuits/{cid}/results",
         "/circuits/{cid}/history", "/circuits/{cid}/outlets/a/edit"]


@pytest.mark.parametrize("url", PAGES)
def test_every_page_is_a_phone_page_with_labelled_fields(tester, make_circuit, parse, url):
    cid = make_circuit(e2e={"r1": 0.52, "rn": 0.52, "r2": 0.85},
                       outlets=[{"label": "Kitchen", "ln": 0.26, "le": 0.34}])
    response = tester.get(url.format(cid=cid))
    assert response.status_code == 200
    page = parse(response)
    assert page.html["lang"] == "en-GB"
    assert "width=device-width" in page.select_one('meta[name="viewport"]')["content"]
    assert page.select_one('link[rel="manifest"]')["href"] == "/static/manifest.webmanifest"
    assert page.select_one('meta[name="theme-color"]')["content"].startswith("#")
    assert page.select_one('link[rel="stylesheet"]')["href"].startswith("/static/app.css")
    assert page.select_one("h1").text.strip()
    for control in page.select("main input, main select, main textarea"):
        if control.get("type") in ("hidden", "submit"):
            continue
        has_label = control.find_parent("label") is not None or page.select_one(
            f'label[for="{control.get("id")}"]') is not None
        assert has_label, control


def test_results_always_carry_the_cautions(tester, make_circuit, parse):
    cid = make_circuit()
    cautions = parse(tester.get(f"/circuits/{cid}/results")).select(".cautions li")
    text = " ".join(c.text for c in cautions).lower()
    for words in ("isolated", "proved dead", "competent person", "bs 7671", "verified"):
        assert words in text


def test_service_worker_is_served_from_the_root(app, client, tmp_path):
    app.static_folder = str(tmp_path)
    assert client.get("/sw.js").status_code == 404
    (tmp_path / "sw.js").write_text("self.addEventListener('fetch', () => {});\n")
    response = client.get("/sw.js")
    assert response.status_code == 200
    assert response.headers["Service-Worker-Allowed"] == "/"
    assert response.headers["Cache-Control"] == "no-cache"
    assert response.mimetype in ("text/javascript", "application/javascript")
    response.close()


def test_offline_script_is_linked_from_every_page(client, tester):
    for page in (client.get("/login").data, tester.get("/jobs/").data):
        for name in ("util", "outbox", "replay", "status", "boot"):
            assert f"/static/js/{name}.js".encode() in page


def test_only_the_supervisor_sees_the_review_link(tester, supervisor, parse):
    assert parse(supervisor.get("/jobs/")).select_one('nav a[href="/review/"]') is not None
    assert parse(tester.get("/jobs/")).select_one('nav a[href="/review/"]') is None
    assert parse(tester.get("/jobs/")).select_one('a[href="/jobs/new"]') is not None
    assert parse(supervisor.get("/jobs/")).select_one('a[href="/jobs/new"]') is None
