"""Sizes and concurrency: board-sized limits on every path, a bounded request, and SQLite in
WAL mode where readings saved during a large import all succeed."""

from __future__ import annotations

import threading

import pytest
import sqlalchemy as sa

from fieldapp import limits


def _key(i: int) -> str:
    key = ""
    while True:
        key = chr(97 + i % 26) + key
        i = i // 26 - 1
        if i < 0:
            return key


def big_doc(circuits: int, outlets: int, reference: str = "BIG-1") -> dict:
    """A job of sound rings with invented readings (common practice: ~0.25 Ω L–N)."""
    return {"format": "ringtest/1", "job": {"reference": reference, "site": "1 Long Row"},
            "circuits": [{
                "circuit": {"reference": f"DB1/{c + 1}", "ocpd": {
                    "standard": "BS EN 60898", "curve": "B", "rating_a": 32},
                    "ze_ohm": 0.35, "earthing": "TN-C-S"},
                "end_to_end": {"r1": 0.5, "rn": 0.5, "r2": 0.82},
                "outlets": [{"id": _key(i), "label": f"Socket {i}", "ln": 0.25, "le": 0.4}
                            for i in range(outlets)]} for c in range(circuits)]}


def counts(app) -> dict[str, int]:
    from fieldapp.extensions import db

    with app.app_context():
        return {t: db.session.scalar(sa.text(f'SELECT count(*) FROM "{t}"'))
                for t in ("job", "circuit", "outlet", "change_log")}


@pytest.mark.parametrize("circuits, outlets, error", [
    (limits.MAX_CIRCUITS_PER_JOB + 1, 1, "circuits: at most 24 circuits in one job"),
    (1, limits.MAX_OUTLETS_PER_CIRCUIT + 1,
     "circuits[0].outlets: at most 60 outlets on one circuit"),
    (7, 60, "circuits: at most 400 outlets in one job, this file has 420"),
])
def test_an_import_over_the_board_limits_is_refused(app, tester, circuits, outlets, error):
    before = counts(app)
    response = tester.post("/api/jobs/import", json=big_doc(circuits, outlets))
    assert response.status_code == 422
    assert error in response.get_json()["errors"]
    assert counts(app) == before


def test_a_job_at_the_limits_imports_and_exports_within_the_size_limit(app, tester):
    response = tester.post("/api/jobs/import", json=big_doc(limits.MAX_CIRCUITS_PER_JOB, 5))
    assert response.status_code == 201
    exported = tester.get(f"/jobs/{response.get_json()['job_id']}/export.json")
    assert len(exported.data) < limits.MAX_DOCUMENT_BYTES
    assert counts(app)["circuit"] == limits.MAX_CIRCUITS_PER_JOB


def test_the_forms_stop_at_the_same_limits(app, tester, make_circuit, monkeypatch):
    from fieldapp.extensions import db
    from fieldapp.models import Circuit, Outlet

    monkeypatch.setattr(limits, "MAX_OUTLETS_PER_CIRCUIT", 2)
    monkeypatch.setattr(limits, "MAX_OUTLETS_PER_JOB", 2)
    monkeypatch.setattr(limits, "MAX_CIRCUITS_PER_JOB", 1)
    cid = make_circuit(outlets=[{"label": "a"}, {"label": "b"}])
    response = tester.post(f"/circuits/{cid}/outlets", data={"label": "c",
                                                              "kind": "twin_socket"})
    assert response.status_code in (302, 409, 422)
    with app.app_context():
        assert db.session.scalar(sa.select(sa.func.count(Outlet.id)).where(
            Outlet.circuit_id == cid)) == 2
        job_id = db.session.get(Circuit, cid).job_id
    page = tester.post(f"/jobs/{job_id}/circuits/new", data={"board": "DB1", "way": "9"},
                       follow_redirects=True)
    assert "at most 1 circuits" in page.get_data(as_text=True)
    assert counts(app)["circuit"] == 1


@pytest.mark.parametrize("route", ["/api/jobs/import", "/jobs/import"])
def test_a_request_over_the_size_limit_is_a_413(app, tester, route):
    before = counts(app)
    body = b"{" + b" " * (limits.MAX_CONTENT_LENGTH + 10) + b"}"
    response = tester.post(route, data=body, content_type="application/json")
    assert response.status_code == 413
    assert counts(app) == before


@pytest.mark.parametrize("notes, status", [("n" * 4000, 302), ("n" * 4001, 422)])
def test_job_notes_are_capped_on_the_form_as_on_import(app, tester, make_circuit, notes,
                                                       status):
    make_circuit()
    response = tester.post("/jobs/1/edit", data={"reference": "T-1", "site": "1 Test Row",
                                                 "notes": notes, "tester_id": 0})
    assert response.status_code == status


def test_sqlite_runs_in_wal_mode_with_a_busy_timeout(app):
    from fieldapp.extensions import db
    from fieldapp.security import SQLITE_BUSY_SECONDS

    with app.app_context():
        with db.engine.connect() as conn:
            assert conn.exec_driver_sql("PRAGMA journal_mode").scalar() == "wal"
            assert conn.exec_driver_sql("PRAGMA busy_timeout").scalar() == (
                SQLITE_BUSY_SECONDS * 1000)


def test_saves_during_a_large_import_all_succeed(app, make_circuit, login):
    """Three phones save readings while one big job is imported: no save fails."""
    cids = [make_circuit(outlets=[{"label": "Hall"}]) for _ in range(3)]
    doc = big_doc(10, 40, "BIG-LOAD")  # the largest job allowed: 400 outlets
    results: dict[str, list] = {"import": [], "saves": []}
    start = threading.Barrier(4)

    def importer():
        client = app.test_client()
        login(client, "test")
        start.wait()
        results["import"].append(client.post("/api/jobs/import", json=doc).status_code)

    def phone(n: int, cid: int):
        client = app.test_client()
        login(client, "appr")
        start.wait()
        for i in range(15):
            response = client.post(f"/api/circuits/{cid}/readings", json={
                "step": "ln", "outlet": "a", "value": f"0.{20 + i}",
                "client_id": f"phone{n}-save-{i:04d}"})
            results["saves"].append((response.status_code, cid, f"0.{20 + i}"))

    threads = [threading.Thread(target=importer)] + [
        threading.Thread(target=phone, args=(n, cid)) for n, cid in enumerate(cids)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(timeout=120)
    assert results["import"] == [201]
    assert [s for s, _, _ in results["saves"]] == [200] * 45
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog, Outlet

    with app.app_context():
        for cid in cids:  # every save stored once, the last one kept
            outlet = db.session.scalar(sa.select(Outlet).where(Outlet.circuit_id == cid))
            assert outlet.ln == "0.34"
        logged = db.session.scalar(sa.select(sa.func.count(ChangeLog.id)).where(
            ChangeLog.client_id.like("phone%")))
        assert logged == 45
    assert counts(app)["outlet"] == 3 + 10 * 40
