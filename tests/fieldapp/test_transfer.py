"""JSON export and import through the app: exact round trip, history, nothing written on error."""

from __future__ import annotations

import io
import json
from pathlib import Path

import pytest
import sqlalchemy as sa
from bs4 import BeautifulSoup

from fieldapp.transfer.schemas import dump_document, load_document

ROOT = Path(__file__).resolve().parents[2]
HANDMADE = Path(__file__).parent / "data" / "transfer_handmade.json"
DEMOS = sorted((ROOT / "demo_jobs").glob("*.json"))
DOCUMENTS = [HANDMADE, *DEMOS]
TABLES = ("user", "job", "circuit", "outlet", "change_log")
TESTER = "Gethin Test-Tester"


def counts(app) -> dict[str, int]:
    from fieldapp.extensions import db

    with app.app_context():
        return {t: db.session.scalar(sa.text(f'SELECT count(*) FROM "{t}"')) for t in TABLES}


def upload(client, doc, reference: str = ""):
    raw = doc if isinstance(doc, bytes) else json.dumps(doc).encode()
    return client.post("/jobs/import", data={
        "document": (io.BytesIO(raw), "job.json"), "reference": reference},
        content_type="multipart/form-data")


def new_job_id(response) -> int:
    assert response.status_code == 302, response.get_data(as_text=True)[-2000:]
    return int(response.location.rstrip("/").rsplit("/", 1)[1])


def test_there_are_demo_jobs():
    assert DEMOS, "demo_jobs/ holds no job files"


@pytest.mark.parametrize("path", DOCUMENTS, ids=[p.name for p in DOCUMENTS])
def test_export_import_export_is_exact(make_app, login, path):
    original = json.loads(path.read_text())
    first_app, second_app = make_app(), make_app()
    first, second = first_app.test_client(), second_app.test_client()
    login(first, "test")
    login(second, "test")
    exported = first.get(f"/jobs/{new_job_id(upload(first, original))}/export.json").get_json()
    # nothing in the file is lost: the export is the file, complete, tested by the importer
    expected = dump_document(load_document(original))
    expected["job"]["tester"] = TESTER
    assert exported == expected
    again = second.get(f"/jobs/{new_job_id(upload(second, exported))}/export.json").get_json()
    assert again == exported
    assert json.dumps(again, sort_keys=True) == json.dumps(exported, sort_keys=True)


def test_import_creates_a_job_in_progress_owned_by_the_importer(app, tester):
    from fieldapp.extensions import db
    from fieldapp.models import Job

    doc = json.loads(HANDMADE.read_text())
    response = tester.post("/api/jobs/import", json=doc)
    assert response.status_code == 201
    body = response.get_json()
    assert body["reference"] == "HM-0417" and response.headers["Location"] == body["url"]
    with app.app_context():
        job = db.session.get(Job, body["job_id"])
        assert job.status == "in_progress"
        assert job.tester.username == "test" and job.creator.username == "test"
        first = job.circuits[0]
        # the file's ticks are its statement, never a confirmation made here
        assert (first.safety_isolated, first.safety_locked_off, first.safety_proved_dead) == (
            False, False, False)
        assert first.safety_confirmed_by_id is None
        assert json.loads(first.imported_safety)["isolated"] is True
        assert first.imported_by.username == "test" and first.imported_at is not None
        assert (first.board, first.way) == ("DB1", "4")
        assert [o.key for o in first.outlets] == ["a", "b", "c", "d"]
        assert job.circuits[1].r2 == "OL" and job.circuits[1].outlets[0].le is None


