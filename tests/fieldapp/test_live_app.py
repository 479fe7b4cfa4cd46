"""The live tests step: measured Zs at the outlets, where readings were taken, re-measures at
the terminals; the same entry as the ring test (form post and JSON API, idempotent), and what
Results, the review page and the sheet show."""

from __future__ import annotations

import pytest
from sqlalchemy import select

from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Outlet

E2E = {"r1": "0.52", "rn": "0.52", "r2": "0.86"}  # 2.5/1.5 mm² ring of about 70 m
RING = [
    {"label": "Hall by door", "ln": "0.26", "le": "0.35"},
    {"label": "Lounge left", "ln": "0.26", "le": "0.36"},
    {"label": "Lounge right", "ln": "0.27", "le": "0.35"},
    {"label": "Kitchen", "ln": "0.26", "le": "0.34"},
]
COLUMNS = ("zs_measured", "taken_at", "ln_terminals", "le_terminals", "ln", "le")


def live_circuit(make_circuit, **fields):
    return make_circuit(e2e=E2E, outlets=RING, current_step="le", **fields)


def outlet_row(app, cid: int, key: str) -> dict:
    with app.app_context():
        outlet = db.session.scalar(select(Outlet).where(Outlet.circuit_id == cid,
                                                        Outlet.key == key))
        return {name: getattr(outlet, name) for name in COLUMNS}


def post(client, cid, field, key, value=None, ol=False, client_id=None):
    data = {"field": field, "outlet": key, "value": value or "", "device": "pytest"}
    if ol:
        data["ol"] = "OL"
    if client_id:
        data["client_id"] = client_id
    return client.post(f"/circuits/{cid}/live/reading", data=data)


def test_the_live_page_offers_every_outlet_with_big_field_and_ol(tester, make_circuit, parse):
    cid = live_circuit(make_circuit)
    page = parse(tester.get(f"/circuits/{cid}/live"))
    cards = page.select("article.reading[data-field=zs_measured]")
    assert sorted(c["data-outlet"] for c in cards) == ["a", "b", "c", "d"]
    for card in cards:
        form = card.select_one("form.reading-form")
        assert form["data-api"].endswith(f"/api/circuits/{cid}/readings")
        assert form.has_attr("data-offline")  # the offline queue takes these posts too
        assert form.select_one("input.big")["inputmode"] == "decimal"
        assert form.select_one('[name="ol"]') is not None
    # the sequence shows the live tests between step 3 and Results
    steps = [a.get_text() for a in page.select(".stepper a")]
    assert steps[-2:] == ["Live", "Results"]
    assert "competent person" in page.select_one(".cautions").get_text()
    assert "supply on" in page.get_text().lower()


def test_the_step_3_page_leads_to_the_live_tests(tester, make_circuit, parse):
    cid = live_circuit(make_circuit)
    link = parse(tester.get(f"/circuits/{cid}/test/le")).select_one(".live-next a")
    assert link["href"] == f"/circuits/{cid}/live"
    assert parse(tester.get(f"/circuits/{cid}/test/ln")).select_one(".live-next") is None


def test_a_measured_zs_is_stored_as_text_and_logged(app, tester, make_circuit):
    cid = live_circuit(make_circuit)
    response = post(tester, cid, "zs_measured", "b", "0,71")
    assert response.status_code == 302
    assert response.location.endswith("#r-zs_measured-b")
    assert outlet_row(app, cid, "b")["zs_measured"] == "0.71"
    assert post(tester, cid, "zs_measured", "b", ol=True).status_code == 302
    assert outlet_row(app, cid, "b")["zs_measured"] == "OL"
    with app.app_context():
        rows = [(r.old_value, r.new_value) for r in db.session.scalars(
            select(ChangeLog).where(ChangeLog.field == "zs_measured").order_by(ChangeLog.id))]
    assert rows == [(None, "0.71"), ("0.71", "OL")]


@pytest.mark.parametrize("field", ["zs_measured", "ln_terminals", "le_terminals"])
@pytest.mark.parametrize(("value", "words"), [
    ("abc", "not a number"), ("-0.2", "cannot be negative"), ("250", "above"),
    ("0.5.1", "not a number"), ("", "type the reading"),
])
def test_a_bad_live_reading_names_its_field_and_writes_nothing(
        app, tester, make_circuit, parse, field, value, words):
    cid = live_circuit(make_circuit)
    before = outlet_row(app, cid, "a")
    response = post(tester, cid, field, "a", value)
    assert response.status_code == 422
    name = {"zs_measured": "Measured Zs", "ln_terminals": "L–N re-measured",
            "le_terminals": "L–CPC re-measured"}[field]
    card = parse(response).select_one(f"#r-{field}-a")
    message = " ".join(e.get_text() for e in card.select(".error[role=alert]"))
    assert name in message and words.lower() in message.lower()
    assert outlet_row(app, cid, "a") == before


