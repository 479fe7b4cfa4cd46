"""No input crashes the app: hostile documents, numbers, nesting and ids get a clear answer
(JSON 400/422 with errors, the form with its message, 404 for a URL) and never a 500 or a
partial write. Generated documents (hypothesis) back up the named cases."""

from __future__ import annotations

import copy
import io
import itertools
import json
from pathlib import Path

import pytest
import sqlalchemy as sa
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

HANDMADE = Path(__file__).parent / "data" / "transfer_handmade.json"
TABLES = ("job", "circuit", "outlet", "change_log")
BIG = 2**63
SERIAL = itertools.count(1)


def counts(app) -> dict[str, int]:
    from fieldapp.extensions import db

    with app.app_context():
        return {t: db.session.scalar(sa.text(f'SELECT count(*) FROM "{t}"')) for t in TABLES}


def doc():
    return json.loads(HANDMADE.read_text())


def nested(depth: int, kind: str = "list") -> str:
    return ("[" * depth + "]" * depth) if kind == "list" else ('{"a":' * depth + "1"
                                                              + "}" * depth)


def _without(path):
    d = doc()
    target = d
    for key in path[:-1]:
        target = target[key]
    del target[path[-1]]
    return d


# ------------------------------------------------------------------ the named cases


HOSTILE_IMPORTS = [
    ("outlet without spur_from", _without(("circuits", 0, "outlets", 0, "spur_from")), 201),
    ("circuit without outlets", _without(("circuits", 1, "outlets")), 201),
    ("deep lists", nested(100_000), 422),
    ("deep objects", nested(50_000, "object"), 422),
    ("moderately deep", nested(500), 422),
    ("5000-digit integer", '{"format": "ringtest/1", "job": ' + "9" * 5000 + "}", 422),
    ("NaN", '{"format": NaN}', 422),
]


@pytest.mark.parametrize("raw, status", [(d, s) for _, d, s in HOSTILE_IMPORTS],
                         ids=[n for n, _, _ in HOSTILE_IMPORTS])
@pytest.mark.parametrize("route", ["api", "form"])
def test_hostile_imports_get_an_answer(app, tester, raw, status, route):
    body = (raw if isinstance(raw, str) else json.dumps(raw)).encode()
    before = counts(app)
    if route == "api":
        response = tester.post("/api/jobs/import", data=body, content_type="application/json")
        assert response.status_code == status, response.get_data(as_text=True)[:300]
        if status == 422:
            assert response.get_json()["errors"][0].startswith("document: ")
    else:
        response = tester.post("/jobs/import", data={"document": (io.BytesIO(body), "j.json")},
                               content_type="multipart/form-data")
        assert response.status_code == (302 if status == 201 else 422)
        if status == 422:
            assert "document: " in response.get_data(as_text=True)
    if status == 422:
        assert counts(app) == before


@pytest.mark.parametrize("value, field", [
    (10**400, "circuits[0].outlets[0].ln"),
    ("1" * 400, "circuits[0].outlets[0].ln"),
    (-(10**400), "circuits[0].outlets[0].ln"),
])
def test_huge_readings_in_an_import_name_the_field(app, tester, value, field):
    d = doc()
    d["circuits"][0]["outlets"][0]["ln"] = value
    before = counts(app)
    response = tester.post("/api/jobs/import", json=d)
    assert response.status_code == 422
    assert any(e.startswith(field) for e in response.get_json()["errors"])
    assert counts(app) == before


@pytest.mark.parametrize("body", [
    {"step": "r1", "value": 10**400, "client_id": "huge-int-0001"},
    {"step": "r1", "value": "9" * 400, "client_id": "huge-txt-0001"},
    {"step": "r1", "value": [[[[0.5]]]], "client_id": "nested-v-0001"},
    {"step": "r1", "value": {"a": 1}, "client_id": "object-v-0001"},
    {"step": "r1", "value": True, "client_id": "bool-val-0001"},
])
def test_hostile_readings_are_refused_on_the_value(app, tester, make_circuit, body):
    cid = make_circuit()
    before = counts(app)
    response = tester.post(f"/api/circuits/{cid}/readings", json=body)
    assert response.status_code == 400
    assert "value" in response.get_json()["errors"]
    assert counts(app) == before


@pytest.mark.parametrize("raw", [nested(100_000), nested(40), nested(50_000, "object"),
                                 '{"step": "r1", "value": ' + "9" * 5000 + "}"])
def test_hostile_reading_bodies_are_a_400(app, tester, make_circuit, raw):
    cid = make_circuit()
    before = counts(app)
    response = tester.post(f"/api/circuits/{cid}/readings", data=raw,
                           content_type="application/json")
    assert response.status_code == 400
    assert "errors" in response.get_json()
    assert counts(app) == before