def test_every_imported_value_is_logged_from_nothing(app, tester):
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog, Circuit, Outlet

    doc = json.loads(HANDMADE.read_text())
    jid = tester.post("/api/jobs/import", json=doc).get_json()["job_id"]
    with app.app_context():
        circuits = db.session.scalars(sa.select(Circuit).where(Circuit.job_id == jid)).all()
        cids = [c.id for c in circuits]
        rows = db.session.scalars(sa.select(ChangeLog).where(sa.or_(
            ChangeLog.circuit_id.in_(cids),
            (ChangeLog.entity == "job") & (ChangeLog.entity_id == jid)))).all()
        assert rows and all(r.old_value is None for r in rows)
        assert {r.user.username for r in rows} == {"test"}
        assert {r.device for r in rows} == {"imported from a file"}  # each marked imported
        logged = {(r.entity, r.entity_id, r.field): r.new_value for r in rows}
        for circuit, rec in zip(circuits, doc["circuits"], strict=True):
            for name, value in rec["end_to_end"].items():
                assert logged.get(("circuit", circuit.id, name)) == (
                    None if value is None else ("OL" if value == "OL" else repr(value)))
            assert ("circuit", circuit.id, "safety_isolated") not in logged
            assert json.loads(logged[("circuit", circuit.id, "imported_safety")]) == {
                **rec["circuit"]["safety"]}
            outlets = db.session.scalars(sa.select(Outlet).where(
                Outlet.circuit_id == circuit.id).order_by(Outlet.position)).all()
            for outlet, spec in zip(outlets, rec["outlets"], strict=True):
                assert logged[("outlet", outlet.id, "label")] == spec["label"]
                for name in ("ln", "le"):
                    value = spec[name]
                    assert logged.get(("outlet", outlet.id, name)) == (
                        None if value is None else ("OL" if value == "OL" else repr(value)))
        assert logged[("job", jid, "site")] == doc["job"]["site"]


# ---------------------------------------------------------------- refused imports


def _doc():
    return json.loads(HANDMADE.read_text())


def _edit(**changes):
    """A copy of the hand-made document with dotted-path changes applied."""
    doc = _doc()
    for path, value in changes.items():
        keys = [int(k) if k.isdigit() else k for k in path.split("__")]
        target = doc
        for key in keys[:-1]:
            target = target[key]
        target[keys[-1]] = value
    return doc


BAD = [
    ("not json", b"{ this is not json", "document: not valid JSON"),
    ("empty file", b"", "document: not valid JSON"),
    ("not utf-8", "ring é".encode("latin-1"), "document: not UTF-8 text"),
    ("a list", b"[1, 2]", "document: expected an object"),
    ("text reading", _edit(circuits__0__outlets__3__ln="abc"),
     "circuits[0].outlets[3].ln: not a number"),
    ("negative reading", _edit(circuits__1__end_to_end__r1=-0.5),
     "circuits[1].end_to_end.r1: -0.5 is below"),
    ("absurd reading", _edit(circuits__0__outlets__0__le=1200),
     "circuits[0].outlets[0].le: 1200 is above"),
    ("unknown field", _edit(circuits__0__outlets__1__colour="red"),
     "circuits[0].outlets[1].colour: unknown field"),
    ("duplicate outlet", _edit(circuits__0__outlets__1__id="a"),
     "circuits[0].outlets[1].id: duplicate id 'a'"),
    ("spur from nowhere", _edit(circuits__0__outlets__2__spur_from="q"),
     "circuits[0].outlets[2].spur_from: no outlet with id 'q'"),
    ("not a fuse", _edit(circuits__0__outlets__2__fuse_a=6),
     "circuits[0].outlets[2].fuse_a: 6 A is not a BS 1362 rating"),
    ("no site", _edit(job__site=""), "job.site: 1 to 200 characters"),
    ("other format", _edit(format="ringtest/2"), "format: must be ringtest/1"),
    ("no circuits", _edit(circuits=[]), "circuits: needs at least one circuit"),
    ("label too long", _edit(circuits__1__outlets__1__label="x" * 121),
     "circuits[1].outlets[1].label: at most 120 characters"),
]


@pytest.mark.parametrize("doc,expected", [(d, e) for _, d, e in BAD], ids=[n for n, _, _ in BAD])
@pytest.mark.parametrize("route", ["form", "api"])
def test_a_bad_file_writes_nothing_and_says_where(app, tester, parse, doc, expected, route):
    before = counts(app)
    if route == "form":
        response = upload(tester, doc)
        assert response.status_code == 422
        errors = [li.get_text() for li in parse(response).select(".errors li")]
    else:
        raw = doc if isinstance(doc, bytes) else json.dumps(doc).encode()
        response = tester.post("/api/jobs/import", data=raw, content_type="application/json")
        assert response.status_code == 422
        errors = response.get_json()["errors"]
    assert any(e.startswith(expected) for e in errors), errors
    assert counts(app) == before