@pytest.mark.parametrize(("body", "key"), [
    ({"value": "abc"}, "value"), ({"value": "-1"}, "value"), ({"value": None}, "value"),
    ({"outlet": "zz"}, "outlet"), ({"step": "zs"}, "step"),
])
def test_the_api_refuses_a_bad_live_reading_and_writes_nothing(app, tester, make_circuit,
                                                                 body, key):
    cid = live_circuit(make_circuit)
    before = outlet_row(app, cid, "a")
    payload = {"step": "zs_measured", "outlet": "a", "value": "0.7",
               "client_id": "live-bad-0001", **body}
    response = tester.post(f"/api/circuits/{cid}/readings", json=payload)
    assert response.status_code == 400
    assert key in response.get_json()["errors"]
    assert outlet_row(app, cid, "a") == before


def test_the_api_takes_a_measured_zs_once_per_client_id(app, tester, make_circuit):
    cid = live_circuit(make_circuit)
    body = {"step": "zs_measured", "outlet": "c", "value": "0.7", "client_id": "live-zs-0001",
            "device": "phone"}
    first = tester.post(f"/api/circuits/{cid}/readings", json=body)
    assert first.status_code == 200, first.get_data(as_text=True)
    reply = first.get_json()
    assert reply["value"] == "0.7" and reply["stored"] and "html" in reply
    again = tester.post(f"/api/circuits/{cid}/readings", json={**body, "value": "0.9"})
    assert again.get_json()["duplicate"] is True
    assert outlet_row(app, cid, "c")["zs_measured"] == "0.7"
    with app.app_context():
        assert db.session.scalar(select(ChangeLog.device).where(
            ChangeLog.client_id == "live-zs-0001")) == "phone"


def test_the_ring_test_form_does_not_take_live_fields(app, tester, make_circuit):
    cid = live_circuit(make_circuit)
    response = tester.post(f"/circuits/{cid}/test/reading",
                           data={"field": "zs_measured", "outlet": "a", "value": "0.7"})
    assert response.status_code == 400
    assert outlet_row(app, cid, "a")["zs_measured"] is None


def test_readings_need_the_safety_checks_and_an_open_job(app, tester, make_circuit):
    unsafe = make_circuit(safe=False, outlets=[{"label": "Hall"}])
    assert post(tester, unsafe, "zs_measured", "a", "0.7").status_code == 302
    assert outlet_row(app, unsafe, "a")["zs_measured"] is None
    locked = make_circuit(outlets=[{"label": "Hall"}], status="submitted")
    assert post(tester, locked, "zs_measured", "a", "0.7").status_code == 302
    assert outlet_row(app, locked, "a")["zs_measured"] is None
    response = tester.post(f"/api/circuits/{locked}/readings", json={
        "step": "zs_measured", "outlet": "a", "value": "0.7", "client_id": "live-lock-001"})
    assert response.status_code == 409
    assert outlet_row(app, locked, "a")["zs_measured"] is None


def test_taken_at_and_a_terminal_re_measure_are_kept_beside_the_front_reading(
        app, tester, make_circuit, parse):
    cid = live_circuit(make_circuit)
    response = tester.post(f"/circuits/{cid}/live/outlets/b/taken-at",
                           data={"taken_at": "front"})
    assert response.status_code == 302
    assert post(tester, cid, "le_terminals", "b", "0.33").status_code == 302
    row = outlet_row(app, cid, "b")
    assert (row["taken_at"], row["le"], row["le_terminals"]) == ("front", "0.36", "0.33")
    with app.app_context():
        fields = [r.field for r in db.session.scalars(
            select(ChangeLog).where(ChangeLog.entity == "outlet").order_by(ChangeLog.id))]
    assert "taken_at" in fields and "le_terminals" in fields
    history = parse(tester.get(f"/circuits/{cid}/history")).get_text()
    # the diary's words for them (fieldapp/diary.py), never the column names
    assert "L–CPC re-measured at the terminals" in history and "Readings taken at" in history
    assert "le_terminals" not in history and "taken_at" not in history
    # a choice the record format does not know is refused
    bad = tester.post(f"/circuits/{cid}/live/outlets/b/taken-at", data={"taken_at": "back"})
    assert bad.status_code == 400
    assert outlet_row(app, cid, "b")["taken_at"] == "front"


