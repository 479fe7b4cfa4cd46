"""The guided ring test through the plain forms: safety first, readings, outlets, history."""

from __future__ import annotations

import re

import pytest
from sqlalchemy import func, select

from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Circuit, Outlet

E2E = {"r1": 0.52, "rn": 0.52, "r2": 0.85}


def reading(client, circuit_id, field, value=None, *, outlet="", client_id=None, ol=False):
    """Post the reading form as the page does (the server renders a client id per form)."""
    data = {"field": field, "outlet": outlet, "value": "" if value is None else value,
            "client_id": client_id or "", "device": "pytest phone"}
    if ol:
        data["ol"] = "OL"
    else:
        data["save"] = "Save"
    return client.post(f"/circuits/{circuit_id}/test/reading", data=data)


def stored(app, circuit_id, field, key=None):
    with app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        if key is None:
            return getattr(circuit, field)
        outlet = db.session.scalar(select(Outlet).where(Outlet.circuit_id == circuit_id,
                                                        Outlet.key == key))
        return getattr(outlet, field)


def log_count(app, circuit_id) -> int:
    with app.app_context():
        return db.session.scalar(select(func.count(ChangeLog.id))
                                 .where(ChangeLog.circuit_id == circuit_id))


# ------------------------------------------------------------------ safety first


def test_no_reading_before_the_safety_checks(app, tester, make_circuit):
    cid = make_circuit(safe=False)
    before = log_count(app, cid)
    response = reading(tester, cid, "r1", "0.52")
    assert response.status_code == 302
    assert response.headers["Location"].endswith(f"/circuits/{cid}/test/safety")
    assert stored(app, cid, "r1") is None
    assert log_count(app, cid) == before
    page = tester.get(f"/circuits/{cid}/test/e2e")
    assert "confirm safe isolation first" in page.get_data(as_text=True)
    assert b'name="value"' not in page.data  # no reading fields until the ticks are in


@pytest.mark.parametrize("ticked", [(), ("isolated",), ("isolated", "locked_off"),
                                    ("locked_off", "proved_dead")])
def test_safety_needs_all_three_ticks(app, tester, make_circuit, parse, ticked):
    cid = make_circuit(safe=False)
    response = tester.post(f"/circuits/{cid}/test/safety", data={k: "y" for k in ticked})
    assert response.status_code == 422
    assert "Tick all three" in parse(response).select_one(".error").text
    with app.app_context():
        assert db.session.get(Circuit, cid).safety_proved_dead is False


def test_safety_form_records_who_and_when(app, tester, make_circuit, parse):
    cid = make_circuit(safe=False)
    page = parse(tester.get(f"/circuits/{cid}/test/safety"))
    for name in ("isolated", "locked_off", "proved_dead"):
        box = page.select_one(f'input[type=checkbox][name="{name}"]')
        assert box is not None and box.find_parent("label") is not None
    response = tester.post(f"/circuits/{cid}/test/safety",
                           data={"isolated": "y", "locked_off": "y", "proved_dead": "y"})
    assert response.headers["Location"].endswith(f"/circuits/{cid}/test/e2e")
    with app.app_context():
        circuit = db.session.get(Circuit, cid)
        assert circuit.safety_confirmed_by.username == "test"
        assert circuit.safety_confirmed_at is not None
        assert circuit.current_step == "e2e"
        fields = set(db.session.scalars(select(ChangeLog.field).where(
            ChangeLog.circuit_id == cid, ChangeLog.old_value == "false")))
        assert {"safety_isolated", "safety_locked_off", "safety_proved_dead"} <= fields


# ------------------------------------------------------------------ the reading form


def test_step_page_has_a_big_decimal_field_and_an_ol_button(tester, make_circuit, parse):
    cid = make_circuit(e2e={"r1": 0.52})
    page = parse(tester.get(f"/circuits/{cid}/test/e2e"))
    forms = page.select("form.reading-form")
    assert len(forms) == 3
    for form in forms:
        field = form.select_one('input[name="value"]')
        assert field["inputmode"] == "decimal"
        assert page.select_one(f'label[for="{field["id"]}"]') is not None
        assert form.select_one('input[type=submit][name="ol"]')["value"] == "OL"
        assert re.fullmatch(r"[0-9a-f-]{36}", form.select_one('input[name="client_id"]')["value"])
    ids = [f.select_one('input[name="client_id"]')["value"] for f in forms]
    assert len(set(ids)) == 3
    # the first reading not taken yet gets the focus
    assert page.select_one("#v-r-rn").has_attr("autofocus")