def test_every_error_in_one_file_is_listed(app, tester):
    doc = _edit(circuits__0__outlets__0__ln="high", circuits__1__outlets__1__le=-2,
                job__date="yesterday")
    before = counts(app)
    errors = tester.post("/api/jobs/import", json=doc).get_json()["errors"]
    assert errors == ["job.date: not a date (YYYY-MM-DD)",
                      "circuits[0].outlets[0].ln: not a number",
                      "circuits[1].outlets[1].le: -2 is below the lowest allowed value 0"]
    assert counts(app) == before


def test_a_reference_already_here_is_refused_unless_renamed(app, tester):
    doc = _doc()
    assert tester.post("/api/jobs/import", json=doc).status_code == 201
    before = counts(app)
    errors = tester.post("/api/jobs/import", json=doc).get_json()["errors"]
    assert errors == ["job.reference: a job 'HM-0417' already exists "
                      "(import it under another reference)"]
    assert counts(app) == before
    copy_id = new_job_id(upload(tester, doc, reference="HM-0417-B"))
    assert tester.get(f"/jobs/{copy_id}/export.json").get_json()["job"]["reference"] == \
        "HM-0417-B"


def test_a_spur_before_its_feed_is_refused_with_its_path(app, tester):
    doc = _doc()
    outlets = doc["circuits"][1]["outlets"]
    outlets.insert(0, {**outlets[0], "id": "s", "label": "Spur to the porch",
                       "spur_from": "b", "ln": None, "le": None})
    before = counts(app)
    response = tester.post("/api/jobs/import", json=doc)
    assert response.status_code == 422
    assert response.get_json()["errors"] == [
        "circuits[1].outlets[0].spur_from: 'b' comes later in the list; list the outlet "
        "that feeds a spur before the spur"]
    assert counts(app) == before


def test_a_write_that_fails_half_way_is_rolled_back(app, tester, monkeypatch):
    """The first circuit is written, the second fails: nothing of the job is kept."""
    from fieldapp import importer

    real = importer.import_circuit

    def second_fails(job, record, actor, position):
        if position == 2:
            raise ValueError("circuits[1].circuit: the disk filled up")
        return real(job, record, actor, position)

    monkeypatch.setattr(importer, "import_circuit", second_fails)
    before = counts(app)
    response = tester.post("/api/jobs/import", json=_doc())
    assert response.status_code == 422
    assert response.get_json()["errors"] == ["circuits[1].circuit: the disk filled up"]
    assert counts(app) == before


# ---------------------------------------------------------------- people named in the file


def test_an_import_never_says_a_person_confirmed_safe_isolation(app, apprentice, parse):
    """An apprentice's file names the supervisor and a 2020 date: the pages, the sheet and
    the next export say it came from a file; readings need a confirmation made here."""
    doc = _doc()
    doc["job"]["tester"] = "Dana Someone-Else"
    doc["circuits"][0]["circuit"]["safety"].update(
        confirmed_by="Hywel Test-Supervisor", confirmed_at="2020-01-06T09:00:00")
    body = apprentice.post("/api/jobs/import", json=doc).get_json()
    assert body["notes"][0] == (
        "job.tester: the file names 'Dana Someone-Else'; the job is now tested by "
        "Ffion Test-Apprentice (the importer)")
    assert any("that is the file's statement, not a confirmation" in n for n in body["notes"])
    from fieldapp.extensions import db
    from fieldapp.models import Job

    with app.app_context():
        job = db.session.get(Job, body["job_id"])
        cid = job.circuits[0].id
        from fieldapp.sheets.inputs import job_inputs

        sheet_safety = job_inputs(job)["document"]["circuits"][0]["circuit"]["safety"]
    page = parse(apprentice.get(f"/circuits/{cid}/test/safety"))
    text = " ".join(page.get_text().split())
    assert "Confirmed by" not in text and "Hywel" not in text
    assert "imported from a file by Ffion Test-Apprentice at" in text
    assert "readings that came with the file were not taken in this app" in text
    assert page.select_one('input[name="isolated"]') is not None  # still to be confirmed
    assert "imported from a file by Ffion" in " ".join(
        parse(apprentice.get(f"/circuits/{cid}/results")).get_text().split())
    assert sheet_safety["isolated"] is False
    assert sheet_safety["confirmed_by"].startswith("imported from a file by Ffion")
    refused = apprentice.post(f"/api/circuits/{cid}/readings", json={
        "step": "r1", "value": "0.5", "client_id": "import-safe-0001"})
    assert refused.status_code == 409
    # the file's statement passes through an export unchanged (it is still the file's)
    exported = apprentice.get(f"/jobs/{body['job_id']}/export.json").get_json()
    assert exported["circuits"][0]["circuit"]["safety"]["confirmed_by"] == \
        "Hywel Test-Supervisor"
    # once a person here confirms, the page and the export name that person
    assert apprentice.post(f"/circuits/{cid}/test/safety", data={
        "isolated": "y", "locked_off": "y", "proved_dead": "y"}).status_code == 302
    exported = apprentice.get(f"/jobs/{body['job_id']}/export.json").get_json()
    assert exported["circuits"][0]["circuit"]["safety"]["confirmed_by"] == \
        "Ffion Test-Apprentice"
    assert "Confirmed by Ffion Test-Apprentice" in parse(
        apprentice.get(f"/circuits/{cid}/test/safety")).get_text()


