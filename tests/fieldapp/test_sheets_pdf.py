"""The job sheet PDF from plain dicts (no database): every demo job and a hand-made one."""

from __future__ import annotations

import base64
import io
import json
from pathlib import Path

import numpy as np
import pypdf
import pytest
from bs4 import BeautifulSoup
from weasyprint.formatting_structure import boxes

from fieldapp.labels import outlet_name
from fieldapp.sheets.context import recorded, sheet_context
from fieldapp.sheets.pdf import sheet_document, sheet_html
from fieldapp.transfer.schemas import dump_document, load_document
from ringmath.diagnose import diagnose
from ringmath.messages import CAUTIONS
from ringmath.simulate import simulate

ROOT = Path(__file__).resolve().parents[2]
HANDMADE = Path(__file__).parent / "data" / "transfer_handmade.json"
DEMOS = {p.name: p for p in sorted((ROOT / "demo_jobs").glob("*.json"))}
#: A label with no place to break: the sheet must wrap it inside its cell, not print past the
#: page margin.
UNBROKEN = "Kitchen-island-pop-up-socket-under-the-worktop-by-the-dishwasher-left-hand-side"
#: A long ring (seeded simulation) whose schedule cannot fit on one page.
LONG_RING_OUTLETS = 44
PEOPLE = {"status": "approved", "tester": "Morwenna Tregear", "submitted_at": "2026-11-27T16:02:00",
          "reviewed_by": "Idris Calloway", "reviewed_at": "2026-11-28T08:30:00",
          "approved_by": "Idris Calloway", "approved_at": "2026-11-28T08:30:00"}
#: ISO 216 A4 is 210 mm x 297 mm = 595.28 pt x 841.89 pt (1 pt = 1/72 in).
A4_PT = (595.28, 841.89)


def as_job_document(path: Path | dict) -> dict:
    """A demo file (or a record) as a complete job document (a single circuit record is
    wrapped)."""
    doc = json.loads(path.read_text()) if isinstance(path, Path) else path
    if "circuits" not in doc:
        doc = {"format": "ringtest/1", "job": doc.get("job"),
               "circuits": [{k: doc[k] for k in ("circuit", "end_to_end", "outlets") if k in doc}]}
    return dump_document(load_document(doc))


def handmade_with_an_unbroken_label() -> dict:
    doc = as_job_document(HANDMADE)
    doc["circuits"][0]["outlets"][0]["label"] = UNBROKEN
    return doc


def long_ring() -> dict:
    record, _ = simulate(np.random.default_rng(20261130), None, n_ring=LONG_RING_OUTLETS)
    record = json.loads(json.dumps(record, default=str))
    record["job"] = {"reference": "SIM-44", "site": "Seeded simulated ring", "date": "2026-11-30"}
    record["circuit"]["reference"] = "DB9/1"
    return as_job_document(record)


JOBS = {"handmade": handmade_with_an_unbroken_label,
        **{name: (lambda path=path: as_job_document(path)) for name, path in DEMOS.items()},
        "long-ring": long_ring}


@pytest.fixture(scope="module", params=list(JOBS))
def printed(request):
    """(document, diagnoses, pdf bytes, text of each page, laid-out WeasyPrint document):
    one PDF per job."""
    doc = JOBS[request.param]()
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    laid_out = sheet_document(doc, diagnoses, PEOPLE)
    pdf = laid_out.write_pdf()
    pages = [page.extract_text() for page in pypdf.PdfReader(io.BytesIO(pdf)).pages]
    return doc, diagnoses, pdf, pages, laid_out


def page_boxes(page):
    """Every box laid out in a page's content area (not its margin boxes: header, footer)."""
    stack = list(page._page_box.children)
    while stack:
        box = stack.pop()
        if isinstance(box, boxes.MarginBox):
            continue
        yield box
        stack.extend(getattr(box, "children", None) or [])


def classes(box) -> set[str]:
    element = getattr(box, "element", None)
    return set((element.get("class") or "").split()) if element is not None else set()


def test_is_a_pdf_on_a4_pages(printed):
    pdf = printed[2]
    assert pdf.startswith(b"%PDF-")
    for page in pypdf.PdfReader(io.BytesIO(pdf)).pages:
        box = page.mediabox
        assert (float(box.width), float(box.height)) == pytest.approx(A4_PT, abs=0.5)


