"""The one save path (fieldapp.readings): form and JSON store the same row, refuse the same
things, and ask about a slipped decimal point before storing it."""

from __future__ import annotations

import pytest
from sqlalchemy import func, select

from fieldapp import readings
from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Circuit, Outlet

# A healthy 2.5/1.5 mm² ring: r1 = rn, r2 ≈ 1.63 × r1 (copper 7.41 and 12.1 mΩ/m at 20 °C,
# BS EN 60228 Table 1); step 2 reads about (r1 + rn) / 4 = 0.26 Ω and step 3 about
# (r1 + r2) / 4 ≈ 0.34 Ω at every outlet (the three-step ring test, common practice).
E2E = {"r1": 0.52, "rn": 0.52, "r2": 0.85}
OUTLETS = [{"label": "Kitchen"}, {"label": "Hall"}]


def form_post(client, cid, field, value, *, outlet="", client_id="pytest-form-0001", keep=""):
    return client.post(f"/circuits/{cid}/test/reading", data={
        "field": field, "outlet": outlet, "value": value, "client_id": client_id,
        "device": "pytest phone", "keep": keep, "save": "Save"})


def api_post(client, cid, field, value, *, outlet=None, client_id="pytest-json-0001",
             keep=False):
    return client.post(f"/api/circuits/{cid}/readings", json={
        "step": field, "outlet": outlet, "value": value, "client_id": client_id,
        "device": "pytest phone", "keep": keep})


def row(app, cid, key=None):
    """(the outlet, or the circuit with key None; the newest ChangeLog row of a reading)."""
    with app.app_context():
        log = db.session.scalar(select(ChangeLog).where(
            ChangeLog.circuit_id == cid, ChangeLog.field.in_(("r1", "rn", "r2", "ln", "le")))
            .order_by(ChangeLog.id.desc()))
        if key is None:
            return db.session.get(Circuit, cid), log
        return db.session.scalar(select(Outlet).where(Outlet.circuit_id == cid,
                                                      Outlet.key == key)), log


def count(app, cid) -> int:
    with app.app_context():
        return db.session.scalar(select(func.count(ChangeLog.id))
                                 .where(ChangeLog.circuit_id == cid))


def test_a_form_save_stores_the_row_and_logs_who_old_and_new(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=OUTLETS)
    response = form_post(tester, cid, "ln", "0,27", outlet="a", client_id="pytest-form-row1")
    assert response.status_code == 302
    outlet, log = row(app, cid, "a")
    assert outlet.ln == "0.27"  # stored as the record has it: decimal comma read as a point
    assert (log.entity, log.entity_id, log.field) == ("outlet", outlet.id, "ln")
    assert (log.old_value, log.new_value, log.client_id) == (None, "0.27", "pytest-form-row1")
    assert log.device == "pytest phone" and log.user_id is not None
    with app.app_context():
        assert db.session.get(Circuit, cid).current_step == "ln"  # resume point moved on


def test_form_and_json_store_the_same_thing(app, tester, make_circuit):
    one = make_circuit(e2e=E2E, outlets=OUTLETS)
    two = make_circuit(e2e=E2E, outlets=OUTLETS)
    assert form_post(tester, one, "le", "0.35", outlet="b").status_code == 302
    assert api_post(tester, two, "le", "0.35", outlet="b").status_code == 200
    (o1, l1), (o2, l2) = row(app, one, "b"), row(app, two, "b")
    assert o1.le == o2.le == "0.35"
    assert (l1.field, l1.old_value, l1.new_value) == (l2.field, l2.old_value, l2.new_value)


@pytest.mark.parametrize("typed, suggested", [("3.9", "0.39"), ("3.4", "0.34"),
                                              ("0.034", "0.34")])
def test_a_value_ten_times_or_a_tenth_of_the_expected_is_asked_about_not_stored(
        app, tester, make_circuit, parse, typed, suggested):
    # step 3 expected about 0.34 Ω: "3.9" for 0.39 and "0.034" for 0.34 slip by one place
    cid = make_circuit(e2e=E2E, outlets=OUTLETS)
    before = count(app, cid)
    response = form_post(tester, cid, "le", typed, outlet="a")
    assert response.status_code == 422
    page = parse(response)
    box = page.select_one("#r-le-a [data-slip]")
    assert box is not None and "Decimal point slipped?" in box.text
    assert [b.text.strip() for b in box.select("button")] == [f"{suggested} Ω",
                                                             f"keep {typed} Ω"]
    assert "press the probes" not in page.select_one("#r-le-a").text.lower()
    outlet, _ = row(app, cid, "a")
    assert outlet.le is None and count(app, cid) == before


