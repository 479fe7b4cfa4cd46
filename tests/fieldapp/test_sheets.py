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
