"""The same app on SQLite (embedded default) and on PostgreSQL (a team's shared database).

The ``app`` fixture is parametrised here: every test below runs once on a copy of the SQLite
template and once on an empty PostgreSQL database migrated to head with the same users.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
import sqlalchemy as sa

from fieldapp.models import ChangeLog, Circuit, Job, Outlet

HANDMADE = Path(__file__).parent / "data" / "transfer_handmade.json"
TABLES = ("user", "job", "circuit", "outlet", "change_log")


def copy_users(template_db, url: str) -> None:
    """The session's test users (with their password hashes) into another database."""
    source = sa.create_engine(f"sqlite:///{template_db}")
    target = sa.create_engine(url)
    try:
        with source.connect() as src:
            users = [dict(r._mapping) for r in src.execute(sa.text(
                'SELECT id, username, name, password_hash, role FROM "user" ORDER BY id'))]
        with target.begin() as dst:
            dst.execute(sa.text('INSERT INTO "user" (id, username, name, password_hash, role) '
                                "VALUES (:id, :username, :name, :password_hash, :role)"), users)
            if target.dialect.name == "postgresql":  # explicit ids: move the sequence on
                dst.execute(sa.text("SELECT setval(pg_get_serial_sequence('\"user\"', 'id'), "
                                    'max(id)) FROM "user"'))
    finally:
        source.dispose()
        target.dispose()