@pytest.mark.parametrize("step, join", [("ln", "L1 to N2 and L2 to N1"),
                                        ("le", "L1 to CPC2 and L2 to CPC1")])
def test_each_step_says_what_to_join_and_draws_it(tester, make_circuit, parse, step, join):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Hall"}])
    page = parse(tester.get(f"/circuits/{cid}/test/{step}"))
    connect = page.select_one(".connect")
    assert join in connect.text
    assert connect.select_one("svg") is not None


def test_readings_are_saved_and_fed_back(app, tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}, {"label": "Hall"}])
    response = reading(tester, cid, "ln", "0,26", outlet="a", client_id="pytest-ln-a-1")
    assert response.status_code == 302
    assert response.headers["Location"].endswith("#r-ln-b")  # on to the next outlet
    assert stored(app, cid, "ln", "a") == "0.26"
    page = parse(tester.get(f"/circuits/{cid}/test/ln"))
    card = page.select_one("#r-ln-a")
    assert card.select_one("[data-value]").text == "0.26 Ω"
    status = card.select_one(".status")
    assert "status-ok" in status["class"] and "IN BAND" in status.text.upper()
    assert "Expected about 0.26 Ω" in status.text
    assert page.select_one("#leading .verdict") is not None


def test_ol_button_stores_ol(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    reading(tester, cid, "le", "0.5", outlet="a", ol=True, client_id="pytest-ol-a-1")
    assert stored(app, cid, "le", "a") == "OL"


@pytest.mark.parametrize("typed, words", [
    ("-0.2", "cannot be negative"),
    ("abc", "is not a number"),
    ("0.5 ohm", "is not a number"),
    ("250", "far above any ring reading"),
    ("1e400", "is not a number"),  # strict digits: no exponent
    ("", "Type the reading in ohms"),
    ("   ", "Type the reading in ohms"),
])
def test_bad_readings_give_a_message_and_change_nothing(app, tester, make_circuit, parse,
                                                        typed, words):
    cid = make_circuit(e2e=E2E)
    before = log_count(app, cid)
    response = reading(tester, cid, "r1", typed, client_id="pytest-bad-1")
    assert response.status_code == 422
    error = parse(response).select_one("#r-r1 .error")
    assert error is not None and words in error.text
    assert stored(app, cid, "r1") == "0.52"
    assert log_count(app, cid) == before
    with app.app_context():
        assert db.session.scalar(select(ChangeLog).where(
            ChangeLog.client_id == "pytest-bad-1")) is None


def test_same_client_id_is_stored_once(app, tester, make_circuit, parse):
    cid = make_circuit(e2e={"r1": 0.52})
    first = reading(tester, cid, "rn", "0.53", client_id="pytest-twice-1")
    again = reading(tester, cid, "rn", "0.53", client_id="pytest-twice-1")
    assert first.status_code == again.status_code == 302
    with app.app_context():
        rows = list(db.session.scalars(select(ChangeLog).where(
            ChangeLog.circuit_id == cid, ChangeLog.field == "rn")))
    assert [(r.old_value, r.new_value, r.client_id) for r in rows] == [
        (None, "0.53", "pytest-twice-1")]


def test_a_replayed_form_does_not_undo_a_later_correction(app, tester, make_circuit, parse):
    cid = make_circuit(e2e={"r1": 0.52})
    reading(tester, cid, "rn", "0.53", client_id="pytest-replay-1")
    reading(tester, cid, "rn", "0.52", client_id="pytest-replay-2")
    late = reading(tester, cid, "rn", "0.99", client_id="pytest-replay-1")
    assert stored(app, cid, "rn") == "0.52"
    page = parse(tester.get(late.headers["Location"]))
    assert "already sent" in page.select_one(".flash-warning").text


def test_a_corrected_reading_keeps_its_history(app, tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen", "ln": 0.26}])
    response = reading(tester, cid, "ln", "0.31", outlet="a", client_id="pytest-fix-1")
    assert "Corrected L–N" in parse(tester.get(response.headers["Location"])).select_one(
        ".flash-ok").text
    assert stored(app, cid, "ln", "a") == "0.31"
    with app.app_context():
        rows = [(r.old_value, r.new_value) for r in db.session.scalars(
            select(ChangeLog).where(ChangeLog.circuit_id == cid, ChangeLog.field == "ln")
            .order_by(ChangeLog.id))]
    assert rows == [(None, "0.26"), ("0.26", "0.31")]
    history = parse(tester.get(f"/circuits/{cid}/history"))
    cells = [" ".join(row.select_one(".change").text.split())
             for row in history.select("li.history-row")
             if "outlet a · Kitchen" in row.text and "L–N" in row.text]
    assert cells == ["0.26 → 0.31 Ω", "nothing → 0.26 Ω"]  # newest first, nothing lost


def test_locked_job_refuses_readings(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, status="submitted")
    before = log_count(app, cid)
    response = reading(tester, cid, "r1", "0.60", client_id="pytest-locked-1")
    assert response.status_code == 302
    assert stored(app, cid, "r1") == "0.52"
    assert log_count(app, cid) == before
    page = tester.get(response.headers["Location"]).get_data(as_text=True)
    assert "can no longer be changed" in page


# ------------------------------------------------------------------ moving through the steps


def test_resume_goes_back_to_where_the_test_stopped(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, current_step="le")
    assert tester.get(f"/circuits/{cid}/test").headers["Location"].endswith(
        f"/circuits/{cid}/test/le")
    fresh = make_circuit(safe=False)
    assert tester.get(f"/circuits/{fresh}/test").headers["Location"].endswith("/test/safety")


def test_next_step_moves_forward_and_going_back_keeps_the_place(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E)
    response = tester.post(f"/circuits/{cid}/test/e2e/done")
    assert response.headers["Location"].endswith(f"/circuits/{cid}/test/ln")
    tester.post(f"/circuits/{cid}/test/ln/done")
    assert tester.get(f"/circuits/{cid}/test/e2e").status_code == 200  # going back is a read
    tester.post(f"/circuits/{cid}/test/e2e/done")  # moving on from an earlier step again
    with app.app_context():
        assert db.session.get(Circuit, cid).current_step == "le"


def test_a_reading_at_a_later_step_moves_the_resume_point(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])  # resume point: step 1
    reading(tester, cid, "le", "0.34", outlet="a", client_id="pytest-later-1")
    reading(tester, cid, "r1", "0.53", client_id="pytest-later-2")  # a correction back in step 1
    with app.app_context():
        assert db.session.get(Circuit, cid).current_step == "le"
    assert tester.get(f"/circuits/{cid}/test").headers["Location"].endswith("/test/le")


def test_unknown_step_is_not_found(tester, make_circuit):
    cid = make_circuit()
    assert tester.get(f"/circuits/{cid}/test/results").status_code == 404
    assert tester.get(f"/circuits/{cid}/test/zz").status_code == 404
    assert tester.get("/circuits/9999/test/e2e").status_code == 404


# ------------------------------------------------------------------ outlets


def outlet_post(client, cid, step="ln", **fields):
    data = {"label": "Lounge", "kind": "twin_socket", "spur_from_key": "", "fuse_a": "",
            "spur_csa_mm2": "", "spur_cpc_csa_mm2": "", "client_id": ""}
    data.update(fields)
    return client.post(f"/circuits/{cid}/outlets?step={step}", data=data)


def test_outlet_form_fields_and_labels(tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    page = parse(tester.get(f"/circuits/{cid}/test/ln"))
    form = page.select_one("#add-outlet form")
    for name in ("label", "kind", "spur_from_key", "fuse_a", "spur_csa_mm2", "spur_cpc_csa_mm2"):
        control = form.select_one(f'[name="{name}"]')
        assert control is not None, name
        assert form.select_one(f'label[for="{control["id"]}"]') is not None, name
    sources = [o["value"] for o in form.select('select[name="spur_from_key"] option')]
    assert sources == ["", "a"]


def test_outlets_keep_the_visiting_order(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E)
    for label in ("Kitchen", "Dining", "Lounge"):
        assert outlet_post(tester, cid, label=label).status_code == 302
    assert outlet_post(tester, cid, label="Boiler", kind="fcu", fuse_a="3",
                       spur_from_key="b").status_code == 302
    with app.app_context():
        outlets = db.session.get(Circuit, cid).outlets
        assert [(o.key, o.label, o.spur_from_key, o.fuse_a) for o in outlets] == [
            ("a", "Kitchen", None, None), ("b", "Dining", None, None),
            ("c", "Lounge", None, None), ("d", "Boiler", "b", 3.0)]


def test_same_outlet_form_twice_adds_one_outlet(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E)
    outlet_post(tester, cid, label="Hall", client_id="pytest-outlet-1")
    outlet_post(tester, cid, label="Hall", client_id="pytest-outlet-1")
    with app.app_context():
        assert len(db.session.get(Circuit, cid).outlets) == 1


@pytest.mark.parametrize("fields, words", [
    ({"kind": "fcu", "fuse_a": ""}, "needs its fuse rating"),
    ({"kind": "twin_socket", "fuse_a": "13"}, "only an FCU carries a fuse"),
    ({"label": ""}, "This field is required"),
    ({"kind": "hob"}, "Not a valid choice"),
    ({"spur_from_key": "zz"}, "Not a valid choice"),
])
def test_bad_outlets_are_refused(app, tester, make_circuit, parse, fields, words):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])
    response = outlet_post(tester, cid, **fields)
    assert response.status_code == 422
    assert words.lower() in parse(response).select_one("#add-outlet").text.lower()
    with app.app_context():
        assert len(db.session.get(Circuit, cid).outlets) == 1