def test_hostile_reading_on_the_form_shows_the_message(app, tester, make_circuit, parse):
    cid = make_circuit()
    response = tester.post(f"/circuits/{cid}/test/reading", data={
        "field": "r1", "value": "9" * 400, "client_id": "form-huge-0001", "save": "Save"})
    assert response.status_code == 422
    assert parse(response).select_one(".error") is not None
    with app.app_context():
        from fieldapp.extensions import db
        from fieldapp.models import Circuit

        assert db.session.get(Circuit, cid).r1 is None


ID_URLS = ["/jobs/{n}", "/jobs/{n}/edit", "/jobs/{n}/circuits/new", "/jobs/circuits/{n}/edit",
           "/circuits/{n}/test", "/circuits/{n}/test/safety", "/circuits/{n}/test/e2e",
           "/circuits/{n}/results", "/circuits/{n}/history", "/circuits/{n}/outlets/a/edit",
           "/review/jobs/{n}", "/review/jobs/{n}/history", "/jobs/{n}/export.json",
           "/jobs/{n}/sheet.pdf", "/api/circuits/{n}", "/users/{n}"]


@pytest.mark.parametrize("url", ID_URLS)
@pytest.mark.parametrize("n", [str(BIG), str(BIG * 10**6), "9" * 5000, str(2**31)],
                         ids=["2^63", "2^63e6", "5000 digits", "2^31"])
def test_any_huge_id_in_a_url_is_a_404(app, logged_in, url, n):
    who = "super" if url.startswith(("/review", "/users")) else "test"
    response = logged_in(who).get(url.format(n=n))
    assert response.status_code == 404


@pytest.mark.parametrize("n", [BIG, 10**30 - 1])
def test_huge_ids_on_posts_and_query_strings_are_404s(app, tester, supervisor, make_circuit,
                                                      n):
    cid = make_circuit()
    assert tester.post(f"/api/circuits/{n}/readings", json={
        "step": "r1", "value": 0.5, "client_id": "big-id-00001"}).status_code == 404
    assert tester.post(f"/jobs/{n}/submit").status_code == 404
    with app.app_context():
        from fieldapp.extensions import db
        from fieldapp.models import Circuit

        job_id = db.session.get(Circuit, cid).job_id
    page = supervisor.get(f"/review/jobs/{job_id}/history?circuit={n}&outlet={n}")
    assert page.status_code == 200


# ------------------------------------------------------------------ 500s are handled


@pytest.fixture
def failing_app(make_app, monkeypatch):
    app = make_app(PROPAGATE_EXCEPTIONS=False)
    from fieldapp import records

    def boom(*_args, **_kwargs):
        raise RuntimeError("disk on fire")

    monkeypatch.setattr(records, "circuit_record", boom)
    return app


def test_a_500_rolls_back_and_answers_json_or_html(failing_app, login, make_circuit, caplog):
    client = failing_app.test_client()
    login(client, "test")
    with failing_app.app_context():
        from fieldapp import changes
        from fieldapp.extensions import db
        from fieldapp.models import Circuit, Job, User

        user = db.session.scalar(sa.select(User).where(User.username == "test"))
        who = changes.Actor(user.id, "pytest")
        job = changes.create(Job, {"reference": "X-1", "site": "x", "tester_id": user.id},
                             who)
        cid = changes.create(Circuit, {"job_id": job.id, "ocpd_curve": "B"}, who).id
        db.session.commit()
        job_id = job.id
    api = client.get(f"/api/circuits/{cid}")
    assert api.status_code == 500
    assert api.get_json() == {"errors": {"_server": [api.get_json()["errors"]["_server"][0]]}}
    assert "Traceback" not in api.get_data(as_text=True)
    page = client.get(f"/jobs/{job_id}/export.json", headers={"Accept": "text/html"})
    assert page.status_code == 500 and "Something went wrong" in page.get_data(as_text=True)
    assert "disk on fire" not in page.get_data(as_text=True)
    assert client.get("/jobs/").status_code == 200  # the session was rolled back, usable


def test_refused_is_handled_app_wide_as_json_or_html(app, tester, make_circuit, caplog):
    import logging

    from fieldapp import changes

    caplog.set_level(logging.INFO, logger="fieldapp")
    cid = make_circuit(status="approved")
    with app.test_request_context("/api/x", method="POST", json={}):
        response, status = app.handle_user_exception(changes.Refused("locked", circuit_id=cid))
    assert status == 409 and response.get_json() == {"errors": {"_state": ["locked"]}}
    reply = tester.post(f"/api/circuits/{cid}/readings", json={
        "step": "r1", "value": 0.5, "client_id": "refused-0001"})
    assert reply.status_code == 409
    assert any(f"circuit {cid}" in r.getMessage() and "refused write" in r.getMessage()
               for r in caplog.records)


