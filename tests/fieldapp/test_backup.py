"""Backup and restore: the whole database round-trips into an empty one, on SQLite and on
PostgreSQL; a non-empty database is refused."""

from __future__ import annotations

import io
import json
from pathlib import Path

import pytest
import sqlalchemy as sa

HANDMADE = Path(__file__).parent / "data" / "transfer_handmade.json"


@pytest.fixture(params=["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)])
def empty_url(request, tmp_path):
    if request.param == "sqlite":
        return f"sqlite:///{tmp_path / 'restored.sqlite'}"
    return request.getfixturevalue("pg_cluster").new_database()


def _history_and_jobs(app) -> dict:
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog, Job
    from fieldapp.transfer.documents import export_document

    with app.app_context():
        jobs = {j.reference: (j.status, j.review_comment, j.approved_by_id, export_document(j))
                for j in db.session.scalars(sa.select(Job))}
        history = [(r.entity, r.entity_id, r.field, r.old_value, r.new_value, r.user_id,
                    r.at.isoformat()) for r in db.session.scalars(
            sa.select(ChangeLog).order_by(ChangeLog.id))]
    return {"jobs": jobs, "history": history}


def _filled_app(make_app, login):
    app = make_app()
    tester, supervisor = app.test_client(), app.test_client()
    login(tester, "test")
    login(supervisor, "super")
    first = tester.post("/api/jobs/import", json=json.loads(HANDMADE.read_text())).get_json()
    doc = json.loads(HANDMADE.read_text())
    doc["job"]["reference"] = "HM-0418"
    second = tester.post("/api/jobs/import", json=doc).get_json()
    for job in (first, second):
        assert tester.post(f"/jobs/{job['job_id']}/submit", data={
            "reason": "safety to be confirmed on site"}).status_code == 302
    supervisor.post(f"/review/jobs/{first['job_id']}/approve",
                    data={"reason": "safety confirmed by phone with the tester"})
    supervisor.post(f"/review/jobs/{second['job_id']}/return",
                    data={"comment": "Kitchen reading to be repeated"})
    supervisor.post("/users/new", data={"username": "newbie", "name": "Nia New",
                                        "role": "apprentice", "mentor_id": 2})
    return app


def test_backup_restores_the_same_jobs_history_and_decisions(make_app, login, empty_url,
                                                             tmp_path):
    from fieldapp import backup
    from fieldapp.extensions import db
    from fieldapp.manage import backup_command, restore_command

    source = _filled_app(make_app, login)
    path = tmp_path / "backup.json"
    assert backup_command(str(path), app=source, out=io.StringIO()) == 0
    doc = json.loads(path.read_text())
    assert all("password_hash" not in u for u in doc["tables"]["user"])
    assert {"user", "job", "circuit", "outlet", "change_log", "user_event"} <= set(doc["tables"])
    assert "remember_token" not in doc["tables"] and "login_attempt" not in doc["tables"]

    target = make_app(SQLALCHEMY_DATABASE_URI=empty_url)
    with target.app_context():
        db.drop_all()  # the fixture's app starts migrated with users on SQLite: empty it
        with db.engine.begin() as conn:
            conn.execute(sa.text("DROP TABLE IF EXISTS alembic_version"))
    assert restore_command(str(path), app=target, out=io.StringIO()) == 0
    assert _history_and_jobs(target) == _history_and_jobs(source)
    with source.app_context():
        again_source = backup.backup()
    with target.app_context():
        again = backup.backup()
        statuses = dict(db.session.execute(sa.text("SELECT reference, status FROM job")).all())
    assert statuses == {"HM-0417": "approved", "HM-0418": "returned"}
    assert again["tables"] == again_source["tables"]
    # a restored user without a hash cannot log in until given a password
    client = target.test_client()
    assert client.post("/login", data={"username": "test", "password": "correct-horse-7"}
                       ).status_code == 401
    # the database now holds rows: a second restore is refused and changes nothing
    assert restore_command(str(path), app=target, out=io.StringIO()) == 2
    with target.app_context():
        assert backup.backup()["tables"] == again["tables"]
        db.session.remove()
        if db.engine.dialect.name == "postgresql":
            db.drop_all()
        db.engine.dispose()


def test_passwords_only_when_asked_and_then_logins_work(make_app, login, tmp_path):
    from fieldapp import backup

    source = make_app()
    with source.app_context():
        doc = backup.backup(with_passwords=True)
    assert all(u["password_hash"].startswith("pbkdf2:") for u in doc["tables"]["user"])
    target = make_app(SQLALCHEMY_DATABASE_URI=f"sqlite:///{tmp_path / 'r.sqlite'}")
    with target.app_context():
        restored = backup.restore(json.loads(json.dumps(doc)))
    assert restored["user"] == 3
    login(target.test_client(), "test")


@pytest.mark.parametrize("doc, words", [
    ({"format": "other"}, "not a fieldapp-backup/1 document"),
    ({"format": "fieldapp-backup/1", "revision": "0001", "tables": {}}, "revision 0001"),
])
def test_a_wrong_backup_is_refused(make_app, tmp_path, doc, words):
    from fieldapp import backup

    target = make_app(SQLALCHEMY_DATABASE_URI=f"sqlite:///{tmp_path / 'r.sqlite'}")
    with target.app_context(), pytest.raises(backup.BackupError, match=words):
        backup.restore(doc)


def test_restore_refuses_a_database_with_rows(make_app):
    from fieldapp import backup

    app = make_app()  # migrated, with the three test users
    with app.app_context():
        doc = backup.backup()
        with pytest.raises(backup.BackupError, match="not empty"):
            backup.restore(doc)