def test_deleting_an_outlet_is_a_recorded_soft_delete(app, tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen", "ln": 0.26}, {"label": "Hall"}])
    response = tester.post(f"/circuits/{cid}/outlets/a/delete?step=ln")
    assert response.status_code == 302
    page = parse(tester.get(f"/circuits/{cid}/test/ln"))
    assert page.select_one("#r-ln-a") is None and page.select_one("#r-ln-b") is not None
    with app.app_context():
        outlet = db.session.scalar(select(Outlet).where(Outlet.circuit_id == cid,
                                                        Outlet.key == "a"))
        assert outlet.deleted_at is not None and outlet.ln == "0.26"
        assert db.session.scalar(select(ChangeLog).where(
            ChangeLog.entity == "outlet", ChangeLog.entity_id == outlet.id,
            ChangeLog.field == "deleted_at")).old_value is None
    # the next outlet never reuses a deleted key
    outlet_post(tester, cid, label="Landing")
    with app.app_context():
        assert [o.key for o in db.session.get(Circuit, cid).outlets] == ["a", "b", "c"]


def test_an_outlet_that_feeds_a_spur_cannot_be_deleted(app, tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"},
                                         {"label": "Cooker", "spur_from_key": "a",
                                          "kind": "fcu", "fuse_a": 13.0}])
    response = tester.post(f"/circuits/{cid}/outlets/a/delete?step=ln", follow_redirects=True)
    assert "feeds b" in parse(response).select_one(".flash-error").text
    with app.app_context():
        assert all(o.deleted_at is None for o in db.session.get(Circuit, cid).outlets)


