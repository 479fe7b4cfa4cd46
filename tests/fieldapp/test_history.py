"""The history of readings and details: kept on every edit path, shown to the supervisor."""

from __future__ import annotations

import re
import uuid

import pytest
import sqlalchemy as sa


def ids(app, circuit_id):
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    with app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        return circuit.job_id, {o.key: o.id for o in circuit.outlets}


HISTORY_PARTS = ("when", "who", "device", "what", "field", "change")


def history_rows(client, parse, url):
    """Each history entry as [when, who, device, what, field, old -> new], newest first."""
    soup = parse(client.get(url))
    return [[" ".join(row.select_one(f".{part}").get_text(" ").split()) for part in HISTORY_PARTS]
            for row in soup.select("li.history-row")]


def test_every_edit_path_leaves_history(app, make_circuit, tester, supervisor, parse):
    cid = make_circuit(safe=False, outlets=[{"label": "Kitchen"}])
    jid, outlets = ids(app, cid)
    phone = {"device": "phone A"}
    steps = [
        tester.post(f"/circuits/{cid}/test/safety",
                    data={"isolated": "y", "locked_off": "y", "proved_dead": "y", **phone}),
        tester.post(f"/circuits/{cid}/test/reading", data={
            "field": "r1", "value": "0.52", "client_id": uuid.uuid4().hex, **phone}),
        tester.post(f"/circuits/{cid}/test/reading", data={
            "field": "r1", "value": "0,53", "client_id": uuid.uuid4().hex, **phone}),
        tester.post(f"/api/circuits/{cid}/readings", json={
            "step": "ln", "outlet": "a", "value": "OL", "client_id": uuid.uuid4().hex,
            "device": "tablet B"}),
        tester.post(f"/circuits/{cid}/outlets/a/edit", data={
            "label": "Kitchen by door", "kind": "twin_socket", "spur_from_key": "",
            "fuse_a": "", "spur_csa_mm2": "", "spur_cpc_csa_mm2": "", **phone}),
        tester.post(f"/circuits/{cid}/outlets?step=ln", data={
            "label": "Hall", "kind": "twin_socket", "spur_from_key": "", "fuse_a": "",
            "spur_csa_mm2": "", "spur_cpc_csa_mm2": "", "client_id": uuid.uuid4().hex,
            **phone}),
        tester.post(f"/circuits/{cid}/outlets/b/delete", data=phone),
    ]
    assert [r.status_code for r in steps] == [302, 302, 302, 200, 302, 302, 302]
    rows = history_rows(supervisor, parse, f"/review/jobs/{jid}/history")
    # columns: when, who, device, what, field, old -> new
    seen = {(who, device, what, field, change) for _, who, device, what, field, change in rows}
    who = "Gethin Test-Tester"
    expected = {
        (who, "phone A", "DB1/4", "Safety: isolated", "no → yes"),
        (who, "phone A", "DB1/4", "Step 1 r1 (line)", "nothing → 0.52 Ω"),
        (who, "phone A", "DB1/4", "Step 1 r1 (line)", "0.52 → 0.53 Ω"),
        (who, "tablet B", "DB1/4, outlet a · Kitchen by door", "Step 2 L–N", "nothing → OL"),
        (who, "phone A", "DB1/4, outlet a · Kitchen by door", "Label",
         "Kitchen → Kitchen by door"),
        (who, "phone A", "DB1/4, outlet b · Hall", "Label", "nothing → Hall"),
    }
    assert expected <= seen, sorted(seen)
    # a deletion says when, in local time to the minute (no seconds, no ISO text)
    deleted = [r for r in rows if r[3] == "DB1/4, outlet b · Hall" and r[4] == "Deleted"]
    assert len(deleted) == 1 and re.fullmatch(
        r"nothing → \d{1,2} [A-Z][a-z]{2} \d{4} \d\d:\d\d", deleted[0][5]), deleted
    # newest first
    assert rows[0][4] == "Deleted"