def test_holds_circuits_readings_and_verdicts(printed):
    doc, diagnoses, _, pages, _ = printed
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


def test_findings_carry_the_same_severity_words_as_the_screens(printed):
    # one set of words for a finding's weight (fieldapp.labels.SEVERITY_WORDS), on the results
    # page and on paper alike; the sheet once printed the internal "warning" / "info"
    from fieldapp.labels import SEVERITY_WORDS
    _, diagnoses, _, pages, _ = printed
    flat = " ".join(" ".join(pages).split())
    for diagnosis in diagnoses:
        for f in diagnosis["findings"]:
            assert f"{SEVERITY_WORDS[f['severity']].upper()}" in flat
    assert "WARNING" not in flat and "INFO:" not in flat and "INFO ·" not in flat


def test_every_page_has_cautions_and_its_number(printed):
    pages = printed[3]
    for number, text in enumerate(pages, start=1):
        flat = " ".join(text.split())
        assert f"Page {number} of {len(pages)}" in flat
        assert "Advice, not a certificate." in flat
        for caution in CAUTIONS:
            assert " ".join(caution.split()) in flat


def test_nothing_prints_past_the_page_margins(printed):
    laid_out = printed[4]
    for number, page in enumerate(laid_out.pages, start=1):
        frame = page._page_box
        left, top = frame.margin_left, frame.margin_top
        right, bottom = page.width - frame.margin_right, page.height - frame.margin_bottom
        for box in page_boxes(page):
            x, y = box.border_box_x(), box.border_box_y()
            where = (number, type(box).__name__, classes(box))
            assert left - 0.5 <= x and x + box.border_width() <= right + 0.5, where
            assert top - 0.5 <= y and y + box.border_height() <= bottom + 0.5, where


def test_schedule_rows_are_never_split_and_every_page_has_its_header(printed):
    doc, _, _, _, laid_out = printed
    pages_of_row: dict[int, set[int]] = {}
    schedule_pages = set()
    for number, page in enumerate(laid_out.pages, start=1):
        for table in page_boxes(page):
            if not (isinstance(table, boxes.TableBox) and "schedule" in classes(table)):
                continue
            schedule_pages.add(number)
            groups = table.children
            assert groups[0].is_header, f"page {number}: schedule without its header row"
            for group in groups[1:]:
                for row in group.children:
                    pages_of_row.setdefault(id(row.element), set()).add(number)
    outlets = sum(len(rec["outlets"]) for rec in doc["circuits"])
    assert len(pages_of_row) == outlets
    assert all(len(on) == 1 for on in pages_of_row.values())
    if outlets >= LONG_RING_OUTLETS:
        # the long ring's schedule really does run over a page break
        assert len(schedule_pages) >= 2


def drawn_names(picture) -> dict[str, set[str]]:
    """Per label, the names its symbols carry in the ring picture (ring and key)."""
    drawn: dict[str, set[str]] = {}
    for group in BeautifulSoup(str(picture), "html.parser").find_all("g"):
        title, text = group.find("title"), group.find("text")
        if title is not None and text is not None:
            drawn.setdefault(title.get_text(), set()).add(text.get_text())
    return drawn


def printed_svg(uri: str) -> str:
    """The printed sketch's SVG from its data URI."""
    prefix = "data:image/svg+xml;base64,"
    assert uri.startswith(prefix)
    return base64.b64decode(uri[len(prefix):]).decode()


def test_outlets_carry_the_ring_pictures_names(printed):
    doc, diagnoses, _, pages, _ = printed
    screen = sheet_context(doc, diagnoses, PEOPLE)
    paper = sheet_context(doc, diagnoses, PEOPLE, drawing="print")
    flat = " ".join(" ".join(pages).split())
    for c, p, diagnosis in zip(screen["circuits"], paper["circuits"], diagnoses, strict=True):
        rec = doc["circuits"][c["index"] - 1]
        # one name per outlet: the id it has in the record, as every screen names it
        names = {o["id"]: o["n"] for o in c["outlets"]}
        assert names == {o["id"]: o["id"] for o in rec["outlets"]}
        drawn = drawn_names(c["picture"])
        for o in c["outlets"]:
            assert drawn[o["label"] or o["id"]] == {o["n"]}, o["id"]
        # the printed sketch carries the same names, without the screen's tooltips
        svg = printed_svg(p["sketch"])
        texts = {t.get_text() for t in BeautifulSoup(svg, "html.parser").find_all("text")}
        assert set(names.values()) <= texts
        assert "<title>" not in svg and p["picture"] == "" and c["sketch"] == ""
        labels = {o["id"]: o["label"] for o in rec["outlets"]}
        for o, outlet in zip(c["outlets"], rec["outlets"], strict=True):
            if outlet["spur_from"]:
                parent = outlet["spur_from"]
                assert o["fed"] == f"spur from {outlet_name(parent, labels[parent])}"
        for finding, words in zip(diagnosis["findings"], c["findings"], strict=True):
            for oid in finding["outlets"]:
                assert outlet_name(oid, labels[oid]) in words["outlets"]
        assert f"{c['index']}. {c['reference']}" in flat  # the overview on page 1