@pytest.fixture(params=["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)])
def app(request, make_app, template_db):
    if request.param == "sqlite":
        yield make_app()
        return
    from fieldapp import migrations
    from fieldapp.extensions import db

    url = request.getfixturevalue("pg_cluster").new_database()
    built = make_app(SQLALCHEMY_DATABASE_URI=url)
    with built.app_context():
        migrations.upgrade(db.engine)
    copy_users(template_db, url)
    yield built
    with built.app_context():
        db.session.remove()  # an open transaction would make drop_all wait for its locks
        db.drop_all()
        db.engine.dispose()


def counts(app) -> dict[str, int]:
    from fieldapp.extensions import db

    with app.app_context():
        return {t: db.session.scalar(sa.text(f'SELECT count(*) FROM "{t}"')) for t in TABLES}


def test_runs_on_the_intended_database(app, request):
    from fieldapp.extensions import db

    with app.app_context():
        expected = "postgresql" if "postgres" in request.node.callspec.id else "sqlite"
        assert db.engine.dialect.name == expected


def test_create_edit_and_history(app, tester, make_circuit):
    from fieldapp.extensions import db

    cid = make_circuit(e2e={"r1": 0.52, "rn": 0.52, "r2": 0.85},
                       outlets=[{"label": "Kitchen", "ln": 0.26, "le": 0.34}])
    with app.app_context():
        outlet = db.session.scalar(sa.select(Outlet).where(Outlet.circuit_id == cid))
        job_id = db.session.get(Circuit, cid).job_id
        outlet_id = outlet.id
    # a correction through the JSON reading endpoint, as the page script sends it
    response = tester.post(f"/api/circuits/{cid}/readings", json={
        "step": "le", "outlet": "a", "value": "0,36", "client_id": "storage-fix-0001",
        "device": "phone of the tester"})
    assert response.status_code == 200, response.get_data(as_text=True)
    with app.app_context():
        rows = list(db.session.scalars(sa.select(ChangeLog).where(
            ChangeLog.entity == "outlet", ChangeLog.entity_id == outlet_id,
            ChangeLog.field == "le").order_by(ChangeLog.id)))
    assert [(r.old_value, r.new_value) for r in rows] == [(None, "0.34"), ("0.34", "0.36")]
    assert rows[-1].device == "phone of the tester"
    page = tester.get(f"/review/jobs/{job_id}/history?outlet={outlet_id}&field=le")
    text = " ".join(page.get_data(as_text=True).split())
    assert page.status_code == 200
    assert '<span class="old">0.34</span> → <strong class="new">0.36</strong>' in text


def test_submit_approve_lock_and_reopen(app, tester, supervisor, make_circuit):
    from fieldapp.extensions import db

    cid = make_circuit(e2e={"r1": 0.52, "rn": 0.52, "r2": 0.85},
                       outlets=[{"label": "Hall", "ln": 0.26, "le": 0.34}])
    with app.app_context():
        job_id = db.session.get(Circuit, cid).job_id
    assert tester.post(f"/jobs/{job_id}/submit").status_code == 302
    assert supervisor.post(f"/review/jobs/{job_id}/approve", data={}).status_code == 302
    with app.app_context():
        job = db.session.get(Job, job_id)
        assert job.status == "approved" and job.approved_by.username == "super"
        assert job.approved_at is not None
    before = counts(app)
    refused = tester.post(f"/api/circuits/{cid}/readings", json={
        "step": "ln", "outlet": "a", "value": 0.27, "client_id": "storage-late-0001"})
    assert refused.status_code in (403, 409, 422)
    assert counts(app) == before
    assert supervisor.post(f"/review/jobs/{job_id}/reopen",
                           data={"reason": "Hall socket reading to be repeated"}).status_code == 302
    with app.app_context():
        job = db.session.get(Job, job_id)
        assert (job.status, job.approved_by_id) == ("returned", None)
        statuses = [r.new_value for r in db.session.scalars(sa.select(ChangeLog).where(
            ChangeLog.entity == "job", ChangeLog.entity_id == job_id,
            ChangeLog.field == "status").order_by(ChangeLog.id))]
    assert statuses == ["in_progress", "submitted", "approved", "returned"]


def test_import_round_trip_and_refusal(app, tester):
    doc = json.loads(HANDMADE.read_text())
    response = tester.post("/api/jobs/import", json=doc)
    assert response.status_code == 201, response.get_data(as_text=True)
    job_id = response.get_json()["job_id"]
    exported = tester.get(f"/jobs/{job_id}/export.json").get_json()
    assert exported == {**doc, "job": {**doc["job"], "tester": "Gethin Test-Tester"}}
    before = counts(app)
    again = tester.post("/api/jobs/import", json=exported)  # same reference: refused whole
    assert again.status_code == 422
    assert any(e.startswith("job.reference:") for e in again.get_json()["errors"])
    long_label = json.loads(json.dumps(exported))
    long_label["job"]["reference"] = "HM-0418"
    long_label["circuits"][1]["outlets"][0]["label"] = "x" * 121  # over the column's 120
    assert tester.post("/api/jobs/import", json=long_label).status_code == 422
    assert counts(app) == before


def test_review_list_filters_and_search(app, supervisor, make_circuit):
    make_circuit(status="submitted")
    make_circuit()
    page = supervisor.get("/review/?status=submitted&q=test+row")
    text = page.get_data(as_text=True)
    assert page.status_code == 200
    assert "T-1" in text and "T-2" not in text
    assert "T-2" in supervisor.get("/review/?q=T-2").get_data(as_text=True)
    assert "T-1" not in supervisor.get("/review/?q=100%25").get_data(as_text=True)


# ---------------------------------------------------------------- migrations


@pytest.fixture(params=["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)])
def empty_engine(request, tmp_path):
    if request.param == "sqlite":
        engine = sa.create_engine(f"sqlite:///{tmp_path / 'empty.sqlite'}")
    else:
        engine = sa.create_engine(request.getfixturevalue("pg_cluster").new_database())
    yield engine
    engine.dispose()


def test_migrations_from_empty_match_the_models(empty_engine):
    from alembic.autogenerate import compare_metadata
    from alembic.migration import MigrationContext

    from fieldapp import migrations
    from fieldapp.extensions import db

    migrations.upgrade(empty_engine)
    assert migrations.current_revision(empty_engine) == migrations.head_revision()
    with empty_engine.connect() as conn:
        assert compare_metadata(MigrationContext.configure(conn), db.metadata) == []


def _previous_revision() -> str:
    from alembic.script import ScriptDirectory

    from fieldapp import migrations

    script = ScriptDirectory.from_config(migrations.alembic_config())
    previous = script.get_revision(migrations.head_revision()).down_revision
    assert isinstance(previous, str), "head has no single previous revision"
    return previous


def test_upgrade_from_the_previous_revision_keeps_rows(empty_engine):
    from fieldapp import migrations

    migrations.upgrade(empty_engine, _previous_revision())
    rows = {
        "user": {"id": 1, "username": "old", "name": "Olwen Old-Data", "password_hash": "x",
                 "role": "tester"},
        "job": {"id": 1, "reference": "OLD-1", "site": "2 Former Way", "client": "", "notes": "",
                "status": "approved", "created_at": "2026-11-01 10:00:00",
                "updated_at": "2026-11-01 10:00:00", "tester_id": 1},
        "circuit": {"id": 1, "job_id": 1, "position": 1, "board": "DB1", "way": "2",
                    "description": "", "ocpd_standard": "BS EN 60898", "ocpd_rating_a": 32.0,
                    "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_source": "measured",
                    "safety_isolated": True, "safety_locked_off": True,
                    "safety_proved_dead": True, "r1": "0.52", "rn": "0.52", "r2": "OL",
                    "current_step": "results"},
        "outlet": {"id": 1, "circuit_id": 1, "position": 1, "key": "a", "label": "Hall",
                   "kind": "twin_socket", "ln": "0.26", "le": None},
        "change_log": {"id": 1, "at": "2026-11-01 10:00:00", "user_id": 1, "device": "old",
                       "entity": "outlet", "entity_id": 1, "circuit_id": 1, "field": "ln",
                       "old_value": None, "new_value": "0.26", "client_id": None},
    }
    with empty_engine.begin() as conn:
        for table, row in rows.items():
            columns = ", ".join(f'"{c}"' for c in row)
            values = ", ".join(f":{c}" for c in row)
            conn.execute(sa.text(f'INSERT INTO "{table}" ({columns}) VALUES ({values})'), row)
    migrations.upgrade(empty_engine)
    assert migrations.current_revision(empty_engine) == migrations.head_revision()
    with empty_engine.connect() as conn:
        for table, row in rows.items():
            got = conn.execute(sa.text(f'SELECT * FROM "{table}" WHERE id = 1')).mappings().one()
            for column in ("id", "reference", "r2", "ln", "le", "new_value", "username"):
                if column in row:
                    assert got[column] == row[column], (table, column)
        assert conn.execute(sa.text("SELECT status FROM job")).scalar_one() == "approved"
