"""The job sheet PDF from plain dicts (no database): every demo job and a hand-made one."""

from __future__ import annotations

import io
import json
from pathlib import Path

import pypdf
import pytest

from fieldapp.sheets.context import recorded, sheet_context
from fieldapp.sheets.pdf import sheet_html, sheet_pdf
from fieldapp.transfer.schemas import dump_document, load_document
from ringmath.diagnose import diagnose
from ringmath.messages import CAUTIONS

ROOT = Path(__file__).resolve().parents[2]
HANDMADE = Path(__file__).parent / "data" / "transfer_handmade.json"
DOCUMENTS = [HANDMADE, *sorted((ROOT / "demo_jobs").glob("*.json"))]
PEOPLE = {"status": "approved", "tester": "Morwenna Tregear", "submitted_at": "2026-11-27T16:02:00",
          "reviewed_by": "Idris Calloway", "reviewed_at": "2026-11-28T08:30:00",
          "approved_by": "Idris Calloway", "approved_at": "2026-11-28T08:30:00"}
#: ISO 216 A4 is 210 mm x 297 mm = 595.28 pt x 841.89 pt (1 pt = 1/72 in).
A4_PT = (595.28, 841.89)


def as_job_document(path: Path) -> dict:
    """A demo file as a complete job document (a single circuit record is wrapped)."""
    doc = json.loads(path.read_text())
    if "circuits" not in doc:
        doc = {"format": "ringtest/1", "job": doc.get("job"),
               "circuits": [{k: doc[k] for k in ("circuit", "end_to_end", "outlets") if k in doc}]}
    return dump_document(load_document(doc))


@pytest.fixture(scope="module", params=DOCUMENTS, ids=[p.name for p in DOCUMENTS])
def printed(request):
    """(document, diagnoses, pdf bytes, text of each page)."""
    doc = as_job_document(request.param)
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    pdf = sheet_pdf(doc, diagnoses, PEOPLE)
    pages = [page.extract_text() for page in pypdf.PdfReader(io.BytesIO(pdf)).pages]
    return doc, diagnoses, pdf, pages


def test_is_a_pdf_on_a4_pages(printed):
    _, _, pdf, _ = printed
    assert pdf.startswith(b"%PDF-")
    for page in pypdf.PdfReader(io.BytesIO(pdf)).pages:
        box = page.mediabox
        assert (float(box.width), float(box.height)) == pytest.approx(A4_PT, abs=0.5)


def test_holds_circuits_readings_and_verdicts(printed):
    doc, diagnoses, _, pages = printed
    text = "\n".join(pages)
    flat = " ".join(text.split())
    assert doc["job"]["reference"] in flat and doc["job"]["site"] in flat
    for rec, diagnosis in zip(doc["circuits"], diagnoses, strict=True):
        assert rec["circuit"]["reference"] in flat
        for value in rec["end_to_end"].values():
            if value is not None:
                assert recorded(value) in flat
        for outlet in rec["outlets"]:
            for value in (outlet["ln"], outlet["le"]):
                if value is not None:
                    assert recorded(value) in flat
        assert diagnosis["verdict"].upper() in flat.upper()
    assert "Idris Calloway" in flat and "28 Nov 2026 08:30 UTC" in flat


def test_every_page_has_cautions_and_its_number(printed):
    _, _, _, pages = printed
    for number, text in enumerate(pages, start=1):
        flat = " ".join(text.split())
        assert f"Page {number} of {len(pages)}" in flat
        assert "Advice, not a certificate." in flat
        for caution in CAUTIONS:
            assert " ".join(caution.split()) in flat


def test_zs_over_the_limit_prints_fail_in_words():
    # With Ze 0.90 Ω every point of DB1/4 is over 1.10 Ω, the measured-value limit of a
    # 32 A type B breaker (BS 7671:2018 Table 41.3 1.37 Ω x 80 %, IET On-Site Guide rule of
    # thumb): the sheet must say FAIL in words, which a black-and-white copy keeps.
    doc = as_job_document(HANDMADE)
    doc["circuits"][0]["circuit"]["ze_ohm"] = 0.90
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    ctx = sheet_context(doc, diagnoses, PEOPLE)
    assert {o["result"] for o in ctx["circuits"][0]["outlets"]} == {"FAIL"}
    assert ctx["circuits"][0]["summary"]["result"] == "FAIL"
    failing = sum(o["result"] == "FAIL" for c in ctx["circuits"] for o in c["outlets"])
    assert failing >= len(doc["circuits"][0]["outlets"])
    assert sheet_html(doc, diagnoses, PEOPLE).count('class="fail">FAIL<') == failing


def test_worked_example_values_on_the_sheet():
    """Circuit DB1/4 of the hand-made job: 32 A type B BS EN 60898, Ze 0.31 Ω measured,
    r1 0.52, rn 0.53, r2 0.85."""
    doc = as_job_document(HANDMADE)
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    ctx = sheet_context(doc, diagnoses, PEOPLE)
    first = ctx["circuits"][0]
    # step 2 expected (r1 + rn) / 4 = 0.2625 and step 3 expected (r1 + r2) / 4 = 0.3425:
    # the three-step ring test, IET Guidance Note 3 (from memory)
    assert first["expected"]["ln"] == "0.26" and first["expected"]["le"] == "0.34"
    # 32 A type B: 1.37 Ω tabulated (BS 7671:2018 Table 41.3), 1.10 Ω for a measured value
    # (80 % rule of thumb, IET On-Site Guide / Guidance Note 3)
    assert first["summary"]["zs_tabulated"] == "1.37" and first["summary"]["zs_max"] == "1.10"
    # Zs = Ze + (R1+R2) (BS 7671:2018 Regulation 411.4.4 / GN3 method, from memory)
    r1r2 = float(first["summary"]["r1r2"])
    assert float(first["summary"]["zs"]) == pytest.approx(0.31 + r1r2, abs=0.006)
    # the second circuit's cpc is open end to end: not a pass, whatever else it shows
    second = ctx["circuits"][1]
    assert second["step1"][2]["value"] == "OL"
    assert second["summary"]["result"] != "pass"
    assert ctx["verdict"] != "Satisfactory"


def test_hostile_text_is_printed_not_obeyed():
    doc = as_job_document(HANDMADE)
    doc["job"]["site"] = "<b>Unit 9</b> & <script>alert(1)</script>"
    doc["circuits"][0]["outlets"][0]["label"] = "<img src=x>"
    html = sheet_html(doc, [diagnose(rec) for rec in doc["circuits"]], PEOPLE)
    assert "<script>" not in html and "<img src=x>" not in html
    assert "&lt;b&gt;Unit 9&lt;/b&gt; &amp;" in html


def test_a_circuit_that_cannot_be_assessed_still_prints():
    doc = as_job_document(HANDMADE)
    diagnoses = [diagnose(doc["circuits"][0]), None]
    ctx = sheet_context(doc, diagnoses, {}, problems=[None, "unknown device"])
    assert ctx["circuits"][1]["verdict"] == "Not assessed"
    assert ctx["circuits"][1]["problem"] == "unknown device"
    assert set(CAUTIONS) <= set(ctx["cautions"])
    html = sheet_html(doc, diagnoses, {}, problems=[None, "unknown device"])
    assert "Not assessed: unknown device" in html


def test_diagnoses_must_match_the_circuits():
    doc = as_job_document(HANDMADE)
    with pytest.raises(ValueError, match="diagnoses: 1 given for 2 circuits"):
        sheet_context(doc, [None], {})