def test_one_drawing_per_circuit(monkeypatch):
    from fieldapp.sheets import context

    calls = []
    real = context.ring_picture
    monkeypatch.setattr(context, "ring_picture",
                        lambda d, **kw: calls.append(kw) or real(d, **kw))
    doc = as_job_document(HANDMADE)
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    sheet_html(doc, diagnoses, PEOPLE)
    assert calls == [{"key": False}] * len(doc["circuits"])


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
    circuits_failing = sum(c["summary"]["result"] == "FAIL" for c in ctx["circuits"])
    assert sheet_html(doc, diagnoses, PEOPLE).count('class="fail">FAIL<') == (
        failing + circuits_failing)


def test_the_circuits_zs_result_is_the_diagnosis_own():
    # A measured Zs of 5.00 Ω at one outlet is far over 1.10 Ω, the measured-value limit of a
    # 32 A type B breaker (BS 7671:2018 Table 41.3 1.37 Ω x 80 %, IET On-Site Guide rule of
    # thumb): the diagnosis fails the circuit (circuit.zs_ok) and the sheet says so in words,
    # though every predicted Zs on it is within the limit.
    doc = as_job_document(HANDMADE)
    doc["circuits"][0]["outlets"][0]["zs_measured"] = 5.0
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    assert diagnoses[0]["circuit"]["zs_ok"] is False
    ctx = sheet_context(doc, diagnoses, PEOPLE)
    for circuit, diagnosis in zip(ctx["circuits"], diagnoses, strict=True):
        ok = diagnosis["circuit"]["zs_ok"]
        assert circuit["summary"]["result"] == {True: "pass", False: "FAIL"}.get(ok, "not proved")


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


def test_a_reading_taken_without_a_band_is_not_called_missing():
    # r2 is OL end to end, so step 3 has no expected (r1 + r2) / 4 to be checked against
    # (three-step ring test, common practice): the step 3 readings were taken all the same.
    doc = as_job_document(DEMOS["03-open-cpc.json"])
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    circuit = sheet_context(doc, diagnoses, PEOPLE)["circuits"][0]
    assert {o["le_check"] for o in circuit["outlets"]} == {"no band"}
    assert {o["ln_check"] for o in circuit["outlets"]} == {"in band"}
    assert circuit["expected"]["le_known"] is False
    html = sheet_html(doc, diagnoses, PEOPLE)
    assert "not known until r1 and r2 are in" in html and "expected about —" not in html


def test_an_outlet_over_its_limit_fails_the_circuit_even_without_a_circuit_zs():
    doc = as_job_document(HANDMADE)
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    part_done = sheet_context(doc, diagnoses, PEOPLE)["circuits"][1]
    by_id = {o["id"]: o for o in part_done["outlets"]}
    assert part_done["summary"]["zs"] == "—"
    assert by_id["b"]["result"] == "FAIL" and by_id["b"]["named"] == "FAULT"
    assert by_id["a"]["result"] == "not proved"
    assert part_done["summary"]["result"] == "FAIL"
    hall = outlet_name('b', by_id['b']['label'])
    assert part_done["zs_line"] == f"over the limit or open at {hall}"
    # the safety ticks are printed as recorded: locked off was not ticked on this circuit
    assert dict(part_done["details"])["Isolated / locked off / proved dead"] == "yes / NO / yes"


