"""The endpoints the phone's outbox replays (outlets made offline, step moves, the session), and
the cache policy and compression of every response."""

from __future__ import annotations

import gzip

import pytest
from sqlalchemy import func, select

from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Circuit, Outlet

E2E = {"r1": 0.52, "rn": 0.52, "r2": 0.85}
CLIENT = "0b7c2a9e-5d41-4c1e-9f0a-3c2b1a0d9e8f"


def outlets(app, cid):
    with app.app_context():
        return [(o.key, o.label, o.kind, o.spur_from_key, o.deleted_at is None)
                for o in db.session.scalars(select(Outlet).where(Outlet.circuit_id == cid)
                                            .order_by(Outlet.position))]


def add(client, cid, **body):
    payload = {"client_id": CLIENT, "label": "Loft hatch", "kind": "twin_socket",
               "device": "pytest phone"}
    payload.update(body)
    return client.post(f"/api/circuits/{cid}/outlets", json=payload)


def test_an_outlet_made_offline_is_stored_once_under_its_client_id(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    first = add(tester, cid)
    assert first.status_code == 201
    assert first.get_json() == {"client_id": CLIENT, "key": "b", "label": "Loft hatch",
                                "kind": "twin_socket", "spur_from_key": None,
                                "created": True, "anchor": "r-ln-b"}
    again = add(tester, cid, label="typed differently on the retry")
    assert again.status_code == 200 and again.get_json()["created"] is False
    assert again.get_json()["key"] == "b"
    assert outlets(app, cid) == [("a", "Kitchen", "twin_socket", None, True),
                                 ("b", "Loft hatch", "twin_socket", None, True)]
    with app.app_context():
        row = db.session.scalar(select(ChangeLog).where(ChangeLog.client_id == CLIENT))
        assert (row.entity, row.field, row.device) == ("outlet", "created", "pytest phone")
    # its readings follow it by the key the reply gave
    reading = tester.post(f"/api/circuits/{cid}/readings", json={
        "step": "ln", "outlet": "b", "value": "0.27", "client_id": "reading-after-add-1"})
    assert reading.status_code == 200
    with app.app_context():
        assert db.session.scalar(select(Outlet.ln).where(Outlet.circuit_id == cid,
                                                         Outlet.key == "b")) == "0.27"


def test_a_spur_and_an_fcu_keep_their_details(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    reply = add(tester, cid, label="Boiler", kind="fcu", fuse_a=3, spur_from_key="a")
    assert reply.status_code == 201, reply.get_json()
    assert outlets(app, cid)[-1] == ("b", "Boiler", "fcu", "a", True)


@pytest.mark.parametrize(("body", "field"), [
    ({"label": ""}, "label"),
    ({"label": "   "}, "label"),
    ({"kind": "toaster"}, "kind"),
    ({"client_id": "short"}, "client_id"),
    ({"client_id": None}, "client_id"),
    ({"spur_from_key": "zz"}, "spur_from_key"),
    # BS 1362 cartridge fuses come in 1, 2, 3, 5, 7, 10 and 13 A (from memory): no 6 A
    ({"kind": "fcu", "fuse_a": 6}, "fuse_a"),
    ({"kind": "fcu", "fuse_a": None}, "fuse_a"),
    ({"kind": "twin_socket", "fuse_a": 13}, "fuse_a"),
])
def test_a_bad_outlet_is_refused_with_its_field(app, tester, make_circuit, body, field):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    reply = add(tester, cid, **body)
    assert reply.status_code == 400
    assert field in reply.get_json()["errors"]
    assert len(outlets(app, cid)) == 1


@pytest.mark.parametrize(("status", "safe"), [("approved", True), ("submitted", True),
                                              ("in_progress", False)])
def test_a_locked_job_or_missing_safety_checks_refuse_the_outlet(app, tester, make_circuit,
                                                                 status, safe):
    cid = make_circuit(e2e=E2E, status=status, safe=safe)
    reply = add(tester, cid)
    assert reply.status_code == 409
    assert reply.get_json()["errors"]["_state"]
    assert outlets(app, cid) == []


def test_signed_out_and_wrong_role_are_json(app, client, supervisor, make_circuit):
    cid = make_circuit(e2e=E2E)
    assert add(client, cid).status_code == 401
    assert add(supervisor, cid).status_code == 403
    assert client.post(f"/api/circuits/{cid}/step", json={"step": "le"}).status_code == 401
    assert outlets(app, cid) == []


def test_a_label_changes_and_is_logged(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    reply = tester.post(f"/api/circuits/{cid}/outlets/a", json={"label": "Kitchen by door"})
    assert reply.status_code == 200 and reply.get_json()["changed"] is True
    again = tester.post(f"/api/circuits/{cid}/outlets/a", json={"label": "Kitchen by door"})
    assert again.get_json()["changed"] is False
    assert outlets(app, cid)[0][1] == "Kitchen by door"
    with app.app_context():
        rows = db.session.scalars(select(ChangeLog).where(
            ChangeLog.circuit_id == cid, ChangeLog.field == "label",
            ChangeLog.old_value == "Kitchen")).all()
        assert [(r.old_value, r.new_value) for r in rows] == [("Kitchen", "Kitchen by door")]
    gone = tester.post(f"/api/circuits/{cid}/outlets/q", json={"label": "x"})
    assert gone.status_code == 404


def test_moving_on_keeps_the_furthest_step(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E)

    def step():
        with app.app_context():
            return db.session.get(Circuit, cid).current_step

    reply = tester.post(f"/api/circuits/{cid}/step", json={"step": "le"})
    assert reply.get_json() == {"step": "le", "moved": True, "url": f"/circuits/{cid}/test/le"}
    assert step() == "le"
    back = tester.post(f"/api/circuits/{cid}/step", json={"step": "ln"})
    assert back.get_json()["moved"] is False and step() == "le"
    assert tester.post(f"/api/circuits/{cid}/step", json={"step": "safety"}).status_code == 400


def test_moving_on_is_refused_on_an_approved_job(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, status="approved")
    assert tester.post(f"/api/circuits/{cid}/step", json={"step": "le"}).status_code == 409
    with app.app_context():
        assert db.session.get(Circuit, cid).current_step == "e2e"


def test_the_session_says_who_is_signed_in(app, client, tester):
    assert client.get("/api/session").get_json() == {"user_id": None, "name": None,
                                                     "csrf_token": None}
    me = tester.get("/api/session").get_json()
    with app.app_context():
        from fieldapp.models import User
        user = db.session.scalar(select(User).where(User.username == "test"))
        assert (me["user_id"], me["name"]) == (user.id, user.name)
    assert me["csrf_token"]


def test_the_csrf_token_from_the_session_is_accepted(make_app, login, make_circuit):
    app = make_app(WTF_CSRF_ENABLED=True)
    client = app.test_client()
    page = client.get("/login").get_data(as_text=True)
    token = page.split('name="csrf-token" content="', 1)[1].split('"', 1)[0]
    client.post("/login", data={"username": "test", "password": "correct-horse-7",
                                "csrf_token": token})
    with app.app_context():
        from fieldapp import changes
        from fieldapp.models import Job, User
        user = db.session.scalar(select(User).where(User.username == "test"))
        who = changes.Actor(user.id, "pytest")
        job = changes.create(Job, {"reference": "CSRF-1", "site": "1 Row", "tester_id": user.id},
                             who)
        circuit = changes.create(Circuit, {"job_id": job.id, "safety_isolated": True,
                                           "safety_locked_off": True,
                                           "safety_proved_dead": True}, who)
        db.session.commit()
        cid = circuit.id
    without = client.post(f"/api/circuits/{cid}/step", json={"step": "le"})
    assert without.status_code == 400
    fresh = client.get("/api/session").get_json()["csrf_token"]
    ok = client.post(f"/api/circuits/{cid}/step", json={"step": "le"},
                     headers={"X-CSRFToken": fresh})
    assert ok.status_code == 200


# ---------------------------------------------------------------- cache policy, compression


def test_pages_and_json_with_job_data_are_never_kept_by_the_browser(tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    for url in ("/jobs/", f"/circuits/{cid}/test/ln", f"/circuits/{cid}/results",
                f"/api/circuits/{cid}", "/api/session", "/login"):
        response = tester.get(url)
        assert response.headers["Cache-Control"] == "no-store", url


def test_static_files_are_revalidated(client):
    with client.get("/static/app.css") as response:
        assert response.headers["Cache-Control"] == "no-cache"
        assert response.headers.get("ETag")
    with client.get("/sw.js") as response:
        assert response.headers["Cache-Control"] == "no-cache"


def test_pages_are_compressed_and_still_whole(tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": f"Room {i}"} for i in range(20)])
    plain = tester.get(f"/circuits/{cid}/test/ln").get_data()
    packed = tester.get(f"/circuits/{cid}/test/ln", headers={"Accept-Encoding": "gzip"})
    assert packed.headers["Content-Encoding"] == "gzip"
    assert "Accept-Encoding" in packed.headers["Vary"]
    body = gzip.decompress(packed.get_data())
    # the two renders differ only in their client ids, tokens and times: same length
    assert abs(len(body) - len(plain)) < 100 and b"Room 19" in body
    assert len(packed.get_data()) < len(plain) / 4
    with tester.get("/static/app.css", headers={"Accept-Encoding": "br"}) as css:
        assert css.headers["Content-Encoding"] == "br"
        assert len(css.get_data()) < 6000
    with tester.application.app_context():
        assert db.session.scalar(select(func.count(Outlet.id))) == 20


def test_static_files_go_as_brotli_once_made_and_answer_304_on_a_match(client):
    import brotli

    from fieldapp import ROOT

    raw = (ROOT / "static" / "js" / "outbox.js").read_bytes()
    with client.get("/static/js/outbox.js", headers={"Accept-Encoding": "gzip, br"}) as first:
        assert first.headers["Content-Encoding"] == "br"
        assert brotli.decompress(first.get_data()) == raw
        assert len(first.get_data()) < len(raw) / 2.5
        etag = first.headers["ETag"]
    with client.get("/static/js/outbox.js", headers={"Accept-Encoding": "br",
                                                      "If-None-Match": etag}) as again:
        assert again.status_code == 304
    with client.get("/static/js/outbox.js", headers={"Accept-Encoding": "gzip"}) as plain:
        assert plain.headers["Content-Encoding"] == "gzip"
        assert gzip.decompress(plain.get_data()) == raw