def test_editing_an_outlet_is_logged(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}, {"label": "Hall"}])
    with app.app_context():
        last = db.session.scalar(select(func.max(ChangeLog.id)))
    response = tester.post(f"/circuits/{cid}/outlets/b/edit?step=ln", data={
        "label": "Hall by stairs", "kind": "single_socket", "spur_from_key": "a", "fuse_a": "",
        "spur_csa_mm2": "", "spur_cpc_csa_mm2": ""})
    assert response.status_code == 302
    with app.app_context():
        changed = {(r.entity, r.field, r.old_value, r.new_value) for r in db.session.scalars(
            select(ChangeLog).where(ChangeLog.id > last))}
    assert changed == {("outlet", "label", "Hall", "Hall by stairs"),
                       ("outlet", "kind", "twin_socket", "single_socket"),
                       ("outlet", "spur_from_key", None, "a")}


def test_an_outlet_cannot_be_fed_from_its_own_spur(app, tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"},
                                         {"label": "Cooker", "spur_from_key": "a"}])
    response = tester.post(f"/circuits/{cid}/outlets/a/edit?step=ln", data={
        "label": "Kitchen", "kind": "twin_socket", "spur_from_key": "b", "fuse_a": "",
        "spur_csa_mm2": "", "spur_cpc_csa_mm2": ""})
    assert response.status_code == 422
    assert "fed from itself or its own spur" in parse(response).text
    with app.app_context():
        assert db.session.get(Circuit, cid).outlets[0].spur_from_key is None
