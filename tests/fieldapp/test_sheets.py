"""The job sheet route: a PDF of the job as stored, with the people who decided on it."""

from __future__ import annotations

import io
import json
from pathlib import Path

import pypdf

HANDMADE = Path(__file__).parent / "data" / "transfer_handmade.json"


def pdf_text(data: bytes) -> str:
    return " ".join(" ".join(p.extract_text() for p in pypdf.PdfReader(io.BytesIO(data)).pages)
                    .split())


def test_sheet_of_an_approved_job(app, tester, supervisor):
    jid = tester.post("/api/jobs/import", json=json.loads(HANDMADE.read_text())).get_json()[
        "job_id"]
    # the hand-made job has an open cpc and a step 3 missing: sign-off needs reasons
    assert tester.post(f"/jobs/{jid}/submit", data={
        "reason": "Client to book the cpc repair"}).status_code == 302
    assert supervisor.post(f"/review/jobs/{jid}/approve", data={
        "note": "Ok", "reason": "Remedial work ordered"}).status_code == 302
    response = tester.get(f"/jobs/{jid}/sheet.pdf")
    assert response.status_code == 200 and response.mimetype == "application/pdf"
    assert response.data.startswith(b"%PDF-")
    assert response.headers["Content-Disposition"] == 'inline; filename="HM-0417.pdf"'
    text = pdf_text(response.data)
    for words in ("HM-0417", "DB1/4", "DB1/5", "Approved by Hywel Test-Supervisor",
                  "Tested by Gethin Test-Tester", "Reviewer's comment: Ok", "0.85", "OL"):
        assert words in text, words


def test_sheet_needs_a_login_and_a_job(app, tester):
    assert app.test_client().get("/jobs/1/sheet.pdf").status_code == 302
    assert tester.get("/jobs/999/sheet.pdf").status_code == 404


def test_the_instrument_typed_on_the_job_form_is_stored_and_printed(app, tester, parse):
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog, Job

    form = parse(tester.get("/jobs/new"))
    for name in ("instrument_model", "instrument_serial"):
        control = form.select_one(f'[name="{name}"]')
        assert control is not None and form.select_one(f'label[for="{control["id"]}"]')
    response = tester.post("/jobs/new", data={
        "reference": "J-200", "site": "7 Sample Close", "date": "2026-11-30", "tester_id": "0",
        "instrument_model": "  Acme MFT-9 ", "instrument_serial": "SN 40417"})
    assert response.status_code == 302
    with app.app_context():
        job = db.session.scalar(db.select(Job).where(Job.reference == "J-200"))
        assert (job.instrument_model, job.instrument_serial) == ("Acme MFT-9", "SN 40417")
        jid = job.id
        logged = {r.field: r.new_value for r in db.session.scalars(db.select(ChangeLog).where(
            ChangeLog.entity == "job", ChangeLog.entity_id == jid))}
        assert logged["instrument_serial"] == "SN 40417"
    edit = parse(tester.get(f"/jobs/{jid}/edit"))
    assert edit.select_one('[name="instrument_model"]')["value"] == "Acme MFT-9"
    too_long = tester.post(f"/jobs/{jid}/edit", data={
        "reference": "J-200", "site": "7 Sample Close", "tester_id": "0",
        "instrument_serial": "9" * 61})
    assert too_long.status_code == 422
    with app.app_context():
        assert db.session.get(Job, jid).instrument_serial == "SN 40417"
    text = pdf_text(tester.get(f"/jobs/{jid}/sheet.pdf").data)
    assert "Test instrument Acme MFT-9, serial no. SN 40417" in text


def test_the_sheet_prints_the_reasons_given_at_sign_off(app, tester, supervisor):
    jid = tester.post("/api/jobs/import", json=json.loads(HANDMADE.read_text())).get_json()[
        "job_id"]
    tester.post(f"/jobs/{jid}/submit", data={"reason": "Client to book the cpc repair"})
    supervisor.post(f"/review/jobs/{jid}/approve", data={"reason": "Remedial work ordered"})
    text = pdf_text(tester.get(f"/jobs/{jid}/sheet.pdf").data)
    assert "Submitted with these problems by Gethin Test-Tester" in text
    assert "Reason given: Client to book the cpc repair" in text
    assert "Approved with these problems by Hywel Test-Supervisor" in text
    assert "Reason given: Remedial work ordered" in text
    assert "Reviewer Hywel Test-Supervisor" in text
