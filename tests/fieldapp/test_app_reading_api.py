"""The JSON reading endpoint used by the page script (and replayed by the offline queue)."""

from __future__ import annotations

import pytest
from sqlalchemy import func, select

from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Circuit, Outlet

E2E = {"r1": 0.52, "rn": 0.52, "r2": 0.85}


def post(client, cid, **body):
    payload = {"step": "ln", "outlet": "a", "value": "0.26", "client_id": "api-test-0001",
               "device": "pytest phone"}
    payload.update(body)
    payload = {k: v for k, v in payload.items() if v is not ...}
    return client.post(f"/api/circuits/{cid}/readings", json=payload)


def outlet_value(app, cid, key, field):
    with app.app_context():
        return getattr(db.session.scalar(select(Outlet).where(
            Outlet.circuit_id == cid, Outlet.key == key)), field)


def test_a_reading_comes_back_with_its_feedback(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}, {"label": "Hall"}])
    response = post(tester, cid)
    assert response.status_code == 200
    reply = response.get_json()
    assert (reply["stored"], reply["duplicate"], reply["value"], reply["previous"]) == (
        True, False, "0.26", None)
    assert reply["feedback"]["status"] == "ok"
    assert reply["feedback"]["expected_ohm"] == pytest.approx(0.26, abs=0.005)
    assert reply["leading"]["verdict"] in ("satisfactory", "investigate", "incomplete")
    assert reply["next_anchor"] == "r-ln-b"
    assert "IN BAND" in reply["html"]["feedback"].upper()
    assert outlet_value(app, cid, "a", "ln") == "0.26"
    with app.app_context():
        row = db.session.scalar(select(ChangeLog).where(ChangeLog.client_id == "api-test-0001"))
        assert (row.device, row.old_value, row.new_value) == ("pytest phone", None, "0.26")


def test_a_high_reading_is_flagged_in_the_reply(tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    reply = post(tester, cid, value=0.61).get_json()
    assert reply["feedback"]["status"] == "high"
    assert reply["feedback"]["deviation_ohm"] > 0.3


def test_the_same_client_id_is_applied_once(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    first = post(tester, cid, value="0.26").get_json()
    again = post(tester, cid, value="0.26").get_json()
    assert (first["duplicate"], again["duplicate"]) == (False, True)
    late = post(tester, cid, value="0.40").get_json()  # a replay carrying an edited value
    assert late["duplicate"] is True and late["value"] == "0.26"
    assert outlet_value(app, cid, "a", "ln") == "0.26"
    with app.app_context():
        assert db.session.scalar(select(func.count(ChangeLog.id)).where(
            ChangeLog.client_id == "api-test-0001")) == 1


@pytest.mark.parametrize("body, field", [
    ({"client_id": ...}, "client_id"),
    ({"client_id": "short"}, "client_id"),
    ({"client_id": "has spaces in it"}, "client_id"),
    ({"step": "zz"}, "step"),
    ({"step": ...}, "step"),
    ({"value": ...}, "value"),
    ({"value": None}, "value"),
    ({"value": ""}, "value"),
    ({"value": "-0.1"}, "value"),
    ({"value": -0.1}, "value"),
    ({"value": "abc"}, "value"),
    ({"value": 200.5}, "value"),
    ({"value": True}, "value"),
    ({"value": [0.2]}, "value"),
    ({"outlet": "zz"}, "outlet"),
    ({"outlet": None}, "outlet"),
])
def test_bad_bodies_are_refused_and_change_nothing(app, tester, make_circuit, body, field):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen", "ln": 0.26}])
    with app.app_context():
        before = db.session.scalar(select(func.count(ChangeLog.id)))
    response = post(tester, cid, **body)
    assert response.status_code == 400
    errors = response.get_json()["errors"]
    assert list(errors) == [field] and all(isinstance(m, str) and m for m in errors[field])
    assert outlet_value(app, cid, "a", "ln") == "0.26"
    with app.app_context():
        assert db.session.scalar(select(func.count(ChangeLog.id))) == before


def test_a_body_that_is_not_an_object_is_refused(tester, make_circuit):
    cid = make_circuit(e2e=E2E)
    response = tester.post(f"/api/circuits/{cid}/readings", data="0.5",
                           content_type="application/json")
    assert response.status_code == 400 and "_body" in response.get_json()["errors"]


def test_end_to_end_reading_and_decimal_comma(app, tester, make_circuit):
    cid = make_circuit()
    reply = post(tester, cid, step="r2", outlet=None, value="0,85").get_json()
    assert reply["value"] == "0.85" and reply["outlet"] is None
    with app.app_context():
        assert db.session.get(Circuit, cid).r2 == "0.85"


@pytest.mark.parametrize("state, status", [({"safe": False}, 409),
                                           ({"status": "approved"}, 409)])
def test_state_refusals(app, tester, make_circuit, state, status):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}], **state)
    response = post(tester, cid)
    assert response.status_code == status
    assert "_state" in response.get_json()["errors"]
    assert outlet_value(app, cid, "a", "ln") is None


def test_login_and_role_come_back_as_json(client, supervisor, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    assert post(client, cid).status_code == 401
    assert post(supervisor, cid).status_code == 403
    assert post(client, 9999).status_code == 401
    assert client.get(f"/api/circuits/{cid}").status_code == 401


def test_unknown_circuit(tester):
    response = post(tester, 9999)
    assert response.status_code == 404 and "circuit" in response.get_json()["errors"]


def test_circuit_endpoint_gives_record_and_feedback(tester, supervisor, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen", "ln": 0.26, "le": "OL"}])
    for client in (tester, supervisor):
        reply = client.get(f"/api/circuits/{cid}").get_json()
        assert reply["record"]["end_to_end"] == E2E
        assert reply["record"]["outlets"][0]["le"] == "OL"
        steps = {(r["outlet"], r["step"]): r["status"] for r in reply["readings"]}
        assert steps[("a", "le")] == "open"