def test_the_record_carries_the_live_fields(app, tester, make_circuit):
    from fieldapp.models import Circuit
    from fieldapp.records import circuit_record

    cid = live_circuit(make_circuit, rcd_rated_ma=30.0, rcd_type="A", rcd_trip_ms=21.0,
                       rcd_button_ok=True, ir_test_v=500.0, ir_ln_mohm=">999",
                       ir_le_mohm="150.0", pfc_ka=1.2, cpc_kind="armour")
    post(tester, cid, "zs_measured", "a", "0.68")
    post(tester, cid, "ln_terminals", "a", "0.25")
    with app.app_context():
        record = circuit_record(db.session.get(Circuit, cid))
    circuit, outlet = record["circuit"], record["outlets"][0]
    assert circuit["rcd"] == {"rated_ma": 30.0, "type": "A", "trip_ms": 21.0, "button_ok": True}
    assert circuit["insulation"] == {"test_v": 500.0, "ln_mohm": ">999", "le_mohm": 150.0,
                                     "ne_mohm": None}
    assert (circuit["pfc_ka"], circuit["cpc_kind"], circuit["parallel_paths"]) == (
        1.2, "armour", False)
    assert (outlet["zs_measured"], outlet["ln_terminals"], outlet["le_terminals"],
            outlet["taken_at"]) == (0.68, 0.25, None, None)
    from ringmath import parse_record

    parsed = parse_record(record)  # ringmath reads what the app writes
    assert parsed.outlets[0].zs_measured_ohm == 0.68
    assert parsed.outlets[0].ln_used_ohm == 0.25  # the terminal re-measure is the one used


def test_results_review_and_sheet_show_the_live_results_with_cautions(
        app, tester, supervisor, make_circuit, parse):
    from fieldapp.models import Circuit, Job
    from fieldapp.sheets.inputs import job_inputs

    cid = live_circuit(make_circuit, rcd_rated_ma=30.0, rcd_type="A", rcd_trip_ms=24.0,
                       rcd_button_ok=True, ir_test_v=500.0, ir_ln_mohm=">999",
                       ir_le_mohm="150.0", ir_ne_mohm=">999", pfc_ka=1.2)
    post(tester, cid, "zs_measured", "b", "0.74")
    results = parse(tester.get(f"/circuits/{cid}/results"))
    block = results.select_one(".live-summary")
    row = {tr.th.get_text(" ", strip=True).split(" ")[0]: [td.get_text(strip=True)
                                                         for td in tr.select("td")]
           for tr in block.select("tbody tr")}
    assert row["b"][2] == "0.74"  # measured Zs beside the prediction and the limit
    assert row["b"][3] == "1.10"  # 32 A type B, 80 % of BS 7671:2018 Table 41.3's 1.37 Ω
    text = block.get_text(" ", strip=True)
    assert "> 999" in text and "150" in text and "24 ms" in text and "1.2 kA" in text
    assert "competent person" in text
    assert "competent person" in results.select_one(".cautions").get_text()
    assert block.select_one("a")["href"] == f"/circuits/{cid}/live"
    with app.app_context():
        job_id = db.session.get(Circuit, cid).job_id
        tester.post(f"/jobs/{job_id}/submit", data={})
        status = db.session.get(Job, job_id).status
    assert status == "submitted"
    review = parse(supervisor.get(f"/review/jobs/{job_id}"))
    review_text = review.select_one(".live-summary").get_text(" ", strip=True)
    assert "0.74" in review_text and "> 999" in review_text
    with app.app_context():
        from fieldapp.sheets.context import sheet_context

        sheet = sheet_context(**job_inputs(db.session.get(Job, job_id)))
    live = sheet["circuits"][0]["live"]
    assert [r["measured"] for r in live["rows"]] == ["—", "0.74", "—", "—"]
    assert live["insulation"]["ln"] == "> 999" and live["rcd"]["trip"] == "24 ms"


def test_the_printed_sheet_prints_the_live_results(app, tester, make_circuit):
    import io

    import pypdf

    cid = live_circuit(make_circuit, rcd_rated_ma=30.0, rcd_type="A", rcd_trip_ms=24.0,
                       ir_test_v=500.0, ir_ln_mohm=">999")
    post(tester, cid, "zs_measured", "b", "0.74")
    with app.app_context():
        from fieldapp.models import Circuit

        job_id = db.session.get(Circuit, cid).job_id
    pdf = tester.get(f"/jobs/{job_id}/sheet.pdf").data
    text = " ".join(" ".join(p.extract_text() for p in pypdf.PdfReader(io.BytesIO(pdf)).pages)
                    .split())
    assert "Measured Zs, insulation and RCD" in text
    assert "0.74" in text and "> 999" in text and "24 ms" in text
    assert "competent person" in text