def test_job_and_circuit_details_and_decisions_leave_history(app, make_circuit, tester,
                                                             supervisor, parse):
    cid = make_circuit(e2e={"r1": 0.52, "rn": 0.52, "r2": 0.85},
                       outlets=[{"label": "Kitchen", "ln": 0.26, "le": 0.34}])
    jid, _ = ids(app, cid)
    edit = parse(tester.get(f"/jobs/{jid}/edit")).find(attrs={"name": "site"}).find_parent("form")
    data = {el["name"]: el.get("value", "") for el in edit.find_all("input") if el.get("name")}
    data.update({"site": "7 Renamed Court", "tester_id": data.get("tester_id") or "0"})
    for select in edit.find_all("select"):
        chosen = select.find("option", selected=True) or select.find("option")
        data[select["name"]] = chosen["value"]
    assert tester.post(f"/jobs/{jid}/edit", data=data).status_code == 302
    assert tester.post(f"/jobs/{jid}/submit").status_code == 302
    assert supervisor.post(f"/review/jobs/{jid}/return",
                           data={"comment": "Add the landing socket."}).status_code == 302
    rows = history_rows(supervisor, parse, f"/review/jobs/{jid}/history")
    changes = {(r[1], r[4], r[5]) for r in rows}
    assert ("Gethin Test-Tester", "Site", "1 Test Row → 7 Renamed Court") in changes
    assert ("Gethin Test-Tester", "Status", "in progress → submitted") in changes
    assert ("Hywel Test-Supervisor", "Status", "submitted → returned to the tester") in changes
    assert ("Hywel Test-Supervisor", "Review comment", "nothing → Add the landing socket.") \
        in changes


def test_history_of_one_reading(app, make_circuit, tester, supervisor, parse):
    cid = make_circuit(e2e={"r1": 0.52, "rn": 0.52, "r2": 0.85},
                       outlets=[{"label": "Kitchen", "ln": 0.26, "le": 0.34},
                                {"label": "Hall", "ln": 0.27, "le": 0.35}])
    jid, outlets = ids(app, cid)
    for value in ("0.36", "0.37"):
        response = tester.post(f"/api/circuits/{cid}/readings", json={
            "step": "le", "outlet": "b", "value": value, "client_id": uuid.uuid4().hex})
        assert response.status_code == 200
    url = f"/review/jobs/{jid}/history?outlet={outlets['b']}&field=le"
    rows = history_rows(supervisor, parse, url)
    assert [r[5] for r in rows] == ["0.36 → 0.37 Ω", "0.35 → 0.36 Ω", "nothing → 0.35 Ω"]
    assert {r[3] for r in rows} == {"DB1/4, outlet b · Hall"}
    assert {r[4] for r in rows} == {"Step 3 L–CPC"}
    step1 = history_rows(supervisor, parse, f"/review/jobs/{jid}/history?circuit={cid}&field=r2")
    assert [r[5] for r in step1] == ["nothing → 0.85 Ω"]
    page = supervisor.get(url).get_data(as_text=True)
    assert "proved dead" in page  # the cautions are shown with the readings


def test_history_refuses_an_outlet_of_another_job(app, make_circuit, supervisor):
    first = make_circuit(outlets=[{"label": "Kitchen"}])
    second = make_circuit(outlets=[{"label": "Hall"}])
    jid, _ = ids(app, first)
    _, other_outlets = ids(app, second)
    assert supervisor.get(f"/review/jobs/{jid}/history?outlet={other_outlets['a']}"
                          ).status_code == 404
    assert supervisor.get(f"/review/jobs/{jid}/history?circuit={second}").status_code == 404


@pytest.mark.parametrize("who", ["tester", "apprentice", "supervisor"])
def test_history_is_readable_by_the_team(request, app, make_circuit, who):
    jid, _ = ids(app, make_circuit())
    assert request.getfixturevalue(who).get(f"/review/jobs/{jid}/history").status_code == 200
    assert app.test_client().get(f"/review/jobs/{jid}/history").status_code == 302


def test_history_rows_are_never_rewritten(app, make_circuit, tester):
    """A correction appends a row; the earlier row keeps its old and new values."""
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog

    cid = make_circuit(e2e={"r1": 0.52})
    with app.app_context():
        first = db.session.scalar(sa.select(ChangeLog).where(
            ChangeLog.circuit_id == cid, ChangeLog.field == "r1"))
        snapshot = (first.id, first.old_value, first.new_value, first.at)
    tester.post(f"/circuits/{cid}/test/reading", data={
        "field": "r1", "value": "0.6", "client_id": uuid.uuid4().hex})
    with app.app_context():
        again = db.session.get(ChangeLog, snapshot[0])
        assert (again.id, again.old_value, again.new_value, again.at) == snapshot
        rows = db.session.scalars(sa.select(ChangeLog).where(
            ChangeLog.circuit_id == cid, ChangeLog.field == "r1").order_by(ChangeLog.id)).all()
        assert [(r.old_value, r.new_value) for r in rows] == [(None, "0.52"), ("0.52", "0.6")]