# ---------------------------------------------------------------- pages and roles


def test_export_is_a_download_named_after_the_job(app, tester):
    jid = tester.post("/api/jobs/import", json=_doc()).get_json()["job_id"]
    response = tester.get(f"/jobs/{jid}/export.json?download=1")
    assert response.status_code == 200 and response.mimetype == "application/json"
    assert response.headers["Content-Disposition"] == (
        'attachment; filename="HM-0417.ringtest.json"')
    # the document keeps its own key order (not sorted), as the format describes it
    assert list(json.loads(response.data)) == ["format", "job", "circuits"]
    assert "Content-Disposition" not in tester.get(f"/jobs/{jid}/export.json").headers
    assert tester.get("/jobs/999/export.json").status_code == 404
    assert app.test_client().get(f"/jobs/{jid}/export.json").status_code == 302


def test_job_page_links_download_and_upload(app, tester, parse):
    jid = tester.post("/api/jobs/import", json=_doc()).get_json()["job_id"]
    soup = parse(tester.get(f"/jobs/{jid}"))
    hrefs = {a["href"] for a in soup.find_all("a", href=True)}
    assert f"/jobs/{jid}/export.json?download=1" in hrefs and "/jobs/import" in hrefs
    form = parse(tester.get("/jobs/import")).find("form", enctype="multipart/form-data")
    assert form.find("input", attrs={"type": "file", "name": "document"}) is not None
    assert form.find("label", attrs={"for": "document"}) is not None


def test_the_upload_form_needs_a_file(app, tester):
    before = counts(app)
    response = tester.post("/jobs/import", data={}, content_type="multipart/form-data")
    assert response.status_code == 400 and "Choose a job file." in response.get_data(
        as_text=True)
    assert counts(app) == before


@pytest.mark.parametrize("route", ["/jobs/import", "/api/jobs/import"])
def test_a_supervisor_reviews_rather_than_imports(supervisor, route):
    assert supervisor.post(route, json=_doc()).status_code == 403


def test_the_import_form_keeps_csrf(make_app, login):
    app = make_app(WTF_CSRF_ENABLED=True)
    client = app.test_client()
    page = BeautifulSoup(client.get("/login").get_data(as_text=True), "html.parser")
    token = page.find("input", attrs={"name": "csrf_token"})["value"]
    client.post("/login", data={"username": "test", "password": "correct-horse-7",
                                "csrf_token": token})
    before = counts(app)
    response = client.post("/jobs/import", data={
        "document": (io.BytesIO(json.dumps(_doc()).encode()), "job.json")},
        content_type="multipart/form-data")
    assert response.status_code == 400
    assert counts(app) == before


def test_readings_of_an_imported_circuit_are_marked_imported_in_the_history(app, tester,
                                                                           parse):
    from fieldapp.extensions import db
    from fieldapp.models import Job

    jid = tester.post("/api/jobs/import", json=_doc()).get_json()["job_id"]
    with app.app_context():
        cid = db.session.get(Job, jid).circuits[0].id
    tester.post(f"/circuits/{cid}/test/safety", data={"isolated": "y", "locked_off": "y",
                                                      "proved_dead": "y"})
    tester.post(f"/api/circuits/{cid}/readings", json={
        "step": "r1", "value": "0.53", "client_id": "after-import-01", "device": "my phone"})
    text = " ".join(parse(tester.get(f"/circuits/{cid}/history")).get_text().split())
    assert "imported from a file" in text and "my phone" in text