def test_a_zs_pass_on_a_faulty_ring_says_it_covers_zs_only():
    doc = as_job_document(DEMOS["02-bridged-ring.json"])
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    bridged = sheet_context(doc, diagnoses, PEOPLE)["circuits"][0]
    assert bridged["verdict"] == "Investigate" and bridged["summary"]["result"] == "pass"
    assert "not satisfactory until the findings below are resolved" in bridged["zs_only"]
    assert bridged["zs_only"] in sheet_html(doc, diagnoses, PEOPLE)
    # a record without its safety block: the sheet says so rather than printing NO
    del doc["circuits"][0]["circuit"]["safety"]
    unknown = sheet_context(doc, diagnoses, PEOPLE)["circuits"][0]
    assert dict(unknown["details"])["Isolated / locked off / proved dead"] == "not recorded"
    healthy = as_job_document(DEMOS["01-healthy-ring-with-spurs.json"])
    sound = sheet_context(healthy, [diagnose(r) for r in healthy["circuits"]], PEOPLE)
    assert sound["circuits"][0]["zs_only"] == ""


def test_the_ring_picture_stays_with_its_circuit(printed):
    """No page holds a drawing alone: the picture sits on the page that starts its circuit,
    beside the circuit's details."""
    doc, _, _, _, laid_out = printed
    pictures = 0
    for number, page in enumerate(laid_out.pages, start=1):
        found = list(page_boxes(page))
        images = [b for b in found if "sketch" in classes(b)]
        if not images:
            continue
        pictures += len(images)
        headings = {id(b.element) for b in found if getattr(b, "element_tag", "") == "h2"}
        assert len(images) == len(headings) == 1, number
        tables = [b for b in found if isinstance(b, boxes.TableBox)]
        assert tables, f"page {number}: the picture without the circuit's figures"
    assert pictures == len(doc["circuits"])


def test_signoff_instrument_and_signature_lines_are_printed():
    doc = as_job_document(HANDMADE)
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    people = {**PEOPLE, "instrument_model": "Acme MFT-9", "instrument_serial": "SN 40417",
              "submit_reason": "Client away; cpc repair booked.",
              "approve_reason": "Remedial work ordered as WO-17."}
    laid_out = sheet_document(doc, diagnoses, people)
    first = " ".join(pypdf.PdfReader(io.BytesIO(laid_out.write_pdf())).pages[0]
                     .extract_text().split())
    assert "Test instrument Acme MFT-9, serial no. SN 40417" in first
    # the problems of the open cpc circuit, and who went on despite them, and why
    assert "DB1/5" in first and "locked off not ticked" in first
    assert ("Submitted with these problems by Morwenna Tregear on 27 Nov 2026 16:02 UTC. "
            "Reason given: Client away; cpc repair booked.") in first
    assert ("Approved with these problems by Idris Calloway on 28 Nov 2026 08:30 UTC. "
            "Reason given: Remedial work ordered as WO-17.") in first
    # one line each for the tester and the reviewer: name, date, and room to sign
    assert "Tester Morwenna Tregear 27 Nov 2026" in first
    assert "Reviewer Idris Calloway 28 Nov 2026" in first
    rows = [b for page in laid_out.pages for b in page_boxes(page)
            if "sigline" in classes(b)]
    assert len(rows) == 2 and all(row.height >= 10 * 72 / 25.4 - 0.5 for row in rows)
    # nothing recorded: the sheet says so rather than leaving a blank
    bare = sheet_context(doc, diagnoses, {})
    assert bare["instrument"] == "not recorded"
    assert bare["signoff"]["reasons"] == [] and [s["name"] for s in bare["signatures"]] == [
        "", ""]


def test_a_sound_job_prints_no_problems():
    doc = as_job_document(DEMOS["01-healthy-ring-with-spurs.json"])
    for rec in doc["circuits"]:
        rec["circuit"]["safety"] = {"isolated": True, "locked_off": True, "proved_dead": True,
                                    "confirmed_by": "Morwenna Tregear",
                                    "confirmed_at": "2026-11-27T09:00:00"}
    diagnoses = [diagnose(rec) for rec in doc["circuits"]]
    assert {d["verdict"] for d in diagnoses} == {"satisfactory"}
    ctx = sheet_context(doc, diagnoses, PEOPLE)
    assert ctx["signoff"]["problems"] == []
    assert "No problems found" in sheet_html(doc, diagnoses, PEOPLE)