def test_each_answer_to_the_question_is_one_post(app, tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=OUTLETS)
    page = parse(form_post(tester, cid, "le", "3.9", outlet="a", client_id="pytest-slip-01"))
    forms = page.select("#r-le-a [data-slip] form")
    assert len(forms) == 2
    fix = {i["name"]: i.get("value", "") for i in forms[0].select("input")}
    keep = {i["name"]: i.get("value", "") for i in forms[1].select("input")}
    assert (fix["value"], fix["keep"]) == ("0.39", "")
    assert (keep["value"], keep["keep"]) == ("3.9", "1")
    assert fix["client_id"] == keep["client_id"] == "pytest-slip-01"
    fix.pop("csrf_token", None)
    assert tester.post(forms[0]["action"], data={**fix, "save": "1"}).status_code == 302
    assert row(app, cid, "a")[0].le == "0.39"
    # keeping the value as typed stores it (a genuinely high reading is possible)
    other = make_circuit(e2e=E2E, outlets=OUTLETS)
    assert form_post(tester, other, "le", "3.9", outlet="a", keep="1").status_code == 302
    assert row(app, other, "a")[0].le == "3.9"


def test_json_gets_the_question_and_keep_stores(app, tester, make_circuit):
    cid = make_circuit(e2e=E2E, outlets=OUTLETS)
    response = api_post(tester, cid, "ln", "2.6", outlet="b", client_id="pytest-slip-js1")
    assert response.status_code == 422
    body = response.get_json()
    assert body["kind"] == "slip"
    assert (body["slip"]["typed"], body["slip"]["suggested"]) == ("2.6", "0.26")
    assert "keep 2.6" in body["html"]["slip"]
    assert row(app, cid, "b")[0].ln is None
    kept = api_post(tester, cid, "ln", "2.6", outlet="b", client_id="pytest-slip-js1",
                    keep=True)
    assert kept.status_code == 200 and row(app, cid, "b")[0].ln == "2.6"


@pytest.mark.parametrize("field, typed", [
    ("ln", "0.26"),   # in band
    ("ln", "0.40"),   # high, but a tenth (0.04) is not in band either: a real high reading
    ("ln", "OL"),     # open: nothing to shift
    ("rn", "0.53"),
])
def test_readings_that_are_not_slips_are_stored_at_once(app, tester, make_circuit, field,
                                                         typed):
    cid = make_circuit(e2e=E2E, outlets=OUTLETS)
    key = "a" if field == "ln" else ""
    assert form_post(tester, cid, field, typed, outlet=key).status_code == 302
    target, _ = row(app, cid, key or None)
    assert getattr(target, field) == ("OL" if typed == "OL" else str(float(typed)))


def test_an_end_to_end_slip_is_asked_about_too(app, tester, make_circuit):
    cid = make_circuit(e2e={"r1": 0.52})
    response = api_post(tester, cid, "rn", "5.2")  # rn is judged against r1 ± 0.05 Ω
    assert response.status_code == 422
    assert response.get_json()["slip"]["suggested"] == "0.52"


def test_refusals_store_and_log_nothing(app, tester, make_circuit):
    locked = make_circuit(e2e=E2E, outlets=OUTLETS, status="approved")
    unsafe = make_circuit(safe=False)
    for cid in (locked, unsafe):
        before = count(app, cid)
        assert api_post(tester, cid, "r1", "0.5").status_code == 409
        assert count(app, cid) == before
    cid = make_circuit(e2e=E2E, outlets=OUTLETS)
    reply = api_post(tester, cid, "ln", "0.3", outlet="zz")
    assert reply.status_code == 400 and "outlet" in reply.get_json()["errors"]


def test_the_api_no_longer_reaches_into_another_blueprint():
    import inspect

    from fieldapp.api import views

    source = inspect.getsource(views)
    assert "fieldapp.ringtest.views" not in source and "readings.save_reading" in source


@pytest.mark.parametrize("raw, kind, words", [
    ("-1", "range", "cannot be negative"),
    ("300", "range", "far above any ring reading"),
    ("0.5 ohm", "format", "is not a number"),
    ("", "empty", "Type the reading in ohms"),
])
def test_bad_values_carry_the_core_error_kind(app, make_circuit, raw, kind, words):
    from fieldapp import changes

    cid = make_circuit(e2e=E2E)
    with app.test_request_context():
        circuit = db.session.get(Circuit, cid)
        with pytest.raises(readings.BadReading) as caught:
            readings.save_reading(circuit, "r1", raw, changes.Actor(None, "pytest"))
        assert caught.value.kind == kind and words in caught.value.message