# ------------------------------------------------------------------ generated documents

READING = st.one_of(
    st.none(), st.floats(allow_nan=True, allow_infinity=True), st.integers(),
    st.integers(min_value=10**300, max_value=10**500), st.text(max_size=40),
    st.sampled_from(["OL", "0,52", "0_52", "١٢", "０.５", "1e400", "-0.1", "", " "]),
    st.lists(st.floats(), max_size=2), st.booleans())
JSONISH = st.recursive(st.none() | st.booleans() | st.integers() | st.text(max_size=8),
                       lambda children: st.lists(children, max_size=3)
                       | st.dictionaries(st.text(max_size=6), children, max_size=3),
                       max_leaves=12)
MUTABLE = [("circuits", 0, "outlets", 0, "ln"), ("circuits", 0, "outlets", 2, "fuse_a"),
           ("circuits", 0, "circuit", "ocpd", "rating_a"), ("circuits", 0, "circuit", "rcd"),
           ("circuits", 1, "end_to_end", "r1"), ("circuits", 0, "outlets", 1, "spur_from"),
           ("circuits", 1, "outlets"), ("job", "notes"), ("job",), ("circuits", 0, "circuit"),
           ("circuits", 0, "outlets", 3), ("circuits", 0, "circuit", "ze_ohm")]
HYPO = settings(max_examples=40, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.function_scoped_fixture,
                                       HealthCheck.too_slow])


def _mutated(edits) -> dict:
    d = doc()
    for path, value in edits:
        target = d
        try:
            for key in path[:-1]:
                target = target[key]
            target[path[-1]] = copy.deepcopy(value)
        except (TypeError, KeyError, IndexError):
            continue  # an earlier edit replaced the parent: nothing to change there
    return d


@HYPO
@given(edits=st.lists(st.tuples(st.sampled_from(MUTABLE), st.one_of(READING, JSONISH)),
                      min_size=1, max_size=3))
def test_generated_imports_never_500_nor_write_half(app, tester, edits):
    before = counts(app)
    d = _mutated(edits)
    d["job"] = d["job"] if not isinstance(d.get("job"), dict) else {
        **d["job"], "reference": f"G-{abs(hash(json.dumps(edits, default=str))) % 10**9}"}
    response = tester.post("/api/jobs/import", data=json.dumps(d, default=str),
                           content_type="application/json")
    assert response.status_code in (201, 422), response.get_data(as_text=True)[:400]
    after = counts(app)
    if response.status_code == 422:
        assert after == before
        assert all(isinstance(e, str) and ": " in e for e in response.get_json()["errors"])
    else:
        assert after["job"] == before["job"] + 1


@HYPO
@given(value=READING, step=st.sampled_from(["r1", "rn", "r2", "ln", "le", "xx"]),
       outlet=st.one_of(st.none(), st.sampled_from(["a", "zz"]), st.integers()))
def test_generated_readings_never_500(app, tester, make_circuit, value, step, outlet):
    cid = make_circuit(outlets=[{"label": "Hall"}])
    before = counts(app)
    body = {"step": step, "value": value, "outlet": outlet,
            "client_id": f"gen-reading-{next(SERIAL):06d}"}
    response = tester.post(f"/api/circuits/{cid}/readings",
                           data=json.dumps(body, default=str), content_type="application/json")
    assert response.status_code in (200, 400), response.get_data(as_text=True)[:400]
    if response.status_code == 400:
        assert response.get_json()["errors"]
        assert counts(app) == before
    else:
        assert counts(app)["change_log"] > before["change_log"]


def test_one_failing_diagnosis_is_logged_and_breaks_no_page(app, supervisor, make_circuit,
                                                            monkeypatch, caplog):
    import logging

    from fieldapp import records

    caplog.set_level(logging.INFO, logger="fieldapp")
    good = make_circuit(status="submitted")
    bad = make_circuit(status="submitted", description="the bad one")
    real = records.diagnoses.diagnosis_for

    def sometimes(record):
        if record["circuit"]["description"] == "the bad one":
            raise ZeroDivisionError("a bug in one diagnosis")
        return real(record)

    monkeypatch.setattr(records.diagnoses, "diagnosis_for", sometimes)
    assert supervisor.get("/review/").status_code == 200
    assert supervisor.get(f"/circuits/{bad}/results").status_code == 200
    assert supervisor.get(f"/circuits/{good}/results").status_code == 200
    failures = [r for r in caplog.records if r.levelno == logging.ERROR
                and f"diagnosis of circuit {bad} failed" in r.getMessage()]
    assert failures and failures[0].exc_info is not None
